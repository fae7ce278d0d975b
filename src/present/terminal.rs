//! The terminal summary of a run: per workload, a time table (each design at each size,
//! with its ratio to the fastest and a mark for what ended sampling), an allocation table,
//! the growth exponents beside the expectations, skipped points with their predictions, and
//! the equivalence verdict. Built from [`RunResults`] alone, so `recap` shows exactly what
//! `sweep` showed.

use super::units::{bytes, ratio, time_ns};
use crate::results::reader::{RunResults, WorkloadResults};
use crate::results::summary::Summary;
use crate::results::{EquivalenceStatus, StopReason};
use crate::spec::units::rows_label;
use comfy_table::{presets, CellAlignment, ContentArrangement, Table};
use std::fmt::Write;

/// Styling switches.
#[derive(Debug, Clone, Copy)]
pub struct Style {
    pub color: bool,
}

impl Style {
    /// Colour only on a terminal and when NO_COLOR is not set.
    pub fn detect() -> Style {
        use std::io::IsTerminal;
        Style { color: std::io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none() }
    }
    fn bold(&self, s: &str) -> String {
        if self.color {
            format!("\x1b[1m{s}\x1b[0m")
        } else {
            s.to_string()
        }
    }
    fn alarm(&self, s: &str) -> String {
        if self.color {
            format!("\x1b[1;31m{s}\x1b[0m")
        } else {
            s.to_string()
        }
    }
}

fn grid() -> Table {
    let mut t = Table::new();
    t.load_preset(presets::NOTHING).set_content_arrangement(ContentArrangement::Disabled);
    t
}

/// The whole run as text.
pub fn render(r: &RunResults, style: Style) -> String {
    let mut s = String::new();
    if let Some(h) = &r.run {
        let _ = writeln!(
            s,
            "{} · {} · {} cores · polars {} · yardstick {}",
            style.bold("framecost run"),
            h.run_id,
            h.machine.logical_cores,
            h.machine.polars_version,
            time_ns(h.yardstick.median_ns)
        );
    }
    // A busy machine is named first: its points are marked and left out of classes and
    // verdicts, and the reader should know before reading any number.
    let measured: Vec<&crate::results::Measured> = r.workloads.iter().flat_map(|w| &w.points).filter_map(|p| p.measured.as_ref()).collect();
    let busy = measured.iter().filter(|m| m.is_contaminated()).count();
    if busy > 0 {
        let _ = writeln!(
            s,
            "{}",
            style.alarm(&format!(
                "the machine was busy: {busy} of {} points were measured while other work competed for the cores; they are marked and left out of growth classes and verdicts",
                measured.len()
            ))
        );
    }
    for w in &r.workloads {
        s.push('\n');
        s.push_str(&render_workload(w, style));
    }
    if r.damaged_lines > 0 {
        let _ = writeln!(s, "\n{} damaged line(s) in the results file were left out", r.damaged_lines);
    }
    if !r.complete() {
        let _ = writeln!(s, "\nthis run did not finish: what is shown is what was measured before it stopped");
    }
    s
}

/// One workload's block.
pub fn render_workload(w: &WorkloadResults, style: Style) -> String {
    let mut s = String::new();
    let h = &w.header;
    let _ = writeln!(s, "{} {}", style.bold("▌"), style.bold(&h.workload));
    if !h.about.is_empty() {
        let first = h.about.split(". ").next().unwrap_or("");
        let _ = writeln!(s, "  {}", first.trim_end_matches('.'));
    }
    let sizes: Vec<u64> = h.sizes.clone();
    let ax = h.axis();
    if let Some(a) = &h.axis {
        let _ = writeln!(s, "  swept: {} ({}{}) with {} rows at every point", a.name, a.set.label(), a.column.as_ref().map(|c| format!(" of `{c}`")).unwrap_or_default(), rows_label(a.rows));
    }

    // Time table.
    let mut t = grid();
    let mut head = vec!["time per run".to_string()];
    head.extend(sizes.iter().map(|n| ax.value(*n)));
    t.set_header(head);
    let mut any_marks = false;
    for d in &h.designs {
        let mut row = vec![d.name.clone()];
        for &n in &sizes {
            let cell = match w.point(&d.name, n) {
                Some(p) => match (&p.measured, &p.skipped) {
                    (Some(m), _) => {
                        let r = w
                            .comparison(n)
                            .and_then(|c| c.ratios.iter().find(|r| r.design == d.name))
                            .map(|r| r.ratio);
                        let mark = m.stop.mark();
                        if !mark.is_empty() {
                            any_marks = true;
                        }
                        let rt = match r {
                            Some(x) if (x - 1.0).abs() < 1e-12 => "best".to_string(),
                            Some(x) => ratio(x),
                            None => String::new(),
                        };
                        format!("{} {rt}{}", time_ns(m.median_ns), if mark.is_empty() { String::new() } else { format!(" {mark}") })
                    }
                    (None, Some(sk)) => match sk.predicted_ns {
                        Some(p) => format!("skip ~{}", time_ns(p)),
                        None => "skip".to_string(),
                    },
                    _ => "—".into(),
                },
                None => "".into(),
            };
            row.push(cell);
        }
        t.add_row(row);
    }
    for c in t.column_iter_mut().skip(1) {
        c.set_cell_alignment(CellAlignment::Right);
    }
    for line in t.to_string().lines() {
        let _ = writeln!(s, "  {}", line.trim_end());
    }

    // Allocation table.
    let mut a = grid();
    let mut head = vec!["allocated per run".to_string()];
    head.extend(sizes.iter().map(|n| ax.value(*n)));
    a.set_header(head);
    for d in &h.designs {
        let mut row = vec![d.name.clone()];
        for &n in &sizes {
            row.push(match w.point(&d.name, n).and_then(|p| p.measured.as_ref()) {
                Some(m) => {
                    let chunks = m.output.as_ref().map(|o| o.chunks).unwrap_or(0);
                    if chunks > 1 {
                        format!("{} ({} chunks)", bytes(m.alloc.bytes as f64), chunks)
                    } else {
                        bytes(m.alloc.bytes as f64)
                    }
                }
                None => String::new(),
            });
        }
        a.add_row(row);
    }
    for c in a.column_iter_mut().skip(1) {
        c.set_cell_alignment(CellAlignment::Right);
    }
    s.push('\n');
    for line in a.to_string().lines() {
        let _ = writeln!(s, "  {}", line.trim_end());
    }

    // Growth: fitted classes beside the expectations, then the findings.
    let analysis = crate::analyse::analyse_workload(w, &crate::analyse::AnalyseOptions::default());
    s.push('\n');
    let _ = writeln!(s, "  how cost grows (class chosen by AICc over each size's quartiles; exponent = log-log slope of medians, 95% bootstrap interval):");
    for (d, da) in h.designs.iter().zip(&analysis.designs) {
        let time = match (&da.time, &da.time_exponent) {
            (Some(t), Some(e)) => format!("time {} (exp {:.2} [{:.2}–{:.2}])", t.label(), e.slope, e.low, e.high),
            (Some(t), None) => format!("time {}", t.label()),
            (None, Some(e)) => format!("time exp {:.2}", e.slope),
            (None, None) => "time n/a (too few sizes)".into(),
        };
        let mem = match (&da.bytes, da.bytes_exponent) {
            (Some(b), _) => format!("bytes {}", b.label()),
            (None, Some(e)) => format!("bytes exp {e:.2}"),
            (None, None) => "bytes n/a".into(),
        };
        let mut line = format!("    {:<24} {time}  {mem}", d.name);
        let mut exp = Vec::new();
        if let Some(e) = &d.expect_time {
            exp.push(format!("time {e}"));
        }
        if let Some(e) = &d.expect_bytes {
            exp.push(format!("bytes {e}"));
        }
        if !exp.is_empty() {
            let _ = write!(line, "   expected: {}", exp.join(", "));
        }
        if let Some(p) = &da.prediction {
            let _ = write!(line, "   at {}: ~{}", ax.point(p.rows), time_ns(p.median));
        }
        let _ = writeln!(s, "{}", line.trim_end());
    }
    let explanation = crate::explain::explain(w, &analysis);
    s.push('\n');
    s.push_str(&crate::explain::render_without(&explanation, false, &["growth", "mismatch"]));

    // Set-up: untimed, once per size, outside the samples.
    for d in &w.header.designs {
        let made: Vec<String> = w
            .design_points(&d.name)
            .iter()
            .filter_map(|p| p.setup_ns.map(|ns| format!("{} at {}", crate::present::units::time_ns(ns), w.header.axis().point(p.rows))))
            .collect();
        if !made.is_empty() {
            let _ = writeln!(s, "  set-up of `{}` (once per size, not in the samples): {}", d.name, made.join(", "));
        }
    }

    // Skips.
    let skips: Vec<String> = w
        .points
        .iter()
        .filter_map(|p| {
            p.skipped.as_ref().map(|sk| format!("    {} at {}: {} — {}", p.design, w.header.axis().point(p.rows), sk.reason.label(), sk.detail))
        })
        .collect();
    if !skips.is_empty() {
        let _ = writeln!(s, "\n  skipped:");
        for l in skips {
            let _ = writeln!(s, "{l}");
        }
    }

    if any_marks {
        let _ = writeln!(
            s,
            "\n  sampling ended by: c {}, b {}, r {}, i {}; unmarked: {} (95% interval of the median within ±{:.0}%)",
            StopReason::SampleCap.label(),
            StopReason::PointBudget.label(),
            StopReason::RunBudget.label(),
            StopReason::Interrupted.label(),
            StopReason::Precise.label(),
            h.budget.precision * 100.0
        );
    }

    // Equivalence.
    let mismatches: Vec<_> = w.comparisons.iter().filter(|c| c.equivalence.status == EquivalenceStatus::Mismatch).collect();
    let checked = w.comparisons.iter().filter(|c| c.equivalence.status != EquivalenceStatus::NotChecked).count();
    s.push('\n');
    if !mismatches.is_empty() {
        for c in mismatches {
            let _ = writeln!(s, "  {} at {}: {}", style.alarm("OUTPUTS DIFFER"), w.header.axis().point(c.rows), c.equivalence.note);
        }
    } else if w.comparisons.iter().any(|c| c.equivalence.status == EquivalenceStatus::DifferAsDeclared) {
        let _ = writeln!(s, "  outputs: differ between designs, as the workload declares ({})", h.outputs_differ.clone().unwrap_or_default());
    } else if checked > 0 {
        let _ = writeln!(s, "  outputs: identical contents from every design at all {checked} compared size(s)");
    } else {
        let _ = writeln!(s, "  outputs: not compared (fewer than two designs measured at any size)");
    }
    s
}

/// One line per workload for the end of a long sweep.
pub fn one_liners(summary: &Summary) -> Vec<String> {
    summary
        .workloads
        .iter()
        .map(|w| {
            let largest = w
                .sizes
                .iter()
                .rev()
                .find(|&&n| w.designs.iter().filter(|d| d.points.iter().any(|p| p.rows == n && p.median_ns.is_some())).count() >= 2);
            let best = largest.and_then(|&n| {
                w.designs
                    .iter()
                    .filter_map(|d| d.points.iter().find(|p| p.rows == n).and_then(|p| p.median_ns).map(|m| (d.design.clone(), m)))
                    .min_by(|a, b| a.1.total_cmp(&b.1))
            });
            match (largest, best) {
                (Some(n), Some((d, m))) => format!("{}: fastest at {} is {} ({})", w.workload, crate::results::Axis(w.axis.as_ref()).point(*n), d, time_ns(m)),
                _ => format!("{}: no size with two designs measured", w.workload),
            }
        })
        .collect()
}
