//! Type drift: a column whose dtype ends up other than the schema declares.
//!
//! The job: the shed's schema declares `kilograms` as Float64, but the small shed's scale
//! reports whole kilograms and one shed exports its readings as text. Filling a column
//! created empty (all nulls, dtype Null) one cell at a time lets each written value decide
//! the dtype — it ends as whatever the readings happened to be (Int64 here), not the
//! declared Float64; a column created typed (with a sentinel in every cell) keeps its type.
//! Writing one value of another type into a typed column casts the whole column. Stacking
//! pieces whose dtypes differ either fails (strict), or silently widens to a common
//! supertype (relaxed — text, if one piece is text), unless each piece is cast to the
//! declared schema first. A newcomer must know: the evidence here is the output's dtypes
//! (recorded with every point), and the designs that drift are *meant* to disagree with
//! the ones that keep the schema — the workload declares that in `outputs_differ`.
//!
//! The steps live in `cells.rs` (a column filled or written cell by cell) and `pieces.rs`
//! (pieces of a table stacked back); this file registers them.

mod cells;
mod pieces;

pub use pieces::Pieces;

use super::{polars_err, Need, ParamDef, ParamKind, Params, StepDef, StepError, ValueKind};
use cells::{CastColumn, FillCells, WriteCell};
use pieces::{SplitIntoPieces, StackPieces};
use polars::prelude::*;

const DECLARED: &[&str] = &["float", "int", "text"];
const COLUMN: ParamDef = ParamDef { name: "column", kind: ParamKind::column(Need::Any), default: "0", doc: "the column" };
const DECLARED_PARAM: ParamDef =
    ParamDef { name: "declared", kind: ParamKind::Choice(DECLARED), default: "float", doc: "the dtype the schema declares: Float64, Int64 or String" };
/// The name of the value `split_into_pieces` passes to `stack_pieces`.
pub const PIECES: &str = "table pieces";

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "fill_cells",
        summary: "rebuild a column by writing its values one cell at a time into a new column, created empty or typed",
        cost_note: "Linear: one write per row into a cell-addressable buffer. With start: empty the column \
begins with dtype Null and every value of a wider kind than the column holds (bool < int < float < \
text) first converts every cell written so far (one O(n) copy per widening), and the column ends \
with the dtype of the values seen — not the declared one (drift). With start: typed the column \
begins in the declared dtype, every cell holding a sentinel (NaN, the smallest Int64, or empty \
text), and each written value is converted to it: no widening, no drift. Bytes ≈ one buffer of \
the column, plus a copy per widening.",
        params: &[
            COLUMN,
            ParamDef { name: "start", kind: ParamKind::Choice(&["empty", "typed"]), default: "empty", doc: "create the new column all-null (untyped) or typed with a sentinel" },
            DECLARED_PARAM,
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(FillCells { column: p.column("column")?, typed: p.choice("start") == "typed", declared: declared(p) })),
    },
    StepDef {
        name: "cast_column",
        summary: "cast one column to the declared dtype in one vectorised pass",
        cost_note: "One pass writing a new buffer of the declared dtype: linear time, bytes ≈ one column \
(nothing when the column already has that dtype). Fails, rather than guess, when a value cannot be \
represented (strict cast).",
        params: &[COLUMN, DECLARED_PARAM],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(CastColumn { column: p.column("column")?, declared: declared(p) })),
    },
    StepDef {
        name: "write_cell",
        summary: "write one value (a text note, a missing value, or a fraction) into one cell of a typed column",
        cost_note: "Columns are immutable shared buffers, so changing one cell copies the column (linear \
time and bytes for a single value). If the value's type does not fit the column, the whole column \
is first cast to the common supertype — a text note turns a numeric column into text (String): \
the dtype drifts and every later numeric operation on it fails or must parse.",
        params: &[
            COLUMN,
            ParamDef { name: "row", kind: ParamKind::Number { min: 0.0, max: 1.0 }, default: "0.5", doc: "which row, as a share of the table's rows" },
            ParamDef { name: "value", kind: ParamKind::Choice(&["text", "missing", "fraction"]), default: "text", doc: "the value written: the note `re-weigh`, a missing value (null), or 0.5" },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(WriteCell { column: p.column("column")?, row: p.number("row"), value: p.choice("value").to_string() })),
    },
    StepDef {
        name: "split_into_pieces",
        summary: "cut the table into equal pieces, every other one with a column re-typed (as another shed's export would be)",
        cost_note: "Slicing is free; each re-typed piece costs one cast of its column (linear in its rows). \
Usually set-up for `stack_pieces`.",
        params: &[
            ParamDef { name: "parts", kind: ParamKind::per_rows(1, 1_000_000).costing(1024.0, 0.0), default: "8", doc: "number of pieces" },
            COLUMN,
            ParamDef { name: "retype", kind: ParamKind::Choice(&["float", "text", "none"]), default: "text", doc: "dtype of the column in the odd-numbered pieces" },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Custom(PIECES),
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(SplitIntoPieces { parts: p.count("parts").max(1) as usize, column: p.column("column")?, retype: p.choice("retype").to_string() })),
    },
    StepDef {
        name: "stack_pieces",
        summary: "stack table pieces into one table: strict, conformed to the declared dtype, or relaxed to a supertype",
        cost_note: "Linear in the rows: the pieces' chunks are collected, then merged into one chunk per \
column. mode: strict fails at the first piece whose dtypes differ; conform first casts the column \
of every piece to the declared dtype (one pass each); relaxed lets polars cast every piece to the \
common supertype of the pieces — correct values, but the dtype drifts (to text as soon as one \
piece holds the column as text).",
        params: &[
            ParamDef { name: "mode", kind: ParamKind::Choice(&["strict", "conform", "relaxed"]), default: "strict", doc: "how differing dtypes are handled" },
            COLUMN,
            DECLARED_PARAM,
        ],
        takes: ValueKind::Custom(PIECES),
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(StackPieces { mode: p.choice("mode").to_string(), column: p.column("column")?, declared: declared(p) })),
    },
];

fn declared(p: &Params) -> DataType {
    match p.choice("declared") {
        "int" => DataType::Int64,
        "text" => DataType::String,
        _ => DataType::Float64,
    }
}

/// Put `c` in place of the column of the same name, keeping its position.
fn replace(step: &'static str, mut df: DataFrame, c: Column) -> Result<DataFrame, StepError> {
    df.with_column(c).map_err(polars_err(step))?;
    Ok(df)
}
