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
    // Both runs were made by this build, so the baseline's workload was swept again too,
    // from the text it recorded, in turn with the new side's, and kept beside the baseline.
    assert!(err.contains("sweeping tripled (the baseline's workload) again (4 of 4"), "{err}");
    assert_eq!(doc["recheck"]["baseline_swept"], 4, "{doc}");
    let mut beside: Vec<String> = std::fs::read_dir(base.join("rechecks")).expect("rechecks").map(|e| e.expect("entry").file_name().to_string_lossy().into_owned()).collect();
    beside.sort();
    assert_eq!(beside, ["tripled-1", "tripled-2", "tripled-3", "tripled-4", "tripled.baseline.yaml"]);
    assert_eq!(std::fs::read_to_string(base.join("rechecks").join("tripled.baseline.yaml")).expect("text"), SPEC.replace("STEP", "build_from_records"));
    let w = doc["workloads"].as_array().expect("workloads").iter().find(|w| w["workload"] == "tripled").expect("workload");
    assert_eq!((w["recheck"]["runs"].as_u64(), w["recheck"]["baseline_runs"].as_u64()), (Some(5), Some(5)), "{w}");
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
    assert_eq!(doc2["recheck"]["baseline_swept"], 0, "{doc2}");
    assert_eq!(rc2, rc);
    assert_eq!(doc2["workloads"], doc["workloads"]);
}

fn read(dir: &Path) -> framecost::results::reader::RunResults {
    framecost::results::reader::RunResults::read(dir).expect("a recorded run")
}

/// Two catalog sweeps made by one build, the second with `build-once` slowed by 15%, and
/// the four resweeps of each side a recheck made in turn (`tests/data/recheck-runs/
/// both-sides`, row-growth cut from them). Against the baseline alone the slowdown was not
/// called until 5 December (a steady ×1.18 over its 8 sizes, under three spreads of the
/// workload's points); judged against the other designs' move at each size, it now is, and
/// nothing else. Judged on five runs of each side (`judge_both`), it is the one design
/// called, and five runs of the unchanged baseline split three against two call nothing.
#[test]
fn both_sides_swept_again_catch_a_steady_slowdown_the_baseline_alone_missed() {
    use framecost::track::gate::{compare, judge_both, wide_suspects, Call, GateOptions};
    let d = Path::new(DATA).join("both-sides");
    let (base, new) = (read(&d.join("baseline")), read(&d.join("new")));
    let mut report = compare(&base, &new, &GateOptions::default());
    assert!(report.failed(), "the two runs alone catch it");
    let wg = report.workloads.iter_mut().find(|w| w.workload == "row-growth").expect("row-growth");
    let called: Vec<_> = wg.moves.iter().filter(|m| m.call != Call::Same).map(|m| (m.design.as_str(), m.call)).collect();
    assert_eq!(called, [("build-once", Call::Regression)], "{:?}", wg.moves);
    // Still what a recheck of both sides asks about (a move past the threshold is).
    assert_eq!(wide_suspects(wg), ["build-once"]);
    let bases: Vec<_> = std::iter::once(d.join("baseline")).chain((1..=4).map(|k| d.join(format!("baseline-{k}")))).map(|p| read(&p)).collect();
    let news: Vec<_> = std::iter::once(d.join("new")).chain((1..=4).map(|k| d.join(format!("new-{k}")))).map(|p| read(&p)).collect();
    let of = |runs: &[framecost::results::reader::RunResults]| runs.iter().map(|r| r.workloads[0].clone()).collect::<Vec<_>>();
    let (b, n) = (of(&bases), of(&news));
    let h = judge_both(wg, &n.iter().collect::<Vec<_>>(), &b.iter().collect::<Vec<_>>());
    assert_eq!((h.runs, h.baseline_runs), (5, 5));
    let called: Vec<_> = h.moves.iter().filter(|m| m.call != Call::Same).collect();
    assert_eq!(called.len(), 1, "{:?}", h.moves);
    assert_eq!((called[0].design.as_str(), called[0].call), ("build-once", Call::Regression), "{called:?}");
    // The knob's 15% of the build's own time, through ten runs: ×1.10–×1.25 of the design.
    assert!(called[0].ratio > 1.10 && called[0].ratio < 1.25, "{called:?}");
    assert!(called[0].ratio > called[0].bar, "{called:?}");
    // Unchanged code on both sides: the baseline's five runs, three against two.
    let mut again = compare(&bases[0], &bases[3], &GateOptions::default());
    let wg = again.workloads.iter_mut().find(|w| w.workload == "row-growth").expect("row-growth");
    let h = judge_both(wg, &b[3..].iter().collect::<Vec<_>>(), &b[..3].iter().collect::<Vec<_>>());
    assert!(h.moves.iter().all(|m| m.call == Call::Same), "{:?}", h.moves);
    // Not only because nothing was asked about: every design's difference is within its bar.
    assert_eq!(h.moves.len(), 6, "{:?}", h.moves);
    assert!(h.moves.iter().all(|m| m.ratio.ln().abs() <= m.bar.ln()), "{:?}", h.moves);
}
