#!/usr/bin/env python3
"""How well could any prediction do on this machine? The ceiling set by run-to-run noise.

The prediction-accuracy bench compares a prediction with one measured median at the
largest size. That median itself moves between sweeps of unchanged code; even a predictor
that knew the true cost exactly would miss a single measurement by that move. For each
design's largest size measured in every run of a set, the log-ratio between two runs'
medians, divided by sqrt(2), has the spread of one run's deviation from the true cost
(two independent deviations differ with sqrt(2) times the spread). The share of those
within 25% is the share of single measurements an exact predictor would land within 25%.

usage: benches/noise-ceiling.py RUN1,RUN2,RUN3 [RUNa,RUNb,RUNc ...]
(each argument: run folders of the same code swept back to back, comma-separated)
"""
import itertools
import json
import math
import sys


def medians(run):
    out = {}
    with open(f"{run}/points.jsonl") as f:
        for line in f:
            j = json.loads(line)
            if j.get("record") == "point" and j.get("measured"):
                out[(j["workload"], j["design"], j["rows"])] = j["measured"]["median_ns"]
    return out


def main(sets):
    devs = []
    for runs in sets:
        d = [medians(r) for r in runs]
        common = set(d[0]).intersection(*d[1:])
        top = {}
        for w, des, n in common:
            top[(w, des)] = max(top.get((w, des), 0), n)
        for (w, des), n in sorted(top.items()):
            for a, b in itertools.combinations(d, 2):
                devs.append(abs(math.log(a[(w, des, n)] / b[(w, des, n)])) / math.sqrt(2))
    if not devs:
        sys.exit("no design was measured at a common size in every run of a set")
    devs.sort()
    within = sum(1 for x in devs if x < math.log(1.25)) / len(devs)
    q = lambda p: math.exp(devs[min(len(devs) - 1, int(p * len(devs)))]) - 1
    print(f"{len(devs)} run pairs x designs at their largest common size")
    print(f"an exact predictor would land within 25% of one measurement: {within:.0%}")
    print(f"one measurement's deviation from the true cost: median {q(0.5):.0%}, 90th percentile {q(0.9):.0%}")


if __name__ == "__main__":
    if len(sys.argv) < 2:
        sys.exit(__doc__)
    main([a.split(",") for a in sys.argv[1:]])
