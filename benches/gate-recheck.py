#!/usr/bin/env python3
"""How the gate does with and without `--recheck N`, on saved runs, sweeping nothing.

usage: FRAMECOST=BIN benches/gate-recheck.py --unchanged RUN... --changed RUN... --design NAME [--runs N]

Every RUN is a catalog run folder of the same workload files; the unchanged ones were made
from one version of the code, the changed ones from a version with a known change on the
design NAME (for example `slowdown: 15%` on one step). N (default 5) is the runs of the new
code the recheck wants.

For every ordered pairing (BASE, NEW) of unchanged runs, and every changed NEW against every
unchanged BASE: NEW is copied to a temporary folder whose `rechecks/` holds N − 1 other runs
of NEW's own code (the next ones in the list, never BASE), so the gate finds its resweeps
kept and sweeps nothing; the gate runs once alone and once with `--recheck N`. Printed:
how many unchanged pairings failed, how often the changed design was caught, and how often
other designs were called beside it, each alone and with the recheck.

Run it from the folder the sweeps were run from (the gate looks for the workload files
there; with every resweep kept it needs none). Exit 0 always: a measurement, not a test.
"""
import json, os, shutil, subprocess, sys, tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from run_groups import parse

U, S, design, runs = parse(sys.argv[1:])
fc = os.environ.get("FRAMECOST", "framecost")
if len(U) < 2 or not design:
    sys.exit(__doc__)


def with_rechecks(tmp, new, others):
    d = os.path.join(tmp, "new")
    shutil.rmtree(d, ignore_errors=True)
    os.makedirs(os.path.join(d, "rechecks"))
    os.symlink(os.path.abspath(os.path.join(new, "points.jsonl")), os.path.join(d, "points.jsonl"))
    for k, o in enumerate(others):
        os.symlink(os.path.abspath(o), os.path.join(d, "rechecks", f"kept-{k + 1}"))
    return d


def called(base, new, extra):
    p = subprocess.run([fc, "gate", base, new, "--json", "--partial-ok"] + extra, capture_output=True, text=True)
    doc = json.loads(p.stdout)
    out = set()
    for w in doc["workloads"]:
        out |= {m["design"] for m in w.get("moves", []) if m["call"] == "regression"}
        out |= {m["design"] for m in (w.get("recheck") or {}).get("moves", []) if m["call"] == "regression"}
        out |= {m["design"] for m in (w.get("history") or {}).get("moves", []) if m["call"] == "regression"}
        out |= {pt["design"] for pt in w["points"] if pt["call"] == "regression" and pt["confirmed"]}
        out |= {g["design"] for g in w["growth"] if g["call"] == "regression"}
    return p.returncode, out


def others_of(group, new, base):
    j = group.index(new)
    return [x for x in group[j + 1:] + group[:j] if x != base][: runs - 1]


with tempfile.TemporaryDirectory() as tmp:
    count = {"alone": [0, 0, 0, 0], "recheck": [0, 0, 0, 0]}  # unchanged failed, pairings, caught, others
    for base in U:
        for new in U:
            if new == base:
                continue
            d = with_rechecks(tmp, new, others_of(U, new, base))
            for how, extra in (("alone", []), ("recheck", ["--recheck", str(runs)])):
                rc, _ = called(base, d, extra)
                count[how][0] += rc == 1
                count[how][1] += 1
        for new in S:
            d = with_rechecks(tmp, new, others_of(S, new, None))
            for how, extra in (("alone", []), ("recheck", ["--recheck", str(runs)])):
                _, c = called(base, d, extra)
                count[how][2] += design in c
                count[how][3] += bool(c - {design})
    n_changed = len(U) * len(S)
    for how in ("alone", "recheck"):
        f, n, caught, other = count[how]
        print(f"{how:8} unchanged pairings failed: {f} of {n}; changed `{design}` caught: {caught} of {n_changed}; other designs called beside it: {other} of {n_changed}")
