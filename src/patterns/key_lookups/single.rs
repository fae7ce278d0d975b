//! Lookups on one key column: mark a column sorted, binary search or scan per wanted key,
//! a hash index from key to rows (built in the run or in `setup:`, then probed), and one
//! join against a table of wanted keys.

use super::{int_keys, no_rows, parts, valid_at, wanted, Found, KEY_INDEX};
use crate::patterns::{column, column_position, polars_err, ColumnRef, Need, RunContext, Step, StepError, Value};
use polars::prelude::*;
use polars::series::IsSorted;
use std::sync::Arc;

pub(super) struct MarkSorted {
    pub(super) column: ColumnRef,
}

impl Step for MarkSorted {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "mark_sorted";
        let mut df = input.into_frame(NAME)?;
        let at = column_position(&df, &self.column, NAME)?;
        let c = &df.columns()[at];
        if c.null_count() > 0 {
            return Err(StepError::Value { step: NAME, message: format!("column `{}` has nulls; a sorted key must not", c.name()) });
        }
        let s = c.as_materialized_series();
        let ok = s.is_sorted(SortOptions::default()).map_err(polars_err(NAME))?;
        if !ok {
            return Err(StepError::Value { step: NAME, message: format!("column `{}` is not sorted ascending", c.name()) });
        }
        let mut c = c.clone();
        c.set_sorted_flag(IsSorted::Ascending);
        df.replace_column(at, c).map_err(polars_err(NAME))?;
        Ok(Value::Frame(df))
    }
}

pub(super) struct Lookup {
    pub(super) key: ColumnRef,
    pub(super) value: ColumnRef,
    pub(super) probes: usize,
    pub(super) sorted: bool,
}

impl Step for Lookup {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        let name: &'static str = if self.sorted { "lookup_sorted" } else { "lookup_scan" };
        let df = input.into_frame(name)?;
        let kc = column(&df, &self.key, Need::Integer, name)?;
        let vc = column(&df, &self.value, Need::Any, name)?;
        if df.height() == 0 {
            return Err(no_rows(name));
        }
        if self.sorted && kc.is_sorted_flag() != IsSorted::Ascending {
            return Err(StepError::Value {
                step: name,
                message: format!("column `{}` is not flagged sorted ascending (add `mark_sorted` to the design's setup)", kc.name()),
            });
        }
        if self.sorted && kc.null_count() > 0 {
            return Err(StepError::Value { step: name, message: format!("column `{}` has nulls; binary search needs a key without", kc.name()) });
        }
        let keys = int_keys(kc, name)?;
        let want = wanted(&keys, self.probes);
        let (vals, valid) = parts(&keys);
        let mut found = Found::default();
        for (k, w) in want.iter().enumerate() {
            let Some(w) = *w else { continue };
            if self.sorted {
                // The flag promises ascending order without nulls (mark_sorted checked it).
                let lo = vals.partition_point(|&x| x < w);
                let hi = lo + vals[lo..].partition_point(|&x| x <= w);
                for r in lo..hi {
                    found.push(k, r as IdxSize);
                }
            } else {
                for (r, &x) in vals.iter().enumerate() {
                    if x == w && valid_at(valid, r) {
                        found.push(k, r as IdxSize);
                    }
                }
            }
        }
        found.into_value(name, Some(vc))
    }
}

/// A hash index from key to rows, with the columns its probes need.
pub struct KeyIndex {
    pub keys: Int64Chunked,
    pub values: Column,
    pub map: PlHashMap<i64, Vec<IdxSize>>,
}

pub(super) struct BuildKeyIndex {
    pub(super) key: ColumnRef,
    pub(super) value: ColumnRef,
}

impl Step for BuildKeyIndex {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "build_key_index";
        let df = input.into_frame(NAME)?;
        let keys = int_keys(column(&df, &self.key, Need::Integer, NAME)?, NAME)?;
        let values = column(&df, &self.value, Need::Any, NAME)?.clone();
        let mut map: PlHashMap<i64, Vec<IdxSize>> = PlHashMap::default();
        let (vals, valid) = parts(&keys);
        for (r, &x) in vals.iter().enumerate() {
            if valid_at(valid, r) {
                map.entry(x).or_default().push(r as IdxSize);
            }
        }
        Ok(Value::Custom(KEY_INDEX, Arc::new(KeyIndex { keys, values, map })))
    }
}

pub(super) struct ProbeKeyIndex {
    pub(super) probes: usize,
}

impl Step for ProbeKeyIndex {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "probe_key_index";
        let ix = input.into_custom::<KeyIndex>(NAME, KEY_INDEX)?;
        if ix.keys.is_empty() {
            return Err(no_rows(NAME));
        }
        let mut found = Found::default();
        for (k, w) in wanted(&ix.keys, self.probes).into_iter().enumerate() {
            if let Some(rows) = w.and_then(|w| ix.map.get(&w)) {
                found.push_all(k, rows);
            }
        }
        found.into_value(NAME, Some(&ix.values))
    }
}

pub(super) struct JoinWanted {
    pub(super) key: ColumnRef,
    pub(super) value: ColumnRef,
    pub(super) probes: usize,
}

impl Step for JoinWanted {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "join_wanted_keys";
        let df = input.into_frame(NAME)?;
        let n = df.height();
        if n == 0 {
            return Err(no_rows(NAME));
        }
        let keys = int_keys(column(&df, &self.key, Need::Integer, NAME)?, NAME)?;
        let vc = column(&df, &self.value, Need::Any, NAME)?.clone();
        let vname = vc.name().clone();
        if vname.as_str() == "probe" || vname.as_str() == "row" {
            return Err(StepError::Value { step: NAME, message: format!("the value column may not be called `{vname}`") });
        }
        let want = wanted(&keys, self.probes);
        let m = want.len();
        let wanted_df = DataFrame::new(
            m,
            vec![Column::new("probe".into(), (0..m as i64).collect::<Vec<_>>()), Column::new("__wanted".into(), want)],
        )
        .map_err(polars_err(NAME))?;
        let table = DataFrame::new(n, vec![keys.with_name("__key".into()).into_series().into_column(), vc])
            .map_err(polars_err(NAME))?
            .with_row_index("__row".into(), None)
            .map_err(polars_err(NAME))?;
        let out = wanted_df
            .lazy()
            .join(table.lazy(), [col("__wanted")], [col("__key")], JoinArgs::new(JoinType::Inner))
            .sort(["probe", "__row"], SortMultipleOptions::default())
            .select([col("probe"), col("__row").cast(DataType::Int64).alias("row"), col(vname.clone())])
            .collect()
            .map_err(polars_err(NAME))?;
        Ok(Value::Frame(out))
    }
}
