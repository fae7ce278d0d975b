//! Single-cell reads: many values read one by one, by row position.
//!
//! The job: read `reads` cells of one numeric column at scattered row positions and add
//! them up (a spot check of crate weights, say). The designs differ in what each read goes
//! through: the table API (a dynamically typed `AnyValue` per cell, or a whole row per
//! read), the typed column (one typed lookup per cell, or one contiguous slice for all
//! reads), or a plain vector copied out of the table first. A newcomer must know: every
//! design ends with the same one-row table (`cells_read`, `sum`), and the positions depend
//! only on the row count, so outputs compare exactly; the cost of a run is set by `reads`,
//! not by the rows, except where a whole column is copied.

use super::{column, column_position, polars_err, ColumnRef, Need, ParamDef, ParamKind, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;
use std::sync::Arc;

const VIA: &[&str] = &["table_cell", "table_row", "typed_get", "slice"];

/// The name of the family's own value: a column copied into a plain vector.
pub const PLAIN_VECTOR: &str = "plain vector";

const COLUMN: ParamDef = ParamDef { name: "column", kind: ParamKind::column(Need::Numeric), default: "0", doc: "the numeric column to read" };
const READS: ParamDef = ParamDef { name: "reads", kind: ParamKind::count(1, 10_000_000), default: "10000", doc: "cells read per run" };

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "read_cells",
        summary: "read `reads` cells of a column one at a time, through the table API, the typed column or one contiguous slice",
        cost_note: "Cost is per read, so it follows `reads`, not the rows (beyond cache misses on a \
bigger column). via: table_cell goes through the table for every cell (column lookup, chunk search, \
an AnyValue to unpack); table_row builds a whole row (one allocation per read, one value per column); \
typed_get does one typed lookup per cell; slice consolidates the column once (a copy only if it has \
several chunks) and then indexes plain memory. Common practice: table-API element access costs at \
least 10× more per element than indexing a plain array.",
        params: &[COLUMN, READS, ParamDef { name: "via", kind: ParamKind::Choice(VIA), default: "table_cell", doc: "what each read goes through" }],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.5,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| {
            Ok(Box::new(ReadCells {
                column: p.column("column")?,
                reads: p.count("reads") as usize,
                via: match p.choice("via") {
                    "table_row" => Via::TableRow,
                    "typed_get" => Via::TypedGet,
                    "slice" => Via::Slice,
                    _ => Via::TableCell,
                },
            }))
        },
    },
    StepDef {
        name: "copy_to_vector",
        summary: "copy one numeric column out of the table into a plain vector of floats with presence flags",
        cost_note: "One pass over the column and two new buffers of n values and n presence flags (9 bytes a row): \
linear in rows in time and bytes, whatever the number of reads that follow.",
        params: &[COLUMN],
        takes: ValueKind::Frame,
        gives: ValueKind::Custom(PLAIN_VECTOR),
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(CopyToVector { column: p.column("column")? })),
    },
    StepDef {
        name: "read_vector_cells",
        summary: "read `reads` cells of a plain vector by position",
        cost_note: "Plain indexing: no allocation, constant cost per read; grows with `reads`, not rows.",
        params: &[READS],
        takes: ValueKind::Custom(PLAIN_VECTOR),
        gives: ValueKind::Frame,
        memory_factor: 1.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(ReadVector { reads: p.count("reads") as usize })),
    },
];

/// The k-th of `count` row positions read in a table of `n` rows: scattered but ascending
/// (one pseudo-random row in each of `count` equal stretches of the table, in table order,
/// as an inspector walking the shelves would pick them), the same for every design.
///
/// Ascending on purpose: reads in random order over a table larger than the processor's
/// caches pay a trip to main memory each (measured here: plain indexing went from about 1 ns
/// to 10 ns per read between 4k and 1M rows), which turns a fixed number of reads into a
/// cost that grows with the table and hides the lesson (per-read overhead). In table order
/// the hardware prefetcher keeps that cost flat.
pub fn position(k: usize, count: usize, n: usize) -> usize {
    let n = n.max(1) as u64;
    let (k, count) = (k as u64, count.max(1) as u64);
    let start = (k as u128 * n as u128 / count as u128) as u64;
    let stretch = (n / count).max(1);
    let jitter = k.wrapping_mul(2_654_435_761).wrapping_add(12_345) % stretch;
    (start + jitter).min(n - 1) as usize
}

/// The output every design ends with.
fn result(step: &'static str, read: i64, sum: f64) -> Result<Value, StepError> {
    let cols = vec![Column::new("cells_read".into(), [read]), Column::new("sum".into(), [sum])];
    Ok(Value::Frame(DataFrame::new(1, cols).map_err(polars_err(step))?))
}

/// Values of a numeric column as 64-bit floats (shared when it already is one).
fn as_f64(c: &Column, step: &'static str) -> Result<Float64Chunked, StepError> {
    let s = c.as_materialized_series().cast(&DataType::Float64).map_err(polars_err(step))?;
    Ok(s.f64().map_err(polars_err(step))?.clone())
}

fn no_rows(step: &'static str) -> StepError {
    StepError::Value { step, message: "the table has no rows to read".into() }
}

#[derive(Clone, Copy)]
enum Via {
    TableCell,
    TableRow,
    TypedGet,
    Slice,
}

struct ReadCells {
    column: ColumnRef,
    reads: usize,
    via: Via,
}

impl Step for ReadCells {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "read_cells";
        let df = input.into_frame(NAME)?;
        column(&df, &self.column, Need::Numeric, NAME)?;
        // Found once per run: the reads below go by position, as before.
        let at = column_position(&df, &self.column, NAME)?;
        let n = df.height();
        if n == 0 {
            return Err(no_rows(NAME));
        }
        let (mut read, mut sum) = (0i64, 0.0f64);
        let mut add = |v: Option<f64>| {
            if let Some(v) = v {
                read += 1;
                sum += v;
            }
        };
        match self.via {
            Via::TableCell => {
                for k in 0..self.reads {
                    // Through the table every time, as a loop over `df[col][i]` would.
                    let c = df.select_at_idx(at).ok_or_else(|| no_rows(NAME))?;
                    let av = c.get(position(k, self.reads, n)).map_err(polars_err(NAME))?;
                    add(av.extract::<f64>());
                }
            }
            Via::TableRow => {
                for k in 0..self.reads {
                    let row = df.get_row(position(k, self.reads, n)).map_err(polars_err(NAME))?;
                    add(row.0.get(at).and_then(|av| av.extract::<f64>()));
                }
            }
            Via::TypedGet => {
                let ca = as_f64(&df.columns()[at], NAME)?;
                for k in 0..self.reads {
                    add(ca.get(position(k, self.reads, n)));
                }
            }
            Via::Slice => {
                let ca = as_f64(&df.columns()[at], NAME)?;
                let ca = ca.rechunk();
                let arr = ca.downcast_iter().next().ok_or_else(|| no_rows(NAME))?;
                let values = arr.values().as_slice();
                match arr.validity() {
                    None => {
                        for k in 0..self.reads {
                            add(values.get(position(k, self.reads, n)).copied());
                        }
                    }
                    Some(valid) => {
                        for k in 0..self.reads {
                            let i = position(k, self.reads, n);
                            add(if i < valid.len() && valid.get_bit(i) { values.get(i).copied() } else { None });
                        }
                    }
                }
            }
        }
        result(NAME, read, sum)
    }
}

/// A column copied into plain memory: the values (0 where null) and whether each is
/// present, kept apart so the values stay 8 bytes a row, as dense as the column itself
/// (an `Option<f64>` per row takes 16 and outgrows the caches at half the rows).
pub struct PlainVector {
    pub values: Vec<f64>,
    pub present: Vec<bool>,
}

struct CopyToVector {
    column: ColumnRef,
}

impl Step for CopyToVector {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "copy_to_vector";
        let df = input.into_frame(NAME)?;
        let c = column(&df, &self.column, Need::Numeric, NAME)?;
        let ca = as_f64(c, NAME)?;
        let mut values = Vec::with_capacity(ca.len());
        let mut present = Vec::with_capacity(ca.len());
        for v in ca.iter() {
            values.push(v.unwrap_or(0.0));
            present.push(v.is_some());
        }
        Ok(Value::Custom(PLAIN_VECTOR, Arc::new(PlainVector { values, present })))
    }
}

struct ReadVector {
    reads: usize,
}

impl Step for ReadVector {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "read_vector_cells";
        let v = input.into_custom::<PlainVector>(NAME, PLAIN_VECTOR)?;
        let n = v.values.len();
        if n == 0 {
            return Err(no_rows(NAME));
        }
        let (mut read, mut sum) = (0i64, 0.0f64);
        for k in 0..self.reads {
            let i = position(k, self.reads, n);
            if v.present[i] {
                read += 1;
                sum += v.values[i];
            }
        }
        result(NAME, read, sum)
    }
}
