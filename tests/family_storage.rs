//! Deterministic evidence for the storage family: file signatures, file counts, bytes on
//! disk and read-back contents, never time.
//!
//! File signatures are checked against the published specifications:
//! - Apache Parquet file format: a file begins and ends with the 4 bytes `PAR1`.
//! - Apache Arrow IPC file format: a file begins with `ARROW1` plus 2 bytes of padding and
//!   ends with `ARROW1`.
//! - CSV, RFC 4180: one record per line (CRLF or LF), an optional header record with the
//!   same number of fields as every record, fields separated by commas.
//!
//! Expectation [common practice, no source]: a format with per-object metadata can take
//! more space for many tiny tables than the tables' own data — here, Parquet and Arrow IPC
//! write more bytes as one file per parcel than as one file with the parcel as a column.
//!
//! One test: it counts this process's temp folders, which tests running in parallel would
//! disturb.

use framecost::patterns::storage::{Stored, STORED};
use framecost::patterns::{find_step, Params, ParamValue, RunContext, Value};
use polars::prelude::*;

const SPEC: &str = r#"
name: storage-evidence
seed: 13
table:
  columns:
    - {name: parcel, kind: int, distinct: 50, range: [1, 4000]}
    - {name: crate, kind: key}
    - {name: variety, kind: text, distinct: 14}
    - {name: farm, kind: category, distinct: 40}
    - {name: kilograms, kind: float, range: [0.5, 950.0], nulls: 2%}
    - {name: picked_on, kind: date}
    - {name: organic, kind: bool}
sizes: [1k]
designs:
  - {name: a, steps: [{write_files: {format: parquet}}, read_files]}
  - {name: b, steps: [{write_files: {format: csv}}, read_files]}
"#;

fn params(format: &str, layout: &str) -> Params {
    let mut p = Params::default();
    p.0.insert("format".into(), ParamValue::Choice(format.into()));
    p.0.insert("layout".into(), ParamValue::Choice(layout.into()));
    p.0.insert("column".into(), ParamValue::Count(0));
    p
}

fn our_folders() -> usize {
    let prefix = format!("framecost-{}-", std::process::id());
    std::fs::read_dir(std::env::temp_dir())
        .map(|d| d.filter_map(Result::ok).filter(|e| e.file_name().to_string_lossy().starts_with(&prefix)).count())
        .unwrap_or(0)
}

fn check_signature(format: &str, bytes: &[u8], columns: &[String], rows_in_file: usize) {
    match format {
        // Apache Parquet specification: magic number `PAR1` at both ends.
        "parquet" => {
            assert!(bytes.len() >= 8);
            assert_eq!(&bytes[..4], b"PAR1", "Parquet starts with PAR1");
            assert_eq!(&bytes[bytes.len() - 4..], b"PAR1", "Parquet ends with PAR1");
        }
        // Apache Arrow IPC file format: `ARROW1` + 2 padding bytes at the start, `ARROW1` at the end.
        "ipc" => {
            assert!(bytes.len() >= 14);
            assert_eq!(&bytes[..6], b"ARROW1", "Arrow IPC file starts with ARROW1");
            assert_eq!(&bytes[6..8], &[0, 0], "then two bytes of padding");
            assert_eq!(&bytes[bytes.len() - 6..], b"ARROW1", "Arrow IPC file ends with ARROW1");
        }
        // RFC 4180: a header record, then one record per row, every record with as many fields.
        _ => {
            let text = std::str::from_utf8(bytes).expect("CSV is text");
            let lines: Vec<&str> = text.lines().collect();
            assert_eq!(lines.len(), rows_in_file + 1, "header plus one record per row");
            assert_eq!(lines[0], columns.join(","), "the header names the columns");
            for l in &lines {
                // No field in this table holds a comma or quote, so a plain split counts fields.
                assert!(!l.contains('"'));
                assert_eq!(l.split(',').count(), columns.len(), "record `{l}`");
            }
        }
    }
}

#[test]
fn files_carry_their_format_signatures_and_round_trip_exactly() {
    let plan = framecost::spec::load_str("storage.yaml", SPEC).expect("spec");
    let n = 4000u64;
    let df = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let columns: Vec<String> = df.get_column_names().iter().map(|s| s.to_string()).collect();
    let keys = df.column("parcel").expect("parcel").n_unique().expect("unique");
    let write = find_step("write_files").expect("write_files");
    let read = find_step("read_files").expect("read_files");
    let before = our_folders();

    let mut sizes = std::collections::BTreeMap::new();
    let mut data_fp: Option<String> = None;
    for format in ["parquet", "ipc", "csv"] {
        for layout in ["per_key", "one_file"] {
            let step = (write.build)(&params(format, layout)).expect("builds");
            let v = step.run(Value::Frame(df.clone()), &RunContext::default()).expect("writes");
            let stored = v.clone().into_custom::<Stored>("test", STORED).expect("stored files");
            let folder = stored.folder.path().to_path_buf();
            assert!(folder.starts_with(std::env::temp_dir()), "files stay in the temp directory");
            assert!(folder.is_dir());
            let want_files = if layout == "per_key" { keys } else { 1 };
            assert_eq!(stored.files.len(), want_files, "{format}/{layout} file count");
            assert_eq!(stored.tables as usize, keys);
            let mut total = 0u64;
            let mut rows_seen = 0usize;
            for f in &stored.files {
                assert!(f.starts_with(&folder), "{} is inside the run's folder", f.display());
                let bytes = std::fs::read(f).expect("file");
                total += bytes.len() as u64;
                // Rows in this file: read it back with polars to count them for the CSV check.
                let rows = match format {
                    "csv" => bytes.iter().filter(|&&b| b == b'\n').count() - 1,
                    _ => 0,
                };
                rows_seen += rows;
                check_signature(format, &bytes, &columns, rows);
            }
            if format == "csv" {
                assert_eq!(rows_seen as u64, n, "CSV records cover every row");
            }
            assert_eq!(total, stored.bytes, "bytes on disk are the files' sizes");
            sizes.insert((format, layout), total);
            drop(stored);

            // Read back: the evidence columns report the bytes; the data are the table's.
            let mut p = Params::default();
            p.0.insert("evidence".into(), ParamValue::Flag(true));
            let back = match (read.build)(&p).expect("builds").run(v, &RunContext::default()).expect("reads") {
                Value::Frame(f) => f,
                _ => panic!("a table"),
            };
            assert!(!folder.exists(), "{format}/{layout}: the folder is removed once the files are read");
            assert_eq!(back.height() as u64, n);
            let per_row = back.column("disk_bytes_per_row").expect("evidence").f64().expect("f64").get(0).expect("v");
            let per_table = back.column("disk_bytes_per_table").expect("evidence").f64().expect("f64").get(0).expect("v");
            assert!((per_row * n as f64 - total as f64).abs() < 1e-6 * total as f64);
            assert!((per_table * keys as f64 - total as f64).abs() < 1e-6 * total as f64);
            let data = back.drop("disk_bytes_per_row").and_then(|d| d.drop("disk_bytes_per_table")).expect("data");
            for (c, orig) in data.columns().iter().zip(df.columns()) {
                assert_eq!(c.dtype(), orig.dtype(), "{format}/{layout}: `{}` keeps its dtype", c.name());
            }
            let fp = framecost::table::fingerprint(&data);
            match &data_fp {
                None => data_fp = Some(fp),
                Some(first) => assert_eq!(&fp, first, "{format}/{layout} reads back the same data"),
            }
        }
    }
    eprintln!("bytes on disk for {n} rows, {keys} parcels: {sizes:?}");
    for format in ["parquet", "ipc"] {
        assert!(
            sizes[&(format, "per_key")] > sizes[&(format, "one_file")],
            "{format}: per-file metadata makes {keys} small files larger than one"
        );
    }

    // Errors clean up too, and nothing is left behind.
    let mut bad = params("parquet", "per_key");
    bad.0.insert("column".into(), ParamValue::Count(99));
    let err = (write.build)(&bad).expect("builds").run(Value::Frame(df.clone()), &RunContext::default()).err().expect("no column 99");
    assert!(err.to_string().contains("no column at position 99"), "{err}");
    // A failure after the folder exists: CSV cannot hold a list column, so the first write fails.
    let lists = df
        .clone()
        .lazy()
        .select([col("parcel"), col("variety").str().split(lit("a")).alias("pieces")])
        .collect()
        .expect("a list column");
    let err = (write.build)(&params("csv", "per_key")).expect("builds").run(Value::Frame(lists), &RunContext::default()).err().expect("CSV has no lists");
    assert!(err.to_string().contains("write_files"), "{err}");
    assert_eq!(our_folders(), before, "no temp folder of this process is left behind, even after errors");
    let _ = plan;
}
