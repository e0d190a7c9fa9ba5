//! Quantities and the units they are read and typed in, converted to and from the SI values
//! the calculators work in.
//!
//! Design choice: each quantity has exactly one SI unit (the calculators') and one display
//! unit per unit system, so no front end ever guesses or converts on its own. Only exact,
//! defined conversion factors live here (the US gallon, the avoirdupois pound, the Fahrenheit
//! scale); no chemistry.

pub use super::dosing::units::UnitSystem;
use serde::Serialize;

/// A measured quantity a field or a result carries.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Quantity {
    /// Plant or process flow. SI: m³/d. US: MGD.
    Flow,
    /// Concentration in water. mg/L in both systems.
    Concentration,
    /// Concentration expressed as calcium carbonate. mg/L as CaCO₃ in both systems.
    AsCaCO3,
    /// pH, dimensionless.
    Ph,
    /// Temperature. SI: °C. US: °F.
    Temperature,
    /// Daily feed mass. SI: kg/d. US: lb/d.
    MassPerDay,
    /// Product volume rate. SI: L/h. US: gal/h.
    VolumePerHour,
    /// A fraction shown as percent (product strength, pump setting).
    Percent,
    /// Specific gravity, dimensionless.
    SpecificGravity,
    /// A small volume read from a calibration column. mL in both systems.
    Millilitres,
    /// A time read with a stopwatch. s in both systems.
    Seconds,
    /// A small mass weighed on a scale (a dry feeder's catch, a cylinder's loss). g in both
    /// systems.
    Grams,
    /// A mass ratio such as Cl₂ : N. Dimensionless.
    Ratio,
    /// A dimensionless index such as the Langelier index, shown to two decimals.
    Index,
    /// A time in minutes (a contact time). min in both systems.
    Minutes,
    /// A batch or basin volume. SI: L. US: gal.
    Volume,
    /// Concentration × time, the disinfection credit. mg·min/L in both systems.
    ConcentrationTime,
    /// A length along a pipe or a depth of water in a well. SI: m. US: ft.
    Length,
    /// A pipe's or a well casing's inside diameter. SI: mm. US: in.
    Diameter,
    /// A batch mass (chlorine for a main, product to add). SI: kg. US: lb.
    Mass,
    /// A dose on dry solids (polymer for dewatering). SI: kg/t. US: lb/ton (short ton).
    SolidsDose,
    /// A stock solution's strength, mass per volume. SI: g/L. US: % w/v (1 % = 10 g/L).
    StockStrength,
    /// An amount of substance per volume (dissolved inorganic carbon). mmol/L in both systems.
    Millimolar,
    /// Not a number: a list of water-engine chemical ids, in order (`--chemicals lime,carbon-dioxide`).
    Chemicals,
    /// A volume used per day (a chemical's use from its tank). SI: L/d. US: gal/d.
    VolumePerDay,
    /// A count of days (days of supply). d in both systems.
    Days,
}

/// The unit a value is shown in; `code()` is the translation-key stem (`unit-<code>`) and the
/// unit's name on the command line (`--flow-unit mgd`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Unit {
    CubicMetresPerDay,
    Mgd,
    MgPerL,
    MgPerLAsCaCO3,
    PhUnits,
    Celsius,
    Fahrenheit,
    KgPerDay,
    LbPerDay,
    LitresPerHour,
    GallonsPerHour,
    Percent,
    NoUnit,
    Millilitres,
    Seconds,
    Grams,
    Ratio,
    Minutes,
    Litres,
    Gallons,
    MgMinPerL,
    Metres,
    Feet,
    Millimetres,
    Inches,
    Kilograms,
    Pounds,
    KgPerTonne,
    LbPerTon,
    GPerL,
    PercentWv,
    CubicMetres,
    MmolPerL,
    LitresPerDay,
    GallonsPerDay,
    Days,
    /// Inches of a length whose SI unit is the metre (a tank's level or dimension); the same
    /// code as [`Unit::Inches`], which converts to millimetres for a diameter.
    InchesOfLength,
}

/// L in one US gallon (exact by definition: 231 in³, the inch 2.54 cm). The one definition
/// of the gallon: the dosing units, the log's report and export take it from here.
pub const L_PER_GAL: f64 = 3.785_411_784;
/// L in one million US gallons.
pub const L_PER_MG: f64 = L_PER_GAL * 1.0e6;
/// g in one avoirdupois pound (exact by definition, international pound of 1959). The one
/// definition of the pound.
pub const G_PER_LB: f64 = 453.592_37;
/// kg in one avoirdupois pound.
pub const KG_PER_LB: f64 = G_PER_LB / 1000.0;
/// m³ in one US gallon.
const M3_PER_GALLON: f64 = L_PER_GAL * 1.0e-3;
/// kg in one avoirdupois pound.
const KG_PER_POUND: f64 = KG_PER_LB;
/// m in one international foot (exact by definition, 1959).
const M_PER_FOOT: f64 = 0.3048;
/// mm in one international inch (exact by definition, 1959).
const MM_PER_INCH: f64 = 25.4;
/// kg/t in one lb/ton: a pound per short ton of 2000 lb is 1/2000 by mass, 0.5 kg per
/// 1000 kg (exact: both are avoirdupois pounds).
const KG_PER_T_PER_LB_PER_TON: f64 = 0.5;
/// g/L in one % w/v: 1 g per 100 mL (exact by definition of % w/v).
const G_PER_L_PER_PERCENT_WV: f64 = 10.0;

impl Unit {
    pub const ALL: [Unit; 37] = [
        Unit::CubicMetresPerDay,
        Unit::Mgd,
        Unit::MgPerL,
        Unit::MgPerLAsCaCO3,
        Unit::PhUnits,
        Unit::Celsius,
        Unit::Fahrenheit,
        Unit::KgPerDay,
        Unit::LbPerDay,
        Unit::LitresPerHour,
        Unit::GallonsPerHour,
        Unit::Percent,
        Unit::NoUnit,
        Unit::Millilitres,
        Unit::Seconds,
        Unit::Grams,
        Unit::Ratio,
        Unit::Minutes,
        Unit::Litres,
        Unit::Gallons,
        Unit::MgMinPerL,
        Unit::Metres,
        Unit::Feet,
        Unit::Millimetres,
        Unit::Inches,
        Unit::Kilograms,
        Unit::Pounds,
        Unit::KgPerTonne,
        Unit::LbPerTon,
        Unit::GPerL,
        Unit::PercentWv,
        Unit::CubicMetres,
        Unit::MmolPerL,
        Unit::LitresPerDay,
        Unit::GallonsPerDay,
        Unit::Days,
        Unit::InchesOfLength,
    ];

    pub fn code(self) -> &'static str {
        match self {
            Unit::CubicMetresPerDay => "m3-per-day",
            Unit::Mgd => "mgd",
            Unit::MgPerL => "mg-per-l",
            Unit::MgPerLAsCaCO3 => "mg-per-l-caco3",
            Unit::PhUnits => "ph",
            Unit::Celsius => "celsius",
            Unit::Fahrenheit => "fahrenheit",
            Unit::KgPerDay => "kg-per-day",
            Unit::LbPerDay => "lb-per-day",
            Unit::LitresPerHour => "l-per-hour",
            Unit::GallonsPerHour => "gal-per-hour",
            Unit::Percent => "percent",
            Unit::NoUnit => "none",
            Unit::Millilitres => "ml",
            Unit::Seconds => "s",
            Unit::Grams => "g",
            Unit::Ratio => "ratio",
            Unit::Minutes => "min",
            Unit::Litres => "l",
            Unit::Gallons => "gal",
            Unit::MgMinPerL => "mg-min-per-l",
            Unit::Metres => "m",
            Unit::Feet => "ft",
            Unit::Millimetres => "mm",
            Unit::Inches => "in",
            Unit::Kilograms => "kg",
            Unit::Pounds => "lb",
            Unit::KgPerTonne => "kg-per-t",
            Unit::LbPerTon => "lb-per-ton",
            Unit::GPerL => "g-per-l",
            Unit::PercentWv => "percent-w-v",
            Unit::CubicMetres => "m3",
            Unit::MmolPerL => "mmol-per-l",
            Unit::LitresPerDay => "l-per-day",
            Unit::GallonsPerDay => "gal-per-day",
            Unit::Days => "d",
            Unit::InchesOfLength => "in",
        }
    }

    /// The unit system a unit belongs to, where it belongs to one (ft, in, gal, lb: US; m,
    /// L, kg: SI); `None` for a unit both use (mg/L, %, s).
    pub fn system(self) -> Option<UnitSystem> {
        match self {
            Unit::Mgd
            | Unit::Fahrenheit
            | Unit::LbPerDay
            | Unit::GallonsPerHour
            | Unit::Gallons
            | Unit::Feet
            | Unit::Inches
            | Unit::Pounds
            | Unit::LbPerTon
            | Unit::PercentWv
            | Unit::GallonsPerDay
            | Unit::InchesOfLength => Some(UnitSystem::Us),
            Unit::CubicMetresPerDay
            | Unit::Celsius
            | Unit::KgPerDay
            | Unit::LitresPerHour
            | Unit::Litres
            | Unit::Metres
            | Unit::Millimetres
            | Unit::Kilograms
            | Unit::KgPerTonne
            | Unit::GPerL
            | Unit::CubicMetres
            | Unit::LitresPerDay => Some(UnitSystem::Si),
            _ => None,
        }
    }

    /// The unit whose code is `code`.
    pub fn from_code(code: &str) -> Option<Unit> {
        Unit::ALL.into_iter().find(|u| u.code() == code)
    }

    /// The unit as written beside a number in a record or on the command line (`mg/L`,
    /// `m³/d`); the screens translate [`code`](Self::code) instead.
    pub fn symbol(self) -> &'static str {
        match self {
            Unit::CubicMetresPerDay => "m³/d",
            Unit::Mgd => "MGD",
            Unit::MgPerL => "mg/L",
            Unit::MgPerLAsCaCO3 => "mg/L as CaCO3",
            Unit::PhUnits => "pH",
            Unit::Celsius => "°C",
            Unit::Fahrenheit => "°F",
            Unit::KgPerDay => "kg/d",
            Unit::LbPerDay => "lb/d",
            Unit::LitresPerHour => "L/h",
            Unit::GallonsPerHour => "gal/h",
            Unit::Percent => "%",
            Unit::NoUnit => "1",
            Unit::Millilitres => "mL",
            Unit::Seconds => "s",
            Unit::Grams => "g",
            Unit::Ratio => "ratio",
            Unit::Minutes => "min",
            Unit::Litres => "L",
            Unit::Gallons => "gal",
            Unit::MgMinPerL => "mg·min/L",
            Unit::Metres => "m",
            Unit::Feet => "ft",
            Unit::Millimetres => "mm",
            Unit::Inches => "in",
            Unit::Kilograms => "kg",
            Unit::Pounds => "lb",
            Unit::KgPerTonne => "kg/t",
            Unit::LbPerTon => "lb/ton",
            Unit::GPerL => "g/L",
            Unit::PercentWv => "% w/v",
            Unit::CubicMetres => "m³",
            Unit::MmolPerL => "mmol/L",
            Unit::LitresPerDay => "L/d",
            Unit::GallonsPerDay => "gal/d",
            Unit::Days => "d",
            Unit::InchesOfLength => "in",
        }
    }

    /// True when `text` names this unit on a command line: its code (`g-per-l`), its symbol in
    /// any case (`g/l`, `MGD`) or the trade's word for it (`percent` for a stock's % w/v).
    /// Only ever asked among one quantity's units, where these spellings are distinct.
    pub fn written_as(self, text: &str) -> bool {
        let text = text.trim();
        let word = match self {
            Unit::PercentWv => Some("percent"),
            _ => None,
        };
        text == self.code() || text.eq_ignore_ascii_case(self.symbol()) || word == Some(text)
    }

    /// Converts a value shown in this unit to the quantity's SI unit.
    pub fn to_si(self, v: f64) -> f64 {
        match self {
            Unit::Mgd => v * 1.0e6 * M3_PER_GALLON,
            Unit::Fahrenheit => (v - 32.0) * 5.0 / 9.0,
            Unit::LbPerDay => v * KG_PER_POUND,
            Unit::GallonsPerHour => v * M3_PER_GALLON * 1000.0,
            Unit::Gallons => v * M3_PER_GALLON * 1000.0,
            Unit::Feet => v * M_PER_FOOT,
            Unit::Inches => v * MM_PER_INCH,
            Unit::Pounds => v * KG_PER_POUND,
            Unit::LbPerTon => v * KG_PER_T_PER_LB_PER_TON,
            Unit::PercentWv => v * G_PER_L_PER_PERCENT_WV,
            Unit::CubicMetres => v * 1000.0,
            Unit::GallonsPerDay => v * M3_PER_GALLON * 1000.0,
            Unit::InchesOfLength => v * MM_PER_INCH / 1000.0,
            _ => v,
        }
    }

    /// Converts an SI value to this unit.
    pub fn from_si(self, v: f64) -> f64 {
        match self {
            Unit::Mgd => v / (1.0e6 * M3_PER_GALLON),
            Unit::Fahrenheit => v * 9.0 / 5.0 + 32.0,
            Unit::LbPerDay => v / KG_PER_POUND,
            Unit::GallonsPerHour => v / (M3_PER_GALLON * 1000.0),
            Unit::Gallons => v / (M3_PER_GALLON * 1000.0),
            Unit::Feet => v / M_PER_FOOT,
            Unit::Inches => v / MM_PER_INCH,
            Unit::Pounds => v / KG_PER_POUND,
            Unit::LbPerTon => v / KG_PER_T_PER_LB_PER_TON,
            Unit::PercentWv => v / G_PER_L_PER_PERCENT_WV,
            Unit::CubicMetres => v / 1000.0,
            Unit::GallonsPerDay => v / (M3_PER_GALLON * 1000.0),
            Unit::InchesOfLength => v * 1000.0 / MM_PER_INCH,
            _ => v,
        }
    }
}

/// The magnitudes a value of a quantity can have at a plant, in SI: the smallest non-zero size
/// and the largest. A typed value beyond them is refused before any arithmetic (a slipped
/// exponent, a field filled with a value meant for another unit), and a vanishing one cannot
/// underflow into 0/0 further down. Zero and negative values are not judged here: each
/// calculator's own checks name what they mean.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Magnitude {
    pub smallest: f64,
    pub largest: f64,
}

impl Magnitude {
    /// True when `v` is beyond what the quantity can be at a plant (zero is not judged).
    pub fn rules_out(self, v: f64) -> bool {
        v.abs() > self.largest || (v != 0.0 && v.abs() < self.smallest)
    }
}

impl Quantity {
    /// The plausible magnitudes of this quantity, in its SI unit; the one place they are set.
    /// All are far outside what a plant meets (common practice, each bound says why), so they
    /// refuse only values no plant can have.
    pub fn magnitude(self) -> Magnitude {
        let m = |smallest: f64, largest: f64| Magnitude { smallest, largest };
        match self {
            // 1 L/d to 2×10⁷ m³/d: the largest drinking-water plants treat a few 10⁶ m³/d
            // (from memory).
            Quantity::Flow => m(1e-3, 2e7),
            // 1 ng/L to 10 % (100 000 mg/L, a stock solution, not a water).
            Quantity::Concentration | Quantity::AsCaCO3 => m(1e-6, 1e5),
            // The pH scale of water solutions; no smallest (pH 0 is a number, not a vanishing one).
            Quantity::Ph => m(0.0, 14.0),
            // Liquid water at a plant; °F typed as °C (e.g. 212) is refused.
            Quantity::Temperature => m(0.0, 100.0),
            // 1 mg/d to 10⁸ kg/d.
            Quantity::MassPerDay => m(1e-6, 1e8),
            // 1 µL/h to 10⁶ L/h.
            Quantity::VolumePerHour => m(1e-6, 1e6),
            // Percentages beyond 100 are each calculator's to name (strength above pure, a
            // setting beyond full scale); 1000 % is no typing of a percentage.
            Quantity::Percent => m(1e-6, 1e3),
            Quantity::SpecificGravity => m(1e-3, 100.0),
            // A calibration column or a catch: 1 nL to 10 m³; a stopwatch: up to ~4 months.
            Quantity::Millilitres => m(1e-6, 1e7),
            // A catch or a cylinder's scale loss: 1 µg to 10 t.
            Quantity::Grams => m(1e-6, 1e7),
            Quantity::Seconds => m(1e-6, 1e7),
            Quantity::Ratio => m(1e-9, 1e4),
            Quantity::Index => m(0.0, 100.0),
            Quantity::Minutes => m(1e-6, 1e7),
            // A basin of 10⁹ m³ is a lake.
            Quantity::Volume => m(1e-6, 1e12),
            Quantity::ConcentrationTime => m(1e-6, 1e7),
            // 1 mm to 10 000 km of main; a well deeper than 10 km is no water well.
            Quantity::Length => m(1e-3, 1e7),
            // 0.1 mm (tubing) to 100 m (no pipe is wider than a tunnel).
            Quantity::Diameter => m(0.1, 1e5),
            // 1 mg to 10⁹ kg.
            Quantity::Mass => m(1e-6, 1e9),
            // 1 mg/t to 1 t/t (a dose equal to the solids themselves).
            Quantity::SolidsDose => m(1e-6, 1e3),
            // 1 µg/L to 2000 g/L (no solution is denser than about 2 kg/L of solute).
            Quantity::StockStrength => m(1e-6, 2e3),
            // 1 nmol/L to 10 mol/L.
            Quantity::Millimolar => m(1e-6, 1e4),
            // A list is not a number: nothing to judge.
            Quantity::Chemicals => m(0.0, f64::INFINITY),
            // 1 µL/d to 10⁹ L/d (a million m³ of chemical a day is no plant's).
            Quantity::VolumePerDay => m(1e-6, 1e9),
            // A supply of a minute to ~2700 years.
            Quantity::Days => m(1e-6, 1e6),
        }
    }

    /// The units a value of this quantity may be typed in: the SI unit first, then the US one
    /// where it differs.
    pub fn units(self) -> Vec<Unit> {
        let si = self.unit(UnitSystem::Si);
        let us = self.unit(UnitSystem::Us);
        let mut v = if si == us { vec![si] } else { vec![si, us] };
        // A tank or basin is as often given in m³ as in L (1 m³ = 1000 L, exact); the
        // screens keep one unit per system, a script may type either.
        if self == Quantity::Volume {
            v.push(Unit::CubicMetres);
        }
        // A tank's level and dimensions are as often read in inches as in feet.
        if self == Quantity::Length {
            v.push(Unit::InchesOfLength);
        }
        v
    }

    /// The stable kebab-case code of the quantity (`length`, `volume-per-day`): a command
    /// line's `--<code>-unit` sets the unit of every input of this quantity.
    pub fn code(self) -> String {
        serde_json::to_value(self)
            .ok()
            .and_then(|v| v.as_str().map(str::to_string))
            .unwrap_or_default()
    }

    /// The SI unit the calculators take and give this quantity in.
    pub fn si(self) -> Unit {
        self.unit(UnitSystem::Si)
    }

    /// The unit this quantity is shown in under `system`.
    pub fn unit(self, system: UnitSystem) -> Unit {
        use UnitSystem::*;
        match (self, system) {
            (Quantity::Flow, Si) => Unit::CubicMetresPerDay,
            (Quantity::Flow, Us) => Unit::Mgd,
            (Quantity::Concentration, _) => Unit::MgPerL,
            (Quantity::AsCaCO3, _) => Unit::MgPerLAsCaCO3,
            (Quantity::Ph, _) => Unit::PhUnits,
            (Quantity::Temperature, Si) => Unit::Celsius,
            (Quantity::Temperature, Us) => Unit::Fahrenheit,
            (Quantity::MassPerDay, Si) => Unit::KgPerDay,
            (Quantity::MassPerDay, Us) => Unit::LbPerDay,
            (Quantity::VolumePerHour, Si) => Unit::LitresPerHour,
            (Quantity::VolumePerHour, Us) => Unit::GallonsPerHour,
            (Quantity::Percent, _) => Unit::Percent,
            (Quantity::SpecificGravity, _) => Unit::NoUnit,
            (Quantity::Millilitres, _) => Unit::Millilitres,
            (Quantity::Seconds, _) => Unit::Seconds,
            (Quantity::Grams, _) => Unit::Grams,
            (Quantity::Ratio, _) => Unit::Ratio,
            (Quantity::Index, _) => Unit::NoUnit,
            (Quantity::Minutes, _) => Unit::Minutes,
            (Quantity::Volume, Si) => Unit::Litres,
            (Quantity::Volume, Us) => Unit::Gallons,
            (Quantity::ConcentrationTime, _) => Unit::MgMinPerL,
            (Quantity::Length, Si) => Unit::Metres,
            (Quantity::Length, Us) => Unit::Feet,
            (Quantity::Diameter, Si) => Unit::Millimetres,
            (Quantity::Diameter, Us) => Unit::Inches,
            (Quantity::Mass, Si) => Unit::Kilograms,
            (Quantity::Mass, Us) => Unit::Pounds,
            (Quantity::SolidsDose, Si) => Unit::KgPerTonne,
            (Quantity::SolidsDose, Us) => Unit::LbPerTon,
            (Quantity::StockStrength, Si) => Unit::GPerL,
            (Quantity::StockStrength, Us) => Unit::PercentWv,
            (Quantity::Millimolar, _) => Unit::MmolPerL,
            (Quantity::Chemicals, _) => Unit::NoUnit,
            (Quantity::VolumePerDay, Si) => Unit::LitresPerDay,
            (Quantity::VolumePerDay, Us) => Unit::GallonsPerDay,
            (Quantity::Days, _) => Unit::Days,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conversions_round_trip() {
        for unit in Unit::ALL {
            for v in [0.0, 1.0, 12.5, -3.0, 1234.5] {
                let back = unit.from_si(unit.to_si(v));
                assert!(
                    (back - v).abs() < 1e-9 * v.abs().max(1.0),
                    "{unit:?} {v} -> {back}"
                );
            }
        }
    }

    #[test]
    fn defined_factors() {
        // 1 MGD is 3785.411784 m³/d; water freezes at 32 °F; 1 lb is 0.45359237 kg.
        assert!((Unit::Mgd.to_si(1.0) - 3785.411784).abs() < 1e-9);
        assert!((Unit::Fahrenheit.to_si(32.0)).abs() < 1e-12);
        assert!((Unit::Fahrenheit.to_si(212.0) - 100.0).abs() < 1e-12);
        assert!((Unit::LbPerDay.to_si(1.0) - 0.45359237).abs() < 1e-15);
        assert!((Unit::GallonsPerHour.to_si(1.0) - 3.785411784).abs() < 1e-12);
        // 1 US gallon is 231 in³ = 3.785411784 L exactly.
        assert!((Unit::Gallons.to_si(1.0) - 3.785411784).abs() < 1e-12);
        // 1 ft = 0.3048 m and 1 in = 25.4 mm exactly (international yard and pound, 1959).
        assert!((Unit::Feet.to_si(1000.0) - 304.8).abs() < 1e-12);
        assert!((Unit::Inches.to_si(8.0) - 203.2).abs() < 1e-12);
        assert!((Unit::Pounds.to_si(1.0) - 0.45359237).abs() < 1e-15);
        // A pound per short ton (2000 lb) is 1/2000 by mass: 0.5 kg per 1000 kg.
        assert!((Unit::LbPerTon.to_si(10.0) - 5.0).abs() < 1e-12);
        assert!((Unit::CubicMetres.to_si(0.75) - 750.0).abs() < 1e-12);
        // A tank level of 12 in is 1 ft = 0.3048 m; 100 gal/d is 378.5411784 L/d.
        assert!((Unit::InchesOfLength.to_si(12.0) - 0.3048).abs() < 1e-15);
        assert!((Unit::GallonsPerDay.to_si(100.0) - 378.5411784).abs() < 1e-9);
        assert_eq!(
            Quantity::Volume.units(),
            [Unit::Litres, Unit::Gallons, Unit::CubicMetres]
        );
        // 1 % w/v is 1 g per 100 mL, 10 g/L.
        assert!((Unit::PercentWv.to_si(0.5) - 5.0).abs() < 1e-12);
    }

    #[test]
    fn every_quantity_has_a_unit_in_each_system() {
        assert_eq!(Quantity::Flow.unit(UnitSystem::Us), Unit::Mgd);
        assert_eq!(Quantity::Flow.unit(UnitSystem::Si), Unit::CubicMetresPerDay);
        assert_eq!(Quantity::Temperature.unit(UnitSystem::Us), Unit::Fahrenheit);
        assert_eq!(Quantity::MassPerDay.unit(UnitSystem::Si), Unit::KgPerDay);
    }
}
