#!/usr/bin/env python3
"""Hand-made hostile inputs against the release binary: spec files, special files,
command-line values, damaged results and signals. Each case is run under a time limit and
classified by its exit code: clear (0, 1, 2, 3, 4, 130), panic (101), hang (time limit) or
abort (134, 137, 139). Not part of the test suite (it runs for a few minutes).

    python3 benches/hostile-cases.py            (needs: cargo build --release)

Prints one line per case that did not end clearly, then the counts per group.
"""
import json, os, shutil, signal, subprocess, sys, tempfile, time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
BIN = os.environ.get("FRAMECOST") or os.path.join(os.environ.get("CARGO_TARGET_DIR", os.path.join(ROOT, "target")), "release", "framecost")
LIMIT = 60
TINY = open(os.path.join(ROOT, "tests/data/tiny.yaml")).read()
work = tempfile.mkdtemp()
counts = {}
codes = {}


def classify(rc):
    if rc in (0, 1, 2, 3, 4, 130):
        return "clear"
    if rc == 101:
        return "panic"
    if rc is None:
        return "hang"
    return "abort"


def run(group, label, args, env=None, stdin=subprocess.DEVNULL):
    try:
        p = subprocess.run([BIN] + args, cwd=ROOT, capture_output=True, timeout=LIMIT, env=env, stdin=stdin)
        rc = p.returncode if p.returncode >= 0 else 128 - p.returncode
        tail = (p.stderr or b"")[-300:].decode("utf-8", "replace")
    except subprocess.TimeoutExpired:
        rc, tail = None, ""
    kind = classify(rc)
    counts.setdefault(group, {"clear": 0, "panic": 0, "hang": 0, "abort": 0})[kind] += 1
    codes.setdefault(group, {}).setdefault(rc, 0)
    codes[group][rc] += 1
    if kind != "clear":
        print(f"{group}: {label}: {kind} (exit {rc}) {tail}")
    elif rc == 0 and os.environ.get("SHOW_ACCEPTED"):
        print(f"{group}: {label}: accepted")


def spec(label, text):
    path = os.path.join(work, f"spec-{len(os.listdir(work))}.yaml")
    with open(path, "w", encoding="utf-8", errors="surrogateescape") as f:
        f.write(text)
    run("spec files (lint)", label, ["lint", path])
    run("spec files (sweep --plan)", label, ["sweep", path, "--plan"])


def sub(old, new):
    assert old in TINY, old
    return TINY.replace(old, new)


# --- spec files -------------------------------------------------------------------------
design = "  - name: hostile\n    steps:\n      - {}\n"
steps = [
    "grow_columns: {columns: 1000000000000000000}", "grow_columns: {columns: 10001}", "grow_columns: {columns: 10000}",
    "lookup_scan: {probes: 1e18}", "lookup_scan: {probes: 1000001}", "probe_key_index: {probes: 9223372036854775807}",
    "read_cells: {reads: 1000000000000000000}", "read_cells: {reads: 10000001}", "split_into_pieces: {parts: 4294967295}",
    "split_into_pieces: {parts: 1000000}", "split_storage: {pieces: 18446744073709551615}", "sum_across: {count: 99999999}",
    "sum_across: {decimals: 400}", "assign_groups: {rows_per_group: 18446744073709551615}", "append_rows: {batch: 0}",
    "build_from_records: {extra_passes: 1000000}", "read_cells: {column: 18446744073709551615}", "read_cells: {reads: -1}",
    "read_cells: {reads: 1.5}", "read_cells: {reads: .nan}", "write_cell: {row: 1e308}", "keep_slice: {start: -1e-300}",
]
for s in steps:
    spec(s, TINY + design.format(s))
for old, new in [
    ("distinct: 9", "distinct: 1000000000, skew: 1.2"), ("distinct: 9", "distinct: 100000001, skew: 0.5"),
    ("distinct: 9", "distinct: 18446744073709551615"), ("distinct: 9", "distinct: 0"),
    ("range: [1, 500]", "range: [-1.7e308, 1.7e308]"), ("range: [1, 500]", "range: [.nan, 1]"), ("range: [1, 500]", "range: [1e-300, 1e308]"),
    ("per_point: 300ms", "per_point: 1e-300s"), ("per_point: 300ms", "per_point: 1e400s"), ("per_point: 300ms", "per_point: 0.0001ms"),
    ("per_point: 300ms", "per_point: 99999h"), ("whole_run: 30s", "whole_run: -1s"), ("max_samples: 20", "max_samples: 18446744073709551615"),
    ("max_samples: 20", "max_samples: 0"), ("seed: 11", "seed: -1"), ("seed: 11", "seed: 18446744073709551616"),
    ("sizes: [250", "sizes: [10000000001, 250"), ("sizes: [250", "sizes: [0, 250"), ("sizes: [250", "sizes: [1e15, 250"),
    ("sizes: [250, 500, 1k, 2k, 4k, 8k, 16k, 32k, 64k, 128k]", "sizes: {from: 1, to: 10G, factor: 1.0000001}"),
    ("sizes: [250, 500, 1k, 2k, 4k, 8k, 16k, 32k, 64k, 128k]", "sizes: [" + ", ".join(str(i) for i in range(1, 70)) + "]"),
    ("name: one-at-a-time", "name: \"one\\nat\\ta\\u001b[2Jtime\""), ("name: one-at-a-time", "name: \"\\u202Eemit\""),
    ("name: one-at-a-time", "name: \"" + "x" * 10000 + "\""), ("name: tiny-ledger", "name: \"../../etc/passwd\""),
    ("name: line,", "name: \"=cmd|' /C calc'!A0\","), ("name: line,", "name: \"a\\u0000b\","),
    ("kind: key, order: sorted", "kind: key, order: clustered, run: 18446744073709551615"),
    ("length: [", "length: ["), ("true_share", "true_share"),
]:
    if old in TINY:
        spec(f"{old} -> {new[:60]}", sub(old, new))
# SQL the memory estimate reads before anything runs (joined rows, groups), on both engines.
sql_design = "  - name: hostile-sql\n    engine: {}\n    steps:\n      - sql:\n          query: |\n            {}\n"
for q in [
    "SELECT COUNT(*) AS n FROM " + ", ".join(f"data AS t{i}" for i in range(60)),
    "SELECT COUNT(*) AS n FROM data AS a JOIN data AS b ON a.variety = b.variety JOIN data AS c ON b.variety = c.variety",
    "SELECT COUNT(*) AS n FROM data AS a NATURAL JOIN data AS b",
    "SELECT COUNT(*) AS n FROM data AS a JOIN data AS b USING (no_such_column)",
    "SELECT COUNT(*) AS n FROM data AS a JOIN data AS b ON a.kilograms < b.kilograms",
    "SELECT variety, COUNT(*) AS n FROM data GROUP BY 999",
    "SELECT variety, COUNT(*) AS n FROM data GROUP BY 0",
    "SELECT variety AS variety, COUNT(*) AS n FROM data GROUP BY variety",
    "SELECT DISTINCT * FROM data",
    "SELECT * FROM " + "(SELECT * FROM " * 60 + "data" + ") AS x" * 60,
    "SELECT line % 0 AS g, COUNT(*) AS n FROM data GROUP BY line % 0",
]:
    for engine in ["memory", "streaming"]:
        spec(f"sql on {engine}: {q[:60]}", TINY + sql_design.format(engine, q))
spec("200 KB of [", "name: x\nsizes: " + "[" * 200_000 + "\n")
spec("200 KB of {a:", "name: x\nsizes: " + "{a: " * 50_000 + "\n")
spec("10k compact - ", "- " * 10_000 + "x\n")
spec("deep block nesting", "".join(" " * i + f"k{i}:\n" for i in range(400)))
spec("alias bomb", "a: &a [x,x,x,x,x,x,x,x,x]\nb: &b [*a,*a,*a,*a,*a,*a,*a,*a,*a]\nc: &c [*b,*b,*b,*b,*b,*b,*b,*b,*b]\n"
     "d: &d [*c,*c,*c,*c,*c,*c,*c,*c,*c]\ne: &e [*d,*d,*d,*d,*d,*d,*d,*d,*d]\nf: &f [*e,*e,*e,*e,*e,*e,*e,*e,*e]\n"
     "g: &g [*f,*f,*f,*f,*f,*f,*f,*f,*f]\nh: [*g,*g,*g,*g,*g,*g,*g,*g,*g]\n")
spec("BOM", "\ufeff" + TINY)
spec("NUL bytes", TINY.replace("seed: 11", "seed: 11\x00\x00"))
spec("tabs", TINY.replace("  ", "\t"))
spec("two documents", TINY + "\n---\n" + TINY)
spec("binary tag", TINY.replace("seed: 11", "seed: !!binary aGVsbG8="))
spec("1 MB of comment", TINY + "#" + "x" * 1_100_000 + "\n")
spec("a very long line", TINY.replace("about: A few", "about: " + "A" * 900_000 + " few"))

# --- special files ----------------------------------------------------------------------
fifo = os.path.join(work, "fifo.yaml")
os.mkfifo(fifo)
huge = os.path.join(work, "huge.yaml")
with open(huge, "wb") as f:
    f.write(b"#" * (2 << 20))
latin = os.path.join(work, "latin1.yaml")
with open(latin, "wb") as f:
    f.write(TINY.encode().replace(b"A few", b"\xe9\xff few"))
link = os.path.join(work, "link.yaml")
os.symlink("/dev/zero", link)
for label, path in [("FIFO", fifo), ("/dev/zero", "/dev/zero"), ("/dev/null", "/dev/null"), ("/dev/urandom", "/dev/urandom"),
                    ("a folder with no yaml", work + "/nothing-here-dir"), ("/", "/"), ("symlink to /dev/zero", link),
                    ("2 MB file", huge), ("not UTF-8", latin), ("missing file", os.path.join(work, "missing.yaml")),
                    ("/proc/self/mem", "/proc/self/mem"), ("/dev/stdin", "/dev/stdin")]:
    if label.startswith("a folder"):
        os.makedirs(path, exist_ok=True)
    run("special files", label, ["lint", path])
    run("special files", label + " (sweep)", ["sweep", path, "--plan"])

# --- command-line values ----------------------------------------------------------------
for flag, values in [
    ("--sizes", ["0", "-1", "1e15", "1e16", "abc", "", "1.5", "18446744073709551616", "1G,2G", ",".join(["1"] * 70)]),
    ("--point-budget", ["0", "-1", "1e-300s", "1e400", "nan", "inf", "1w", "0.5us", "1e308h"]),
    ("--run-budget", ["0", "nan", "1e-300s", "-5m"]),
    ("--precision", ["0", "200%", "nan", "-1%", "1e-300"]),
    ("--max-samples", ["0", "10000000", "18446744073709551616", "-1"]),
]:
    for v in values:
        run("command-line values", f"{flag} {v!r}", ["sweep", "tests/data/tiny.yaml", "--plan", flag, v])
run("command-line values", "--out into /proc", ["sweep", "tests/data/tiny.yaml", "--sizes", "250", "--out", "/proc/nope/run"])
run("command-line values", "--out is a file", ["sweep", "tests/data/tiny.yaml", "--sizes", "250", "--out", "/dev/null"])
run("command-line values", "gate --alpha nan", ["gate", "x", "y", "--alpha", "NaN"])
run("command-line values", "report --at 1e400", ["report", "x", "--at", "1e400"])

# --- damaged results --------------------------------------------------------------------
base = os.path.join(work, "base")
subprocess.run([BIN, "sweep", "tests/data/tiny.yaml", "--quiet", "--sizes", "250,500,1k", "--point-budget", "50ms", "--out", base],
               cwd=ROOT, capture_output=True, check=True)
lines = open(os.path.join(base, "points.jsonl"), "rb").read().split(b"\n")


def damaged(label, new_lines, extra=None):
    d = os.path.join(work, f"dmg-{len(os.listdir(work))}")
    os.makedirs(d)
    with open(os.path.join(d, "points.jsonl"), "wb") as f:
        f.write(b"\n".join(new_lines))
    if extra:
        extra(d)
    for cmd in (["recap", d], ["report", d], ["explain", d], ["gate", base, d], ["history", d]):
        run("damaged results", f"{label} ({cmd[0]})", cmd)


def edit(fn):
    out = []
    for l in lines:
        if not l.strip():
            continue
        v = json.loads(l)
        fn(v)
        out.append(json.dumps(v).encode())
    return out


def set_measured(key, value):
    def fn(v):
        if v.get("record") == "point" and v.get("measured"):
            v["measured"][key] = value
    return fn


damaged("bad UTF-8 line", lines[:3] + [b"\xff\xfe\xfd"] + lines[3:])
damaged("truncated last line", lines[:-2] + [lines[-2][:40]])
damaged("empty file", [b""])
damaged("header only", lines[:1])
damaged("binary garbage", [os.urandom(4096)])
damaged("a 5 MB line", lines + [b"{" + b"x" * (5 << 20)])
damaged("every line twice", [l for l in lines for _ in (0, 1)])
for key, value in [("median_ns", 1e308), ("median_ns", 1e-300), ("median_ns", 0), ("median_ns", -5), ("samples_ns", [1e308] * 50),
                   ("samples_ns", []), ("samples_ns", [1e-300, 1e308]), ("p99_ns", 1e308), ("ci_low_ns", -1e308),
                   ("batch", 18446744073709551615), ("spent_s", 1e308)]:
    damaged(f"{key}={str(value)[:20]}", edit(set_measured(key, value)))
damaged("rows 0", edit(lambda v: v.__setitem__("rows", 0) if "rows" in v else None))
damaged("rows 2^64-1", edit(lambda v: v.__setitem__("rows", 18446744073709551615) if "rows" in v else None))
damaged("workload ../../x", edit(lambda v: v.__setitem__("workload", "../../x") if "workload" in v else None))
damaged("workload /tmp/abs", edit(lambda v: v.__setitem__("workload", "/tmp/hostile-abs") if "workload" in v else None))
damaged("design with escapes", edit(lambda v: v.__setitem__("design", "a\n\x1b[31mb") if "design" in v else None))
damaged("schema changed", edit(lambda v: v.__setitem__("schema", "other/9") if "schema" in v else None))
damaged("ratio 1e308", edit(lambda v: [r.__setitem__("ratio", 1e308) for r in v.get("ratios", [])]))
damaged("sizes of 1e19", edit(lambda v: v.__setitem__("sizes", [10**19]) if "sizes" in v else None))
damaged("symlink in pictures", lines, lambda d: (os.makedirs(os.path.join(d, "pictures")),
        os.symlink("/dev/null", os.path.join(d, "pictures", "tiny-ledger-scaling.svg"))))
damaged("read-only folder", lines, lambda d: os.chmod(d, 0o555))

# --- signals ----------------------------------------------------------------------------
for label, sigs in [("SIGINT once", [signal.SIGINT]), ("SIGTERM once", [signal.SIGTERM]), ("SIGINT twice", [signal.SIGINT, signal.SIGINT])]:
    out = os.path.join(work, f"sig-{len(os.listdir(work))}")
    p = subprocess.Popen([BIN, "sweep", "workloads/storage.yaml", "--quiet", "--out", out], cwd=ROOT,
                         stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    for _ in range(600):
        pts = os.path.join(out, "points.jsonl")
        if os.path.exists(pts) and b'"record":"point"' in open(pts, "rb").read():
            break
        time.sleep(0.1)
    for s in sigs:
        p.send_signal(s)
        time.sleep(0.05)
    try:
        rc = p.wait(timeout=LIMIT)
    except subprocess.TimeoutExpired:
        p.kill()
        rc = None
    kind = classify(rc)
    counts.setdefault("signals", {"clear": 0, "panic": 0, "hang": 0, "abort": 0})[kind] += 1
    codes.setdefault("signals", {}).setdefault(rc, 0)
    codes["signals"][rc] += 1
    if kind != "clear":
        print(f"signals: {label}: {kind} (exit {rc})")

for group, c in counts.items():
    total = sum(c.values())
    by_code = ", ".join(f"exit {k}: {v}" for k, v in sorted(codes[group].items(), key=lambda kv: str(kv[0])))
    print(f"{group:28} {total:4} cases: clear {c['clear']}, panics {c['panic']}, hangs {c['hang']}, aborts {c['abort']} ({by_code})")
os.chmod(work, 0o755)
for d in os.listdir(work):
    try:
        os.chmod(os.path.join(work, d), 0o755)
    except OSError:
        pass
shutil.rmtree(work, ignore_errors=True)
