//! Subsets: keeping one stretch of a table's rows, four ways.
//!
//! The job: hand the next stage of a pipeline the rows from `start` (a share of the table)
//! for `share` of its length — the packing shed's afternoon crates, say. A slice only
//! moves offsets and shares the input's buffers; a filter, a gather by index and a deep
//! copy all write new buffers for the rows they keep. A newcomer must know: all four steps
//! keep exactly the same rows in the same order, so their outputs are identical and only
//! their memory behaviour differs — a slice is cheap *because* it keeps the whole parent
//! table's buffers alive.

use super::{polars_err, ParamDef, ParamKind, Params, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;

const RANGE_PARAMS: &[ParamDef] = &[
    ParamDef {
        name: "start",
        kind: ParamKind::Number { min: 0.0, max: 1.0 },
        default: "0.25",
        doc: "first row kept, as a share of the table's rows",
    },
    ParamDef {
        name: "share",
        kind: ParamKind::Number { min: 0.0, max: 1.0 },
        default: "0.5",
        doc: "rows kept, as a share of the table's rows (cut at the table's end)",
    },
];

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "keep_slice",
        summary: "keep a stretch of rows as a zero-copy slice of the input's buffers",
        cost_note: "Moves an offset and a length on every column and shares the parent's buffers: \
allocates a few hundred bytes per column whatever the size (constant bytes). Time is nearly \
constant: a column with nulls counts the nulls left in the kept part of its validity bitmap (one \
popcount over rows/8 bytes), so it creeps up slowly with the rows. The price is hidden: the slice \
keeps the whole parent table alive in memory.",
        params: RANGE_PARAMS,
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(Keep { how: How::Slice, range: RowRange::from(p) })),
    },
    StepDef {
        name: "keep_by_mask",
        summary: "keep a stretch of rows by evaluating a true/false mask and filtering",
        cost_note: "Builds a mask of one value per input row (bytes ∝ all rows, one bit each), then \
filters. polars 0.55 trims the mask's leading and trailing false runs first, so when the kept rows \
are one contiguous run — as here — every column is sliced, not copied: bytes ≈ the mask alone. \
A scattered mask copies the kept rows of every column (bytes ∝ kept rows). Time linear either way.",
        params: RANGE_PARAMS,
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(Keep { how: How::Mask, range: RowRange::from(p) })),
    },
    StepDef {
        name: "keep_by_index",
        summary: "keep a stretch of rows by gathering a list of row numbers",
        cost_note: "Builds one row number per kept row (4 bytes each), then gathers every column's values \
into new buffers: time and bytes grow linearly with the kept rows. Random access per value is \
slower than a straight copy on long columns.",
        params: RANGE_PARAMS,
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(Keep { how: How::Gather, range: RowRange::from(p) })),
    },
    StepDef {
        name: "keep_deep_copy",
        summary: "slice the stretch, then copy it into buffers of its own",
        cost_note: "A slice followed by a copy of every kept value: linear time and bytes in the kept \
rows, and afterwards the parent table can be freed — the trade made when a small subset of a \
large table must outlive it.",
        params: RANGE_PARAMS,
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(Keep { how: How::DeepCopy, range: RowRange::from(p) })),
    },
];

#[derive(Debug, Clone, Copy)]
struct RowRange {
    start: f64,
    share: f64,
}

impl RowRange {
    fn from(p: &Params) -> RowRange {
        RowRange { start: p.number("start").clamp(0.0, 1.0), share: p.number("share").clamp(0.0, 1.0) }
    }
    /// (first row, number of rows) for a table of `height` rows.
    fn resolve(self, height: usize) -> (usize, usize) {
        let off = ((height as f64 * self.start).floor() as usize).min(height);
        let len = ((height as f64 * self.share).floor() as usize).min(height - off);
        (off, len)
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum How {
    Slice,
    Mask,
    Gather,
    DeepCopy,
}

struct Keep {
    how: How,
    range: RowRange,
}

impl Step for Keep {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        let name: &'static str = match self.how {
            How::Slice => "keep_slice",
            How::Mask => "keep_by_mask",
            How::Gather => "keep_by_index",
            How::DeepCopy => "keep_deep_copy",
        };
        let df = input.into_frame(name)?;
        let (off, len) = self.range.resolve(df.height());
        let out = match self.how {
            How::Slice => df.slice(off as i64, len),
            How::Mask => {
                let end = off + len;
                let mask: BooleanChunked =
                    (0..df.height()).map(|i| i >= off && i < end).collect::<BooleanChunked>().with_name("keep".into());
                df.filter(&mask).map_err(polars_err(name))?
            }
            How::Gather => {
                let idx: Vec<IdxSize> = (off..off + len).map(|i| i as IdxSize).collect();
                let idx = IdxCa::from_vec("row".into(), idx);
                df.take(&idx).map_err(polars_err(name))?
            }
            How::DeepCopy => crate::table::deep_copy(&df.slice(off as i64, len)),
        };
        Ok(Value::Frame(out))
    }
}
