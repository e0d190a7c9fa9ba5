#!/usr/bin/env python3
"""Writes the reference fixtures for the chemistry core from general-purpose libraries.

Run offline (CI does not need Python); the outputs are committed:
  tests/fixtures/molar_masses.json      periodictable 2.1.0 (IUPAC conventional weights) and molmass 2026.1.8
  tests/fixtures/balanced_reactions.json chempy 0.10.2 balance_stoichiometry

    pip install periodictable==2.1.0 molmass==2026.1.8 chempy==0.10.2
    python3 tools/gen_chem_fixtures.py
"""
import json
import pathlib

import chempy
import molmass
import periodictable
from chempy import balance_stoichiometry

ROOT = pathlib.Path(__file__).resolve().parent.parent

# Water-treatment compounds: (our notation, library notation with hydrates as (H2O)n).
COMPOUNDS = [
    ("Ca(OH)2", "Ca(OH)2"), ("CaO", "CaO"), ("NaOH", "NaOH"), ("Na2CO3", "Na2CO3"),
    ("NaHCO3", "NaHCO3"), ("H2SO4", "H2SO4"), ("HCl", "HCl"), ("CO2", "CO2"),
    ("CaCO3", "CaCO3"), ("Cl2", "Cl2"), ("NaOCl", "NaOCl"), ("Ca(OCl)2", "Ca(OCl)2"),
    ("HOCl", "HOCl"), ("NH3", "NH3"), ("NH2Cl", "NH2Cl"), ("(NH4)2SO4", "(NH4)2SO4"),
    ("SO2", "SO2"), ("NaHSO3", "NaHSO3"), ("Na2S2O5", "Na2S2O5"), ("Na2SO3", "Na2SO3"),
    ("Na2S2O3", "Na2S2O3"), ("Na2S2O3·5H2O", "Na2S2O3(H2O)5"), ("C6H8O6", "C6H8O6"),
    ("Al2(SO4)3", "Al2(SO4)3"), ("Al2(SO4)3·14H2O", "Al2(SO4)3(H2O)14"),
    ("Al2(SO4)3·18H2O", "Al2(SO4)3(H2O)18"), ("Al2O3", "Al2O3"), ("Al(OH)3", "Al(OH)3"),
    ("FeCl3", "FeCl3"), ("FeCl3·6H2O", "FeCl3(H2O)6"), ("Fe2(SO4)3", "Fe2(SO4)3"),
    ("Fe(OH)3", "Fe(OH)3"), ("FeSO4·7H2O", "FeSO4(H2O)7"), ("KMnO4", "KMnO4"), ("MnO2", "MnO2"),
    ("NaClO2", "NaClO2"), ("ClO2", "ClO2"), ("Mg(OH)2", "Mg(OH)2"), ("CaSO4", "CaSO4"),
    ("Ca(HCO3)2", "Ca(HCO3)2"), ("Mg(HCO3)2", "Mg(HCO3)2"), ("MgSO4", "MgSO4"),
    ("Na2SiF6", "Na2SiF6"), ("H2SiF6", "H2SiF6"), ("NaF", "NaF"), ("Na3PO4", "Na3PO4"),
    ("CuSO4·5H2O", "CuSO4(H2O)5"), ("K4[Fe(CN)6]", "K4Fe(CN)6"),
]

# Unbalanced water-treatment reactions, as written in data/reactions.json (ids must match).
REACTIONS = json.loads((ROOT / "data" / "reactions.json").read_text())["reactions"]


def chempy_name(formula):
    """chempy writes hydrates as (H2O)n and charges as +2 / -2, like our input forms."""
    if "·" in formula:
        main, water = formula.split("·")
        count = water[: -len("H2O")] or "1"
        return f"{main}(H2O){count}"
    return formula


def side(text):
    parts = [p.strip() for p in text.split(" + ")]
    return [p for p in parts if p]


def main():
    masses = []
    for ours, lib in COMPOUNDS:
        masses.append({
            "formula": ours,
            "periodictable": periodictable.formula(lib).mass,
            "molmass": molmass.Formula(lib).mass,
        })
    (ROOT / "tests/fixtures/molar_masses.json").write_text(json.dumps({
        "generator": "tools/gen_chem_fixtures.py",
        "libraries": {"periodictable": periodictable.__version__, "molmass": molmass.__version__},
        "compounds": masses,
    }, indent=1, ensure_ascii=False) + "\n")

    balanced = []
    for r in REACTIONS:
        left, right = r["equation"].split(" -> ")
        lhs, rhs = side(left), side(right)
        reac, prod = balance_stoichiometry({chempy_name(s) for s in lhs}, {chempy_name(s) for s in rhs})
        balanced.append({
            "id": r["id"],
            "reactants": [[s, int(reac[chempy_name(s)])] for s in lhs],
            "products": [[s, int(prod[chempy_name(s)])] for s in rhs],
        })
    (ROOT / "tests/fixtures/balanced_reactions.json").write_text(json.dumps({
        "generator": "tools/gen_chem_fixtures.py",
        "libraries": {"chempy": chempy.__version__},
        "reactions": balanced,
    }, indent=1, ensure_ascii=False) + "\n")


if __name__ == "__main__":
    main()
