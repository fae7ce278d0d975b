//! The equivalence check: what a design's output is reduced to before it is compared, and
//! the comparison of one size's designs side by side (ratios to the fastest with bootstrap
//! intervals, and which designs produced the same contents).
//!
//! A newcomer must know: outputs are compared by a content fingerprint independent of how
//! storage is chunked; when programs take part every output first goes through the same CSV
//! form (a program's file and an in-memory frame differ in types, not in content), and a
//! design that saved no output takes no part.

use super::stats::ratio_ci;
use crate::patterns::{OutputFacts, Value};
use crate::plan::Plan;
use crate::results::*;

/// The facts of a design's first output as the equivalence check compares them. When
/// programs take part, every output goes through the same CSV form first (so in-memory
/// types do not make equal tables differ) and, when a program says its row order carries
/// no meaning, rows are sorted.
pub fn facts_for_comparison(plan: &Plan, v: &Value) -> Result<OutputFacts, String> {
    let mut facts = OutputFacts::of(v);
    if plan.designs.iter().any(|d| d.program.is_some()) {
        if let Value::Frame(df) = v {
            let any = plan.designs.iter().any(|d| d.program.as_ref().is_some_and(|p| p.any_row_order));
            facts.fingerprint = crate::table::fingerprint(&super::program::comparable(df, any)?);
        }
    }
    Ok(facts)
}

pub fn compare(plan: &Plan, rows: u64, measured: &[(String, Vec<f64>, f64, Option<OutputFacts>)], seed: u64) -> ComparisonRecord {
    let fastest = measured.iter().min_by(|a, b| a.2.total_cmp(&b.2));
    let ratios = match fastest {
        Some(f) => measured
            .iter()
            .map(|(name, samples, med, _)| {
                let ci = if name == &f.0 { Some((1.0, 1.0)) } else { ratio_ci(samples, &f.1, 1000, 0.95, seed ^ rows) };
                Ratio { design: name.clone(), ratio: med / f.2, low: ci.map(|c| c.0), high: ci.map(|c| c.1) }
            })
            .collect(),
        None => vec![],
    };
    let mut groups: Vec<(String, Vec<String>)> = Vec::new();
    // A program that saves no output takes no part in the check.
    let silent: Vec<&str> = measured.iter().filter(|m| m.3.is_none()).map(|m| m.0.as_str()).collect();
    for (name, _, _, facts) in measured {
        let Some(key) = facts.as_ref().map(|f| f.fingerprint.clone()) else { continue };
        match groups.iter_mut().find(|g| g.0 == key) {
            Some(g) => g.1.push(name.clone()),
            None => groups.push((key, vec![name.clone()])),
        }
    }
    let with_output = measured.len() - silent.len();
    let (status, note) = if with_output < 2 {
        let why = if silent.is_empty() {
            "fewer than two designs measured at this size".to_string()
        } else {
            format!("fewer than two designs with an output to compare ({} saved none)", silent.join(", "))
        };
        (EquivalenceStatus::NotChecked, why)
    } else if groups.len() == 1 {
        let also = if silent.is_empty() { String::new() } else { format!(" ({} saved none)", silent.join(", ")) };
        (EquivalenceStatus::Same, format!("all {with_output} designs produced identical contents{also}"))
    } else {
        let detail: Vec<String> = groups
            .iter()
            .map(|(fp, names)| {
                let rows = measured
                    .iter()
                    .find(|m| &m.0 == &names[0])
                    .and_then(|m| m.3.as_ref())
                    .map(|f| format!("{} rows × {} columns", f.rows, f.dtypes.len()))
                    .unwrap_or_else(|| "no output".into());
                format!("[{}] {rows}, contents {fp}", names.join(", "))
            })
            .collect();
        let detail = detail.join(" vs ");
        match &plan.outputs_differ {
            Some(why) => (EquivalenceStatus::DifferAsDeclared, format!("outputs differ as declared ({why}): {detail}")),
            None => (EquivalenceStatus::Mismatch, format!("designs disagree: {detail}")),
        }
    };
    ComparisonRecord {
        workload: plan.name.clone(),
        rows,
        fastest: fastest.map(|f| f.0.clone()),
        ratios,
        equivalence: Equivalence { status, groups: groups.into_iter().map(|g| g.1).collect(), note },
        probe_ns: None,
        remeasured_after: None,
    }
}
