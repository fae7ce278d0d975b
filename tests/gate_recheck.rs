//! `framecost gate BASELINE NEW --recheck N`: the failing workloads of the new run swept
//! again, and the baseline judged against how far the new code's runs wander.
//!
//! On recorded runs (`tests/data/recheck-runs/`, `tests/data/history-runs/`, real sweeps of
//! one machine): a new sweep out of line on one design is cleared by its four resweeps, and
//! a 15% slowdown present in every run of the new code still fails, on that design only.
//! Those resweeps are kept in the run's `rechecks/` folder, so no sweep runs there. One
//! test sweeps for real: a design made three times the work, swept, and rechecked; it
//! checks what was swept and reused, and that the change shows clearly (over ×1.5) in every
//! resweep, not a timing of this machine.

use assert_cmd::Command;
use std::path::Path;

const DATA: &str = "tests/data/recheck-runs";
const HISTORY: &str = "tests/data/history-runs";

/// A copy of a recorded run with the given recorded runs as its kept resweeps.
fn run_with_rechecks(run: &Path, rechecks: &[&Path]) -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("tempdir");
    std::fs::copy(run.join("points.jsonl"), dir.path().join("points.jsonl")).expect("copy");
    for (i, r) in rechecks.iter().enumerate() {
        let to = dir.path().join("rechecks").join(format!("kept-{}", i + 1));
        std::fs::create_dir_all(&to).expect("mkdir");
        std::fs::copy(r.join("points.jsonl"), to.join("points.jsonl")).expect("copy");
    }
    dir
}

fn gate(base: &Path, new: &Path, extra: &[&str], cwd: &Path) -> (i32, serde_json::Value, String) {
    let out = Command::cargo_bin("framecost")
        .expect("binary")
        .current_dir(cwd)
        .arg("gate")
        .arg(std::fs::canonicalize(base).expect("base"))
        .arg(new)
        .arg("--json")
        .args(extra)
        .output()
        .expect("runs");
    let err = String::from_utf8_lossy(&out.stderr).to_string();
    let doc = serde_json::from_slice(&out.stdout).unwrap_or(serde_json::Value::Null);
    (out.status.code().expect("exit code"), doc, err)
}

/// (design, call, ratio) of every design the recheck judged.
fn recheck_moves(doc: &serde_json::Value, workload: &str) -> Vec<(String, String, f64)> {
    let w = doc["workloads"].as_array().expect("workloads").iter().find(|w| w["workload"] == workload).expect("workload");
    w["recheck"]["moves"]
        .as_array()
        .cloned()
        .unwrap_or_default()
        .iter()
        .map(|m| (m["design"].as_str().unwrap().to_string(), m["call"].as_str().unwrap().to_string(), m["ratio"].as_f64().unwrap()))
        .collect()
}

#[test]
fn a_new_sweep_out_of_line_is_cleared_by_its_resweeps() {
    let d = Path::new(DATA).join("self-join");
    let rechecks: Vec<_> = (1..=4).map(|i| d.join("rechecks").join(format!("sql-self-join-{i}"))).collect();
    let new = run_with_rechecks(&d.join("new"), &rechecks.iter().map(|p| p.as_path()).collect::<Vec<_>>());
    let here = std::env::current_dir().expect("cwd");
    // Against the baseline alone `window` is slower (×1.1–×1.2 at six sizes).
    let (rc, doc, err) = gate(&d.join("baseline"), new.path(), &[], &here);
    assert_eq!(rc, 1, "the two-run gate was expected to fail, as measured: {doc} {err}");
    // Against five runs of the new code it is within how far they wander.
    let (rc, doc, err) = gate(&d.join("baseline"), new.path(), &["--recheck", "5"], &here);
    assert_eq!(rc, 0, "{doc} {err}");
    assert_eq!(doc["recheck"]["swept"], 0, "the kept resweeps are reused: {doc}");
    assert_eq!(doc["recheck"]["workloads"], serde_json::json!(["sql-self-join"]), "{doc}");
    let w = doc["workloads"].as_array().unwrap().iter().find(|w| w["workload"] == "sql-self-join").unwrap();
    assert_eq!(w["recheck"]["runs"], 5, "{w}");
    let held = w["recheck"]["held"].as_array().expect("held");
    assert!(held.iter().any(|h| h[0] == "window"), "window's sizes are held by the resweeps: {w}");
    assert!(recheck_moves(&doc, "sql-self-join").iter().all(|m| m.1 == "same"), "{doc}");
}

#[test]
fn a_slowdown_in_every_run_of_the_new_code_still_fails_on_that_design_only() {
    let slowed = Path::new(DATA).join("row-growth-slowed");
    let rechecks: Vec<_> = ["s2", "ox1", "ox2", "ox3"].iter().map(|r| slowed.join(r)).collect();
    let new = run_with_rechecks(&Path::new(HISTORY).join("s1"), &rechecks.iter().map(|p| p.as_path()).collect::<Vec<_>>());
    let here = std::env::current_dir().expect("cwd");
    let base = Path::new(HISTORY).join("c6");
    let (rc, _, _) = gate(&base, new.path(), &[], &here);
    assert_eq!(rc, 1, "against this baseline the two-run gate catches it, as measured");
    let (rc, doc, err) = gate(&base, new.path(), &["--recheck", "5"], &here);
    assert_eq!(rc, 1, "{doc} {err}");
    let moves = recheck_moves(&doc, "row-growth");
    let called: Vec<_> = moves.iter().filter(|m| m.1 != "same").collect();
    assert_eq!(called.len(), 1, "{moves:?}");
    assert_eq!(called[0].1, "regression", "{moves:?}");
    assert_eq!(called[0].0, "build-once", "{moves:?}");
    // The knob's 15%, seen through five runs' noise: between ×1.05 and ×1.35.
    assert!(called[0].2 > 1.05 && called[0].2 < 1.35, "{moves:?}");
    assert_eq!(doc["design_regressions"], 1, "{doc}");
}

#[test]
fn too_few_runs_or_a_workload_file_out_of_reach_are_said() {
    let d = Path::new(DATA).join("self-join");
    let here = std::env::current_dir().expect("cwd");
    let (rc, _, err) = gate(&d.join("baseline"), &d.join("new"), &["--recheck", "3"], &here);
    assert_eq!(rc, 2, "{err}");
    assert!(err.contains("at least 5"), "{err}");
    let (rc, _, err) = gate(&d.join("baseline"), &d.join("new"), &["--recheck", "1000"], &here);
    assert_eq!(rc, 2, "{err}");
    // No kept resweeps, and the workload file the new run was swept from is not reachable
    // from here: nothing is swept, the reason is given, and the baseline alone decides.
    let new = run_with_rechecks(&d.join("new"), &[]);
    let elsewhere = tempfile::tempdir().expect("tempdir");
    let (rc, doc, err) = gate(&d.join("baseline"), new.path(), &["--recheck", "5"], elsewhere.path());
    assert_eq!(rc, 1, "{doc} {err}");
    let not = doc["recheck"]["not_rechecked"].as_array().expect("not_rechecked");
    assert_eq!(not.len(), 1, "{doc}");
    assert_eq!(not[0][0], "sql-self-join");
    assert!(not[0][1].as_str().unwrap().contains("wl/sql-self-join.yaml"), "{doc}");
    assert_eq!(doc["recheck"]["swept"], 0);
}

const SPEC: &str = "name: tripled\nseed: 7\ntable:\n  columns:\n    - {name: line, kind: key, order: sorted}\n    - {name: kilograms, kind: float, range: [1, 500]}\nsizes: [2k, 4k, 8k]\nbudget: {per_point: 300ms, whole_run: 20s, max_samples: 12}\ndesigns:\n  - name: build\n    feed: records\n    steps: [STEP]\n  - name: steady\n    feed: records\n    steps: [build_from_records]\n";

#[test]
fn the_resweeps_are_made_kept_and_reused() {
    let dir = tempfile::tempdir().expect("tempdir");
    let yaml = dir.path().join("tripled.yaml");
    let sweep = |step: &str, out: &str| {
        std::fs::write(&yaml, SPEC.replace("STEP", step)).expect("write");
        let s = Command::cargo_bin("framecost").expect("binary").arg("sweep").arg(&yaml).args(["--quiet", "--out"]).arg(dir.path().join(out)).output().expect("runs");
        assert!(s.status.success(), "{}", String::from_utf8_lossy(&s.stderr));
    };
    sweep("build_from_records", "base");
    // Three times the work: failed against the baseline alone on any machine.
    sweep("{build_from_records: {extra_passes: 2}}", "new");
    let (base, new) = (dir.path().join("base"), dir.path().join("new"));
    let (rc0, plain, _) = gate(&base, &new, &[], dir.path());
    let (rc, doc, err) = gate(&base, &new, &["--recheck", "5"], dir.path());
    if rc0 == 0 {
        // Every point measured on a busy machine is left unjudged: nothing to recheck, and
        // the gate says so instead of sweeping.
        assert_eq!(doc["recheck"]["swept"], 0, "{plain} {doc}");
        assert!(!new.join("rechecks").exists());
        return;
    }
    assert!(err.contains("sweeping tripled again (4 of 4"), "{err}");
    assert_eq!(doc["recheck"]["swept"], 4, "{doc}");
    let kept = std::fs::read_dir(new.join("rechecks")).expect("rechecks").count();
    assert_eq!(kept, 4);
    let moves = recheck_moves(&doc, "tripled");
    if let Some(m) = moves.iter().find(|m| m.0 == "build") {
        // Three passes of the step instead of one; the design's time also holds what does
        // not repeat, so the whole design measured ×1.91 and over ×2 in two runs here.
        assert!(m.2 > 1.5, "×3 the step's work in every run of the new code: {moves:?}");
        assert_eq!(m.1, "regression", "{moves:?}");
        assert_eq!(rc, 1, "{doc}");
    }
    // Again: the kept resweeps are used, nothing is swept, the answer is the same.
    let (rc2, doc2, err2) = gate(&base, &new, &["--recheck", "5"], dir.path());
    assert!(!err2.contains("sweeping"), "{err2}");
    assert_eq!(doc2["recheck"]["swept"], 0, "{doc2}");
    assert_eq!(rc2, rc);
    assert_eq!(doc2["workloads"], doc["workloads"]);
}
