//! `framecost gate BASELINE NEW --history DIR` on recorded runs (`tests/data/history-runs/`:
//! row-growth cut, unchanged, from ten real catalog sweeps on one machine with the same measuring code, nine
//! of unchanged code and one with `build-once` slowed by the documented knob,
//! `slowdown: 15%`). Between two separate sweeps that slowdown was lost in how far designs
//! wander from run to run until each point was judged against the other designs' move at
//! its own size (5 December): the two-run gate now catches it against 5 of the 9 unchanged
//! runs, and none of the 72 pairings of unchanged runs fails. Against a history of eight
//! runs it is caught, on that design only, and an unchanged run passes. Exit codes and the JSON are checked; the slowdown's
//! size is the knob's own (15%), not a timing of this machine.

use assert_cmd::Command;
use std::path::Path;

const DATA: &str = "tests/data/history-runs";

/// A history folder holding the given recorded runs (links would do; copies keep it portable).
fn history(runs: &[&str]) -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("tempdir");
    for r in runs {
        let to = dir.path().join(r);
        std::fs::create_dir_all(&to).expect("mkdir");
        std::fs::copy(Path::new(DATA).join(r).join("points.jsonl"), to.join("points.jsonl")).expect("copy");
    }
    dir
}

fn gate(base: &str, new: &str, hist: Option<&Path>) -> (i32, serde_json::Value) {
    let mut cmd = Command::cargo_bin("framecost").expect("binary");
    cmd.arg("gate").arg(Path::new(DATA).join(base)).arg(Path::new(DATA).join(new)).arg("--json");
    if let Some(h) = hist {
        cmd.arg("--history").arg(h);
    }
    let out = cmd.output().expect("runs");
    let doc = serde_json::from_slice(&out.stdout).unwrap_or_else(|_| panic!("{}", String::from_utf8_lossy(&out.stderr)));
    (out.status.code().expect("exit code"), doc)
}

fn history_calls(doc: &serde_json::Value) -> Vec<(String, String, f64)> {
    doc["workloads"]
        .as_array()
        .expect("workloads")
        .iter()
        .flat_map(|w| w["history"]["moves"].as_array().cloned().unwrap_or_default())
        .filter(|m| m["call"] != "same")
        .map(|m| (m["design"].as_str().unwrap().to_string(), m["call"].as_str().unwrap().to_string(), m["ratio"].as_f64().unwrap()))
        .collect()
}

#[test]
fn a_fifteen_percent_slowdown_between_separate_sweeps_is_caught_against_a_history() {
    // The two-run gate alone: against the unchanged sweep made just before it (the machine
    // ran faster while the slowed one was made), `build-once` is called over its sizes
    // taken together, and nothing else.
    let (rc, alone) = gate("n3", "s1", None);
    assert_eq!(rc, 1, "{alone}");
    assert_eq!(alone["design_regressions"], 1, "{alone}");
    let called: Vec<_> = alone["workloads"][0]["moves"].as_array().expect("moves").iter().filter(|m| m["call"] != "same").collect();
    assert_eq!(called.len(), 1, "{called:?}");
    assert_eq!(called[0]["design"], "build-once", "{called:?}");
    let h = history(&["n1", "n2", "c1", "c2", "c4", "c5", "c6"]);
    let (rc, doc) = gate("n3", "s1", Some(h.path()));
    assert_eq!(rc, 1, "{doc}");
    assert_eq!(doc["history_runs"], 8, "{doc}");
    let calls = history_calls(&doc);
    let slower: Vec<_> = calls.iter().filter(|c| c.1 == "regression").collect();
    assert_eq!(slower.len(), 1, "{calls:?}");
    assert_eq!(slower[0].0, "build-once", "{calls:?}");
    // Near the knob's 15%, after the run's common move.
    assert!(slower[0].2 > 1.08 && slower[0].2 < 1.22, "{calls:?}");
    assert_eq!(doc["design_regressions"], 1, "{doc}");
}

#[test]
fn an_unchanged_sweep_passes_against_the_same_history() {
    let h = history(&["n1", "n2", "c1", "c2", "c4", "c5", "c6"]);
    let (rc, doc) = gate("n3", "c3", Some(h.path()));
    assert_eq!(rc, 0, "{doc}");
    assert!(history_calls(&doc).iter().all(|c| c.1 != "regression"), "{doc}");
    // The new run is never part of its own history, even when its folder is in it.
    let h = history(&["n1", "n2", "c1", "c2", "c3", "c4", "c5", "c6"]);
    let (_, doc) = gate("n3", "c3", Some(h.path()));
    assert_eq!(doc["history_runs"], 8, "{doc}");
}

#[test]
fn too_short_a_history_leaves_the_two_run_judgement_alone() {
    let h = history(&["n1", "n2"]);
    let (rc, doc) = gate("n3", "s1", Some(h.path()));
    let (alone_rc, alone) = gate("n3", "s1", None);
    assert_eq!(rc, alone_rc, "{doc}");
    assert_eq!(doc["workloads"][0]["moves"], alone["workloads"][0]["moves"], "{doc}");
    assert_eq!(doc["history_runs"], 3, "{doc}");
    assert!(doc["workloads"].as_array().unwrap().iter().all(|w| w["history"].is_null()), "{doc}");
}
