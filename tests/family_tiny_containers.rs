//! Deterministic evidence for the tiny-containers family: allocation counts and bytes, never
//! time. Expectation [common practice, no source]: many tiny containers cost far more than
//! one list of the same values — here at least one allocation per row for the per-row
//! designs against a handful for the native split, and several times the bytes.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use framecost::patterns::{OutputFacts, Value};

const SPEC: &str = r#"
name: tiny-evidence
seed: 9
table:
  columns:
    - {name: farm, kind: category, distinct: 120, length: [6, 14]}
    - {name: parcel, kind: int, range: [1, 4000], nulls: 1%}
    - {name: variety, kind: text, distinct: 14}
    - {name: grade, kind: text, distinct: 4}
sizes: [1k]
designs:
  - {name: series, setup: [{join_text: {first: farm, count: 4}}], steps: [{split_per_row: {container: series}}]}
  - {name: table, setup: [{join_text: {first: farm, count: 4}}], steps: [{split_per_row: {container: table}}]}
  - {name: native, setup: [{join_text: {first: farm, count: 4}}], steps: [split_native]}
"#;

#[test]
fn tiny_containers_allocate_per_row_and_the_native_split_does_not() {
    let plan = framecost::spec::load_str("tiny.yaml", SPEC).expect("spec");
    let n = 20_000u64;
    let df = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let mut seen = Vec::new();
    for d in &plan.designs {
        let v = common::set_up(d, Value::Frame(df.clone())).expect("setup");
        let (a, out) = common::counted(d, v);
        let out = out.expect("splits");
        let f = OutputFacts::of(&out);
        if d.name == "native" {
            // Four parts per label, nulls where a part was null (concat_str gives null).
            let Value::Frame(t) = &out else { panic!("a table") };
            let lists = t.column("parts").expect("parts").list().expect("list").clone();
            let first = lists.get_as_series(0).expect("row 0");
            assert_eq!(first.len(), 4, "farm/parcel/variety/grade");
            assert_eq!(lists.null_count() as u64, df.column("parcel").expect("parcel").null_count() as u64);
        }
        seen.push((d.name.clone(), a, f));
    }
    for (name, a, f) in &seen {
        eprintln!("{name}: {} bytes, {} allocations, dtypes {:?}", a.bytes, a.count, f.dtypes);
        assert_eq!(f.rows, n);
        assert_eq!(f.dtypes, vec![("parts".to_string(), "list[str]".to_string())], "{name}");
        assert_eq!(f.fingerprint, seen[2].2.fingerprint, "{name} gives the native split's lists");
    }
    let native = seen[2].1;
    for (name, a, _) in &seen[..2] {
        assert!(a.count >= n, "{name}: at least one allocation per row ({})", a.count);
        assert!(a.bytes > 4 * native.bytes, "{name}: {} bytes vs native {}", a.bytes, native.bytes);
    }
    assert!(native.count < n / 20, "native split allocates a handful of buffers ({})", native.count);
    // A table per row costs more than a series per row.
    assert!(seen[1].1.count > seen[0].1.count, "table {} vs series {}", seen[1].1.count, seen[0].1.count);
}
