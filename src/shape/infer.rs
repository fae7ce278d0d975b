//! From a column's measured profile to the column spec framecost's generator can build —
//! only the keys the spec already has (kind, nulls, distinct, range, order, run, skew,
//! duplicates, length, true_share), so the written workload lints and sweeps.
//!
//! The rules, each chosen to be checkable (the fidelity report checks them on every run):
//! - **kind**: integers that are nearly unique (≥ 90% distinct, ≥ 20 values) and dense
//!   (their span at most twice the count) are a `key`, as is nearly unique text; text with
//!   at most 1000 values each repeated twice on average is a `category`, other text `text`.
//! - **does the distinct count grow with the rows?** Distinct values among the even rows
//!   (half the sample, spread over the whole file so its order cannot bias it) against the
//!   whole: exponent g = ln(d_all / d_half) / ln(n_all / n_half); g ≥ 0.5 grows, else fixed.
//! - **skew**: a Zipf exponent s fitted by least squares to ln(frequency) against
//!   ln(rank), s = −slope, each value weighted by its count (every row counts once), over
//!   the values seen at least 5 times (rarer values' counts are mostly sampling noise; all
//!   values when fewer than 2 reach 5); s below 0.05 is uniform.
//! - **distinct**: the pool the generator draws from is solved so that the expected number
//!   of distinct values seen in the sample's number of draws equals the sample's count,
//!   E = Σ 1 − (1 − p_k)^n with Zipf p_k (the sample shows only the values it happened to
//!   draw); if none does at the fitted skew, the skew is lowered until a pool of exactly
//!   the sample's count shows every value. A growing number or date column whose count is what uniform draws over its
//!   range give, and a float column that is all distinct, get no pool at all.
//! - **order**: sorted / reverse when the non-null values never go down / up; text whose
//!   every value sits in one block is written `sorted` (its labels are synthetic); runs of
//!   equal values at least 4 long and twice what random order gives are `clustered`, the
//!   run capped so that every value is still expected to appear at the sample's size.

use super::profile::{Profile, ValueClass};
use crate::spec::model::{Bound, ColumnKind, ColumnSpec, Order};
use crate::spec::units::Share;

/// A column as inferred: the spec to write (or why it cannot be modelled) and what was
/// measured and decided, as sentences for the YAML comments and the report.
#[derive(Debug, Clone)]
pub struct Inferred {
    pub profile: Profile,
    pub spec: Result<ColumnSpec, String>,
    /// What was measured, one line.
    pub measured: String,
    /// The choices made, one sentence each.
    pub choices: Vec<String>,
    /// Growth exponent of the distinct count (None: too few rows to tell).
    pub growth: Option<f64>,
}

/// Fewest non-null values for a growth exponent or a key.
const MIN_ROWS: usize = 20;
/// Growth exponent from which the distinct count is said to grow with the rows.
pub const GROWS_FROM: f64 = 0.5;
/// Fewest occurrences of a value for it to enter the skew fit.
const SKEW_MIN_COUNT: u64 = 5;
/// Largest pool the solver tries.
const POOL_CAP: u64 = 1_000_000;
/// Chance, at most, that a value is missing from a clustered column at the sample's size.
const MISS_CHANCE: f64 = 0.001;

/// The framecost kind of a column, or why it has none.
pub fn classify(p: &Profile) -> Result<ColumnKind, String> {
    let n = p.nonnull();
    let unique = n >= MIN_ROWS && p.distinct_share() >= 0.9;
    Ok(match &p.class {
        ValueClass::Bool => ColumnKind::Bool,
        ValueClass::Date => ColumnKind::Date,
        ValueClass::Float => ColumnKind::Float,
        ValueClass::Int => {
            let span = p.max.unwrap_or(0.0) - p.min.unwrap_or(0.0) + 1.0;
            if unique && p.min.unwrap_or(-1.0) >= 0.0 && span <= 2.0 * n as f64 {
                ColumnKind::Key
            } else {
                ColumnKind::Int
            }
        }
        ValueClass::Text if unique => ColumnKind::Key,
        ValueClass::Text if p.distinct <= 1000 && p.distinct * 2 <= n => ColumnKind::Category,
        ValueClass::Text => ColumnKind::Text,
        ValueClass::Other(dt) => {
            return Err(format!("its dtype `{dt}` has no framecost kind (int, float, bool, text, category, date, key)"));
        }
    })
}

/// Growth exponent of the distinct count between the even-row half and the whole.
pub fn growth_exponent(p: &Profile) -> Option<f64> {
    let (n, nh) = (p.nonnull() as f64, p.half_nonnull as f64);
    if p.nonnull() < MIN_ROWS || p.half_distinct == 0 || nh >= n {
        return None;
    }
    Some(((p.distinct as f64 / p.half_distinct as f64).ln() / (n / nh).ln()).max(0.0))
}

/// Zipf exponent of the frequency–rank curve: least squares of ln(count) on ln(rank), each
/// value weighted by its count (so every row counts once, and the frequent values that
/// decide hot keys are not outvoted by the long tail), over the values seen at least 5 times
/// (or all of them when fewer than 2 are); 0 when below 0.05.
pub fn zipf_exponent(p: &Profile) -> f64 {
    let mut freq: Vec<f64> = p.counts.iter().take_while(|&&c| c >= SKEW_MIN_COUNT).map(|&c| c as f64).collect();
    if freq.len() < 2 {
        freq = p.counts.iter().map(|&c| c as f64).collect();
    }
    if freq.len() < 2 {
        return 0.0;
    }
    let pts: Vec<(f64, f64, f64)> = freq.iter().enumerate().map(|(k, &c)| (((k + 1) as f64).ln(), c.ln(), c)).collect();
    let w: f64 = pts.iter().map(|p| p.2).sum();
    let xm = pts.iter().map(|p| p.2 * p.0).sum::<f64>() / w;
    let ym = pts.iter().map(|p| p.2 * p.1).sum::<f64>() / w;
    let sxx: f64 = pts.iter().map(|p| p.2 * (p.0 - xm).powi(2)).sum();
    let sxy: f64 = pts.iter().map(|p| p.2 * (p.0 - xm) * (p.1 - ym)).sum();
    let slope = if sxx > 0.0 { sxy / sxx } else { 0.0 };
    if -slope >= 0.05 && slope.is_finite() {
        (-slope).min(10.0)
    } else {
        0.0
    }
}

/// Expected distinct values seen in `n` draws from a pool of `d` with Zipf exponent `s`.
pub fn expected_seen(d: u64, s: f64, n: f64) -> f64 {
    let w: Vec<f64> = (1..=d).map(|k| (k as f64).powf(-s)).collect();
    let total: f64 = w.iter().sum();
    w.iter().map(|x| -(n * (-(x / total)).ln_1p()).exp_m1()).sum()
}

/// The smallest pool (at most `cap`) whose expected distinct count in `n` draws reaches
/// `seen`; false when even `cap` falls short.
pub fn solve_pool(seen: u64, s: f64, n: f64, cap: u64) -> (u64, bool) {
    let cap = cap.clamp(seen.max(1), POOL_CAP.max(seen));
    let target = seen as f64 - 0.5;
    if expected_seen(cap, s, n) < target {
        return (cap, false);
    }
    let (mut lo, mut hi) = (seen.max(1), cap);
    while lo < hi {
        let mid = lo + (hi - lo) / 2;
        if expected_seen(mid, s, n) >= target {
            hi = mid;
        } else {
            lo = mid + 1;
        }
    }
    (lo, true)
}

fn round(x: f64, places: i32) -> f64 {
    let f = 10f64.powi(places);
    (x * f).round() / f
}

fn date_text(days: f64) -> String {
    let epoch = chrono::NaiveDate::from_ymd_opt(1970, 1, 1).expect("valid date");
    (epoch + chrono::Duration::days(days as i64)).format("%Y-%m-%d").to_string()
}

fn fmt_num(x: f64) -> String {
    if x.fract() == 0.0 && x.abs() < 1e15 {
        format!("{}", x as i64)
    } else {
        format!("{}", round(x, 6))
    }
}

/// One line of what was measured.
fn measured_line(p: &Profile, growth: Option<f64>) -> String {
    let mut s = format!("{} of {} rows null ({:.2}%), {} distinct", p.nulls, p.rows, p.null_share() * 100.0, p.distinct);
    if let Some(g) = growth {
        let verdict = if g >= GROWS_FROM { "grows with the rows" } else { "a fixed set" };
        s += &format!(" ({:.0}% of non-null rows; even-row half {} → exponent {:.2}: {verdict})", p.distinct_share() * 100.0, p.half_distinct, g);
    }
    match (&p.class, p.min, p.max) {
        (ValueClass::Date, Some(a), Some(b)) => s += &format!(", from {} to {}", date_text(a), date_text(b)),
        (ValueClass::Text, Some(a), Some(b)) => s += &format!(", {}–{} characters", a, b),
        (ValueClass::Int | ValueClass::Float, Some(a), Some(b)) => s += &format!(", {}..{}", fmt_num(a), fmt_num(b)),
        _ => {}
    }
    if let Some(t) = p.top_share() {
        s += &format!(", most frequent value {:.1}% of non-null rows", t * 100.0);
    }
    s += &format!(", {} runs of equal values", p.runs);
    s
}

/// A column spec of `kind` with every optional key absent.
pub(super) fn empty_spec(name: &str, kind: ColumnKind) -> ColumnSpec {
    ColumnSpec {
        name: name.to_string(),
        kind,
        nulls: None,
        distinct: None,
        range: None,
        order: Order::Random,
        run: None,
        skew: None,
        duplicates: None,
        length: None,
        true_share: None,
        references: None,
        unmatched: None,
        coverage: None,
    }
}

/// Infer one column's spec from its profile.
pub fn infer(p: &Profile) -> Inferred {
    let growth = growth_exponent(p);
    let measured = measured_line(p, growth);
    let mut choices = Vec::new();
    let kind = match classify(p) {
        Ok(k) => k,
        Err(reason) => return Inferred { profile: p.clone(), spec: Err(reason), measured, choices, growth },
    };
    let mut c = empty_spec(&p.name, kind);
    if p.nulls > 0 {
        c.nulls = Some(Share(round(p.null_share(), 4).max(1e-4)));
    }
    if p.dtype.starts_with("datetime") {
        choices.push(format!("`{}` is modelled by its dates: the spec has no time-of-day kind", p.dtype));
    }
    if p.nonnull() == 0 {
        choices.push("every value is null: only the null share is modelled".into());
        return Inferred { profile: p.clone(), spec: Ok(c), measured, choices, growth };
    }
    let n = p.nonnull() as f64;
    let grows = growth.is_some_and(|g| g >= GROWS_FROM);
    let tol = super::fidelity::distinct_tolerance(p.distinct as f64);
    let (lo, hi) = (p.min.unwrap_or(0.0), p.max.unwrap_or(0.0));
    // The pool's cap: the generator folds text ranks beyond the row count into it, and never
    // draws more integers than the range holds.
    let cap = match kind {
        ColumnKind::Int | ColumnKind::Date => (hi - lo + 1.0).min(POOL_CAP as f64) as u64,
        ColumnKind::Text | ColumnKind::Category => p.rows as u64,
        _ => POOL_CAP,
    };
    match kind {
        ColumnKind::Int | ColumnKind::Date | ColumnKind::Float => {
            c.range = Some(match kind {
                ColumnKind::Int => vec![Bound::Int(lo as i64), Bound::Int(hi as i64)],
                ColumnKind::Date => vec![Bound::Text(date_text(lo)), Bound::Text(date_text(hi))],
                _ => vec![Bound::Float(lo), Bound::Float(hi)],
            });
            let free = match kind {
                ColumnKind::Float => n,
                _ => {
                    let r = hi - lo + 1.0;
                    -r * (n * (-1.0 / r).ln_1p()).exp_m1()
                }
            };
            if grows && (free - p.distinct as f64).abs() <= tol {
                choices.push(format!("no pool: values drawn freely over the range give about {free:.0} distinct in {n:.0} rows, as measured"));
            } else {
                pool(&mut c, p, n, cap, grows, &mut choices);
            }
        }
        ColumnKind::Text | ColumnKind::Category => {
            let (a, b) = (lo.max(1.0) as u64, hi.clamp(1.0, 256.0) as u64);
            if lo < 1.0 {
                choices.push("empty text exists in the sample; the generator's words are at least 1 character".into());
            }
            let room = (26f64.powi(b as i32)).min(u64::MAX as f64) as u64;
            pool(&mut c, p, n, cap.min(room), grows, &mut choices);
            c.length = Some(vec![a.min(b), b]);
        }
        ColumnKind::Bool => c.true_share = Some(Share(round(p.true_share.unwrap_or(0.5), 4))),
        ColumnKind::Key => {
            let dup = 1.0 - p.distinct_share();
            if dup > 0.0 {
                c.duplicates = Some(Share(round(dup, 4)));
            }
            if p.class == ValueClass::Text {
                choices.push("nearly unique text is modelled as a key: generated keys are integers".into());
            } else {
                choices.push(format!("generated keys run 0..rows−1; the sample's ran {}..{}", fmt_num(lo), fmt_num(hi)));
            }
        }
    }
    order(&mut c, p, kind, &mut choices);
    Inferred { profile: p.clone(), spec: Ok(c), measured, choices, growth }
}

/// Set `distinct` (and `skew`) to the pool that reproduces the sample's distinct count.
/// When no pool up to `cap` does at the fitted skew (a few rare values under a steep
/// head), the skew is lowered to the largest that shows every value with a pool of exactly
/// the sample's count.
fn pool(c: &mut ColumnSpec, p: &Profile, n: f64, cap: u64, grows: bool, choices: &mut Vec<String>) {
    let mut s = zipf_exponent(p);
    let fitted = s;
    let (mut d, mut reached) = solve_pool(p.distinct as u64, s, n, cap);
    if !reached && s > 0.0 {
        let seen = p.distinct as u64;
        let target = seen as f64 - 0.5;
        let (mut lo, mut hi) = (0.0f64, s);
        for _ in 0..40 {
            let mid = 0.5 * (lo + hi);
            if expected_seen(seen, mid, n) >= target {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        s = if lo >= 0.05 { round(lo, 2) } else { 0.0 };
        (d, reached) = (seen, expected_seen(seen, s, n) >= target);
        choices.push(format!("the fitted skew {fitted:.2} would hide some of the {seen} values at this size: lowered to {s:.2}"));
    }
    c.distinct = Some(d);
    if s > 0.0 {
        c.skew = Some(round(s, 2));
        if s == fitted {
            let k = p.counts.iter().filter(|&&k| k >= SKEW_MIN_COUNT).count();
            let over = if k >= 2 { format!("the {k} values seen at least {SKEW_MIN_COUNT} times") } else { format!("all {} values", p.counts.len()) };
            choices.push(format!("skew {s:.2}: Zipf exponent, count-weighted least squares on log-log over {over}"));
        }
    } else if p.counts.len() > 1 {
        choices.push(format!("uniform: no Zipf exponent of 0.05 or more fits the values seen at least {SKEW_MIN_COUNT} times"));
    }
    let why = if reached {
        format!("a pool of {d} values, so that about {} appear in {n:.0} draws", p.distinct)
    } else {
        format!("a pool of {d} values, the most the generator allows here; fewer than the sample's {} may appear", p.distinct)
    };
    choices.push(why);
    if grows {
        choices.push("the distinct count grows with the rows but the spec's `distinct` is a fixed pool: raise it for sizes well above the sample's".into());
    }
}

/// Set `order` and `run` from the sample's order.
fn order(c: &mut ColumnSpec, p: &Profile, kind: ColumnKind, choices: &mut Vec<String>) {
    let n = p.nonnull();
    if p.distinct >= 2 && p.ascending {
        c.order = Order::Sorted;
        return;
    }
    if p.distinct >= 2 && p.descending {
        c.order = Order::Reverse;
        return;
    }
    if kind == ColumnKind::Key && p.class == ValueClass::Text {
        // Runs of consecutive keys are an integer notion; text keys are sorted or not.
        return;
    }
    let text = matches!(kind, ColumnKind::Text | ColumnKind::Category);
    if text && p.distinct >= 2 && p.runs == p.distinct {
        c.order = Order::Sorted;
        choices.push("every value sits in one block: written as sorted (the labels are synthetic)".into());
        return;
    }
    let (mean_run, random_run) = if kind == ColumnKind::Key {
        (n as f64 / (p.breaks + 1) as f64, 1.0)
    } else {
        let sum_sq: f64 = p.counts.iter().map(|&k| (k as f64 / n.max(1) as f64).powi(2)).sum();
        (n as f64 / p.runs.max(1) as f64, 1.0 / (1.0 - sum_sq).max(1e-9))
    };
    if mean_run < 4.0 || mean_run < 2.0 * random_run {
        return;
    }
    let p_min = p.counts.last().map(|&k| k as f64 / n.max(1) as f64).unwrap_or(1.0);
    let blocks = if kind == ColumnKind::Key || p_min >= 1.0 { 1.0 } else { (MISS_CHANCE.ln() / (1.0 - p_min).ln()).ceil() };
    let cap = (p.rows as f64 / blocks).floor();
    let run = mean_run.round().min(cap);
    if run < 2.0 {
        choices.push(format!("runs of {mean_run:.0} equal values in the sample are not kept: so few runs could leave values out"));
        return;
    }
    c.order = Order::Clustered;
    c.run = Some(run as u64);
    if run < mean_run.round() {
        choices.push(format!("runs average {mean_run:.0} rows in the sample; capped at {run:.0} so every value is expected to appear"));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn expected_seen_matches_the_occupancy_formula() {
        // Uniform pool: E = d·(1 − (1 − 1/d)^n) (the classical occupancy expectation).
        let (d, n) = (200u64, 342.0);
        let direct = d as f64 * (1.0 - (1.0 - 1.0 / d as f64).powf(n));
        assert!((expected_seen(d, 0.0, n) - direct).abs() < 1e-9);
        let (pool, ok) = solve_pool(164, 0.0, n, 10_000);
        assert!(ok && expected_seen(pool, 0.0, n) >= 163.5 && expected_seen(pool - 1, 0.0, n) < 163.5);
    }

    #[test]
    fn zipf_fit_recovers_an_exact_power_law() {
        // Counts proportional to k^-1.2: the least-squares slope is exactly -1.2 up to rounding.
        let counts: Vec<u64> = (1..=30).map(|k| (100_000.0 * (k as f64).powf(-1.2)).round() as u64).collect();
        let rows = counts.iter().sum::<u64>() as usize;
        let p = Profile {
            name: "x".into(),
            dtype: "str".into(),
            class: ValueClass::Text,
            rows,
            nulls: 0,
            distinct: 30,
            half_nonnull: rows / 2,
            half_distinct: 30,
            counts,
            quantiles: None,
            min: Some(3.0),
            max: Some(5.0),
            ascending: false,
            descending: false,
            runs: rows,
            breaks: 0,
            true_share: None,
        };
        // Weighted or not, an exact power law has the same slope.
        assert!((zipf_exponent(&p) - 1.2).abs() < 1e-3);
        assert_eq!(growth_exponent(&p), Some(0.0));
    }
}
