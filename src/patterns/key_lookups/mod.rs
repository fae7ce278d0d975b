//! Key lookups: finding the rows whose key equals each of a list of wanted keys.
//!
//! The job: `probes` wanted keys (crate tags looked up at the packing shed, say) are taken
//! from scattered rows of the table itself, with every eighth one a key that is not there;
//! every design returns, for each probe, every matching row: `probe`, `row` (position in
//! the table) and the value column, ordered by probe then row. The designs differ in how a
//! key is found: binary search on a column flagged sorted, a scan of the whole column per
//! probe, a hash index (built in the timed run or once in `setup:`), or one join against a
//! table of wanted keys. Two-level keys (`first`, `second`) are found through an index on
//! the whole pair (exact) or on the first level only (prefix) and then filtered. A newcomer
//! must know: an index is the family's own value (`key index`, `pair index`), so a design
//! can build it untimed in `setup:` and time only the probes; building it in `steps:` times
//! both, and the difference is the cost of the index.
//!
//! The steps live in `single.rs` (one key column) and `pairs.rs` (two-level keys); this
//! file registers them and holds what they share: the wanted keys, typed key columns and
//! the output table of matches.

mod pairs;
mod single;

pub use pairs::PairIndex;
pub use single::KeyIndex;

use super::{polars_err, Need, ParamDef, ParamKind, StepDef, StepError, Value, ValueKind};
use pairs::{BuildPairIndex, PairsScan, ProbePairIndex};
use polars::prelude::*;
use single::{BuildKeyIndex, JoinWanted, Lookup, MarkSorted, ProbeKeyIndex};

/// The family's own values.
pub const KEY_INDEX: &str = "key index";
pub const PAIR_INDEX: &str = "pair index";

const KEY: ParamDef = ParamDef { name: "key", kind: ParamKind::column(Need::Integer), default: "0", doc: "the integer key column" };
const VALUE: ParamDef = ParamDef { name: "value", kind: ParamKind::column(Need::Any), default: "1", doc: "the column returned with each match" };
const PROBES: ParamDef = ParamDef { name: "probes", kind: ParamKind::count(1, 1_000_000).costing(48.0, 0.0), default: "1000", doc: "wanted keys per run" };
const FIRST: ParamDef = ParamDef { name: "first", kind: ParamKind::column(Need::Integer), default: "0", doc: "the first-level integer key column" };
const SECOND: ParamDef = ParamDef { name: "second", kind: ParamKind::column(Need::Integer), default: "1", doc: "the second-level integer key column" };
const LEVELS: &[&str] = &["full", "prefix"];

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "mark_sorted",
        summary: "check that a column is sorted ascending (no nulls) and set its sorted flag",
        cost_note: "One pass to verify the order, no copy of the values (the flag lives in the column's \
metadata): linear in rows. Meant for `setup:`, so `lookup_sorted` can trust the flag.",
        params: &[ParamDef { name: "column", kind: ParamKind::column(Need::Any), default: "0", doc: "the column" }],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(MarkSorted { column: p.column("column")? })),
    },
    StepDef {
        name: "lookup_sorted",
        summary: "binary-search each wanted key in a key column flagged sorted",
        cost_note: "Two binary searches per probe (first and last match): O(log n) each, no allocation \
beyond the output, so the whole run grows like probes·log n (about constant in rows). Refuses a \
column that is not flagged sorted; a fragmented column is consolidated first (one linear copy).",
        params: &[KEY, VALUE, PROBES],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.5,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(Lookup { key: p.column("key")?, value: p.column("value")?, probes: p.count("probes") as usize, sorted: true })),
    },
    StepDef {
        name: "lookup_scan",
        summary: "scan the whole key column once per wanted key, keeping every matching row",
        cost_note: "Every probe reads all n keys: probes·n comparisons, linear in rows for a fixed number \
of probes (and quadratic if the probes grow with the table). No allocation beyond the output.",
        params: &[KEY, VALUE, PROBES],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.5,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(Lookup { key: p.column("key")?, value: p.column("value")?, probes: p.count("probes") as usize, sorted: false })),
    },
    StepDef {
        name: "build_key_index",
        summary: "build a hash map from each key to the rows that hold it",
        cost_note: "One pass over the keys; the map holds one entry per distinct key plus a small row list \
each (one allocation per distinct key): linear in rows in time and bytes, several times the key \
column's size in memory.",
        params: &[KEY, VALUE],
        takes: ValueKind::Frame,
        gives: ValueKind::Custom(KEY_INDEX),
        memory_factor: 6.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(BuildKeyIndex { key: p.column("key")?, value: p.column("value")? })),
    },
    StepDef {
        name: "probe_key_index",
        summary: "look each wanted key up in a hash index",
        cost_note: "One hash probe per wanted key, O(1) expected: the run grows with probes, about constant \
in rows (cache misses aside). No allocation beyond the output.",
        params: &[PROBES],
        takes: ValueKind::Custom(KEY_INDEX),
        gives: ValueKind::Frame,
        memory_factor: 1.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(ProbeKeyIndex { probes: p.count("probes") as usize })),
    },
    StepDef {
        name: "join_wanted_keys",
        summary: "inner-join a table of wanted keys against the table (with a row number) and sort by probe",
        cost_note: "Numbers the rows (one new column of n), hashes the smaller side and streams the other: \
linear in rows in time and bytes, with the row-number column and the hash table as extra memory. \
Pays the whole build on every run, like a hash index built in the timed region.",
        params: &[KEY, VALUE, PROBES],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 4.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(JoinWanted { key: p.column("key")?, value: p.column("value")?, probes: p.count("probes") as usize })),
    },
    StepDef {
        name: "lookup_pairs_scan",
        summary: "scan both columns of a two-level key once per wanted pair",
        cost_note: "probes·n comparisons of the first level (and of the second where the first matches): \
linear in rows for a fixed number of probes, no allocation beyond the output.",
        params: &[FIRST, SECOND, PROBES],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.5,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(PairsScan { first: p.column("first")?, second: p.column("second")?, probes: p.count("probes") as usize })),
    },
    StepDef {
        name: "build_pair_index",
        summary: "build a hash index on a two-level key: on the whole pair (full) or on the first level only (prefix)",
        cost_note: "One pass over the keys, linear in rows. full: one entry per distinct pair, probes hit \
exactly. prefix: one entry per distinct first level (fewer, longer row lists), so each probe must \
then filter its first-level rows by the second level: cheaper to build, dearer to probe when first \
levels are shared by many rows.",
        params: &[FIRST, SECOND, ParamDef { name: "level", kind: ParamKind::Choice(LEVELS), default: "full", doc: "index the whole pair or only the first level" }],
        takes: ValueKind::Frame,
        gives: ValueKind::Custom(PAIR_INDEX),
        memory_factor: 6.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(BuildPairIndex { first: p.column("first")?, second: p.column("second")?, prefix: p.choice("level") == "prefix" })),
    },
    StepDef {
        name: "probe_pair_index",
        summary: "look each wanted pair up in a pair index (filtering by the second level for a prefix index)",
        cost_note: "One hash probe per wanted pair; with a prefix index, plus a pass over the rows sharing \
the first level. About constant in rows for a full index; grows with rows per first level for a \
prefix index.",
        params: &[PROBES],
        takes: ValueKind::Custom(PAIR_INDEX),
        gives: ValueKind::Frame,
        memory_factor: 1.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(ProbePairIndex { probes: p.count("probes") as usize })),
    },
];

/// The k-th of `probes` probed row positions: scattered, ascending, the same for every
/// design (see `cell_reads::position` for why ascending).
use super::cell_reads::position;

/// Every eighth probe asks for a key that is not in the table.
fn is_miss(k: usize) -> bool {
    k % 8 == 7
}

fn miss_key(k: usize) -> i64 {
    i64::MIN + k as i64
}

/// An integer column as contiguous 64-bit integers (a copy only when it must be cast or
/// consolidated).
fn int_keys(c: &Column, step: &'static str) -> Result<Int64Chunked, StepError> {
    if !c.dtype().is_integer() {
        return Err(StepError::Value { step, message: format!("key column `{}` is {}, not an integer column", c.name(), c.dtype()) });
    }
    let s = c.as_materialized_series().cast(&DataType::Int64).map_err(polars_err(step))?;
    Ok(s.i64().map_err(polars_err(step))?.rechunk().into_owned())
}

/// The contiguous values and validity of a one-chunk array.
fn parts(ca: &Int64Chunked) -> (&[i64], Option<&polars_arrow::bitmap::Bitmap>) {
    match ca.downcast_iter().next() {
        Some(arr) => (arr.values().as_slice(), arr.validity()),
        None => (&[], None),
    }
}

fn valid_at(v: Option<&polars_arrow::bitmap::Bitmap>, i: usize) -> bool {
    v.is_none_or(|b| b.get_bit(i))
}

/// The wanted keys: the key at a scattered row, or a missing key.
fn wanted(keys: &Int64Chunked, probes: usize) -> Vec<Option<i64>> {
    let n = keys.len();
    let (vals, valid) = parts(keys);
    (0..probes)
        .map(|k| {
            if is_miss(k) {
                return Some(miss_key(k));
            }
            let i = position(k, probes, n);
            (i < vals.len() && valid_at(valid, i)).then(|| vals[i])
        })
        .collect()
}

/// `probe`, `row` and (when given) the value column at those rows.
fn matches(step: &'static str, probe: Vec<i64>, rows: Vec<IdxSize>, values: Option<&Column>) -> Result<Value, StepError> {
    let h = probe.len();
    let row: Vec<i64> = rows.iter().map(|&r| r as i64).collect();
    let mut cols = vec![Column::new("probe".into(), probe), Column::new("row".into(), row)];
    if let Some(v) = values {
        if v.name().as_str() == "probe" || v.name().as_str() == "row" {
            return Err(StepError::Value { step, message: format!("the value column may not be called `{}`", v.name()) });
        }
        let idx = IdxCa::from_vec("".into(), rows);
        cols.push(v.take(&idx).map_err(polars_err(step))?);
    }
    Ok(Value::Frame(DataFrame::new(h, cols).map_err(polars_err(step))?))
}

fn no_rows(step: &'static str) -> StepError {
    StepError::Value { step, message: "the table has no rows to look keys up in".into() }
}

/// The matches found so far: for each, the probe's number and the row it found.
#[derive(Default)]
struct Found {
    probe: Vec<i64>,
    rows: Vec<IdxSize>,
}

impl Found {
    /// Probe `k` found row `r`.
    fn push(&mut self, k: usize, r: IdxSize) {
        self.probe.push(k as i64);
        self.rows.push(r);
    }

    /// Probe `k` found each of `rows`.
    fn push_all(&mut self, k: usize, rows: &[IdxSize]) {
        for &r in rows {
            self.push(k, r);
        }
    }

    /// The output table (see [`matches`]).
    fn into_value(self, step: &'static str, values: Option<&Column>) -> Result<Value, StepError> {
        matches(step, self.probe, self.rows, values)
    }
}
