//! Significant figures: how many digits a result can stand behind.
//!
//! A measured input carries the significant figures it was written with (`12.5` has three,
//! `0.0040` two, `60` two, `1200` four). Exact numbers (stoichiometric coefficients,
//! defined unit factors such as 1 gal = 3.785411784 L) carry none and never limit a result.
//! A product or quotient is good to the fewest significant figures among its measured factors.
//! The raw value is always kept; rounding happens only when a number is shown.

use super::{Error, ErrorKind, Result};

/// A number with the precision it was measured to; `sig_figs == None` means exact.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Measured {
    pub value: f64,
    pub sig_figs: Option<u8>,
}

impl Measured {
    pub fn exact(value: f64) -> Measured {
        Measured {
            value,
            sig_figs: None,
        }
    }

    pub fn new(value: f64, sig_figs: u8) -> Measured {
        Measured {
            value,
            sig_figs: Some(sig_figs.max(1)),
        }
    }

    /// Parses a decimal as typed (`.` separator; the UI converts a locale's comma first) and
    /// counts its significant figures.
    pub fn parse(text: &str) -> Result<Measured> {
        let trimmed = text.trim();
        let value: f64 = trimmed
            .parse()
            .ok()
            .filter(|v: &f64| v.is_finite())
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::InvalidInput,
                    format!("'{trimmed}' is not a number"),
                )
                .with("text", trimmed)
            })?;
        Ok(Measured {
            value,
            sig_figs: count_sig_figs(trimmed),
        })
    }
}

/// Significant figures of a decimal written as text; `None` if it is not a plain decimal.
///
/// Leading zeros never count; trailing zeros count, after a decimal point and in a whole
/// number too: an operator who reads a stopwatch at "60" s or a column at "140" mL read it to
/// the second or the millilitre, and taking such a reading as one or two figures rounded real
/// deviations away (a textbook reads `1200` as two figures; a field reading is not written that
/// way). Scientific notation states its figures (`1.2e3` has two). A zero value (`0`, `0.0`)
/// is given one significant figure.
pub fn count_sig_figs(text: &str) -> Option<u8> {
    let text = text.trim().trim_start_matches(['+', '-']);
    let mantissa = match text.find(['e', 'E']) {
        Some(i) => &text[..i],
        None => text,
    };
    if mantissa.is_empty()
        || !mantissa.chars().all(|c| c.is_ascii_digit() || c == '.')
        || mantissa.matches('.').count() > 1
    {
        return None;
    }
    let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    let significant = digits.trim_start_matches('0');
    if significant.is_empty() {
        return Some(1);
    }
    Some(significant.len().clamp(1, u8::MAX as usize) as u8)
}

/// The precision of a product or quotient: the least among the measured factors.
pub fn combine(a: Option<u8>, b: Option<u8>) -> Option<u8> {
    match (a, b) {
        (Some(x), Some(y)) => Some(x.min(y)),
        (x, None) => x,
        (None, y) => y,
    }
}

/// Significant figures of a value known to `decimals` decimal places (e.g. a molar mass from
/// atomic weights given to three decimals: 74.092 g/mol has five).
pub fn sig_figs_from_decimals(value: f64, decimals: u8) -> u8 {
    if value == 0.0 || !value.is_finite() {
        return 1;
    }
    let integer_digits = value.abs().log10().floor() as i32 + 1;
    (integer_digits + decimals as i32).clamp(1, 17) as u8
}

/// The precision of a sum or difference of measured terms (the decimal-place rule): its last
/// significant place is the coarsest last place among the terms, so `250 + 1.25` (two and three
/// figures) is known to the tens and `1.4 + 1.05` to the tenths. Exact terms do not limit it;
/// `None` when every term is exact. A result of zero is given one figure.
pub fn sum_figures(terms: &[Measured], result: f64) -> Option<u8> {
    let last_place = |m: &Measured| -> Option<i32> {
        let s = m.sig_figs?;
        let magnitude = if m.value == 0.0 || !m.value.is_finite() {
            0
        } else {
            m.value.abs().log10().floor() as i32
        };
        Some(magnitude - (i32::from(s) - 1))
    };
    let coarsest = terms.iter().filter_map(last_place).max()?;
    if result == 0.0 || !result.is_finite() {
        return Some(1);
    }
    let magnitude = result.abs().log10().floor() as i32;
    Some((magnitude - coarsest + 1).clamp(1, 17) as u8)
}

/// Rounds to `sig` significant figures.
pub fn round_sig(value: f64, sig: u8) -> f64 {
    if value == 0.0 || !value.is_finite() {
        return value;
    }
    let magnitude = value.abs().log10().floor() as i32;
    let decimals = sig as i32 - 1 - magnitude;
    let factor = 10f64.powi(decimals.abs());
    if decimals >= 0 {
        (value * factor).round() / factor
    } else {
        (value / factor).round() * factor
    }
}

/// Formats to `sig` significant figures in plain decimal notation, keeping significant
/// trailing zeros (`2.50`). Very large or small magnitudes fall back to scientific notation
/// so no precision is implied that is not there.
pub fn format_sig(value: f64, sig: u8) -> String {
    if !value.is_finite() {
        return "—".to_string();
    }
    if value == 0.0 {
        return if sig > 1 {
            format!("{:.*}", (sig - 1) as usize, 0.0)
        } else {
            "0".to_string()
        };
    }
    let rounded = round_sig(value, sig);
    let magnitude = rounded.abs().log10().floor() as i32;
    if magnitude >= sig as i32 + 3 || magnitude < -4 {
        return format!("{:.*e}", (sig - 1) as usize, rounded);
    }
    let decimals = (sig as i32 - 1 - magnitude).max(0) as usize;
    format!("{rounded:.decimals$}")
}

/// Decimal places of a number as shown (`"26.3"` has one, `"140"` none; the decimal mark may
/// be `.` or `,`), so that a range beside it is shown to the same place. Scientific notation
/// counts its mantissa's decimals.
pub fn shown_decimals(text: &str) -> usize {
    let mantissa = text.split(['e', 'E']).next().unwrap_or("");
    mantissa.split_once(['.', ',']).map_or(0, |(_, after)| {
        after.chars().take_while(char::is_ascii_digit).count()
    })
}

/// Formats a value that may be exact (`None`): exact values print without trailing noise.
pub fn format_measured(value: f64, sig_figs: Option<u8>) -> String {
    match sig_figs {
        Some(sig) => format_sig(value, sig),
        None => {
            let text = format!("{:.10}", value);
            let text = text.trim_end_matches('0').trim_end_matches('.');
            if text == "-0" {
                "0".to_string()
            } else {
                text.to_string()
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sums_keep_the_coarsest_decimal_place() {
        fn check(terms: &[(f64, Option<u8>)], result: f64, expected: Option<u8>) {
            let terms: Vec<Measured> = terms
                .iter()
                .map(|&(value, sig_figs)| Measured { value, sig_figs })
                .collect();
            assert_eq!(
                sum_figures(&terms, result),
                expected,
                "{terms:?} = {result}"
            );
        }
        check(&[(1.4, Some(2)), (1.05, Some(3))], 2.45, Some(2));
        check(&[(250.0, Some(2)), (1.25, Some(3))], 251.25, Some(2));
        check(&[(250.0, Some(3)), (180.0, Some(3))], 70.0, Some(2));
        check(&[(250.0, Some(2)), (180.0, Some(2))], 70.0, Some(1));
        check(&[(2.0, None), (0.5, Some(1))], 2.5, Some(2));
        check(&[(2.0, None)], 2.0, None);
        check(&[(1.0, Some(2)), (1.0, Some(2))], 0.0, Some(1));
    }

    fn check(text: &str, expected: Option<u8>) {
        assert_eq!(count_sig_figs(text), expected, "{text:?}");
    }

    #[test]
    fn counting() {
        check("12.5", Some(3));
        check("0.0040", Some(2));
        // A whole-number reading counts its trailing zeros: "60" s from a stopwatch is two
        // figures, not one.
        check("60", Some(2));
        check("140", Some(3));
        check("1200", Some(4));
        check("1200.", Some(4));
        check("1.2e3", Some(2));
        check("1200.0", Some(5));
        check("7", Some(1));
        check("0", Some(1));
        check("0.000", Some(1));
        check("-3.10", Some(3));
        check("2.50e3", Some(3));
        check("abc", None);
        check("1.2.3", None);
        check("", None);
    }

    fn check_format(value: f64, sig: u8, expected: &str) {
        assert_eq!(format_sig(value, sig), expected, "{value} to {sig}");
    }

    #[test]
    fn formatting() {
        check_format(2.5, 3, "2.50");
        check_format(0.168712, 3, "0.169");
        check_format(1234.5, 2, "1200");
        check_format(99.96, 3, "100");
        check_format(0.0, 2, "0.0");
        check_format(-0.004567, 2, "-0.0046");
        check_format(1.5e9, 2, "1.5e9");
        check_format(f64::NAN, 3, "—");
        assert_eq!(format_measured(3.785411784, None), "3.785411784");
        assert_eq!(format_measured(1000.0, None), "1000");
    }

    #[test]
    fn precision_rules() {
        assert_eq!(combine(Some(3), None), Some(3));
        assert_eq!(combine(Some(3), Some(2)), Some(2));
        assert_eq!(combine(None, None), None);
        assert_eq!(sig_figs_from_decimals(74.092, 3), 5);
        assert_eq!(sig_figs_from_decimals(0.5, 2), 2);
        let m = Measured::parse(" 12.50 ").unwrap();
        assert_eq!((m.value, m.sig_figs), (12.5, Some(4)));
        assert_eq!(
            Measured::parse("twelve").unwrap_err().kind(),
            ErrorKind::InvalidInput
        );
        assert_eq!(
            Measured::parse("inf").unwrap_err().kind(),
            ErrorKind::InvalidInput
        );
    }
}
