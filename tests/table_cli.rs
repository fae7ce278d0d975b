//! `framecost table SPEC --rows N --write FILE` end to end: each format's file is what its
//! published specification says, holds the same table `sweep` would build (the content
//! fingerprint), is readable by an independent reader (Python's csv module for CSV), is the
//! only file written, and sizes that do not fit are refused before anything is written. A
//! workload that sweeps another axis is written at one of its points (`--at`), and one of
//! several related tables with `--table`.

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

fn workload(name: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("workloads").join(name)
}

/// The tables `sweep` builds at swept value `x` of a workload.
fn swept_tables(path: &Path, x: u64) -> Vec<(String, DataFrame)> {
    let plan = framecost::spec::load(path).expect("spec");
    framecost::table::related::generate_tables(&plan.tables_at(x), plan.seed, plan.related, plan.rows_at(x)).expect("tables")
}

#[test]
fn a_point_of_an_axis_sweep_is_written_with_at() {
    let dir = tempfile::tempdir().expect("tempdir");
    let write = |spec: &Path, args: &[&str], file: &str| {
        let path = dir.path().join(file);
        let mut a = vec![spec.to_str().expect("utf8"), "--write", path.to_str().expect("utf8")];
        a.extend(args);
        let out = table(&a);
        assert_eq!(out.status.code(), Some(0), "{args:?}: {}", String::from_utf8_lossy(&out.stderr));
        (path, String::from_utf8_lossy(&out.stdout).to_string())
    };
    let parquet = |p: &Path| ParquetReader::new(std::fs::File::open(p).expect("open")).finish().expect("readable");

    // group-count sweeps the distinct count of `grouping` at its `rows: 64k`.
    let groups = workload("group-count.yaml");
    let (path, said) = write(&groups, &["--at", "1k"], "g1k.parquet");
    assert!(said.contains("64000 rows") && said.contains("at 1k groups"), "{said}");
    let df = parquet(&path);
    assert_eq!(df.height(), 64_000);
    // Reference: the occupancy problem (Feller, An Introduction to Probability Theory and Its
    // Applications, vol. 1, ch. II): n uniform draws over d values leave d·(1 − 1/d)ⁿ values
    // undrawn on average — 1000·(1 − 1/1000)^64000 ≈ 1.6e-25 here, so all 1000 appear …
    assert_eq!(df.column("grouping").expect("column").n_unique().expect("n_unique"), 1000);
    // … and it is the table `sweep` measures at that point.
    let want = &swept_tables(&groups, 1000)[0].1;
    assert_eq!(framecost::table::fingerprint(&df), framecost::table::fingerprint(want));
    // At 16k groups λ = 64000/16000 = 4 draws per value: d·(1 − e^−λ) ≈ 15707 seen, with a
    // standard deviation of √(d·e^−λ·(1 − (1 + λ)·e^−λ)) ≈ 16 (same source); 1% is 10 of them.
    let (path, _) = write(&groups, &["--at", "16k"], "g16k.parquet");
    let seen = parquet(&path).column("grouping").expect("column").n_unique().expect("n_unique") as f64;
    let expect = 16_000.0 * (1.0 - (1.0 - 1.0 / 16_000.0f64).powi(64_000));
    assert!((seen - expect).abs() < 0.01 * expect, "{seen} distinct, expected about {expect:.0}");
    // --rows replaces the workload's rows.
    let (path, said) = write(&groups, &["--at", "256", "--rows", "2k"], "g-rows.parquet");
    assert_eq!(parquet(&path).height(), 2000, "{said}");

    // column-growth sweeps the number of columns at `rows: 8k`: the declared five, then copies.
    let columns = workload("column-growth.yaml");
    let (path, said) = write(&columns, &["--at", "32"], "c32.csv");
    assert!(said.contains("32 columns"), "{said}");
    let df = CsvReadOptions::default().try_into_reader_with_file_path(Some(path)).expect("reader").finish().expect("csv");
    assert_eq!((df.height(), df.width()), (8000, 32));
    let names: Vec<String> = df.get_column_names().iter().map(|n| n.to_string()).collect();
    assert_eq!(&names[..6], &["crate_id", "kilograms", "parcel", "variety", "picked_on", "crate_id_2"]);
    // Without --at, the table as declared.
    let (path, _) = write(&columns, &[], "declared.ipc");
    assert_eq!(IpcReader::new(std::fs::File::open(&path).expect("open")).finish().expect("ipc").width(), 5);

    // A null-share sweep: the share asked for, within three binomial standard errors
    // (√(p(1 − p)/n) [the binomial distribution's variance]).
    let nulls = dir.path().join("nulls.yaml");
    std::fs::write(
        &nulls,
        "name: null-share\nseed: 5\ntable:\n  columns:\n    - {name: line, kind: key}\n    - {name: kilograms, kind: float, range: [1, 500]}\nrows: 40k\nsweep: {axis: missing weights, column: kilograms, set: nulls, values: [1%, 5%, 25%]}\ndesigns:\n  - {name: a, feed: records, steps: [build_from_records]}\n  - {name: b, feed: records, steps: [build_from_records]}\n",
    )
    .expect("spec");
    let (path, said) = write(&nulls, &["--at", "10%"], "n.parquet");
    assert!(said.contains("at missing weights 10%"), "{said}");
    let df = parquet(&path);
    let share = df.column("kilograms").expect("column").null_count() as f64 / df.height() as f64;
    assert!((share - 0.10).abs() < 3.0 * (0.1f64 * 0.9 / 40_000.0).sqrt(), "null share {share}");
    assert_eq!(df.column("line").expect("column").null_count(), 0);
}

#[test]
fn one_of_several_related_tables_is_the_one_sweep_builds() {
    // sql-filter-join: `members` has 1/20 of the swept rows, `deliveries` all of them, and
    // deliveries.member_id refers to members.member_id.
    let dir = tempfile::tempdir().expect("tempdir");
    let spec = workload("sql-filter-join.yaml");
    let want = swept_tables(&spec, 10_000);
    for (name, rows) in [("members", 500), ("deliveries", 10_000)] {
        let path = dir.path().join(format!("{name}.parquet"));
        let out = table(&[spec.to_str().expect("utf8"), "--rows", "10k", "--table", name, "--write", path.to_str().expect("utf8")]);
        assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
        let got = ParquetReader::new(std::fs::File::open(&path).expect("open")).finish().expect("readable");
        assert_eq!(got.height(), rows);
        let (_, df) = want.iter().find(|(n, _)| n == name).expect("table");
        assert_eq!(framecost::table::fingerprint(&got), framecost::table::fingerprint(df), "{name}");
    }
}

#[test]
fn at_is_refused_where_it_does_not_apply() {
    let dir = tempfile::tempdir().expect("tempdir");
    let groups = workload("group-count.yaml");
    let columns = workload("column-growth.yaml");
    let tiny = Path::new(env!("CARGO_MANIFEST_DIR")).join(SPEC);
    for (spec, args, words) in [
        (&groups, vec!["--at", "100k"], vec!["from 1 to the table's 64000 rows", "sweeps groups", "from 16 to 16k"]),
        (&groups, vec!["--at", "16k", "--rows", "4k"], vec!["the table's 4000 rows"]),
        (&groups, vec!["--at", "lots"], vec!["found `lots`", "such as 100 or 10k"]),
        (&groups, vec!["--at", "1.5"], vec!["whole number"]),
        (&columns, vec!["--at", "0"], vec!["from 1 to", "sweeps columns"]),
        (&tiny, vec!["--at", "4"], vec!["--at: `tiny-ledger` sweeps rows", "--rows alone"]),
        (&tiny, vec![], vec!["--rows is needed", "up to 128k"]),
        (&groups, vec!["--at", "1k", "--table", "ledger"], vec!["no table `ledger`"]),
    ] {
        let mut a = vec![spec.to_str().expect("utf8"), "--write", "t.parquet"];
        a.extend(args.iter().copied());
        let out = Command::cargo_bin("framecost").expect("binary").current_dir(dir.path()).arg("table").args(&a).output().expect("runs");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        for w in words {
            assert!(err.contains(w), "{args:?}: `{w}` not in: {err}");
        }
    }
    assert!(only_file_in(dir.path()).is_empty(), "nothing may be written: {:?}", only_file_in(dir.path()));
}
