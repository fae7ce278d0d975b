//! Row-wise work: one new value per row from several columns, by a user function called
//! per row or by column expressions.
//!
//! The job: a crate's payout in cents, `(a − b) × rate`, where `a` and `b` are integer
//! columns (gross and tare grams, say) and the rate is 13 when the boolean column `flag`
//! is true and 10 otherwise (false or null); the payout is null when `a` or `b` is null.
//! The table comes back with a `payout` column added. The designs differ only in who walks
//! the rows: the same user function fed each row as dynamically typed values (a fresh row
//! per call, or one reused row), fed typed values from zipped column iterators, or no user
//! function at all (one column expression). A newcomer must know: the user function and
//! the expression implement the same rule, including how nulls fall, so the outputs agree
//! cell for cell; what differs is the work per row.

use super::{column, column_position, polars_err, ColumnRef, Need, ParamDef, ParamKind, Params, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::frame::row::Row;
use polars::prelude::*;

const ACCESS: &[&str] = &["row", "row_reused", "typed"];
const OUT: &str = "payout";

const A: ParamDef = ParamDef { name: "a", kind: ParamKind::column(Need::Integer), default: "0", doc: "the integer column of the gross weight" };
const B: ParamDef = ParamDef { name: "b", kind: ParamKind::column(Need::Integer), default: "1", doc: "the integer column subtracted (tare)" };
const FLAG: ParamDef = ParamDef { name: "flag", kind: ParamKind::column(Need::Boolean), default: "2", doc: "the boolean column that raises the rate" };

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "payout_per_row",
        summary: "call a user function once per row to compute (a − b) × rate and add it as a column",
        cost_note: "Linear in rows, but with a large constant per row. access: row builds a fresh row of \
dynamically typed values for every row (one allocation per row and one value per column of the \
table, whether used or not); row_reused refills one row (no allocation per row, still every column \
read through the table); typed zips the three typed columns (no table lookups, a plain function call \
per row). One new column of n values either way. Common practice: element-by-element access through \
a table API costs at least 10× more per element than plain array work.",
        params: &[A, B, FLAG, ParamDef { name: "access", kind: ParamKind::Choice(ACCESS), default: "row", doc: "how the function gets each row's values" }],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| {
            Ok(Box::new(PerRow {
                cols: three(p)?,
                access: match p.choice("access") {
                    "row_reused" => Access::RowReused,
                    "typed" => Access::Typed,
                    _ => Access::Row,
                },
            }))
        },
    },
    StepDef {
        name: "payout_expression",
        summary: "compute (a − b) × rate as one column expression and add it as a column",
        cost_note: "Whole-column kernels (subtract, choose, multiply) over contiguous buffers: linear in \
rows with a small constant, a few temporary columns of n values.",
        params: &[A, B, FLAG],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(Expression { cols: three(p)? })),
    },
];

/// The user function: the payout of one crate.
fn payout(a: Option<i64>, b: Option<i64>, organic: Option<bool>) -> Option<i64> {
    let rate = if organic == Some(true) { 13 } else { 10 };
    Some(a?.wrapping_sub(b?).wrapping_mul(rate))
}

fn int_of(v: &AnyValue) -> Option<i64> {
    match v {
        AnyValue::Int64(x) => Some(*x),
        _ => None,
    }
}

fn bool_of(v: &AnyValue) -> Option<bool> {
    match v {
        AnyValue::Boolean(x) => Some(*x),
        _ => None,
    }
}

/// The gross, tare and flag columns of the parameters.
fn three(p: &Params) -> Result<[ColumnRef; 3], super::BuildError> {
    Ok([p.column("a")?, p.column("b")?, p.column("flag")?])
}

/// Check the three columns and return their positions and names.
fn check(df: &DataFrame, [a, b, f]: &[ColumnRef; 3], step: &'static str) -> Result<([usize; 3], [PlSmallStr; 3]), StepError> {
    let get = |c: &ColumnRef, need: Need, want: DataType| -> Result<(usize, PlSmallStr), StepError> {
        let col = column(df, c, need, step)?;
        if col.dtype() != &want {
            return Err(StepError::ColumnKind { step, column: col.name().to_string(), dtype: col.dtype().to_string(), need: need.label() });
        }
        Ok((column_position(df, c, step)?, col.name().clone()))
    };
    if df.get_column_index(OUT).is_some() {
        return Err(StepError::Value { step, message: format!("the table already has a column `{OUT}`") });
    }
    let (a, b, f) = (get(a, Need::Integer, DataType::Int64)?, get(b, Need::Integer, DataType::Int64)?, get(f, Need::Boolean, DataType::Boolean)?);
    Ok(([a.0, b.0, f.0], [a.1, b.1, f.1]))
}

#[derive(Clone, Copy)]
enum Access {
    Row,
    RowReused,
    Typed,
}

struct PerRow {
    cols: [ColumnRef; 3],
    access: Access,
}

impl Step for PerRow {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "payout_per_row";
        let mut df = input.into_frame(NAME)?;
        let ([a, b, f], [an, bn, fname]) = check(&df, &self.cols, NAME)?;
        let n = df.height();
        let out: Int64Chunked = match self.access {
            Access::Row => {
                let mut v = Vec::with_capacity(n);
                for i in 0..n {
                    let row = df.get_row(i).map_err(polars_err(NAME))?;
                    let r = &row.0;
                    v.push(payout(r.get(a).and_then(int_of), r.get(b).and_then(int_of), r.get(f).and_then(bool_of)));
                }
                v.into_iter().collect()
            }
            Access::RowReused => {
                let mut v = Vec::with_capacity(n);
                let mut row = Row::new(vec![AnyValue::Null; df.width()]);
                for i in 0..n {
                    df.get_row_amortized(i, &mut row).map_err(polars_err(NAME))?;
                    let r = &row.0;
                    v.push(payout(r.get(a).and_then(int_of), r.get(b).and_then(int_of), r.get(f).and_then(bool_of)));
                }
                v.into_iter().collect()
            }
            Access::Typed => {
                let ca = df.column(&an).map_err(polars_err(NAME))?.i64().map_err(polars_err(NAME))?;
                let cb = df.column(&bn).map_err(polars_err(NAME))?.i64().map_err(polars_err(NAME))?;
                let cf = df.column(&fname).map_err(polars_err(NAME))?.bool().map_err(polars_err(NAME))?;
                ca.iter().zip(cb.iter()).zip(cf.iter()).map(|((x, y), o)| payout(x, y, o)).collect()
            }
        };
        df.with_column(out.with_name(OUT.into()).into_series().into_column()).map_err(polars_err(NAME))?;
        Ok(Value::Frame(df))
    }
}

struct Expression {
    cols: [ColumnRef; 3],
}

impl Step for Expression {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "payout_expression";
        let df = input.into_frame(NAME)?;
        let (_, [a, b, f]) = check(&df, &self.cols, NAME)?;
        let rate = when(col(f)).then(lit(13i64)).otherwise(lit(10i64));
        let out = df
            .lazy()
            .with_column(((col(a) - col(b)) * rate).alias(OUT))
            .collect()
            .map_err(polars_err(NAME))?;
        Ok(Value::Frame(out))
    }
}
