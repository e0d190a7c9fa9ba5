//! Chemical formulas: parsing, canonical text, molar mass and elemental composition.
//!
//! The parser is a hand-written recursive descent over characters (not a regex) so that every
//! error can say *where* (1-based column) and *why*. It keeps the written structure (groups,
//! hydrate parts, charge) for display, and a flat element count for arithmetic. Counts use
//! checked integer arithmetic: a pathological `((H99999)99999)99999` is an `Overflow` error,
//! never a wrap-around or a panic.
//!
//! Accepted: nested `()` `[]` `{}` groups with counts; hydrates joined by `·`, `•`, `⋅`, `*`
//! or `.`, each part with an optional leading count (`Al2(SO4)3·14H2O`); charges written
//! `SO4^2-`, `SO4-2`, `Fe+3`, `Fe^3+`, `HCO3-`, `NH4+`, `Fe++`; a trailing state `(aq)`, `(s)`,
//! `(l)`, `(g)`; whitespace between tokens. `Fe3+` reads as the symbol `Fe3` with charge `+`
//! (the digits belong to the count): write `Fe+3` or `Fe^3+` for the ferric ion.

use super::elements::{self, Element};
use super::{Error, ErrorKind, Result};
use std::fmt;

/// A parsed formula.
#[derive(Clone, Debug)]
pub struct Formula {
    parts: Vec<Part>,
    charge: i32,
    state: Option<State>,
    /// Element index (z - 1) and total count, sorted by index.
    atoms: Vec<(u8, u64)>,
}

/// Physical state written after a formula, kept so `CO2(g)` and `CO2(aq)` stay distinct.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum State {
    Aqueous,
    Solid,
    Liquid,
    Gas,
}

impl State {
    fn suffix(self) -> &'static str {
        match self {
            State::Aqueous => "(aq)",
            State::Solid => "(s)",
            State::Liquid => "(l)",
            State::Gas => "(g)",
        }
    }
}

#[derive(Clone, Debug)]
struct Part {
    multiplier: u64,
    nodes: Vec<Node>,
}

#[derive(Clone, Debug)]
enum Node {
    Atom {
        element: u8,
        count: u64,
    },
    Group {
        open: char,
        nodes: Vec<Node>,
        count: u64,
    },
}

/// One element's share of a formula.
#[derive(Clone, Debug, PartialEq)]
pub struct Component {
    pub symbol: &'static str,
    pub count: u64,
    /// g/mol contributed by this element.
    pub mass: f64,
    pub mass_fraction: f64,
}

/// The most characters a formula may have: far above any real compound, and it bounds the
/// recursion depth of nested groups.
const MAX_LEN: usize = 256;

impl Formula {
    /// Parses a formula. Errors carry the 1-based column of the offending character.
    pub fn parse(text: &str) -> Result<Formula> {
        let chars: Vec<char> = text.chars().collect();
        if chars.len() > MAX_LEN {
            return Err(Error::new(
                ErrorKind::Overflow,
                format!("formula longer than {MAX_LEN} characters"),
            )
            .at(MAX_LEN + 1));
        }
        let mut end = chars.len();
        while end > 0 && chars[end - 1].is_whitespace() {
            end -= 1;
        }
        let mut start = 0;
        while start < end && chars[start].is_whitespace() {
            start += 1;
        }
        if start == end {
            return Err(Error::new(ErrorKind::Syntax, "empty formula").at(1));
        }
        let (end, state) = strip_state(&chars, start, end);
        let (end, charge) = strip_charge(&chars, start, end)?;
        let mut parser = Parser {
            chars: &chars,
            pos: start,
            end,
        };
        let mut parts = Vec::new();
        loop {
            parser.skip_space();
            let part_start = parser.pos;
            let multiplier = parser.count()?.unwrap_or(1);
            parser.skip_space();
            let nodes = parser.sequence(None)?;
            if nodes.is_empty() {
                let what = if parser.pos < end {
                    format!("unexpected '{}'", chars[parser.pos])
                } else {
                    "missing formula".to_string()
                };
                let message = if parts.is_empty() {
                    what
                } else {
                    format!("{what} after hydrate separator")
                };
                return Err(
                    Error::new(ErrorKind::Syntax, message).at(parser.pos.max(part_start) + 1)
                );
            }
            parts.push(Part { multiplier, nodes });
            parser.skip_space();
            if parser.pos >= end {
                break;
            }
            if is_hydrate_separator(chars[parser.pos]) {
                parser.pos += 1;
                continue;
            }
            return Err(parser.unexpected());
        }
        let atoms = flatten(&parts)?;
        Ok(Formula {
            parts,
            charge,
            state,
            atoms,
        })
    }

    /// Molar mass in g/mol from IUPAC standard atomic weights (electron mass neglected for ions,
    /// as is usual in water chemistry: it is below 0.001 g/mol per charge).
    pub fn molar_mass(&self) -> f64 {
        self.atoms
            .iter()
            .map(|&(e, n)| element(e).atomic_weight * n as f64)
            .sum()
    }

    /// Decimal places to which the molar mass is known: the fewest among its atomic weights
    /// (the rule for sums; whole-number counts are exact and do not limit it).
    pub fn molar_mass_decimals(&self) -> u8 {
        self.atoms
            .iter()
            .map(|&(e, _)| element(e).decimals)
            .min()
            .unwrap_or(0)
    }

    /// True when an element without a standard atomic weight (no stable isotope) is present.
    pub fn uses_mass_numbers(&self) -> bool {
        self.atoms
            .iter()
            .any(|&(e, _)| element(e).basis == elements::WeightBasis::MassNumber)
    }

    pub fn charge(&self) -> i32 {
        self.charge
    }

    pub fn state(&self) -> Option<State> {
        self.state
    }

    /// Number of atoms of the element `symbol` (0 when absent or not an element).
    pub fn count(&self, symbol: &str) -> u64 {
        let Some(e) = elements::by_symbol(symbol) else {
            return 0;
        };
        self.atoms
            .iter()
            .find(|&&(i, _)| i + 1 == e.z)
            .map_or(0, |&(_, n)| n)
    }

    /// (symbol, count) pairs in order of atomic number.
    pub fn atoms(&self) -> impl Iterator<Item = (&'static str, u64)> + '_ {
        self.atoms.iter().map(|&(e, n)| (element(e).symbol, n))
    }

    /// (element index, count) pairs in order of atomic number, for matrix building.
    pub(crate) fn atom_indices(&self) -> &[(u8, u64)] {
        &self.atoms
    }

    /// Elemental composition in Hill order (C, H, then alphabetical; alphabetical without C).
    pub fn composition(&self) -> Vec<Component> {
        let total = self.molar_mass();
        let mut components: Vec<Component> = self
            .atoms
            .iter()
            .map(|&(e, n)| {
                let el = element(e);
                let mass = el.atomic_weight * n as f64;
                Component {
                    symbol: el.symbol,
                    count: n,
                    mass,
                    mass_fraction: if total > 0.0 { mass / total } else { 0.0 },
                }
            })
            .collect();
        let has_carbon = self.count("C") > 0;
        components.sort_by_key(|c| match (has_carbon, c.symbol) {
            (true, "C") => (0, c.symbol),
            (true, "H") => (1, c.symbol),
            _ => (2, c.symbol),
        });
        components
    }

    /// Same substance: same atoms, charge and state (structure and spelling may differ).
    pub fn same_species(&self, other: &Formula) -> bool {
        self.atoms == other.atoms && self.charge == other.charge && self.state == other.state
    }

    /// Same atoms and charge, ignoring the written state.
    pub fn same_composition(&self, other: &Formula) -> bool {
        self.atoms == other.atoms && self.charge == other.charge
    }
}

impl PartialEq for Formula {
    fn eq(&self, other: &Formula) -> bool {
        self.same_species(other)
    }
}

fn element(index: u8) -> &'static Element {
    // Indices only ever come from `elements::by_symbol`, so they are in range.
    &elements::all()[index as usize]
}

fn is_hydrate_separator(c: char) -> bool {
    matches!(c, '·' | '•' | '⋅' | '*' | '.' | '∙')
}

fn closing(open: char) -> char {
    match open {
        '(' => ')',
        '[' => ']',
        _ => '}',
    }
}

fn strip_state(chars: &[char], start: usize, end: usize) -> (usize, Option<State>) {
    for state in [State::Aqueous, State::Solid, State::Liquid, State::Gas] {
        let suffix: Vec<char> = state.suffix().chars().collect();
        if end - start > suffix.len() && chars[end - suffix.len()..end] == suffix[..] {
            let mut new_end = end - suffix.len();
            while new_end > start && chars[new_end - 1].is_whitespace() {
                new_end -= 1;
            }
            return (new_end, Some(state));
        }
    }
    (end, None)
}

/// Reads a charge written at the end of the formula and returns where the body ends.
fn strip_charge(chars: &[char], start: usize, end: usize) -> Result<(usize, i32)> {
    let sign_of = |c: char| match c {
        '+' => Some(1),
        '-' | '−' => Some(-1),
        _ => None,
    };
    let digits_value = |from: usize, to: usize| -> Result<i32> {
        let mut value: i32 = 0;
        for (i, c) in chars[from..to].iter().enumerate() {
            let d = c.to_digit(10).unwrap_or(0) as i32;
            value = value
                .checked_mul(10)
                .and_then(|v| v.checked_add(d))
                .filter(|v| *v <= 99)
                .ok_or_else(|| {
                    Error::new(ErrorKind::Overflow, "charge too large").at(from + i + 1)
                })?;
        }
        if value == 0 {
            return Err(Error::new(
                ErrorKind::ZeroCount,
                "a charge of zero is written without a sign",
            )
            .at(from + 1));
        }
        Ok(value)
    };
    // `^` form: SO4^2-, Fe^3+, SO4^-2, OH^-.
    if let Some(caret) = (start..end).rev().find(|&i| chars[i] == '^') {
        let mut i = caret + 1;
        let (magnitude, sign);
        if i < end && sign_of(chars[i]).is_some() {
            sign = sign_of(chars[i]).unwrap_or(1);
            i += 1;
            let digits_end = (i..end)
                .find(|&j| !chars[j].is_ascii_digit())
                .unwrap_or(end);
            magnitude = if digits_end > i {
                digits_value(i, digits_end)?
            } else {
                1
            };
            i = digits_end;
        } else {
            let digits_end = (i..end)
                .find(|&j| !chars[j].is_ascii_digit())
                .unwrap_or(end);
            let value = if digits_end > i {
                digits_value(i, digits_end)?
            } else {
                1
            };
            match chars
                .get(digits_end)
                .and_then(|&c| if digits_end < end { sign_of(c) } else { None })
            {
                Some(s) => sign = s,
                None => {
                    return Err(Error::new(
                        ErrorKind::Syntax,
                        "a charge after '^' needs a sign, as in ^2-",
                    )
                    .at(caret + 1));
                }
            }
            magnitude = value;
            i = digits_end + 1;
        }
        if i != end {
            return Err(Error::new(
                ErrorKind::Syntax,
                format!("unexpected '{}' after the charge", chars[i]),
            )
            .at(i + 1));
        }
        return Ok((caret, sign * magnitude));
    }
    // Sign followed by digits at the end: SO4-2, Fe+3.
    let digits_start = (start..end)
        .rev()
        .find(|&i| !chars[i].is_ascii_digit())
        .map_or(start, |i| i + 1);
    if digits_start < end
        && digits_start > start
        && let Some(sign) = sign_of(chars[digits_start - 1])
    {
        let value = digits_value(digits_start, end)?;
        return Ok((digits_start - 1, sign * value));
    }
    // A run of signs at the end: HCO3-, NH4+, Fe++, Fe+++.
    let mut run_start = end;
    while run_start > start && sign_of(chars[run_start - 1]).is_some() {
        run_start -= 1;
    }
    if run_start < end {
        let first = sign_of(chars[run_start]).unwrap_or(1);
        if chars[run_start..end]
            .iter()
            .any(|&c| sign_of(c) != Some(first))
        {
            return Err(
                Error::new(ErrorKind::Syntax, "mixed '+' and '-' in a charge").at(run_start + 1),
            );
        }
        if run_start == start {
            return Err(
                Error::new(ErrorKind::Syntax, "a charge needs a formula before it").at(start + 1),
            );
        }
        return Ok((run_start, first * (end - run_start) as i32));
    }
    Ok((end, 0))
}

struct Parser<'a> {
    chars: &'a [char],
    pos: usize,
    end: usize,
}

impl Parser<'_> {
    fn skip_space(&mut self) {
        while self.pos < self.end && self.chars[self.pos].is_whitespace() {
            self.pos += 1;
        }
    }

    fn unexpected(&self) -> Error {
        let c = self.chars[self.pos];
        let kind = if matches!(c, ')' | ']' | '}') {
            ErrorKind::UnbalancedParenthesis
        } else {
            ErrorKind::Syntax
        };
        let message = if kind == ErrorKind::UnbalancedParenthesis {
            format!("'{c}' has no matching opening bracket")
        } else {
            format!("unexpected '{c}'")
        };
        Error::new(kind, message).at(self.pos + 1)
    }

    /// Reads an optional whole-number count; zero is an error.
    fn count(&mut self) -> Result<Option<u64>> {
        let start = self.pos;
        let mut value: u64 = 0;
        while self.pos < self.end && self.chars[self.pos].is_ascii_digit() {
            let digit = self.chars[self.pos].to_digit(10).unwrap_or(0) as u64;
            value = value
                .checked_mul(10)
                .and_then(|v| v.checked_add(digit))
                .filter(|v| *v <= u32::MAX as u64)
                .ok_or_else(|| Error::new(ErrorKind::Overflow, "count too large").at(start + 1))?;
            self.pos += 1;
        }
        if self.pos == start {
            return Ok(None);
        }
        if value == 0 {
            return Err(Error::new(ErrorKind::ZeroCount, "a count of zero").at(start + 1));
        }
        Ok(Some(value))
    }

    /// Reads atoms and groups until a closing bracket, a hydrate separator or the end.
    fn sequence(&mut self, open: Option<(char, usize)>) -> Result<Vec<Node>> {
        let mut nodes = Vec::new();
        loop {
            self.skip_space();
            if self.pos >= self.end {
                if let Some((open, at)) = open {
                    return Err(Error::new(
                        ErrorKind::UnbalancedParenthesis,
                        format!("'{open}' is never closed"),
                    )
                    .at(at + 1));
                }
                return Ok(nodes);
            }
            let c = self.chars[self.pos];
            match c {
                'A'..='Z' => {
                    let start = self.pos;
                    self.pos += 1;
                    while self.pos < self.end && self.chars[self.pos].is_ascii_lowercase() {
                        self.pos += 1;
                    }
                    let symbol: String = self.chars[start..self.pos].iter().collect();
                    let element = elements::by_symbol(&symbol).ok_or_else(|| {
                        Error::new(
                            ErrorKind::UnknownElement,
                            format!("'{symbol}' is not an element symbol"),
                        )
                        .at(start + 1)
                        .with("symbol", &symbol)
                    })?;
                    let count = self.count()?.unwrap_or(1);
                    nodes.push(Node::Atom {
                        element: element.z - 1,
                        count,
                    });
                }
                '(' | '[' | '{' => {
                    let at = self.pos;
                    self.pos += 1;
                    let inner = self.sequence(Some((c, at)))?;
                    if inner.is_empty() {
                        return Err(Error::new(
                            ErrorKind::EmptyGroup,
                            format!("empty '{c}{}'", closing(c)),
                        )
                        .at(at + 1));
                    }
                    let count = self.count()?.unwrap_or(1);
                    nodes.push(Node::Group {
                        open: c,
                        nodes: inner,
                        count,
                    });
                }
                ')' | ']' | '}' => {
                    return match open {
                        Some((o, _)) if closing(o) == c => {
                            self.pos += 1;
                            Ok(nodes)
                        }
                        Some((o, at)) => Err(Error::new(
                            ErrorKind::UnbalancedParenthesis,
                            format!("'{o}' at column {} is closed by '{c}'", at + 1),
                        )
                        .at(self.pos + 1)),
                        None => Err(self.unexpected()),
                    };
                }
                c if is_hydrate_separator(c) && open.is_none() => return Ok(nodes),
                c if c.is_ascii_lowercase() => {
                    return Err(Error::new(
                        ErrorKind::UnknownElement,
                        format!(
                            "'{c}' is not an element symbol (symbols start with a capital letter)"
                        ),
                    )
                    .at(self.pos + 1)
                    .with("symbol", c));
                }
                _ => return Err(self.unexpected()),
            }
        }
    }
}

fn flatten(parts: &[Part]) -> Result<Vec<(u8, u64)>> {
    fn add(nodes: &[Node], factor: u64, totals: &mut Vec<(u8, u64)>) -> Result<()> {
        for node in nodes {
            match node {
                Node::Atom { element, count } => {
                    let n = count.checked_mul(factor).ok_or_else(overflow)?;
                    match totals.iter_mut().find(|(e, _)| e == element) {
                        Some((_, total)) => *total = total.checked_add(n).ok_or_else(overflow)?,
                        None => totals.push((*element, n)),
                    }
                }
                Node::Group { nodes, count, .. } => add(
                    nodes,
                    factor.checked_mul(*count).ok_or_else(overflow)?,
                    totals,
                )?,
            }
        }
        Ok(())
    }
    fn overflow() -> Error {
        Error::new(ErrorKind::Overflow, "atom count too large")
    }
    let mut totals = Vec::new();
    for part in parts {
        add(&part.nodes, part.multiplier, &mut totals)?;
    }
    if totals.iter().any(|&(_, n)| n > u32::MAX as u64) {
        return Err(overflow());
    }
    totals.sort_unstable_by_key(|&(e, _)| e);
    Ok(totals)
}

impl fmt::Display for Formula {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fn nodes(f: &mut fmt::Formatter<'_>, list: &[Node]) -> fmt::Result {
            for node in list {
                match node {
                    Node::Atom { element: e, count } => {
                        f.write_str(element(*e).symbol)?;
                        if *count > 1 {
                            write!(f, "{count}")?;
                        }
                    }
                    Node::Group {
                        open,
                        nodes: inner,
                        count,
                    } => {
                        write!(f, "{open}")?;
                        nodes(f, inner)?;
                        write!(f, "{}", closing(*open))?;
                        if *count > 1 {
                            write!(f, "{count}")?;
                        }
                    }
                }
            }
            Ok(())
        }
        for (i, part) in self.parts.iter().enumerate() {
            if i > 0 {
                f.write_str("·")?;
            }
            if part.multiplier > 1 {
                write!(f, "{}", part.multiplier)?;
            }
            nodes(f, &part.nodes)?;
        }
        match self.charge {
            0 => {}
            1 => f.write_str("+")?,
            -1 => f.write_str("-")?,
            c if c > 0 => write!(f, "^{c}+")?,
            c => write!(f, "^{}-", -c)?,
        }
        if let Some(state) = self.state {
            f.write_str(state.suffix())?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Parses `input` and compares (canonical text, charge, element counts).
    fn check(input: &str, text: &str, charge: i32, atoms: &[(&str, u64)]) {
        let f = Formula::parse(input).unwrap_or_else(|e| panic!("{input:?}: {e}"));
        assert_eq!(f.to_string(), text, "{input:?}");
        assert_eq!(f.charge(), charge, "{input:?}");
        let mut got: Vec<(&str, u64)> = f.atoms().collect();
        let mut want = atoms.to_vec();
        got.sort();
        want.sort();
        assert_eq!(got, want, "{input:?}");
    }

    fn check_err(input: &str, kind: ErrorKind, column: Option<usize>) {
        let e = Formula::parse(input)
            .err()
            .unwrap_or_else(|| panic!("{input:?} should fail"));
        assert_eq!((e.kind(), e.column()), (kind, column), "{input:?}: {e}");
    }

    #[test]
    fn parses() {
        check("H2O", "H2O", 0, &[("H", 2), ("O", 1)]);
        check("Ca(OH)2", "Ca(OH)2", 0, &[("Ca", 1), ("O", 2), ("H", 2)]);
        check(
            "Al2(SO4)3·14H2O",
            "Al2(SO4)3·14H2O",
            0,
            &[("Al", 2), ("S", 3), ("O", 26), ("H", 28)],
        );
        check(
            "FeCl3*6H2O",
            "FeCl3·6H2O",
            0,
            &[("Fe", 1), ("Cl", 3), ("H", 12), ("O", 6)],
        );
        check(
            "K4[Fe(CN)6]",
            "K4[Fe(CN)6]",
            0,
            &[("K", 4), ("Fe", 1), ("C", 6), ("N", 6)],
        );
        check(
            " Al2 (SO4)3 ",
            "Al2(SO4)3",
            0,
            &[("Al", 2), ("S", 3), ("O", 12)],
        );
        check(
            "CuSO4.5H2O",
            "CuSO4·5H2O",
            0,
            &[("Cu", 1), ("S", 1), ("O", 9), ("H", 10)],
        );
        check("2H2O", "2H2O", 0, &[("H", 4), ("O", 2)]);
    }

    #[test]
    fn charges() {
        check("SO4^2-", "SO4^2-", -2, &[("S", 1), ("O", 4)]);
        check("SO4-2", "SO4^2-", -2, &[("S", 1), ("O", 4)]);
        check("SO4^-2", "SO4^2-", -2, &[("S", 1), ("O", 4)]);
        check("Fe+3", "Fe^3+", 3, &[("Fe", 1)]);
        check("Fe^3+", "Fe^3+", 3, &[("Fe", 1)]);
        check("Fe++", "Fe^2+", 2, &[("Fe", 1)]);
        check("HCO3-", "HCO3-", -1, &[("H", 1), ("C", 1), ("O", 3)]);
        check("NH4+", "NH4+", 1, &[("N", 1), ("H", 4)]);
        check("H+", "H+", 1, &[("H", 1)]);
        check("OH^-", "OH-", -1, &[("O", 1), ("H", 1)]);
        check("CO2(g)", "CO2(g)", 0, &[("C", 1), ("O", 2)]);
        check(
            "Al(OH)3(s)",
            "Al(OH)3(s)",
            0,
            &[("Al", 1), ("O", 3), ("H", 3)],
        );
    }

    #[test]
    fn errors_say_where() {
        check_err("", ErrorKind::Syntax, Some(1));
        check_err("Xx2O", ErrorKind::UnknownElement, Some(1));
        check_err("Ca(OH2", ErrorKind::UnbalancedParenthesis, Some(3));
        check_err("CaOH)2", ErrorKind::UnbalancedParenthesis, Some(5));
        check_err("Ca(OH]2", ErrorKind::UnbalancedParenthesis, Some(6));
        check_err("Ca()2", ErrorKind::EmptyGroup, Some(3));
        check_err("H0", ErrorKind::ZeroCount, Some(2));
        check_err("(OH)0", ErrorKind::ZeroCount, Some(5));
        check_err("H99999999999", ErrorKind::Overflow, Some(2));
        check_err("((((H65535)65535)65535)65535)", ErrorKind::Overflow, None);
        check_err("H2O·", ErrorKind::Syntax, Some(5));
        check_err("h2o", ErrorKind::UnknownElement, Some(1));
        check_err("H2O#", ErrorKind::Syntax, Some(4));
        check_err("+", ErrorKind::Syntax, Some(1));
        check_err("SO4^2", ErrorKind::Syntax, Some(4));
        check_err("Fe+-", ErrorKind::Syntax, Some(3));
    }

    #[test]
    fn molar_masses_from_iupac_weights() {
        // Sums of IUPAC 2021 standard/conventional atomic weights, worked by hand.
        let m = |s: &str| Formula::parse(s).unwrap().molar_mass();
        assert!((m("H2O") - 18.015).abs() < 1e-9);
        assert!((m("CaCO3") - 100.086).abs() < 1e-9);
        assert!((m("Cl2") - 70.90).abs() < 1e-9);
        assert_eq!(Formula::parse("Na2CO3").unwrap().molar_mass_decimals(), 3);
        assert_eq!(Formula::parse("NaCl").unwrap().molar_mass_decimals(), 2);
    }

    #[test]
    fn composition_sums_to_one_in_hill_order() {
        let c = Formula::parse("NaHCO3").unwrap().composition();
        let symbols: Vec<&str> = c.iter().map(|c| c.symbol).collect();
        assert_eq!(symbols, ["C", "H", "Na", "O"]);
        let total: f64 = c.iter().map(|c| c.mass_fraction).sum();
        assert!((total - 1.0).abs() < 1e-12);
    }
}
