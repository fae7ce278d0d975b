//! The verdict: which design to use, of one of four kinds, never contradicting what was
//! measured.
//!
//! - `winner`: the fastest design at the largest size where the compared designs were all
//!   measured, by more than the noise ([`TIE_RATIO`] — runs of unchanged code on a shared
//!   2-core machine differ by 10–20% at a point — and the ratio's own interval, whole
//!   interval past the line when the ratio is within ×1.1 of it); when only
//!   a split point (samples in two groups) makes the largest size a tie, the next size down
//!   decides, for the design fastest at both;
//! - `crossover`: a design that loses at the measured sizes is predicted to win before the
//!   target — only when its ratio to the measured winner shrank at every one of the last
//!   [`TREND_SIZES`] compared sizes, its cost rose clearly less than the winner's over the
//!   last step (a larger fixed cost with the same cost per row also shrinks the ratio, but
//!   never crosses), **and** the fitted curves cross at a size whose interval is finite and
//!   lies beyond the measured range; the text says these facts;
//! - `tie`: within the noise at the largest sizes, or less than [`TIE_RATIO`] apart (the text
//!   says which); the design named is the one other
//!   evidence favours (fewer bytes, slower growth, fastest at the largest size while gaining
//!   on the others, fastest at most sizes), and the text says so;
//! - `undecided`: the data cannot tell (no size with two designs, every size measured on a
//!   busy machine, designs that disagree on their output); the text says what to measure.
//!
//! A newcomer must know: the verdict is decided on measured comparisons first; fitted
//! curves only ever add a crossover that the measured trend already points to. Points
//! measured while the machine was busy (see `measure::hygiene`) never decide it while a
//! clean size exists; when every size was busy, only a margin of [`BUSY_MARGIN`] at the two
//! largest sizes gives a winner (interleaved sampling slows designs alike), else undecided.

use super::Verdict;
use crate::analyse::{CrossoverOut, DesignAnalysis, WorkloadAnalysis};
use crate::units::{ratio, time_ns};
use crate::results::reader::WorkloadResults;
use crate::results::{Axis, ComparisonRecord, EquivalenceStatus, Ratio};
use serde::{Deserialize, Serialize};

mod tie;
use tie::{near_the_line, short_of_the_line, tie_break};
pub use tie::{GROWTH_TIE_SLOPE, TIE_GAIN};

/// A runner-up within this ratio of the fastest design is a tie.
pub const TIE_RATIO: f64 = 1.20;
/// How many of the last compared sizes a loser's ratio must shrink over for a predicted
/// crossover to count.
pub const TREND_SIZES: usize = 3;

/// The four kinds of verdict (the JSON words are fixed: scripts read them).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum VerdictKind {
    Winner,
    Crossover,
    Tie,
    Undecided,
}

impl VerdictKind {
    pub fn word(self) -> &'static str {
        match self {
            VerdictKind::Winner => "winner",
            VerdictKind::Crossover => "crossover",
            VerdictKind::Tie => "tie",
            VerdictKind::Undecided => "undecided",
        }
    }
}

fn undecided(text: String) -> Verdict {
    Verdict { kind: VerdictKind::Undecided, design: None, text, decided_at: None }
}

/// Every comparison with two or more designs measured, by size, and those of them where
/// no point was marked as measured on a busy or slower machine.
fn usable<'a>(w: &'a WorkloadResults) -> (Vec<&'a ComparisonRecord>, Vec<&'a ComparisonRecord>) {
    let mut all: Vec<&ComparisonRecord> = w.comparisons.iter().filter(|c| c.ratios.len() >= 2).collect();
    all.sort_by_key(|c| c.rows);
    let clean: Vec<&ComparisonRecord> = all
        .iter()
        .copied()
        .filter(|c| {
            c.ratios.iter().all(|r| w.point(&r.design, c.rows).and_then(|p| p.measured.as_ref()).is_none_or(|m| !m.is_contaminated()))
        })
        .collect();
    (all, clean)
}

fn design<'a>(a: &'a WorkloadAnalysis, name: &str) -> Option<&'a DesignAnalysis> {
    a.designs.iter().find(|d| d.design == name)
}

/// What the prediction at the target says about a design, as a clause.
fn at_target(a: &WorkloadAnalysis, name: &str) -> String {
    let Some(p) = design(a, name).and_then(|d| d.prediction.as_ref()) else { return String::new() };
    let growth = design(a, name).and_then(|d| d.time.as_ref()).map(|t| format!(", time growing as {}", t.label())).unwrap_or_default();
    let rough = if p.rough { ", an order of magnitude only" } else { "" };
    format!("; at {} it is predicted at {} [{}–{}] per run{rough}{growth}", a.axis().point(p.rows), time_ns(p.median), time_ns(p.low), time_ns(p.high))
}

/// A loser whose ratio to `winner` shrank at each of the last [`TREND_SIZES`] sizes, with
/// those ratios (oldest first).
fn shrinking_ratio(cmps: &[&ComparisonRecord], winner: &str, loser: &str) -> Option<Vec<f64>> {
    let series: Vec<f64> = cmps
        .iter()
        .filter_map(|c| {
            let w = c.ratios.iter().find(|r| r.design == winner)?.ratio;
            let l = c.ratios.iter().find(|r| r.design == loser)?.ratio;
            Some(l / w)
        })
        .collect();
    if series.len() < TREND_SIZES {
        return None;
    }
    let tail = series[series.len() - TREND_SIZES..].to_vec();
    tail.windows(2).all(|p| p[1] < p[0] * 0.97).then_some(tail)
}

/// The loser's median rose by less than 0.8 of the winner's rise between the last two
/// compared sizes (absolute times): its marginal cost is lower, so it can pass the winner.
fn rises_less(w: &WorkloadResults, cmps: &[&ComparisonRecord], winner: &str, loser: &str) -> bool {
    let both: Vec<u64> = cmps
        .iter()
        .filter(|c| c.ratios.iter().any(|r| r.design == winner) && c.ratios.iter().any(|r| r.design == loser))
        .map(|c| c.rows)
        .collect();
    let [.., n0, n1] = both[..] else { return false };
    let med = |d: &str, n: u64| w.point(d, n).and_then(|p| p.measured.as_ref()).map(|m| m.median_ns);
    match (med(winner, n0), med(winner, n1), med(loser, n0), med(loser, n1)) {
        (Some(w0), Some(w1), Some(l0), Some(l1)) => w1 > w0 && l1 - l0 < 0.8 * (w1 - w0),
        _ => false,
    }
}

/// A fitted crossover where `loser` becomes cheaper than `winner` beyond the measured
/// sizes, before the target (or within ×100 of the largest size when there is no target).
/// Whether it may decide the verdict is [`overtake_fails`]'s to say.
fn predicted_overtake<'a>(a: &'a WorkloadAnalysis, winner: &str, loser: &str, largest: u64) -> Option<&'a CrossoverOut> {
    let limit = a.predict_at.map(|t| t as f64).unwrap_or(largest as f64 * 100.0);
    a.crossovers.iter().find(|c| c.faster_below == winner && c.faster_above == loser && !c.inside_measured && c.rows > largest as f64 && c.rows <= limit)
}

/// The first condition of a `crossover` verdict that the fitted crossing `c` of `winner`
/// fails, in words ("but its measured ratio is not shrinking steadily"); None when it meets
/// them all: an interval that is finite and lies beyond the measured sizes, a ratio that
/// shrank at each of the last [`TREND_SIZES`] sizes, and a cost that rose clearly less than
/// the winner's over the last step (a shrinking ratio alone also fits a design with a larger
/// fixed cost and the same cost per row, which approaches the winner but never passes it).
/// The verdict ([`overtaken`]) and the note on a crossing it does not act on
/// ([`unacted_crossing`]) both ask here, so the two cannot disagree.
fn overtake_fails(w: &WorkloadResults, cmps: &[&ComparisonRecord], winner: &str, c: &CrossoverOut, largest: u64) -> Option<String> {
    let ax = w.header.axis();
    if !c.bounded {
        Some(format!("but the fits do not pin it down (the two costs may still be equal from {} to the end of the search)", ax.value_f(c.rows_low)))
    } else if c.rows_low <= largest as f64 * 0.5 {
        Some(format!("but its interval reaches back to {}, inside the measured sizes", ax.value_f(c.rows_low)))
    } else if shrinking_ratio(cmps, winner, &c.faster_above).is_none() {
        Some(format!("but its measured ratio to `{winner}` is not shrinking steadily"))
    } else if !rises_less(w, cmps, winner, &c.faster_above) {
        Some(format!("but its cost rose about as much as `{winner}`'s over the last step measured (a larger fixed cost with the same cost per row comes closer without passing)"))
    } else {
        None
    }
}

/// Which design to use, from what size, and why (module doc).
pub fn verdict(w: &WorkloadResults, a: &WorkloadAnalysis) -> Verdict {
    let ax = w.header.axis();
    if let Some(c) = w.comparisons.iter().find(|c| c.equivalence.status == EquivalenceStatus::Mismatch) {
        return undecided(format!(
            "no verdict: the designs do not compute the same result (first seen at {}), so their costs are not comparable; fix the design that is wrong or declare `outputs_differ:`",
            ax.point(c.rows)
        ));
    }
    if w.header.designs.len() == 1 {
        return single(a, &w.header.designs[0].name);
    }
    let (all, cmps) = usable(w);
    let total = all.len();
    let Some(last) = cmps.last().copied() else {
        if total == 0 {
            return undecided("no verdict: no size had two designs measured; lower the sizes or raise the point budget".into());
        }
        return busy_verdict(&all, ax);
    };
    let mut ranked = last.ratios.clone();
    ranked.sort_by(|x, y| x.ratio.total_cmp(&y.ratio));
    let best = ranked[0].design.clone();
    let runner = &ranked[1];
    let interval = match (runner.low, runner.high) {
        (Some(lo), Some(hi)) => format!(" [{}–{}]", ratio(lo), ratio(hi)),
        _ => String::new(),
    };
    let at = ax.point(last.rows);
    let busy_note = match total - cmps.len() {
        0 => String::new(),
        1 => " (1 size measured on a busy or slower machine was left out)".to_string(),
        n => format!(" ({n} sizes measured on a busy or slower machine were left out)"),
    };
    // Clearly behind (the interval stays above ×1.05) though less than TIE_RATIO.
    let close = runner.low.is_some_and(|lo| lo > 1.05);
    if within_noise(runner) {
        if let Some(v) = split_samples_winner(w, a, &cmps, &ranked, last.rows, &busy_note) {
            return v;
        }
        // A loser clearly behind whose ratio kept shrinking toward a bounded crossing past
        // the measured sizes is a crossover whether it ends ×1.17 or ×1.3 behind (sample-trap:
        // ×3.5 → ×2.2 → ×1.17 in one of six sweeps, a tie before this, a crossover in the
        // five others); within the noise, nothing says it loses.
        if close {
            if let Some(v) = overtaken(w, a, &cmps, &ranked, last.rows, &busy_note) {
                return v;
            }
        }
        let tied: Vec<&str> = ranked.iter().filter(|r| within_noise(r)).map(|r| r.design.as_str()).collect();
        let (pick, why) = tie_break(w, a, &cmps, &tied, last.rows);
        // Within the noise (the interval reaches ×1.05), or a clear difference too small to
        // choose on (under TIE_RATIO): the text says which, not "noise" for both.
        let apart = if close && runner.ratio >= TIE_RATIO {
            format!("are ×{:.2}{interval} apart, on the ×{TIE_RATIO:.2} line or just past it with an interval that reaches back below it, too close to choose on (another run may name `{best}` the winner)", runner.ratio)
        } else if close {
            format!("are less than ×{TIE_RATIO:.2} apart (×{:.2}{interval}), too close to choose on", runner.ratio)
        } else {
            format!("are within the noise (×{:.2}{interval})", runner.ratio)
        };
        let near = if close && runner.ratio < TIE_RATIO { near_the_line(runner, &best) } else { String::new() };
        return Verdict {
            kind: VerdictKind::Tie,
            design: Some(pick.clone()),
            text: format!("a tie at {at}, the largest size compared: `{best}` and `{}` {apart}{near}; {why}{busy_note}", runner.design),
            decided_at: Some(last.rows),
        };
    }
    if let Some(v) = overtaken(w, a, &cmps, &ranked, last.rows, &busy_note) {
        return v;
    }
    let (below, unsupported) = crossing_notes(w, a, &cmps, &best, ax);
    let setup = tie::setup_won_back(w, &best, last.rows);
    Verdict {
        kind: VerdictKind::Winner,
        design: Some(best.clone()),
        text: format!(
            "use `{best}`: fastest at {at}, the largest size compared, {} faster than `{}`{interval}{setup}{}{below}{unsupported}{busy_note}",
            ratio(runner.ratio),
            runner.design,
            at_target(a, &best)
        ),
        decided_at: Some(last.rows),
    }
}

/// A design's ratio to the fastest is within the noise: under [`TIE_RATIO`], its interval
/// reaches down to ×1.05, or it sits just past the line with its interval reaching back
/// across it ([`short_of_the_line`]).
fn within_noise(r: &Ratio) -> bool {
    r.ratio < TIE_RATIO || r.low.is_some_and(|lo| lo <= 1.05) || short_of_the_line(r)
}

/// The design's samples at this size fell into two separate groups (`Measured::bimodal`).
fn bimodal(w: &WorkloadResults, name: &str, rows: u64) -> bool {
    w.point(name, rows).and_then(|p| p.measured.as_ref()).is_some_and(|m| m.bimodal)
}

/// A tie at the largest size that only a split point makes: the fastest design or its
/// runner-up had samples in two separate groups there (a median then falls in one group or
/// the other from run to run: cross-column's `horizontal-sum` at 64k rows measured 0.50 ms
/// in one sweep and 4.9–6.0 ms in two others, its slow group taking ×5.7 longer than its
/// fast one). The next size down where that design is not split decides, and only when the same
/// design was fastest there by more than the noise: the named design is then the fastest at
/// both sizes, so the verdict still agrees with every largest-size measurement.
fn split_samples_winner(w: &WorkloadResults, a: &WorkloadAnalysis, cmps: &[&ComparisonRecord], ranked: &[Ratio], largest: u64, busy_note: &str) -> Option<Verdict> {
    let (best, runner) = (&ranked[0].design, &ranked[1].design);
    let split = [best, runner].into_iter().find(|d| bimodal(w, d, largest))?;
    let prev = cmps.iter().rev().find(|c| {
        c.rows < largest && [best, runner].iter().all(|d| c.ratios.iter().any(|r| &r.design == *d)) && !bimodal(w, split, c.rows)
    })?;
    let mut at_prev = prev.ratios.clone();
    at_prev.sort_by(|x, y| x.ratio.total_cmp(&y.ratio));
    if &at_prev[0].design != best || within_noise(&at_prev[1]) {
        return None;
    }
    let ax = w.header.axis();
    let r1 = &at_prev[1];
    let interval = match (r1.low, r1.high) {
        (Some(lo), Some(hi)) => format!(" [{}–{}]", ratio(lo), ratio(hi)),
        _ => String::new(),
    };
    let spread = w
        .point(split, largest)
        .and_then(|p| p.measured.as_ref())
        .map(|m| {
            let lo = m.samples_ns.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = m.samples_ns.iter().copied().fold(0.0, f64::max);
            format!(" (from {} to {})", time_ns(lo), time_ns(hi))
        })
        .unwrap_or_default();
    let (below, unsupported) = crossing_notes(w, a, cmps, best, ax);
    Some(Verdict {
        kind: VerdictKind::Winner,
        design: Some(best.clone()),
        text: format!(
            "use `{best}`: fastest at {}, {} faster than `{}`{interval}; at {}, the largest size compared, it was fastest too, but the samples of `{split}` there fell into two separate groups{spread}, so its median can land in either from run to run and the next size down decides{}{below}{unsupported}{busy_note}",
            ax.point(prev.rows),
            ratio(r1.ratio),
            r1.design,
            ax.point(largest),
            at_target(a, best)
        ),
        decided_at: Some(prev.rows),
    })
}

/// The verdict of a workload with one design: tracked on its own growth.
fn single(a: &WorkloadAnalysis, name: &str) -> Verdict {
    let growth = design(a, name).and_then(|d| d.time.as_ref()).map(|t| t.label()).unwrap_or_else(|| "not fitted yet".into());
    Verdict {
        kind: VerdictKind::Winner,
        design: Some(name.to_string()),
        text: format!("one design, tracked on its own: `{name}`'s time grows as {growth}{}", at_target(a, name)),
        decided_at: None,
    }
}

/// A loser predicted to overtake the winner (`ranked[0]`) before the target, with the
/// measured trend: its ratio shrank at each of the last sizes and its cost rose less.
fn overtaken(w: &WorkloadResults, a: &WorkloadAnalysis, cmps: &[&ComparisonRecord], ranked: &[Ratio], largest: u64, busy_note: &str) -> Option<Verdict> {
    let ax = w.header.axis();
    let best = &ranked[0].design;
    let at = ax.point(largest);
    for r in ranked.iter().skip(1) {
        let Some(c) = predicted_overtake(a, best, &r.design, largest) else { continue };
        if overtake_fails(w, cmps, best, c, largest).is_some() {
            continue;
        }
        let Some(trend) = shrinking_ratio(cmps, best, &r.design) else { continue };
        let steps: Vec<String> = trend.iter().map(|x| ratio(*x)).collect();
        return Some(Verdict {
            kind: VerdictKind::Crossover,
            design: Some(r.design.clone()),
            text: format!(
                "`{best}` is fastest up to {at}, but `{}`'s ratio to it fell at each of the last {} sizes ({}) and the fitted costs cross at about {} [{}–{}], beyond the measured sizes: use `{}` from there{}{busy_note}",
                r.design,
                TREND_SIZES,
                steps.join(" → "),
                ax.point_f(c.rows),
                ax.value_f(c.rows_low),
                ax.value_f(c.rows_high),
                r.design,
                at_target(a, &r.design)
            ),
            decided_at: Some(largest),
        });
    }
    None
}

/// A fitted crossing of `best` by another design before the target that the verdict does
/// not act on, with the condition it fails ([`overtake_fails`]).
pub fn unacted_crossing<'a>(w: &WorkloadResults, a: &'a WorkloadAnalysis, cmps: &[&ComparisonRecord], best: &str) -> Option<(&'a CrossoverOut, String)> {
    let largest = cmps.last()?.rows;
    let c = a.crossovers.iter().find(|c| c.faster_below == best && !c.inside_measured && a.predict_at.is_some_and(|t| c.rows <= t as f64))?;
    overtake_fails(w, cmps, best, c, largest).map(|why| (c, why))
}

/// For a measured winner: a crossover inside the measured range ("below about 8k `x` is
/// cheaper"), and a fitted crossing before the target that the measured trend does not
/// support.
fn crossing_notes(w: &WorkloadResults, a: &WorkloadAnalysis, cmps: &[&ComparisonRecord], best: &str, ax: Axis) -> (String, String) {
    let below = a
        .crossovers
        .iter()
        .filter(|c| c.faster_above == best && c.inside_measured)
        // Only where the measured sizes show it (`CrossoverOut::borne_out`).
        .filter(|c| c.borne_out(cmps.iter().copied()))
        .max_by(|x, y| x.rows.total_cmp(&y.rows))
        .map(|c| format!("; below about {} `{}` is cheaper", ax.point_f(c.rows), c.faster_below))
        .unwrap_or_default();
    let unsupported = unacted_crossing(w, a, cmps, best)
        .map(|(c, why)| format!(" (the fitted curves of `{}` cross below the target, at about {}, {why}: measure a larger size before acting on it)", c.faster_above, ax.point_f(c.rows)))
        .unwrap_or_default();
    (below, unsupported)
}

/// Margin a design must have at the two largest sizes for a verdict from points measured on
/// a busy machine: designs are sampled in interleaved rounds, so contention slows them
/// alike, but it adds noise that can swap designs closer than this.
pub const BUSY_MARGIN: f64 = 1.5;

/// Every compared size was measured on a busy machine: a winner only when the same design
/// was fastest by at least [`BUSY_MARGIN`] at the two largest sizes, else undecided.
fn busy_verdict(all: &[&ComparisonRecord], ax: crate::results::Axis) -> Verdict {
    let total = all.len();
    let clear = |c: &ComparisonRecord| -> Option<(String, f64)> {
        let mut r = c.ratios.clone();
        r.sort_by(|x, y| x.ratio.total_cmp(&y.ratio));
        (r[1].ratio >= BUSY_MARGIN && r[1].low.is_none_or(|lo| lo > 1.0)).then(|| (r[0].design.clone(), r[1].ratio))
    };
    let tail: Vec<Option<(String, f64)>> = all.iter().rev().take(2).map(|c| clear(c)).collect();
    match (tail.first().cloned().flatten(), tail.get(1).cloned().flatten()) {
        (Some((a, ra)), Some((b, _))) if a == b => {
            let last = all[all.len() - 1];
            Verdict {
                kind: VerdictKind::Winner,
                design: Some(a.clone()),
                text: format!(
                    "use `{a}`: fastest at the two largest sizes compared, ×{ra:.1} ahead at {} — every size was measured on a busy or slower machine, but a margin this wide is beyond what contention explains (designs are sampled in interleaved rounds); measure again on a quiet machine for the exact figures",
                    ax.point(last.rows)
                ),
                decided_at: Some(last.rows),
            }
        }
        _ => undecided(format!(
            "no verdict: all {total} sizes where two designs were measured were measured on a busy or slower machine, and no design led by ×{BUSY_MARGIN} at the two largest; measure again on a quiet one"
        )),
    }
}
