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
//!
//! Files: this one holds the switches, the run's opening lines and the overview; `block.rs`
//! one workload's block, `grids.rs` its tables, `layout.rs` wrapping and grid layout.

mod block;
mod grids;
mod layout;

pub use layout::wrap;

use super::digest::{self, Digest};
use crate::analyse::WorkloadAnalysis;
use crate::explain::{Analysed, Explanation};
use crate::results::reader::WorkloadResults;
use crate::units::time_ns;
use block::workload_block;
use layout::{cols, push_wrapped};
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
    // A busy or slower machine is named first: its points are marked and left out of
    // classes and verdicts, and the reader should know before reading any number.
    if let Some(text) = crate::present::disturbed_words(r) {
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

