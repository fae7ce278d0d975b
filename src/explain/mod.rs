//! Findings: measured evidence turned into statements with their numbers, what they imply,
//! and what to do — plus one verdict per workload (which design to use, from what size, and
//! why).
//!
//! A finding never states a cause the evidence does not support: "repeated copying" is
//! only said when allocated bytes per row themselves grow with the rows; "stalls" only when
//! the tail is measured over enough samples. Each design's step cost-model notes (written
//! beside the steps' code) are attached so the reader sees the mechanism the trade knows.

use crate::analyse::{class_of, DesignAnalysis, WorkloadAnalysis};
use crate::fit::growth::GrowthClass;
use crate::present::units::{bytes, ratio, rows_label_f, time_ns};
use crate::results::reader::WorkloadResults;
use crate::results::{EquivalenceStatus, Measured};
use crate::spec::model::ColumnKind;
use crate::spec::units::rows_label;
use serde::{Deserialize, Serialize};

/// One statement about a design (or the workload), backed by numbers.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Finding {
    /// The design it is about, or None for the workload.
    pub design: Option<String>,
    /// A short tag: growth, expectation, copying, peak, chunks, dtype, parallel, tail,
    /// mismatch, skipped, extrapolation.
    pub kind: String,
    /// What was measured, with the numbers.
    pub measured: String,
    /// What it implies.
    pub implies: String,
    /// What to do (may be empty).
    pub action: String,
}

/// Which design to use.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Verdict {
    pub design: Option<String>,
    /// One sentence: the design, from what size, and why.
    pub text: String,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Explanation {
    pub workload: String,
    pub verdict: Verdict,
    pub findings: Vec<Finding>,
    /// Cost-model notes of the steps used, by step name.
    pub step_notes: Vec<(String, String)>,
}

fn last_measured<'a>(w: &'a WorkloadResults, design: &str) -> Option<(u64, &'a Measured)> {
    w.design_points(design).into_iter().rev().find_map(|p| p.measured.as_ref().map(|m| (p.rows, m)))
}

fn first_measured<'a>(w: &'a WorkloadResults, design: &str) -> Option<(u64, &'a Measured)> {
    w.design_points(design).into_iter().find_map(|p| p.measured.as_ref().map(|m| (p.rows, m)))
}

fn rank(c: GrowthClass) -> usize {
    GrowthClass::ALL.iter().position(|x| *x == c).unwrap_or(0)
}

/// Explain one workload from its results and analysis.
pub fn explain(w: &WorkloadResults, a: &WorkloadAnalysis) -> Explanation {
    let mut findings = Vec::new();
    let verdict = verdict(w, a);
    let better = verdict.design.clone();
    let table_bytes = |rows: u64| w.tables.iter().find(|t| t.rows == rows).map(|t| t.table_bytes_estimate);

    for (dh, da) in w.header.designs.iter().zip(&a.designs) {
        let name = &dh.name;
        let f = |kind: &str, measured: String, implies: String, action: String| Finding {
            design: Some(name.clone()),
            kind: kind.into(),
            measured,
            implies,
            action,
        };
        let switch = |why: &str| match &better {
            Some(b) if b != name => format!("use `{b}` instead ({why})"),
            _ => String::new(),
        };

        // Growth of time, and the teaching expectation.
        if let Some(t) = &da.time {
            let exp = da
                .time_exponent
                .as_ref()
                .map(|e| format!(", log-log slope {:.2} [{:.2}–{:.2}] over the top {} sizes", e.slope, e.low, e.high, e.sizes_used))
                .unwrap_or_default();
            let runner = t
                .runner_up
                .as_ref()
                .map(|r| format!("; runner-up {r}, ΔAICc {:.1}", t.delta_aicc))
                .unwrap_or_default();
            findings.push(f(
                "growth",
                format!("time grows as {} over {} sizes{runner}{exp}", t.class, t.sizes),
                match class_of(&t.class) {
                    Some(GrowthClass::Quadratic) | Some(GrowthClass::Cubic) => {
                        "doubling the rows multiplies the time by about 4 (n²) or 8 (n³): fine on a sample, hours on the full data".into()
                    }
                    Some(GrowthClass::Linear) | Some(GrowthClass::Linearithmic) => "the cost scales with the data (roughly proportional)".into(),
                    _ => "the cost barely depends on the number of rows".into(),
                },
                String::new(),
            ));
            if let Some(e) = &dh.expect_time {
                let (want, got) = (class_of(e), class_of(&t.class));
                let ok = want == got;
                let near = matches!(
                    (want, got),
                    (Some(GrowthClass::Linear), Some(GrowthClass::Linearithmic)) | (Some(GrowthClass::Linearithmic), Some(GrowthClass::Linear))
                );
                findings.push(f(
                    "expectation",
                    format!("the workload expects time to grow as {e}; measured {}", t.class),
                    if ok {
                        "the measurement confirms the rule".into()
                    } else if near {
                        "close to the rule: over a few decades n and n log n differ by a slowly growing factor, so per-row overheads that creep up with size tip the choice".into()
                    } else {
                        "the measurement does not match the expectation".into()
                    },
                    if ok || near { String::new() } else { "fixed costs can hide growth at small sizes: extend the sizes if the decision depends on it".into() },
                ));
            }
        }
        if let (Some(e), Some(b)) = (&dh.expect_bytes, &da.bytes) {
            let ok = class_of(e) == class_of(&b.class);
            findings.push(f(
                "expectation",
                format!("the workload expects allocated bytes to grow as {e}; measured {}", b.class),
                if ok { "the measurement confirms the rule".into() } else { "the measurement does not match the expectation".into() },
                String::new(),
            ));
        }

        // Repeated copying: bytes per row that grow with the rows.
        if let (Some((n0, m0)), Some((n1, m1))) = (first_measured(w, name), last_measured(w, name)) {
            let per0 = m0.alloc.bytes as f64 / n0 as f64;
            let per1 = m1.alloc.bytes as f64 / n1 as f64;
            let superlinear = da.bytes.as_ref().and_then(|b| class_of(&b.class)).map(|c| rank(c) >= rank(GrowthClass::Quadratic));
            let slope = da.bytes_exponent.unwrap_or(1.0);
            if n1 >= 4 * n0 && per1 > 2.0 * per0 && (superlinear == Some(true) || (superlinear.is_none() && slope >= 1.5)) {
                let tb = table_bytes(n1).map(|t| format!(", {:.0}× the table's own {}", m1.alloc.bytes as f64 / t.max(1.0), bytes(t))).unwrap_or_default();
                findings.push(f(
                    "copying",
                    format!(
                        "allocates {} per run at {} rows: {} per row, up from {} per row at {} rows{tb}; bytes grow as {}",
                        bytes(m1.alloc.bytes as f64),
                        rows_label(n1),
                        bytes(per1),
                        bytes(per0),
                        rows_label(n0),
                        da.bytes.as_ref().map(|b| b.class.clone()).unwrap_or_else(|| format!("n^{slope:.2}"))
                    ),
                    "each new row costs more than the one before: the data built so far is copied again and again (repeated copying of the growing table)".into(),
                    switch("it copies each value a bounded number of times"),
                ));
            }
            // Peak live memory against the table.
            if let Some(t) = table_bytes(n1) {
                let copies = m1.alloc.peak_live as f64 / t.max(1.0);
                if copies >= 2.0 {
                    findings.push(f(
                        "peak",
                        format!("peak live memory {} at {} rows, {:.1}× the table's size ({})", bytes(m1.alloc.peak_live as f64), rows_label(n1), copies, bytes(t)),
                        format!("at its peak the design holds the equivalent of about {:.0} tables: memory, not time, may be the limit on the full data", copies.floor()),
                        String::new(),
                    ));
                }
            }
            // Fragmented output.
            let c0 = m0.output.as_ref().map(|o| o.chunks).unwrap_or(1);
            let c1 = m1.output.as_ref().map(|o| o.chunks).unwrap_or(1);
            if c1 > 1 && c1 > c0 {
                findings.push(f(
                    "chunks",
                    format!("leaves its output in {c1} chunks at {} rows ({c0} at {})", rows_label(n1), rows_label(n0)),
                    "storage is fragmented in proportion to the work done; every later operation that needs contiguous storage pays to consolidate it".into(),
                    "consolidate once at the end (or build once) instead of leaving the chunks".into(),
                ));
            }
            // Parallelism and stalls at the largest size.
            if m1.median_ns > 1e5 {
                let par = m1.cpu_ns / m1.median_ns;
                if par >= 1.4 {
                    findings.push(f(
                        "parallel",
                        format!("CPU time is {par:.1}× wall time at {} rows", rows_label(n1)),
                        "the work ran on several cores; on a busier or smaller machine it will be slower".into(),
                        String::new(),
                    ));
                } else if par <= 0.5 {
                    findings.push(f(
                        "parallel",
                        format!("CPU time is only {par:.2}× wall time at {} rows", rows_label(n1)),
                        "the design spends time waiting (I/O or the system), not computing".into(),
                        String::new(),
                    ));
                }
            }
            if m1.samples_ns.len() >= 20 && m1.p50_ns > 0.0 && m1.p99_ns / m1.p50_ns >= 2.0 {
                findings.push(f(
                    "tail",
                    format!("p99 is {:.1}× the median at {} rows ({} vs {})", m1.p99_ns / m1.p50_ns, rows_label(n1), time_ns(m1.p99_ns), time_ns(m1.p50_ns)),
                    "some runs stall (allocation, page faults or another process); the median is the fairer comparison".into(),
                    String::new(),
                ));
            }
            // Dtype drift from the declared schema.
            if let Some(o) = &m1.output {
                let drift: Vec<String> = o
                    .dtypes
                    .iter()
                    .filter_map(|(col, dt)| {
                        let declared = w.header.columns.iter().find(|c| &c.name == col)?;
                        let want = match declared.kind {
                            ColumnKind::Int | ColumnKind::Key => "i64",
                            ColumnKind::Float => "f64",
                            ColumnKind::Bool => "bool",
                            ColumnKind::Text => "str",
                            ColumnKind::Category => "cat",
                            ColumnKind::Date => "date",
                        };
                        // Records hold categorical values as text: not a drift of the design.
                        let by_records = declared.kind == ColumnKind::Category && dt == "str" && dh.feed == "records";
                        (dt != want && !by_records).then(|| format!("{col}: {want} → {dt}"))
                    })
                    .collect();
                if !drift.is_empty() {
                    findings.push(f(
                        "dtype",
                        format!("output dtypes differ from the declared schema: {}", drift.join(", ")),
                        "values were cast on the way: wider types cost memory and speed, text loses meaning".into(),
                        "create the column typed from the start, or cast explicitly where intended".into(),
                    ));
                }
            }
        }

        // Skipped points.
        let skipped: Vec<_> = w.design_points(name).into_iter().filter(|p| p.skipped.is_some()).collect();
        if let Some(first) = skipped.first() {
            let sk = first.skipped.as_ref().expect("filtered");
            let pred = sk.predicted_ns.map(|p| format!("; one run was predicted at {}", time_ns(p))).unwrap_or_default();
            findings.push(f(
                "skipped",
                format!("not measured at {} of {} sizes, from {} rows: {}{pred}", skipped.len(), w.header.sizes.len(), rows_label(first.rows), sk.reason.label()),
                "its cost outgrew the budget before the data did".into(),
                String::new(),
            ));
        }
        if let Some(p) = &da.prediction {
            if p.far {
                findings.push(f(
                    "extrapolation",
                    format!("the prediction at {} rows is {:.1} decades past the largest measured size", rows_label(p.rows), p.extrapolation_decades),
                    "a class fitted on small sizes can change at large ones: read it as an order of magnitude".into(),
                    "measure a size closer to the target if the decision depends on it".into(),
                ));
            }
        }
    }

    for c in &w.comparisons {
        if c.equivalence.status == EquivalenceStatus::Mismatch {
            findings.push(Finding {
                design: None,
                kind: "mismatch".into(),
                measured: format!("at {} rows: {}", rows_label(c.rows), c.equivalence.note),
                implies: "these designs do not compute the same result, so their costs are not comparable".into(),
                action: "fix the design that is wrong, or declare `outputs_differ:` with the reason".into(),
            });
        }
    }

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
    Explanation { workload: w.header.workload.clone(), verdict, findings, step_notes }
}

/// Which design to use, from what size, and why.
pub fn verdict(w: &WorkloadResults, a: &WorkloadAnalysis) -> Verdict {
    // At the target: predicted medians; otherwise the largest size with two or more designs measured.
    let predicted: Vec<(&DesignAnalysis, f64, f64, f64)> =
        a.designs.iter().filter_map(|d| d.prediction.as_ref().map(|p| (d, p.median, p.low, p.high))).collect();
    let use_prediction = a.predict_at.is_some() && predicted.len() >= 2;
    let (best_name, text) = if use_prediction {
        let at = a.predict_at.unwrap_or(0);
        let mut v = predicted.clone();
        v.sort_by(|x, y| x.1.total_cmp(&y.1));
        let (best, med, lo, hi) = v[0];
        let next = v.get(1);
        let class = best.time.as_ref().map(|t| t.class.clone()).unwrap_or_default();
        let vs = next
            .map(|n| {
                if n.1 / med < 1.1 {
                    format!(", about the same as `{}` (predicted {}: either will do)", n.0.design, time_ns(n.1))
                } else {
                    format!(", {} less than `{}` (predicted {})", ratio(n.1 / med), n.0.design, time_ns(n.1))
                }
            })
            .unwrap_or_default();
        (best.design.clone(), format!(
            "use `{}`: at {} rows it is predicted to take {} [{}–{}] per run{vs}; its time grows as {class}",
            best.design,
            rows_label(at),
            time_ns(med),
            time_ns(lo),
            time_ns(hi)
        ))
    } else {
        let size = w
            .comparisons
            .iter()
            .filter(|c| c.ratios.len() >= 2)
            .max_by_key(|c| c.rows);
        match size.and_then(|c| c.fastest.clone().map(|f| (c, f))) {
            Some((c, f)) => {
                let next = c.ratios.iter().filter(|r| r.design != f).min_by(|x, y| x.ratio.total_cmp(&y.ratio));
                let vs = next.map(|n| format!(", {} faster than `{}`", ratio(n.ratio), n.design)).unwrap_or_default();
                (f.clone(), format!("use `{f}`: fastest at {} rows, the largest size compared{vs}", rows_label(c.rows)))
            }
            None => {
                return Verdict { design: None, text: "no verdict: fewer than two designs were measured at any size".into() };
            }
        }
    };
    // Say so when the measured winner at the largest compared size is another design.
    let measured_note = if use_prediction {
        w.comparisons
            .iter()
            .filter(|c| c.ratios.len() >= 2)
            .max_by_key(|c| c.rows)
            .and_then(|c| c.fastest.clone().map(|f| (c.rows, f)))
            .filter(|(_, f)| f != &best_name)
            .map(|(n, f)| format!(" (measured: `{f}` was fastest at {} rows, the largest size compared)", rows_label(n)))
            .unwrap_or_default()
    } else {
        String::new()
    };
    let text = format!("{text}{measured_note}");
    // From what size: a crossover where the best is cheaper only above it.
    let from = a.crossovers.iter().filter(|c| c.faster_above == best_name).max_by(|x, y| x.rows.total_cmp(&y.rows));
    let tail = match from {
        Some(c) => format!(
            "; below about {} rows [{}–{}] `{}` is cheaper",
            rows_label_f(c.rows),
            rows_label_f(c.rows_low),
            rows_label_f(c.rows_high),
            c.faster_below
        ),
        None => String::new(),
    };
    Verdict { design: Some(best_name), text: format!("{text}{tail}") }
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
    let _ = writeln!(s, "  verdict: {}", e.verdict.text);
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
