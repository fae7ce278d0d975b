//! Whether two runs can be compared at all, before the gate judges them.
//!
//! A gate that compares nothing must not pass: a new run that was killed (no end record),
//! designs renamed so that nothing matches, or records written twice would otherwise give
//! "no regression". [`check`] counts these; `framecost gate` refuses (exit 2) when any count
//! is not zero, unless the user asks for a partial comparison. Kept apart from the gate's
//! statistics on purpose: it looks only at which records exist, not at their numbers.

use crate::results::reader::{RunResults, WorkloadResults};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeSet, HashMap};

/// What stands in the way of a full comparison, with counts.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Completeness {
    /// The new run has no end record (killed, interrupted, or still running).
    pub new_unfinished: bool,
    /// The baseline has no end record.
    pub baseline_unfinished: bool,
    /// Lines of either run that could not be read.
    pub damaged_lines: usize,
    /// Points (workload, design, rows) recorded more than once, over both runs.
    pub duplicated_points: usize,
    /// Designs of a shared workload found in one run only, as `workload/design`.
    pub unmatched_designs: Vec<String>,
    /// Points measured in the baseline that the new run has no record of at all.
    pub missing_points: usize,
    /// Points measured in both runs: what the gate can actually compare.
    pub comparable_points: usize,
    /// Points measured in the baseline, over the shared workloads.
    pub baseline_points: usize,
    /// Workloads swept over different axes in the two runs (rows in one, groups in the
    /// other, say): their points cannot be matched.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub different_axes: Vec<String>,
}

impl Completeness {
    /// Reasons the comparison is partial, one line each; empty when it is complete.
    pub fn problems(&self) -> Vec<String> {
        let mut out = Vec::new();
        if self.new_unfinished {
            out.push("the new run did not finish (no end record: killed or interrupted)".to_string());
        }
        if self.baseline_unfinished {
            out.push("the baseline run did not finish (no end record)".to_string());
        }
        if self.damaged_lines > 0 {
            out.push(format!("{} damaged line(s) in the results files", self.damaged_lines));
        }
        if self.duplicated_points > 0 {
            out.push(format!("{} point(s) recorded more than once", self.duplicated_points));
        }
        if !self.unmatched_designs.is_empty() {
            out.push(format!("{} design(s) match nothing in the other run: {}", self.unmatched_designs.len(), self.unmatched_designs.join(", ")));
        }
        if self.missing_points > 0 {
            out.push(format!("{} of {} baseline point(s) have no record in the new run", self.missing_points, self.baseline_points));
        }
        if !self.different_axes.is_empty() {
            out.push(format!("swept over different axes in the two runs, not compared: {}", self.different_axes.join(", ")));
        }
        if self.comparable_points == 0 {
            out.push(format!("no point is measured in both runs (0 of {} baseline points can be compared)", self.baseline_points));
        }
        out
    }
}

/// Duplicated (design, rows) points of one workload.
fn duplicates(w: &WorkloadResults) -> usize {
    let mut seen: HashMap<(&str, u64), usize> = HashMap::new();
    for p in &w.points {
        *seen.entry((p.design.as_str(), p.rows)).or_default() += 1;
    }
    seen.values().map(|&n| n.saturating_sub(1)).sum()
}

/// Count what keeps `base` and `new` from being compared in full.
pub fn check(base: &RunResults, new: &RunResults) -> Completeness {
    let mut c = Completeness {
        new_unfinished: !new.complete(),
        baseline_unfinished: !base.complete(),
        damaged_lines: base.damaged_lines + new.damaged_lines,
        ..Completeness::default()
    };
    // A workload listed twice (records appended twice) counts its points as duplicates too.
    for run in [base, new] {
        let mut names: HashMap<&str, Vec<&WorkloadResults>> = HashMap::new();
        for w in &run.workloads {
            names.entry(w.header.workload.as_str()).or_default().push(w);
        }
        for ws in names.values() {
            c.duplicated_points += ws.iter().map(|w| duplicates(w)).sum::<usize>();
            c.duplicated_points += ws.iter().skip(1).map(|w| w.points.len()).sum::<usize>();
        }
    }
    for bw in &base.workloads {
        let Some(nw) = new.workloads.iter().find(|w| w.header.workload == bw.header.workload) else { continue };
        if bw.header.axis != nw.header.axis {
            c.different_axes.push(format!("{} ({} → {})", bw.header.workload, bw.header.axis().name(), nw.header.axis().name()));
            continue;
        }
        let names = |w: &WorkloadResults| -> BTreeSet<String> { w.points.iter().map(|p| p.design.clone()).collect() };
        let (bd, nd) = (names(bw), names(nw));
        for d in bd.symmetric_difference(&nd) {
            c.unmatched_designs.push(format!("{}/{d}", bw.header.workload));
        }
        // The extra size (past the planned sizes, for a design whose class was unsettled)
        // depends on the run: the gate compares the planned sizes only.
        for p in bw.points.iter().filter(|p| p.measured.is_some() && bw.header.sizes.contains(&p.rows)) {
            c.baseline_points += 1;
            match nw.point(&p.design, p.rows) {
                None => c.missing_points += 1,
                Some(q) if q.measured.is_some() => c.comparable_points += 1,
                Some(_) => {}
            }
        }
    }
    c
}
