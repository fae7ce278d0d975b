//! Column growth: a table that gains derived columns, one at a time or all at once.
//!
//! The job: add `columns` derived columns (one per price tier, say) to a table whose
//! storage may already be fragmented (a table assembled from daily loads and never
//! consolidated; `split_storage` makes such a table in `setup:`). The designs differ in
//! when storage is consolidated: a read that needs contiguous storage (an export, a row
//! view, a hand-over to a library that wants one buffer per column) between additions
//! pays to consolidate the whole table again every time unless the consolidated copy is
//! kept. A newcomer must know: in polars every column is its own buffer, so adding a
//! column does not copy the others (unlike block-stored tables); what fragments is each
//! column's chunk list, and derived columns inherit the chunking of their source.

use super::{column, column_position, polars_err, ColumnRef, Need, ParamDef, ParamKind, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;

const HOW: &[&str] = &["one_at_a_time", "all_at_once"];
const READS: &[&str] = &["between", "between_kept", "after", "none"];
const DTYPES: &[&str] = &["f64", "f32"];

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "split_storage",
        summary: "split every column into `pieces` chunks, like a table appended from daily loads and never consolidated",
        cost_note: "Slices share the original buffers, so this allocates only chunk bookkeeping (linear \
in pieces, not rows). Meant for `setup:`: it gives the fragmented starting point other steps pay for.",
        params: &[ParamDef { name: "pieces", kind: ParamKind::per_rows(1, 1_000_000).costing(256.0, 0.0), default: "64", doc: "chunks per column" }],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(SplitStorage { pieces: p.count("pieces").max(1) as usize })),
    },
    StepDef {
        name: "consolidate_table",
        summary: "copy every fragmented column into one contiguous chunk",
        cost_note: "Copies each column that has more than one chunk into a new buffer (columns already in \
one chunk are shared, not copied): linear in rows × fragmented columns, one full copy of them in \
memory at the peak.",
        params: &[],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |_| Ok(Box::new(ConsolidateTable)),
    },
    StepDef {
        name: "grow_columns",
        summary: "add derived columns (source × tier factor) one at a time or all at once, with consolidating reads between or after",
        cost_note: "Each derived column is one new buffer of n values with the source's chunking. A read \
that needs contiguous storage copies every fragmented column of the table so far: with reads: \
between that is k reads of a table that grows by one column each time, so about k·(w + k/2) column \
copies for k added columns on w existing ones (quadratic in k, linear in rows); between_kept \
consolidates in place, so each column is copied at most once and later derived columns come out \
contiguous; after pays one read of the final table. dtype: f32 changes each new column's type \
after it is made, one more pass and a second buffer per column. Time and bytes grow linearly with \
rows in every case. per_column: k = columns × the table's width, so over a `set: columns` sweep \
reads: between copies about 1.5·w² columns (n² in the columns) and the designs reading once stay linear.",
        params: &[
            ParamDef { name: "source", kind: ParamKind::column(Need::Numeric), default: "0", doc: "the numeric column the new columns derive from" },
            ParamDef { name: "columns", kind: ParamKind::count(1, 10_000).costing(64.0, 8.0), default: "8", doc: "how many derived columns to add" },
            ParamDef { name: "how", kind: ParamKind::Choice(HOW), default: "one_at_a_time", doc: "add each column as it is made, or build them all and add them in one go" },
            ParamDef {
                name: "reads",
                kind: ParamKind::Choice(READS),
                default: "between",
                doc: "a read needing contiguous storage after every addition (copy not kept), after every addition keeping the consolidated storage, once after all additions, or never",
            },
            ParamDef { name: "dtype", kind: ParamKind::Choice(DTYPES), default: "f64", doc: "type of the derived columns; f32 is a type change after each column is made" },
            ParamDef {
                name: "per_column",
                kind: ParamKind::Flag,
                default: "false",
                doc: "add `columns` derived columns for every column the table has, so the number added follows a `set: columns` sweep",
            },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 4.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| {
            Ok(Box::new(GrowColumns {
                source: p.column("source")?,
                columns: p.count("columns").max(1) as usize,
                all_at_once: p.choice("how") == "all_at_once",
                reads: match p.choice("reads") {
                    "between_kept" => Reads::BetweenKept,
                    "after" => Reads::After,
                    "none" => Reads::None,
                    _ => Reads::Between,
                },
                f32: p.choice("dtype") == "f32",
                per_column: p.flag("per_column"),
            }))
        },
    },
];

struct SplitStorage {
    pieces: usize,
}

impl Step for SplitStorage {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "split_storage";
        let df = input.into_frame(NAME)?;
        let n = df.height();
        if n == 0 {
            return Ok(Value::Frame(df));
        }
        let piece = n.div_ceil(self.pieces.min(n));
        let mut cols = Vec::with_capacity(df.width());
        for c in df.columns() {
            let s = c.as_materialized_series().rechunk();
            let mut acc = s.slice(0, piece.min(n));
            let mut off = piece;
            while off < n {
                let part = s.slice(off as i64, piece.min(n - off));
                acc.append(&part).map_err(polars_err(NAME))?;
                off += piece;
            }
            cols.push(acc.into_column());
        }
        Ok(Value::Frame(DataFrame::new(n, cols).map_err(polars_err(NAME))?))
    }
}

struct ConsolidateTable;

impl Step for ConsolidateTable {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        let mut df = input.into_frame("consolidate_table")?;
        df.rechunk_mut();
        Ok(Value::Frame(df))
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Reads {
    Between,
    BetweenKept,
    After,
    None,
}

struct GrowColumns {
    source: ColumnRef,
    columns: usize,
    all_at_once: bool,
    reads: Reads,
    f32: bool,
    per_column: bool,
}

/// Price factor of tier `j`: exact in binary (multiples of 1/8), so every design computes
/// the same bits.
fn factor(j: usize) -> f64 {
    1.0 + j as f64 / 8.0
}

/// A read that needs every column in one contiguous buffer (an export, say): consolidate a
/// copy of each column, then fold its values. With `keep`, the consolidated columns replace
/// the table's own, so the next read finds them contiguous.
fn contiguous_read(df: &mut DataFrame, keep: bool, step: &'static str) -> Result<f64, StepError> {
    let mut fold = 0.0f64;
    let mut replaced: Vec<(usize, Column)> = Vec::new();
    for (i, c) in df.columns().iter().enumerate() {
        let chunked = c.n_chunks() > 1;
        let s = c.as_materialized_series().rechunk();
        fold += match s.dtype() {
            DataType::Float64 => s.f64().map_err(polars_err(step))?.downcast_iter().map(|a| a.values().iter().sum::<f64>()).sum::<f64>(),
            DataType::Float32 => s.f32().map_err(polars_err(step))?.downcast_iter().map(|a| a.values().iter().map(|&v| v as f64).sum::<f64>()).sum::<f64>(),
            _ => s.len() as f64,
        };
        if keep && chunked {
            replaced.push((i, s.into_column()));
        }
    }
    for (i, c) in replaced {
        df.replace_column(i, c).map_err(polars_err(step))?;
    }
    Ok(fold)
}

impl Step for GrowColumns {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "grow_columns";
        let mut df = input.into_frame(NAME)?;
        let src = column(&df, &self.source, Need::Numeric, NAME)?;
        // Found once per run: the new columns go to the end, so the source keeps its place.
        let source = column_position(&df, &self.source, NAME)?;
        let src_name = src.name().to_string();
        let make = |df: &DataFrame, j: usize| -> Result<Column, StepError> {
            // Looked up afresh: with reads kept, the source itself may have been consolidated.
            let s = df.columns()[source].as_materialized_series();
            let s = s.cast(&DataType::Float64).map_err(polars_err(NAME))?;
            let ca = s.f64().map_err(polars_err(NAME))?;
            let out = (ca * factor(j)).with_name(format!("{src_name}_tier{j}").into()).into_series();
            Ok(out.into_column())
        };
        let retype = |c: Column| -> Result<Column, StepError> { c.cast(&DataType::Float32).map_err(polars_err(NAME)) };
        let mut fold = 0.0;
        let count = if self.per_column { self.columns * df.width() } else { self.columns };
        if self.all_at_once {
            let mut new = Vec::with_capacity(count);
            for j in 0..count {
                let c = make(&df, j)?;
                new.push(if self.f32 { retype(c)? } else { c });
            }
            df.hstack_mut(&new).map_err(polars_err(NAME))?;
            if matches!(self.reads, Reads::Between | Reads::BetweenKept) {
                // All columns arrived at once: "between" additions there is a single read.
                fold += contiguous_read(&mut df, self.reads == Reads::BetweenKept, NAME)?;
            }
        } else {
            for j in 0..count {
                let c = make(&df, j)?;
                df.with_column(c).map_err(polars_err(NAME))?;
                if self.f32 {
                    // The type change happens in the table, after the column was added.
                    let at = df.width() - 1;
                    let c = retype(df.columns()[at].clone())?;
                    df.replace_column(at, c).map_err(polars_err(NAME))?;
                }
                match self.reads {
                    Reads::Between => fold += contiguous_read(&mut df, false, NAME)?,
                    Reads::BetweenKept => fold += contiguous_read(&mut df, true, NAME)?,
                    _ => {}
                }
            }
        }
        if self.reads == Reads::After {
            fold += contiguous_read(&mut df, false, NAME)?;
        }
        std::hint::black_box(fold);
        Ok(Value::Frame(df))
    }
}
