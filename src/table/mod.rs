//! Synthetic tables: a plan's column list → a polars DataFrame of n rows, deterministic.
//!
//! Every cell is computed from (seed, column name, row) by [`rng::Stream`], so the same
//! plan and seed give the same table bit for bit, and a column is unaffected by its
//! neighbours. Orders other than `random` are made after drawing (sorting, runs). A
//! newcomer must know: [`fingerprint`] hashes contents in row order independent of chunking,
//! which is what lets differently-built outputs be compared; and every column is filled by
//! `fill.rs`'s loops from a per-row closure, so keep those closures free of per-row branches
//! on what is fixed for the column (write one closure per case instead): that is what lets
//! them vectorise.

mod fill;
mod fingerprint;
pub mod permute;
pub mod related;
pub mod rng;
mod text;
pub mod write;

use crate::plan::{ColumnPlan, RangePlan};
use crate::spec::model::{ColumnKind, Order};
use polars::prelude::*;
use polars_arrow::bitmap::Bitmap;
use rayon::prelude::*;
use rng::{Alias, Stream};
use std::ops::Range;

pub use fingerprint::{deep_copy, fingerprint};

pub(crate) const VALUES: u64 = 1;
const NULLS: u64 = 2;
const SHUFFLE: u64 = 3;
const DUPES: u64 = 4;
const WORDS: u64 = 5;
/// A large prime used to scatter pool ranks over a value range (a bijection mod d when d is
/// not a multiple of it).
pub(crate) const SCATTER: u64 = 2_654_435_761;

/// Build the synthetic table of `rows` rows.
pub fn generate(columns: &[ColumnPlan], seed: u64, rows: u64) -> PolarsResult<DataFrame> {
    // Columns are independent (no shared generator state), so they are built in parallel,
    // and long columns are themselves drawn in parallel chunks.
    let cols: Vec<Column> = columns.par_iter().map(|c| column(c, seed, rows, 0..rows, None)).collect::<PolarsResult<_>>()?;
    DataFrame::new(rows as usize, cols)
}

/// Rows `span` of a table of `total` rows: the same values as slicing the whole table, made
/// without making the rest where the columns allow it ([`related::chunk_blocker`] says
/// which do not). `ref_rows(c)` gives a referencing column its referenced table's rows.
pub fn generate_span(
    columns: &[ColumnPlan],
    seed: u64,
    total: u64,
    span: Range<u64>,
    ref_rows: &(dyn Fn(&ColumnPlan) -> Option<u64> + Sync),
) -> PolarsResult<DataFrame> {
    let len = span.end - span.start;
    let cols: Vec<Column> =
        columns.par_iter().map(|c| column(c, seed, total, span.clone(), ref_rows(c))).collect::<PolarsResult<_>>()?;
    DataFrame::new(len as usize, cols)
}

/// Which rows are null (None when the column has none).
fn validity(c: &ColumnPlan, seed: u64, span: Range<u64>) -> Option<Bitmap> {
    if c.nulls <= 0.0 {
        return None;
    }
    let st = Stream::new(seed, &c.name, NULLS);
    let cut = (c.nulls * u64::MAX as f64) as u64;
    let (start, rows) = (span.start, span.end - span.start);
    Some(fill::bits(rows, |i| st.at(start + i) >= cut))
}

/// Values of a column drawn from a pool of `d` (pool rank k → `value(k)`), in the column's
/// order: ranks uniform, or Zipf when the column is skewed.
fn ranked<T: Copy + PartialOrd + Send>(c: &ColumnPlan, seed: u64, rows: u64, span: Range<u64>, d: u64, value: impl Fn(u64) -> T + Sync) -> Vec<T> {
    let st = Stream::new(seed, &c.name, VALUES);
    // Two loops, not one with a test per row, so each stays branch-free.
    match (c.skew > 0.0).then(|| Alias::zipf(d, c.skew)) {
        Some(a) => ordered(c, rows, span, |i| value(a.draw(st.at(i)))),
        None => ordered(c, rows, span, |i| value(st.below(i, d))),
    }
}

/// Rows `span` of a column in random or clustered order holding `look[k % p]` for each
/// row's pool rank k (p = `look.len()`, smaller than d only when the pool was cut to the
/// table's rows).
fn pooled<T: Copy + Send + Sync>(c: &ColumnPlan, seed: u64, span: Range<u64>, d: u64, look: &[T]) -> Vec<T> {
    let st = Stream::new(seed, &c.name, VALUES);
    let p = look.len() as u64;
    // SAFETY: every index is reduced below p, the table's length.
    let at = |k: u64| unsafe { *look.get_unchecked(k as usize) };
    let alias = (c.skew > 0.0).then(|| Alias::zipf(d, c.skew));
    // One loop per case, so none tests per row what is fixed for the column.
    match (&alias, p < d) {
        (Some(a), false) => spread(c, span, |i| at(a.draw(st.at(i)))),
        (Some(a), true) => spread(c, span, |i| at(a.draw(st.at(i)) % p)),
        (None, false) => spread(c, span, |i| at(st.below(i, d))),
        (None, true) => spread(c, span, |i| at(st.below(i, d) % p)),
    }
}

/// Largest pool whose values are computed once into a table rather than per row.
const POOL_TABLE: u64 = 1 << 16;

/// `value(k)` for pool ranks k in `0..d`, through a table computed once when the pool is
/// small and the span at least as long (a table read instead of 128-bit arithmetic per row).
fn pool_values<T: Copy + PartialOrd + Send + Sync>(
    c: &ColumnPlan,
    seed: u64,
    rows: u64,
    span: Range<u64>,
    d: u64,
    value: impl Fn(u64) -> T + Sync,
) -> Vec<T> {
    if d <= POOL_TABLE && d <= span.end - span.start {
        let table: Vec<T> = (0..d).map(&value).collect();
        // SAFETY: ranks are below d, the table's length.
        ranked(c, seed, rows, span, d, |k| unsafe { *table.get_unchecked(k as usize) })
    } else {
        ranked(c, seed, rows, span, d, value)
    }
}

/// Produce the values of rows `span` (of `rows`) from a per-row drawing function, in the
/// column's order. Random and clustered orders make only the span; sorted orders make the
/// whole column and slice it.
pub(crate) fn ordered<T: Copy + PartialOrd + Send>(c: &ColumnPlan, rows: u64, span: Range<u64>, draw: impl Fn(u64) -> T + Sync) -> Vec<T> {
    match c.order {
        Order::Random | Order::Clustered => spread(c, span, draw),
        Order::Sorted | Order::Reverse => {
            let mut v: Vec<T> = fill::collect(0..rows, draw);
            v.par_sort_unstable_by(|a, b| a.partial_cmp(b).unwrap_or(std::cmp::Ordering::Equal));
            if c.order == Order::Reverse {
                v.reverse();
            }
            slice_span(v, rows, span)
        }
    }
}

/// Rows `span` of a column in random or clustered order (row i drawn as i, or as its run
/// `i / run`): made for the span alone.
fn spread<T: Copy + Send>(c: &ColumnPlan, span: Range<u64>, draw: impl Fn(u64) -> T + Sync) -> Vec<T> {
    match c.order {
        Order::Clustered => fill::collect_runs(span, c.run, draw),
        _ => fill::collect(span, draw),
    }
}

/// The `span` part of a whole column (the whole vector when the span covers it).
fn slice_span<T: Copy>(v: Vec<T>, rows: u64, span: Range<u64>) -> Vec<T> {
    if span.start == 0 && span.end == rows {
        v
    } else {
        v[span.start as usize..span.end as usize].to_vec()
    }
}

/// The k-th of d distinct integers spread over [lo, hi] (scattered so that frequent ranks
/// under skew are not all at the low end).
fn pooled_int(k: u64, d: u64, lo: i64, hi: i64) -> i64 {
    let span = (hi as i128 - lo as i128) as u128;
    if d <= 1 {
        return lo;
    }
    let pos = if d % SCATTER == 0 { k } else { (k as u128 * SCATTER as u128 % d as u128) as u64 };
    (lo as i128 + (pos as u128 * span / (d as u128 - 1)) as i128) as i64
}

/// An int (or date) column's values, each passed through `conv` (the storage type).
fn int_values<T: Copy + PartialOrd + Send + Sync>(
    c: &ColumnPlan,
    seed: u64,
    rows: u64,
    span: Range<u64>,
    lo: i64,
    hi: i64,
    conv: impl Fn(i64) -> T + Sync,
) -> Vec<T> {
    let width = (hi as i128 - lo as i128 + 1) as u128;
    match c.distinct {
        Some(d) => {
            let d = d.min(width.min(u64::MAX as u128) as u64);
            pool_values(c, seed, rows, span, d, |k| conv(pooled_int(k, d, lo, hi)))
        }
        None => {
            let st = Stream::new(seed, &c.name, VALUES);
            if width > u64::MAX as u128 {
                ordered(c, rows, span, |i| conv(st.at(i) as i64))
            } else {
                let width = width as u64;
                // lo + the draw, taken modulo 2⁶⁴ (the sum is in [lo, hi], so it is exact).
                ordered(c, rows, span, |i| conv(lo.wrapping_add(st.below(i, width) as i64)))
            }
        }
    }
}

fn float_values(c: &ColumnPlan, seed: u64, rows: u64, span: Range<u64>, lo: f64, hi: f64) -> Vec<f64> {
    match c.distinct {
        Some(d) => pool_values(c, seed, rows, span, d, |k| {
            if d <= 1 {
                lo
            } else {
                let pos = if d % SCATTER == 0 { k } else { (k as u128 * SCATTER as u128 % d as u128) as u64 };
                lo + (hi - lo) * pos as f64 / (d - 1) as f64
            }
        }),
        None => {
            let st = Stream::new(seed, &c.name, VALUES);
            ordered(c, rows, span, |i| lo + (hi - lo) * st.unit(i))
        }
    }
}

/// Unique keys 0..rows in the column's order, then a share replaced by earlier rows' keys.
fn key_values(c: &ColumnPlan, seed: u64, rows: u64, span: Range<u64>) -> Vec<i64> {
    if c.order == Order::Sorted && c.duplicates <= 0.0 {
        // Row i holds key i: made for the span alone.
        return (span.start as i64..span.end as i64).collect();
    }
    let st = Stream::new(seed, &c.name, SHUFFLE);
    let mut v: Vec<i64> = match c.order {
        Order::Sorted => fill::collect(0..rows, |i| i as i64),
        Order::Reverse => fill::collect(0..rows, |i| rows as i64 - 1 - i as i64),
        Order::Random => permute::random_order(&st, rows),
        Order::Clustered => {
            // Sorted runs of `run` keys, the runs themselves in shuffled order.
            let run = c.run.max(1) as usize;
            let blocks = (rows as usize).div_ceil(run);
            let mut order: Vec<usize> = (0..blocks).collect();
            for i in (1..order.len()).rev() {
                let j = st.below(i as u64, i as u64 + 1) as usize;
                order.swap(i, j);
            }
            let mut v = Vec::with_capacity(rows as usize);
            for b in order {
                v.extend((b * run) as i64..((b + 1) * run).min(rows as usize) as i64);
            }
            v
        }
    };
    if c.duplicates > 0.0 {
        let du = Stream::new(seed, &c.name, DUPES);
        let cut = (c.duplicates * u64::MAX as f64) as u64;
        v = permute::with_duplicates(&v, &du, cut);
        match c.order {
            Order::Sorted => v.par_sort_unstable(),
            Order::Reverse => v.par_sort_unstable_by(|a, b| b.cmp(a)),
            _ => {}
        }
    }
    slice_span(v, rows, span)
}

/// The k-th word of a pool of `d`: a fixed-width base-26 code of k (so words are distinct
/// and sort in rank order) followed by filler letters up to the word's own length.
fn word(seed: u64, name: &str, k: u64, d: u64, len: (u32, u32)) -> String {
    let mut digits = 1u32;
    while 26u128.pow(digits) < d as u128 {
        digits += 1;
    }
    let st = Stream::new(seed, name, WORDS);
    let want = (len.0 + st.below(k, (len.1 - len.0 + 1) as u64) as u32).max(digits);
    let mut out = String::with_capacity(want as usize);
    let mut code = Vec::with_capacity(digits as usize);
    let mut x = k;
    for _ in 0..digits {
        code.push(b'a' + (x % 26) as u8);
        x /= 26;
    }
    code.reverse();
    out.push_str(std::str::from_utf8(&code).unwrap_or("a"));
    const FILL: &[u8] = b"aeioulnrstmkp";
    for j in digits..want {
        let w = st.at(k.wrapping_mul(131).wrapping_add(j as u64 + 1));
        out.push(FILL[(w % FILL.len() as u64) as usize] as char);
    }
    out
}

fn column(c: &ColumnPlan, seed: u64, rows: u64, span: Range<u64>, ref_rows: Option<u64>) -> PolarsResult<Column> {
    let name: PlSmallStr = c.name.as_str().into();
    let valid = validity(c, seed, span.clone());
    let s: Series = match c.kind {
        ColumnKind::Int => {
            let (lo, hi) = match c.range {
                RangePlan::Int(a, b) => (a, b),
                _ => (0, 1_000_000),
            };
            let v = match ref_rows {
                Some(n) => related::reference_values(c, seed, rows, span, n),
                None => int_values(c, seed, rows, span, lo, hi, |x| x),
            };
            Int64Chunked::from_vec_validity(name, v, valid).into_series()
        }
        ColumnKind::Key => Int64Chunked::from_vec_validity(name, key_values(c, seed, rows, span), valid).into_series(),
        ColumnKind::Float => {
            let (lo, hi) = match c.range {
                RangePlan::Float(a, b) => (a, b),
                _ => (0.0, 1.0),
            };
            Float64Chunked::from_vec_validity(name, float_values(c, seed, rows, span, lo, hi), valid).into_series()
        }
        ColumnKind::Date => {
            let (lo, hi) = match c.range {
                RangePlan::Date(a, b) => (a as i64, b as i64),
                _ => (18262, 21914),
            };
            // Dates are days in i32; the range is checked to fit.
            let v: Vec<i32> = int_values(c, seed, rows, span, lo, hi, |x| x as i32);
            Int32Chunked::from_vec_validity(name, v, valid).into_date().into_series()
        }
        ColumnKind::Bool => {
            let st = Stream::new(seed, &c.name, VALUES);
            let cut = (c.true_share * u64::MAX as f64) as u64;
            let ca = if c.order == Order::Random {
                // Straight into bits, 64 rows per word, in parallel (the span alone).
                let start = span.start;
                BooleanChunked::from_bitmap(name, fill::bits(span.end - span.start, |i| st.at(start + i) < cut))
            } else {
                BooleanChunked::from_slice(name, &ordered(c, rows, span, |i| st.at(i) < cut))
            };
            match valid {
                Some(bm) => ca.with_validity(Some(bm)),
                None => ca,
            }
            .into_series()
        }
        ColumnKind::Text | ColumnKind::Category => {
            let d = c.distinct.unwrap_or(100).max(1);
            let pool: Vec<String> =
                (0..d.min(rows.max(1)) as usize).into_par_iter().with_min_len(1 << 10).map(|k| word(seed, &c.name, k as u64, d, c.length)).collect();
            // Ranks beyond the pool built (only when d > rows) are folded into it.
            match (c.order, c.kind) {
                (Order::Sorted | Order::Reverse, _) => {
                    // Sorted by rank (the words sort in rank order), then looked up.
                    let r = ranked(c, seed, rows, span, d, |k| k);
                    if c.kind == ColumnKind::Category {
                        text::category(name, &pool, &r, valid)?
                    } else {
                        text::text(name, &pool, &r, valid)
                    }
                }
                (_, ColumnKind::Category) => {
                    let (dtype, ids) = text::register(&pool)?;
                    let codes = if c.skew > 0.0 && ids.len() as u64 == d {
                        // The Zipf table gives ids directly (one table read fewer per row).
                        let st = Stream::new(seed, &c.name, VALUES);
                        let a = Alias::zipf(d, c.skew).relabel(|k| ids[k as usize]);
                        spread(c, span, |i| a.draw(st.at(i)) as u32)
                    } else {
                        pooled(c, seed, span, d, &ids)
                    };
                    text::category_from_ids(name, &dtype, codes, valid)?
                }
                _ => match text::pool_views(&pool) {
                    Some((views, buffer)) => text::text_from_views(name, pooled(c, seed, span, d, &views), buffer, valid),
                    None => text::text(name, &pool, &ranked(c, seed, rows, span, d, |k| k), valid),
                },
            }
        }
    };
    Ok(s.into_column())
}
