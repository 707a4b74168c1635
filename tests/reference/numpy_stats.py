"""Reference values from numpy for tests/reference_numpy.rs.

For several generated samples (normal, lognormal, heavy duplicates, two far
clusters, sorted, reverse-sorted, tiny), writes the sample and numpy's
percentiles (method="linear", Hyndman & Fan type 7), histogram_bin_edges with
bins="auto", and histogram counts over those edges.

Usage: python3 numpy_stats.py OUT_FILE
"""

import json
import sys

import numpy as np


def samples():
    rng = np.random.default_rng(2026)
    normal = rng.normal(50.0, 12.0, 1000)
    yield "normal_1000", normal
    yield "lognormal_5000", rng.lognormal(1.0, 0.9, 5000)
    yield "duplicates_2000", rng.integers(0, 7, 2000).astype(float)
    yield "two_far_clusters", np.concatenate([rng.normal(0.0, 1.0, 500), rng.normal(1e6, 1.0, 500)])
    yield "sorted_3000", np.sort(rng.uniform(-5.0, 5.0, 3000))
    yield "reverse_3000", np.sort(rng.uniform(-5.0, 5.0, 3000))[::-1]
    yield "tiny_1", np.array([3.5])
    yield "tiny_2", np.array([1.0, 2.0])
    yield "tiny_10", rng.normal(0.0, 1.0, 10)


def main():
    probabilities = [1, 5, 25, 50, 75, 95, 99]
    out = []
    for name, values in samples():
        edges = np.histogram_bin_edges(values, bins="auto")
        counts, _ = np.histogram(values, bins=edges)
        out.append(
            {
                "name": name,
                "values": values.tolist(),
                "percentiles": np.percentile(values, probabilities, method="linear").tolist(),
                "edges": edges.tolist(),
                "counts": counts.tolist(),
            }
        )
    with open(sys.argv[1], "w") as f:
        json.dump({"numpy": np.__version__, "probabilities": probabilities, "samples": out}, f)


if __name__ == "__main__":
    main()
