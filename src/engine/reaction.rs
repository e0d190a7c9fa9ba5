//! Reactions: parsing `A + B -> C + D` and balancing it exactly.
//!
//! Balancing is linear algebra: one row per element plus one for charge, one column per
//! species (products negated), and the balanced coefficients span the matrix's null space.
//! We reduce the matrix to row echelon form fraction-free, in whole numbers (a nalgebra
//! `DMatrix<i128>`, each row divided by its content), with checked arithmetic, and read the
//! null space as exact rationals (`Ratio<i128>`), so there is no rounding, no tolerance to tune,
//! and an overflow is an error rather than a wrong answer; the balancing found is checked once
//! more against the atoms and charges. The null space's dimension tells the story:
//! 0 means impossible, 1 means a unique balancing, more means the equation is ambiguous.
//!
//! Coefficients are exact counts; they never limit significant figures downstream.

use super::formula::Formula;
use super::{Error, ErrorKind, Result};
use nalgebra::DMatrix;
use num_integer::Integer;
use num_rational::Ratio;
use num_traits::{One, Signed, Zero};
use std::fmt;

type Q = Ratio<i128>;

/// Which side of the arrow a species is on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Side {
    Reactant,
    Product,
}

/// One species of a balanced reaction.
#[derive(Clone, Debug)]
pub struct Species {
    pub formula: Formula,
    /// Smallest whole-number coefficient.
    pub coefficient: u64,
    pub side: Side,
    /// The formula as the user wrote it (trimmed, without coefficient).
    pub written: String,
}

/// A balanced reaction, species in the order written.
#[derive(Clone, Debug)]
pub struct Reaction {
    species: Vec<Species>,
    arrow: &'static str,
}

struct Term {
    coefficient: Option<u64>,
    formula: Formula,
    written: String,
    side: Side,
    column: usize,
}

impl Reaction {
    /// Parses and balances an equation. If the user wrote coefficients, they are checked:
    /// coefficients that do not conserve atoms and charge are a `WrongCoefficient` error that
    /// names the correct balancing.
    pub fn balance(equation: &str) -> Result<Reaction> {
        let (terms, arrow) = parse_equation(equation)?;
        check_duplicates(&terms)?;
        let matrix = conservation_matrix(&terms)?;
        let given = terms.iter().any(|t| t.coefficient.is_some());
        if given {
            let written: Vec<u64> = terms.iter().map(|t| t.coefficient.unwrap_or(1)).collect();
            if conserves(&matrix, &written)? {
                return Ok(build(terms, &reduce(&written), arrow));
            }
        }
        check_each_element_on_both_sides(&terms)?;
        let null_space = null_space(matrix.clone())?;
        let coefficients = match null_space.len() {
            0 => return Err(impossible(&terms, None)),
            1 => {
                let found = integer_coefficients(&null_space[0], &terms)?;
                // Every step above is exact, checked arithmetic; the balancing is checked
                // once more against the atoms and charges, so that no slip can ever print an
                // equation that does not balance.
                if !conserves(&matrix, &found)? {
                    return Err(overflow());
                }
                found
            }
            n => {
                let free: Vec<&str> = null_space
                    .iter()
                    .filter_map(|v| v.iter().rposition(|q| !q.is_zero()))
                    .map(|i| terms[i].written.as_str())
                    .collect();
                return Err(Error::new(
                    ErrorKind::Ambiguous,
                    format!(
                        "more than one balancing: {n} independent ways; split it into separate reactions, e.g. one for each of {}",
                        free.join(", ")
                    ),
                )
                .with("dimension", n)
                .with("species", free.join(", ")));
            }
        };
        if given {
            let balanced = build(terms, &coefficients, arrow);
            return Err(Error::new(
                ErrorKind::WrongCoefficient,
                format!(
                    "the coefficients given do not conserve atoms and charge; balanced: {balanced}"
                ),
            )
            .with("balanced", balanced));
        }
        Ok(build(terms, &coefficients, arrow))
    }

    pub fn species(&self) -> &[Species] {
        &self.species
    }

    pub fn reactants(&self) -> impl Iterator<Item = &Species> {
        self.species.iter().filter(|s| s.side == Side::Reactant)
    }

    pub fn products(&self) -> impl Iterator<Item = &Species> {
        self.species.iter().filter(|s| s.side == Side::Product)
    }

    /// Finds a species by formula (any spelling of the same substance; the written state is
    /// ignored when the query has none).
    pub fn find(&self, formula: &str) -> Result<&Species> {
        let query = Formula::parse(formula)?;
        self.species
            .iter()
            .find(|s| {
                if query.state().is_some() {
                    s.formula.same_species(&query)
                } else {
                    s.formula.same_composition(&query)
                }
            })
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::NotInReaction,
                    format!("{query} is not in the reaction {self}"),
                )
                .with("species", &query)
            })
    }

    /// Exact mole ratio: mol of `to` per mol of `from`.
    pub fn mole_ratio(&self, from: &str, to: &str) -> Result<Ratio<i64>> {
        let from = self.find(from)?.coefficient;
        let to = self.find(to)?.coefficient;
        let from = i64::try_from(from).map_err(|_| overflow())?;
        let to = i64::try_from(to).map_err(|_| overflow())?;
        Ok(Ratio::new(to, from))
    }

    /// Mass ratio: g of `to` per g of `from`, from the mole ratio and molar masses.
    pub fn mass_ratio(&self, from: &str, to: &str) -> Result<f64> {
        let ratio = self.mole_ratio(from, to)?;
        let m_from = self.find(from)?.formula.molar_mass();
        let m_to = self.find(to)?.formula.molar_mass();
        Ok(*ratio.numer() as f64 / *ratio.denom() as f64 * m_to / m_from)
    }

    /// The equation with every coefficient divided by that of `species`, as exact fractions.
    pub fn per_mole_of(&self, species: &str) -> Result<String> {
        let basis = self.find(species)?.coefficient as i128;
        let mut text = String::new();
        let mut side = Side::Reactant;
        for (i, s) in self.species.iter().enumerate() {
            if i > 0 {
                text.push_str(if s.side != side {
                    self.arrow_spaced()
                } else {
                    " + "
                });
            }
            side = s.side;
            let c = Ratio::new(s.coefficient as i128, basis);
            if !c.is_one() {
                text.push_str(&format!("{c} "));
            }
            text.push_str(&s.formula.to_string());
        }
        Ok(text)
    }

    fn arrow_spaced(&self) -> &'static str {
        if self.arrow == "=" { " = " } else { " -> " }
    }
}

impl fmt::Display for Reaction {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut side = Side::Reactant;
        for (i, s) in self.species.iter().enumerate() {
            if i > 0 {
                f.write_str(if s.side != side {
                    self.arrow_spaced()
                } else {
                    " + "
                })?;
            }
            side = s.side;
            if s.coefficient != 1 {
                write!(f, "{} ", s.coefficient)?;
            }
            write!(f, "{}", s.formula)?;
        }
        Ok(())
    }
}

fn overflow() -> Error {
    Error::new(
        ErrorKind::Overflow,
        "coefficients too large to balance exactly",
    )
}

const ARROWS: [&str; 7] = ["<=>", "<->", "->", "→", "⇌", "⟶", "="];

fn parse_equation(equation: &str) -> Result<(Vec<Term>, &'static str)> {
    let chars: Vec<char> = equation.chars().collect();
    if chars.len() > 1024 {
        return Err(Error::new(
            ErrorKind::Overflow,
            "equation longer than 1024 characters",
        ));
    }
    let found: Vec<(usize, &str)> = ARROWS
        .iter()
        .flat_map(|a| equation.match_indices(a).map(move |(i, _)| (i, *a)))
        .collect();
    let Some(&(byte_at, arrow)) = found.iter().min_by_key(|(i, _)| *i) else {
        return Err(Error::new(
            ErrorKind::Syntax,
            "no arrow: write reactants -> products (or =)",
        ));
    };
    let rest = &equation[byte_at + arrow.len()..];
    if ARROWS.iter().any(|a| rest.contains(a)) {
        let at = equation[..byte_at].chars().count() + arrow.chars().count() + 1;
        return Err(Error::new(ErrorKind::Syntax, "more than one arrow").at(at));
    }
    let left_cols = 1;
    let right_cols = equation[..byte_at].chars().count() + arrow.chars().count() + 1;
    let mut terms = split_side(&equation[..byte_at], left_cols, Side::Reactant)?;
    terms.extend(split_side(rest, right_cols, Side::Product)?);
    let arrow = if arrow == "=" { "=" } else { "->" };
    Ok((terms, arrow))
}

/// Splits one side at `+` signs that join species, not those that end a charge.
fn split_side(text: &str, first_column: usize, side: Side) -> Result<Vec<Term>> {
    let chars: Vec<char> = text.chars().collect();
    let mut pieces: Vec<(usize, usize)> = Vec::new();
    let mut start = 0;
    for i in 0..chars.len() {
        if chars[i] != '+' {
            continue;
        }
        let space_before = i == 0 || chars[i - 1].is_whitespace();
        let space_after = chars.get(i + 1).is_none_or(|c| c.is_whitespace());
        let next = chars[i + 1..].iter().find(|c| !c.is_whitespace());
        let starts_species = next.is_some_and(|c| {
            c.is_ascii_uppercase() || c.is_ascii_digit() || matches!(c, '(' | '[')
        });
        let prev = if i > 0 { Some(chars[i - 1]) } else { None };
        // A '+' joins two species when it stands between spaces ("H+ + OH-"), when it opens
        // the next species after a space ("Fe+3 +Cl-"), or, unspaced, when a formula follows
        // at once ("Cl2+H2O"); otherwise it is part of a charge ("H+", "Fe+3", "SO4^+").
        let formula_follows =
            next.is_some_and(|c| c.is_ascii_uppercase() || matches!(c, '(' | '['));
        let joins = if space_before {
            space_after || starts_species
        } else {
            !space_after && formula_follows && prev != Some('^')
        };
        if joins {
            pieces.push((start, i));
            start = i + 1;
        }
    }
    pieces.push((start, chars.len()));
    let mut terms = Vec::new();
    for (from, to) in pieces {
        let piece: String = chars[from..to].iter().collect();
        let lead = piece.chars().take_while(|c| c.is_whitespace()).count();
        let column = first_column + from + lead;
        let trimmed = piece.trim();
        if trimmed.is_empty() {
            let what = if side == Side::Reactant {
                "a reactant"
            } else {
                "a product"
            };
            return Err(Error::new(ErrorKind::Syntax, format!("missing {what}")).at(column));
        }
        terms.push(term(trimmed, column, side)?);
    }
    Ok(terms)
}

/// One species with an optional leading coefficient separated by a space (`2 H2O`) or not
/// (`2H2O`): in an equation a leading number is always the coefficient.
fn term(text: &str, column: usize, side: Side) -> Result<Term> {
    let digits: String = text.chars().take_while(|c| c.is_ascii_digit()).collect();
    let (coefficient, formula_text) = if digits.is_empty() {
        (None, text)
    } else {
        let value: u64 = digits
            .parse()
            .ok()
            .filter(|v| *v <= u32::MAX as u64)
            .ok_or_else(|| Error::new(ErrorKind::Overflow, "coefficient too large").at(column))?;
        if value == 0 {
            return Err(Error::new(
                ErrorKind::ZeroCount,
                "a coefficient of zero: leave the species out",
            )
            .at(column));
        }
        (Some(value), text[digits.len()..].trim_start())
    };
    let offset = text.chars().count() - formula_text.chars().count();
    let formula = Formula::parse(formula_text).map_err(|e| match e.column() {
        Some(c) => e.clone().at(c + column + offset - 1),
        None => e,
    })?;
    Ok(Term {
        coefficient,
        formula,
        written: formula_text.to_string(),
        side,
        column,
    })
}

fn check_duplicates(terms: &[Term]) -> Result<()> {
    for (i, a) in terms.iter().enumerate() {
        for b in &terms[i + 1..] {
            if a.formula.same_species(&b.formula) {
                if a.side != b.side {
                    return Err(Error::new(
                        ErrorKind::SpeciesOnBothSides,
                        format!(
                            "{} is on both sides; it cancels, so leave it out of one side",
                            a.formula
                        ),
                    )
                    .at(b.column)
                    .with("species", &a.formula));
                }
                return Err(Error::new(
                    ErrorKind::Syntax,
                    format!("{} is listed twice on the same side", a.formula),
                )
                .at(b.column)
                .with("species", &a.formula));
            }
        }
    }
    Ok(())
}

fn check_each_element_on_both_sides(terms: &[Term]) -> Result<()> {
    let mut seen: Vec<(&'static str, bool, bool)> = Vec::new();
    for t in terms {
        for (symbol, _) in t.formula.atoms() {
            let entry = match seen.iter_mut().find(|(s, _, _)| *s == symbol) {
                Some(e) => e,
                None => {
                    seen.push((symbol, false, false));
                    seen.last_mut().expect("just pushed")
                }
            };
            if t.side == Side::Reactant {
                entry.1 = true
            } else {
                entry.2 = true
            }
        }
    }
    if let Some((symbol, left, _)) = seen.iter().find(|(_, l, r)| l != r) {
        let side = if *left { "reactants" } else { "products" };
        return Err(Error::new(
            ErrorKind::Impossible,
            format!("{symbol} appears only among the {side}, so no balancing exists"),
        )
        .with("element", symbol));
    }
    Ok(())
}

/// Rows: each element, then charge. Columns: species, products negated.
fn conservation_matrix(terms: &[Term]) -> Result<DMatrix<i128>> {
    let mut rows: Vec<u8> = terms
        .iter()
        .flat_map(|t| t.formula.atom_indices().iter().map(|&(e, _)| e))
        .collect();
    rows.sort_unstable();
    rows.dedup();
    let charged = terms.iter().any(|t| t.formula.charge() != 0);
    let n_rows = rows.len() + usize::from(charged);
    let mut m = DMatrix::from_element(n_rows, terms.len(), 0i128);
    for (j, t) in terms.iter().enumerate() {
        let sign: i128 = if t.side == Side::Reactant { 1 } else { -1 };
        for &(e, n) in t.formula.atom_indices() {
            let i = rows.binary_search(&e).map_err(|_| overflow())?;
            m[(i, j)] = sign * n as i128;
        }
        if charged {
            m[(n_rows - 1, j)] = sign * t.formula.charge() as i128;
        }
    }
    Ok(m)
}

fn conserves(m: &DMatrix<i128>, coefficients: &[u64]) -> Result<bool> {
    for i in 0..m.nrows() {
        let mut sum = 0i128;
        for (j, &c) in coefficients.iter().enumerate() {
            let term = m[(i, j)].checked_mul(c as i128).ok_or_else(overflow)?;
            sum = sum.checked_add(term).ok_or_else(overflow)?;
        }
        if sum != 0 {
            return Ok(false);
        }
    }
    Ok(true)
}

/// Basis of the null space, exactly. Gauss–Jordan elimination stays in integers (each row
/// operation is a cross-multiplication followed by division by the row's content), so there
/// is no gcd per entry as with rationals and no rounding as with floats; rationals appear
/// only in the final back-substitution.
fn null_space(mut m: DMatrix<i128>) -> Result<Vec<Vec<Q>>> {
    let (rows, cols) = m.shape();
    let mut pivots = Vec::new();
    let mut r = 0;
    for c in 0..cols {
        if r == rows {
            break;
        }
        let Some(p) = (r..rows).find(|&i| m[(i, c)] != 0) else {
            continue;
        };
        m.swap_rows(r, p);
        for i in 0..rows {
            if i == r || m[(i, c)] == 0 {
                continue;
            }
            let g = m[(r, c)].gcd(&m[(i, c)]);
            let (keep, take) = (m[(r, c)] / g, m[(i, c)] / g);
            for j in 0..cols {
                let a = m[(i, j)].checked_mul(keep).ok_or_else(overflow)?;
                let b = m[(r, j)].checked_mul(take).ok_or_else(overflow)?;
                m[(i, j)] = a.checked_sub(b).ok_or_else(overflow)?;
            }
            divide_row_by_content(&mut m, i);
        }
        divide_row_by_content(&mut m, r);
        pivots.push(c);
        r += 1;
    }
    let mut basis = Vec::new();
    for f in (0..cols).filter(|c| !pivots.contains(c)) {
        let mut v = vec![Q::zero(); cols];
        v[f] = Q::one();
        for (row, &p) in pivots.iter().enumerate() {
            let numer = m[(row, f)].checked_neg().ok_or_else(overflow)?;
            v[p] = Q::new(numer, m[(row, p)]);
        }
        basis.push(v);
    }
    Ok(basis)
}

fn divide_row_by_content(m: &mut DMatrix<i128>, row: usize) {
    let content = m.row(row).iter().fold(0i128, |g, x| g.gcd(x));
    if content > 1 {
        for x in m.row_mut(row).iter_mut() {
            *x /= content;
        }
    }
}

/// Scales a rational null vector to the smallest whole numbers, all of which must be positive.
fn integer_coefficients(v: &[Q], terms: &[Term]) -> Result<Vec<u64>> {
    let lcm = v.iter().try_fold(1i128, |acc, q| {
        let d = *q.denom();
        let g = acc.gcd(&d);
        (acc / g).checked_mul(d).ok_or_else(overflow)
    })?;
    // lcm is a multiple of every (reduced, positive) denominator: each product is exact, and
    // checked.
    let ints: Vec<i128> = v
        .iter()
        .map(|q| {
            (lcm / *q.denom())
                .checked_mul(*q.numer())
                .ok_or_else(overflow)
        })
        .collect::<Result<_>>()?;
    let gcd = ints.iter().fold(0i128, |g, x| g.gcd(x));
    let sign = if ints.iter().any(|x| x.is_positive()) && !ints.iter().any(|x| x.is_negative()) {
        1
    } else if ints.iter().all(|x| !x.is_positive()) {
        -1
    } else {
        0
    };
    if sign == 0 || ints.iter().any(|x| x.is_zero()) {
        return Err(impossible(terms, Some(&ints)));
    }
    ints.iter()
        .map(|x| {
            u64::try_from(sign * x / gcd)
                .ok()
                .filter(|v| *v <= u32::MAX as u64)
                .ok_or_else(overflow)
        })
        .collect()
}

fn impossible(terms: &[Term], solution: Option<&[i128]>) -> Error {
    let detail = match solution {
        Some(ints) => {
            let zero: Vec<&str> = terms
                .iter()
                .zip(ints)
                .filter(|(_, x)| x.is_zero())
                .map(|(t, _)| t.written.as_str())
                .collect();
            if !zero.is_empty() {
                format!("{} would need a coefficient of zero", zero.join(", "))
            } else {
                "some species would have to move to the other side of the arrow".to_string()
            }
        }
        None => "atoms and charge cannot both be conserved".to_string(),
    };
    Error::new(
        ErrorKind::Impossible,
        format!("no balancing with positive coefficients: {detail}"),
    )
}

fn reduce(coefficients: &[u64]) -> Vec<u64> {
    let g = coefficients.iter().fold(0u64, |g, c| g.gcd(c)).max(1);
    coefficients.iter().map(|c| c / g).collect()
}

fn build(terms: Vec<Term>, coefficients: &[u64], arrow: &'static str) -> Reaction {
    let species = terms
        .into_iter()
        .zip(coefficients)
        .map(|(t, &coefficient)| Species {
            formula: t.formula,
            coefficient,
            side: t.side,
            written: t.written,
        })
        .collect();
    Reaction { species, arrow }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(equation: &str, balanced: &str) {
        match Reaction::balance(equation) {
            Ok(r) => assert_eq!(r.to_string(), balanced, "{equation}"),
            Err(e) => panic!("{equation}: {e}"),
        }
    }

    fn check_err(equation: &str, kind: ErrorKind) {
        match Reaction::balance(equation) {
            Ok(r) => panic!("{equation} should fail, got {r}"),
            Err(e) => assert_eq!(e.kind(), kind, "{equation}: {e}"),
        }
    }

    #[test]
    fn balances() {
        check("H2 + O2 -> H2O", "2 H2 + O2 -> 2 H2O");
        check("CaO + H2O = Ca(OH)2", "CaO + H2O = Ca(OH)2");
        check(
            "Ca(OH)2 + CO2 -> CaCO3 + H2O",
            "Ca(OH)2 + CO2 -> CaCO3 + H2O",
        );
        check(
            "Fe+2 + MnO4- + H+ -> Fe+3 + Mn+2 + H2O",
            "5 Fe^2+ + MnO4- + 8 H+ -> 5 Fe^3+ + Mn^2+ + 4 H2O",
        );
        check("H+ + OH- -> H2O", "H+ + OH- -> H2O");
        check("Cl2+H2O->HOCl+H++Cl-", "Cl2 + H2O -> HOCl + H+ + Cl-");
        check("2 H2 + O2 -> 2 H2O", "2 H2 + O2 -> 2 H2O");
        check("4 H2 + 2 O2 -> 4 H2O", "2 H2 + O2 -> 2 H2O");
    }

    #[test]
    fn explains_failures() {
        check_err("H2 + O2 -> H2O + H2O2", ErrorKind::Ambiguous);
        check_err("NaCl -> KBr", ErrorKind::Impossible);
        check_err("H2O -> H2O2", ErrorKind::Impossible);
        check_err("H2O + NaCl -> H2O + Na+", ErrorKind::SpeciesOnBothSides);
        check_err("3 H2 + O2 -> 2 H2O", ErrorKind::WrongCoefficient);
        check_err("H2 + O2", ErrorKind::Syntax);
        check_err("H2 -> H2 -> H2", ErrorKind::Syntax);
        check_err(" -> H2O", ErrorKind::Syntax);
        check_err("Xy -> H2", ErrorKind::UnknownElement);
    }

    #[test]
    fn ratios_and_normal_form() {
        let r = Reaction::balance("NH3 + HOCl -> NH2Cl + H2O").unwrap();
        assert_eq!(r.mole_ratio("NH3", "HOCl").unwrap(), Ratio::new(1, 1));
        let r = Reaction::balance("H2 + O2 -> H2O").unwrap();
        assert_eq!(r.per_mole_of("H2O").unwrap(), "H2 + 1/2 O2 -> H2O");
        assert_eq!(r.find("NaCl").unwrap_err().kind(), ErrorKind::NotInReaction);
    }

    #[test]
    fn error_columns_point_into_the_equation() {
        let e = Reaction::balance("H2 + Qq -> H2O").unwrap_err();
        assert_eq!((e.kind(), e.column()), (ErrorKind::UnknownElement, Some(6)));
    }
}
