//! Hostile input end to end: special files as specs, names with control characters,
//! tampered results (a workload named `../../x`, a planted symlink, bad UTF-8, absurd
//! medians, formula-like names), gates that would compare nothing, and an interrupted
//! storage sweep. Every assertion is on exit codes, messages and files — never on time.

use assert_cmd::Command;
use framecost::results::reader::RunResults;
use std::path::{Path, PathBuf};

fn framecost(args: &[&str]) -> std::process::Output {
    Command::cargo_bin("framecost").expect("binary").args(args).output().expect("runs")
}

fn text(o: &std::process::Output) -> String {
    format!("{}{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr))
}

/// A tiny complete run of `tests/data/tiny.yaml` at two sizes.
fn tiny_run(dir: &Path) -> PathBuf {
    let run = dir.join("run");
    let o = framecost(&["sweep", "tests/data/tiny.yaml", "--quiet", "--sizes", "250,500", "--point-budget", "50ms", "--out", run.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    run
}

/// Rewrite every line of a run's `points.jsonl` through `f` (lines as JSON values).
fn edit_points(run: &Path, f: impl Fn(&mut serde_json::Value)) {
    let path = run.join("points.jsonl");
    let body = std::fs::read_to_string(&path).expect("points");
    let mut out = String::new();
    for line in body.lines() {
        let mut v: serde_json::Value = serde_json::from_str(line).expect("json line");
        f(&mut v);
        out.push_str(&v.to_string());
        out.push('\n');
    }
    std::fs::write(&path, out).expect("write points");
}

fn files_under(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    for e in std::fs::read_dir(dir).into_iter().flatten().flatten() {
        let p = e.path();
        if p.is_dir() && !p.is_symlink() {
            out.extend(files_under(&p));
        } else {
            out.push(p);
        }
    }
    out.sort();
    out
}

#[test]
fn special_files_and_hostile_names_are_refused_by_lint() {
    let dir = tempfile::tempdir().expect("tempdir");
    // A FIFO with no writer: refused at once instead of blocking.
    let fifo = dir.path().join("spec.yaml");
    let made = std::process::Command::new("mkfifo").arg(&fifo).status().expect("mkfifo");
    assert!(made.success());
    let o = framecost(&["lint", fifo.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("named pipe"), "{}", text(&o));
    // A device: refused, not read until memory runs out.
    let o = framecost(&["lint", "/dev/zero"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("a device"), "{}", text(&o));
    // A design name with a newline and an escape code: refused, and printed escaped.
    let base = std::fs::read_to_string("tests/data/tiny.yaml").expect("tiny");
    let evil = base.replace("name: build-once", "name: \"build\\n\\e[31monce\"");
    let spec = dir.path().join("evil.yaml");
    std::fs::write(&spec, evil).expect("write");
    let o = framecost(&["lint", spec.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(2));
    let t = text(&o);
    assert!(t.contains("control characters") && !t.contains('\u{1b}'), "{t}");
    // 200 KB of nested brackets: refused by the depth cap.
    let deep = dir.path().join("deep.yaml");
    std::fs::write(&deep, format!("name: x\nsizes: {}\n", "[".repeat(200_000))).expect("write");
    let o = framecost(&["lint", deep.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o).contains("brackets"), "{}", text(&o));
    // Command-line values go through the spec's limits.
    for args in [
        ["--sizes", "1e15"],
        ["--sizes", "20000000000"],
        ["--point-budget", "1e-300s"],
        ["--max-samples", "10000000"],
        ["--precision", "90%"],
    ] {
        let o = framecost(&["sweep", "tests/data/tiny.yaml", "--plan", args[0], args[1]]);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", text(&o));
        assert!(text(&o).contains(args[0]), "{args:?}: {}", text(&o));
    }
}

#[test]
fn tampered_results_cannot_escape_the_run_folder_or_hang_the_readers() {
    let dir = tempfile::tempdir().expect("tempdir");
    let nest = dir.path().join("a").join("b");
    std::fs::create_dir_all(&nest).expect("mkdir");
    let run = tiny_run(&nest);

    // A workload named `../../x`, and a design name a spreadsheet would run.
    edit_points(&run, |v| {
        if v.get("workload").is_some() {
            v["workload"] = "../../x".into();
        }
        if v["record"] == "workload" {
            v["designs"][0]["name"] = "=HYPERLINK(\"x\")".into();
        }
        if v["record"] == "point" && v["design"] == "one-at-a-time" {
            v["design"] = "=HYPERLINK(\"x\")".into();
        }
    });
    // A symlink planted where a picture will be written, pointing at a file outside.
    let victim = dir.path().join("victim.txt");
    std::fs::write(&victim, "keep me").expect("victim");
    let pics = run.join("pictures");
    std::fs::create_dir_all(&pics).expect("pictures");
    let stem = framecost::results::writer::file_stem("../../x");
    std::os::unix::fs::symlink(&victim, pics.join(format!("{stem}-scaling.svg"))).expect("symlink");
    let before: Vec<PathBuf> = files_under(dir.path()).into_iter().filter(|p| !p.starts_with(&run)).collect();

    let o = framecost(&["report", run.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    let after: Vec<PathBuf> = files_under(dir.path()).into_iter().filter(|p| !p.starts_with(&run)).collect();
    assert_eq!(before, after, "files appeared outside the run folder");
    assert_eq!(std::fs::read_to_string(&victim).expect("victim"), "keep me");
    let planted = pics.join(format!("{stem}-scaling.svg"));
    assert!(!planted.is_symlink() && planted.is_file(), "the symlink was written through");
    // No temp files are left behind.
    assert!(files_under(&run).iter().all(|p| !p.file_name().is_some_and(|n| n.to_string_lossy().starts_with(".tmp-"))));
    // The formula-like name is neutralised in the CSV.
    let csv = std::fs::read_to_string(run.join("points.csv")).expect("csv");
    assert!(csv.contains("\"'=HYPERLINK(\"\"x\"\")\""), "{csv}");

    // One line of bad UTF-8 and one of absurd medians: two damaged lines, not a lost run.
    let path = run.join("points.jsonl");
    let mut bytes = std::fs::read(&path).expect("points");
    bytes.extend_from_slice(b"{\"record\":\"point\",\"workload\":\"\xff\xfe\"}\n");
    let body = String::from_utf8_lossy(&bytes).to_string();
    let absurd = body
        .lines()
        .find(|l| l.contains("\"record\":\"point\"") && l.contains("\"median_ns\""))
        .map(|l| {
            let mut v: serde_json::Value = serde_json::from_str(l).expect("json");
            v["measured"]["median_ns"] = 1e308.into();
            v["measured"]["samples_ns"] = serde_json::json!([1e308, 1e-300]);
            v.to_string()
        })
        .expect("a measured point");
    bytes.extend_from_slice(absurd.as_bytes());
    bytes.push(b'\n');
    std::fs::write(&path, bytes).expect("write");
    let r = RunResults::read(&run).expect("still a run");
    assert_eq!(r.damaged_lines, 2);
    let o = framecost(&["recap", run.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(0));
    assert!(text(&o).contains("2 damaged line(s)"), "{}", text(&o));
    let o = framecost(&["report", run.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
}

#[test]
fn the_gate_refuses_a_comparison_of_nothing() {
    let dir = tempfile::tempdir().expect("tempdir");
    let base = tiny_run(&dir.path().join("base"));
    let copy = |name: &str| {
        let to = dir.path().join(name);
        std::fs::create_dir_all(&to).expect("mkdir");
        std::fs::copy(base.join("points.jsonl"), to.join("points.jsonl")).expect("copy");
        to
    };
    let gate = |new: &Path, extra: &[&str]| {
        let mut args = vec!["gate", base.to_str().expect("utf8"), new.to_str().expect("utf8")];
        args.extend_from_slice(extra);
        framecost(&args)
    };
    // Killed: no end record and the last size's points missing.
    let killed = copy("killed");
    let body = std::fs::read_to_string(killed.join("points.jsonl")).expect("points");
    let kept: Vec<&str> = body.lines().filter(|l| !l.contains("\"record\":\"end\"") && !l.contains("\"rows\":500")).collect();
    std::fs::write(killed.join("points.jsonl"), kept.join("\n") + "\n").expect("write");
    let o = gate(&killed, &[]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    let t = text(&o);
    // The counts come from the baseline itself (a point may be skipped on a busy machine).
    let b = RunResults::read(&base).expect("baseline");
    let measured = |rows: Option<u64>| b.workloads[0].points.iter().filter(|p| p.measured.is_some() && rows.is_none_or(|r| p.rows == r)).count();
    let missing = format!("{} of {} baseline point(s) have no record", measured(Some(500)), measured(None));
    assert!(t.contains("did not finish") && (measured(Some(500)) == 0 || t.contains(&missing)), "{t}\nexpected: {missing}");
    let o = gate(&killed, &["--partial-ok"]);
    assert!(matches!(o.status.code(), Some(0) | Some(1)), "{}", text(&o));
    // Every design renamed: nothing compared.
    let renamed = copy("renamed");
    edit_points(&renamed, |v| {
        if let Some(d) = v.get("design").and_then(|d| d.as_str()).map(|d| format!("{d}-v2")) {
            v["design"] = d.into();
        }
    });
    let o = gate(&renamed, &[]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("no point is measured in both runs"), "{}", text(&o));
    // Every record twice.
    let doubled = copy("doubled");
    let body = std::fs::read_to_string(doubled.join("points.jsonl")).expect("points");
    let points: String = body.lines().filter(|l| l.contains("\"record\":\"point\"")).map(|l| format!("{l}\n")).collect();
    std::fs::write(doubled.join("points.jsonl"), format!("{body}{points}")).expect("write");
    let o = gate(&doubled, &[]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    let points = b.workloads[0].points.len();
    assert!(text(&o).contains(&format!("{points} point(s) recorded more than once")), "{}", text(&o));
    // The unchanged copy is a full comparison.
    let same = copy("same");
    let o = gate(&same, &[]);
    assert!(matches!(o.status.code(), Some(0) | Some(1)), "{}", text(&o));
}

#[test]
fn ctrl_c_keeps_finished_points_and_removes_temp_folders() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = dir.path().join("tmp");
    std::fs::create_dir_all(&tmp).expect("tmp");
    let run = dir.path().join("run");
    let bin = assert_cmd::cargo::cargo_bin("framecost");
    let mut child = std::process::Command::new(bin)
        .args(["sweep", "workloads/storage.yaml", "--quiet", "--out", run.to_str().expect("utf8")])
        .env("TMPDIR", &tmp)
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .expect("spawn");
    // Wait for the first point on disk, then interrupt (the whole sweep takes minutes).
    let points = run.join("points.jsonl");
    for _ in 0..1200 {
        let n = std::fs::read_to_string(&points).map(|t| t.matches("\"record\":\"point\"").count()).unwrap_or(0);
        if n > 0 || child.try_wait().expect("wait").is_some() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(100));
    }
    // SAFETY: kill(2) on our own child's pid.
    unsafe { libc::kill(child.id() as i32, libc::SIGINT) };
    let out = child.wait_with_output().expect("wait");
    let t = text(&out);
    assert_eq!(out.status.code(), Some(framecost::exit::INTERRUPTED), "{t}");
    assert!(t.contains("interrupted") && t.contains("framecost report"), "{t}");
    let summary: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(run.join("summary.json")).expect("summary")).expect("json");
    assert_eq!(summary["interrupted"], true);
    assert_eq!(summary["complete"], false);
    let r = RunResults::read(&run).expect("readable");
    assert!(!r.complete() && r.workloads[0].points.iter().any(|p| p.measured.is_some()));
    assert!(files_under(&tmp).is_empty(), "temp folders left: {:?}", files_under(&tmp));
    let o = framecost(&["report", run.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    let o = framecost(&["explain", run.to_str().expect("utf8")]);
    assert!(text(&o).contains("did not finish"), "{}", text(&o));
}
