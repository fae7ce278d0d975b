//! Why a point was not measured, in words: the one wording of the numbers measurement
//! records as a [`SkipCause`] (the terminal, the report pages, `sweep`'s notices and the
//! `detail` written for older readers all take it from here). A run from before causes
//! were recorded has only its prose `detail`, shown as it is.

use crate::results::{Axis, MemoryNeed, SkipCause, SkipInfo};
use crate::units::{bytes, time_ns};

/// Why a point was skipped or failed: its cause in words, or an older run's prose.
pub fn skip_words(s: &SkipInfo, axis: Axis<'_>) -> String {
    match &s.cause {
        Some(c) => words(c, axis),
        None => s.detail.clone(),
    }
}

/// A memory estimate in parts: `about 3 GiB (table …, records …, generator …, largest
/// design's working memory …)`.
pub fn memory_need(n: &MemoryNeed) -> String {
    let why = memory_reason(n).map(|r| format!(": {r}")).unwrap_or_default();
    format!(
        "about {} (table {}, records {}, generator {}, largest design's working memory {}{why})",
        bytes(n.total()),
        bytes(n.table),
        bytes(n.records),
        bytes(n.generator),
        bytes(n.working)
    )
}

/// What set the working memory, when an SQL query's bound from the table plan did: "an SQL
/// join makes about 1.53G rows, bounded from the table plan".
pub fn memory_reason(n: &MemoryNeed) -> Option<String> {
    match (n.joined_rows, n.groups) {
        (Some(r), _) => Some(format!("an SQL join makes about {} rows, bounded from the table plan", crate::units::rows_label_f(r))),
        (None, Some(g)) => Some(format!("an SQL query keeps up to {} groups, bounded from the table plan", crate::units::rows_label_f(g))),
        _ => None,
    }
}

/// What a size writes to the temp folder.
pub fn disk_need(disk_bytes: f64) -> String {
    format!("about {} in the temp folder", bytes(disk_bytes))
}

/// A cause in words; `axis` labels the swept values it names.
pub fn words(c: &SkipCause, axis: Axis<'_>) -> String {
    match c {
        SkipCause::PointBudget { predicted_ns, runs, budget_ns } => {
            format!("one run predicted at {}; {runs} runs need {} > {} point budget", time_ns(*predicted_ns), time_ns(predicted_ns * runs), time_ns(*budget_ns))
        }
        SkipCause::RunBudget { predicted_ns, runs, budget_ns, used_ns, kept_ns } => {
            let kept = if *kept_ns > 0.0 { format!(", {} kept for cheaper designs at this size", time_ns(*kept_ns)) } else { String::new() };
            format!("{runs} runs at {} would pass the {} run budget ({} used{kept})", time_ns(*predicted_ns), time_ns(*budget_ns), time_ns(*used_ns))
        }
        SkipCause::TrialOverBudget { at, limit_ns, runs, budget_ns } => format!(
            "at {} a trial run was stopped unfinished after {}; {runs} runs need more than the {} point budget",
            axis.point(*at),
            time_ns(*limit_ns),
            time_ns(*budget_ns)
        ),
        SkipCause::TooFewSamples { at, budget_ns, samples, needed, run_ns } => format!(
            "at {} the {} point budget allowed only {samples} of {needed} samples (one run {})",
            axis.point(*at),
            time_ns(*budget_ns),
            time_ns(*run_ns)
        ),
        SkipCause::Memory { need, engine, limit_bytes, limit_source, share, hard } => format!(
            "needs {} on the {engine} engine; {} allowed by {limit_source}, {:.0}% of it may be used ({})",
            memory_need(need),
            bytes(*limit_bytes as f64),
            share * 100.0,
            if *hard { "a hard limit: --force cannot lift it" } else { "--force to run anyway" }
        ),
        SkipCause::Disk { disk_bytes, free_bytes, folder, share } => format!(
            "writes {}; {} free in {folder}, {:.0}% of it may be used (--force to run anyway)",
            disk_need(*disk_bytes),
            bytes(*free_bytes as f64),
            share * 100.0
        ),
        SkipCause::Step { message } | SkipCause::Program { message } => message.clone(),
        SkipCause::Panic { message } => format!("a step panicked: {message}"),
        SkipCause::Setup { step, cause } => format!("set-up step {step}: {}", words(cause, axis)),
        SkipCause::Lost { during, signal, code, allowed_bytes } => lost(during.as_deref(), *signal, *code, *allowed_bytes),
        SkipCause::Runaway { during, ran_ns, limit_ns, stopped } => format!(
            "{during} ran for {}, past its limit of {} (twice the point budget, at least the budget + 5 s){}",
            time_ns(*ran_ns),
            time_ns(*limit_ns),
            if *stopped { "; its measuring process was stopped" } else { ", and could not be stopped from inside; the sweep was ended here" }
        ),
        SkipCause::FailedAt { at, cause } => format!("failed at {}: {}", axis.point(*at), words(cause, axis)),
    }
}

/// How a measuring process was lost.
fn lost(during: Option<&str>, signal: Option<i32>, code: Option<i32>, allowed_bytes: u64) -> String {
    let what = during.unwrap_or("the preparation of the size's inputs");
    let allowed = bytes(allowed_bytes as f64);
    match (signal, code) {
        (Some(libc::SIGKILL), _) => {
            format!("its measuring process was killed (SIGKILL) during {what}, most likely by the system for lack of memory (it was allowed {allowed})")
        }
        (Some(libc::SIGABRT), _) => format!("its measuring process aborted during {what}: most likely an allocation failed past the {allowed} it was allowed"),
        (Some(sig), _) => format!("its measuring process ended with signal {sig} during {what}"),
        (None, Some(101)) => format!("its measuring process panicked during {what}"),
        (None, Some(c)) => format!("its measuring process ended with exit code {c} during {what}"),
        (None, None) => format!("its measuring process ended during {what}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::results::SkipReason;

    /// Each cause is worded with its numbers; an older record keeps its own prose.
    #[test]
    fn every_cause_is_worded_with_its_numbers() {
        let rows = Axis(None);
        let need = MemoryNeed { table: 1024.0 * 1024.0, records: 0.0, generator: 0.0, working: 3.0 * 1024.0 * 1024.0, ..Default::default() };
        let step = || Box::new(SkipCause::Step { message: "no column `weight`".into() });
        let cases: Vec<(SkipCause, &[&str])> = vec![
            (SkipCause::PointBudget { predicted_ns: 2e9, runs: 4.0, budget_ns: 5e9 }, &["predicted", "4 runs", "point budget"]),
            (SkipCause::RunBudget { predicted_ns: 1e9, runs: 4.0, budget_ns: 6e10, used_ns: 5.9e10, kept_ns: 0.0 }, &["run budget", "used"]),
            (SkipCause::RunBudget { predicted_ns: 1e9, runs: 4.0, budget_ns: 6e10, used_ns: 5.0e10, kept_ns: 8e9 }, &["run budget", "kept for cheaper designs"]),
            (SkipCause::TrialOverBudget { at: 64000, limit_ns: 3e9, runs: 4.0, budget_ns: 3e9 }, &["at 64k rows a trial run was stopped unfinished after 3.00 s", "4 runs need more than the 3.00 s point budget"]),
            (SkipCause::TooFewSamples { at: 4096, budget_ns: 5e9, samples: 3, needed: 6, run_ns: 1.2e9 }, &["at 4096 rows", "only 3 of 6 samples"]),
            (SkipCause::Memory { need, engine: "memory".into(), limit_bytes: 2 << 20, limit_source: "a cgroup".into(), share: 0.8, hard: true }, &["about 4.00 MiB (table 1.00 MiB", "2.00 MiB allowed by a cgroup", "80%", "hard limit"]),
            (SkipCause::Disk { disk_bytes: 5.0 * 1024.0 * 1024.0, free_bytes: 1 << 20, folder: "/tmp".into(), share: 0.8 }, &["writes about 5.00 MiB in the temp folder", "1.00 MiB free in /tmp"]),
            (SkipCause::Step { message: "no column `weight`".into() }, &["no column `weight`"]),
            (SkipCause::Panic { message: "capacity overflow".into() }, &["a step panicked: capacity overflow"]),
            (SkipCause::Program { message: "no answer within 3 s".into() }, &["no answer within 3 s"]),
            (SkipCause::Setup { step: "sort_rows".into(), cause: step() }, &["set-up step sort_rows: no column"]),
            (SkipCause::Lost { during: Some("a sample".into()), signal: Some(libc::SIGKILL), code: None, allowed_bytes: 1 << 30 }, &["SIGKILL", "during a sample", "1.00 GiB"]),
            (SkipCause::Lost { during: None, signal: None, code: Some(7), allowed_bytes: 0 }, &["exit code 7", "preparation of the size's inputs"]),
            (SkipCause::Runaway { during: "the first run".into(), ran_ns: 1.1e10, limit_ns: 1e10, stopped: true }, &["the first run ran for", "past its limit", "was stopped"]),
            (SkipCause::Runaway { during: "a sample".into(), ran_ns: 1.1e10, limit_ns: 1e10, stopped: false }, &["could not be stopped", "sweep was ended"]),
            (SkipCause::FailedAt { at: 1000, cause: step() }, &["failed at 1k rows: no column `weight`"]),
        ];
        for (c, wanted) in cases {
            let w = words(&c, rows);
            for part in wanted {
                assert!(w.contains(part), "{c:?} → {w}: wanted `{part}`");
            }
        }
        let old = SkipInfo { reason: SkipReason::Memory, predicted_ns: None, predicted_bytes: None, cause: None, detail: "needs about 2 GiB".into() };
        assert_eq!(skip_words(&old, rows), "needs about 2 GiB");
    }
}
