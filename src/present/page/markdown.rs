//! The Markdown report: the same sections as the HTML page, with the pictures linked from
//! `pictures/`.

use super::{glance, growth_rows, reading, target_line, time_cell, who, Part};
use crate::present::digest::{self, sentence};
use crate::results::reader::RunResults;
use std::fmt::Write;
use std::path::Path;

/// The Markdown anchor GitHub-style renderers give a `## name` heading.
fn md_anchor(name: &str) -> String {
    name.to_lowercase().chars().filter_map(|c| if c.is_alphanumeric() || c == '-' || c == '_' { Some(c) } else if c == ' ' { Some('-') } else { None }).collect()
}

/// Escape a Markdown table cell.
fn cell(s: &str) -> String {
    s.replace('|', "\\|").replace('\n', " ")
}

/// The Markdown report (pictures linked from `pictures/`).
pub fn markdown(r: &RunResults, parts: &[Part], dir: &Path, machine: &[(String, String)], reproduce: &str) -> String {
    let mut s = String::new();
    let id = r.run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
    let _ = writeln!(s, "# Which design, from what size — framecost run {id}\n");
    if let Some(h) = &r.run {
        let _ = writeln!(
            s,
            "{} workload{} measured from {} on {} ({} logical cores), polars {}.\n",
            parts.len(),
            if parts.len() == 1 { "" } else { "s" },
            h.started_at,
            h.machine.cpu_model,
            h.machine.logical_cores,
            h.machine.polars_version
        );
    }
    if !r.complete() {
        let _ = writeln!(s, "> This run did not finish: what follows is what was measured before it stopped.\n");
    }
    let _ = writeln!(s, "## At a glance\n\n| workload | answer | crossover | cost at the target | watch |\n|---|---|---|---|---|");
    for p in parts {
        let [answer, kind, cross, cost, watch] = glance(&p.d);
        let _ = writeln!(
            s,
            "| [{}](#{}) | {} ({kind}) | {} | {} | {} |",
            cell(&p.w.header.workload),
            md_anchor(&p.w.header.workload),
            cell(&answer),
            cell(&cross),
            cell(&cost),
            cell(&watch)
        );
    }
    for p in parts {
        s.push_str(&section(p, dir));
    }
    let _ = writeln!(s, "\n## Machine\n");
    for (k, v) in machine {
        let _ = writeln!(s, "- {k}: {v}");
    }
    let _ = writeln!(s, "\n## To measure it again\n\n```\n{reproduce}\n```");
    s
}

/// One workload's section.
fn section(p: &Part, dir: &Path) -> String {
    let mut s = String::new();
    let ax = p.w.header.axis();
    let axis = ax.name();
    let (w, d) = (p.w, &p.d);
    let _ = writeln!(s, "\n## {}\n", w.header.workload);
    if !w.header.about.is_empty() {
        let _ = writeln!(s, "*{}*\n", w.header.about.trim());
    }
    let _ = writeln!(s, "**{}** ({})\n", sentence(&d.answer), d.kind.word());
    if !d.from.is_empty() {
        let _ = writeln!(s, "- Holds: {}", d.from);
    }
    if let Some((label, text)) = target_line(d) {
        let _ = writeln!(s, "- {label}: {text}");
    }
    if d.crossover != "—" {
        let _ = writeln!(s, "- Crossover: {}", d.crossover);
    }
    let _ = writeln!(s, "\n{}\n", d.why.join(" "));
    if !d.warnings.is_empty() {
        let _ = writeln!(s, "Watch:\n");
        for x in &d.warnings {
            let _ = writeln!(s, "- {x}");
        }
        s.push('\n');
    }
    let _ = writeln!(s, "### Every design at every size\n");
    let mut head = vec!["time per run".to_string()];
    let extra = w.extra_sizes();
    head.extend(w.all_sizes().iter().map(|n| format!("{}{} {axis}", ax.value(*n), if extra.contains(n) { "+" } else { "" })));
    let _ = writeln!(s, "| {} |\n|{}|", head.join(" | "), head.iter().enumerate().map(|(i, _)| if i == 0 { "---" } else { "---:" }).collect::<Vec<_>>().join("|"));
    for dh in &w.header.designs {
        let cells: Vec<String> = w
            .all_sizes()
            .iter()
            .map(|&n| {
                let (main, second, _, _) = time_cell(w, &dh.name, n);
                if second.is_empty() {
                    main
                } else {
                    format!("{main} ({second})")
                }
            })
            .collect();
        let _ = writeln!(s, "| `{}` | {} |", cell(&dh.name), cells.iter().map(|c| cell(c)).collect::<Vec<_>>().join(" | "));
    }
    let _ = writeln!(s, "\nMedian time of one run, and how many times the fastest design's time it took at that size; `~` marks a time predicted for a point not run.\n");
    for pic in &p.pictures {
        let rel = pic.svg.strip_prefix(dir).unwrap_or(&pic.svg).display().to_string();
        let _ = writeln!(s, "![{}]({rel} \"{}\")\n", pic.alt.replace(['[', ']'], ""), pic.title.replace('"', "'"));
    }
    let target = p.a.predict_at.map(|t| format!(" time per run at {} {axis} |", ax.value(t))).unwrap_or_default();
    let _ = writeln!(
        s,
        "### How each cost grows\n\n| design | time grows as | allocated bytes grow as | the workload expects |{target}\n|---|---|---|---|{}",
        if target.is_empty() { "" } else { "---|" }
    );
    for row in growth_rows(p) {
        let at = if target.is_empty() { String::new() } else { format!(" {} |", cell(&row[4])) };
        let _ = writeln!(s, "| `{}` | {} | {} | {} |{at}", cell(&row[0]), cell(&row[1]), cell(&row[2]), cell(&row[3]));
    }
    let sections = digest::sections(&p.e.findings, false);
    if !sections.is_empty() {
        let _ = writeln!(s, "\n### What the measurements show\n");
        for sec in &sections {
            let _ = writeln!(s, "**{}**\n", who(&sec.designs));
            for g in &sec.groups {
                if g.measured.len() == 1 {
                    let _ = writeln!(s, "- {} {}", sentence(&g.measured[0].1), reading(g));
                } else {
                    let _ = writeln!(s, "- {}", reading(g));
                    for (d, m) in &g.measured {
                        let _ = writeln!(s, "  - `{}`: {m}", d.as_deref().unwrap_or("all designs"));
                    }
                }
            }
            s.push('\n');
        }
    }
    let _ = writeln!(s, "\n### The designs\n");
    for dh in &w.header.designs {
        let about = dh.about.as_ref().map(|a| format!(" {}", sentence(a))).unwrap_or_default();
        let _ = writeln!(s, "- `{}`: `{}`.{about}", dh.name, dh.recipe);
    }
    for dh in w.header.designs.iter().filter(|d| !d.query_plans.is_empty()) {
        let engine = dh.engine.as_deref().unwrap_or("memory");
        for plan in &dh.query_plans {
            let _ = writeln!(s, "\nQuery plan of `{}` ({engine} engine, optimized):\n\n```\n{}\n```", dh.name, plan.trim_end());
        }
    }
    s
}
