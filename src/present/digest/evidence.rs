//! What the summaries say about memory and what to watch: whether a design counts its
//! allocations, how its allocated bytes grow (beside an expected class), and the
//! workload-level warnings (outputs that differ, a busy machine, failures, skipped sizes,
//! a target far past the data).

use super::words::sentence;
use crate::analyse::{DesignAnalysis, PredictionOut, WorkloadAnalysis};
use crate::fit::growth::GrowthClass;
use crate::results::reader::WorkloadResults;
use crate::results::{EquivalenceStatus, SkipReason};

/// True when a design's points carry allocation counts. Designs that cannot count their
/// allocations (a program run outside the process, measured by its resident memory) record
/// none at all; every built-in or SQL design allocates at least its output table.
pub fn counts_allocations(w: &WorkloadResults, design: &str) -> bool {
    let pts: Vec<_> = w.design_points(design).into_iter().filter_map(|p| p.measured.as_ref()).collect();
    pts.is_empty() || pts.iter().any(|m| m.alloc_counted && (m.alloc.count > 0 || m.alloc.bytes > 0 || m.alloc.peak_live > 0))
}

/// Allocated bytes that are the same at every measured size (two or more): constant, with no
/// fit needed (a fit of identical values has nothing to choose between).
pub fn same_bytes_everywhere(w: &WorkloadResults, design: &str) -> bool {
    let b: Vec<u64> = w.design_points(design).into_iter().filter_map(|p| p.measured.as_ref().map(|m| m.alloc.bytes)).collect();
    b.len() >= 2 && b.iter().all(|x| *x == b[0])
}

/// How a design's allocated bytes grow, for the tables: the fitted class, "constant" when
/// they are the same at every size, "slope s" from the exponent alone, or "not counted".
/// With it, whether an expected class is met (None: cannot be judged).
pub fn bytes_growth(w: &WorkloadResults, da: &DesignAnalysis, expect: Option<&str>) -> (String, Option<bool>) {
    let want = expect.and_then(GrowthClass::from_label);
    if !counts_allocations(w, &da.design) {
        return ("not counted".into(), None);
    }
    match (&da.bytes, da.bytes_exponent) {
        (Some(b), _) => (b.label(), want.map(|c| b.admits(c))),
        _ if same_bytes_everywhere(w, &da.design) => ("constant".into(), want.map(|c| c == GrowthClass::Constant)),
        (None, Some(e)) => (format!("slope {e:.2}"), None),
        (None, None) => ("—".into(), None),
    }
}

/// Workload-level warnings, as sentences and as a few words each.
pub(super) fn warnings(w: &WorkloadResults, a: &WorkloadAnalysis) -> (Vec<String>, Vec<String>) {
    let ax = w.header.axis();
    let axis = ax.name();
    let mut long = Vec::new();
    let mut tags = Vec::new();
    if let Some(c) = w.comparisons.iter().find(|c| c.equivalence.status == EquivalenceStatus::Mismatch) {
        long.push(sentence(&format!("the designs do not compute the same result (first at {} {axis}: {}), so their costs are not comparable", ax.value(c.rows), c.equivalence.note)));
        tags.push("outputs differ".to_string());
    }
    let measured: Vec<_> = w.points.iter().filter_map(|p| p.measured.as_ref()).collect();
    let (busy, slow) = crate::present::disturbed_counts(&measured);
    if busy > 0 {
        long.push(format!(
            "{busy} of {} points were measured while the machine was busy; they are left out of growth classes and the verdict.",
            measured.len()
        ));
        tags.push(format!("busy machine ({busy} point{})", if busy == 1 { "" } else { "s" }));
    }
    if slow > 0 {
        long.push(format!(
            "{slow} of {} points were measured while the machine ran slower (the drift probe took {} times its usual time or more at their sizes); they are left out of growth classes and the verdict.",
            measured.len(),
            crate::results::reader::slow_probe()
        ));
        tags.push(format!("slower machine ({slow} point{})", if slow == 1 { "" } else { "s" }));
    }
    for d in &w.header.designs {
        let pts = w.design_points(&d.name);
        let failed: Vec<_> = pts.iter().filter(|p| p.skipped.as_ref().is_some_and(|s| s.reason == SkipReason::Failed)).collect();
        if let Some(p) = failed.first() {
            let detail = p.skipped.as_ref().map(|s| crate::present::causes::skip_words(s, ax)).unwrap_or_default();
            long.push(sentence(&format!("`{}` failed at {} {axis}: {detail}", d.name, ax.value(p.rows))));
            tags.push(format!("`{}` failed", d.name));
        }
        let skipped: Vec<_> = pts.iter().filter(|p| p.skipped.as_ref().is_some_and(|s| s.reason != SkipReason::Failed)).collect();
        if let Some(p) = skipped.first() {
            // A trial that was run and stopped is not a prediction: say what happened.
            let reason = match p.skipped.as_ref() {
                Some(s) => match &s.cause {
                    Some(crate::results::SkipCause::TrialOverBudget { limit_ns, .. }) => {
                        format!("a trial run there was stopped unfinished after {}, the point budget", crate::units::time_ns(*limit_ns))
                    }
                    // Why a small table would not fit: what the query makes of it.
                    Some(crate::results::SkipCause::Memory { need, .. }) if crate::present::causes::memory_reason(need).is_some() => format!(
                        "{}: {}, about {} of working memory",
                        s.reason.label(),
                        crate::present::causes::memory_reason(need).unwrap_or_default(),
                        crate::units::bytes(need.working)
                    ),
                    _ => s.reason.label().to_string(),
                },
                None => String::new(),
            };
            long.push(format!(
                "`{}` was not run at {} of {} sizes, from {} {axis} ({reason}).",
                d.name,
                skipped.len(),
                w.header.sizes.len(),
                ax.value(p.rows)
            ));
            tags.push(format!("`{}` not run from {} {axis}", d.name, ax.value(p.rows)));
        }
    }
    let far: Vec<&PredictionOut> = a.designs.iter().filter_map(|d| d.prediction.as_ref()).filter(|p| p.far).collect();
    if let Some(first) = far.first() {
        let lo = far.iter().map(|p| p.extrapolation_decades).fold(f64::INFINITY, f64::min);
        let hi = far.iter().map(|p| p.extrapolation_decades).fold(0.0, f64::max);
        let span = if hi - lo < 0.05 { format!("{lo:.1} decades") } else { format!("{lo:.1} to {hi:.1} decades") };
        let who = if far.len() == a.designs.len() { "every design".to_string() } else { format!("{} of {} designs", far.len(), a.designs.len()) };
        long.push(format!(
            "The target, {} {axis}, is {span} past the largest measured size for {who}: a class fitted on small sizes can change at large ones, so read the predictions there as an order of magnitude, and measure closer to the target if the decision depends on it.",
            ax.value(first.rows)
        ));
        tags.push(format!("target {span} past the data"));
    }
    (long, tags)
}
