//! A run read back with its analysis and its explanations, computed once and handed on.
//!
//! Every command that shows a run (`sweep` at its end, `recap`, `report`, `explain`) builds
//! one [`Analysed`] from the saved results and gives the same value to the terminal summary,
//! the pictures, the report pages and the JSON documents. The presentation draws what it
//! is given and calls no analysis itself, so a sweep fits each workload once, and every
//! reader of one run sees the same fits.

use super::{explain, Explanation};
use crate::analyse::{analyse_workload, AnalyseOptions, Analysis, WorkloadAnalysis};
use crate::results::reader::{RunResults, WorkloadResults};

/// A run's results, each workload's analysis and each workload's explanation (in the
/// results' workload order: one of each per workload).
#[derive(Debug, Clone)]
pub struct Analysed<'r> {
    pub results: &'r RunResults,
    pub analysis: Analysis,
    pub explanations: Vec<Explanation>,
}

/// One workload of an [`Analysed`] run: its results, analysis and explanation.
#[derive(Debug, Clone, Copy)]
pub struct AnalysedWorkload<'a> {
    pub w: &'a WorkloadResults,
    pub a: &'a WorkloadAnalysis,
    pub e: &'a Explanation,
}

/// Analyse and explain one workload (what [`Analysed::new`] does for each).
pub fn analyse_and_explain(w: &WorkloadResults, opts: &AnalyseOptions) -> (WorkloadAnalysis, Explanation) {
    let a = analyse_workload(w, opts);
    let e = explain(w, &a);
    (a, e)
}

impl<'r> Analysed<'r> {
    /// Analyse and explain every workload of `results` once.
    pub fn new(results: &'r RunResults, opts: &AnalyseOptions) -> Analysed<'r> {
        let (workloads, explanations) = results.workloads.iter().map(|w| analyse_and_explain(w, opts)).unzip();
        Analysed { results, analysis: Analysis { workloads }, explanations }
    }

    /// Each workload with its analysis and explanation, in the run's order.
    pub fn workloads(&self) -> impl Iterator<Item = AnalysedWorkload<'_>> {
        self.results
            .workloads
            .iter()
            .zip(&self.analysis.workloads)
            .zip(&self.explanations)
            .map(|((w, a), e)| AnalysedWorkload { w, a, e })
    }

    /// The analysis and findings as one JSON document (`analysis.json`, `explain --json`).
    pub fn document(&self, schema: &str) -> serde_json::Value {
        serde_json::json!({ "schema": schema, "analysis": self.analysis, "explanations": self.explanations })
    }
}
