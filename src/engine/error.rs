//! The engine's one error type.
//!
//! Following ripgrep's style, [`Error`] is opaque: callers match on [`ErrorKind`] (which is
//! `#[non_exhaustive]` so new failure modes are not breaking changes) and read the English
//! message or the named parameters. The UI never shows the English message directly: it looks
//! up the error's reason (a stable code for a refusal the operator can meet, set with
//! [`Error::because`]) or else its kind's [`ErrorKind::code`] in its translation files and fills
//! in the parameters, so every error reaches the operator in words, in their language.

use std::fmt;

/// What went wrong, as a category the UI and the CLI can act on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum ErrorKind {
    /// Input text that is not a formula, reaction or number.
    Syntax,
    /// An element symbol that is not in the periodic table.
    UnknownElement,
    /// A `(` without `)` or the other way round, or mismatched bracket kinds.
    UnbalancedParenthesis,
    /// `()` with nothing inside.
    EmptyGroup,
    /// A count of zero, as in `H0` or `(OH)0`.
    ZeroCount,
    /// A count or total too large to represent exactly.
    Overflow,
    /// No set of positive coefficients conserves every element and charge.
    Impossible,
    /// More than one independent balancing exists.
    Ambiguous,
    /// The same species is written on both sides.
    SpeciesOnBothSides,
    /// A coefficient given by the user does not conserve atoms or charge.
    WrongCoefficient,
    /// A species asked for is not part of the reaction.
    NotInReaction,
    /// A chemical or product id that is not in the catalog.
    UnknownChemical,
    /// A number outside the range where the result means anything (negative flow, pH 15, ...).
    OutOfRange,
    /// A target that the chosen chemical cannot reach.
    Unreachable,
    /// A value that is required but missing or not a number.
    InvalidInput,
}

impl ErrorKind {
    /// A stable, kebab-case code: the JSON `kind` and the key stem for translations.
    pub fn code(self) -> &'static str {
        match self {
            ErrorKind::Syntax => "syntax",
            ErrorKind::UnknownElement => "unknown-element",
            ErrorKind::UnbalancedParenthesis => "unbalanced-parenthesis",
            ErrorKind::EmptyGroup => "empty-group",
            ErrorKind::ZeroCount => "zero-count",
            ErrorKind::Overflow => "overflow",
            ErrorKind::Impossible => "impossible",
            ErrorKind::Ambiguous => "ambiguous",
            ErrorKind::SpeciesOnBothSides => "species-on-both-sides",
            ErrorKind::WrongCoefficient => "wrong-coefficient",
            ErrorKind::NotInReaction => "not-in-reaction",
            ErrorKind::UnknownChemical => "unknown-chemical",
            ErrorKind::OutOfRange => "out-of-range",
            ErrorKind::Unreachable => "unreachable",
            ErrorKind::InvalidInput => "invalid-input",
        }
    }
}

/// An engine failure: a kind, an English message, an optional column, an optional reason
/// code, and named parameters.
#[derive(Clone, Debug, PartialEq)]
pub struct Error {
    kind: ErrorKind,
    message: String,
    column: Option<usize>,
    reason: Option<&'static str>,
    params: Vec<(&'static str, String)>,
}

impl Error {
    pub fn new(kind: ErrorKind, message: impl Into<String>) -> Error {
        Error {
            kind,
            message: message.into(),
            column: None,
            reason: None,
            params: Vec::new(),
        }
    }

    /// Names why the input was refused, as a stable kebab-case code. A kind says what sort of
    /// failure it is; the reason says which one, so a translation can say it precisely (for
    /// example "calcium hardness is more than the total hardness" rather than "invalid input").
    pub fn because(mut self, reason: &'static str) -> Error {
        self.reason = Some(reason);
        self
    }

    pub fn reason(&self) -> Option<&'static str> {
        self.reason
    }

    /// Marks the 1-based column (in characters) of the input where the problem was found.
    pub fn at(mut self, column: usize) -> Error {
        self.column = Some(column);
        self
    }

    /// Adds a named parameter for translated messages.
    pub fn with(mut self, name: &'static str, value: impl ToString) -> Error {
        self.params.push((name, value.to_string()));
        self
    }

    pub fn kind(&self) -> ErrorKind {
        self.kind
    }

    pub fn message(&self) -> &str {
        &self.message
    }

    pub fn column(&self) -> Option<usize> {
        self.column
    }

    pub fn params(&self) -> &[(&'static str, String)] {
        &self.params
    }

    pub fn param(&self, name: &str) -> Option<&str> {
        self.params
            .iter()
            .find(|(n, _)| *n == name)
            .map(|(_, v)| v.as_str())
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.column {
            Some(column) => write!(f, "{} (column {})", self.message, column),
            None => f.write_str(&self.message),
        }
    }
}

impl std::error::Error for Error {}

pub type Result<T> = std::result::Result<T, Error>;

/// Rejects NaN and infinities, and values outside `[min, max]`, naming the quantity.
pub fn check_range(name: &'static str, value: f64, min: f64, max: f64, unit: &str) -> Result<f64> {
    if !value.is_finite() {
        return Err(
            Error::new(ErrorKind::InvalidInput, format!("{name} must be a number"))
                .because("not-a-number")
                .with("quantity", name),
        );
    }
    if value < min || value > max {
        return Err(Error::new(
            ErrorKind::OutOfRange,
            format!(
                "{name} {} {unit} is outside {min}–{max} {unit}",
                six_figures(value)
            ),
        )
        .with("quantity", name)
        .with("value", value)
        .with("min", min)
        .with("max", max)
        .with("unit", unit));
    }
    Ok(value)
}

/// A value as a refusal's sentence shows it: to six significant figures, so a reading
/// converted to SI reads as typed (6 ft is "1.8288 m", not "1.8288000000000002 m"). The
/// refusal's `value` parameter keeps every digit.
fn six_figures(value: f64) -> String {
    let rounded = format!("{value:.5e}");
    let magnitude = value.abs();
    if magnitude != 0.0 && !(1e-4..1e9).contains(&magnitude) {
        // Far from any reading: as a power of ten ("1e300", not three hundred digits).
        let (mantissa, exponent) = rounded.split_once('e').unwrap_or((&rounded, "0"));
        let mantissa = mantissa.trim_end_matches('0').trim_end_matches('.');
        return format!("{mantissa}e{exponent}");
    }
    rounded
        .parse::<f64>()
        .map_or_else(|_| value.to_string(), |v| v.to_string())
}

/// Rejects NaN, infinities, zero and negative values, naming the quantity.
pub fn check_positive(name: &'static str, value: f64, unit: &str) -> Result<f64> {
    if !value.is_finite() {
        return Err(
            Error::new(ErrorKind::InvalidInput, format!("{name} must be a number"))
                .because("not-a-number")
                .with("quantity", name),
        );
    }
    if value <= 0.0 {
        return Err(Error::new(
            ErrorKind::OutOfRange,
            format!("{name} must be greater than zero (got {value} {unit})"),
        )
        .because("not-positive")
        .with("quantity", name)
        .with("value", value)
        .with("unit", unit));
    }
    Ok(value)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The one helper: a refusal's sentence for `value` outside 0–50 °C.
    fn check(value: f64, shown: &str) {
        let e = check_range("temperature", value, 0.0, 50.0, "°C").unwrap_err();
        assert_eq!(
            e.message(),
            format!("temperature {shown} °C is outside 0–50 °C"),
            "{value}"
        );
        // The parameter keeps every digit.
        assert_eq!(e.param("value"), Some(value.to_string().as_str()));
    }

    #[test]
    fn a_refusal_shows_the_value_to_six_figures() {
        // 12 °F typed, read as (12 − 32) × 5/9 °C.
        check((12.0 - 32.0) * 5.0 / 9.0, "-11.1111");
        check(60.0, "60");
        check(50.000001, "50");
        check(1e300, "1e300");
        check(-1e-300, "-1e-300");
        check(123456789.0, "123457000");
    }
}
