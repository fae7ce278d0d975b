//! End to end: a workload written in SQL over two related tables, one design on the
//! in-memory engine and one on the streaming engine, swept at tiny sizes. Asserts on
//! deterministic evidence only: exit codes, identical output fingerprints, the recorded
//! engines and query plans, row counts, and that the Parquet chunks written for the
//! streaming engine are gone afterwards.

use assert_cmd::Command;

const SPEC: &str = r#"
name: sql-end-to-end
tables:
  - name: prices
    rows: 14
    columns:
      - {name: variety_id, kind: key, order: sorted}
      - {name: cents_per_kg, kind: int, range: [40, 900]}
  - name: deliveries
    columns:
      - {name: delivery_id, kind: key, order: sorted}
      - {name: variety_id, kind: int, references: prices.variety_id, skew: 1.1, unmatched: 5%}
      - {name: grams, kind: int, range: [500, 950000]}
sizes: [3k, 6k]
budget: {per_point: 200ms, whole_run: 20s, max_samples: 8}
designs:
  - name: in-memory
    steps:
      - sql: &same_query
          query: |
            SELECT d.variety_id, COUNT(*) AS n, SUM(d.grams * p.cents_per_kg) AS value
            FROM deliveries AS d JOIN prices AS p ON d.variety_id = p.variety_id
            GROUP BY d.variety_id ORDER BY d.variety_id
  - name: streaming
    engine: streaming
    steps:
      - sql: *same_query
"#;

#[test]
fn memory_and_streaming_designs_agree_and_leave_no_files() {
    let dir = tempfile::tempdir().expect("tempdir");
    let tmp = tempfile::tempdir().expect("private temp folder");
    let spec = dir.path().join("w.yaml");
    std::fs::write(&spec, SPEC).expect("spec");
    let run = dir.path().join("run");
    let out = Command::cargo_bin("framecost")
        .expect("binary")
        .env("TMPDIR", tmp.path())
        .args(["sweep", "--quiet", "--out"])
        .arg(&run)
        .arg(&spec)
        .output()
        .expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let r = framecost::results::reader::RunResults::read(&run).expect("results");
    let w = &r.workloads[0];
    let engines: Vec<Option<String>> = w.header.designs.iter().map(|d| d.engine.clone()).collect();
    assert_eq!(engines, vec![Some("memory".into()), Some("streaming".into())]);
    for d in &w.header.designs {
        assert_eq!(d.query_plans.len(), 1);
        assert!(d.query_plans[0].contains("JOIN"), "{}", d.query_plans[0]);
    }
    let measured: Vec<_> = w.points.iter().filter_map(|p| p.measured.as_ref()).collect();
    assert_eq!(measured.len(), 4, "both designs at both sizes");
    for c in &w.comparisons {
        assert_eq!(c.equivalence.status, framecost::results::EquivalenceStatus::Same, "{}", c.equivalence.note);
    }
    // One row per delivered variety: at most 14.
    assert!(measured.iter().all(|m| m.output.as_ref().is_some_and(|o| o.rows >= 1 && o.rows <= 14)));
    // The Parquet chunks were written under the temp folder and removed after each size.
    let left: Vec<_> = std::fs::read_dir(tmp.path()).expect("read").collect();
    assert!(left.is_empty(), "left in the temp folder: {left:?}");

    let long = Command::cargo_bin("framecost").expect("binary").args(["explain", "--long"]).arg(&run).output().expect("runs");
    let text = String::from_utf8_lossy(&long.stdout);
    assert!(text.contains("query plan of `streaming`, streaming engine"), "{text}");
}

#[test]
fn one_design_is_enough() {
    let dir = tempfile::tempdir().expect("tempdir");
    let spec = dir.path().join("one.yaml");
    let single = SPEC.split("  - name: streaming").next().expect("first design").to_string();
    std::fs::write(&spec, single).expect("spec");
    let run = dir.path().join("run");
    let out = Command::cargo_bin("framecost").expect("binary").args(["sweep", "--quiet", "--out"]).arg(&run).arg(&spec).output().expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let r = framecost::results::reader::RunResults::read(&run).expect("results");
    assert_eq!(r.workloads[0].points.iter().filter(|p| p.measured.is_some()).count(), 2);
    let explain = Command::cargo_bin("framecost").expect("binary").arg("explain").arg(&run).output().expect("runs");
    assert!(explain.status.success());
    assert!(!String::from_utf8_lossy(&explain.stderr).contains("panicked"));
}
