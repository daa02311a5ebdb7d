//! How a figure reads as text for people: three decimals, and never a negative zero. The
//! terminal table, the HTML page and the result sentences all go through these, so they can
//! never disagree on a sign.

/// Text shown where a figure is missing or not a number.
pub const MISSING: &str = "n/a";

/// Round to three decimals, folding −0.000 into 0.000 so a tiny negative never prints a sign
/// that suggests a loss.
fn round3(v: f64) -> f64 {
    let r = (v * 1000.0).round() / 1000.0;
    if r == 0.0 { 0.0 } else { r }
}

/// A level such as a mean accuracy: `0.812`, or `n/a`.
pub fn value(v: f64) -> String {
    if v.is_finite() {
        format!("{:.3}", round3(v))
    } else {
        MISSING.to_string()
    }
}

/// A difference, always signed: `+0.034`, `-0.012`, or `n/a`.
pub fn signed(v: f64) -> String {
    if v.is_finite() {
        format!("{:+.3}", round3(v))
    } else {
        MISSING.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tiny_negatives_print_without_a_sign_flip() {
        // common practice, no source: a difference that rounds to zero reads +0.000, not −0.000.
        assert_eq!(signed(-0.0004), "+0.000");
        assert_eq!(signed(0.0004), "+0.000");
        assert_eq!(signed(-0.0126), "-0.013");
        assert_eq!(value(-0.0004), "0.000");
        assert_eq!(signed(f64::NAN), MISSING);
    }
}
