//! One workload's block of the terminal summary, in the order it is read: the heading,
//! the decision (answer, where it holds, cost at the target, crossover, why, what to watch),
//! the grids of times, memory and growth with their key, the findings, the `--long` extras
//! (set-up, skips, recipes, cost-model notes) and whether the outputs agreed.

use super::grids::{alloc_grid, growth_grid, resident_grid, time_grid};
use super::layout::{cols, push_wrapped, wrap};
use super::{Options, Parts, Style};
use crate::present::digest;
use crate::results::{EquivalenceStatus, StopReason};
use crate::units::time_ns;
use std::fmt::Write;

/// One workload's block.
pub(super) fn workload_block(p: &Parts, style: Style, o: Options) -> String {
    let mut s = heading(p, style, o);
    s.push_str(&decision(p, o));
    s.push_str(&figures(p, o));
    s.push_str(&findings(p, style, o));
    if o.long {
        s.push_str(&details(p, style, o));
    }
    s.push_str(&outputs(p, style, o));
    s
}

/// The workload's name as a rule, what it is about, and what is swept when not rows.
fn heading(p: &Parts, style: Style, o: Options) -> String {
    let w = p.w;
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
    s
}

/// The decision, first: one labelled field per line, wrapped under its label.
fn decision(p: &Parts, o: Options) -> String {
    let d = &p.d;
    let ax = p.w.header.axis();
    let width = o.width;
    let mut s = String::new();
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
    s
}

/// The grids of times, memory and growth, and the key to their marks.
fn figures(p: &Parts, o: Options) -> String {
    let w = p.w;
    let width = o.width;
    let h = &w.header;
    let mut s = String::new();
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
    if w.header.designs.iter().any(|d| d.expect_time.is_some() || d.expect_bytes.is_some()) {
        keys.push("expected: ✓ met, ≈ a neighbouring class the sizes cannot separate well, ✗ not met, ? not judged".into());
    }
    if !w.extra_sizes().is_empty() {
        keys.push("+ one more size than planned, measured only for the design whose growth class the planned sizes left unsettled".into());
    }
    if o.long {
        keys.push("growth class chosen by AICc over each size's quartiles; slope = log-log slope of the medians".into());
    }
    push_wrapped(&mut s, &format!("key: {}", keys.join("; ")), width, "  ", "    ");
    s
}

/// The findings, grouped so that no sentence repeats.
fn findings(p: &Parts, style: Style, o: Options) -> String {
    let width = o.width;
    let mut s = String::new();
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
    s
}

/// `--long` only: set-up, skips, the designs' recipes, the steps' cost-model notes.
fn details(p: &Parts, style: Style, o: Options) -> String {
    let w = p.w;
    let ax = w.header.axis();
    let axis = ax.name();
    let width = o.width;
    let h = &w.header;
    let mut s = String::new();
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
        .filter_map(|p| p.skipped.as_ref().map(|sk| format!("{} at {} {axis}: {} — {}", p.design, ax.value(p.rows), sk.reason.label(), crate::present::causes::skip_words(sk, ax))))
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
    s
}

/// Whether the designs' outputs agreed.
fn outputs(p: &Parts, style: Style, o: Options) -> String {
    let w = p.w;
    let ax = w.header.axis();
    let axis = ax.name();
    let width = o.width;
    let h = &w.header;
    let mut s = String::new();
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
