//! Upper bounds on everything a workload can ask for, shared by the spec checker and by
//! `sweep`'s command-line overrides so that both refuse the same values.
//!
//! A bound exists because the value reaches an allocation or a loop: counts become vectors
//! and repetitions, names become terminal output and file names, budgets become deadlines.
//! Each check returns a message (or a list of them) and leaves locating it to the caller.

use super::validate::{MAX_ROWS, MAX_SIZES};
use crate::patterns::{self, ParamKind, ParamValue};
use crate::plan::{Budget, Plan};

/// Most columns of the synthetic table.
pub const MAX_COLUMNS: usize = 4096;
/// Longest design or column name, in characters.
pub const MAX_NAME: usize = 128;
/// Most distinct values a skewed column may spread over: the Zipf table the generator builds
/// holds about 36 bytes per value (10^8 values: about 3.6 GB).
pub const MAX_SKEWED_DISTINCT: u64 = 100_000_000;
/// Shortest time budget: a per-point or whole-run budget below a millisecond cannot hold a
/// single run of anything.
pub const MIN_BUDGET_S: f64 = 0.001;
/// Tightest target precision of a median (0.1%).
pub const MIN_PRECISION: f64 = 0.001;
/// Longest time budget: a week.
pub const MAX_BUDGET_S: f64 = 86_400.0 * 7.0;
/// Most samples per point.
pub const MAX_SAMPLES: u64 = 100_000;
/// Most untimed warm-up runs.
pub const MAX_WARMUP: u64 = 1000;

/// Why a design, column or workload name cannot be printed or used as it is: control
/// characters (a newline or terminal escape codes), or too long. None when it is fine.
pub fn name_problem(name: &str) -> Option<String> {
    if let Some(ch) = name.chars().find(|&c| crate::units::unprintable(c)) {
        return Some(format!(
            "names may not hold control characters or invisible marks, found {} in {}",
            ch.escape_unicode(),
            crate::units::escaped(name)
        ));
    }
    if name.chars().count() > MAX_NAME {
        return Some(format!("expected a name of at most {MAX_NAME} characters, found {}", name.chars().count()));
    }
    None
}

/// Problems with the limits of a sweep, as (key, message): shared by the spec checker and the
/// command-line overrides of `sweep`, so both refuse the same values.
pub fn budget_problems(b: &Budget) -> Vec<(&'static str, String)> {
    let mut out = Vec::new();
    for (key, v) in [("per_point", b.per_point_s), ("whole_run", b.whole_run_s)] {
        if !(v.is_finite() && (MIN_BUDGET_S..=MAX_BUDGET_S).contains(&v)) {
            out.push((key, format!("expected a duration above zero (at least 1ms) and at most a week, found {v} s")));
        }
    }
    // Below 0.1% no point would ever be precise enough: sampling would always run to its cap.
    if !(MIN_PRECISION..=0.5).contains(&b.precision) {
        out.push(("precision", format!("expected a precision above 0% (at least 0.1%) and at most 50%, found {}", b.precision)));
    }
    if b.min_samples == 0 {
        out.push(("min_samples", "expected at least 1 sample".to_string()));
    }
    if b.max_samples < b.min_samples || b.max_samples > MAX_SAMPLES {
        out.push(("max_samples", format!("expected from min_samples ({}) to {MAX_SAMPLES} samples, found {}", b.min_samples, b.max_samples)));
    }
    if b.warmup > MAX_WARMUP {
        out.push(("warmup", format!("expected at most {MAX_WARMUP} warm-up runs, found {}", b.warmup)));
    }
    out
}

/// A gate threshold (a share of the baseline's time) out of bounds: the workload's
/// `gate.threshold` and `gate --threshold` are checked by this one rule.
pub fn threshold_problem(t: f64) -> Option<String> {
    (!(t > 0.0 && t <= 10.0)).then(|| format!("expected a threshold above 0% and at most 1000%, found {t}"))
}

/// One size out of bounds (a `sizes:` entry, a `--sizes` value).
pub fn size_problem(n: u64) -> Option<String> {
    (n == 0 || n > MAX_ROWS).then(|| format!("expected a size from 1 to 10^10 rows, found {n}"))
}

/// Problems with a list of sizes (already sorted): each from 1 row to [`MAX_ROWS`], at most
/// [`MAX_SIZES`] of them.
pub fn sizes_problems(sizes: &[u64]) -> Vec<String> {
    let mut out = Vec::new();
    if sizes.is_empty() {
        out.push("expected at least one size".to_string());
    }
    out.extend(sizes.iter().filter_map(|&n| size_problem(n)));
    if sizes.len() > MAX_SIZES {
        out.push(format!("expected at most {MAX_SIZES} sizes, found {}", sizes.len()));
    }
    out
}

/// A whole-number step parameter against its bound; `largest` is the largest size of the
/// sweep (the rows a table-sized bound is checked against).
pub fn count_problem(kind: &ParamKind, x: u64, largest: u64) -> Option<String> {
    let ParamKind::Count { min, max, .. } = kind else { return None };
    let (hi, what) = match *max {
        patterns::Max::Fixed(m) => (m, String::new()),
        // Small counts are always allowed (a part per row at worst), so a short ladder or
        // `--sizes` does not reject a step's default.
        patterns::Max::Rows(m) if largest.max(ROWS_FLOOR) < m => {
            (largest.max(ROWS_FLOOR), format!(" (the largest size has {largest} rows)"))
        }
        patterns::Max::Rows(m) => (m, String::new()),
    };
    (x < *min || x > hi).then(|| format!("expected a whole number from {min} to {hi}{what}, found {x}"))
}

/// A table-sized bound is never below this, whatever the sizes.
pub const ROWS_FLOOR: u64 = 1024;

/// Step parameters whose bound depends on the sizes, checked again after `--sizes` replaced
/// them. Returns `design: step: message` lines.
pub fn plan_param_problems(plan: &Plan) -> Vec<String> {
    let largest = plan.largest_rows();
    let mut out = Vec::new();
    for d in &plan.designs {
        for s in d.setup.iter().chain(&d.steps) {
            for pd in s.def.params {
                if let Some(ParamValue::Count(x)) = s.params.0.get(pd.name) {
                    if let Some(m) = count_problem(&pd.kind, *x, largest) {
                        out.push(format!("design `{}`, step `{}`, `{}`: {m}", crate::units::escaped(&d.name), s.def.name, pd.name));
                    }
                }
            }
        }
    }
    out
}
