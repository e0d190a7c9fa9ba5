#!/usr/bin/env python3
"""Writes tests/fixtures/path_phreeqc.json: PHREEQC reference results for the plant's water path
and for two-target doses.

Run offline by a developer (CI has no Python; the fixture is committed):

    /work/venv-phreeqc/bin/python tools/gen_path_fixture.py   (any Python with phreeqpython 1.6.2)

It extends tools/gen_water_fixture.py and reuses its waters, solution blocks, hypochlorite
species and chemical reactants, so both fixtures describe the same chemistry.

Alkalinity is PHREEQC's (phreeqc.dat counts dissolved Al+3 as 0 and Fe+3 as -2 equivalents);
the dissolved aluminium and iron(III) are recorded beside it so the test can state the engine's
convention (both relative to their hydroxides, -3) explicitly.

Paths: each step is a REACTION on the solution the previous step saved (closed system, 25 °C
constants at the water's temperature as phreeqc.dat gives them); a coagulant step lets its
amorphous hydroxide (Al(OH)3(a) / Fe(OH)3(a)) precipitate, a softening step calcite and brucite,
and what precipitated is left behind (the saved solution carries on without it).

Two targets: the waters and doses are invented; PHREEQC computes the pH and the second quantity
those doses give (the targets), and the derivatives of both with respect to each dose (central
differences of PHREEQC runs). The test solves the targets with the engine and, through these
derivatives, predicts what PHREEQC gives at the engine's doses.
"""

import json
import os
import sys

import gen_water_fixture as g

CHEM = {formula: reactants for formula, reactants, _ in g.CHEMICALS}
ID = {
    "lime": "Ca(OH)2", "caustic": "NaOH", "soda-ash": "Na2CO3", "bicarbonate": "NaHCO3",
    "sulfuric-acid": "H2SO4", "hydrochloric-acid": "HCl", "carbon-dioxide": "CO2",
    "alum": "Al2(SO4)3·14H2O", "ferric-chloride": "FeCl3", "ferric-sulfate": "Fe2(SO4)3",
    "pacl-50": "Al2(OH)3Cl3", "chlorine": "Cl2", "hypochlorite": "NaOCl",
}

# (id, water, [(chemical id, dose mg/L, "softening" or None)]): invented plant paths.
PATHS = [
    ("p01-reservoir", "w03-reservoir", [("alum", 30, None), ("caustic", 8, None), ("chlorine", 2, None)]),
    ("p02-river-ferric", "w04-river", [("ferric-chloride", 25, None), ("lime", 12, None), ("hypochlorite", 3, None)]),
    ("p03-soft-remineralised", "w14-mountain", [("alum", 15, None), ("soda-ash", 20, None), ("carbon-dioxide", 5, None), ("lime", 10, None), ("hypochlorite", 2, None)]),
    ("p04-cold-pacl", "w01-cold-soft", [("pacl-50", 12, None), ("caustic", 6, None), ("chlorine", 2, None)]),
    ("p05-tropical", "w09-tropical", [("ferric-sulfate", 35, None), ("caustic", 10, None), ("hypochlorite", 2.5, None)]),
    ("p06-limestone-softened", "w15-limestone", [("lime", 200, "softening"), ("carbon-dioxide", 40, None), ("hypochlorite", 2, None)]),
    ("p07-dolomite-softened", "w16-dolomite", [("lime", 350, "softening"), ("carbon-dioxide", 60, None), ("chlorine", 2, None)]),
    ("p08-summer-acid-first", "w21-summer-lake", [("sulfuric-acid", 20, None), ("alum", 40, None), ("caustic", 12, None), ("hypochlorite", 3, None)]),
    ("p09-winter", "w22-winter-lake", [("alum", 25, None), ("lime", 10, None), ("bicarbonate", 15, None), ("chlorine", 2.5, None)]),
    ("p10-low-alk", "w11-low-alk", [("bicarbonate", 40, None), ("alum", 15, None), ("lime", 12, None), ("hypochlorite", 1.5, None)]),
    ("p11-peat", "w19-peat", [("lime", 15, None), ("ferric-chloride", 30, None), ("caustic", 15, None), ("chlorine", 2, None)]),
    ("p12-prechlorinated", "w24-mid", [("chlorine", 3, None), ("alum", 35, None), ("caustic", 10, None), ("hypochlorite", 1.5, None), ("carbon-dioxide", 3, None)]),
    ("p13-coastal", "w18-coastal", [("pacl-50", 20, None), ("hydrochloric-acid", 5, None), ("soda-ash", 15, None), ("hypochlorite", 2, None)]),
    ("p14-sulfate", "w12-sulfate", [("ferric-chloride", 20, None), ("lime", 15, None), ("chlorine", 2, None), ("caustic", 4, None)]),
]

# (id, water, first, second, first dose, second dose, second target kind): invented.
TWO = [
    ("t01-lime-co2-alk", "w14-mountain", "lime", "carbon-dioxide", 25, 12, "alkalinity"),
    ("t02-lime-co2-ca", "w01-cold-soft", "lime", "carbon-dioxide", 30, 20, "calcium"),
    ("t03-caustic-bicarb-alk", "w11-low-alk", "caustic", "bicarbonate", 8, 30, "alkalinity"),
    ("t04-caustic-bicarb-dic", "w05-well-acid", "caustic", "bicarbonate", 10, 20, "dic"),
    ("t05-caustic-soda-alk", "w19-peat", "caustic", "soda-ash", 6, 15, "alkalinity"),
    ("t06-caustic-soda-lsi", "w03-reservoir", "caustic", "soda-ash", 4, 10, "lsi"),
    ("t07-co2-lime-alk", "w17-lime-softened", "carbon-dioxide", "lime", 30, 5, "alkalinity"),
    ("t08-co2-lime-lsi", "w08-softened", "carbon-dioxide", "lime", 20, 8, "lsi"),
    ("t09-lime-co2-ccpp", "w22-winter-lake", "lime", "carbon-dioxide", 20, 15, "ccpp"),
    ("t10-lime-co2-lsi", "w14-mountain", "lime", "carbon-dioxide", 35, 25, "lsi"),
    ("t11-caustic-bicarb-dic", "w04-river", "caustic", "bicarbonate", 5, 10, "dic"),
    ("t12-lime-co2-dic", "w24-mid", "lime", "carbon-dioxide", 10, 5, "dic"),
]

SELECT = """
SELECTED_OUTPUT 1
    -reset false
    -high_precision true
    -pH true
    -alkalinity true
    -totals C(4) Ca Al Fe(3) Mg
    -equilibrium_phases Calcite
"""


def reaction(chemical, dose):
    formula = ID[chemical]
    mmol = dose / g.mass(formula)
    return "".join(f"    {r} {n * mmol:.12g}\n" for r, n in CHEM[formula])


def step_block(n, chemical, dose, mode):
    text = f"USE solution {n}\nREACTION {n}\n" + reaction(chemical, dose) + "    1 mmol\n"
    formula = ID[chemical]
    if mode == "softening":
        text += "EQUILIBRIUM_PHASES 1\n    Calcite 0 0\n    Brucite 0 0\n"
    elif "Al" in formula or "Fe" in formula:
        phase = "Al(OH)3(a)" if "Al" in formula else "Fe(OH)3(a)"
        text += f"EQUILIBRIUM_PHASES 1\n    {phase} 0 0\n"
    text += f"SAVE solution {n + 1}\n" + SELECT + "END\n"
    return text


def water(wid):
    for w in g.WATERS:
        if w[0] == wid:
            return g.balance_chloride(w)
    raise KeyError(wid)


def quantities(pp, w, feeds, kind):
    """pH and the second quantity after `feeds` [(chemical, dose)] together."""
    # The solution and the reaction in one simulation (SAVE keeps a reaction's result only).
    text = g.HYPOCHLORITE + g.BRUCITE + g.solution_block(w) + "REACTION 1\n"
    for chemical, dose in feeds:
        formula = ID[chemical]
        mmol = dose / g.mass(formula)
        text += "".join(f"    {r} {n * mmol:.12g}\n" for r, n in CHEM[formula])
    text += "    1 mmol\nSAVE solution 3\n" + SELECT + "END\n"
    r = g.run(pp, text)
    ph = r["pH"]
    if kind == "alkalinity":
        y = r["Alk(eq/kgw)"] * 1000 * g.M["CaCO3"] / 2
    elif kind == "dic":
        y = r["C(4)(mol/kgw)"] * 1000
    elif kind == "calcium":
        y = r["Ca(mol/kgw)"] * 1000 * g.M["CaCO3"]
    elif kind == "lsi":
        # pHs: the same water brought to calcite saturation by CO2 alone (calcium and
        # alkalinity unchanged), Standard Methods 2330's definition.
        s = g.run(pp, "USE solution 3\nEQUILIBRIUM_PHASES 2\n    Calcite 0 CO2(g) 10\n" + SELECT + "END\n")
        y = ph - s["pH"]
    elif kind == "ccpp":
        s = g.run(pp, "USE solution 3\nEQUILIBRIUM_PHASES 2\n    Calcite 0 10\n" + SELECT + "END\n")
        y = s["d_Calcite"] * 1000 * g.M["CaCO3"]
    else:
        raise ValueError(kind)
    return ph, y


def main():
    from importlib.metadata import version

    pp = g.phreeqpython.PhreeqPython(database="phreeqc.dat")
    pp.ip.run_string(g.HYPOCHLORITE + g.BRUCITE)
    paths = []
    for pid, wid, steps in PATHS:
        w = water(wid)
        text = g.HYPOCHLORITE + g.BRUCITE + g.solution_block(w) + "SAVE solution 1\nEND\n"
        pp.ip.run_string(text)
        out = []
        for n, (chemical, dose, mode) in enumerate(steps, start=1):
            r = g.run(pp, step_block(n, chemical, dose, mode))
            out.append({
                "chemical": chemical,
                "dose_mg_l": dose,
                "softening": mode == "softening",
                "ph": r["pH"],
                "alkalinity_mg_l_as_caco3": r["Alk(eq/kgw)"] * 1000 * g.M["CaCO3"] / 2,
                "dic_mmol_l": r["C(4)(mol/kgw)"] * 1000,
                "calcium_mg_l_as_caco3": r["Ca(mol/kgw)"] * 1000 * g.M["CaCO3"],
                # Dissolved metal: phreeqc.dat's alkalinity counts Al+3 as 0 and Fe+3 as -2.
                "aluminium_mmol_l": r["Al(mol/kgw)"] * 1000,
                "iron3_mmol_l": r["Fe(3)(mol/kgw)"] * 1000,
            })
        paths.append({"id": pid, "water": g.water_json(w), "steps": out})
    two = []
    for tid, wid, first, second, d1, d2, kind in TWO:
        w = water(wid)
        ph, y = quantities(pp, w, [(first, d1), (second, d2)], kind)
        jac = []
        for k in (0, 1):
            h = 0.01 * (d1, d2)[k]
            lo = [(first, d1 - (h if k == 0 else 0)), (second, d2 - (h if k == 1 else 0))]
            hi = [(first, d1 + (h if k == 0 else 0)), (second, d2 + (h if k == 1 else 0))]
            (p0, y0), (p1, y1) = quantities(pp, w, lo, kind), quantities(pp, w, hi, kind)
            jac.append([(p1 - p0) / (2 * h), (y1 - y0) / (2 * h)])
        two.append({
            "id": tid, "water": g.water_json(w), "first": first, "second": second,
            "target": kind, "first_dose_mg_l": d1, "second_dose_mg_l": d2,
            "target_ph": ph, "target_value": y,
            # d(pH)/d(dose) and d(second)/d(dose), per mg/L of the first, then the second.
            "dph_d1": jac[0][0], "dy_d1": jac[0][1], "dph_d2": jac[1][0], "dy_d2": jac[1][1],
        })
    out = {
        "about": "PHREEQC reference results for the plant's water path and two-target doses, written by tools/gen_path_fixture.py; do not edit by hand.",
        "source": "PHREEQC 3 (IPhreeqc bundled with phreeqpython) with phreeqc.dat (Parkhurst & Appelo 2013, USGS TM 6-A43) plus a hypochlorite species (Morris 1966) and brucite (WATEQ4F), as tools/gen_water_fixture.py",
        "versions": {"python": sys.version.split()[0], "phreeqpython": version("phreeqpython"),
                     "molmass": version("molmass")},
        "paths": paths,
        "two_targets": two,
    }
    path = os.path.join(os.path.dirname(__file__), "..", "tests", "fixtures", "path_phreeqc.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print(f"wrote {len(paths)} paths and {len(two)} two-target cases to {os.path.normpath(path)}")


if __name__ == "__main__":
    main()
