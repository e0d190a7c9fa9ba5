//! The periodic table as embedded data: symbols and IUPAC standard atomic weights.
//!
//! `build.rs` turns `data/elements.json` into a static array and a symbol lookup table, so a
//! lookup is two array reads and no text is parsed at run time. The file names its source;
//! elements whose standard atomic weight is an interval carry IUPAC's conventional value.

/// How an atomic weight was obtained, so results can say how far they can be trusted.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WeightBasis {
    /// The single IUPAC standard atomic weight.
    Standard,
    /// IUPAC's conventional value for an element whose standard weight is an interval.
    Conventional,
    /// No stable isotope: the mass number of a long-lived isotope.
    MassNumber,
}

/// One element of the table.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Element {
    pub z: u8,
    pub symbol: &'static str,
    /// g/mol.
    pub atomic_weight: f64,
    /// Decimal places given in the source table: the precision of the weight.
    pub decimals: u8,
    pub basis: WeightBasis,
}

include!(concat!(env!("OUT_DIR"), "/elements.rs"));

/// The data source, as cited in `data/elements.json`.
pub const SOURCE: &str =
    "IUPAC CIAAW Standard Atomic Weights 2021 (Prohaska et al., Pure Appl. Chem. 94 (2022) 573)";

/// Looks an element up by its symbol (case-sensitive: `Co` is cobalt, `CO` is not a symbol).
pub fn by_symbol(symbol: &str) -> Option<&'static Element> {
    let bytes = symbol.as_bytes();
    let first = *bytes.first()?;
    if !first.is_ascii_uppercase() || bytes.len() > 2 {
        return None;
    }
    let second = match bytes.get(1) {
        None => 0,
        Some(b) if b.is_ascii_lowercase() => (b - b'a') as usize + 1,
        Some(_) => return None,
    };
    let index = SYMBOL_INDEX[(first - b'A') as usize * 27 + second];
    ELEMENTS.get(index as usize)
}

/// Looks an element up by its position in the table (0-based, i.e. `z - 1`).
pub fn by_index(index: usize) -> Option<&'static Element> {
    ELEMENTS.get(index)
}

/// All elements in order of atomic number.
pub fn all() -> &'static [Element] {
    &ELEMENTS
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(symbol: &str, expected: Option<(u8, f64)>) {
        let got = by_symbol(symbol).map(|e| (e.z, e.atomic_weight));
        assert_eq!(got, expected, "symbol {symbol:?}");
    }

    #[test]
    fn lookups() {
        check("H", Some((1, 1.008)));
        check("Ca", Some((20, 40.078)));
        check("Cl", Some((17, 35.45)));
        check("Og", Some((118, 294.0)));
        check("CO", None);
        check("Xx", None);
        check("", None);
        check("h", None);
        check("Caa", None);
    }

    #[test]
    fn table_is_complete_and_ordered() {
        assert_eq!(all().len(), 118);
        for (i, e) in all().iter().enumerate() {
            assert_eq!(e.z as usize, i + 1);
            assert!(e.atomic_weight > 0.0);
            assert_eq!(by_symbol(e.symbol).map(|f| f.z), Some(e.z));
        }
    }

    #[test]
    fn interval_elements_use_conventional_values() {
        for symbol in [
            "H", "Li", "B", "C", "N", "O", "Mg", "Si", "S", "Cl", "Ar", "Br", "Tl", "Pb",
        ] {
            assert_eq!(
                by_symbol(symbol).map(|e| e.basis),
                Some(WeightBasis::Conventional),
                "{symbol}"
            );
        }
    }
}
