//! `framecost shape` end to end on public data: the Palmer penguins sample (shape → spec →
//! lint → `table` at the sample's size → fidelity), key references between two related
//! public files, null markers, labels kept out of the spec, and a column that cannot be
//! modelled being reported rather than dropped.

use assert_cmd::Command;
use serde_json::Value;
use std::path::Path;

const PENGUINS: &str = "tests/data/penguins.csv";

fn framecost(args: &[&str]) -> std::process::Output {
    Command::cargo_bin("framecost").expect("binary").args(args).output().expect("runs")
}

fn json_of(out: &std::process::Output) -> Value {
    assert_eq!(out.status.code(), Some(0), "stderr:\n{}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("json on stdout")
}

fn column<'a>(table: &'a Value, name: &str) -> &'a Value {
    table["fidelity"].as_array().expect("fidelity").iter().find(|c| c["column"] == name).unwrap_or_else(|| panic!("no column {name}"))
}

/// Facts of penguins.csv from REFERENCES.md ("A public sample for shape inference — Palmer
/// penguins" [computed, Python csv module]): (column, kind, nulls, distinct non-missing,
/// count of the most frequent value where published).
const FACTS: &[(&str, &str, u64, u64, Option<u64>)] = &[
    ("species", "category", 0, 3, Some(152)),          // Adelie 152 / Gentoo 124 / Chinstrap 68
    ("island", "category", 0, 3, Some(168)),           // Biscoe 168 / Dream 124 / Torgersen 52
    ("bill_length_mm", "float", 2, 164, None),
    ("bill_depth_mm", "float", 2, 80, None),
    ("flipper_length_mm", "int", 2, 55, None),
    ("body_mass_g", "int", 2, 94, None),
    ("sex", "category", 11, 2, Some(168)),              // male 168, female 165
    ("year", "int", 0, 3, Some(120)),                   // 2007 110, 2008 114, 2009 120
];

#[test]
fn penguins_shape_spec_table_and_fidelity() {
    let dir = tempfile::tempdir().expect("tempdir");
    let spec = dir.path().join("penguins.yaml");
    let spec_s = spec.to_str().expect("utf8");
    let j = json_of(&framecost(&["shape", PENGUINS, "--out", spec_s, "--json"]));
    assert_eq!(j["schema"], "framecost.shape/1");
    assert!(j["tolerances"].as_str().expect("tolerances").contains("10%"));
    let t = &j["tables"][0];
    assert_eq!(t["rows"], 344, "REFERENCES: 344 rows");
    assert_eq!(t["fidelity"].as_array().expect("array").len(), 8, "REFERENCES: 8 columns, all modelled");
    assert!(t["not_modelled"].as_array().expect("array").is_empty());
    for (name, kind, nulls, distinct, top) in FACTS {
        let c = column(t, name);
        let s = &c["sample"];
        // The sample's own statistics equal the published counts (REFERENCES.md, Python csv).
        assert_eq!(s["kind"], *kind, "{name}: kind");
        assert_eq!((s["null_share"].as_f64().expect("share") * 344.0).round() as u64, *nulls, "{name}: NA count (REFERENCES)");
        assert_eq!(s["distinct"], *distinct, "{name}: distinct non-missing (REFERENCES)");
        if let Some(top) = top {
            let nonnull = 344 - nulls;
            assert_eq!((s["top_share"].as_f64().expect("share") * nonnull as f64).round() as u64, *top, "{name}: most frequent (REFERENCES)");
        }
        // The generated table matches on kind, null share and distinct count within the
        // stated tolerances.
        let differs: Vec<&str> = c["differs"].as_array().expect("array").iter().filter_map(Value::as_str).collect();
        for k in ["kind", "null_share", "distinct"] {
            assert!(!differs.contains(&k), "{name}: {k} beyond tolerance: {c}");
        }
        assert_eq!(c["generated"]["rows"], 344);
    }
    // The skeleton was written, lints, and carries no raw labels (the default).
    let text = std::fs::read_to_string(&spec).expect("spec written");
    assert_eq!(t["spec"].as_str(), Some(text.as_str()));
    for label in ["Adelie", "Gentoo", "Torgersen", "Biscoe", "female"] {
        assert!(!text.contains(label), "raw label {label} in the spec");
    }
    let lint = framecost(&["lint", spec_s]);
    assert_eq!(lint.status.code(), Some(0), "{}", String::from_utf8_lossy(&lint.stderr));

    // `table` at the sample's size writes the table the fidelity report measured: Python's
    // csv module (an independent reader) counts the same distinct values and empty cells.
    let csv = dir.path().join("generated.csv");
    let out = framecost(&["table", spec_s, "--rows", "344", "--write", csv.to_str().expect("utf8")]);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let script = "import csv,sys,json\nr=list(csv.DictReader(open(sys.argv[1],newline='')))\n\
print(json.dumps({c:[len(set(x[c] for x in r if x[c]!='')),sum(1 for x in r if x[c]==''),len(r)] for c in r[0]}))";
    let py = std::process::Command::new("python3").args(["-c", script, csv.to_str().expect("utf8")]).output().expect("python3");
    let counted: Value = serde_json::from_slice(&py.stdout).expect("python json");
    for (name, ..) in FACTS {
        let g = &column(t, name)["generated"];
        let c = &counted[*name];
        assert_eq!(c[2], 344, "{name}: rows");
        assert_eq!(c[0], g["distinct"], "{name}: distinct in the written CSV vs the report");
        assert_eq!(c[1].as_f64().expect("n"), (g["null_share"].as_f64().expect("share") * 344.0).round(), "{name}: empty cells");
    }

    // The skeleton sweeps (tiny sizes and budgets).
    let run = dir.path().join("run");
    let out = framecost(&["sweep", spec_s, "--sizes", "86,172", "--max-samples", "6", "--point-budget", "1s", "--quiet", "--out", run.to_str().expect("utf8")]);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(run.join("summary.json").exists());
}

#[test]
fn the_report_labels_and_null_markers() {
    // Without --out the spec goes to stdout and the report to stderr.
    let out = framecost(&["shape", PENGUINS, "--keep-labels"]);
    assert_eq!(out.status.code(), Some(0));
    let spec = String::from_utf8_lossy(&out.stdout);
    let report = String::from_utf8_lossy(&out.stderr);
    // --keep-labels copies the most frequent labels into comments (counts: REFERENCES.md).
    assert!(spec.contains("Adelie 152") && spec.contains("Biscoe 168"), "{spec}");
    assert!(report.contains("fidelity of `penguins`") && report.contains("tolerances:"), "{report}");

    // The same file with `?` for missing values: read with `--null ?` it gives the same
    // null counts; without it the four measurement columns become text.
    let dir = tempfile::tempdir().expect("tempdir");
    let q = dir.path().join("penguins-q.csv");
    std::fs::write(&q, std::fs::read_to_string(PENGUINS).expect("csv").replace("NA", "?")).expect("write");
    let j = json_of(&framecost(&["shape", q.to_str().expect("utf8"), "--null", "?", "--json"]));
    let sex = column(&j["tables"][0], "sex");
    assert_eq!((sex["sample"]["null_share"].as_f64().expect("share") * 344.0).round(), 11.0);
    let j = json_of(&framecost(&["shape", q.to_str().expect("utf8"), "--json"]));
    let mass = column(&j["tables"][0], "body_mass_g");
    assert_eq!(mass["sample"]["null_share"], 0.0);
    assert_ne!(mass["sample"]["kind"], "int");
}

#[test]
fn key_references_between_related_public_files() {
    // tests/data/README.md: airports.csv has a unique `iata`; every distinct origin (303)
    // and destination (304) of flights-airport.csv is an iata code [computed, Python csv].
    let j = json_of(&framecost(&["shape", "tests/data/airports.csv", "tests/data/flights-airport.csv", "--json"]));
    let refs = j["references"].as_array().expect("references");
    let find = |col: &str| refs.iter().find(|r| r["table"] == "flights-airport" && r["column"] == col).unwrap_or_else(|| panic!("{col}: {refs:?}"));
    for (col, n) in [("origin", 303), ("destination", 304)] {
        let r = find(col);
        assert_eq!(r["refers_to_table"], "airports");
        assert_eq!(r["refers_to_column"], "iata");
        assert_eq!((r["found"].clone(), r["distinct"].clone()), (Value::from(n), Value::from(n)));
        assert_eq!(r["target_values"], 3376);
    }
    // `count` (flights per route) is not a reference to anything.
    assert!(!refs.iter().any(|r| r["column"] == "count"), "{refs:?}");
    assert_eq!(j["tables"][0]["rows"], 3376);
    assert_eq!(j["tables"][1]["rows"], 5366);
}

#[test]
fn related_public_files_become_one_workload_whose_joins_see_the_samples_keys() {
    // The same two files (tests/data/README.md): with references found, `shape` writes one
    // workload with `tables:`, the referring columns drawn from airports' key.
    let dir = tempfile::tempdir().expect("tempdir");
    let out = dir.path().join("air.yaml");
    let o = out.to_str().expect("path");
    let j = json_of(&framecost(&["shape", "tests/data/airports.csv", "tests/data/flights-airport.csv", "--out", o, "--json"]));
    let rel = &j["related"];
    assert_eq!(rel["tables"], serde_json::json!(["airports", "flights_airport"]));
    assert_eq!(rel["swept_table"], "flights_airport");
    assert_eq!(rel["spec_file"], o);
    // One file, not one per sample.
    assert!(out.is_file());
    assert!(!dir.path().join("air-airports.yaml").exists());
    let spec = std::fs::read_to_string(&out).expect("spec");
    assert_eq!(spec, rel["spec"].as_str().expect("spec text"));
    // 3376 airports beside 5366 routes: 1688/2683 does not fit `rows:` (a ≤ 1000), so the
    // nearest share that does, 1000/1589 (3376.98 rows at 5366).
    assert!(spec.contains("rows: 1000/1589"), "{spec}");
    for col in ["origin", "destination"] {
        let line = spec.lines().find(|l| l.contains(&format!("{{name: {col}, kind: int"))).unwrap_or_else(|| panic!("{col}:\n{spec}"));
        assert!(line.contains("references: airports.iata"), "{line}");
        assert!(line.contains("coverage: "), "{line}");
    }
    // Each referring column's note sits with it alone (the referenced key carries none).
    assert_eq!(spec.matches("#   refers to airports.iata").count(), 2, "{spec}");
    // The referenced column is a key; nothing still refers by text.
    assert!(spec.contains("{name: iata, kind: key"), "{spec}");
    let lint = framecost(&["lint", o]);
    assert_eq!(lint.status.code(), Some(0), "{}", String::from_utf8_lossy(&lint.stderr));
    // Generated as a sweep does at the sample's rows, the routes refer to as many distinct
    // airports as the sample did (303 origins, 304 destinations; counted with Python's csv
    // module, tests/data/README.md) within the fidelity tolerance (10%).
    let flights = &j["tables"][1];
    for (col, n) in [("origin", 303.0), ("destination", 304.0)] {
        let c = column(flights, col);
        assert_eq!(c["sample"]["kind"], "reference");
        assert_eq!(c["sample"]["distinct"].as_f64(), Some(n));
        let g = c["generated"]["distinct"].as_f64().expect("distinct");
        assert!((g - n).abs() <= (0.1 * n as f64).floor(), "{col}: generated {g} distinct against {n}");
        assert!(!c["differs"].as_array().expect("differs").iter().any(|d| d == "distinct"), "{c}");
    }
}

#[test]
fn a_column_without_a_kind_is_reported_not_dropped() {
    use polars::prelude::*;
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("crates.parquet");
    let tags = Series::new("tags".into(), [Series::new("".into(), [1i64, 2]), Series::new("".into(), [3i64]), Series::new("".into(), [4i64])]);
    let mut df = DataFrame::new(3, vec![Column::new("crate".into(), [1i64, 2, 3]), tags.into_column()]).expect("df");
    ParquetWriter::new(std::fs::File::create(&path).expect("create")).finish(&mut df).expect("write");
    let out = framecost(&["shape", path.to_str().expect("utf8"), "--json"]);
    let j = json_of(&out);
    let t = &j["tables"][0];
    let gone = t["not_modelled"].as_array().expect("array");
    assert_eq!(gone.len(), 1);
    assert_eq!(gone[0]["name"], "tags");
    assert!(gone[0]["reason"].as_str().expect("reason").contains("no framecost kind"));
    assert!(t["spec"].as_str().expect("spec").contains("NOT MODELLED: `tags`"));
    assert!(Path::new(&path).exists());
}

#[test]
fn parquet_and_ipc_samples_give_the_csv_samples_statistics() {
    use polars::prelude::*;
    // The penguins CSV read with `NA` as null, written as Parquet and as Arrow IPC: shape
    // must measure the same statistics from each file.
    let dir = tempfile::tempdir().expect("tempdir");
    let mut df = CsvReadOptions::default()
        .with_has_header(true)
        .with_parse_options(CsvParseOptions::default().with_null_values(Some(NullValues::AllColumnsSingle("NA".into()))))
        .try_into_reader_with_file_path(Some(PENGUINS.into()))
        .expect("reader")
        .finish()
        .expect("csv");
    let pq = dir.path().join("penguins.parquet");
    let ipc = dir.path().join("penguins.arrow");
    ParquetWriter::new(std::fs::File::create(&pq).expect("create")).finish(&mut df).expect("parquet");
    IpcWriter::new(std::fs::File::create(&ipc).expect("create")).finish(&mut df).expect("ipc");
    let csv = json_of(&framecost(&["shape", PENGUINS, "--json"]));
    for f in [&pq, &ipc] {
        let j = json_of(&framecost(&["shape", f.to_str().expect("utf8"), "--json"]));
        for (name, ..) in FACTS {
            let (a, b) = (&column(&csv["tables"][0], name)["sample"], &column(&j["tables"][0], name)["sample"]);
            for k in ["kind", "null_share", "distinct", "percentiles", "top_share"] {
                assert_eq!(a[k], b[k], "{}: {name}.{k}", f.display());
            }
        }
    }
}

/// `--full-rows`: the skeleton's sizes start at 1k rows (the 344-row sample's quarter, 86, is
/// mostly fixed cost) and go towards the full data's rows, which become the target; a bad
/// value is a usage error.
#[test]
fn full_rows_set_the_target_and_the_sizes_reach_towards_it() {
    let dir = tempfile::tempdir().expect("tempdir");
    let spec = dir.path().join("penguins.yaml");
    let spec_s = spec.to_str().expect("utf8");
    let out = framecost(&["shape", PENGUINS, "--full-rows", "3M", "--out", spec_s]);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let text = std::fs::read_to_string(&spec).expect("skeleton");
    assert!(text.contains("\ntarget: 3M\n"), "{text}");
    assert!(text.contains("\nsizes: [1k, 4k, 16k, 64k, 256k, 1024k]\n"), "{text}");
    let lint = framecost(&["lint", spec_s]);
    assert_eq!(lint.status.code(), Some(0), "{}", String::from_utf8_lossy(&lint.stderr));
    for bad in ["0", "lots"] {
        let out = framecost(&["shape", PENGUINS, "--full-rows", bad, "--out", dir.path().join("x.yaml").to_str().expect("utf8")]);
        assert_eq!(out.status.code(), Some(2), "--full-rows {bad}");
    }
}
