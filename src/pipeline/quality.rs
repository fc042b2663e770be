//! Fit quality flags: when a component's answer should not be read as it is.
//!
//! A pattern that no sparse combination of patches explains (random
//! weights, a broken channel, a muscle or eye pattern outside the cortex)
//! still gets a fit; these flags say so in the terminal, summary.json,
//! result.h5 and the report, with the reason.

use super::outcome::FitOutcome;

/// Below this explained variance a component is flagged as poorly
/// explained. Half the pattern's variance is a convention of ours (the
/// residual-variance cut of single-dipole fits is about 15 %, common
/// practice, no source; a patch combination on a noisy decoder pattern
/// leaves more, so the flag only fires where the attribution explains less
/// than the residual it leaves).
pub const POORLY_EXPLAINED_EV: f64 = 0.5;

/// Below this signal-to-noise power ratio of the pattern (known noise only)
/// a component is flagged as poorly determined: its pattern is mostly the
/// noise the folds or the sample count say it carries. One (signal as
/// strong as the noise, 0 dB) is our convention, no source.
pub const MIN_PATTERN_SNR: f64 = 1.0;

/// Why a component's attribution needs care, in words, empty when none.
/// "poorly explained" and "poorly determined" start the reasons that make
/// the table unreliable.
pub fn component_flags(outcome: &FitOutcome, c: usize) -> Vec<String> {
    let mut flags = Vec::new();
    let ev = outcome
        .fit
        .explained_variance
        .get(c)
        .copied()
        .unwrap_or(0.0);
    let block = outcome.blocks.iter().find(|b| b.components.contains(&c));
    let empty = outcome
        .attribution
        .components
        .get(c)
        .is_none_or(|a| a.group_share.iter().all(|&s| s == 0.0));
    if empty {
        flags.push(
            "poorly explained: no patch is selected (the pattern is within its noise level; lambda reaches lambda_max)"
                .to_string(),
        );
    } else if ev < POORLY_EXPLAINED_EV {
        flags.push(format!(
            "poorly explained: explained variance {:.0} % is below {:.0} %; the shares describe the part the patches explain",
            100.0 * ev,
            100.0 * POORLY_EXPLAINED_EV
        ));
    }
    if let Some(snr) = outcome.pattern_snr.as_ref().and_then(|s| s.get(c)) {
        if *snr < MIN_PATTERN_SNR {
            flags.push(format!(
                "poorly determined: the pattern's power is {:.1} times that of its own noise (signal-to-noise {:.2} < {MIN_PATTERN_SNR}); the decoder may be near chance and its regions are not reliable",
                snr + 1.0,
                snr
            ));
        }
    }
    if let Some(b) = block {
        if b.stop_reason.on_budget() {
            flags.push(format!(
                "the fit stopped on its budget after {} iterations at a relative duality gap of {:.1e} (not certified to the tolerance)",
                b.iterations, b.duality_gap
            ));
        }
        if b.at_range_end {
            flags.push(format!(
                "lambda is at the end of the searched range (ratio {:.2e}): set by the range, not by the data",
                b.lambda / b.lambda_max
            ));
        }
    }
    flags
}

/// True when a flag says the component is poorly explained.
pub fn is_poorly_explained(flags: &[String]) -> bool {
    flags
        .iter()
        .any(|f| f.starts_with("poorly explained") || f.starts_with("poorly determined"))
}
