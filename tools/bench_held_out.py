#!/usr/bin/env python3
"""Times `molefeed batch` against PHREEQC on held-out full-ion waters: pH after a dose.

    cargo build --release --no-default-features
    python3 tools/bench_held_out.py [--n 50000] [--seed 15] [--binary path/to/molefeed]

PHREEQC runs through phreeqpython (offline; /work/venv-phreeqc/bin/python has it). The waters
are held out: drawn at random (fixed seed, so a run is reproducible) from the ranges of the
invented waters of tests/fixtures/water_phreeqc.json — 0-35 C, pH 5.5-10, alkalinity 5-400
mg/L as CaCO3, calcium 5-300 and magnesium 2-150 mg/L as CaCO3, sodium, potassium, sulfate,
and chloride balancing the ions to within a few percent — and none of them is a water the
engine's tests were tuned on. Each water gets one dose of one chemical that does not
precipitate (lime, caustic, soda ash, sodium bicarbonate, sulfuric and hydrochloric acid,
carbon dioxide, hypochlorite), no precipitation, in both programs.

Both sides are timed in the same run on the same requests, taking turns a chunk of requests at a
time (--chunk, default 1000) so that a change in the load of a shared machine falls on both:
  - PHREEQC: one input text per water (SOLUTION + REACTION + SELECTED_OUTPUT), through
    IPhreeqc's run_string, the selected output read back: the time includes parsing its text.
  - molefeed: each chunk through one `molefeed batch` process, one JSON request per line, wall
    time of the processes divided by the lines: the time includes starting a process per chunk,
    JSON parsing, the water built from the readings, the chemistry and the JSON answer.
The script prints µs per request for both, their ratio, and the worst |ΔpH| between the two
(a speed that gave other answers would not count).
"""

import argparse
import json
import os
import random
import subprocess
import sys
import time

import phreeqpython

sys.path.insert(0, os.path.dirname(__file__))
from gen_water_fixture import ADDITIONS, M, mass, solution_block  # noqa: E402

ROOT = os.path.join(os.path.dirname(__file__), "..")

# (catalog id for molefeed, PHREEQC reactants, largest dose mg/L)
CHEMICALS = [
    ("lime", "Ca(OH)2", [("Ca(OH)2", 1)], 30.0),
    ("caustic", "NaOH", [("NaOH", 1)], 20.0),
    ("soda-ash", "Na2CO3", [("Na2CO3", 1)], 40.0),
    ("bicarbonate", "NaHCO3", [("NaHCO3", 1)], 50.0),
    ("sulfuric-acid", "H2SO4", [("H2SO4", 1)], 20.0),
    ("hydrochloric-acid", "HCl", [("HCl", 1)], 15.0),
    ("carbon-dioxide", "CO2", [("CO2", 1)], 15.0),
    ("hypochlorite", "NaOCl", [("NaHyp", 1)], 5.0),
]

SELECT = """
SELECTED_OUTPUT 1
    -reset false
    -high_precision true
    -pH true
"""


def waters(n, seed):
    """`n` invented full-ion waters and a dose for each, reproducible from `seed`."""
    rng = random.Random(seed)
    out = []
    for i in range(n):
        t = round(rng.uniform(0.5, 35.0), 1)
        ph = round(rng.uniform(5.5, 10.0), 2)
        alk = round(rng.uniform(5.0, 400.0), 1)
        ca = round(rng.uniform(5.0, 300.0), 1)
        mg = round(rng.uniform(2.0, 150.0), 1)
        na = round(rng.uniform(2.0, 200.0), 1)
        k = round(rng.uniform(0.5, 10.0), 2)
        so4 = round(rng.uniform(4.0, 300.0), 1)
        cations = 2 * (ca + mg) / M["CaCO3"] + na / M["Na"] + k / M["K"]
        anions = 2 * alk / M["CaCO3"] + 2 * so4 / M["SO4"]
        cl = round(max(0.05, (cations - anions) * rng.uniform(0.95, 1.0)) * M["Cl"], 2)
        chem = CHEMICALS[i % len(CHEMICALS)]
        dose = round(rng.uniform(0.5, chem[3]), 2)
        out.append(((f"h{i}", t, ph, alk, ca, mg, na, k, cl, so4), chem, dose))
    return out


def phreeqc_text(w, chem, dose):
    text = solution_block(w) + "REACTION 1\n"
    text += "".join(f"    {r} {n}\n" for r, n in chem[2])
    return text + f"    {dose / mass(chem[1]):.12g} mmol\n" + SELECT + "END\n"


def request(w, chem, dose):
    _, t, ph, alk, ca, mg, na, k, cl, so4 = w
    return {"command": "ph-after", "args": {
        "chemical": chem[0], "dose": dose, "ph": ph, "temperature": t, "alkalinity": alk,
        "calcium_as_caco3": ca, "magnesium_as_caco3": mg, "sodium": na, "potassium": k,
        "chloride": cl, "sulfate": so4}}


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--n", type=int, default=5000, help="waters (the issue's figure used 50000)")
    p.add_argument("--seed", type=int, default=15)
    p.add_argument("--chunk", type=int, default=1000,
                   help="requests per turn (one `molefeed batch` process each)")
    p.add_argument("--binary", default=os.path.join(
        os.environ.get("CARGO_TARGET_DIR", os.path.join(ROOT, "target")), "release", "molefeed"))
    a = p.parse_args()
    if not os.path.exists(a.binary):
        sys.exit(f"build first: cargo build --release --no-default-features ({a.binary} missing)")
    cases = waters(a.n, a.seed)

    pp = phreeqpython.PhreeqPython(database="phreeqc.dat")
    ip = pp.ip
    texts = [phreeqc_text(w, c, d) for w, c, d in cases]
    lines = [json.dumps(request(w, c, d)) for w, c, d in cases]
    # The two programs take turns, a chunk of requests each, so a change in the load of a
    # shared machine falls on both rather than on whichever ran second.
    phreeqc_seconds = ours_seconds = 0.0
    reference, answers = [], []
    for start in range(0, len(cases), a.chunk):
        t0 = time.perf_counter()
        for text in texts[start:start + a.chunk]:
            ip.run_string(ADDITIONS + text)
            reference.append(ip.get_selected_output_array()[-1][0])
        phreeqc_seconds += time.perf_counter() - t0
        payload = ("\n".join(lines[start:start + a.chunk]) + "\n").encode()
        t0 = time.perf_counter()
        out = subprocess.run([a.binary, "batch"], input=payload, capture_output=True, check=False)
        ours_seconds += time.perf_counter() - t0
        answers += [json.loads(line) for line in out.stdout.decode().splitlines()]
    phreeqc = phreeqc_seconds / len(cases)
    ours = ours_seconds / len(cases)
    errors = sum(1 for r in answers if "error" in r) + len(cases) - len(answers)
    worst = max((abs(r["ph"] - ref) for r, ref in zip(answers, reference) if "ph" in r), default=0)

    load = os.getloadavg()[0]
    print(f"held-out full-ion waters: {len(cases)} (seed {a.seed}), pH after a dose, "
          f"load average {load:.2f}")
    print(f"PHREEQC (phreeqpython {getattr(phreeqpython, '__version__', '1.6.2')}) "
          f"{phreeqc * 1e6:8.1f} µs per request")
    print(f"molefeed batch                   {ours * 1e6:8.1f} µs per request")
    print(f"ratio {phreeqc / ours:6.1f}x   worst |ΔpH| {worst:.4f}   molefeed errors {errors}")


if __name__ == "__main__":
    main()
