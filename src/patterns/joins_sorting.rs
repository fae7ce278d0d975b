//! Joins and sorting: matching a table to itself on a key, and putting rows in key order.
//!
//! The job: pair every crate with every crate of the same parcel (a cross-check of weights
//! between crates picked together) and hand the pairs on sorted by parcel. The designs
//! differ in what they know about the key's order: a hash join ignores it; a merge join
//! walks two sorted keys side by side; polars' sort returns at once when the key carries a
//! *sorted flag*, and sorts in full when it does not — even if the data happen to be in
//! order already. A newcomer must know: a key value that occurs m times on the left and k
//! times on the right yields m·k rows, so duplicate keys on both sides make the output grow
//! with the sum of m·k over the keys — quadratic when each key's rows grow with the table.
//! In this build (polars without its `performant` feature) polars' own join does not use
//! the sorted flag; `merge_join` is framecost's own sorted-merge join, to show what the
//! flag could buy.

use super::{column, column_position, polars_err, ColumnRef, Need, ParamDef, ParamKind, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;
use polars::series::IsSorted;

const COLUMN: ParamDef = ParamDef { name: "column", kind: ParamKind::column(Need::Any), default: "0", doc: "the key column" };
/// The merge compares keys as integers.
const MERGE_KEY: ParamDef =
    ParamDef { name: "column", kind: ParamKind::column(Need::IntegerBacked), default: "0", doc: "the key column (integers, keys, dates or categories)" };

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "flag_sorted",
        summary: "mark the key column as sorted ascending (after checking it, unless told to trust it)",
        cost_note: "Setting the flag is constant time and allocates nothing but the table's column list. \
With verify: true the step first reads the key once to check its order (linear time, no copy) and \
fails if it is not ascending; with verify: false a wrong flag silently gives wrong joins and sorts.",
        params: &[
            COLUMN,
            ParamDef { name: "verify", kind: ParamKind::Flag, default: "true", doc: "check the order before flagging" },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(FlagSorted { column: p.column("column")?, verify: p.flag("verify") })),
    },
    StepDef {
        name: "hash_join",
        summary: "inner-join the table to itself on the key with polars' hash join (left then right order kept)",
        cost_note: "Builds a hash table of one side's keys and probes it with the other: expected linear \
time in the input rows plus the output rows. The output holds Σ m·k rows over the keys (m, k the \
key's count on each side); with duplicate keys on both sides that sum, and the bytes written, can \
grow much faster than the input.",
        params: &[COLUMN],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 4.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(SelfJoin { column: p.column("column")?, merge: false })),
    },
    StepDef {
        name: "merge_join",
        summary: "inner-join the table to itself by walking the sorted key (needs the sorted flag)",
        cost_note: "Walks both sorted keys once, emitting every pair of rows in each run of equal keys: \
linear in the input plus the output, with no hash table (less memory, sequential access). Refuses \
keys without the ascending sorted flag. Its output is in key order and carries the flag, so a \
following sort on the key is free.",
        params: &[MERGE_KEY],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 4.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(SelfJoin { column: p.column("column")?, merge: true })),
    },
    StepDef {
        name: "sort_rows",
        summary: "sort the table by the key column, stable (equal keys keep their order)",
        cost_note: "When the key carries the ascending sorted flag polars returns the table as is: \
constant time, nothing allocated. Without the flag it sorts in full — O(n log n) comparisons (a \
pattern-defeating sort is near linear on data already in order) and then gathers every column \
into new buffers, so bytes grow linearly with the rows either way.",
        params: &[COLUMN],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(SortRows { column: p.column("column")? })),
    },
];

/// The key's position and name in `df`.
fn key_column(step: &'static str, df: &DataFrame, key: &ColumnRef) -> Result<(usize, PlSmallStr), StepError> {
    let at = column_position(df, key, step)?;
    Ok((at, df.columns()[at].name().clone()))
}

/// The key as i64 values (integer, date and other integer-backed keys only).
fn key_values(step: &'static str, c: &Column) -> Result<Vec<Option<i64>>, StepError> {
    let s = c.as_materialized_series();
    let phys = s.to_physical_repr();
    if !phys.dtype().is_integer() {
        return Err(StepError::Value {
            step,
            message: format!("key column `{}` has dtype {}; this step needs an integer or date key", s.name(), s.dtype()),
        });
    }
    let as_i64 = phys.cast(&DataType::Int64).map_err(polars_err(step))?;
    let ca = as_i64.i64().map_err(polars_err(step))?;
    Ok(ca.iter().collect())
}

/// Ascending with nulls first (polars' default order), checked in one pass.
fn is_ascending(keys: &[Option<i64>]) -> bool {
    keys.windows(2).all(|w| match (w[0], w[1]) {
        (None, _) => true,
        (Some(_), None) => false,
        (Some(a), Some(b)) => a <= b,
    })
}

struct FlagSorted {
    column: ColumnRef,
    verify: bool,
}

impl Step for FlagSorted {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "flag_sorted";
        let df = input.into_frame(NAME)?;
        let (at, name) = key_column(NAME, &df, &self.column)?;
        if self.verify {
            let keys = key_values(NAME, &df.columns()[at])?;
            if !is_ascending(&keys) {
                return Err(StepError::Value { step: NAME, message: format!("column `{name}` is not in ascending order") });
            }
        }
        let height = df.height();
        let mut cols = df.into_columns();
        cols[at].set_sorted_flag(IsSorted::Ascending);
        Ok(Value::Frame(DataFrame::new(height, cols).map_err(polars_err(NAME))?))
    }
}

struct SelfJoin {
    column: ColumnRef,
    merge: bool,
}

impl Step for SelfJoin {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        let step: &'static str = if self.merge { "merge_join" } else { "hash_join" };
        let df = input.into_frame(step)?;
        let (at, key) = key_column(step, &df, &self.column)?;
        if !self.merge {
            let mut args = JoinArgs::new(JoinType::Inner);
            args.maintain_order = MaintainOrderJoin::LeftRight;
            let out = df.join(&df, [key.as_str()], [key.as_str()], args, None).map_err(polars_err(step))?;
            return Ok(Value::Frame(out));
        }
        let kc = column(&df, &self.column, Need::IntegerBacked, step)?;
        if kc.is_sorted_flag() != IsSorted::Ascending {
            return Err(StepError::Value {
                step,
                message: format!("key `{key}` is not flagged sorted ascending (run `flag_sorted` first)"),
            });
        }
        let keys = key_values(step, kc)?;
        let (li, ri) = merge_pairs(&keys, &keys);
        let left_idx = IdxCa::from_vec("l".into(), li);
        let right_idx = IdxCa::from_vec("r".into(), ri);
        let left = df.take(&left_idx).map_err(polars_err(step))?;
        let right = df.drop(key.as_str()).map_err(polars_err(step))?.take(&right_idx).map_err(polars_err(step))?;
        let height = left.height();
        let mut cols = left.into_columns();
        for c in right.into_columns() {
            let clash = cols.iter().any(|l| l.name() == c.name());
            let name: PlSmallStr = if clash { format!("{}_right", c.name()).into() } else { c.name().clone() };
            cols.push(c.with_name(name));
        }
        cols[at].set_sorted_flag(IsSorted::Ascending);
        Ok(Value::Frame(DataFrame::new(height, cols).map_err(polars_err(step))?))
    }
}

/// Row pairs of an inner join of two ascending keys (nulls never match), ordered by left
/// row, then right row.
pub fn merge_pairs(left: &[Option<i64>], right: &[Option<i64>]) -> (Vec<IdxSize>, Vec<IdxSize>) {
    let (mut li, mut ri) = (Vec::new(), Vec::new());
    let (mut i, mut j) = (0usize, 0usize);
    while i < left.len() && left[i].is_none() {
        i += 1;
    }
    while j < right.len() && right[j].is_none() {
        j += 1;
    }
    while i < left.len() && j < right.len() {
        let (Some(a), Some(b)) = (left[i], right[j]) else { break };
        if a < b {
            i += 1;
        } else if a > b {
            j += 1;
        } else {
            let mut j_end = j;
            while j_end < right.len() && right[j_end] == Some(a) {
                j_end += 1;
            }
            while i < left.len() && left[i] == Some(a) {
                for r in j..j_end {
                    li.push(i as IdxSize);
                    ri.push(r as IdxSize);
                }
                i += 1;
            }
            j = j_end;
        }
    }
    (li, ri)
}

struct SortRows {
    column: ColumnRef,
}

impl Step for SortRows {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "sort_rows";
        let df = input.into_frame(NAME)?;
        let (_, key) = key_column(NAME, &df, &self.column)?;
        let out = df
            .sort([key.as_str()], SortMultipleOptions::default().with_maintain_order(true))
            .map_err(polars_err(NAME))?;
        Ok(Value::Frame(out))
    }
}
