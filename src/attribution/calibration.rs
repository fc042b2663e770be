//! The leader's probability: the lead frequency of the estimate's leading
//! region mapped to the rate at which such a leader was right on the
//! recovery benchmark.
//!
//! The lead frequency (the share of resamples a region leads) is not a
//! probability: on simulated patches it is too low where the resamples split
//! their votes between neighbouring regions (stated 0.27, right 61 % of the
//! time) and slightly too high at the top (0.98 stated, 93 % right). The map
//! p = σ(a·logit(s) + b) (Platt 1999, "Probabilistic outputs for support
//! vector machines", Advances in Large Margin Classifiers, MIT Press; from
//! memory), s clipped to [0.005, 0.995], fitted on the benchmark's cases,
//! turns it into one. docs/validation.md (table 13) gives the cases, the
//! command that fits the constants and the calibration error before and after,
//! at the SNRs and heads the map was not fitted on.

/// The map's constants and where they come from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlattMap {
    /// Slope on logit(s).
    pub a: f64,
    /// Offset.
    pub b: f64,
}

/// Fitted by `python benches/reference/calib.py fit
/// benches/reference/calibration_cases.tsv` (scikit-learn's
/// LogisticRegression on logit(s)): the 480 cases of the recovery benchmark
/// at 20 dB, matched and mismatched heads, noise rule, 100 resamples,
/// `template-5k`, default perturbations.
pub const LEADER_CALIBRATION: PlattMap = PlattMap {
    a: 0.463588,
    b: 0.626023,
};

/// Below and above these the logit is clipped (a lead frequency of 0 or 1
/// from 100 resamples is not a certainty).
const CLIP: f64 = 0.005;

impl PlattMap {
    /// σ(a·logit(s) + b) with s clipped to [0.005, 0.995]; NaN for NaN.
    pub fn apply(&self, s: f64) -> f64 {
        if s.is_nan() {
            return f64::NAN;
        }
        let s = s.clamp(CLIP, 1.0 - CLIP);
        let z = self.a * (s / (1.0 - s)).ln() + self.b;
        1.0 / (1.0 + (-z).exp())
    }
}

/// The estimate's leading region: the largest positive share (the lowest
/// index among exact ties), or None when no share is positive.
pub fn leading_region(shares: &[f64]) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for (r, &v) in shares.iter().enumerate() {
        if v > 0.0 && best.is_none_or(|(_, w)| v > w) {
            best = Some((r, v));
        }
    }
    best.map(|(r, _)| r)
}

/// The probability that the estimate's leader is the truth's, from the
/// leader's lead frequency: NaN without a leader or without resamples.
pub fn leader_probability(shares: &[f64], lead_frequency: &[f64]) -> f64 {
    leading_region(shares)
        .and_then(|r| lead_frequency.get(r).copied())
        .map_or(f64::NAN, |s| LEADER_CALIBRATION.apply(s))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Worked by hand: logit(0.5) = 0, so p = σ(b); logit(0.9) = ln 9.
    #[test]
    fn the_map_is_the_logistic_of_a_line_in_the_logit() {
        let m = PlattMap { a: 0.5, b: 1.0 };
        let sigma = |z: f64| 1.0 / (1.0 + (-z).exp());
        assert!((m.apply(0.5) - sigma(1.0)).abs() < 1e-15);
        assert!((m.apply(0.9) - sigma(0.5 * 9f64.ln() + 1.0)).abs() < 1e-15);
        assert_eq!(m.apply(1.0), m.apply(0.995));
        assert_eq!(m.apply(0.0), m.apply(0.005));
        assert!(m.apply(f64::NAN).is_nan());
    }

    #[test]
    fn the_leader_is_the_largest_positive_share() {
        assert_eq!(leading_region(&[0.1, 0.4, 0.4, -0.2]), Some(1));
        assert_eq!(leading_region(&[-0.1, 0.0]), None);
        let p = leader_probability(&[0.1, 0.6], &[0.2, 0.8]);
        assert!((p - LEADER_CALIBRATION.apply(0.8)).abs() < 1e-15);
        assert!(leader_probability(&[0.0], &[1.0]).is_nan());
        assert!(leader_probability(&[0.5], &[]).is_nan());
    }

    // The map must not reverse the order of the lead frequency: a higher
    // support never gives a lower probability (a > 0).
    #[test]
    fn the_shipped_map_is_increasing() {
        let mut last = 0.0;
        for i in 0..=100 {
            let p = LEADER_CALIBRATION.apply(i as f64 / 100.0);
            assert!(p >= last && (0.0..=1.0).contains(&p));
            last = p;
        }
    }
}
