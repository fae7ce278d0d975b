#!/usr/bin/env bash
# Prediction accuracy benchmark: sweep each workload, then for every design fit its time on
# the sizes up to a quarter of the largest size it was measured at (N/4), predict N, and
# compare with what was measured at N. Every design with at least three sizes up to N/4 is
# reported, whatever its class; the last lines count how many landed within 25% (the aim:
# at least 90%, and every n² design). Given several runs of the same workloads (RUNS=DIR
# with one folder per run), the last line is the ceiling: how often one run's measured
# median at N lies within 25% of another's — no prediction can beat the measurements'
# own reproducibility. The `caches passed` column names the cache levels the table grew past
# between the largest fitted size and N, as each check of `explain --fit-up-to` reports them
# (`caches_passed`, the rule of the `caches` finding; runs made before the header recorded
# the caches are explained from a copy with this machine's written in). The `cores` column gives the cores the step kept busy (CPU time over
# wall time) at the largest fitted size and at N; a step that goes parallel in between (polars
# splits sorts, joins and queries over threads above sizes of its own) runs faster than any
# curve of the smaller sizes says, and the misses it explains are counted.
#
#   benches/prediction-accuracy.sh [WORKLOAD.yaml ...]     (default: every built-in workload)
#   RUNS=DIR benches/prediction-accuracy.sh                 (re-judge saved runs, no sweeping)
#
# It needs the release binary (cargo build --release) and python3 for the table. Runs take
# as long as the sweeps themselves; run it on a quiet machine.
set -euo pipefail
# Paths given relative to where the script was started from stay valid after the cd below.
[ -z "${FRAMECOST:-}" ] || FRAMECOST=$(realpath "$FRAMECOST")
[ -z "${RUNS:-}" ] || RUNS=$(realpath "$RUNS")
given=()
for f in "$@"; do given+=("$(realpath "$f")"); done
cd "$(dirname "$0")/.."
bin=${FRAMECOST:-${CARGO_TARGET_DIR:-target}/release/framecost}
[ -x "$bin" ] || cargo build --release
files=("${given[@]}")
[ ${#files[@]} -gt 0 ] || files=(workloads/*.yaml)
out=${RUNS:-$(mktemp -d)}
for f in "${files[@]}"; do
  name=$(basename "$f" .yaml)
  [ -n "${RUNS:-}" ] || "$bin" sweep "$f" --quiet --out "$out/$name" >/dev/null 2>&1 || true
done
python3 - "$bin" "$out" <<'PY'
import atexit, json, os, shutil, subprocess, sys, tempfile
from collections import defaultdict
binary, root = sys.argv[1], sys.argv[2]
rows_out, within, total, quad_within, quad_total, missed_switch, inside = [], 0, 0, 0, 0, 0, 0
missed_cache, crossed, crossed_within = 0, 0, 0


def sysfs_caches():
    """This machine's data caches, for runs made before the run header recorded them."""
    out, base = [], "/sys/devices/system/cpu/cpu0/cache"
    for d in sorted(os.listdir(base)) if os.path.isdir(base) else []:
        try:
            kind = open(os.path.join(base, d, "type")).read().strip()
            size = open(os.path.join(base, d, "size")).read().strip()
            level = int(open(os.path.join(base, d, "level")).read())
            shared = open(os.path.join(base, d, "shared_cpu_list")).read().strip()
        except (OSError, ValueError):
            continue
        cpus = sum(int(b) - int(a) + 1 if "-" in p else 1 for p in shared.split(",") if p for a, _, b in [p.partition("-")])
        if kind in ("Data", "Unified") and size[:-1].isdigit():
            out.append({"level": level, "bytes": int(size[:-1]) * {"K": 1 << 10, "M": 1 << 20, "G": 1 << 30}.get(size[-1], 1), "shared_by": cpus})
    return out



def with_caches(run):
    """The run folder to explain: itself when its header records the caches, else a copy
    of its points with this machine's caches written into the header (runs made before the
    header recorded them), so `explain` marks the crossings by its own rule."""
    pts = os.path.join(run, "points.jsonl")
    lines = open(pts, errors="replace").read().splitlines()
    head = json.loads(lines[0]) if lines else {}
    if head.get("record") != "run" or head.get("caches"):
        return run
    head["caches"] = sysfs_caches()
    copy = tempfile.mkdtemp(prefix="framecost-accuracy-")
    atexit.register(shutil.rmtree, copy, True)
    with open(os.path.join(copy, "points.jsonl"), "w") as f:
        f.write("\n".join([json.dumps(head)] + lines[1:]) + "\n")
    return copy


for name in sorted(os.listdir(root)):
    pts = os.path.join(root, name, "points.jsonl")
    if not os.path.isfile(pts):
        continue
    # A run folder may hold one workload or a whole catalog: key designs by workload too.
    largest = defaultdict(int)
    for line in open(pts, errors="replace"):
        try:
            r = json.loads(line)
        except Exception:
            continue
        if r.get("record") == "point" and r.get("measured"):
            key = (r["workload"], r["design"])
            largest[key] = max(largest[key], r["rows"])
    run = with_caches(os.path.join(root, name))
    by_n = defaultdict(list)
    for key, n in largest.items():
        by_n[n].append(key)
    for n, designs in sorted(by_n.items()):
        limit = n // 4
        doc = json.loads(subprocess.run([binary, "explain", run, "--fit-up-to", str(limit), "--json"],
                                        capture_output=True, text=True).stdout or "{}")
        for w in doc.get("analysis", {}).get("workloads", []):
            for d in w["designs"]:
                if (w["workload"], d["design"]) not in designs:
                    continue
                t = d.get("time") or {}
                for h in d.get("holdout", []):
                    if h["rows"] != n:
                        continue
                    ok = abs(h["error"]) <= 0.25
                    total += 1; within += ok; inside += bool(h["inside_interval"])
                    cls = t.get("class", "?") + (" or " + t["alternative"] if t.get("alternative") else "")
                    if t.get("class") in ("n²", "n³"):
                        quad_total += 1; quad_within += ok
                    # Cores kept busy at N against the largest fitted size: a step that
                    # goes parallel in between runs faster than any curve of the fitted sizes.
                    c, cf = h.get("cores"), h.get("cores_fitted")
                    switched = bool(c and cf and max(c, cf) / min(c, cf) >= 1.3)
                    if not ok:
                        missed_switch += switched
                    cores = f"{cf:.1f}->{c:.1f}" if c and cf else "-"
                    # Cache levels the table passed between the largest fitted size and N,
                    # as `explain` judges them (`analyse::caches`; rows sweeps only).
                    cache = ",".join(f"L{lvl}" for lvl in h.get("caches_passed", []))
                    if not ok:
                        missed_cache += bool(cache)
                    if cache:
                        crossed += 1; crossed_within += ok
                    rows_out.append(f'{w["workload"]:<20} {d["design"]:<26} {cls:<16} {limit:>9} {h["predicted_ns"]/1e6:>11.3f}ms {h["measured_ns"]/1e6:>11.3f}ms {h["error"]*100:>+7.1f}% {"yes" if h["inside_interval"] else "no":<6} {cores:<9} {cache or "-"}')
print(f'{"workload":<20} {"design":<26} {"class":<16} {"fit≤":>9} {"predicted":>13} {"measured":>13} {"error":>8} inside cores     caches passed')
print("\n".join(rows_out))
print(f"within 25%: {within}/{total}" + (f" ({100*within/total:.0f}%)" if total else ""))
print(f"n² or n³ designs within 25%: {quad_within}/{quad_total}")
# The 95% intervals (widened for the distance past the fitted sizes) should hold about 95%.
print(f"inside the 95% interval: {inside}/{total}" + (f" ({100*inside/total:.0f}%)" if total else ""))
print(f"of the misses, steps whose cores changed x1.3 or more between the largest fitted size and N: {missed_switch}/{total - within}")
print(f"of the misses, steps whose table passed a cache level between the largest fitted size and N: {missed_cache}/{total - within}")
print(f"predictions whose table passed a cache level, within 25%: {crossed_within}/{crossed}; the others: {within - crossed_within}/{total - crossed}")
# The ceiling any prediction faces: how often two runs of the same design at the same N
# (the point predicted above) measured medians within 25% of each other. With one run
# folder, nothing to compare.
at_n = defaultdict(list)
for name in sorted(os.listdir(root)):
    pts = os.path.join(root, name, "points.jsonl")
    if not os.path.isfile(pts):
        continue
    meds, largest = {}, defaultdict(int)
    for line in open(pts, errors="replace"):
        try:
            r = json.loads(line)
        except Exception:
            continue
        if r.get("record") == "point" and r.get("measured"):
            key = (r["workload"], r["design"])
            meds[key + (r["rows"],)] = r["measured"]["median_ns"]
            largest[key] = max(largest[key], r["rows"])
    for key, n in largest.items():
        at_n[key + (n,)].append(meds[key + (n,)])
# Ordered pairs, scored like a prediction: run A's median taken as the prediction of run B's.
pairs = [(a, b) for v in at_n.values() for i, a in enumerate(v) for j, b in enumerate(v) if i != j]
if pairs:
    agree = sum(1 for a, b in pairs if abs(a / b - 1) <= 0.25)
    print(f"ceiling: another run's median at the same N within 25%: {agree}/{len(pairs)} ({100*agree/len(pairs):.0f}%)")
PY
