//! Axis ticks at nice numbers (1, 2 or 5 × 10^k; Heckbert 1990, "Nice numbers for
//! graph labels", Graphics Gems, pp. 61–63) and decade ticks for logarithmic axes.

/// Ticks for a linear axis: the loose labelling of Heckbert 1990, whose range covers
/// the data range.
#[derive(Debug, Clone, PartialEq)]
pub struct Ticks {
    /// The first tick (≤ the data minimum).
    pub lo: f64,
    /// The last tick (≥ the data maximum).
    pub hi: f64,
    /// The spacing.
    pub step: f64,
    /// Decimals needed to print every tick exactly: max(−floor(log10 step), 0).
    pub decimals: usize,
    /// The tick values from `lo` to `hi`.
    pub values: Vec<f64>,
}

impl Ticks {
    /// A tick value printed with [`Ticks::decimals`] decimals, negative numbers with the
    /// typographic minus sign U+2212 (and "0", not "−0").
    pub fn label(&self, value: f64) -> String {
        let s = format!("{:.*}", self.decimals, value);
        match s.strip_prefix('-') {
            Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
            Some(rest) => format!("\u{2212}{rest}"),
            None => s,
        }
    }
}

/// Heckbert's nicenum: a number of the form 1, 2, 5 or 10 × 10^k near `x` > 0; rounded
/// to the nearest such number when `round`, else the smallest one ≥ `x`.
pub fn nice_number(x: f64, round: bool) -> f64 {
    let exponent = x.log10().floor();
    let power = 10f64.powf(exponent);
    let fraction = x / power;
    let nice = if round {
        if fraction < 1.5 {
            1.0
        } else if fraction < 3.0 {
            2.0
        } else if fraction < 7.0 {
            5.0
        } else {
            10.0
        }
    } else if fraction <= 1.0 {
        1.0
    } else if fraction <= 2.0 {
        2.0
    } else if fraction <= 5.0 {
        5.0
    } else {
        10.0
    };
    nice * power
}

/// Heckbert's loose labelling of [min, max] with about `count` ticks (at least 2):
/// range = nicenum(max − min, false), step = nicenum(range / (count − 1), true), first
/// tick floor(min / step)·step, last ceil(max / step)·step. A zero-width range is
/// widened to ±|min|/2 (or ±1 around 0). `None` when a bound is not finite.
pub fn nice_ticks(min: f64, max: f64, count: usize) -> Option<Ticks> {
    if !(min.is_finite() && max.is_finite()) {
        return None;
    }
    let (mut min, mut max) = if min <= max { (min, max) } else { (max, min) };
    if max - min <= f64::EPSILON * max.abs().max(min.abs()) {
        let half = if min == 0.0 { 1.0 } else { min.abs() / 2.0 };
        min -= half;
        max += half;
    }
    let count = count.max(2);
    let range = nice_number(max - min, false);
    let step = nice_number(range / (count - 1) as f64, true);
    let first = (min / step).floor();
    let last = (max / step).ceil();
    let decimals = (-step.log10().floor()).max(0.0) as usize;
    // Multiplying whole tick indices avoids the drift of repeated addition.
    let values: Vec<f64> = (0..=((last - first) as i64))
        .map(|i| round_to((first + i as f64) * step, decimals))
        .collect();
    Some(Ticks {
        lo: round_to(first * step, decimals),
        hi: round_to(last * step, decimals),
        step,
        decimals,
        values,
    })
}

/// `value` rounded to `decimals` decimals (removes 0.30000000000000004-style noise).
fn round_to(value: f64, decimals: usize) -> f64 {
    let factor = 10f64.powi(decimals.min(15) as i32);
    (value * factor).round() / factor
}

/// Ticks of a base-10 logarithmic axis covering [min, max] (both > 0): every power of
/// ten from 10^floor(log10 min) to 10^ceil(log10 max), plus 2 and 5 times each power
/// when that span is at most two decades. `None` when a bound is not finite and positive.
pub fn log_ticks(min: f64, max: f64) -> Option<Vec<f64>> {
    if !(min.is_finite() && max.is_finite() && min > 0.0 && max > 0.0) {
        return None;
    }
    let (min, max) = if min <= max { (min, max) } else { (max, min) };
    let first = min.log10().floor() as i32;
    let mut last = max.log10().ceil() as i32;
    if last == first {
        last += 1;
    }
    let fine = last - first <= 2;
    let mut ticks = Vec::new();
    for k in first..=last {
        let power = 10f64.powi(k);
        ticks.push(power);
        if fine && k < last {
            ticks.push(2.0 * power);
            ticks.push(5.0 * power);
        }
    }
    Some(ticks)
}

/// A logarithmic tick label: "1", "10", "0.1", "0.01", "0.001" for 10^−3..10^1, else
/// "10^k" written with superscript digits; 2 and 5 multiples as "2×10⁻⁴" beyond that.
pub fn log_label(value: f64) -> String {
    let exponent = value.log10().floor() as i32;
    let mantissa = (value / 10f64.powi(exponent)).round() as i64;
    if (-3..=3).contains(&exponent) {
        let decimals = (-exponent).max(0) as usize;
        return format!("{:.*}", decimals, value);
    }
    let power = format!("10{}", superscript(exponent));
    if mantissa == 1 {
        power
    } else {
        format!("{mantissa}×{power}")
    }
}

/// `k` in Unicode superscript digits (with a superscript minus).
fn superscript(k: i32) -> String {
    let digits = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut out = String::new();
    if k < 0 {
        out.push('⁻');
    }
    for c in k.unsigned_abs().to_string().chars() {
        if let Some(d) = c.to_digit(10) {
            out.push(digits[d as usize]);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_labels_read_naturally() {
        assert_eq!(log_label(1.0), "1");
        assert_eq!(log_label(0.01), "0.01");
        assert_eq!(log_label(0.002), "0.002");
        assert_eq!(log_label(1e-4), "10⁻⁴");
        assert_eq!(log_label(5e-5), "5×10⁻⁵");
    }
}
