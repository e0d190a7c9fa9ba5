//! Stoichiometric conversion: an amount of one species of a balanced reaction to the amount of
//! another, as a traced chain grams → moles → moles → grams.
//!
//! The chain is built from parts that each have an origin: the unit definitions (exact), the
//! molar masses (from the formula and IUPAC weights, good to the decimals of the least precise
//! weight), and the mole ratio (exact coefficients). The result's significant figures follow
//! the least precise measured factor, so the molar masses only limit a result when the input
//! is more precise than they are.

use super::reaction::Reaction;
use super::sigfig::{Measured, sig_figs_from_decimals};
use super::trace::{Origin, Quantity, Trace};
use super::{Error, ErrorKind, Result, check_range};

/// Units for an amount of substance.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AmountUnit {
    Milligram,
    Gram,
    Kilogram,
    Millimole,
    Mole,
}

impl AmountUnit {
    pub fn parse(text: &str) -> Result<AmountUnit> {
        Ok(match text.trim() {
            "mg" => AmountUnit::Milligram,
            "g" => AmountUnit::Gram,
            "kg" => AmountUnit::Kilogram,
            "mmol" => AmountUnit::Millimole,
            "mol" => AmountUnit::Mole,
            other => {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!("unknown unit '{other}': use mg, g, kg, mmol or mol"),
                )
                .with("unit", other));
            }
        })
    }

    pub fn symbol(self) -> &'static str {
        match self {
            AmountUnit::Milligram => "mg",
            AmountUnit::Gram => "g",
            AmountUnit::Kilogram => "kg",
            AmountUnit::Millimole => "mmol",
            AmountUnit::Mole => "mol",
        }
    }

    fn is_mass(self) -> bool {
        matches!(
            self,
            AmountUnit::Milligram | AmountUnit::Gram | AmountUnit::Kilogram
        )
    }

    /// How many of this unit make one gram or one mole (exact, by definition of the prefix).
    fn per_base(self) -> f64 {
        match self {
            AmountUnit::Milligram | AmountUnit::Millimole => 1000.0,
            AmountUnit::Gram | AmountUnit::Mole => 1.0,
            AmountUnit::Kilogram => 0.001,
        }
    }

    fn base(self) -> &'static str {
        if self.is_mass() { "g" } else { "mol" }
    }
}

/// Converts `amount` of `from` to the amount of `to` in `to_unit`, with the full trace.
pub fn convert(
    reaction: &Reaction,
    from: &str,
    amount: Measured,
    unit: AmountUnit,
    to: &str,
    to_unit: AmountUnit,
) -> Result<Trace> {
    check_range("amount", amount.value, 0.0, 1e15, unit.symbol())?;
    let source = reaction.find(from)?;
    let target = reaction.find(to)?;
    let from_name = source.formula.to_string();
    let to_name = target.formula.to_string();
    let mut trace = Trace::new(
        Quantity::of(amount.value, unit.symbol(), &from_name),
        Origin::Measured,
        amount.sig_figs,
    );
    to_base(&mut trace, unit, &from_name)?;
    if unit.is_mass() {
        let m = source.formula.molar_mass();
        let sig = Some(sig_figs_from_decimals(
            m,
            source.formula.molar_mass_decimals(),
        ));
        trace.then(
            Quantity::of(1.0, "mol", &from_name),
            Quantity::of(m, "g", &from_name),
            Origin::MolarMass {
                formula: from_name.clone(),
            },
            sig,
        )?;
    }
    if !source.formula.same_species(&target.formula) {
        trace.then(
            Quantity::of(target.coefficient as f64, "mol", &to_name),
            Quantity::of(source.coefficient as f64, "mol", &from_name),
            Origin::MoleRatio {
                reaction: reaction.to_string(),
            },
            None,
        )?;
    }
    if to_unit.is_mass() {
        let m = target.formula.molar_mass();
        let sig = Some(sig_figs_from_decimals(
            m,
            target.formula.molar_mass_decimals(),
        ));
        trace.then(
            Quantity::of(m, "g", &to_name),
            Quantity::of(1.0, "mol", &to_name),
            Origin::MolarMass {
                formula: to_name.clone(),
            },
            sig,
        )?;
    }
    from_base(&mut trace, to_unit, &to_name)?;
    Ok(trace)
}

fn to_base(trace: &mut Trace, unit: AmountUnit, of: &str) -> Result<()> {
    if unit.per_base() != 1.0 {
        trace.then(
            Quantity::of(1.0, unit.base(), of),
            Quantity::of(unit.per_base(), unit.symbol(), of),
            Origin::UnitDefinition,
            None,
        )?;
    }
    Ok(())
}

fn from_base(trace: &mut Trace, unit: AmountUnit, of: &str) -> Result<()> {
    if unit.per_base() != 1.0 {
        trace.then(
            Quantity::of(unit.per_base(), unit.symbol(), of),
            Quantity::of(1.0, unit.base(), of),
            Origin::UnitDefinition,
            None,
        )?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `request` reads "AMOUNT UNIT FROM -> UNIT TO", e.g. "12.5 g Ca(OH)2 -> g CaCO3".
    fn check(equation: &str, request: &str, expected: f64, shown: &str) {
        let (source, target) = request.split_once(" -> ").unwrap();
        let mut source = source.split_whitespace();
        let (amount, unit, from) = (
            source.next().unwrap(),
            source.next().unwrap(),
            source.next().unwrap(),
        );
        let (to_unit, to) = target.split_once(' ').unwrap();
        let r = Reaction::balance(equation).unwrap();
        let amount = Measured::parse(amount).unwrap();
        let (unit, to_unit) = (
            AmountUnit::parse(unit).unwrap(),
            AmountUnit::parse(to_unit).unwrap(),
        );
        let t = convert(&r, from, amount, unit, to, to_unit)
            .unwrap_or_else(|e| panic!("{request}: {e}"));
        assert!(
            (t.value() - expected).abs() <= expected.abs() * 1e-12,
            "{request}: {} vs {expected}",
            t.value()
        );
        assert_eq!(t.display_result(), shown, "{request}");
    }

    #[test]
    fn conversions_in_every_direction() {
        // Expected values are the hand-worked products of the factors in each chain.
        let lime = "Ca(OH)2 + CO2 -> CaCO3 + H2O";
        let m_lime = 40.078 + 2.0 * (15.999 + 1.008);
        let m_co2 = 12.011 + 2.0 * 15.999;
        let m_caco3 = 40.078 + 12.011 + 3.0 * 15.999;
        let m_alum = 2.0 * 26.9815384 + 3.0 * (32.06 + 4.0 * 15.999) + 14.0 * 18.015;
        check(
            lime,
            "12.5 g Ca(OH)2 -> g CaCO3",
            12.5 / m_lime * m_caco3,
            "16.9 g CaCO3",
        );
        check(
            lime,
            "1.000 kg CaCO3 -> kg Ca(OH)2",
            1.0 / m_caco3 * m_lime,
            "0.7403 kg Ca(OH)2",
        );
        check(lime, "2.0 mol Ca(OH)2 -> g CO2", 2.0 * m_co2, "88 g CO2");
        let alum = "Al2(SO4)3·14H2O + 3 Ca(HCO3)2 -> 2 Al(OH)3 + 3 CaSO4 + 6 CO2 + 14 H2O";
        check(
            alum,
            "30.0 mg Al2(SO4)3·14H2O -> mmol Al(OH)3",
            30.0 / m_alum * 2.0,
            "0.101 mmol Al(OH)3",
        );
    }

    #[test]
    fn rejects_bad_requests() {
        let r = Reaction::balance("H2 + O2 -> H2O").unwrap();
        let g = AmountUnit::Gram;
        assert_eq!(
            convert(&r, "H2", Measured::exact(-1.0), g, "H2O", g)
                .unwrap_err()
                .kind(),
            ErrorKind::OutOfRange
        );
        assert_eq!(
            convert(&r, "N2", Measured::exact(1.0), g, "H2O", g)
                .unwrap_err()
                .kind(),
            ErrorKind::NotInReaction
        );
        assert_eq!(
            convert(&r, "H2", Measured::exact(f64::NAN), g, "H2O", g)
                .unwrap_err()
                .kind(),
            ErrorKind::InvalidInput
        );
        assert_eq!(
            AmountUnit::parse("lb").unwrap_err().kind(),
            ErrorKind::InvalidInput
        );
    }
}
