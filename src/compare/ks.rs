//! The two-sample Kolmogorov–Smirnov test on weighted, ascending samples
//! (every value, or a quantile sketch's weighted sample): the statistic D,
//! the largest gap between the two empirical distribution functions, and a
//! p-value from Kolmogorov's limiting distribution evaluated at
//! (√eₙ + 0.12 + 0.11/√eₙ)·D, eₙ = nm/(n+m) (Stephens 1970, the form in
//! Press et al., *Numerical Recipes*, §14.3).

/// D = sup |F_a(x) − F_b(x)|, both samples as ascending (value, weight).
pub fn statistic(a: &[(f64, u64)], b: &[(f64, u64)]) -> Option<f64> {
    let (na, nb) = (total(a), total(b));
    if na == 0 || nb == 0 {
        return None;
    }
    let (mut i, mut j) = (0usize, 0usize);
    let (mut ca, mut cb) = (0u64, 0u64);
    let mut d: f64 = 0.0;
    while i < a.len() || j < b.len() {
        // The next value of either sample; every copy of it on both sides
        // counts before the gap is measured (ties step together).
        let x = match (a.get(i), b.get(j)) {
            (Some(p), Some(q)) => if p.0.total_cmp(&q.0).is_le() { p.0 } else { q.0 },
            (Some(p), None) => p.0,
            (None, Some(q)) => q.0,
            (None, None) => break,
        };
        while a.get(i).is_some_and(|p| p.0.total_cmp(&x).is_le()) {
            ca += a[i].1;
            i += 1;
        }
        while b.get(j).is_some_and(|q| q.0.total_cmp(&x).is_le()) {
            cb += b[j].1;
            j += 1;
        }
        d = d.max((ca as f64 / na as f64 - cb as f64 / nb as f64).abs());
    }
    Some(d)
}

fn total(sample: &[(f64, u64)]) -> u64 {
    sample.iter().map(|p| p.1).sum()
}

/// The probability of a gap at least `d` between samples of `n` and `m`
/// values drawn from one distribution.
pub fn p_value(d: f64, n: u64, m: u64) -> f64 {
    let en = ((n as f64) * (m as f64) / (n as f64 + m as f64)).sqrt();
    kolmogorov_survival((en + 0.12 + 0.11 / en) * d)
}

/// Q(λ) = P(K > λ) of Kolmogorov's distribution: the alternating series
/// 2 Σ (−1)^(k−1) e^(−2k²λ²) for λ ≥ 1, else 1 − (√(2π)/λ) Σ e^(−(2k−1)²π²/(8λ²)),
/// which converges fast where the first does not.
pub fn kolmogorov_survival(lambda: f64) -> f64 {
    if lambda <= 0.0 {
        return 1.0;
    }
    if lambda >= 1.0 {
        let mut sum = 0.0;
        for k in 1..=100 {
            let k = k as f64;
            let term = (-2.0 * k * k * lambda * lambda).exp();
            sum += if k as u64 % 2 == 1 { term } else { -term };
            if term < 1e-18 {
                break;
            }
        }
        (2.0 * sum).clamp(0.0, 1.0)
    } else {
        let mut sum = 0.0;
        for k in 1..=100 {
            let odd = (2 * k - 1) as f64;
            let term = (-odd * odd * std::f64::consts::PI * std::f64::consts::PI / (8.0 * lambda * lambda)).exp();
            sum += term;
            if term < 1e-18 {
                break;
            }
        }
        (1.0 - (2.0 * std::f64::consts::PI).sqrt() / lambda * sum).clamp(0.0, 1.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ones(values: &[f64]) -> Vec<(f64, u64)> {
        values.iter().map(|&v| (v, 1)).collect()
    }

    #[test]
    fn the_statistic_is_the_largest_gap_between_the_step_functions() {
        // Worked by hand: after 1, 2 the first sample is at 2/3, the second at 0.
        let d = statistic(&ones(&[1.0, 2.0, 3.0]), &ones(&[2.5, 3.5, 4.5])).unwrap();
        assert!((d - 2.0 / 3.0).abs() < 1e-15, "{d}");
        assert_eq!(statistic(&ones(&[1.0, 2.0]), &ones(&[1.0, 2.0])), Some(0.0));
        // Ties step together: equal samples with weights differ by nothing.
        assert_eq!(statistic(&[(1.0, 2), (2.0, 2)], &ones(&[1.0, 1.0, 2.0, 2.0])), Some(0.0));
        assert_eq!(statistic(&[], &ones(&[1.0])), None);
    }

    #[test]
    fn kolmogorov_s_distribution_at_known_points() {
        // Both branches agree where they meet.
        let below = kolmogorov_survival(1.0 - 1e-12);
        assert!((below - kolmogorov_survival(1.0)).abs() < 1e-9);
        // The 5 % critical value of Kolmogorov's distribution is 1.358 (tables, e.g. Massey 1951).
        assert!((kolmogorov_survival(1.358) - 0.05).abs() < 5e-4);
        assert_eq!(kolmogorov_survival(0.0), 1.0);
        assert!(kolmogorov_survival(5.0) < 1e-20);
    }
}
