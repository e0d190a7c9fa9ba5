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
    Its database is loaded once, before the timing starts.
  - molefeed, two ways, both timed in every run:
    - "one process": a single `molefeed batch` process started before the timing starts (as
      PHREEQC's database is loaded before), each chunk written to its stdin and timed from the
      first byte written to its chunk's last answer read back. This is the fair comparison
      with PHREEQC and, since 2026-12-04, the ratio the script reports first.
    - "a process per chunk": each chunk through its own `molefeed batch` process
      (subprocess.run), wall time of the processes divided by the lines: the time also holds
      starting a process (and Python's fork and pipe set-up) per chunk. This was the script's
      only way before 2026-12-04; it is kept so figures from then compare.
    Both include JSON parsing, the water built from the readings, the chemistry and the JSON
    answer; the answers of the two ways must be the same bytes. Each asks for the pH alone
    (`"fields": "ph"`), as PHREEQC's selected output does; --whole asks for the whole answer
    with every species (about 1.5 kB a line), as every run did before 2026-12-04 (afternoon).
The script prints µs per request for each, their ratios, and the worst |ΔpH| between molefeed and
PHREEQC (a speed that gave other answers would not count).

It also prints the CPU time each side was charged for the same turns (since 2026-12-04, night):
PHREEQC's as the CPU time of the harness's own thread while it ran PHREEQC (time.thread_time;
IPhreeqc runs in that thread), the one `molefeed batch` process's from the kernel's count of its
time on a CPU (/proc/PID/schedstat, nanoseconds). Wall time on this shared virtual machine holds
more than the programs' own work: a CPU left idle during PHREEQC's turn wakes slower for
molefeed's (docs/benchmarks.md), which CPU time does not see. Both ratios are printed; neither
replaces the other.
"""

import argparse
import json
import os
import random
import subprocess
import sys
import threading
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


def request(w, chem, dose, whole=False):
    """The batch line for one water. Like PHREEQC's SELECTED_OUTPUT above, it asks for the pH
    alone (`fields`; the advisory caution comes with every answer), unless `whole`: the
    whole answer, every species included, as every line was before 2026-12-04 (afternoon)."""
    _, t, ph, alk, ca, mg, na, k, cl, so4 = w
    args = {
        "chemical": chem[0], "dose": dose, "ph": ph, "temperature": t, "alkalinity": alk,
        "calcium_as_caco3": ca, "magnesium_as_caco3": mg, "sodium": na, "potassium": k,
        "chloride": cl, "sulfate": so4}
    if not whole:
        args["fields"] = "ph"
    return {"command": "ph-after", "args": args}


class Streamed:
    """One `molefeed batch` process kept for the whole run; chunks go through its pipes."""

    def __init__(self, binary):
        self.proc = subprocess.Popen([binary, "batch"], stdin=subprocess.PIPE,
                                     stdout=subprocess.PIPE, bufsize=0)
        self.out = self.proc.stdout.fileno()
        self.pending = b""

    def cpu_seconds(self):
        """The process's time on a CPU so far: the kernel's count, in nanoseconds, of its
        (single) thread's run time."""
        with open(f"/proc/{self.proc.pid}/schedstat") as f:
            return int(f.read().split()[0]) * 1e-9

    def run(self, payload, lines):
        """Writes `payload` (`lines` requests) and reads back its `lines` answers. The writing
        runs on a thread: a chunk's answers fill the pipe long before its requests are all
        written."""
        writer = threading.Thread(target=self._write, args=(payload,))
        writer.start()
        blocks = [self.pending]
        count = self.pending.count(b"\n")
        while count < lines:
            block = os.read(self.out, 1 << 20)
            if not block:
                sys.exit("molefeed batch ended early")
            count += block.count(b"\n")
            blocks.append(block)
        writer.join()
        got = b"".join(blocks)
        # Split after the chunk's last answer (nothing more is asked, so nothing follows).
        end = 0
        for _ in range(lines):
            end = got.index(b"\n", end) + 1
        self.pending = got[end:]
        return got[:end]

    def _write(self, payload):
        self.proc.stdin.write(payload)
        self.proc.stdin.flush()

    def close(self):
        self.proc.stdin.close()
        self.proc.wait()


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--n", type=int, default=5000, help="waters (the issue's figure used 50000)")
    p.add_argument("--seed", type=int, default=15)
    p.add_argument("--chunk", type=int, default=1000,
                   help="requests per turn")
    p.add_argument("--whole", action="store_true",
                   help="ask molefeed for its whole answer, not the pH alone")
    p.add_argument("--binary", default=os.path.join(
        os.environ.get("CARGO_TARGET_DIR", os.path.join(ROOT, "target")), "release", "molefeed"))
    a = p.parse_args()
    if not os.path.exists(a.binary):
        sys.exit(f"build first: cargo build --release --no-default-features ({a.binary} missing)")
    cases = waters(a.n, a.seed)

    pp = phreeqpython.PhreeqPython(database="phreeqc.dat")
    ip = pp.ip
    texts = [phreeqc_text(w, c, d) for w, c, d in cases]
    lines = [json.dumps(request(w, c, d, a.whole)) for w, c, d in cases]
    streamed = Streamed(a.binary)
    # The programs take turns, a chunk of requests each, so a change in the load of a shared
    # machine falls on all of them rather than on whichever ran last.
    phreeqc_seconds = stream_seconds = process_seconds = 0.0
    phreeqc_cpu = stream_cpu = 0.0
    reference, answers = [], []
    mismatched = 0
    for start in range(0, len(cases), a.chunk):
        t0, c0 = time.perf_counter(), time.thread_time()
        for text in texts[start:start + a.chunk]:
            # A water PHREEQC cannot converge on ("Alkalinity has not converged") is counted
            # and left out of the comparison, not the end of the run; its time still counts.
            try:
                ip.run_string(ADDITIONS + text)
                reference.append(ip.get_selected_output_array()[-1][0])
            except Exception:  # noqa: BLE001 - phreeqpython raises a bare Exception
                reference.append(None)
        phreeqc_seconds += time.perf_counter() - t0
        phreeqc_cpu += time.thread_time() - c0
        chunk = lines[start:start + a.chunk]
        payload = ("\n".join(chunk) + "\n").encode()
        t0, c0 = time.perf_counter(), streamed.cpu_seconds()
        by_stream = streamed.run(payload, len(chunk))
        stream_seconds += time.perf_counter() - t0
        stream_cpu += streamed.cpu_seconds() - c0
        t0 = time.perf_counter()
        out = subprocess.run([a.binary, "batch"], input=payload, capture_output=True, check=False)
        process_seconds += time.perf_counter() - t0
        mismatched += by_stream != out.stdout
        answers += [json.loads(line) for line in out.stdout.decode().splitlines()]
    streamed.close()
    phreeqc = phreeqc_seconds / len(cases)
    stream = stream_seconds / len(cases)
    per_chunk = process_seconds / len(cases)
    errors = sum(1 for r in answers if "error" in r) + len(cases) - len(answers)
    unsolved = sum(1 for ref in reference if ref is None)
    # A refusal only counts against molefeed where PHREEQC found an answer.
    refused_solvable = sum(1 for r, ref in zip(answers, reference)
                           if "error" in r and ref is not None)
    # Since 2026-12-04 (night) the water commands check the pH against the alkalinity as the
    # calculator table does: readings that mean more free CO2 than dissolves under one
    # atmosphere are refused on purpose (PHREEQC computes them as given).
    by_reason = {}
    for r, ref in zip(answers, reference):
        if "error" in r and ref is not None:
            reason = r["error"].get("reason") or r["error"].get("kind")
            by_reason[reason] = by_reason.get(reason, 0) + 1
    worst = max((abs(r["ph"] - ref) for r, ref in zip(answers, reference)
                 if "ph" in r and ref is not None), default=0)

    load = os.getloadavg()[0]
    print(f"held-out full-ion waters: {len(cases)} (seed {a.seed}), pH after a dose, "
          f"molefeed answers {'whole' if a.whole else 'pH alone (fields)'}, "
          f"load average {load:.2f}")
    print(f"PHREEQC (phreeqpython {getattr(phreeqpython, '__version__', '1.6.2')}) "
          f"{phreeqc * 1e6:8.1f} µs per request")
    print(f"molefeed batch, one process      {stream * 1e6:8.1f} µs per request   "
          f"ratio {phreeqc / stream:6.1f}x")
    print(f"molefeed batch, process per chunk {per_chunk * 1e6:7.1f} µs per request   "
          f"ratio {phreeqc / per_chunk:6.1f}x")
    print(f"CPU time: PHREEQC {phreeqc_cpu / len(cases) * 1e6:8.1f} µs per request, "
          f"molefeed batch (one process) {stream_cpu / len(cases) * 1e6:6.1f} µs   "
          f"ratio {phreeqc_cpu / stream_cpu:6.1f}x")
    print(f"worst |ΔpH| {worst:.4f}   molefeed errors {errors}   "
          f"chunks whose two answers differ {mismatched}   "
          f"waters PHREEQC could not solve (left out of ΔpH) {unsolved}, "
          f"of the others molefeed refused {refused_solvable}"
          + (f" ({', '.join(f'{k}: {v}' for k, v in sorted(by_reason.items()))})"
             if by_reason else ""))


if __name__ == "__main__":
    main()
