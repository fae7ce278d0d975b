//! `framecost table SPEC --rows N --write FILE` end to end: each format's file is what its
//! published specification says, holds the same table `sweep` would build (the content
//! fingerprint), is readable by an independent reader (Python's csv module for CSV), is the
//! only file written, and sizes that do not fit are refused before anything is written.

use assert_cmd::Command;
use polars::prelude::*;
use std::path::Path;

const SPEC: &str = "tests/data/tiny.yaml";

fn table(args: &[&str]) -> std::process::Output {
    Command::cargo_bin("framecost").expect("binary").arg("table").args(args).output().expect("runs")
}

fn expected(rows: u64) -> DataFrame {
    let plan = framecost::spec::load(Path::new(SPEC)).expect("spec");
    framecost::table::generate(&plan.columns, plan.seed, rows).expect("table")
}

fn only_file_in(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir).expect("dir").map(|e| e.expect("entry").file_name().to_string_lossy().to_string()).collect();
    v.sort();
    v
}

#[test]
fn parquet_and_ipc_files_hold_the_generated_table() {
    let want = expected(1000);
    for (name, head, tail) in [("t.parquet", &b"PAR1"[..], &b"PAR1"[..]), ("t.ipc", &b"ARROW1\0\0"[..], &b"ARROW1"[..])] {
        let dir = tempfile::tempdir().expect("tempdir");
        let path = dir.path().join(name);
        let out = table(&[SPEC, "--rows", "1k", "--write", path.to_str().expect("utf8"), "--table", "data"]);
        assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
        let bytes = std::fs::read(&path).expect("written");
        // Apache Parquet: a file begins and ends with `PAR1`; Arrow IPC file format: begins with
        // `ARROW1` and 2 bytes of padding, ends with `ARROW1` [published specifications,
        // REFERENCES.md "File formats"].
        assert!(bytes.starts_with(head) && bytes.ends_with(tail), "{name}: magic bytes");
        let file = std::fs::File::open(&path).expect("open");
        let got = if name.ends_with("parquet") { ParquetReader::new(file).finish() } else { IpcReader::new(file).finish() }.expect("readable");
        assert_eq!(got.height(), 1000);
        assert_eq!(got.dtypes(), want.dtypes(), "{name}: dtypes");
        assert_eq!(framecost::table::fingerprint(&got), framecost::table::fingerprint(&want), "{name}: contents");
        // The message names the fingerprint it wrote, and nothing else is left in the folder.
        assert!(String::from_utf8_lossy(&out.stdout).contains(&framecost::table::fingerprint(&want)));
        assert_eq!(only_file_in(dir.path()), vec![name.to_string()]);
    }
}

#[test]
fn csv_is_read_back_by_pythons_csv_module() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("t.csv");
    let out = table(&[SPEC, "--rows", "2000", "--write", path.to_str().expect("utf8")]);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let want = expected(2000);
    // Reference: Python's standard csv module (RFC 4180 reader) counts rows, columns and
    // empty cells of the kilograms column; they must equal the generated table's.
    let script = "import csv,sys\nr=list(csv.reader(open(sys.argv[1],newline='')))\nprint(len(r)-1, len(r[0]), ','.join(r[0]), sum(1 for x in r[1:] if x[2]==''))";
    let py = std::process::Command::new("python3").args(["-c", script, path.to_str().expect("utf8")]).output().expect("python3");
    let text = String::from_utf8_lossy(&py.stdout).trim().to_string();
    let nulls = want.column("kilograms").expect("column").null_count();
    assert!(nulls > 0);
    assert_eq!(text, format!("2000 4 line,variety,kilograms,picked_on {nulls}"));
    assert_eq!(only_file_in(dir.path()), vec!["t.csv".to_string()]);
}

#[test]
fn sizes_that_do_not_fit_and_bad_requests_are_refused_without_writing() {
    let dir = tempfile::tempdir().expect("tempdir");
    let big = dir.path().join("big.parquet");
    // Ten billion rows of this table need far more memory than any test machine has.
    let out = table(&[SPEC, "--rows", "10G", "--write", big.to_str().expect("utf8")]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("memory") && err.contains("available") && err.contains("GiB"), "{err}");
    for (args, words) in [
        (vec!["--rows", "1k", "--write", "x.xlsx"], "use .parquet, .csv or .ipc"),
        (vec!["--rows", "1k", "--write", "x.csv", "--table", "dat"], "did you mean `data`?"),
        (vec!["--rows", "0", "--write", "x.csv"], "at least 1 row"),
        (vec!["--rows", "lots", "--write", "x.csv"], "row count"),
    ] {
        let mut a = vec![SPEC];
        a.extend(args);
        let out = Command::cargo_bin("framecost").expect("binary").current_dir(dir.path()).arg("table").arg(Path::new(env!("CARGO_MANIFEST_DIR")).join(SPEC)).args(&a[1..]).output().expect("runs");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{a:?}: {err}");
        assert!(err.contains(words), "{a:?}: {err}");
    }
    assert!(only_file_in(dir.path()).is_empty(), "nothing may be written: {:?}", only_file_in(dir.path()));
}
