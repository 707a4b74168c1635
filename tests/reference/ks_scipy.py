"""Reference values from scipy for tests/reference_scipy.rs.

For generated pairs of samples, writes both samples and scipy's
two-sample Kolmogorov-Smirnov results: ks_2samp's statistic and its
asymptotic p-value (method="asymp"), and scipy's Kolmogorov distribution
(kstwobign.sf) at Stephens' corrected point (sqrt(en) + 0.12 + 0.11/sqrt(en)) * D,
the form Plumbline uses.

Usage: python3 ks_scipy.py OUT_FILE
"""

import json
import math
import sys

try:
    import numpy as np
    from scipy import stats
except ImportError as e:
    print(f"needs numpy and scipy: {e}", file=sys.stderr)
    sys.exit(3)


def pairs():
    rng = np.random.default_rng(2026)
    yield "same_normal", rng.normal(0.0, 1.0, 1000), rng.normal(0.0, 1.0, 800)
    yield "shifted_normal", rng.normal(0.0, 1.0, 1200), rng.normal(0.15, 1.0, 900)
    yield "wider_spread", rng.normal(5.0, 1.0, 2000), rng.normal(5.0, 1.4, 2000)
    yield "integers_with_ties", rng.integers(0, 6, 1500).astype(float), rng.integers(0, 7, 1100).astype(float)
    yield "small", rng.uniform(0.0, 1.0, 30), rng.uniform(0.1, 1.1, 25)
    yield "lognormal_vs_gamma", rng.lognormal(0.0, 0.5, 5000), rng.gamma(4.0, 0.28, 4000)
    yield "far_apart", rng.normal(0.0, 1.0, 300), rng.normal(10.0, 1.0, 300)


def main():
    out = []
    for name, a, b in pairs():
        result = stats.ks_2samp(a, b, method="asymp")
        n, m = len(a), len(b)
        en = math.sqrt(n * m / (n + m))
        stephens = float(stats.kstwobign.sf((en + 0.12 + 0.11 / en) * result.statistic))
        out.append({
            "name": name,
            "a": a.tolist(),
            "b": b.tolist(),
            "statistic": float(result.statistic),
            "p_value_asymp": float(result.pvalue),
            "p_value_stephens": stephens,
        })
    with open(sys.argv[1], "w") as f:
        json.dump(out, f)


if __name__ == "__main__":
    main()
