//! Why a point was not measured, as the numbers measurement decided on: the prediction and
//! the budget, the memory estimate and the limit, the disk estimate and the free space, the
//! size a design failed at, how a lost measuring process ended, a step's own error text
//! (where the text is the data). Measurement fills a [`SkipCause`]; only `present` words
//! it (`present::causes`).
//!
//! Runs made before causes were recorded have only the prose `SkipInfo::detail`; readers
//! fall back to it. New runs write both: the writer fills `detail` through the wording
//! `present` registers with [`word_with`] (so an older framecost still reads and shows them).

use serde::{Deserialize, Serialize};
use std::sync::OnceLock;

/// Why a point was not measured, in numbers.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum SkipCause {
    /// One run predicted at `predicted_ns`; `runs` of them would pass the point budget.
    PointBudget { predicted_ns: f64, runs: f64, budget_ns: f64 },
    /// `runs` runs at `predicted_ns` would pass the whole run's budget, `used_ns` of it used
    /// and `kept_ns` of the rest kept for cheaper designs at the same size (0 in runs made
    /// before the designs at a size shared the budget).
    RunBudget {
        predicted_ns: f64,
        runs: f64,
        budget_ns: f64,
        used_ns: f64,
        #[serde(default)]
        kept_ns: f64,
    },
    /// At swept value `at`, a program whose start-up may be most of its time was given one
    /// trial run (its extrapolated time was over the budget), stopped unfinished after
    /// `limit_ns`: `runs` such runs would pass the point budget `budget_ns`.
    TrialOverBudget { at: u64, limit_ns: f64, runs: f64, budget_ns: f64 },
    /// At swept value `at` the point budget allowed only `samples` of the `needed`.
    TooFewSamples { at: u64, budget_ns: f64, samples: u64, needed: u64, run_ns: f64 },
    /// The estimated memory does not fit in `limit_bytes` (set by `limit_source`), of which
    /// `share` may be used; a `hard` limit cannot be forced past.
    Memory { need: MemoryNeed, engine: String, limit_bytes: u64, limit_source: String, share: f64, hard: bool },
    /// The files the size would write (`disk_bytes`) do not fit in `share` of the
    /// `free_bytes` of `folder`.
    Disk { disk_bytes: f64, free_bytes: u64, folder: String, share: f64 },
    /// A step (or the check of its output) returned an error: its own text.
    Step { message: String },
    /// A step panicked, with the panic's message.
    Panic { message: String },
    /// A design that is a program failed: what its handle reported.
    Program { message: String },
    /// An untimed set-up step failed.
    Setup { step: String, cause: Box<SkipCause> },
    /// The measuring process ended abnormally `during` something (none: while the size's
    /// inputs were prepared), by `signal` or with exit `code`, allowed `allowed_bytes`.
    Lost { during: Option<String>, signal: Option<i32>, code: Option<i32>, allowed_bytes: u64 },
    /// One run went on for `ran_ns`, past its `limit_ns`; `stopped`: its measuring process
    /// was stopped (isolated sweep), else the whole sweep was ended (in-process).
    Runaway { during: String, ran_ns: f64, limit_ns: f64, stopped: bool },
    /// The design failed at a smaller swept value `at`, and so runs at no larger one.
    FailedAt { at: u64, cause: Box<SkipCause> },
}

/// A memory estimate in parts (bytes).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct MemoryNeed {
    pub table: f64,
    pub records: f64,
    /// What the table generator builds besides the table: Zipf tables and word pools.
    pub generator: f64,
    /// The largest design's working memory.
    pub working: f64,
    /// Set when the working memory is that of an SQL join's rows, bounded from the table
    /// plan before the design was measured: the rows.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub joined_rows: Option<f64>,
    /// Set when the working memory is that of a streaming query's groups, bounded the same
    /// way: the groups.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub groups: Option<f64>,
}

impl MemoryNeed {
    pub fn total(&self) -> f64 {
        self.table + self.records + self.generator + self.working
    }
}

/// How a cause is worded, given the swept axis of its workload (registered by `present`).
pub type Words = fn(&SkipCause, super::Axis<'_>) -> String;

static WORDS: OnceLock<Words> = OnceLock::new();

/// Register the wording of causes (`cli::main` registers `present::causes::words`).
pub fn word_with(words: Words) {
    let _ = WORDS.set(words);
}

/// A cause in the registered words (empty when none is registered: a reader then has the
/// cause itself).
pub fn worded(cause: &SkipCause, axis: super::Axis<'_>) -> String {
    WORDS.get().map(|w| w(cause, axis)).unwrap_or_default()
}

/// Give a skipped point's `detail` the words of its cause, for older readers (a point
/// that has words already keeps them).
pub fn fill_detail(p: &mut super::PointRecord, axis: Option<&super::AxisPlan>) {
    if let Some(s) = p.skipped.as_mut().filter(|s| s.detail.is_empty()) {
        if let Some(c) = &s.cause {
            s.detail = worded(c, super::Axis(axis));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::results::{SkipInfo, SkipReason};

    /// A record from before causes were recorded: prose only; it reads, with no cause.
    #[test]
    fn an_old_record_reads_with_its_detail() {
        let old = r#"{"reason":"memory","predicted_ns":null,"predicted_bytes":3.0e9,"detail":"needs about 2.8 GiB"}"#;
        let s: SkipInfo = serde_json::from_str(old).expect("reads");
        assert_eq!(s.reason, SkipReason::Memory);
        assert!(s.cause.is_none());
        assert_eq!(s.detail, "needs about 2.8 GiB");
    }

    /// A tampered cause: a negative budget makes the line damaged; a terminal escape in a
    /// name is made visible.
    #[test]
    fn tampered_causes_are_caught() {
        let point = |c: SkipCause| {
            crate::results::Record::Point(crate::results::PointRecord {
                workload: "w".into(),
                design: "d".into(),
                rows: 1000,
                measured: None,
                skipped: Some(SkipInfo::failed(c)),
                setup_ns: None,
            })
        };
        let bad = point(SkipCause::PointBudget { predicted_ns: 1e9, runs: 4.0, budget_ns: -5.0 });
        assert!(!crate::results::sane::plausible(&bad));
        let deep = point(SkipCause::FailedAt { at: 0, cause: Box::new(SkipCause::Step { message: "x".into() }) });
        assert!(!crate::results::sane::plausible(&deep), "a swept value of 0 is no size");
        let need = MemoryNeed { table: 1.0, records: 0.0, generator: 0.0, working: 0.0, ..Default::default() };
        let odd = point(SkipCause::Memory { need, engine: "memory\u{1b}[2J".into(), limit_bytes: 1, limit_source: "x".into(), share: 0.8, hard: false });
        assert!(crate::results::sane::plausible(&odd));
        let crate::results::Record::Point(p) = crate::results::sane::tidy(odd) else { panic!("a point") };
        let Some(SkipCause::Memory { engine, .. }) = p.skipped.and_then(|s| s.cause) else { panic!("a memory cause") };
        assert!(!engine.contains('\u{1b}'), "{engine}");
    }

    /// Every cause survives a round trip through the file format.
    #[test]
    fn causes_round_trip() {
        let need = MemoryNeed { table: 1e9, records: 0.0, generator: 2e6, working: 3e9, ..Default::default() };
        let causes = vec![
            SkipCause::PointBudget { predicted_ns: 2.5e9, runs: 4.0, budget_ns: 5e9 },
            SkipCause::RunBudget { predicted_ns: 1e9, runs: 4.0, budget_ns: 6e10, used_ns: 5.9e10, kept_ns: 0.0 },
            SkipCause::TooFewSamples { at: 4096, budget_ns: 5e9, samples: 3, needed: 6, run_ns: 1.2e9 },
            SkipCause::Memory { need, engine: "memory".into(), limit_bytes: 1 << 32, limit_source: "cgroup".into(), share: 0.8, hard: true },
            SkipCause::Disk { disk_bytes: 5e9, free_bytes: 1 << 30, folder: "/tmp".into(), share: 0.8 },
            SkipCause::Setup { step: "sort_rows".into(), cause: Box::new(SkipCause::Panic { message: "capacity overflow".into() }) },
            SkipCause::Lost { during: Some("a sample".into()), signal: Some(9), code: None, allowed_bytes: 1 << 30 },
            SkipCause::Runaway { during: "the first run".into(), ran_ns: 1.1e10, limit_ns: 1e10, stopped: true },
            SkipCause::FailedAt { at: 1000, cause: Box::new(SkipCause::Step { message: "no column `x`".into() }) },
            SkipCause::Program { message: "no answer".into() },
        ];
        for c in causes {
            let s = SkipInfo { reason: SkipReason::Failed, predicted_ns: None, predicted_bytes: None, cause: Some(c.clone()), detail: String::new() };
            let text = serde_json::to_string(&s).expect("writes");
            let back: SkipInfo = serde_json::from_str(&text).expect("reads");
            assert_eq!(back.cause, Some(c), "{text}");
        }
    }
}
