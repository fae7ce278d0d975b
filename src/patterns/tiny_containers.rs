//! Tiny containers: splitting a text column into parts.
//!
//! The job: every crate carries a label like `farm/parcel/variety/grade`, and the shed
//! wants its parts as a list per crate. One design builds a tiny container — a one-column
//! series, or a one-column table — for every row and gathers them into a list column; the
//! other asks polars to split the whole column at once into a native list column (one
//! offsets buffer and one buffer of parts). A newcomer must know: a polars series or table
//! is a heavyweight object (name, dtype, reference-counted buffers, validity), so a few
//! strings wrapped in one cost far more than the strings themselves; every design here
//! ends with the same `parts` list column.

use super::{column, column_position, polars_err, ColumnRef, Need, ParamDef, ParamKind, Params, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;

const SEPARATORS: &[&str] = &["/", "-", ",", ";", " "];
const CONTAINERS: &[&str] = &["series", "table"];
const SEP: ParamDef =
    ParamDef { name: "sep", kind: ParamKind::Choice(SEPARATORS), default: "/", doc: "the separator between parts" };
const COLUMN: ParamDef = ParamDef { name: "column", kind: ParamKind::column(Need::Text), default: "0", doc: "the text column" };
/// Name of the output column.
pub const PARTS: &str = "parts";
/// Name of the label column `join_text` makes.
pub const LABEL: &str = "label";

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "join_text",
        summary: "make a one-column table `label` joining a run of columns as text with a separator",
        cost_note: "Casts each chosen column to text and concatenates them row by row into one new \
text column: linear time and bytes (the label's characters). Usually set-up for the split steps.",
        params: &[
            ParamDef { name: "first", kind: ParamKind::columns_from(Need::Any, "count"), default: "0", doc: "the first column joined" },
            ParamDef { name: "count", kind: ParamKind::count(1, super::MAX_POSITION), default: "2", doc: "how many consecutive columns are joined" },
            SEP,
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(JoinText { first: p.column("first")?, count: p.count("count") as usize, sep: sep(p) })),
    },
    StepDef {
        name: "split_per_row",
        summary: "split each row's text into a tiny series (or one-column table) of parts, then gather them into a list column",
        cost_note: "Allocates a whole container per row — a series holds a name, a dtype, an array with \
its buffers and reference counts; a table adds a column list and a schema on top — and then \
copies the parts again into the list column: linear in the rows, but with a per-row constant many \
times the size of the parts themselves (bytes and allocation count ∝ rows × container overhead).",
        params: &[
            COLUMN,
            SEP,
            ParamDef {
                name: "container",
                kind: ParamKind::Choice(CONTAINERS),
                default: "series",
                doc: "what each row's parts are built as: a series, or a one-column table",
            },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 6.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(SplitPerRow { column: p.column("column")?, sep: sep(p), table: p.choice("container") == "table" })),
    },
    StepDef {
        name: "split_native",
        summary: "split the whole text column at once into a native list column (`str().split`)",
        cost_note: "One pass over the text writes every part into one list column (an offsets buffer and \
one text buffer for all parts): linear time and bytes ≈ the parts' characters plus a few bytes \
per part, with a handful of allocations whatever the row count.",
        params: &[COLUMN, SEP],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(SplitNative { column: p.column("column")?, sep: sep(p) })),
    },
];

fn sep(p: &Params) -> &'static str {
    let s = p.choice("sep");
    SEPARATORS.iter().copied().find(|x| *x == s).unwrap_or("/")
}

fn text_column(step: &'static str, df: &DataFrame, c: &ColumnRef) -> Result<StringChunked, StepError> {
    let c = column(df, c, Need::Text, step)?;
    Ok(c.as_materialized_series().str().map_err(polars_err(step))?.clone())
}

struct JoinText {
    first: ColumnRef,
    count: usize,
    sep: &'static str,
}

impl Step for JoinText {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "join_text";
        let df = input.into_frame(NAME)?;
        let first = column_position(&df, &self.first, NAME)?;
        let end = first.saturating_add(self.count);
        if end > df.width() {
            return Err(StepError::Value { step: NAME, message: format!("columns {first}..{end} asked for, but the table has {} columns", df.width()) });
        }
        let exprs: Vec<Expr> = df.columns()[first..end].iter().map(|c| col(c.name().clone()).cast(DataType::String)).collect();
        let out = df.lazy().select([concat_str(exprs, self.sep, false).alias(LABEL)]).collect().map_err(polars_err(NAME))?;
        Ok(Value::Frame(out))
    }
}

struct SplitPerRow {
    column: ColumnRef,
    sep: &'static str,
    table: bool,
}

impl Step for SplitPerRow {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "split_per_row";
        let df = input.into_frame(NAME)?;
        let ca = text_column(NAME, &df, &self.column)?;
        let mut containers: Vec<Option<Series>> = Vec::with_capacity(ca.len());
        for v in ca.iter() {
            let Some(text) = v else {
                containers.push(None);
                continue;
            };
            let parts: Vec<&str> = text.split(self.sep).collect();
            let s = Series::new("part".into(), parts);
            if self.table {
                let tiny = DataFrame::new(s.len(), vec![s.into_column()]).map_err(polars_err(NAME))?;
                let back = tiny.column("part").map_err(polars_err(NAME))?.as_materialized_series().clone();
                containers.push(Some(back));
            } else {
                containers.push(Some(s));
            }
        }
        let mut list: ListChunked = containers.into_iter().collect();
        list.rename(PARTS.into());
        // An all-null column gives no inner type to infer: keep the dtype of the native split.
        let list = if list.dtype() != &DataType::List(Box::new(DataType::String)) {
            list.cast(&DataType::List(Box::new(DataType::String))).map_err(polars_err(NAME))?.list().map_err(polars_err(NAME))?.clone()
        } else {
            list
        };
        let out = DataFrame::new(list.len(), vec![list.into_series().into_column()]).map_err(polars_err(NAME))?;
        Ok(Value::Frame(out))
    }
}

struct SplitNative {
    column: ColumnRef,
    sep: &'static str,
}

impl Step for SplitNative {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "split_native";
        let df = input.into_frame(NAME)?;
        let ca = text_column(NAME, &df, &self.column)?;
        let name = ca.name().clone();
        let out = df
            .lazy()
            .select([col(name).str().split(lit(self.sep)).alias(PARTS)])
            .collect()
            .map_err(polars_err(NAME))?;
        Ok(Value::Frame(out))
    }
}
