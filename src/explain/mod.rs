//! Findings: measured evidence turned into statements with their numbers, what they imply,
//! and what to do — plus one verdict per workload (which design to use, from what size, and
//! why).
//!
//! A finding never states a cause the evidence does not support: "repeated copying" is
//! only said when allocated bytes per row themselves grow with the rows; "stalls" only when
//! the tail is measured over enough samples. Each design's step cost-model notes (written
//! beside the steps' code) are attached so the reader sees the mechanism the trade knows.
//!
//! The findings about each design are in `design.rs`, the verdict in `verdict/`, set-up
//! pay-back in `payback.rs`; this file gathers them with the workload's own findings (a
//! busy machine, outputs that differ) and the steps' cost-model notes, and renders them.

use crate::analyse::WorkloadAnalysis;
use crate::results::reader::WorkloadResults;
use crate::results::{EquivalenceStatus, Measured};
use serde::{Deserialize, Serialize};

pub mod analysed;
mod design;
pub mod payback;
pub mod verdict;
pub use analysed::{Analysed, AnalysedWorkload};
pub use verdict::{verdict, VerdictKind};

/// One statement about a design (or the workload), backed by numbers.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Finding {
    /// The design it is about, or None for the workload.
    pub design: Option<String>,
    /// A short tag: growth, expectation, copying, trend, peak, chunks, dtype, parallel,
    /// tail, unstable, payback, machine, mismatch, skipped, extrapolation.
    pub kind: String,
    /// What was measured, with the numbers.
    pub measured: String,
    /// What it implies.
    pub implies: String,
    /// What to do (may be empty).
    pub action: String,
}

/// Which design to use (rules in [`verdict`](mod@verdict)).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Verdict {
    /// winner, crossover, tie or undecided.
    pub kind: VerdictKind,
    /// The design to use; None only for `undecided`.
    pub design: Option<String>,
    /// One sentence: the design, from what size, and why.
    pub text: String,
    /// The largest compared size the verdict was decided at.
    #[serde(default)]
    pub decided_at: Option<u64>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Explanation {
    pub workload: String,
    pub verdict: Verdict,
    pub findings: Vec<Finding>,
    /// Cost-model notes of the steps used, by step name.
    pub step_notes: Vec<(String, String)>,
}

/// Explain one workload from its results and analysis.
pub fn explain(w: &WorkloadResults, a: &WorkloadAnalysis) -> Explanation {
    let verdict = verdict(w, a);
    let better = verdict.design.as_deref();
    let mut findings: Vec<Finding> =
        w.header.designs.iter().zip(&a.designs).flat_map(|(dh, da)| design::findings(w, dh, da, better)).collect();
    findings.extend(payback::findings(w));
    findings.extend(machine_findings(w));
    findings.extend(mismatch_findings(w));
    let step_notes = step_notes(w);
    Explanation { workload: w.header.workload.clone(), verdict, findings, step_notes }
}

/// One workload-level finding per size where the designs' outputs differ.
fn mismatch_findings(w: &WorkloadResults) -> Vec<Finding> {
    let mut findings = Vec::new();
    for c in &w.comparisons {
        if c.equivalence.status == EquivalenceStatus::Mismatch {
            findings.push(Finding {
                design: None,
                kind: "mismatch".into(),
                measured: format!("at {}: {}", w.header.axis().point(c.rows), c.equivalence.note),
                implies: "these designs do not compute the same result, so their costs are not comparable".into(),
                action: "fix the design that is wrong, or declare `outputs_differ:` with the reason".into(),
            });
        }
    }
    findings
}

/// The cost-model notes of the steps the designs use, each step once.
fn step_notes(w: &WorkloadResults) -> Vec<(String, String)> {
    let mut step_notes: Vec<(String, String)> = Vec::new();
    for d in &w.header.designs {
        for s in &d.steps {
            if step_notes.iter().any(|(n, _)| n == s) {
                continue;
            }
            if let Some(def) = crate::patterns::find_step(s) {
                step_notes.push((s.clone(), def.cost_note.to_string()));
            }
        }
    }
    step_notes
}

/// Workload-level findings about the machine, not the designs: points measured while it
/// was busy, points measured while it ran slower with nothing else busy, and sizes measured
/// a second time because it ran slower during the first.
fn machine_findings(w: &WorkloadResults) -> Vec<Finding> {
    let measured: Vec<&Measured> = w.points.iter().filter_map(|p| p.measured.as_ref()).collect();
    [busy_finding(&measured), slow_machine_finding(&measured), remeasured_finding(w)].into_iter().flatten().collect()
}

/// Points measured on a busy machine: the machine is named as the cause, not the designs.
fn busy_finding(measured: &[&Measured]) -> Option<Finding> {
    let busy: Vec<&Measured> = measured.iter().copied().filter(|m| m.is_busy()).collect();
    if busy.is_empty() {
        return None;
    }
    let shares: Vec<f64> = busy.iter().filter_map(|m| m.disturbance.as_ref()?.probe_cpu_share).collect();
    let loads: Vec<f64> = busy.iter().filter_map(|m| m.disturbance.as_ref()?.load_per_core).collect();
    let share = (!shares.is_empty()).then(|| format!("; the single-threaded probe got {:.0}% of a core", 100.0 * crate::measure::stats::median(&shares)));
    let load = (!loads.is_empty()).then(|| format!("; load {:.1} per core", crate::measure::stats::median(&loads)));
    Some(Finding {
        design: None,
        kind: "machine".into(),
        measured: format!("{} of {} points were measured while the machine was busy{}{}", busy.len(), measured.len(), share.unwrap_or_default(), load.unwrap_or_default()),
        implies: "other work competed for the cores: those times say more about the machine than about the designs, so they are left out of growth classes and the verdict".into(),
        action: "measure again on a quiet machine before acting on small differences".into(),
    })
}

/// Points measured while the machine itself ran slower (the drift probe,
/// `Disturbance::machine_slow`) and nothing else was busy.
fn slow_machine_finding(measured: &[&Measured]) -> Option<Finding> {
    let ratios: Vec<f64> = measured.iter().filter(|m| !m.is_busy()).filter_map(|m| m.disturbance.as_ref()?.machine_slow).collect();
    if ratios.is_empty() {
        return None;
    }
    let top = ratios.iter().copied().fold(f64::NAN, f64::max);
    Some(Finding {
        design: None,
        kind: "machine".into(),
        measured: format!("{} of {} points were measured while the machine ran slower: the drift probe, a fixed computation timed beside the designs, took up to ×{top:.2} its median time over the workload's sizes", ratios.len(), measured.len()),
        implies: "the machine, not the designs, changed speed at those sizes (a neighbour on the same host, a slower clock): their times are left out of growth classes and the verdict".into(),
        action: "measure again before acting on small differences at those sizes".into(),
    })
}

/// Sizes the sweep measured a second time (`ComparisonRecord::remeasured_after`).
fn remeasured_finding(w: &WorkloadResults) -> Option<Finding> {
    let again: Vec<(u64, f64)> = w.comparisons.iter().filter_map(|c| c.remeasured_after.map(|r| (c.rows, r))).collect();
    if again.is_empty() {
        return None;
    }
    let sizes: Vec<String> = again.iter().map(|(rows, r)| format!("{} (probe ×{r:.2})", w.header.axis().point(*rows))).collect();
    Some(Finding {
        design: None,
        kind: "machine".into(),
        measured: format!("measured a second time: {}", sizes.join(", ")),
        implies: "the machine ran slower during the first attempt at those sizes (the drift probe took that many times its usual time); the second attempt replaced it".into(),
        action: String::new(),
    })
}

/// Plain-text rendering of an explanation.
pub fn render(e: &Explanation, long: bool) -> String {
    render_without(e, long, &[])
}

/// Plain-text rendering, leaving out findings of the given kinds (the terminal summary
/// shows growth and mismatches in its own sections).
pub fn render_without(e: &Explanation, long: bool, skip: &[&str]) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(s, "  verdict ({}): {}", e.verdict.kind.word(), e.verdict.text);
    let mut current: Option<&str> = None;
    for f in e.findings.iter().filter(|f| !skip.contains(&f.kind.as_str())) {
        let who = f.design.as_deref().unwrap_or("all designs");
        if current != Some(who) {
            let _ = writeln!(s, "  {who}:");
            current = Some(who);
        }
        let _ = write!(s, "    · {} — {}", f.measured, f.implies);
        if !f.action.is_empty() {
            let _ = write!(s, "; {}", f.action);
        }
        s.push('\n');
    }
    if long {
        let _ = writeln!(s, "  how the steps behave (cost-model notes):");
        for (n, note) in &e.step_notes {
            let _ = writeln!(s, "    {n}: {note}");
        }
    }
    s
}
