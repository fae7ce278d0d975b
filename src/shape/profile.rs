//! Statistics of one column, measured the same way on a user's sample and on a table
//! generated from the inferred spec — which is what makes the fidelity report a fair
//! comparison.
//!
//! A newcomer must know: every value is reduced to a 64-bit code (integers and dates by
//! value, floats by bit pattern, text interned), so distinct counts, frequencies and runs
//! are one code path for every dtype; quantiles are type 7 (`fit::sample`), over values for
//! numbers and dates and over lengths in characters for text.

use crate::fit::sample::quantile_sorted;
use polars::prelude::*;
use std::collections::{HashMap, HashSet};

/// What a column's values are, before framecost decides on a kind.
#[derive(Debug, Clone, PartialEq)]
pub enum ValueClass {
    Int,
    Float,
    Bool,
    Text,
    Date,
    /// A dtype framecost has no kind for (its name).
    Other(String),
}

/// Measured facts of one column.
#[derive(Debug, Clone)]
pub struct Profile {
    pub name: String,
    pub dtype: String,
    pub class: ValueClass,
    pub rows: usize,
    pub nulls: usize,
    /// Distinct non-null values.
    pub distinct: usize,
    /// Non-null values and distinct values among the even-numbered rows (half the sample,
    /// taken across the whole file so that the file's order does not bias it).
    pub half_nonnull: usize,
    pub half_distinct: usize,
    /// How often each distinct value occurs, most frequent first.
    pub counts: Vec<u64>,
    /// p10, p50, p90 of values (numbers, dates as days) or of lengths (text); None for bool.
    pub quantiles: Option<[f64; 3]>,
    /// Smallest and largest value (numbers, dates as days) or length (text).
    pub min: Option<f64>,
    pub max: Option<f64>,
    /// The non-null values never go down / never go up.
    pub ascending: bool,
    pub descending: bool,
    /// Runs of equal adjacent values in the non-null sequence.
    pub runs: usize,
    /// Places where the next non-null integer is not the previous plus one.
    pub breaks: usize,
    /// Share of `true` among non-null values (bool only).
    pub true_share: Option<f64>,
}

impl Profile {
    pub fn nonnull(&self) -> usize {
        self.rows - self.nulls
    }
    pub fn null_share(&self) -> f64 {
        if self.rows == 0 {
            0.0
        } else {
            self.nulls as f64 / self.rows as f64
        }
    }
    /// Share of the most frequent value among non-null values.
    pub fn top_share(&self) -> Option<f64> {
        let n = self.nonnull();
        self.counts.first().map(|&c| c as f64 / n.max(1) as f64)
    }
    /// Distinct values as a share of non-null values.
    pub fn distinct_share(&self) -> f64 {
        self.distinct as f64 / self.nonnull().max(1) as f64
    }
}

/// The sequence of a column as codes, plus what is needed for order and quantiles.
struct Coded {
    codes: Vec<Option<u64>>,
    /// Numbers for quantiles (values, or lengths for text).
    nums: Vec<f64>,
    ascending: bool,
    descending: bool,
    breaks: usize,
}

fn monotone<T: PartialOrd + Copy>(vals: impl Iterator<Item = T>) -> (bool, bool) {
    let (mut asc, mut desc) = (true, true);
    let mut prev: Option<T> = None;
    for v in vals {
        if let Some(p) = prev {
            asc &= p <= v;
            desc &= p >= v;
        }
        prev = Some(v);
    }
    (asc, desc)
}

fn ints(v: &[Option<i64>]) -> Coded {
    let nn: Vec<i64> = v.iter().flatten().copied().collect();
    let (ascending, descending) = monotone(nn.iter().copied());
    let breaks = nn.windows(2).filter(|w| w[1] != w[0].wrapping_add(1)).count();
    Coded { codes: v.iter().map(|x| x.map(|i| i as u64)).collect(), nums: nn.iter().map(|&i| i as f64).collect(), ascending, descending, breaks }
}

fn code_column(s: &Series) -> Result<(ValueClass, Coded), String> {
    let e = |e: PolarsError| e.to_string();
    let dt = s.dtype().clone();
    if dt.is_integer() {
        let v: Vec<Option<i64>> = s.cast(&DataType::Int64).map_err(e)?.i64().map_err(e)?.iter().collect();
        return Ok((ValueClass::Int, ints(&v)));
    }
    match dt {
        DataType::Date | DataType::Datetime(..) => {
            // Datetimes are measured as their dates: the spec has no time-of-day kind.
            let s = s.cast(&DataType::Date).map_err(e)?;
            let v: Vec<Option<i64>> = s.to_physical_repr().cast(&DataType::Int64).map_err(e)?.i64().map_err(e)?.iter().collect();
            Ok((ValueClass::Date, ints(&v)))
        }
        DataType::Float32 | DataType::Float64 => {
            let v: Vec<Option<f64>> = s.cast(&DataType::Float64).map_err(e)?.f64().map_err(e)?.iter().collect();
            let nn: Vec<f64> = v.iter().flatten().copied().filter(|x| !x.is_nan()).collect();
            let (ascending, descending) = monotone(nn.iter().copied());
            // -0.0 and 0.0 are one value; every NaN is one value.
            let code = |x: f64| if x == 0.0 { 0 } else if x.is_nan() { f64::NAN.to_bits() } else { x.to_bits() };
            Ok((ValueClass::Float, Coded { codes: v.iter().map(|x| x.map(code)).collect(), nums: nn, ascending, descending, breaks: 0 }))
        }
        DataType::Boolean => {
            let v: Vec<Option<bool>> = s.bool().map_err(e)?.iter().collect();
            let (ascending, descending) = monotone(v.iter().flatten().copied());
            Ok((ValueClass::Bool, Coded { codes: v.iter().map(|x| x.map(u64::from)).collect(), nums: Vec::new(), ascending, descending, breaks: 0 }))
        }
        DataType::String | DataType::Categorical(..) | DataType::Enum(..) => {
            let t = s.cast(&DataType::String).map_err(e)?;
            let ca = t.str().map_err(e)?;
            let mut ids: HashMap<&str, u64> = HashMap::new();
            let mut codes = Vec::with_capacity(ca.len());
            let mut nums = Vec::new();
            for v in ca.iter() {
                codes.push(v.map(|x| {
                    let next = ids.len() as u64;
                    *ids.entry(x).or_insert(next)
                }));
                if let Some(x) = v {
                    nums.push(x.chars().count() as f64);
                }
            }
            let (ascending, descending) = monotone(ca.iter().flatten());
            Ok((ValueClass::Text, Coded { codes, nums, ascending, descending, breaks: 0 }))
        }
        other => Ok((ValueClass::Other(other.to_string()), Coded { codes: Vec::new(), nums: Vec::new(), ascending: false, descending: false, breaks: 0 })),
    }
}

/// Measure one column.
pub fn profile(s: &Series) -> Result<Profile, String> {
    let (class, c) = code_column(s)?;
    let rows = s.len();
    let nulls = if matches!(class, ValueClass::Other(_)) { s.null_count() } else { c.codes.iter().filter(|x| x.is_none()).count() };
    let mut freq: HashMap<u64, u64> = HashMap::new();
    let mut half: HashSet<u64> = HashSet::new();
    let mut half_nonnull = 0;
    let mut runs = 0;
    let mut prev: Option<u64> = None;
    for (i, v) in c.codes.iter().enumerate() {
        let Some(v) = *v else { continue };
        *freq.entry(v).or_insert(0) += 1;
        if i % 2 == 0 {
            half.insert(v);
            half_nonnull += 1;
        }
        if prev != Some(v) {
            runs += 1;
        }
        prev = Some(v);
    }
    let mut counts: Vec<u64> = freq.into_values().collect();
    counts.sort_unstable_by(|a, b| b.cmp(a));
    let mut sorted = c.nums.clone();
    sorted.sort_by(f64::total_cmp);
    let quantiles = (!sorted.is_empty()).then(|| [0.1, 0.5, 0.9].map(|p| quantile_sorted(&sorted, p)));
    let true_share = (class == ValueClass::Bool).then(|| {
        let t = c.codes.iter().filter(|x| **x == Some(1)).count();
        t as f64 / (rows - nulls).max(1) as f64
    });
    Ok(Profile {
        name: s.name().to_string(),
        dtype: s.dtype().to_string(),
        quantiles: if class == ValueClass::Bool { None } else { quantiles },
        class,
        rows,
        nulls,
        distinct: counts.len(),
        half_nonnull,
        half_distinct: half.len(),
        counts,
        min: sorted.first().copied(),
        max: sorted.last().copied(),
        ascending: c.ascending,
        descending: c.descending,
        runs,
        breaks: c.breaks,
        true_share,
    })
}

/// Measure every column of a table.
pub fn profile_all(df: &DataFrame) -> Result<Vec<Profile>, String> {
    df.columns().iter().map(|c| profile(c.as_materialized_series())).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_runs_and_quantiles_of_a_small_column() {
        let s = Series::new("x".into(), &[Some(1i64), Some(1), None, Some(2), Some(3), Some(3), Some(3)]);
        let p = profile(&s).expect("profile");
        assert_eq!((p.rows, p.nulls, p.distinct, p.runs), (7, 1, 3, 3));
        assert_eq!(p.counts, vec![3, 2, 1]);
        assert!(p.ascending && !p.descending);
        // Breaks: 1→1 and 1→2? 1→1 is a break (not +1), 1→2 is not, 2→3 not, 3→3 twice.
        assert_eq!(p.breaks, 3);
        // Type 7 over [1,1,2,3,3,3]: p50 = 2.5 (Python statistics.quantiles, inclusive).
        assert_eq!(p.quantiles.expect("q")[1], 2.5);
        assert_eq!(p.top_share(), Some(0.5));
    }

    #[test]
    fn text_is_measured_by_value_and_length() {
        let s = Series::new("t".into(), &["pear", "fig", "pear", "plum"]);
        let p = profile(&s).expect("profile");
        assert_eq!(p.class, ValueClass::Text);
        assert_eq!((p.distinct, p.half_distinct, p.half_nonnull), (3, 1, 2));
        assert_eq!((p.min, p.max), (Some(3.0), Some(4.0)));
        assert!(!p.ascending && !p.descending);
    }

    #[test]
    fn datetimes_are_measured_by_their_dates() {
        // 2001-01-01 00:00 and 23:00 are one date (day 11323 since 1970-01-01); 2001-01-02 another.
        let us: i64 = 1_000_000;
        let v = [978_307_200 * us, (978_307_200 + 23 * 3600) * us, (978_307_200 + 86_400) * us];
        let s = Int64Chunked::new("at".into(), &v).into_datetime(TimeUnit::Microseconds, None).into_series();
        let p = profile(&s).expect("profile");
        assert_eq!(p.class, ValueClass::Date);
        assert_eq!((p.distinct, p.min, p.max), (2, Some(11323.0), Some(11324.0)));
    }
}
