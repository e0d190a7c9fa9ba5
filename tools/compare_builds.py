#!/usr/bin/env python3
"""Compares the CPU time of two or more `molefeed` builds on the held-out `batch` lines.

    python3 tools/compare_builds.py BEFORE AFTER [MORE...] [--n 5000] [--rounds 30]

(The Python of tools/bench_held_out.py: the lines are made by its code, which needs
phreeqpython to import, though PHREEQC is not run here.)

Wall time on a shared machine moved by up to 40 % between runs minutes apart (docs/benchmarks.md),
more than most changes of the code. This script reads instead the CPU time the kernel charged each
`molefeed batch` process (user + system, `getrusage` of the children), and the builds take turns,
one run each per round, so that a change of load falls on all of them. It prints, per build, the
best, the first quartile and the median in µs a line; the best and the first quartile are the
figures to compare (a run only gets slower from the load, never faster). It also prints the worst
|ΔpH| between each build and the first: a build that answers otherwise is not the same program
made faster. Differences under about 2 % were not resolved even so; count instructions for those
(tools/count_instructions.sh).
"""

import argparse
import json
import os
import resource
import statistics
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from bench_held_out import request, waters  # noqa: E402


def cpu_seconds(binary, payload):
    """CPU time of one `binary batch` process answering `payload`, and its answers."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    out = subprocess.run([binary, "batch"], input=payload, capture_output=True, check=False)
    # 1: some line was refused (since 2026-12-04, night, readings that mean more free CO2 than
    # water holds are); anything else is a failure of the batch itself.
    if out.returncode not in (0, 1):
        sys.exit(f"{binary} batch ended with {out.returncode}")
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    spent = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return spent, out.stdout


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("binaries", nargs="+", help="the builds, the first taken as the reference")
    p.add_argument("--n", type=int, default=5000, help="held-out lines")
    p.add_argument("--seed", type=int, default=15)
    p.add_argument("--rounds", type=int, default=30)
    a = p.parse_args()
    for b in a.binaries:
        if not os.path.exists(b):
            sys.exit(f"no build at {b}")
    lines = [json.dumps(request(w, c, d)) for w, c, d in waters(a.n, a.seed)]
    payload = ("\n".join(lines) + "\n").encode()
    per_line = {b: [] for b in a.binaries}
    answers = {}
    for _ in range(a.rounds):
        for b in a.binaries:
            spent, out = cpu_seconds(b, payload)
            per_line[b].append(spent / a.n * 1e6)
            answers[b] = out
    reference = [json.loads(line) for line in answers[a.binaries[0]].splitlines()]
    print(f"{a.n} held-out lines (seed {a.seed}), pH alone, {a.rounds} rounds, CPU µs a line")
    for b in a.binaries:
        v = sorted(per_line[b])
        got = [json.loads(line) for line in answers[b].splitlines()]
        worst = max((abs(x["ph"] - y["ph"]) for x, y in zip(got, reference)
                     if "ph" in x and "ph" in y), default=0.0)
        differ = len(got) != len(reference) or any(
            ("ph" in x) != ("ph" in y) for x, y in zip(got, reference))
        refused = sum(1 for x in got if "error" in x)
        print(f"{b}: best {v[0]:.2f}  first quartile {v[len(v) // 4]:.2f}  "
              f"median {statistics.median(v):.2f}  worst |ΔpH| against the first {worst:.1e}"
              f"  lines refused {refused}"
              f"{'  ANSWERS DIFFER IN KIND' if differ else ''}")


if __name__ == "__main__":
    main()
