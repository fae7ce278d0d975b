#!/usr/bin/env python3
"""How the gate does with and without a history of runs (`gate --history`).

usage: FRAMECOST=BIN benches/gate-history.py --unchanged RUN... [--changed RUN...] [--design NAME]

Every RUN is a run folder of the same workloads; the unchanged ones were made from the code
the baseline stands for, the changed ones from a version with a known change (for example
`slowdown: 15%` on one step; `--design` names the design that carries it).

Printed:
- two runs only: every ordered pairing of unchanged runs through `gate BASE NEW`, and how
  many failed (each of them a false alarm); every changed run against every unchanged
  baseline, and how many failed on the changed design, and on any other;
- with a history: each unchanged run against all the other unchanged ones (`gate BASE NEW
  --history DIR`, the baseline the latest of them), and each changed run against all the
  unchanged ones, counted the same way, with the designs called.

Partial comparisons (runs whose workloads differ in sizes) are judged with `--partial-ok`.
Exit 0 always: this is a measurement, not a test. Nothing is swept; runs take seconds.
"""
import json, os, subprocess, sys, tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from run_groups import parse

unchanged, changed, design, _ = parse(sys.argv[1:])
if len(unchanged) < 2:
    sys.exit(__doc__)
binary = os.path.abspath(os.environ.get("FRAMECOST", "target/release/framecost"))


def started(run):
    for line in open(os.path.join(run, "points.jsonl")):
        r = json.loads(line)
        if r.get("record") == "run":
            return r.get("started_at", "")
    return ""


def gate(base, new, history=None):
    cmd = [binary, "gate", base, new, "--json", "--partial-ok"]
    if history:
        cmd += ["--history", history]
    out = subprocess.run(cmd, capture_output=True, text=True)
    doc = json.loads(out.stdout or "{}")
    called = set()
    for w in doc.get("workloads", []):
        for p in w.get("points", []):
            if p.get("call") == "regression" and p.get("confirmed"):
                called.add(p["design"])
        for m in w.get("moves", []):
            if m.get("call") == "regression":
                called.add(m["design"])
        for g in w.get("growth", []):
            if g.get("call") == "regression":
                called.add(g["design"])
        for m in (w.get("history") or {}).get("moves", []):
            if m.get("call") == "regression":
                called.add(m["design"])
    return out.returncode, called


def history_of(runs):
    d = tempfile.mkdtemp()
    for r in runs:
        os.symlink(r, os.path.join(d, os.path.basename(r.rstrip("/")) + f"-{len(os.listdir(d))}"))
    return d


def tally(label, results):
    fails = sum(1 for rc, _ in results if rc == 1)
    print(f"{label}: {fails} of {len(results)} failed")


print("two runs only")
tally("  unchanged pairings", [gate(a, b) for a in unchanged for b in unchanged if a != b])
for c in changed:
    res = [gate(b, c) for b in unchanged]
    hit = sum(1 for rc, called in res if design in called)
    other = sum(1 for rc, called in res if called - {design})
    print(f"  changed {os.path.basename(c)}: caught on {design} in {hit} of {len(res)}; other designs called in {other}")

print("against a history")
res = []
for new in unchanged:
    others = sorted([u for u in unchanged if u != new], key=started)
    h = history_of(others[:-1])
    rc, called = gate(others[-1], new, h)
    res.append((rc, called))
    if rc == 1:
        print(f"  unchanged {os.path.basename(new)} failed on {sorted(called)}")
tally(f"  unchanged runs, each against the {len(unchanged) - 1} others", res)
for c in changed:
    base = sorted(unchanged, key=started)[-1]
    h = history_of([u for u in unchanged if u != base])
    rc, called = gate(base, c, h)
    print(f"  changed {os.path.basename(c)} against {len(unchanged)}: exit {rc}, called {sorted(called)}")
