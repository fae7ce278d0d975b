#!/usr/bin/env python3
"""Stability of framecost's answers across repeated sweeps of the same workloads.

usage: benches/catalog-stability.py RUN_DIR RUN_DIR [RUN_DIR ...]

Each RUN_DIR is the output of one `framecost sweep workloads/ --out RUN_DIR`; its
`analysis.json` is read. Printed: per workload, the verdict (kind and design) of each run;
per design and metric (time, bytes), the class of each run; the prediction at the target
of each run; then the summary the trust issue asks for: workloads with the same verdict in
every run, design x metric cells with the same class (or the same pair) in every run,
predictions within x2 of each other, and `expect:` entries met in every run.
Exit 0 always: this is a measurement, not a test."""
import json, sys
from collections import defaultdict

runs = sys.argv[1:]
docs = [json.load(open(f"{r}/analysis.json")) for r in runs]

RANK = ["constant", "log n", "n", "n log n", "n²", "n³"]

def label(g):
    # The class, or the pair in growth order ("n or n log n" whichever was chosen).
    if not g:
        return "-"
    c = g["class"]
    if c == "unclear":
        return f"unclear({g.get('top_slope') or 0:.2f})"
    pair = sorted({c, g.get("alternative") or c}, key=lambda x: RANK.index(x) if x in RANK else 9)
    return " or ".join(pair)

verdicts = defaultdict(list)
classes = defaultdict(list)
preds = defaultdict(list)
expects = defaultdict(list)
for doc in docs:
    for w, e in zip(doc["analysis"]["workloads"], doc["explanations"]):
        v = e["verdict"]
        verdicts[w["workload"]].append((v.get("kind"), v.get("design")))
        for d in w["designs"]:
            key = (w["workload"], d["design"])
            classes[key + ("time",)].append(label(d.get("time")))
            classes[key + ("bytes",)].append(label(d.get("bytes")))
            p = d.get("prediction")
            preds[key].append(p["median"] if p else None)
        for f in e["findings"]:
            if f["kind"] == "expectation":
                expects[(w["workload"], f["design"], f["measured"].split(";")[0])].append("confirms" in f["implies"] or "close to" in f["implies"])

def same_class(vals):
    # the same class, or the same pair, in every run
    return len(set(vals)) == 1

print("verdicts")
for w, vs in verdicts.items():
    print(f"  {w:<18} " + " | ".join(f"{k} {d}" for k, d in vs))
print("classes (time, bytes) per run")
for key, vs in sorted(classes.items()):
    print(f"  {key[0]:<16} {key[1]:<26} {key[2]:<5} " + " | ".join(vs))
print("predictions at the target (ms)")
for key, vs in sorted(preds.items()):
    print(f"  {key[0]:<16} {key[1]:<26} " + " | ".join("-" if v is None else f"{v/1e6:.3g}" for v in vs))

print("expect: entries not met in every run")
for key, vs in sorted(expects.items()):
    if not all(vs):
        print(f"  {key[0]:<16} {key[1]:<26} {key[2]:<30} " + " | ".join("met" if v else "not met" for v in vs))

n_w = len(verdicts)
same_v = sum(1 for vs in verdicts.values() if len(set(vs)) == 1 and len(vs) == len(runs))
cells = [vs for vs in classes.values() if any(v != "-" for v in vs)]
same_c = sum(1 for vs in cells if same_class(vs))
pred_sets = [[v for v in vs if v] for vs in preds.values()]
pred_sets = [vs for vs in pred_sets if len(vs) == len(runs)]
within2 = sum(1 for vs in pred_sets if max(vs) <= 2 * min(vs))
met = sum(1 for vs in expects.values() if all(vs))
# Weaker, for context: the same design named in every run, whatever the kind (a tie at ×1.16
# and a winner at ×1.21 that name the same design give the reader the same advice).
same_d = sum(1 for vs in verdicts.values() if len({d for _, d in vs}) == 1 and len(vs) == len(runs))
print(f"same verdict in every run: {same_v}/{n_w}")
print(f"same design named in every run (kind aside): {same_d}/{n_w}")
print(f"same class (or pair) in every run: {same_c}/{len(cells)} design x metric cells ({100*same_c/max(1,len(cells)):.0f}%)")
# Weaker, for context: cells where some class is admitted by every run ("n or n log n",
# "n", "n or n log n" share n), so no run contradicts another, only states it less sharply.
shared = sum(1 for vs in cells if "-" not in vs and not any(v.startswith("unclear") for v in vs)
             and set.intersection(*(set(v.split(" or ")) for v in vs)))
print(f"cells where no run contradicts another (a class every run admits): {shared}/{len(cells)} ({100*shared/max(1,len(cells)):.0f}%)")
print(f"predictions at the target within x2 across runs: {within2}/{len(pred_sets)}")
print(f"expect: entries met in every run: {met}/{len(expects)}")
