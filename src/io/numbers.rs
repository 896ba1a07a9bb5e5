//! The one number formatter for people: messages, tables, form fields and plot labels.

/// Smallest magnitude written in plain decimals; smaller ones are written in scientific form.
const PLAIN_FROM: f64 = 1e-5;
/// Magnitude from which numbers are written in scientific form.
const PLAIN_BELOW: f64 = 1e6;

/// `v` rounded to `digits` significant digits (at least 1), without trailing zeros: plain
/// decimals for magnitudes from 1e-5 up to 1e6 ("0.00001", "3.0592", "123456"), scientific
/// form outside ("1.2346e-7"); zero and non-finite values as Rust writes them ("0", "NaN").
pub fn significant(v: f64, digits: usize) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let decimals = digits.max(1) - 1;
    // Rounded through its scientific form, so 0.0049999999 becomes 0.005; Rust's shortest
    // round-trip text of the rounded number then has no trailing noise.
    let rounded: f64 = format!("{v:.decimals$e}").parse().unwrap_or(v);
    if (PLAIN_FROM..PLAIN_BELOW).contains(&rounded.abs()) {
        format!("{rounded}")
    } else {
        format!("{rounded:.decimals$e}")
    }
}

/// Six significant digits: typed values, table cells and conversions ("5 fs = 0.00232558 τ").
pub fn format_number(v: f64) -> String {
    significant(v, 6)
}

/// Five significant digits: values and limits quoted in error messages.
pub fn format_limit(v: f64) -> String {
    significant(v, 5)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rounds_to_significant_digits_without_trailing_zeros() {
        assert_eq!(format_number(0.0049999999), "0.005");
        assert_eq!(format_number(10.0), "10");
        assert_eq!(format_number(2.5), "2.5");
        assert_eq!(format_number(123456.4), "123456");
        assert_eq!(format_number(0.0), "0");
        assert_eq!(format_limit(1e-5), "0.00001");
        assert_eq!(format_limit(3.059_214), "3.0592");
        assert_eq!(format_limit(-0.001), "-0.001");
        assert_eq!(format_limit(f64::NAN), "NaN");
        assert_eq!(significant(0.002_325_58, 3), "0.00233");
        assert_eq!(significant(1.234_56e-7, 3), "1.23e-7");
        assert_eq!(format_number(2.5e6), "2.50000e6");
    }
}
