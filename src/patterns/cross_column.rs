//! Cross-column reductions: one total per row over several columns.
//!
//! The job: each crate is weighed in layers (top, middle, bottom) and the shed wants the
//! crate's total. A horizontal expression adds the columns row by row in typed buffers.
//! Transposing the table instead turns every row into a column so that an ordinary column
//! reduction can be used — and a column must have one dtype, so a row that mixes numbers
//! with text or dates becomes a column of text, and the numbers must be parsed back.
//! A newcomer must know: `transpose_rows` makes one column per input row, so its cost is
//! dominated by per-column overhead (far more than the cells themselves), and its output
//! dtype is the common type of *all* the table's columns — text as soon as one is text.

use super::{column_position, polars_err, ColumnRef, Need, ParamDef, ParamKind, Params, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;

const HOW: &[&str] = &["function", "arithmetic"];
const DECIMALS: ParamDef = ParamDef {
    name: "decimals",
    kind: ParamKind::count(0, 15),
    default: "6",
    doc: "round the total to this many decimals (half to even), so designs that add in another order agree",
};
const COUNT: ParamDef = ParamDef { name: "count", kind: ParamKind::count(1, super::MAX_POSITION), default: "2", doc: "how many consecutive columns are summed" };
const SUMMED: &[ParamDef] =
    &[ParamDef { name: "first", kind: ParamKind::columns_from(Need::Numeric, "count"), default: "0", doc: "the first column summed" }, COUNT];
const KEPT: &[ParamDef] = &[
    ParamDef { name: "first", kind: ParamKind::columns_from(Need::Any, "count"), default: "0", doc: "the first column kept" },
    ParamDef { name: "count", kind: ParamKind::count(1, super::MAX_POSITION), default: "2", doc: "how many consecutive columns are kept" },
];
/// The transposed table has no column names to go by: its rows are the original columns.
const CELLS: &[ParamDef] = &[
    ParamDef {
        name: "first",
        kind: ParamKind::count(0, super::MAX_POSITION),
        default: "0",
        doc: "position of the first original column summed (0 = first): the first cell of each transposed column",
    },
    COUNT,
];

/// Name of the output column of every reduction here.
pub const TOTAL: &str = "total";

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "sum_across",
        summary: "add consecutive numeric columns row by row into a Float64 `total` (horizontal expression)",
        cost_note: "Reads each of the k columns once and writes one Float64 per row: linear time, bytes ≈ \
8 bytes per row for the result plus one temporary per addition with how: arithmetic (polars' \
horizontal sum keeps a running total). Every value stays typed; nothing goes through text. Note: \
with three or more columns polars' sum_horizontal adds them as a parallel reduction, so the \
order of the additions — and in floating point the last bit of the result — is not left to right; \
the `decimals` rounding makes the designs comparable.",
        params: &[
            SUMMED[0],
            SUMMED[1],
            ParamDef { name: "how", kind: ParamKind::Choice(HOW), default: "function", doc: "polars' sum_horizontal, or a chain of `+`" },
            DECIMALS,
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| {
            Ok(Box::new(SumAcross {
                first: p.column("first")?,
                count: p.count("count") as usize,
                arithmetic: p.choice("how") == "arithmetic",
                decimals: decimals(p),
            }))
        },
    },
    StepDef {
        name: "select_columns",
        summary: "keep only a run of consecutive columns",
        cost_note: "Shares the kept columns' buffers: constant time and bytes (a column list).",
        params: KEPT,
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(SelectColumns { first: p.column("first")?, count: p.count("count") as usize })),
    },
    StepDef {
        name: "transpose_rows",
        summary: "transpose the table: every row becomes a column, in the common dtype of all columns",
        cost_note: "Makes one column per input row, each as long as the table is wide: linear in the cells \
but with a large fixed cost per row (a column's header, name and buffers), so it is many times \
slower per cell than reading columns. The dtype is the supertype of every column — Float64 for \
ints and floats, text (String) as soon as any column is text, a category or a date — and with \
text each number is formatted once here and parsed again by the reduction.",
        params: &[],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 8.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |_| Ok(Box::new(TransposeRows)),
    },
    StepDef {
        name: "sum_transposed",
        summary: "reduce each column of a transposed table over a run of its rows, back into a Float64 `total`",
        cost_note: "For every column (one per original row): cast to Float64 — parsing text when the \
transpose went through text, where anything not a number becomes null and is skipped — then add \
the chosen cells in order. Linear in the cells, with a fixed cost per column that dominates.",
        params: &[CELLS[0], CELLS[1], DECIMALS],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(SumTransposed { first: p.count("first") as usize, count: p.count("count") as usize, decimals: decimals(p) })),
    },
];

fn decimals(p: &Params) -> u32 {
    p.count("decimals").min(15) as u32
}

/// The total column, rounded the same way in every design.
fn rounded_total(step: &'static str, df: DataFrame, decimals: u32) -> Result<DataFrame, StepError> {
    df.lazy()
        .select([col(TOTAL).round(decimals, RoundMode::HalfToEven)])
        .collect()
        .map_err(polars_err(step))
}

fn run_of_columns(step: &'static str, df: &DataFrame, first: &ColumnRef, count: usize) -> Result<Vec<PlSmallStr>, StepError> {
    let first = column_position(df, first, step)?;
    if first.checked_add(count).is_none_or(|end| end > df.width()) {
        return Err(StepError::Value {
            step,
            message: format!("columns {first}..{} asked for, but the table has {} columns", first.saturating_add(count), df.width()),
        });
    }
    Ok(df.columns()[first..first + count].iter().map(|c| c.name().clone()).collect())
}

struct SumAcross {
    first: ColumnRef,
    count: usize,
    arithmetic: bool,
    decimals: u32,
}

impl Step for SumAcross {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "sum_across";
        let df = input.into_frame(NAME)?;
        let names = run_of_columns(NAME, &df, &self.first, self.count)?;
        for n in &names {
            let dt = df.column(n.as_str()).map_err(polars_err(NAME))?.dtype();
            if !Need::Numeric.accepts_dtype(dt) {
                return Err(StepError::ColumnKind { step: NAME, column: n.to_string(), dtype: dt.to_string(), need: Need::Numeric.label() });
            }
        }
        let exprs: Vec<Expr> = names.iter().map(|n| col(n.clone()).cast(DataType::Float64)).collect();
        let total = if self.arithmetic {
            let mut it = exprs.into_iter();
            let first = it.next().ok_or_else(|| StepError::Value { step: NAME, message: "no columns to sum".into() })?;
            it.fold(first, |acc, e| acc + e)
        } else {
            polars::lazy::dsl::sum_horizontal(exprs, false).map_err(polars_err(NAME))?
        };
        let out = df.lazy().select([total.alias(TOTAL)]).collect().map_err(polars_err(NAME))?;
        Ok(Value::Frame(rounded_total(NAME, out, self.decimals)?))
    }
}

struct SelectColumns {
    first: ColumnRef,
    count: usize,
}

impl Step for SelectColumns {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "select_columns";
        let df = input.into_frame(NAME)?;
        let names = run_of_columns(NAME, &df, &self.first, self.count)?;
        Ok(Value::Frame(df.select(names).map_err(polars_err(NAME))?))
    }
}

struct TransposeRows;

impl Step for TransposeRows {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "transpose_rows";
        let mut df = input.into_frame(NAME)?;
        if df.width() == 0 || df.height() == 0 {
            return Err(StepError::Value { step: NAME, message: "cannot transpose an empty table".into() });
        }
        // Categorical columns have no supertype with text in polars' transpose: treat them as
        // the text they display.
        let height = df.height();
        let mut cols = Vec::with_capacity(df.width());
        for c in df.into_columns() {
            cols.push(if matches!(c.dtype(), DataType::Categorical(..) | DataType::Enum(..)) {
                c.cast(&DataType::String).map_err(polars_err(NAME))?
            } else {
                c
            });
        }
        df = DataFrame::new(height, cols).map_err(polars_err(NAME))?;
        let out = df.transpose(None, None).map_err(polars_err(NAME))?;
        Ok(Value::Frame(out))
    }
}

struct SumTransposed {
    first: usize,
    count: usize,
    decimals: u32,
}

impl Step for SumTransposed {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "sum_transposed";
        let df = input.into_frame(NAME)?;
        let end = self.first.saturating_add(self.count);
        if end > df.height() {
            return Err(StepError::Value {
                step: NAME,
                message: format!("cells {}..{end} asked for, but the transposed columns have {} cells", self.first, df.height()),
            });
        }
        let mut totals: Vec<Option<f64>> = Vec::with_capacity(df.width());
        for c in df.columns() {
            let part = c.slice(self.first as i64, self.count);
            let f = part.cast(&DataType::Float64).map_err(polars_err(NAME))?;
            let ca = f.f64().map_err(polars_err(NAME))?;
            // In order, left to right as the columns were; nulls (text that was no number) are skipped.
            let mut acc: Option<f64> = None;
            for v in ca.iter().flatten() {
                acc = Some(acc.map_or(v, |a| a + v));
            }
            totals.push(acc);
        }
        let total = Float64Chunked::from_iter_options(TOTAL.into(), totals.into_iter());
        let out = DataFrame::new(total.len(), vec![total.into_series().into_column()]).map_err(polars_err(NAME))?;
        Ok(Value::Frame(rounded_total(NAME, out, self.decimals)?))
    }
}
