//! Locale-aware reading and writing of the numbers an operator types and reads.
//!
//! Design choice: input is strict rather than clever. Thousands separators are never accepted,
//! because in a dosing app `1.234` read as 1234 (or the other way round) is a thousand-fold
//! error. English takes a point as the decimal mark; Spanish takes a comma, and also a point
//! unless the text looks like digit grouping (`1.234`), which is refused as ambiguous. Display
//! uses the locale's mark and significant figures so a result never shows false precision.

use super::calc::key;
use std::fmt;

/// The display languages the app ships. Kept here (not in the i18n layer) so that controllers
/// and tests can format numbers without the UI feature.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Lang {
    En,
    Es,
}

impl Lang {
    pub const ALL: [Lang; 2] = [Lang::En, Lang::Es];

    /// The BCP 47 tag, also the folder name under `i18n/`.
    pub fn tag(self) -> &'static str {
        match self {
            Lang::En => "en",
            Lang::Es => "es",
        }
    }

    pub fn from_tag(tag: &str) -> Option<Lang> {
        let primary = tag.split(['-', '_', '.']).next()?.to_ascii_lowercase();
        match primary.as_str() {
            "en" => Some(Lang::En),
            "es" => Some(Lang::Es),
            _ => None,
        }
    }

    pub fn decimal_mark(self) -> char {
        match self {
            Lang::En => '.',
            Lang::Es => ',',
        }
    }
}

/// Why a typed number was refused; each maps to a translation key.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NumberError {
    Empty,
    NotANumber,
    /// A second decimal mark, or digit grouping that could be read two ways.
    Ambiguous,
    /// A comma typed where the language uses a point.
    WrongMark,
}

impl NumberError {
    pub fn key(self) -> &'static str {
        match self {
            NumberError::Empty => key("number-empty"),
            NumberError::NotANumber => key("number-invalid"),
            NumberError::Ambiguous => key("number-ambiguous"),
            NumberError::WrongMark => key("number-wrong-mark"),
        }
    }
}

impl fmt::Display for NumberError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.key())
    }
}

/// Parses what an operator typed, in `lang`. Leading/trailing spaces are ignored; a leading
/// sign is allowed (range checks belong to the engine); exponents, `inf` and `NaN` are not.
pub fn parse(text: &str, lang: Lang) -> Result<f64, NumberError> {
    let t = text.trim();
    if t.is_empty() {
        return Err(NumberError::Empty);
    }
    let (sign, body) = match t.as_bytes()[0] {
        b'-' => (-1.0, &t[1..]),
        b'+' => (1.0, &t[1..]),
        _ => (1.0, t),
    };
    if body.is_empty()
        || !body
            .chars()
            .all(|c| c.is_ascii_digit() || c == '.' || c == ',')
    {
        return Err(NumberError::NotANumber);
    }
    if !body.chars().any(|c| c.is_ascii_digit()) {
        return Err(NumberError::NotANumber);
    }
    let points = body.matches('.').count();
    let commas = body.matches(',').count();
    if points + commas > 1 {
        return Err(NumberError::Ambiguous);
    }
    let normalized = match lang {
        Lang::En if commas == 1 => return Err(NumberError::WrongMark),
        Lang::En => body.to_string(),
        Lang::Es => {
            if points == 1 {
                let after = body.split('.').nth(1).unwrap_or("");
                let before = body.split('.').next().unwrap_or("");
                // `1.234` is one thousand two hundred thirty-four in Spanish print, 1.234 on
                // many keypads: refuse rather than guess.
                if after.len() == 3 && !before.is_empty() && before != "0" {
                    return Err(NumberError::Ambiguous);
                }
            }
            body.replace(',', ".")
        }
    };
    let value: f64 = normalized.parse().map_err(|_| NumberError::NotANumber)?;
    Ok(sign * value)
}

/// Significant figures of a number as typed in `lang` (the usual rules: leading zeros never
/// count, trailing zeros of a whole number without a decimal mark do not); `None` when the
/// text is not a number.
pub fn figures(text: &str, lang: Lang) -> Option<u8> {
    parse(text, lang).ok()?;
    crate::engine::sigfig::count_sig_figs(&text.trim().replace(',', "."))
}

/// Digits after the decimal mark as typed (a pH's precision is its decimal places).
pub fn decimals(text: &str) -> usize {
    text.trim().split_once(['.', ',']).map_or(0, |(_, after)| {
        after.chars().filter(char::is_ascii_digit).count()
    })
}

/// Formats `value` with `sig` significant figures (at most 6 decimals), in `lang`.
/// Non-finite values format as an em dash: the UI never shows `NaN`.
pub fn format_sig(value: f64, sig: u32, lang: Lang) -> String {
    if !value.is_finite() {
        return "—".to_string();
    }
    if value == 0.0 {
        return "0".to_string();
    }
    // Round first so whole-number digits beyond the figures become zeros (38 at one figure
    // is 40): a digit the inputs cannot support is never shown.
    let value = crate::engine::sigfig::round_sig(value, sig.clamp(1, 15) as u8);
    let magnitude = value.abs().log10().floor() as i32;
    let decimals = (sig as i32 - 1 - magnitude).clamp(0, 6) as usize;
    format_fixed(value, decimals, lang)
}

/// Formats `value` with exactly `decimals` decimals, in `lang`.
pub fn format_fixed(value: f64, decimals: usize, lang: Lang) -> String {
    if !value.is_finite() {
        return "—".to_string();
    }
    let mut s = format!("{value:.decimals$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s.remove(0);
    }
    if lang.decimal_mark() != '.' {
        s = s.replace('.', &lang.decimal_mark().to_string());
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn english_reads_points_and_refuses_commas() {
        assert_eq!(parse("2.5", Lang::En), Ok(2.5));
        assert_eq!(parse("  -0.75 ", Lang::En), Ok(-0.75));
        assert_eq!(parse(".5", Lang::En), Ok(0.5));
        assert_eq!(parse("12", Lang::En), Ok(12.0));
        assert_eq!(parse("2,5", Lang::En), Err(NumberError::WrongMark));
        assert_eq!(parse("1,234.5", Lang::En), Err(NumberError::Ambiguous));
    }

    #[test]
    fn spanish_reads_commas_and_unambiguous_points() {
        assert_eq!(parse("2,5", Lang::Es), Ok(2.5));
        assert_eq!(parse("2.5", Lang::Es), Ok(2.5));
        assert_eq!(parse("0.125", Lang::Es), Ok(0.125));
        assert_eq!(parse("1.234", Lang::Es), Err(NumberError::Ambiguous));
        assert_eq!(parse("1.234,5", Lang::Es), Err(NumberError::Ambiguous));
    }

    #[test]
    fn junk_is_refused_with_a_reason() {
        assert_eq!(parse("", Lang::En), Err(NumberError::Empty));
        assert_eq!(parse("   ", Lang::Es), Err(NumberError::Empty));
        for junk in ["abc", "1e5", "inf", "NaN", "-", ".", "1..2", "7 mg", "--1"] {
            assert!(parse(junk, Lang::En).is_err(), "{junk} accepted");
        }
        assert_eq!(parse("1..2", Lang::En), Err(NumberError::Ambiguous));
    }

    #[test]
    fn formats_significant_figures_in_the_locale() {
        assert_eq!(format_sig(1234.567, 3, Lang::En), "1230");
        assert_eq!(format_sig(37.9, 1, Lang::En), "40");
        assert_eq!(format_sig(0.996, 2, Lang::En), "1.0");
        assert_eq!(format_sig(12.3456, 3, Lang::En), "12.3");
        assert_eq!(format_sig(12.3456, 3, Lang::Es), "12,3");
        assert_eq!(format_sig(0.012345, 3, Lang::Es), "0,0123");
        assert_eq!(format_sig(-0.0001, 1, Lang::En), "-0.0001");
        assert_eq!(format_sig(0.0, 3, Lang::En), "0");
        assert_eq!(format_sig(f64::NAN, 3, Lang::En), "—");
        assert_eq!(format_fixed(-0.0004, 2, Lang::En), "0.00");
    }

    #[test]
    fn what_is_displayed_reads_back_to_the_same_value() {
        for lang in Lang::ALL {
            for v in [0.5, 2.25, 17.0, 0.0125, 950.0, 3.75] {
                let shown = format_sig(v, 4, lang);
                assert_eq!(parse(&shown, lang), Ok(v), "{lang:?} {shown}");
            }
        }
    }

    #[test]
    fn typed_figures_and_decimals() {
        fn check(text: &str, lang: Lang, figures: Option<u8>, decimals: usize) {
            assert_eq!(super::figures(text, lang), figures, "figures of {text:?}");
            assert_eq!(super::decimals(text), decimals, "decimals of {text:?}");
        }
        check("2.50", Lang::En, Some(3), 2);
        check("2,50", Lang::Es, Some(3), 2);
        check("1500", Lang::En, Some(4), 0);
        check("1500.", Lang::En, Some(4), 0);
        check("0.0120", Lang::En, Some(3), 4);
        check("7", Lang::En, Some(1), 0);
        check("2,5", Lang::En, None, 1);
        check("abc", Lang::En, None, 0);
    }

    #[test]
    fn language_tags() {
        assert_eq!(Lang::from_tag("es-MX"), Some(Lang::Es));
        assert_eq!(Lang::from_tag("en_US.UTF-8"), Some(Lang::En));
        assert_eq!(Lang::from_tag("fr"), None);
    }
}
