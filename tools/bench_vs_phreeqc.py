#!/usr/bin/env python3
"""Times PHREEQC (through phreeqpython) and the Molefeed water engine on the same cases.

    cargo build --release --no-default-features
    python3 tools/bench_vs_phreeqc.py [path/to/molefeed]

Cases: the no-precipitation doses of tests/fixtures/water_phreeqc.json (invented waters, every
catalog chemical). Two tasks, each timed for both programs in the same run:
  1. forward: pH after a dose;
  2. inverse: the dose of that chemical that reaches the fixture's pH (PHREEQC: a fixed-pH
     pseudo-phase dissolving the chemical, the usual PHREEQC idiom; ours: dose-for-ph).
Ours runs through `molefeed batch` (one process, one JSON request per line), so its time
includes JSON parsing and building the water from the readings for every case; PHREEQC's
includes parsing its input text. Versions: phreeqpython 1.6.2 with phreeqc.dat.
"""

import json
import os
import subprocess
import sys
import time

import molmass
import phreeqpython

sys.path.insert(0, os.path.dirname(__file__))
from gen_water_fixture import (  # noqa: E402
    CHEMICALS, HYPOCHLORITE, M, SELECT, mass, run, solution_block,
)

ROOT = os.path.join(os.path.dirname(__file__), "..")
FIX_PH = """
PHASES
Fix_H+
    H+ = H+
    log_k 0
"""


def water_tuple(w):
    return (w["id"], w["temperature_c"], w["ph"], w["alkalinity_mg_l_as_caco3"],
            w["calcium_mg_l_as_caco3"], w["magnesium_mg_l_as_caco3"], w["sodium_mg_l"],
            w["potassium_mg_l"], w["chloride_mg_l"], w["sulfate_mg_l"])


def water_args(w):
    return {"ph": w["ph"], "temperature": w["temperature_c"],
            "alkalinity": w["alkalinity_mg_l_as_caco3"], "calcium_as_caco3": w["calcium_mg_l_as_caco3"],
            "magnesium_as_caco3": w["magnesium_mg_l_as_caco3"], "sodium": w["sodium_mg_l"],
            "potassium": w["potassium_mg_l"], "chloride": w["chloride_mg_l"],
            "sulfate": w["sulfate_mg_l"]}


def main():
    binary = sys.argv[1] if len(sys.argv) > 1 else os.path.join(ROOT, "target", "release", "molefeed")
    if not os.path.exists(binary):
        sys.exit(f"build first: cargo build --release --no-default-features ({binary} missing)")
    fixture = json.load(open(os.path.join(ROOT, "tests", "fixtures", "water_phreeqc.json")))
    waters = {w["id"]: w for w in fixture["waters"]}
    cases = [c for c in fixture["doses"] if c["precipitate"] == "none"]
    reactants = {f: r for f, r, _ in CHEMICALS}

    pp = phreeqpython.PhreeqPython(database="phreeqc.dat")
    pp.ip.run_string(HYPOCHLORITE)

    # PHREEQC forward.
    t0 = time.perf_counter()
    for c in cases:
        w = water_tuple(waters[c["water"]])
        text = HYPOCHLORITE + solution_block(w) + "REACTION 1\n"
        text += "".join(f"    {r} {n}\n" for r, n in reactants[c["chemical"]])
        text += f"    {c['dose_mg_l'] / mass(c['chemical']):.12g} mmol\n" + SELECT + "END\n"
        run(pp, text)
    phreeqc_forward = (time.perf_counter() - t0) / len(cases)

    # PHREEQC inverse: dissolve the chemical until pH is fixed at the target.
    inverse_cases = [c for c in cases if len(reactants[c["chemical"]]) == 1]
    t0 = time.perf_counter()
    failures = 0
    for c in inverse_cases:
        w = water_tuple(waters[c["water"]])
        formula = reactants[c["chemical"]][0][0]
        text = HYPOCHLORITE + FIX_PH + solution_block(w)
        text += f"EQUILIBRIUM_PHASES 1\n    Fix_H+ {-c['ph']:.10g} {formula} 1\n" + SELECT + "END\n"
        try:
            run(pp, text)
        except Exception:  # noqa: BLE001 - IPhreeqc raises a bare Exception on non-convergence
            failures += 1
    phreeqc_inverse = (time.perf_counter() - t0) / len(inverse_cases)

    # Ours, through `molefeed batch`.
    def batch(lines):
        payload = "\n".join(json.dumps(l) for l in lines) + "\n"
        t0 = time.perf_counter()
        out = subprocess.run([binary, "batch"], input=payload.encode(), capture_output=True)
        elapsed = time.perf_counter() - t0
        results = [json.loads(l) for l in out.stdout.decode().splitlines()]
        errors = sum(1 for r in results if "error" in r)
        return elapsed / len(lines), errors

    forward_lines = [{"command": "ph-after", "args": {"chemical": c["chemical"], "dose": c["dose_mg_l"],
                                                       **water_args(waters[c["water"]])}} for c in cases]
    inverse_lines = [{"command": "dose-for-ph", "args": {"chemical": c["chemical"], "target_ph": c["ph"],
                                                          **water_args(waters[c["water"]])}} for c in inverse_cases]
    ours_forward, e1 = batch(forward_lines)
    ours_inverse, e2 = batch(inverse_lines)

    print(f"cases: {len(cases)} forward, {len(inverse_cases)} inverse (phreeqpython "
          f"{getattr(phreeqpython, '__version__', '1.6.2')}, molmass {getattr(molmass, '__version__', '?')})")
    print(f"forward  pH after a dose : PHREEQC {phreeqc_forward * 1e3:8.3f} ms   "
          f"molefeed {ours_forward * 1e6:8.1f} µs   ratio {phreeqc_forward / ours_forward:8.0f}x")
    print(f"inverse  dose for pH     : PHREEQC {phreeqc_inverse * 1e3:8.3f} ms   "
          f"molefeed {ours_inverse * 1e6:8.1f} µs   ratio {phreeqc_inverse / ours_inverse:8.0f}x")
    print(f"errors: PHREEQC inverse {failures}, molefeed forward {e1}, inverse {e2}")


if __name__ == "__main__":
    main()
