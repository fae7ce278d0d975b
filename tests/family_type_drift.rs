//! Deterministic evidence for the type-drift family: the dtypes each design ends with,
//! never time. Expectation [common practice, no source]: a column created empty and filled
//! cell by cell can end with a different type than intended unless it starts typed; and
//! writing a value of another type into a typed column casts the whole column. Strict
//! stacking of tables whose dtypes differ fails; relaxed stacking casts to a supertype.

mod common;

use common::run_design;
use framecost::patterns::{OutputFacts, Value};
use polars::prelude::*;

const SPEC: &str = r#"
name: drift-evidence
seed: 5
table:
  columns:
    - {name: crate, kind: key, order: sorted}
    - {name: shed, kind: category, distinct: 6}
    - {name: kilograms, kind: int, range: [4, 30], nulls: 3%}
    - {name: empty_readings, kind: float, nulls: 100%}
sizes: [1k]
designs:
  - {name: empty-cells, steps: [{fill_cells: {column: kilograms, start: empty}}]}
  - {name: typed-cells, steps: [{fill_cells: {column: kilograms, start: typed, declared: float}}]}
  - {name: one-cast, steps: [{cast_column: {column: kilograms, declared: float}}]}
  - {name: empty-cells-no-values, steps: [{fill_cells: {column: empty_readings, start: empty}}]}
  - {name: note-text, steps: [{cast_column: {column: kilograms}}, {write_cell: {column: 2, row: 0.5, value: text}}]}
  - {name: note-null, steps: [{cast_column: {column: kilograms}}, {write_cell: {column: 2, row: 0.5, value: missing}}]}
  - {name: fraction-into-int, steps: [{write_cell: {column: kilograms, row: 0.0, value: fraction}}]}
  - name: strict
    setup: [{split_into_pieces: {parts: 4, column: 2, retype: float}}]
    steps: [{stack_pieces: {mode: strict}}]
  - name: relaxed-float
    setup: [{split_into_pieces: {parts: 4, column: 2, retype: float}}]
    steps: [{stack_pieces: {mode: relaxed}}]
  - name: relaxed-text
    setup: [{split_into_pieces: {parts: 4, column: 2, retype: text}}]
    steps: [{stack_pieces: {mode: relaxed}}]
  - name: conformed-text
    setup: [{split_into_pieces: {parts: 4, column: 2, retype: text}}]
    steps: [{stack_pieces: {mode: conform, column: 2, declared: float}}]
"#;

fn run(plan: &framecost::plan::Plan, name: &str, df: &DataFrame) -> Result<DataFrame, String> {
    let d = common::design(plan, name);
    match run_design(d, common::set_up(d, Value::Frame(df.clone()))?)? {
        Value::Frame(f) => Ok(f),
        _ => Err("not a table".into()),
    }
}

fn dtype(df: &DataFrame, col: &str) -> DataType {
    df.column(col).expect("column").dtype().clone()
}

#[test]
fn the_designs_end_with_the_dtypes_the_trade_expects() {
    let plan = framecost::spec::load_str("drift.yaml", SPEC).expect("spec");
    let n = 4000u64;
    let df = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let nulls = df.column("kilograms").expect("kg").null_count();
    assert!(nulls > 0, "the readings have gaps");

    // Cell by cell into an empty column: the values decide; declared Float64, got Int64.
    let empty = run(&plan, "empty-cells", &df).expect("fills");
    assert_eq!(dtype(&empty, "kilograms"), DataType::Int64, "drift: the readings' own type, not the declared Float64");
    assert_eq!(empty.column("kilograms").expect("kg").null_count(), nulls);
    // No value ever written: the column stays dtype Null.
    let none = run(&plan, "empty-cells-no-values", &df).expect("fills");
    assert_eq!(dtype(&none, "empty_readings"), DataType::Null, "an all-null column filled with nulls has no type at all");
    // Typed with a sentinel: keeps the declared type and agrees with one vectorised cast.
    let typed = run(&plan, "typed-cells", &df).expect("fills");
    let cast = run(&plan, "one-cast", &df).expect("casts");
    assert_eq!(dtype(&typed, "kilograms"), DataType::Float64);
    assert_eq!(framecost::table::fingerprint(&typed), framecost::table::fingerprint(&cast), "typed fill = one cast");
    assert_ne!(framecost::table::fingerprint(&empty), framecost::table::fingerprint(&cast), "the drifted column differs");

    // One value of another type casts the whole column.
    let text = run(&plan, "note-text", &df).expect("writes");
    assert_eq!(dtype(&text, "kilograms"), DataType::String, "a text note turns the numeric column into text");
    let k = ((n - 1) as f64 * 0.5).floor() as usize;
    let col = text.column("kilograms").expect("kg");
    assert_eq!(col.str().expect("text").get(k), Some("re-weigh"));
    assert_eq!(text.height() as u64, n);
    let null = run(&plan, "note-null", &df).expect("writes");
    assert_eq!(dtype(&null, "kilograms"), DataType::Float64, "a null fits any type: no cast");
    let was_null = cast.column("kilograms").expect("kg").get(k).expect("cell").is_null();
    assert_eq!(null.column("kilograms").expect("kg").null_count(), nulls + usize::from(!was_null));
    let frac = run(&plan, "fraction-into-int", &df).expect("writes");
    assert_eq!(dtype(&frac, "kilograms"), DataType::Float64, "a fraction widens an Int64 column to Float64");

    // Stacking pieces whose dtypes differ.
    let err = run(&plan, "strict", &df).err().expect("strict stacking of Int64 and Float64 pieces fails");
    assert!(err.contains("stack_pieces"), "a step error, not a panic: {err}");
    let relaxed = run(&plan, "relaxed-float", &df).expect("stacks");
    assert_eq!(dtype(&relaxed, "kilograms"), DataType::Float64, "supertype of Int64 and Float64");
    assert_eq!(framecost::table::fingerprint(&relaxed), framecost::table::fingerprint(&cast));
    let relaxed_text = run(&plan, "relaxed-text", &df).expect("stacks");
    assert_eq!(dtype(&relaxed_text, "kilograms"), DataType::String, "one text piece drags the column to text");
    let conformed = run(&plan, "conformed-text", &df).expect("stacks");
    assert_eq!(dtype(&conformed, "kilograms"), DataType::Float64, "casting each piece first keeps the schema");
    assert_eq!(framecost::table::fingerprint(&conformed), framecost::table::fingerprint(&cast), "same values as one cast");
    let facts = OutputFacts::of(&Value::Frame(conformed));
    assert_eq!(facts.rows, n);
    assert_eq!(facts.chunks, 1, "stacked pieces are merged into one chunk");
}
