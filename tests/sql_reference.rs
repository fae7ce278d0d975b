//! The queries of the built-in SQL workloads, checked against an outside reference: each
//! query runs through framecost's `sql` step machinery (polars' SQL engine, on the design's
//! own engine) and through SQLite via Python's standard-library `sqlite3`
//! (https://docs.python.org/3/library/sqlite3.html) on the same generated tables written
//! out as CSV; the results must agree row for row. The comparison and the dialect
//! differences it allows (dates as ISO text, booleans as 0/1, sorting when there is no
//! ORDER BY, floats to a relative 1e-9) are in `tests/data/sql/sqlite_check.py`.

use framecost::patterns::sql::{collect, plan_query, RunContext};
use polars::prelude::*;
use std::path::Path;

fn kind(dt: &DataType) -> &'static str {
    match dt {
        d if d.is_integer() => "int",
        d if d.is_float() => "float",
        DataType::Boolean => "bool",
        DataType::Date => "date",
        _ => "text",
    }
}

fn write_csv(df: &DataFrame, path: &Path) {
    let cols: Vec<Column> = df
        .columns()
        .iter()
        .map(|c| if matches!(c.dtype(), DataType::Categorical(..)) { c.cast(&DataType::String).expect("cast") } else { c.clone() })
        .collect();
    let mut df = DataFrame::new(df.height(), cols).expect("frame");
    let f = std::fs::File::create(path).expect("create csv");
    CsvWriter::new(f).finish(&mut df).expect("write csv");
}

/// Run every design's query of `workload` at `rows` and compare with sqlite3; returns the
/// row counts sqlite3 confirmed.
fn check(workload: &str, rows: u64) -> Vec<usize> {
    let plan = framecost::spec::load(Path::new(&format!("workloads/{workload}.yaml"))).expect("workload loads");
    let tables = framecost::table::related::generate_tables(&plan.tables, plan.seed, plan.related, rows).expect("tables");
    let dir = tempfile::tempdir().expect("tempdir");
    let mut schema = serde_json::Map::new();
    for (name, df) in &tables {
        write_csv(df, &dir.path().join(format!("{name}.csv")));
        let cols: Vec<serde_json::Value> = df.columns().iter().map(|c| serde_json::json!([c.name().as_str(), kind(c.dtype())])).collect();
        schema.insert(name.clone(), serde_json::Value::Array(cols));
    }
    std::fs::write(dir.path().join("schema.json"), serde_json::Value::Object(schema).to_string()).expect("schema");
    let mut confirmed = Vec::new();
    for d in &plan.designs {
        assert_eq!(d.steps.len(), 1, "{workload}/{}: one sql step per design", d.name);
        let query = d.steps[0].params.text("query");
        let ctx = RunContext { tables: tables.iter().map(|(n, df)| (n.clone(), df.clone().lazy())).collect(), engine: d.engine, ..RunContext::default() };
        let lf = plan_query(query, &ctx, tables[0].1.clone()).expect("query plans");
        let out = collect(lf, d.engine).expect("query runs");
        assert!(out.height() > 0, "{workload}/{}: an empty result checks nothing", d.name);
        write_csv(&out, &dir.path().join("result.csv"));
        let kinds: Vec<&str> = out.columns().iter().map(|c| kind(c.dtype())).collect();
        std::fs::write(dir.path().join("result.json"), serde_json::to_string(&kinds).expect("json")).expect("kinds");
        std::fs::write(dir.path().join("query.sql"), query).expect("query");
        let run = std::process::Command::new("python3")
            .arg("tests/data/sql/sqlite_check.py")
            .arg(dir.path())
            .output()
            .expect("python3 runs");
        let said = String::from_utf8_lossy(&run.stdout).to_string() + &String::from_utf8_lossy(&run.stderr);
        assert!(run.status.success(), "{workload}/{}: sqlite3 disagrees with polars:\n{said}", d.name);
        let n: usize = said.trim().strip_prefix("ok ").and_then(|x| x.parse().ok()).expect("ok <rows>");
        assert_eq!(n, out.height(), "{workload}/{}", d.name);
        confirmed.push(n);
    }
    confirmed
}

#[test]
fn filter_join_matches_sqlite() {
    let n = check("sql-filter-join", 4000);
    assert_eq!(n.len(), 2);
    assert_eq!(n[0], n[1], "both designs keep the same deliveries");
}

#[test]
fn dedupe_matches_sqlite() {
    let n = check("sql-dedupe", 5000);
    assert_eq!(n.len(), 3);
    assert!(n.iter().all(|&x| x == n[0]));
}

#[test]
fn self_join_matches_sqlite() {
    // One output row per delivery, whichever design.
    assert_eq!(check("sql-self-join", 1500), vec![1500, 1500]);
}

#[test]
fn engines_match_sqlite() {
    // One row per variety of the price list that was delivered (14 at most).
    let n = check("sql-engines", 20_000);
    assert_eq!(n.len(), 2);
    assert!(n[0] <= 14 && n[0] == n[1]);
}
