//! Designs that are programs: the permission rule, the protocol, failures that must not take
//! the sweep down, resident memory against a known allocation, and the standard-library
//! workloads' growth against the published costs of Python's containers.
//!
//! Needs `python3` (on the machine and on CI). The test of the dataframe-library workload
//! makes its own virtual environment with `scripts/python-env.sh` (polars from PyPI).
//! Timing-based checks compare ratios measured in the same run, with margins far wider than
//! run-to-run noise (an n² design against an n design, doubling by doubling).

use assert_cmd::Command;
use framecost::results::reader::RunResults;
use framecost::results::{EquivalenceStatus, SkipCause, SkipReason};
use std::path::{Path, PathBuf};

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn adapter() -> String {
    repo().join("adapters/python/framecost_worker.py").display().to_string()
}

/// One sweep at a time: the test harness runs this file's tests in parallel threads, and two
/// Python sweeps sharing the two cores would time each other rather than their designs.
static ONE_AT_A_TIME: std::sync::Mutex<()> = std::sync::Mutex::new(());

fn sweep(args: &[&str], spec: &Path, run: &Path, tmp: &Path) -> std::process::Output {
    let _turn = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    Command::cargo_bin("framecost")
        .expect("binary")
        .env("TMPDIR", tmp)
        .arg("sweep")
        .args(args)
        .args(["--quiet", "--out"])
        .arg(run)
        .arg(spec)
        .output()
        .expect("runs")
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).expect("write");
    p
}

/// Medians of one design by size.
/// Each size's median CPU time of one run of a program design: time the program spent on a
/// core, which other work on the machine stretches far less than the wall clock.
fn cpu_medians(r: &RunResults, design: &str) -> Vec<(u64, f64)> {
    r.workloads[0].design_points(design).iter().filter_map(|p| p.measured.as_ref().and_then(|m| m.program.and_then(|g| g.child_cpu_ns).map(|c| (p.rows, c)))).collect()
}

fn medians(r: &RunResults, design: &str) -> Vec<(u64, f64)> {
    r.workloads[0].design_points(design).iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows, m.median_ns))).collect()
}

#[test]
fn programs_run_only_when_allowed_and_lint_lists_them() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("tmp");
    write(dir.path(), "d.py", "def load(p):\n    return p\n\ndef run(d):\n    return d\n");
    let spec = write(
        dir.path(),
        "w.yaml",
        &format!("name: permit\ntable: {{columns: [{{name: k, kind: key}}]}}\nsizes: [1k]\ndesigns:\n  - name: mine\n    program: {{command: [python3, {}, d.py]}}\n", adapter()),
    );
    let run = dir.path().join("run");
    let out = sweep(&[], &spec, &run, tmp.path());
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("--allow-programs") && err.contains("permit/mine: python3"), "{err}");
    assert!(!run.exists(), "nothing may be written when programs are refused");
    let lint = Command::cargo_bin("framecost").expect("binary").arg("lint").arg(&spec).output().expect("runs");
    assert!(lint.status.success());
    let text = String::from_utf8_lossy(&lint.stdout);
    assert!(text.contains("runs a program") && text.contains("d.py"), "{text}");
}

#[test]
fn lint_rejects_what_cannot_run() {
    let dir = tempfile::tempdir().expect("tempdir");
    let spec = write(
        dir.path(),
        "w.yaml",
        "name: bad\ntable: {columns: [{name: k, kind: key}]}\nsizes: [1k]\ndesigns:\n  - name: a\n    program: {command: [./missing.py], mode: process}\n  - name: b\n    program: {command: [python3, x.py, \"{output}\"], mode: worker}\n    steps: [sort_rows]\n",
    );
    let lint = Command::cargo_bin("framecost").expect("binary").arg("lint").arg(&spec).output().expect("runs");
    assert_eq!(lint.status.code(), Some(2));
    let err = String::from_utf8_lossy(&lint.stderr);
    assert!(err.contains("no program at"), "{err}");
    assert!(err.contains("put `{input}` in an argument"), "{err}");
    assert!(err.contains("in `mode: process` only"), "{err}");
    assert!(err.contains("either `steps` or a `program`"), "{err}");
}

/// A design that never answers is killed at its budget; one that crashes at the second size
/// fails there, is skipped later, and the others are measured; one that breaks the protocol
/// fails with a protocol error. The sweep finishes with exit 3 and leaves nothing running.
#[test]
fn hostile_programs_become_failed_points() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("tmp");
    write(dir.path(), "ok.py", "def load(p):\n    return open(p).read()\n\ndef run(d):\n    return len(d)\n");
    write(dir.path(), "sleeper.py", "import time\n\ndef load(p):\n    return p\n\ndef run(d):\n    time.sleep(3600)\n");
    write(
        dir.path(),
        "crash.py",
        "import sys\n\ndef load(p):\n    return sum(1 for _ in open(p))\n\ndef run(n):\n    if n > 3000:\n        sys.stderr.write('the scale broke at the second size\\n')\n        sys.exit(7)\n    return n\n",
    );
    write(dir.path(), "chatty.py", "import os\n\ndef load(p):\n    os.write(1, b'hello there\\n')\n    return p\n\ndef run(d):\n    return d\n");
    let a = adapter();
    let spec = write(
        dir.path(),
        "w.yaml",
        &format!(
            "name: hostile\ntable: {{columns: [{{name: k, kind: key}}]}}\nsizes: [2k, 4k, 8k]\nbudget: {{per_point: 1s, whole_run: 60s, max_samples: 8}}\noutputs_differ: the designs return different things\ndesigns:\n  - name: fine\n    program: {{command: [python3, {a}, ok.py], input: csv}}\n  - name: sleeper\n    program: {{command: [python3, {a}, sleeper.py], input: csv}}\n  - name: crasher\n    program: {{command: [python3, {a}, crash.py], input: csv}}\n  - name: chatty\n    program: {{command: [python3, {a}, chatty.py], input: csv}}\n"
        ),
    );
    let run = dir.path().join("run");
    let started = std::time::Instant::now();
    let out = sweep(&["--allow-programs"], &spec, &run, tmp.path());
    let took = started.elapsed().as_secs_f64();
    assert_eq!(out.status.code(), Some(3), "{}", String::from_utf8_lossy(&out.stderr));
    // The sleeper is killed at 1.25 × 1 s + 1 s, once; far below an hour.
    assert!(took < 50.0, "the sweep took {took} s");
    let r = RunResults::read(&run).expect("results");
    let w = &r.workloads[0];
    let fine = medians(&r, "fine");
    assert_eq!(fine.len(), 3, "the sound design is measured at every size");
    let sleeper = w.design_points("sleeper");
    let first = sleeper[0].skipped.as_ref().expect("failed");
    assert_eq!(first.reason, SkipReason::Failed);
    assert!(first.detail.contains("no answer") && first.detail.contains("killed"), "{}", first.detail);
    assert!(sleeper[1..].iter().all(|p| p.skipped.is_some()), "later sizes skipped");
    let crasher = w.design_points("crasher");
    assert!(crasher[0].measured.is_some(), "the crasher works at 2k rows");
    let failed = crasher[1].skipped.as_ref().expect("fails at 4k");
    assert!(failed.detail.contains("the scale broke at the second size"), "stderr tail in the message: {}", failed.detail);
    assert!(failed.detail.contains("status 7") || failed.detail.contains("ended"), "{}", failed.detail);
    assert!(crasher[2].skipped.is_some());
    let chatty = w.design_points("chatty");
    let c = chatty[0].skipped.as_ref().expect("protocol error");
    assert!(c.detail.contains("protocol error") && c.detail.contains("hello there"), "{}", c.detail);
    // Nothing is left in the temp folder, and no worker survives the sweep.
    let left: Vec<_> = std::fs::read_dir(tmp.path()).expect("read").collect();
    assert!(left.is_empty(), "left in the temp folder: {left:?}");
    let ps = std::process::Command::new("pgrep").args(["-f", "sleeper.py"]).output();
    if let Ok(ps) = ps {
        assert!(ps.stdout.is_empty(), "a worker survived: {}", String::from_utf8_lossy(&ps.stdout));
    }
}

/// The same in process mode, where each run goes through framecost's launcher: a run that
/// never ends is killed at its limit (launcher and program, as one group), a program that
/// leaves a child running behind it does not keep it, a failing exit comes back with its
/// status and stderr, and a file that cannot be executed is a failed point.
#[test]
fn hostile_processes_become_failed_points() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("tmp");
    write(dir.path(), "stall_cli.py", "import time\ntime.sleep(3600)\n");
    write(dir.path(), "leave_child_cli.py", "import os, sys, time\nif os.fork() == 0:\n    time.sleep(3600)\nopen(sys.argv[2], 'w').write(open(sys.argv[1]).read())\n");
    write(dir.path(), "refuse_cli.py", "import sys\nsys.stderr.write('no parcels in this file\\n')\nsys.exit(5)\n");
    write(dir.path(), "not_executable.sh", "exit 0\n");
    let spec = write(
        dir.path(),
        "w.yaml",
        "name: hostile-processes\ntable: {columns: [{name: k, kind: key}]}\nsizes: [1k, 2k]\nbudget: {per_point: 1s, whole_run: 60s, max_samples: 6}\ndesigns:\n  - name: copy\n    program: {command: [cp, \"{input}\", \"{output}\"], mode: process, input: csv}\n  - name: stall\n    program: {command: [python3, stall_cli.py, \"{input}\"], mode: process, input: csv}\n  - name: leave-child\n    program: {command: [python3, leave_child_cli.py, \"{input}\", \"{output}\"], mode: process, input: csv}\n  - name: refuse\n    program: {command: [python3, refuse_cli.py, \"{input}\"], mode: process, input: csv}\n  - name: not-executable\n    program: {command: [./not_executable.sh, \"{input}\"], mode: process, input: csv}\n",
    );
    let run = dir.path().join("run");
    let started = std::time::Instant::now();
    let out = sweep(&["--allow-programs"], &spec, &run, tmp.path());
    let took = started.elapsed().as_secs_f64();
    assert_eq!(out.status.code(), Some(3), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(took < 50.0, "the sweep took {took} s");
    let r = RunResults::read(&run).expect("results");
    let w = &r.workloads[0];
    assert_eq!(medians(&r, "copy").len(), 2, "the sound design is measured at every size");
    assert!(!w.design_points("leave-child").is_empty() && w.design_points("leave-child")[0].measured.is_some(), "its own run ends, so it is measured");
    let detail = |d: &str| w.design_points(d)[0].skipped.as_ref().map(|s| s.detail.clone()).unwrap_or_default();
    assert!(detail("stall").contains("still running") && detail("stall").contains("killed"), "{}", detail("stall"));
    assert!(detail("refuse").contains("status 5") && detail("refuse").contains("no parcels in this file"), "{}", detail("refuse"));
    assert!(detail("not-executable").contains("could not start") && detail("not-executable").contains("ermission denied"), "{}", detail("not-executable"));
    let left: Vec<_> = std::fs::read_dir(tmp.path()).expect("read").collect();
    assert!(left.is_empty(), "left in the temp folder: {left:?}");
    for name in ["stall_cli.py", "leave_child_cli.py"] {
        if let Ok(ps) = std::process::Command::new("pgrep").args(["-f", name]).output() {
            assert!(ps.stdout.is_empty(), "{name} survived: {}", String::from_utf8_lossy(&ps.stdout));
        }
    }
}

/// Peak resident size against a known allocation: each run fills a buffer of 96 MiB
/// (touching every page), in a worker and as a whole process.
#[test]
fn resident_memory_matches_a_known_allocation() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("tmp");
    write(dir.path(), "hold.py", "def load(p):\n    return p\n\ndef run(d):\n    b = bytearray(b'\\x01') * (96 << 20)\n    return len(b)\n");
    write(dir.path(), "hold_cli.py", "import sys\nb = bytearray(b'\\x01') * (96 << 20)\nopen(sys.argv[2], 'w').write('held\\n' + str(len(b)) + '\\n')\n");
    let a = adapter();
    let spec = write(
        dir.path(),
        "w.yaml",
        &format!(
            "name: holder\ntable: {{columns: [{{name: k, kind: key}}]}}\nsizes: [1k]\nbudget: {{per_point: 2s, max_samples: 6}}\ndesigns:\n  - name: worker\n    program: {{command: [python3, {a}, hold.py], input: csv}}\n  - name: process\n    program: {{command: [python3, hold_cli.py, \"{{input}}\", \"{{output}}\"], mode: process, input: csv}}\n"
        ),
    );
    let run = dir.path().join("run");
    let out = sweep(&["--allow-programs"], &spec, &run, tmp.path());
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let r = RunResults::read(&run).expect("results");
    let w = &r.workloads[0];
    let mib = |b: u64| b as f64 / (1u64 << 20) as f64;
    for d in ["worker", "process"] {
        let m = w.point(d, 1000).and_then(|p| p.measured.as_ref()).expect("measured");
        assert!(!m.alloc_counted, "a program has no allocation counts");
        let p = m.program.expect("program measures");
        // What the runs added: the 96 MiB buffer, plus at most a few MiB of interpreter
        // overhead (and, for a whole process, the interpreter itself: ~10 MiB).
        let added = mib(p.working_bytes());
        let slack = if d == "worker" { 8.0 } else { 24.0 };
        // Lower bound: pages resident before the run may be given back during it.
        assert!(added >= 92.0 && added <= 96.0 + slack, "{d}: {added:.1} MiB added");
        assert!(p.child_cpu_ns.is_none_or(|c| c > 0.0), "{d}: CPU time {:?}", p.child_cpu_ns);
    }
    // The process design's output was read back; the worker's design saves none.
    assert!(w.comparisons[0].equivalence.note.contains("worker saved none") || w.comparisons[0].equivalence.status == EquivalenceStatus::NotChecked);
}

/// A whole process's peak resident size is the program's own, not framecost's: Linux carries
/// the peak of the process image an `exec` replaces into `ru_maxrss`, so a program started
/// straight from framecost reported framecost's size (measured: 78.5 MiB for `test -e FILE`).
/// The reference is Python's standard `resource` module: `getrusage(RUSAGE_CHILDREN)` after
/// running the same command from a fresh Python, whose own few MiB are below the program's
/// 40 MiB. The table is made large enough (1M rows) that framecost itself holds more than
/// the program.
#[test]
fn a_whole_process_peak_is_the_programs_own() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("tmp");
    write(dir.path(), "hold_cli.py", "import sys\nb = bytearray(b'\\x01') * (40 << 20)\nopen(sys.argv[2], 'w').write('held\\n' + str(len(b)) + '\\n')\n");
    let spec = write(
        dir.path(),
        "w.yaml",
        "name: small-program\ntable: {columns: [{name: k, kind: key}, {name: x, kind: float, range: [0, 1]}, {name: s, kind: text}]}\nsizes: [1M]\nbudget: {per_point: 3s, max_samples: 6}\ndesigns:\n  - name: process\n    program: {command: [python3, hold_cli.py, \"{input}\", \"{output}\"], mode: process, input: csv}\n",
    );
    let run = dir.path().join("run");
    let out = sweep(&["--allow-programs"], &spec, &run, tmp.path());
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let r = RunResults::read(&run).expect("results");
    let m = r.workloads[0].point("process", 1_000_000).and_then(|p| p.measured.as_ref()).expect("measured");
    let ours = m.program.expect("program measures").peak_resident_bytes as f64;
    let reference = std::process::Command::new("python3")
        .current_dir(dir.path())
        .args(["-c", "import resource, subprocess, sys\nsubprocess.run([sys.executable, 'hold_cli.py', 'in', 'out'], check=True)\nprint(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss * 1024)"])
        .output()
        .expect("python3 runs");
    let reference: f64 = String::from_utf8_lossy(&reference.stdout).trim().parse().expect("a number of bytes");
    let mib = |b: f64| b / (1u64 << 20) as f64;
    // The sweep's own resident size at 1M rows is well above the program's (the table alone
    // is tens of MiB): the old reading would fail by that much.
    assert!((mib(ours) - mib(reference)).abs() <= 4.0, "framecost {:.1} MiB, resource module {:.1} MiB", mib(ours), mib(reference));
}

/// The standard-library workload: n inserts at the front of a Python list cost O(n²); n
/// appends (amortised O(1) each) or deque.appendleft (O(1)) cost O(n). Source: the Python
/// wiki's "TimeComplexity" page (list: insert O(n), append O(1) amortised; deque: appendleft
/// O(1)). Checked doubling by doubling from 4k to 32k, measured interleaved in one run: each
/// doubling multiplies an n² design's median CPU time per run by about 4 and an n design's
/// by about 2 (CPU time, not wall time: a busy machine stretches the wall clock). The
/// median over the three doublings is used, because on a 2-core machine one size's median
/// of a Python run can move by 2× between sweeps (seen here: 47 to 185 µs for the append
/// design at 4k), which an end-to-end ratio takes in whole.
/// A program started once per run is mostly start-up at small sizes; extrapolating its
/// time in proportion to the rows kept it out of every larger size of a sparse ladder
/// (0.24 s at 1k rows "predicted" at 15 s at 64k). It now gets one trial run there, stopped
/// at the point budget. Sleeps make the times, so a busy machine can only lengthen them:
/// 0.05 s whatever the rows (measured at every size; the margins let a busy machine's
/// Python start-up take up to a second), and 1 s per 10k rows (6.4 s at 64k, past the 4 s
/// budget: the trial is stopped and the point skipped, not failed).
#[test]
fn a_program_that_is_mostly_start_up_gets_a_trial_run() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("tmp");
    let spec = write(
        dir.path(),
        "w.yaml",
        "name: start-up-trials\ntable: {columns: [{name: x, kind: int, range: [0, 9]}]}\nsizes: [1k, 64k, 256k]\nbudget: {per_point: 4s, whole_run: 90s, min_samples: 3}\ndesigns:\n  - name: mostly-start-up\n    program: {command: [python3, -c, \"import time; time.sleep(0.05)\", \"{input}\"], mode: process}\n  - name: grows-with-rows\n    program: {command: [python3, -c, \"import sys, time; time.sleep(int(sys.argv[1]) / 10000)\", \"{rows}\", \"{input}\"], mode: process}\n",
    );
    let run = dir.path().join("run");
    let out = sweep(&["--allow-programs"], &spec, &run, tmp.path());
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let r = RunResults::read(&run).expect("results");
    let w = &r.workloads[0];
    for rows in [1_000, 64_000, 256_000] {
        assert!(w.point("mostly-start-up", rows).is_some_and(|p| p.measured.is_some()), "mostly-start-up not measured at {rows}");
    }
    assert!(w.point("grows-with-rows", 1_000).is_some_and(|p| p.measured.is_some()));
    let trial = w.point("grows-with-rows", 64_000).and_then(|p| p.skipped.as_ref()).expect("skipped at 64k");
    assert_eq!(trial.reason, SkipReason::PredictedOverBudget);
    assert!(
        matches!(trial.cause, Some(SkipCause::TrialOverBudget { at: 64_000, limit_ns, .. }) if (limit_ns - 4e9).abs() < 1.0),
        "{trial:?}"
    );
    let later = w.point("grows-with-rows", 256_000).and_then(|p| p.skipped.as_ref()).expect("skipped at 256k");
    assert_eq!(later.reason, SkipReason::SmallerSizeOverBudget);
    assert!(matches!(later.cause, Some(SkipCause::TrialOverBudget { at: 64_000, .. })), "{later:?}");
    // The summary says a trial ran and was stopped (not "predicted"), and that a process's
    // memory figure is its whole peak.
    let recap = Command::cargo_bin("framecost").expect("binary").args(["recap", "--color", "never"]).arg(&run).env("COLUMNS", "200").output().expect("runs");
    let text = String::from_utf8_lossy(&recap.stdout);
    assert!(text.contains("a trial run there was stopped unfinished after 4.00 s, the point budget"), "{text}");
    assert!(text.contains("peak resident memory"), "{text}");
    assert!(text.contains("> 4.00 s") && text.contains("trial stopped"), "{text}");
}

#[test]
fn python_containers_scale_as_published() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("tmp");
    let spec = repo().join("workloads/programs/crate-ledger.yaml");
    let run = dir.path().join("run");
    // Wide budgets: on a busy machine the n² design's largest size would otherwise be
    // predicted over the spec's budget and skipped, and the test is about growth.
    let out = sweep(&["--allow-programs", "--sizes", "4k,8k,16k,32k", "--point-budget", "30s", "--run-budget", "10m"], &spec, &run, tmp.path());
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let r = RunResults::read(&run).expect("results");
    // The median of a design's three doubling ratios (4k→8k, 8k→16k, 16k→32k).
    let per_doubling = |d: &str| {
        let m = cpu_medians(&r, d);
        assert_eq!(m.len(), 4, "{d} measured at every size: {m:?}");
        let mut k: Vec<f64> = m.windows(2).map(|w| w[1].1 / w[0].1).collect();
        k.sort_by(f64::total_cmp);
        k[1]
    };
    let front = per_doubling("insert-at-front");
    let append = per_doubling("append-then-reverse");
    let deque = per_doubling("deque-at-left");
    // n² against n: ×4 against ×2 per doubling in theory. Judged as ratios measured in the
    // same run: the n² design must grow faster per doubling than both n designs by a
    // quarter at least, and by more than ×2 (anything less is not superlinear). Measured
    // here in four quiet runs: n² ×3.4 to ×4.8, the n designs ×1.4 to ×1.8 (earlier sessions
    // saw the append design at ×2.3 to ×2.9); a fixed floor of ×2.83 for the n² design failed once in a
    // CI run, at ×2.31.
    eprintln!("per doubling: n² {front:.2}×, append {append:.2}×, deque {deque:.2}×");
    assert!(front > 2.0, "n² per doubling: {front:.2}×");
    assert!(
        front > 1.25 * append.max(deque),
        "per doubling, n² {front:.2}× against n: append {append:.2}×, deque {deque:.2}×; CPU medians by size: {:?} {:?} {:?}",
        cpu_medians(&r, "insert-at-front"),
        cpu_medians(&r, "append-then-reverse"),
        cpu_medians(&r, "deque-at-left")
    );
    for c in &r.workloads[0].comparisons {
        assert_eq!(c.equivalence.status, EquivalenceStatus::Same, "{}", c.equivalence.note);
    }
    // The runtime each worker reported is kept.
    assert!(r.workloads[0].header.designs.iter().all(|d| d.program.as_ref().and_then(|p| p.runtime.as_ref()).is_some_and(|t| t.contains("Python"))));
}

/// The same job in framecost's own engine, in Python polars (a worker and a whole process)
/// and as a Python row walk: every design gives the same totals at every size.
#[test]
fn mixed_workload_agrees_across_engines() {
    // Under the sweeps' lock: making the environment (pip, or importing polars to check it)
    // beside another test's sweep timed that sweep instead (the containers test once saw its
    // n designs at ×4.8 and ×6.2 per doubling, against ×1.7–×2.1 alone).
    let setup = {
        let _turn = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
        std::process::Command::new(repo().join("scripts/python-env.sh")).output().expect("python-env.sh runs")
    };
    assert!(setup.status.success(), "scripts/python-env.sh: {}", String::from_utf8_lossy(&setup.stderr));
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("tmp");
    let spec = repo().join("workloads/programs/grower-totals.yaml");
    let run = dir.path().join("run");
    // Wide budgets: a whole Python process per run is slow on a busy machine, and the
    // test is about agreement at every size, not about speed.
    let out = sweep(&["--allow-programs", "--sizes", "16k,64k", "--point-budget", "30s", "--run-budget", "10m"], &spec, &run, tmp.path());
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let r = RunResults::read(&run).expect("results");
    let w = &r.workloads[0];
    assert_eq!(w.points.iter().filter(|p| p.measured.is_some()).count(), 8, "four designs at two sizes");
    for c in &w.comparisons {
        assert_eq!(c.equivalence.status, EquivalenceStatus::Same, "{}", c.equivalence.note);
    }
    let sql = w.point("engine-sql", 16_000).and_then(|p| p.measured.as_ref()).expect("sql");
    assert!(sql.alloc_counted && sql.program.is_none());
    let py = w.header.designs.iter().find(|d| d.name == "python-expression").and_then(|d| d.program.clone()).expect("program");
    assert!(py.runtime.as_deref().is_some_and(|t| t.contains("polars 1.44.2")), "{:?}", py.runtime);
}
