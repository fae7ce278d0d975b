#!/usr/bin/env bash
# Run-time fuzz: mutate one number of a built-in workload (to 0, 1, the edges of the integer
# types, huge or tiny floats), and when `lint` accepts the mutant, sweep it with small
# budgets. Every outcome must be a clear one: exit 0, 2 (refused), 3 (a failed point), 4
# (could not write) — never a panic (101), a hang (the time limit) or an abort (134, 137,
# 139). Not run by the test suite: it takes minutes.
#
#   benches/fuzz-sweep.sh [MUTANTS] [SEED]          (default 100 mutants, seed 1)
#
# Prints one line per accepted mutant that did not end clearly, then the counts; the spec
# and log of each such mutant are kept in $FUZZ_KEEP (default: a new folder in /tmp), with
# every thread's stack when gdb is installed and the sweep passed the time limit. Needs the
# release binary (cargo build --release) and python3.
set -uo pipefail
# Paths given relative to where the script was started from stay valid after the cd below.
[ -z "${FRAMECOST:-}" ] || FRAMECOST=$(realpath "$FRAMECOST")
cd "$(dirname "$0")/.."
bin=${FRAMECOST:-${CARGO_TARGET_DIR:-target}/release/framecost}
[ -x "$bin" ] || { echo "build first: cargo build --release" >&2; exit 2; }
count=${1:-100}
seed=${2:-1}
limit=${FUZZ_TIME_LIMIT:-90}
work=$(mktemp -d)
keep=${FUZZ_KEEP:-$(mktemp -d /tmp/fuzz-keep-XXXX)}
mkdir -p "$keep"
trap 'rm -rf "$work"' EXIT

python3 - "$work" "$count" "$seed" <<'PY'
import glob, os, random, re, sys
work, count, seed = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
rng = random.Random(seed)
extremes = ["0", "1", "2", "3", "1000", "100000", "10000000", "1000000000", "4294967295",
            "9223372036854775807", "18446744073709551615", "1e18", "1e9", "1e308", "1e-300",
            "-1", "0.0", "0.5", "63", "65", "256", "257"]
files = sorted(glob.glob("workloads/*.yaml"))
number = re.compile(r"(?<![\w.])\d[\w.]*")
for i in range(count):
    path = rng.choice(files)
    lines = open(path).read().split("\n")
    spots = [(li, m) for li, l in enumerate(lines) if not l.lstrip().startswith("#")
             for m in number.finditer(l.split(" #")[0])]
    li, m = rng.choice(spots)
    new = rng.choice(extremes)
    lines[li] = lines[li][:m.start()] + new + lines[li][m.end():]
    name = os.path.basename(path)[:-5]
    with open(os.path.join(work, f"m{i:04d}-{name}.yaml"), "w") as f:
        f.write("\n".join(lines))
    with open(os.path.join(work, f"m{i:04d}-{name}.what"), "w") as f:
        f.write(f"{path}:{li + 1}: {m.group(0)} -> {new}")
PY

refused=0; clear=0; panics=0; hangs=0; aborts=0; other=0
for spec in "$work"/m*.yaml; do
  what=$(cat "${spec%.yaml}.what")
  if ! "$bin" lint "$spec" >/dev/null 2>&1; then
    refused=$((refused + 1)); continue
  fi
  out="$work/run-$(basename "$spec" .yaml)"
  "$bin" sweep "$spec" --quiet --out "$out" --point-budget 100ms --run-budget 4s --max-samples 6 >"$out.log" 2>&1 &
  pid=$!
  waited=0
  while kill -0 "$pid" 2>/dev/null && [ "$waited" -lt $((limit * 10)) ]; do sleep 0.1; waited=$((waited + 1)); done
  if kill -0 "$pid" 2>/dev/null; then
    # Over the limit: record where every thread is, then end it.
    command -v gdb >/dev/null && gdb -p "$pid" -batch -ex "thread apply all bt 12" >>"$out.log" 2>&1
    kill -KILL "$pid" 2>/dev/null
  fi
  wait "$pid"
  rc=$?
  case $rc in
    0|2|3|4) clear=$((clear + 1)) ;;
    101) panics=$((panics + 1)); echo "panic: $what"; tail -3 "$out.log" ;;
    137) hangs=$((hangs + 1)); echo "hang (over ${limit}s): $what" ;;
    134|139) aborts=$((aborts + 1)); echo "abort ($rc): $what"; tail -3 "$out.log" ;;
    *) other=$((other + 1)); echo "exit $rc: $what"; tail -3 "$out.log" ;;
  esac
  case $rc in 0|2|3|4) ;; *) cp "$spec" "$out.log" "$keep/" 2>/dev/null ;; esac
  rm -rf "$out" "$out.log"
done
echo "kept for study: $keep"
echo "mutants: $count; refused by lint: $refused; swept: $((count - refused)) — clear: $clear, panics: $panics, hangs: $hangs, aborts: $aborts, other: $other"
