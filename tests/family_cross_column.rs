//! Deterministic evidence for the cross-column family: dtypes, shapes, totals and allocated
//! bytes, never time. Expectation [common practice, no source]: a reduction across columns
//! of mixed types goes through a common type (often text), losing both speed and meaning.
//! Here: transposing the mixed ledger yields text columns, transposing only the numbers
//! yields Float64, and the transposes allocate many times what a horizontal sum does.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use common::run_design;
use framecost::patterns::{OutputFacts, ParamValue, Value};
use polars::prelude::*;

const SPEC: &str = r#"
name: cross-evidence
seed: 8
table:
  columns:
    - {name: crate, kind: key, order: sorted}
    - {name: farm, kind: category, distinct: 120, length: [6, 14]}
    - {name: top_kg, kind: float, range: [2.0, 9.0]}
    - {name: middle_kg, kind: float, range: [2.0, 9.0]}
    - {name: bottom_kg, kind: int, range: [2, 9]}
    - {name: picked_on, kind: date}
    - {name: variety, kind: text, distinct: 14, length: [5, 10]}
sizes: [1k]
designs:
  - {name: function, steps: [{sum_across: {first: top_kg, count: 3, how: function, decimals: 3}}]}
  - {name: arithmetic, steps: [{sum_across: {first: top_kg, count: 3, how: arithmetic, decimals: 3}}]}
  - {name: transpose-numeric, steps: [{select_columns: {first: top_kg, count: 3}}, transpose_rows, {sum_transposed: {first: 0, count: 3, decimals: 3}}]}
  - {name: transpose-all, steps: [transpose_rows, {sum_transposed: {first: 2, count: 3, decimals: 3}}]}
  - {name: only-transpose-all, steps: [transpose_rows]}
  - {name: only-transpose-numeric, steps: [{select_columns: {first: top_kg, count: 3}}, transpose_rows]}
  - {name: by-position, steps: [{sum_across: {first: 2, count: 3, how: function, decimals: 3}}]}
"#;

#[test]
fn transposing_mixed_columns_goes_through_text_and_costs_far_more() {
    let plan = framecost::spec::load_str("cross.yaml", SPEC).expect("spec");
    let n = 3000u64;
    let df = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let d = |name: &str| common::design(&plan, name);
    let frame = |v: Value| match v {
        Value::Frame(f) => f,
        _ => panic!("a table"),
    };

    // The dtype change: the mixed ledger transposes to text, the numbers alone to Float64.
    let all = frame(run_design(d("only-transpose-all"), Value::Frame(df.clone())).expect("transposes"));
    assert_eq!(all.width() as u64, n, "one column per input row");
    assert_eq!(all.height(), df.width(), "one cell per input column");
    assert!(all.columns().iter().all(|c| c.dtype() == &DataType::String), "mixed types become text");
    let num = frame(run_design(d("only-transpose-numeric"), Value::Frame(df.clone())).expect("transposes"));
    assert!(num.columns().iter().all(|c| c.dtype() == &DataType::Float64), "ints and floats become Float64");

    // Same totals from every design, checked against a left-to-right sum done here.
    let names = ["function", "arithmetic", "transpose-numeric", "transpose-all"];
    let mut bytes = Vec::new();
    let mut facts = Vec::new();
    for name in names {
        let (alloc, out) = common::counted(d(name), Value::Frame(df.clone()));
        let out = out.expect("sums");
        bytes.push(alloc.bytes);
        facts.push(OutputFacts::of(&out));
        if name == "arithmetic" {
            let t = frame(out);
            let total = t.column("total").expect("total").f64().expect("f64").clone();
            let top = df.column("top_kg").expect("c").f64().expect("f64").clone();
            let bottom = df.column("bottom_kg").expect("c").i64().expect("i64").clone();
            let row = 17usize;
            let mid = df.column("middle_kg").expect("c").f64().expect("f64").get(row).expect("v");
            let want = top.get(row).expect("v") + mid + bottom.get(row).expect("v") as f64;
            let got = total.get(row).expect("total");
            assert!((got - want).abs() <= 0.0005 + 1e-12, "row {row}: {got} vs {want}");
        }
    }
    for (i, f) in facts.iter().enumerate() {
        assert_eq!(f.rows, n);
        assert_eq!(f.dtypes, vec![("total".to_string(), "f64".to_string())], "{}", names[i]);
        assert_eq!(f.fingerprint, facts[0].fingerprint, "{} gives the same rounded totals", names[i]);
    }
    eprintln!("bytes: {:?}", names.iter().zip(&bytes).collect::<Vec<_>>());
    assert!(bytes[2] > 5 * bytes[1], "transposing the numbers: {} vs {}", bytes[2], bytes[1]);
    assert!(bytes[3] > 5 * bytes[2], "transposing everything through text: {} vs {}", bytes[3], bytes[2]);

    // The older form, columns by position, sums the same cells.
    let by_position = run_design(d("by-position"), Value::Frame(df.clone())).expect("sums");
    assert_eq!(OutputFacts::of(&by_position).fingerprint, facts[0].fingerprint);

    // Summing text is refused, not guessed: by the checker at its place, and by the step
    // on a table the checker never saw.
    let bad = SPEC.replace("by-position, steps: [{sum_across: {first: 2, count: 3, how: function, decimals: 3}}]}", "by-position, steps: [{sum_across: {first: picked_on, count: 2}}]}");
    let problems = common::lint_problems(&bad);
    assert!(problems.iter().any(|p| p.contains("column `picked_on` holds dates") && p.contains("needs a numeric column")), "{problems:?}");
    let err = common::run_bare("sum_across", &[("first", common::at(5)), ("count", ParamValue::Count(2))], &df).err().expect("text cannot be summed");
    assert!(err.contains("not a numeric column"), "{err}");
}
