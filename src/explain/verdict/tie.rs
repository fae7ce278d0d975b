//! How a tie is broken: which of the tied designs the verdict names, and why (the same plan
//! run by the engine, no set-up to win back, fewer bytes, slower growth where it shows,
//! gaining at the top, fastest at most sizes, listed first).

use super::{design, shrinking_ratio, TIE_RATIO, TREND_SIZES};
use crate::analyse::WorkloadAnalysis;
use crate::results::reader::WorkloadResults;
use crate::results::{ComparisonRecord, Ratio};

/// Among tied designs, the first listed when the engine runs them as one plan ([`same_plan`]);
/// else, among those without set-up steps when some have them ([`without_setup`]), the one
/// other evidence favours: slower growth of time by two classes or more (what the cost at
/// the target depends on), then fewer allocated bytes at the size compared (exact counts,
/// the same in every run), then the one
/// fastest of them at the largest size when it gained on the others at each of the last sizes
/// ([`gaining_at_top`]), then the one fastest of them at most compared sizes (at least two
/// thirds of them, and three), then the design listed first in the workload (never the median at one size, so the named design
/// does not change between runs of a tie).
pub(super) fn tie_break(w: &WorkloadResults, a: &WorkloadAnalysis, cmps: &[&ComparisonRecord], tied: &[&str], rows: u64) -> (String, String) {
    let listed = |n: &str| w.header.designs.iter().position(|d| d.name == n).unwrap_or(usize::MAX);
    let first = tied.iter().min_by_key(|n| listed(n)).copied().unwrap_or(tied[0]);
    if same_plan(w, tied) {
        return (
            first.to_string(),
            format!("either will do: polars runs them as one plan (their optimized query plans are the same), so the gap is noise; `{first}` is named as the first listed"),
        );
    }
    let (plain, prepared) = without_setup(w, tied, rows);
    let Some((other, setup)) = prepared else {
        return among(w, a, cmps, tied, rows);
    };
    let setup = format!("`{other}` needs a set-up first ({} at {}, untimed) that runs tied with the others' do not win back", crate::units::time_ns(setup), w.header.axis().point(rows));
    if let [only] = plain[..] {
        return (only.to_string(), format!("`{only}` is suggested because {setup}"));
    }
    let (pick, why) = among(w, a, cmps, &plain, rows);
    (pick, format!("{setup}; of the designs without one, {why}"))
}

/// [`tie_break`] among tied designs that all have set-up steps or none has: slower growth,
/// fewer bytes, gaining at the top, fastest at most sizes, listed first. Growth comes before
/// bytes because a tie at the largest measured size says nothing of the target, and two
/// classes apart the design growing more slowly is the cheaper one there: sample-trap, tied
/// at ×1.23 at 1k rows in one sweep, named `scan-per-tag` (time n) for its fewer bytes
/// (218 KiB against 508 KiB), the design predicted ×300 dearer at the 256k-row target
/// (245 ms against 0.80 ms), while the other sweeps named `join-wanted-tags` (constant or
/// log n) as winner or crossover.
fn among(w: &WorkloadResults, a: &WorkloadAnalysis, cmps: &[&ComparisonRecord], tied: &[&str], rows: u64) -> (String, String) {
    let rank = |name: &str| {
        design(a, name)
            .and_then(|d| d.time.as_ref())
            .and_then(|t| crate::analyse::class_of(&t.class))
            .map(|c| c.rank())
            .unwrap_or(usize::MAX)
    };
    let bytes = |name: &str| w.point(name, rows).and_then(|p| p.measured.as_ref()).and_then(|m| m.counted_bytes()).unwrap_or(u64::MAX);
    let listed = |n: &str| w.header.designs.iter().position(|d| d.name == n).unwrap_or(usize::MAX);
    let first = tied.iter().min_by_key(|n| listed(n)).copied().unwrap_or(tied[0]);
    let by_growth = tied.iter().min_by_key(|n| (rank(n), listed(n))).copied().unwrap_or(first);
    // Only a growth gap of two classes or more decides: neighbouring classes (constant and
    // log n, n and n log n) trade places between runs of the same designs, and so did the
    // design a tie named (cell-reads, two sweeps: `contiguous-slice`, then `typed-get`).
    let slowest = tied.iter().map(|n| rank(n)).filter(|r| *r != usize::MAX).max().unwrap_or(0);
    if rank(by_growth).saturating_add(2) <= slowest && grows_apart(a, tied, by_growth, rows) {
        return (by_growth.to_string(), format!("`{by_growth}` is suggested because its time grows more slowly, which matters more as the data grows"));
    }
    let by_bytes = tied.iter().min_by_key(|n| (bytes(n), listed(n))).copied().unwrap_or(first);
    if bytes(by_bytes) != u64::MAX && tied.iter().any(|n| bytes(n) != u64::MAX && bytes(by_bytes) * 10 < bytes(n) * 9) {
        let other = tied.iter().copied().filter(|n| *n != by_bytes).max_by_key(|n| bytes(n)).unwrap_or(first);
        return (
            by_bytes.to_string(),
            format!(
                "`{by_bytes}` is suggested because it allocates less ({} vs {} for `{other}` at {})",
                crate::units::bytes(bytes(by_bytes) as f64),
                crate::units::bytes(bytes(other) as f64),
                w.header.axis().point(rows)
            ),
        );
    }
    if let Some((top, from, to, other)) = gaining_at_top(cmps, tied) {
        return (
            top.to_string(),
            format!(
                "`{top}` is suggested because it was the fastest of them at {} and gained on `{other}` at each of the last {TREND_SIZES} sizes (its time went from ×{from:.2} to ×{to:.2} of `{other}`'s), the way the data is going",
                w.header.axis().point(rows)
            ),
        );
    }
    if let Some((most, led, of)) = led_most(cmps, tied) {
        return (
            most.to_string(),
            format!("either will do; neither memory nor growth separates them (`{most}` is named because it was the fastest of them at {led} of the {of} sizes where all were measured)"),
        );
    }
    (first.to_string(), format!("either will do; neither memory nor growth separates them (`{first}` is named as the first listed)"))
}

/// The tied designs without set-up steps at `rows`, and, when some tied design has one and
/// some other has none, the design with the costliest set-up and its time (ns). A design
/// whose runs are tied with another's but which first builds a structure in `setup:` (a
/// copy, an index, a sort — timed once per size outside the samples) costs more overall
/// for any number of runs, so it is never the one a tie names over a design without one
/// (cell-reads: `vector-copied-once`, whose copy took 755 µs at 128k rows, was named in a
/// tie with `contiguous-slice` while the pay-back finding beside it said the copy never pays
/// for itself at that size).
fn without_setup<'t>(w: &WorkloadResults, tied: &[&'t str], rows: u64) -> (Vec<&'t str>, Option<(&'t str, f64)>) {
    let setup = |n: &str| w.point(n, rows).and_then(|p| p.setup_ns);
    let plain: Vec<&str> = tied.iter().copied().filter(|n| setup(n).is_none()).collect();
    if plain.is_empty() || plain.len() == tied.len() {
        return (plain, None);
    }
    let prepared = tied.iter().copied().filter_map(|n| setup(n).map(|s| (n, s))).max_by(|a, b| a.1.total_cmp(&b.1));
    (plain, prepared)
}

/// Every tied design is SQL alone on the same engine and its optimized query plans are the
/// same, up to the order of the columns a scan reads: the engine runs one computation for
/// all of them. Then no measurement can separate them, and naming one by which was faster
/// at more sizes only repeats the noise (sql-filter-join, where the optimizer pushes the
/// filters below the join: three catalog sweeps named `join-then-filter`, then
/// `filter-then-join` twice, at ×1.00–×1.04).
fn same_plan(w: &WorkloadResults, tied: &[&str]) -> bool {
    let heads: Vec<&crate::results::DesignHeader> = tied.iter().filter_map(|n| w.header.designs.iter().find(|d| d.name == *n)).collect();
    let sql_only = |d: &crate::results::DesignHeader| {
        d.program.is_none() && !d.steps.is_empty() && d.steps.iter().all(|s| s == "sql") && d.query_plans.len() == d.steps.len() && !d.recipe.contains("(untimed")
    };
    if heads.len() < 2 || heads.len() != tied.len() || !heads.iter().all(|d| sql_only(d)) {
        return false;
    }
    let plans = |d: &crate::results::DesignHeader| (d.engine.clone(), d.feed.clone(), d.query_plans.iter().map(|p| normalised_plan(p)).collect::<Vec<_>>());
    let first = plans(heads[0]);
    heads[1..].iter().all(|d| plans(d) == first)
}

/// A plan's text with the column list of each `PROJECT[…]` (the columns a scan reads) in
/// name order: `SELECT a, b` and `SELECT b, a` under a join read the same columns.
fn normalised_plan(plan: &str) -> String {
    let mut out = String::with_capacity(plan.len());
    let mut rest = plan;
    while let Some(at) = rest.find("PROJECT[") {
        let open = at + "PROJECT[".len();
        let Some(close) = rest[open..].find(']').map(|c| open + c) else { break };
        out.push_str(&rest[..open]);
        let mut cols: Vec<&str> = rest[open..close].split(',').map(str::trim).collect();
        cols.sort_unstable();
        out.push_str(&cols.join(", "));
        out.push(']');
        rest = &rest[close + 1..];
    }
    out.push_str(rest);
    out
}

/// Fewest units of measured log-log slope by which the other tied designs must grow faster
/// than `by_growth` for its slower class to decide a tie when there is no target to predict
/// at: a class gap alone can come from a fitted intercept (cell-reads' `vector-copied-once`,
/// classed n with a slope of 0.09 over its largest sizes, beside `typed-get` classed
/// constant at 0.02, both flat within 20% over a 64-fold rise).
pub const GROWTH_TIE_SLOPE: f64 = 0.5;

/// The slower growth of `by_growth` shows where it matters: at the workload's target, past
/// the size compared, it is predicted cheaper than every other tied design; without a
/// target there, every tied design two classes above it grows at least [`GROWTH_TIE_SLOPE`]
/// faster over the largest sizes. (Cell-reads, target 128k rows, the size compared: a
/// second sweep named `typed-get`, measured ×1.2 slower than `vector-copied-once` at every
/// size, "because its time grows more slowly"; the first sweep had named the other.)
fn grows_apart(a: &WorkloadAnalysis, tied: &[&str], by_growth: &str, rows: u64) -> bool {
    let time = |n: &str| design(a, n).and_then(|d| d.time.as_ref());
    let class = |n: &str| time(n).and_then(|t| crate::analyse::class_of(&t.class)).map(|c| c.rank());
    let slope = |n: &str| time(n).and_then(|t| t.top_slope);
    let ahead = |n: &str| design(a, n).and_then(|d| d.prediction.as_ref()).filter(|p| p.rows > rows).map(|p| p.median);
    let others = tied.iter().copied().filter(|n| *n != by_growth);
    match ahead(by_growth) {
        Some(p) => others.clone().all(|n| ahead(n).is_some_and(|q| p < q)),
        None => others
            .filter(|n| class(n).zip(class(by_growth)).is_some_and(|(c, b)| c >= b + 2))
            .all(|n| slope(n).zip(slope(by_growth)).is_some_and(|(s, b)| s - b >= GROWTH_TIE_SLOPE)),
    }
}

/// Least overall gain, over the last [`TREND_SIZES`] sizes, of the tied design that was
/// fastest at the largest, for that gain to name it in a tie: each step must also gain 3%
/// ([`shrinking_ratio`]). Ties among designs level within a few percent at every size
/// (cell-reads: 4–11% apart, in either order between sweeps) do not drift this far.
pub const TIE_GAIN: f64 = 1.15;

/// The tied design fastest at the largest compared size, when it gained on every other
/// tied design at each of the last [`TREND_SIZES`] sizes and by [`TIE_GAIN`] overall: with
/// its ratio to the one it gained least on (first and last of the run) and that design.
/// Leading at most sizes says less when the lead changed hands at the top: a worker in
/// Python was ahead of framecost's SQL at 16k–256k rows, ×1.28 behind at 1M, and a tie
/// named it "fastest at 3 of the 4 sizes" (grower-totals; the sweep before had named the
/// SQL design the winner at 1M).
fn gaining_at_top<'t>(cmps: &[&ComparisonRecord], tied: &[&'t str]) -> Option<(&'t str, f64, f64, &'t str)> {
    let last = cmps.last()?;
    let ratio_at = |d: &str| last.ratios.iter().find(|r| r.design == d).map(|r| r.ratio);
    let top = tied.iter().copied().filter(|d| ratio_at(d).is_some()).min_by(|a, b| ratio_at(a).unwrap_or(f64::MAX).total_cmp(&ratio_at(b).unwrap_or(f64::MAX)))?;
    let mut least: Option<(f64, f64, &str)> = None;
    for other in tied.iter().copied().filter(|d| *d != top) {
        let tail = shrinking_ratio(cmps, other, top)?;
        let (first, end) = (tail[0], tail[tail.len() - 1]);
        if first / end < TIE_GAIN {
            return None;
        }
        if least.is_none_or(|(f, e, _)| first / end < f / e) {
            least = Some((first, end, other));
        }
    }
    least.map(|(f, e, o)| (top, f, e, o))
}

/// The tied design that was the fastest of them at the most compared sizes where all of
/// them were measured, with that count and the number of such sizes, when it led at two
/// thirds of them or more and at three or more. Summed over sizes, this names the same
/// design from run to run where one leads throughout by a margin too small to call at any
/// one size (cell-reads: `vector-copied-once` ahead of `contiguous-slice` by 4–11% at every
/// size of three sweeps, while the design named as first listed changed with which others
/// fell inside the noise).
fn led_most<'t>(cmps: &[&ComparisonRecord], tied: &[&'t str]) -> Option<(&'t str, usize, usize)> {
    let mut counts = vec![0usize; tied.len()];
    let mut of = 0;
    for c in cmps {
        let r: Option<Vec<f64>> = tied.iter().map(|t| c.ratios.iter().find(|x| x.design == *t).map(|x| x.ratio)).collect();
        let Some(r) = r else { continue };
        of += 1;
        let k = (0..r.len()).min_by(|&i, &j| r[i].total_cmp(&r[j])).unwrap_or(0);
        counts[k] += 1;
    }
    let k = (0..counts.len()).max_by_key(|&i| counts[i])?;
    (of >= 3 && 3 * counts[k] >= 2 * of).then_some((tied[k], counts[k], of))
}

/// What a winner with set-up steps costs besides its runs, as a clause of the verdict: its
/// untimed set-up at the deciding size and how many runs win it back against the fastest
/// design without set-up measured there (`payback::won_back_at`, the pay-back finding's
/// count). A winner timed without its set-up is the fastest per
/// run, not overall: cell-reads' `vector-copied-once` won one sweep in six by ×1.24 on runs
/// whose column copy took longer than two of them. Empty when there is no set-up.
pub(super) fn setup_won_back(w: &WorkloadResults, best: &str, rows: u64) -> String {
    let Some(setup) = w.point(best, rows).and_then(|p| p.setup_ns) else {
        return String::new();
    };
    let at = w.header.axis().point(rows);
    let spent = format!("; it needs a set-up first ({} at {at}, untimed)", crate::units::time_ns(setup));
    match crate::explain::payback::won_back_at(w, best, rows) {
        Some((other, Some(runs))) => {
            format!("{spent}, won back after {runs:.0} run{} at this size: for fewer, `{other}` costs less overall", if runs == 1.0 { "" } else { "s" })
        }
        _ => spent,
    }
}

/// How close to [`TIE_RATIO`] a ratio must be, as a factor either way, for
/// [`near_the_line`] to speak.
pub const NEAR_LINE: f64 = 1.1;

/// A runner-up just past the line whose own interval reaches back below it: within
/// [`NEAR_LINE`] of [`TIE_RATIO`], a winner must clear the line with its whole interval, not
/// only its median (superiority by a margin: the interval's lower end beyond the margin).
/// Why: runs of unchanged code differ by more than one run's interval, and a median that
/// lands either side of ×1.20 changed the kind between runs: grouped-work's runner-up
/// measured ×1.12–×1.21 in 26 catalog sweeps, a winner in the two at ×1.21 [×1.16–×1.22] and
/// ×1.21 [×1.18–×1.23], a tie in the 24 others. Further past the line the looser test stays
/// (interval above ×1.05): a bimodal ×5.8 [×1.11–×8.45] is a winner, and requiring its
/// interval to clear ×1.20 would make a tie of the largest gap in the catalog.
pub(super) fn short_of_the_line(r: &Ratio) -> bool {
    r.ratio >= TIE_RATIO && r.ratio < TIE_RATIO * NEAR_LINE && r.low.is_some_and(|lo| lo < TIE_RATIO)
}

/// Said beside a close tie whose runner-up sits near [`TIE_RATIO`] with its interval across
/// it: another run of the same file may name the fastest design the winner (when its whole
/// interval clears the line). Empty otherwise.
pub(super) fn near_the_line(runner: &Ratio, best: &str) -> String {
    let (Some(_), Some(hi)) = (runner.low, runner.high) else { return String::new() };
    if runner.ratio > TIE_RATIO / NEAR_LINE && hi > TIE_RATIO {
        format!(", near the line: the interval reaches past ×{TIE_RATIO:.2}, so another run may name `{best}` the winner")
    } else {
        String::new()
    }
}

#[cfg(test)]
mod tests {
    use super::{near_the_line, normalised_plan, short_of_the_line};
    use crate::results::Ratio;

    fn r(ratio: f64, low: f64, high: f64) -> Ratio {
        Ratio { design: "join-back-totals".into(), ratio, low: Some(low), high: Some(high) }
    }

    #[test]
    fn a_ratio_across_the_tie_line_is_said_to_be_near_it() {
        // grouped-work's runner-up in three catalog sweeps (E1–E3): ×1.20 [×1.17–×1.23],
        // ×1.21 [×1.16–×1.22], ×1.18 [×1.13–×1.24]; all three are ties.
        assert!(near_the_line(&r(1.20, 1.17, 1.23), "window-over-crew").contains("may name `window-over-crew` the winner"));
        assert!(near_the_line(&r(1.21, 1.16, 1.22), "window-over-crew").contains("near the line"));
        assert!(near_the_line(&r(1.18, 1.13, 1.24), "window-over-crew").contains("near the line"));
        // Clear of it: a tie within the noise at ×1.04 [×1.02–×1.07], no interval.
        assert_eq!(near_the_line(&r(1.04, 1.02, 1.07), "function-per-typed-row"), "");
        assert_eq!(near_the_line(&Ratio { design: "d".into(), ratio: 1.21, low: None, high: None }, "x"), "");
    }

    #[test]
    fn just_past_the_line_the_whole_interval_must_clear_it() {
        // grouped-work, the two sweeps of 26 whose median passed ×1.20 (E2, F2): ties now.
        assert!(short_of_the_line(&r(1.21, 1.16, 1.22)));
        assert!(short_of_the_line(&r(1.21, 1.18, 1.23)));
        // row-wise in E2, ×1.26 [×1.22–×1.29]: the whole interval is past the line.
        assert!(!short_of_the_line(&r(1.26, 1.22, 1.29)));
        // Far past it the looser test stays: cross-column's bimodal ×5.8 [×1.11–×8.45],
        // group-count's ×1.43 [×1.29–×1.60]; under the line is another test's to judge.
        assert!(!short_of_the_line(&r(5.79, 1.11, 8.45)));
        assert!(!short_of_the_line(&r(1.43, 1.19, 1.60)));
        assert!(!short_of_the_line(&r(1.18, 1.13, 1.24)));
        assert!(!short_of_the_line(&Ratio { design: "d".into(), ratio: 1.21, low: None, high: None }));
    }

    #[test]
    fn scan_columns_are_compared_in_name_order() {
        // Text of polars' optimized plans as `sql-filter-join` records them (two queries
        // whose scans read the same columns in another order).
        let a = "INNER JOIN:\n  FROM\n    DF [\"member_id\", \"district\", \"joined_on\"]; PROJECT[\"district\", \"member_id\"] 2/3 COLUMNS";
        let b = "INNER JOIN:\n  FROM\n    DF [\"member_id\", \"district\", \"joined_on\"]; PROJECT[\"member_id\", \"district\"] 2/3 COLUMNS";
        assert_eq!(normalised_plan(a), normalised_plan(b));
        let c = "INNER JOIN:\n  FROM\n    DF [\"member_id\", \"district\", \"joined_on\"]; PROJECT[\"member_id\", \"joined_on\"] 2/3 COLUMNS";
        assert_ne!(normalised_plan(a), normalised_plan(c));
        assert_eq!(normalised_plan("no scan"), "no scan");
    }
}
