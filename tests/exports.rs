//! The notebook tables of a run folder: `points.parquet`, `samples.parquet` and `points.csv`
//! read back with polars and checked against `points.jsonl`, row by row; `framecost report`
//! writes them again for a run that lacks them (an older run).

use assert_cmd::Command;
use polars::prelude::*;
use std::path::Path;

fn framecost(args: &[&str]) -> std::process::Output {
    Command::cargo_bin("framecost").expect("binary").args(args).output().expect("runs")
}

fn parquet(path: &Path) -> DataFrame {
    let f = std::fs::File::open(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    ParquetReader::new(f).finish().unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

#[test]
fn exports_hold_every_point_and_every_sample() {
    let tmp = tempfile::tempdir().expect("tempdir");
    let run = tmp.path().join("run");
    let run_s = run.to_str().expect("utf8");
    // Small sizes plus one the quadratic design is predicted to overrun: measured and skipped rows.
    let o = framecost(&["sweep", "tests/data/tiny.yaml", "--sizes", "1k,2k,4k,128k", "--quiet", "--out", run_s]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));

    // What the results file holds, read as plain JSON (not through framecost's reader).
    let text = std::fs::read_to_string(run.join("points.jsonl")).expect("points.jsonl");
    let points: Vec<serde_json::Value> =
        text.lines().map(|l| serde_json::from_str::<serde_json::Value>(l).expect("json line")).filter(|v| v["record"] == "point").collect();
    let samples: usize = points.iter().filter_map(|p| p["measured"]["samples_ns"].as_array()).map(|a| a.len()).sum();
    let skipped = points.iter().filter(|p| p["measured"].is_null()).count();
    assert!(skipped > 0 && skipped < points.len(), "expected measured and skipped points");

    // Apache Parquet format: a file starts and ends with the 4-byte magic `PAR1`.
    for f in ["points.parquet", "samples.parquet"] {
        let bytes = std::fs::read(run.join(f)).expect("parquet file");
        assert!(bytes.starts_with(b"PAR1") && bytes.ends_with(b"PAR1"), "{f} is not Parquet");
    }

    let pts = parquet(&run.join("points.parquet"));
    assert_eq!(pts.height(), points.len(), "one row per point");
    let status = pts.column("status").expect("status").str().expect("text").clone();
    assert_eq!(status.iter().filter(|s| *s == Some("skipped")).count(), skipped);
    // Each measured point's median is the one recorded.
    let design = pts.column("design").expect("design").str().expect("text").clone();
    let rows = pts.column("rows").expect("rows").u64().expect("u64").clone();
    let median = pts.column("median_ns").expect("median").f64().expect("f64").clone();
    for i in 0..pts.height() {
        let (d, n) = (design.get(i).expect("design"), rows.get(i).expect("rows"));
        let rec = points.iter().find(|p| p["design"] == d && p["rows"] == n).expect("a record for every row");
        assert_eq!(median.get(i), rec["measured"]["median_ns"].as_f64(), "{d} at {n}");
    }
    // Each skipped point's reason is the one recorded (which reason depends on the machine's speed).
    let reason = pts.column("skip_reason").expect("skip").str().expect("text").clone();
    for i in 0..pts.height() {
        let (d, n) = (design.get(i).expect("design"), rows.get(i).expect("rows"));
        let rec = points.iter().find(|p| p["design"] == d && p["rows"] == n).expect("record");
        assert_eq!(reason.get(i), rec["skipped"]["reason"].as_str(), "{d} at {n}");
    }

    let smp = parquet(&run.join("samples.parquet"));
    assert_eq!(smp.height(), samples, "one row per sample");
    let names: Vec<&str> = smp.get_column_names().into_iter().map(|n| n.as_str()).collect();
    assert_eq!(names, ["workload", "design", "rows", "sample", "ns_per_run", "batch"]);
    // The first point's samples, in the order taken.
    let first = points.iter().find(|p| !p["measured"].is_null()).expect("a measured point");
    let want: Vec<f64> = first["measured"]["samples_ns"].as_array().expect("samples").iter().filter_map(|v| v.as_f64()).collect();
    let got = smp
        .clone()
        .lazy()
        .filter(col("design").eq(lit(first["design"].as_str().expect("name"))).and(col("rows").eq(lit(first["rows"].as_u64().expect("rows")))))
        .sort(["sample"], Default::default())
        .select([col("ns_per_run")])
        .collect()
        .expect("filter");
    let got: Vec<f64> = got.column("ns_per_run").expect("col").f64().expect("f64").into_no_null_iter().collect();
    assert_eq!(got, want);

    // The CSV: the same rows, read by polars' CSV reader.
    let csv = CsvReadOptions::default().with_has_header(true).try_into_reader_with_file_path(Some(run.join("points.csv"))).expect("csv").finish().expect("csv");
    assert_eq!(csv.height(), points.len());
    assert_eq!(csv.get_column_names(), pts.get_column_names());

    // An older run has none of them: `report` writes them.
    for f in ["points.parquet", "samples.parquet", "points.csv"] {
        std::fs::remove_file(run.join(f)).expect("remove");
    }
    let o = framecost(&["report", run_s]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    assert_eq!(parquet(&run.join("points.parquet")).height(), points.len());
    assert_eq!(parquet(&run.join("samples.parquet")).height(), samples);
    // Written again from the same results: the same bytes.
    let again = tmp.path().join("again");
    let o = framecost(&["report", run_s, "--out", again.to_str().expect("utf8")]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    for f in ["points.parquet", "samples.parquet", "points.csv"] {
        assert!(std::fs::read(run.join(f)).expect("first") == std::fs::read(again.join(f)).expect("again"), "{f} differs when rewritten");
    }
}
