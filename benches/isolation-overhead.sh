#!/usr/bin/env bash
# What measuring each workload in a child process costs a sweep (src/measure/supervise.rs):
# sweeps the same workloads alternately with and without `--in-process`, ROUNDS times each
# (A B A B …, so drift of the machine hits both alike), and prints the median wall time of
# each and their difference, absolute and as a share. Ratios from one run on one machine;
# never compared with a fixed time. Not run by the test suite.
#
#   benches/isolation-overhead.sh [ROUNDS] [WORKLOAD...]   (default 5 rounds, the catalog)
#   SWEEP_ARGS='--sizes 1k,2k' benches/isolation-overhead.sh 10 tests/data/tiny.yaml
set -euo pipefail
# Paths given relative to where the script was started from stay valid after the cd below.
[ -z "${FRAMECOST:-}" ] || FRAMECOST=$(realpath "$FRAMECOST")
cd "$(dirname "$0")/.."
bin=${FRAMECOST:-${CARGO_TARGET_DIR:-target}/release/framecost}
[ -x "$bin" ] || { echo "build first: cargo build --release" >&2; exit 2; }
rounds=${1:-5}
shift || true
workloads=("$@")
[ ${#workloads[@]} -gt 0 ] || workloads=(workloads)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
iso=()
inp=()
for r in $(seq 1 "$rounds"); do
  for mode in isolated in-process; do
    read -r -a extra <<<"${SWEEP_ARGS:-}"
    [ "$mode" = in-process ] && extra+=(--in-process)
    t0=$(date +%s.%N)
    "$bin" sweep "${workloads[@]}" --quiet --out "$work/$mode-$r" "${extra[@]}" >/dev/null 2>&1 || true
    t1=$(date +%s.%N)
    dt=$(python3 -c "print($t1 - $t0)")
    if [ "$mode" = isolated ]; then iso+=("$dt"); else inp+=("$dt"); fi
    echo "round $r $mode: ${dt}s" >&2
  done
done
python3 - "${iso[*]}" "${inp[*]}" <<'PY'
import statistics, sys
iso = [float(x) for x in sys.argv[1].split()]
inp = [float(x) for x in sys.argv[2].split()]
a, b = statistics.median(iso), statistics.median(inp)
print(f"median wall time: isolated {a:.2f} s, in-process {b:.2f} s; difference {a - b:+.2f} s ({(a - b) / b * 100:+.1f}%)")
print("each round (isolated / in-process): " + ", ".join(f"{x:.2f}/{y:.2f}" for x, y in zip(iso, inp)))
PY
