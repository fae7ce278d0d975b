#!/usr/bin/env bash
# Prediction accuracy benchmark: for each workload, sweep it, fit every design on the sizes
# up to 1/8 of the largest, predict the largest, and compare with what was measured there.
# Only designs whose fitted time class is n or n log n are reported (the aim: within 25%).
#
#   benches/prediction-accuracy.sh [WORKLOAD.yaml ...]     (default: every built-in workload)
#
# It needs the release binary (cargo build --release) and python3 for the table. Runs take
# as long as the sweeps themselves; run it on a quiet machine.
set -euo pipefail
cd "$(dirname "$0")/.."
bin=${FRAMECOST:-target/release/framecost}
[ -x "$bin" ] || cargo build --release
files=("$@")
[ ${#files[@]} -gt 0 ] || files=(workloads/*.yaml)
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT
printf '%-22s %-24s %-8s %10s %12s %12s %8s %s\n' workload design class "fit≤" "predicted" "measured" "error" "inside"
for f in "${files[@]}"; do
  name=$(basename "$f" .yaml)
  "$bin" sweep "$f" --quiet --out "$out/$name" >/dev/null 2>&1 || true
  [ -f "$out/$name/points.jsonl" ] || continue
  largest=$(python3 -c "import json,sys;r=[json.loads(l) for l in open(sys.argv[1])];print(max(x['rows'] for x in r if x['record']=='point' and x['measured']))" "$out/$name/points.jsonl")
  limit=$(( largest / 8 ))
  "$bin" explain "$out/$name" --fit-up-to "$limit" --json > "$out/$name.json"
  python3 - "$out/$name.json" "$limit" "$largest" <<'PY'
import json, sys
doc = json.load(open(sys.argv[1])); limit = int(sys.argv[2]); largest = int(sys.argv[3])
for w in doc["analysis"]["workloads"]:
    for d in w["designs"]:
        t = d.get("time")
        if not t or t["class"] not in ("n", "n log n"):
            continue
        for h in d["holdout"]:
            if h["rows"] != largest:
                continue
            print(f'{w["workload"]:<22} {d["design"]:<24} {t["class"]:<8} {limit:>10} {h["predicted_ns"]/1e6:>10.3f}ms {h["measured_ns"]/1e6:>10.3f}ms {h["error"]*100:>+7.1f}% {"yes" if h["inside_interval"] else "no"}')
PY
done
