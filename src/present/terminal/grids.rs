//! The grids of the terminal summary: design × size tables of times (each with its multiple
//! of the fastest and the mark of what ended sampling), of allocated bytes, of the resident
//! memory programs added, and of how each cost grows beside the workload's expectations.

use super::layout::grid;
use super::{Options, Parts};
use crate::present::digest::{self, counts_allocations, times};
use crate::results::reader::WorkloadResults;
use crate::units::{bytes, escaped, time_ns};

/// The design × size grid of times (median, then its multiple of the fastest and the mark of
/// what ended sampling).
pub(super) fn time_grid(w: &WorkloadResults, o: Options) -> (Vec<String>, bool, bool) {
    let ax = w.header.axis();
    let sizes = &w.all_sizes();
    let extra = w.extra_sizes();
    let mut head = vec!["time per run".to_string()];
    head.extend(sizes.iter().map(|n| format!("{}{}", ax.value(*n), if extra.contains(n) { "+" } else { "" })));
    let mut any_marks = false;
    let mut any_busy = false;
    let mut rows = Vec::new();
    for d in &w.header.designs {
        let mut cells = Vec::new();
        for &n in sizes {
            let cell = match w.point(&d.name, n) {
                Some(p) => match (&p.measured, &p.skipped) {
                    (Some(m), _) => {
                        let r = w.comparison(n).and_then(|c| c.ratios.iter().find(|r| r.design == d.name)).map(|r| r.ratio);
                        let mark = m.stop.mark();
                        any_marks |= !mark.is_empty();
                        let busy = if m.is_contaminated() { "*" } else { "" };
                        let rt = match r {
                            Some(x) if (x - 1.0).abs() < 1e-12 => "best".to_string(),
                            Some(x) => times(x),
                            None => String::new(),
                        };
                        let mut v = vec![time_ns(m.median_ns), format!("{rt}{}{mark}{busy}", if mark.is_empty() && busy.is_empty() { "" } else { " " })];
                        if o.long {
                            if let Some(h) = m.ci_rel_half_width {
                                v.push(format!("±{:.1}%", h * 100.0));
                            }
                        }
                        v
                    }
                    (None, Some(sk)) => match (sk.trial_stopped(n), sk.predicted_ns) {
                        // A trial ran and was stopped: its time is known to pass the limit.
                        (Some(limit), _) => vec![format!("> {}", time_ns(limit)), "trial stopped".into()],
                        (None, Some(p)) => vec![format!("~{}", time_ns(p)), "not run".into()],
                        (None, None) => vec!["—".into(), if sk.reason == crate::results::SkipReason::Failed { "failed".into() } else { "not run".into() }],
                    },
                    _ => vec!["—".into()],
                },
                None => vec![String::new()],
            };
            cells.push(cell);
        }
        any_busy |= w.design_points(&d.name).iter().any(|p| p.measured.as_ref().is_some_and(|m| m.is_contaminated()));
        rows.push((d.name.clone(), cells));
    }
    (grid(&head, &rows, o.width, "  "), any_marks, any_busy)
}

/// Allocated bytes per run, for the designs that count them.
pub(super) fn alloc_grid(w: &WorkloadResults, o: Options) -> Vec<String> {
    let designs: Vec<&str> = w.header.designs.iter().filter(|d| counts_allocations(w, &d.name)).map(|d| d.name.as_str()).collect();
    memory_grid(w, o, "allocated per run", &designs, &|m| {
        let mut v = vec![bytes(m.alloc.bytes as f64)];
        if o.long {
            v.push(format!("peak {}", bytes(m.alloc.peak_live as f64)));
            if let Some(out) = m.output.as_ref().filter(|x| x.chunks > 1) {
                v.push(format!("{} chunks", out.chunks));
            }
        }
        v
    })
}

/// Memory of the designs that are programs (no allocation counts): the resident size their
/// runs added on top of what was resident before them. A program started once per run has
/// no "before": its figure is its whole peak, start-up included, and the title (all such)
/// or a key line (mixed with workers) says so.
pub(super) fn resident_grid(w: &WorkloadResults, o: Options) -> Vec<String> {
    let programs: Vec<(&str, bool)> =
        w.header.designs.iter().filter_map(|d| d.program.as_ref().map(|p| (d.name.as_str(), p.mode == "process"))).collect();
    let designs: Vec<&str> = programs.iter().map(|p| p.0).collect();
    let whole: Vec<&str> = programs.iter().filter(|p| p.1).map(|p| p.0).collect();
    let title = if whole.len() == programs.len() { "peak resident memory" } else { "resident memory added" };
    let mut lines = memory_grid(w, o, title, &designs, &|m| match m.program {
        Some(p) if o.long => vec![bytes(p.working_bytes() as f64), format!("peak {}", bytes(p.peak_resident_bytes as f64))],
        Some(p) => vec![bytes(p.working_bytes() as f64)],
        None => vec!["—".into()],
    });
    if !lines.is_empty() && !whole.is_empty() && whole.len() < programs.len() {
        let names = whole.iter().map(|n| format!("`{}`", escaped(n))).collect::<Vec<_>>().join(", ");
        lines.push(format!("  {names}: a whole process per run, so the whole peak, start-up included"));
    }
    lines
}

/// One memory figure per design and size, the cells made by `cell`.
fn memory_grid(w: &WorkloadResults, o: Options, title: &str, designs: &[&str], cell: &dyn Fn(&crate::results::Measured) -> Vec<String>) -> Vec<String> {
    let ax = w.header.axis();
    let sizes = &w.all_sizes();
    let extra = w.extra_sizes();
    let mut head = vec![title.to_string()];
    head.extend(sizes.iter().map(|n| format!("{}{}", ax.value(*n), if extra.contains(n) { "+" } else { "" })));
    let rows: Vec<(String, Vec<Vec<String>>)> = designs
        .iter()
        .map(|&d| {
            let cells = sizes
                .iter()
                .map(|&n| match w.point(d, n).and_then(|p| p.measured.as_ref()) {
                    Some(m) => cell(m),
                    None if w.point(d, n).is_some() => vec!["—".into()],
                    None => vec![String::new()],
                })
                .collect();
            (d.to_string(), cells)
        })
        .collect();
    if rows.is_empty() {
        return Vec::new();
    }
    grid(&head, &rows, o.width, "  ")
}

/// How each cost grows, beside the expectations, and the prediction at the target.
pub(super) fn growth_grid(p: &Parts, o: Options) -> Vec<String> {
    let w = p.w;
    let ax = w.header.axis();
    let axis = ax.name();
    let target = p.a.predict_at.map(|t| format!("at {} {axis}", ax.value(t)));
    let mut head = vec!["how it grows".to_string(), "time".to_string(), "bytes".to_string(), "expected".to_string()];
    if let Some(t) = &target {
        head.push(t.clone());
    }
    let mut rows = Vec::new();
    for (d, da) in w.header.designs.iter().zip(&p.a.designs) {
        let time = match (&da.time, &da.time_exponent) {
            (Some(t), Some(e)) => vec![t.label(), format!("slope {:.2}", e.slope)],
            (Some(t), None) => vec![t.label()],
            (None, Some(e)) => vec![format!("slope {:.2}", e.slope)],
            (None, None) => vec!["too few sizes".into()],
        };
        let (bytes_label, bytes_met) = digest::bytes_growth(w, da, d.expect_bytes.as_deref());
        let mem = vec![bytes_label];
        let mut exp = Vec::new();
        if let Some(e) = &d.expect_time {
            let meets = da.time.as_ref().map_or(crate::analyse::Meets::No, |t| t.meets(e));
            exp.push(format!("time {e} {}", meets.mark()));
        }
        if let Some(e) = &d.expect_bytes {
            exp.push(format!("bytes {e} {}", match bytes_met { Some(true) => "✓", Some(false) => "✗", None => "?" }));
        }
        if exp.is_empty() {
            exp.push("—".into());
        }
        let mut cells = vec![time, mem, exp];
        if target.is_some() {
            cells.push(match &da.prediction {
                Some(pr) if pr.rough => vec![format!("~{}", time_ns(pr.median)), "order of magnitude".into()],
                Some(pr) => vec![format!("~{}", time_ns(pr.median)), format!("{}–{}", time_ns(pr.low), time_ns(pr.high))],
                None => vec!["—".into()],
            });
        }
        rows.push((d.name.clone(), cells));
    }
    grid(&head, &rows, o.width, "  ")
}
