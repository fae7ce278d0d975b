//! The terminal summary of a run, decision first: per workload the answer (which design,
//! from what size, its cost at the target, why, what to watch), then a design × size grid of
//! times with each design's multiple of the fastest under it, the allocations, how each
//! cost grows beside the expectations, and the findings grouped so no sentence repeats.
//! A run of several workloads opens with one line per workload.
//!
//! Everything fits the width it is given ([`Options::detect`]: the terminal's width, else
//! `COLUMNS`, else 100): text is wrapped with hanging indents and grids that are too wide
//! are split into blocks of sizes. `--long` adds every finding, the cost-model notes, the
//! intervals, chunks, set-up times and skip details. Drawn from a run's saved results with
//! their analysis and explanations made once by the caller ([`Analysed`]), so `recap` prints
//! exactly what `sweep` printed.

use super::digest::{self, counts_allocations, times, Digest};
use super::units::{bytes, time_ns};
use crate::analyse::WorkloadAnalysis;
use crate::explain::{Analysed, Explanation};
use crate::fit::growth::GrowthClass;
use crate::results::reader::WorkloadResults;
use crate::results::{EquivalenceStatus, StopReason};
use std::fmt::Write;

/// Styling switches.
#[derive(Debug, Clone, Copy)]
pub struct Style {
    pub color: bool,
}

impl Style {
    /// Colour as `--color` says; `auto`: only on a terminal and when NO_COLOR is not set.
    pub fn detect() -> Style {
        Style { color: super::color::stdout_on() }
    }
    fn bold(&self, s: &str) -> String {
        super::color::paint(super::color::STRONG, self.color, s)
    }
    fn alarm(&self, s: &str) -> String {
        super::color::paint(super::color::ALARM, self.color, s)
    }
}

/// How much to show, and how wide.
#[derive(Debug, Clone, Copy)]
pub struct Options {
    /// Columns available (never below [`MIN_WIDTH`]).
    pub width: usize,
    /// Everything: all findings, cost-model notes, intervals, chunks, set-up, skip details.
    pub long: bool,
}

/// Narrower than this, lines are allowed to overflow rather than wrap word by word.
pub const MIN_WIDTH: usize = 60;
/// The width when stdout is not a terminal and `COLUMNS` says nothing.
pub const PIPED_WIDTH: usize = 100;

impl Options {
    /// `COLUMNS` when set to a number, else the terminal's width when stdout is one, else
    /// [`PIPED_WIDTH`].
    pub fn detect(long: bool) -> Options {
        let cols = std::env::var("COLUMNS").ok().and_then(|v| v.trim().parse::<usize>().ok()).filter(|&c| c > 0);
        let width = cols.or_else(terminal_columns).unwrap_or(PIPED_WIDTH);
        Options { width: width.max(MIN_WIDTH), long }
    }
}

/// The width of the terminal on stdout, if stdout is one (Unix: `TIOCGWINSZ`).
fn terminal_columns() -> Option<usize> {
    use std::io::IsTerminal;
    if !std::io::stdout().is_terminal() {
        return None;
    }
    #[cfg(unix)]
    {
        // SAFETY: TIOCGWINSZ fills a `winsize` we own; the descriptor is stdout, checked above.
        let mut ws: libc::winsize = unsafe { std::mem::zeroed() };
        let rc = unsafe { libc::ioctl(libc::STDOUT_FILENO, libc::TIOCGWINSZ, &mut ws) };
        if rc == 0 && ws.ws_col > 0 {
            return Some(ws.ws_col as usize);
        }
    }
    None
}

/// Printed width of a string (every character one column; framecost prints no wide ones).
fn cols(s: &str) -> usize {
    s.chars().count()
}

/// Words of `text` in lines of at most `width` columns: the first line after `first`, the
/// others after `rest` (a hanging indent). A word longer than a line stays whole.
pub fn wrap(text: &str, width: usize, first: &str, rest: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut line = first.to_string();
    let mut empty = true;
    for word in text.split_whitespace() {
        let indent = if out.is_empty() { cols(first) } else { cols(rest) };
        if !empty && cols(&line) + 1 + cols(word) > width.max(indent + 10) {
            out.push(std::mem::replace(&mut line, rest.to_string()));
            empty = true;
        }
        if !empty {
            line.push(' ');
        }
        line.push_str(word);
        empty = false;
    }
    if !empty || out.is_empty() {
        out.push(line.trim_end().to_string());
    }
    out
}

fn push_wrapped(s: &mut String, text: &str, width: usize, first: &str, rest: &str) {
    for l in wrap(text, width, first, rest) {
        let _ = writeln!(s, "{l}");
    }
}

/// A grid: a label column and value columns (right-aligned), each cell one or more lines.
/// Too wide for `width`, its value columns are split into blocks, each with the labels.
fn grid(head: &[String], rows: &[(String, Vec<Vec<String>>)], width: usize, indent: &str) -> Vec<String> {
    let label_w = rows.iter().map(|r| cols(&r.0)).chain(std::iter::once(cols(&head[0]))).max().unwrap_or(0);
    let ncols = head.len() - 1;
    let col_w: Vec<usize> = (0..ncols)
        .map(|j| rows.iter().flat_map(|r| r.1.get(j).into_iter().flatten()).map(|l| cols(l)).chain(std::iter::once(cols(&head[j + 1]))).max().unwrap_or(0))
        .collect();
    let gap = 2;
    let mut blocks: Vec<(usize, usize)> = Vec::new();
    let mut start = 0;
    while start < ncols {
        let mut used = cols(indent) + label_w;
        let mut end = start;
        while end < ncols && (end == start || used + gap + col_w[end] <= width) {
            used += gap + col_w[end];
            end += 1;
        }
        blocks.push((start, end));
        start = end;
    }
    // Spread the columns evenly over the blocks (10 sizes as 5 + 5, not 9 + 1) when that
    // still fits.
    if blocks.len() > 1 {
        let per = ncols.div_ceil(blocks.len());
        let even: Vec<(usize, usize)> = (0..ncols).step_by(per).map(|s| (s, (s + per).min(ncols))).collect();
        let fits = |&(s, e): &(usize, usize)| cols(indent) + label_w + (s..e).map(|j| gap + col_w[j]).sum::<usize>() <= width;
        if even.len() == blocks.len() && even.iter().all(fits) {
            blocks = even;
        }
    }
    let mut out = Vec::new();
    for (b, &(s, e)) in blocks.iter().enumerate() {
        if b > 0 {
            out.push(String::new());
        }
        let mut line = format!("{indent}{:<label_w$}", head[0]);
        for j in s..e {
            let _ = write!(line, "{:gap$}{:>w$}", "", head[j + 1], w = col_w[j]);
        }
        out.push(line.trim_end().to_string());
        for (label, cells) in rows {
            let height = cells[s..e.min(cells.len())].iter().map(|c| c.len()).max().unwrap_or(1).max(1);
            for k in 0..height {
                let mut line = format!("{indent}{:<label_w$}", if k == 0 { label.as_str() } else { "" });
                for j in s..e {
                    let cell = cells.get(j).and_then(|c| c.get(k)).map(String::as_str).unwrap_or("");
                    let _ = write!(line, "{:gap$}{:>w$}", "", cell, w = col_w[j]);
                }
                out.push(line.trim_end().to_string());
            }
        }
    }
    out
}

/// Everything a workload's block needs: what the run's [`Analysed`] holds, and its digest.
struct Parts<'a> {
    w: &'a WorkloadResults,
    a: &'a WorkloadAnalysis,
    e: &'a Explanation,
    d: Digest,
}

fn parts<'a>(an: &'a Analysed) -> Vec<Parts<'a>> {
    an.workloads().map(|x| Parts { w: x.w, a: x.a, e: x.e, d: digest::digest(x.w, x.a, x.e) }).collect()
}

/// The whole run as text, at the detected width, short form.
pub fn render(an: &Analysed, style: Style) -> String {
    render_with(an, style, Options::detect(false))
}

/// The whole run as text, from its results and their analysis and explanations.
pub fn render_with(an: &Analysed, style: Style, o: Options) -> String {
    let r = an.results;
    let width = o.width;
    let mut s = String::new();
    if let Some(h) = &r.run {
        let head = format!(
            "{} · {} logical cores · polars {} · yardstick {}",
            h.run_id,
            h.machine.logical_cores,
            h.machine.polars_version,
            time_ns(h.yardstick.median_ns)
        );
        let lines = wrap(&head, width, "framecost run ", "  ");
        for (i, l) in lines.iter().enumerate() {
            let l = if i == 0 { format!("{}{}", style.bold("framecost run"), &l["framecost run".len()..]) } else { l.clone() };
            let _ = writeln!(s, "{l}");
        }
    }
    // A busy machine is named first: its points are marked and left out of classes and
    // verdicts, and the reader should know before reading any number.
    let measured: Vec<&crate::results::Measured> = r.workloads.iter().flat_map(|w| &w.points).filter_map(|p| p.measured.as_ref()).collect();
    let busy = measured.iter().filter(|m| m.is_contaminated()).count();
    if busy > 0 {
        let text = format!(
            "The machine was busy: {busy} of {} points were measured while other work competed for the cores; they are marked and left out of growth classes and verdicts.",
            measured.len()
        );
        for l in wrap(&text, width, "", "") {
            let _ = writeln!(s, "{}", style.alarm(&l));
        }
    }
    let all = parts(an);
    if all.len() > 1 {
        s.push('\n');
        s.push_str(&overview(&all, width, style));
    }
    for p in &all {
        s.push('\n');
        s.push_str(&workload_block(p, style, o));
    }
    if r.damaged_lines > 0 {
        let _ = writeln!(s, "\n{} damaged line(s) in the results file were left out", r.damaged_lines);
    }
    if !r.complete() {
        s.push('\n');
        push_wrapped(&mut s, "This run did not finish: what is shown is what was measured before it stopped.", width, "", "");
    }
    s
}

/// One line per workload (wrapped under its name when narrow): the answer, the crossover,
/// the cost at the target, warnings.
fn overview(all: &[Parts], width: usize, style: Style) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{}", style.bold("decisions"));
    let name_w = all.iter().map(|p| cols(&p.w.header.workload)).max().unwrap_or(8).min(24);
    for p in all {
        let d = &p.d;
        let ax = p.w.header.axis();
        let axis = ax.name();
        let mut bits = vec![d.answer.clone()];
        if d.crossover != "none" && d.crossover != "—" {
            bits.push(format!("crossover: {}", d.crossover));
        }
        if let Some(c) = d.costs.first() {
            bits.push(format!("at {} {axis} {}", ax.value(c.rows), c.short()));
        }
        if !d.warning_tags.is_empty() {
            bits.push(format!("watch: {}", d.warning_tags.join(", ")));
        }
        let first = format!("  {:<name_w$}  ", p.w.header.workload);
        let rest = " ".repeat(cols(&first));
        push_wrapped(&mut s, &bits.join(" · "), width, &first, &rest);
    }
    s
}

/// The design × size grid of times (median, then its multiple of the fastest and the mark of
/// what ended sampling).
fn time_grid(w: &WorkloadResults, o: Options) -> (Vec<String>, bool, bool) {
    let ax = w.header.axis();
    let sizes = &w.header.sizes;
    let mut head = vec!["time per run".to_string()];
    head.extend(sizes.iter().map(|n| ax.value(*n)));
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
                    (None, Some(sk)) => match sk.predicted_ns {
                        Some(p) => vec![format!("~{}", time_ns(p)), "not run".into()],
                        None => vec!["—".into(), if sk.reason == crate::results::SkipReason::Failed { "failed".into() } else { "not run".into() }],
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
fn alloc_grid(w: &WorkloadResults, o: Options) -> Vec<String> {
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
/// runs added on top of what was resident before them (a whole process: its whole peak).
fn resident_grid(w: &WorkloadResults, o: Options) -> Vec<String> {
    let designs: Vec<&str> = w.header.designs.iter().filter(|d| d.program.is_some()).map(|d| d.name.as_str()).collect();
    memory_grid(w, o, "resident memory added", &designs, &|m| match m.program {
        Some(p) if o.long => vec![bytes(p.working_bytes() as f64), format!("peak {}", bytes(p.peak_resident_bytes as f64))],
        Some(p) => vec![bytes(p.working_bytes() as f64)],
        None => vec!["—".into()],
    })
}

/// One memory figure per design and size, the cells made by `cell`.
fn memory_grid(w: &WorkloadResults, o: Options, title: &str, designs: &[&str], cell: &dyn Fn(&crate::results::Measured) -> Vec<String>) -> Vec<String> {
    let ax = w.header.axis();
    let sizes = &w.header.sizes;
    let mut head = vec![title.to_string()];
    head.extend(sizes.iter().map(|n| ax.value(*n)));
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
fn growth_grid(p: &Parts, o: Options) -> Vec<String> {
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
            let ok = da.time.as_ref().is_some_and(|t| GrowthClass::from_label(e).is_some_and(|c| t.admits(c)));
            exp.push(format!("time {e} {}", if ok { "✓" } else { "✗" }));
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

/// One workload's block.
fn workload_block(p: &Parts, style: Style, o: Options) -> String {
    let (w, d) = (p.w, &p.d);
    let ax = w.header.axis();
    let axis = ax.name();
    let width = o.width;
    let h = &w.header;
    let mut s = String::new();
    let title = format!("── {} ", h.workload);
    let rule = "─".repeat(width.saturating_sub(cols(&title)).min(width));
    let _ = writeln!(s, "{}{rule}", style.bold(&title));
    if !h.about.is_empty() {
        let about = if o.long { h.about.trim().to_string() } else { first_sentence(&h.about) };
        push_wrapped(&mut s, &about, width, "", "");
    }
    if let Some(a) = &h.axis {
        // "columns (columns)" says nothing twice: the parameter is named only when it differs.
        let set = if a.set.label() == a.name { String::new() } else { a.set.label().to_string() };
        let of = a.column.as_ref().map(|c| format!("{}of `{c}`", if set.is_empty() { "" } else { " " })).unwrap_or_default();
        let detail = if set.is_empty() && of.is_empty() { String::new() } else { format!(" ({set}{of})") };
        let what = format!("swept: {}{detail} with {} rows at every point", a.name, crate::units::rows_label(a.rows));
        push_wrapped(&mut s, &what, width, "", "");
    }
    s.push('\n');

    // The decision, first.
    let label_w = 11;
    let field = |s: &mut String, label: &str, text: &str| {
        let first = format!("  {label:<label_w$} ");
        let rest = " ".repeat(cols(&first));
        push_wrapped(s, text, width, &first, &rest);
    };
    let kind = d.kind.word();
    let decision = if d.answer.contains(kind) { d.answer.clone() } else { format!("{} ({kind})", d.answer) };
    field(&mut s, "decision", &decision);
    if !d.from.is_empty() {
        field(&mut s, "holds", &d.from);
    }
    if let Some(t) = d.target {
        let text = match d.costs.first() {
            Some(c) if Some(&c.design) == d.design.as_ref() => format!("`{}` {} per run; time grows as {}", c.design, c.phrase(), c.class),
            _ => "no prediction for the decided design".into(),
        };
        field(&mut s, &format!("at {}", ax.value(t)), &text);
    }
    if d.crossover != "—" {
        field(&mut s, "crossover", &d.crossover);
    }
    field(&mut s, "why", &d.why.join(" "));
    for (i, wtxt) in d.warnings.iter().enumerate() {
        field(&mut s, if i == 0 { "watch" } else { "" }, wtxt);
    }

    s.push('\n');
    let (times_lines, any_marks, any_busy) = time_grid(w, o);
    for l in times_lines {
        let _ = writeln!(s, "{l}");
    }
    for block in [alloc_grid(w, o), resident_grid(w, o)] {
        if !block.is_empty() {
            s.push('\n');
            for l in block {
                let _ = writeln!(s, "{l}");
            }
        }
    }
    s.push('\n');
    for l in growth_grid(p, o) {
        let _ = writeln!(s, "{l}");
    }
    let mut keys = vec!["under each time: its multiple of the fastest design's time at that size (best: the fastest)".to_string()];
    if any_marks {
        keys.push(format!(
            "sampling ended by c {}, b {}, r {}, i {} (unmarked: the median's 95% interval within ±{:.0}%)",
            StopReason::SampleCap.label(),
            StopReason::PointBudget.label(),
            StopReason::RunBudget.label(),
            StopReason::Interrupted.label(),
            h.budget.precision * 100.0
        ));
    }
    if any_busy {
        keys.push("* measured while the machine was busy (left out of classes and the verdict)".into());
    }
    keys.push("~ a time predicted from the smaller sizes".into());
    if o.long {
        keys.push("growth class chosen by AICc over each size's quartiles; slope = log-log slope of the medians".into());
    }
    push_wrapped(&mut s, &format!("key: {}", keys.join("; ")), width, "  ", "    ");

    // Findings, grouped.
    let sections = digest::sections(&p.e.findings, o.long);
    if !sections.is_empty() {
        s.push('\n');
        let _ = writeln!(s, "  {}", style.bold("findings"));
        for sec in &sections {
            let who = if sec.designs.is_empty() { "the workload as a whole".to_string() } else { sec.designs.join(", ") };
            push_wrapped(&mut s, &format!("{who}:"), width, "    ", "      ");
            for g in &sec.groups {
                let reading = if g.action.is_empty() { digest::sentence(&g.implies) } else { format!("{} {}", digest::sentence(&g.implies), digest::sentence(&g.action)) };
                if g.measured.len() == 1 {
                    let text = format!("{} {}", digest::sentence(&g.measured[0].1), reading);
                    push_wrapped(&mut s, &text, width, "      · ", "        ");
                } else {
                    push_wrapped(&mut s, &reading, width, "      · ", "        ");
                    for (who, m) in &g.measured {
                        let text = format!("{}: {m}", who.as_deref().unwrap_or("all"));
                        push_wrapped(&mut s, &text, width, "        - ", "          ");
                    }
                }
            }
        }
    }

    if o.long {
        // Set-up, skips, cost-model notes, recipes.
        for dh in &h.designs {
            let made: Vec<String> = w.design_points(&dh.name).iter().filter_map(|p| p.setup_ns.map(|ns| format!("{} at {}", time_ns(ns), ax.value(p.rows)))).collect();
            if !made.is_empty() {
                s.push('\n');
                push_wrapped(&mut s, &format!("set-up of {} (once per size, not in the samples): {}", dh.name, made.join(", ")), width, "  ", "    ");
            }
        }
        let skips: Vec<String> = w
            .points
            .iter()
            .filter_map(|p| p.skipped.as_ref().map(|sk| format!("{} at {} {axis}: {} — {}", p.design, ax.value(p.rows), sk.reason.label(), sk.detail)))
            .collect();
        if !skips.is_empty() {
            let _ = writeln!(s, "\n  {}", style.bold("not run"));
            for l in skips {
                push_wrapped(&mut s, &l, width, "    · ", "      ");
            }
        }
        let _ = writeln!(s, "\n  {}", style.bold("designs"));
        for dh in &h.designs {
            push_wrapped(&mut s, &format!("{}: {}", dh.name, dh.recipe), width, "    · ", "      ");
        }
        if !p.e.step_notes.is_empty() {
            let _ = writeln!(s, "\n  {}", style.bold("how the steps behave"));
            for (n, note) in &p.e.step_notes {
                push_wrapped(&mut s, &format!("{n}: {note}"), width, "    · ", "      ");
            }
        }
    }

    // Equivalence.
    let mismatches: Vec<_> = w.comparisons.iter().filter(|c| c.equivalence.status == EquivalenceStatus::Mismatch).collect();
    let checked = w.comparisons.iter().filter(|c| c.equivalence.status != EquivalenceStatus::NotChecked).count();
    s.push('\n');
    if !mismatches.is_empty() {
        for c in mismatches {
            let text = format!("at {} {axis}: {}", ax.value(c.rows), c.equivalence.note);
            let lines = wrap(&text, width, "  OUTPUTS DIFFER ", "    ");
            for (i, l) in lines.iter().enumerate() {
                let l = if i == 0 { format!("  {}{}", style.alarm("OUTPUTS DIFFER"), &l["  OUTPUTS DIFFER".len()..]) } else { l.clone() };
                let _ = writeln!(s, "{l}");
            }
        }
    } else if w.comparisons.iter().any(|c| c.equivalence.status == EquivalenceStatus::DifferAsDeclared) {
        push_wrapped(&mut s, &format!("outputs: differ between designs, as the workload declares ({})", h.outputs_differ.clone().unwrap_or_default()), width, "  ", "    ");
    } else if checked > 0 {
        push_wrapped(&mut s, &format!("outputs: identical contents from every design at all {checked} compared size(s)"), width, "  ", "    ");
    } else {
        push_wrapped(&mut s, "outputs: not compared (fewer than two designs measured at any size)", width, "  ", "    ");
    }
    s
}

/// The first sentence of a paragraph (up to the first ". ").
fn first_sentence(text: &str) -> String {
    let t = text.split_whitespace().collect::<Vec<_>>().join(" ");
    match t.find(". ") {
        Some(i) => t[..=i].to_string(),
        None => t,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrapping_keeps_to_the_width() {
        let text = "the prediction at 2M rows is 1.5 decades past the largest measured size, so read it as an order of magnitude";
        let lines = wrap(text, 40, "  · ", "    ");
        assert!(lines.len() > 2);
        assert!(lines.iter().all(|l| cols(l) <= 40), "{lines:?}");
        assert!(lines[0].starts_with("  · the") && lines[1].starts_with("    "));
        assert_eq!(lines.join(" ").split_whitespace().filter(|w| *w != "·").collect::<Vec<_>>(), text.split_whitespace().collect::<Vec<_>>());
    }

    #[test]
    fn a_wide_grid_is_split_into_blocks_that_fit() {
        let head: Vec<String> = std::iter::once("time per run".to_string()).chain((1..=10).map(|k| format!("{k}k"))).collect();
        let rows = vec![("one-at-a-time".to_string(), (1..=10).map(|_| vec!["887 ms".to_string(), "506×".to_string()]).collect())];
        let lines = grid(&head, &rows, 60, "  ");
        assert!(lines.iter().all(|l| cols(l) <= 60), "{lines:?}");
        // Every size heading appears once, the label is repeated per block, and the blocks
        // are even.
        assert!(lines.iter().filter(|l| l.contains("one-at-a-time")).count() >= 2);
        let heads: Vec<usize> = lines.iter().filter(|l| l.trim_start().starts_with("time per run")).map(|l| l.split_whitespace().count() - 3).collect();
        assert!(heads.iter().max().unwrap_or(&0) - heads.iter().min().unwrap_or(&0) <= 1, "{heads:?}");
        for k in 1..=10 {
            assert_eq!(lines.iter().filter(|l| l.split_whitespace().any(|w| w == format!("{k}k"))).count(), 1);
        }
    }
}
