//! Lookups on a two-level key (`first`, `second`): a scan of both columns per wanted pair,
//! and a hash index on the whole pair (exact) or on the first level only (prefix, whose
//! probes then filter by the second level).

use super::{int_keys, is_miss, miss_key, no_rows, parts, position, valid_at, Found, PAIR_INDEX};
use crate::patterns::{column, ColumnRef, Need, RunContext, Step, StepError, Value};
use polars::prelude::*;
use std::sync::Arc;

fn wanted_pairs(a: &Int64Chunked, b: &Int64Chunked, probes: usize) -> Vec<Option<(i64, i64)>> {
    let n = a.len();
    let (av, avalid) = parts(a);
    let (bv, bvalid) = parts(b);
    (0..probes)
        .map(|k| {
            let i = position(k, probes, n);
            if i >= av.len() || i >= bv.len() || !valid_at(avalid, i) || !valid_at(bvalid, i) {
                return None;
            }
            // A miss shares its first level with a real row, so a prefix index finds
            // candidates and must reject them on the second level.
            Some((av[i], if is_miss(k) { miss_key(k) } else { bv[i] }))
        })
        .collect()
}

fn pair_columns(df: &DataFrame, first: &ColumnRef, second: &ColumnRef, step: &'static str) -> Result<(Int64Chunked, Int64Chunked), StepError> {
    if df.height() == 0 {
        return Err(no_rows(step));
    }
    Ok((int_keys(column(df, first, Need::Integer, step)?, step)?, int_keys(column(df, second, Need::Integer, step)?, step)?))
}

pub(super) struct PairsScan {
    pub(super) first: ColumnRef,
    pub(super) second: ColumnRef,
    pub(super) probes: usize,
}

impl Step for PairsScan {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "lookup_pairs_scan";
        let df = input.into_frame(NAME)?;
        let (a, b) = pair_columns(&df, &self.first, &self.second, NAME)?;
        let (av, avalid) = parts(&a);
        let (bv, bvalid) = parts(&b);
        let mut found = Found::default();
        for (k, w) in wanted_pairs(&a, &b, self.probes).into_iter().enumerate() {
            let Some((x, y)) = w else { continue };
            for r in 0..av.len() {
                if av[r] == x && bv[r] == y && valid_at(avalid, r) && valid_at(bvalid, r) {
                    found.push(k, r as IdxSize);
                }
            }
        }
        found.into_value(NAME, None)
    }
}

enum PairMap {
    Full(PlHashMap<(i64, i64), Vec<IdxSize>>),
    Prefix(PlHashMap<i64, Vec<IdxSize>>),
}

/// A hash index on a two-level key.
pub struct PairIndex {
    first: Int64Chunked,
    second: Int64Chunked,
    map: PairMap,
}

pub(super) struct BuildPairIndex {
    pub(super) first: ColumnRef,
    pub(super) second: ColumnRef,
    pub(super) prefix: bool,
}

impl Step for BuildPairIndex {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "build_pair_index";
        let df = input.into_frame(NAME)?;
        let (a, b) = pair_columns(&df, &self.first, &self.second, NAME)?;
        let map = {
            let (av, avalid) = parts(&a);
            let (bv, bvalid) = parts(&b);
            let ok = |r: usize| valid_at(avalid, r) && valid_at(bvalid, r);
            if self.prefix {
                let mut m: PlHashMap<i64, Vec<IdxSize>> = PlHashMap::default();
                for r in (0..av.len()).filter(|&r| ok(r)) {
                    m.entry(av[r]).or_default().push(r as IdxSize);
                }
                PairMap::Prefix(m)
            } else {
                let mut m: PlHashMap<(i64, i64), Vec<IdxSize>> = PlHashMap::default();
                for r in (0..av.len()).filter(|&r| ok(r)) {
                    m.entry((av[r], bv[r])).or_default().push(r as IdxSize);
                }
                PairMap::Full(m)
            }
        };
        Ok(Value::Custom(PAIR_INDEX, Arc::new(PairIndex { first: a, second: b, map })))
    }
}

pub(super) struct ProbePairIndex {
    pub(super) probes: usize,
}

impl Step for ProbePairIndex {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "probe_pair_index";
        let ix = input.into_custom::<PairIndex>(NAME, PAIR_INDEX)?;
        let (bv, _) = parts(&ix.second);
        let mut found = Found::default();
        for (k, w) in wanted_pairs(&ix.first, &ix.second, self.probes).into_iter().enumerate() {
            let Some((x, y)) = w else { continue };
            match &ix.map {
                PairMap::Full(m) => {
                    if let Some(rows) = m.get(&(x, y)) {
                        found.push_all(k, rows);
                    }
                }
                PairMap::Prefix(m) => {
                    if let Some(rows) = m.get(&x) {
                        // Rows in the index already have a valid second level.
                        for &r in rows.iter().filter(|&&r| bv.get(r as usize) == Some(&y)) {
                            found.push(k, r);
                        }
                    }
                }
            }
        }
        found.into_value(NAME, None)
    }
}
