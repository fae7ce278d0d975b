//! The HTML page: one self-contained file (styles and pictures inline, no scripts, no
//! links but its own anchors), well-formed XML, decision first.

use super::svg::svg_inline;
use super::{glance, growth_rows, reading, target_line, time_cell, who, Part};
use crate::present::digest::{self, counts_allocations, sentence};
use crate::results::reader::RunResults;
use crate::units::bytes;
use std::fmt::Write;

/// Escape text for HTML (and XML).
pub fn esc(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

/// Escape text for HTML and turn `names` into `<code>names</code>` (an unpaired backtick is
/// dropped, never shown raw).
pub fn inline(s: &str) -> String {
    let e = esc(s);
    let mut out = String::with_capacity(e.len() + 16);
    let parts: Vec<&str> = e.split('`').collect();
    let paired = parts.len() % 2 == 1;
    for (i, p) in parts.iter().enumerate() {
        if i % 2 == 1 && (paired || i + 1 < parts.len()) {
            let _ = write!(out, "<code>{p}</code>");
        } else {
            out.push_str(p);
        }
    }
    out
}

/// [`inline`], also setting words that are identifiers (`extra_passes`) as code.
fn inline_idents(s: &str) -> String {
    let marked: Vec<String> = s
        .split(' ')
        .map(|w| {
            let core = w.trim_end_matches([',', '.', ';', ':', ')']);
            if core.contains('_') && !core.contains('`') && core.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') {
                format!("`{core}`{}", &w[core.len()..])
            } else {
                w.to_string()
            }
        })
        .collect();
    inline(&marked.join(" "))
}

/// An anchor id for a workload: `w-` and its name's letters, digits and dashes.
fn anchor(name: &str, k: usize) -> String {
    let slug: String = name.chars().map(|c| if c.is_ascii_alphanumeric() { c.to_ascii_lowercase() } else { '-' }).collect();
    format!("w{k}-{}", slug.trim_matches('-'))
}

const STYLE: &str = "\
:root{--ink:#262626;--muted:#5f5a50;--paper:#fbf9f4;--desk:#efebe2;--rule:#e0d9ca;--harbour:#1f6e8c;--apricot:#c86b1e;--orchard:#4e8f3a;--straw:#8a7412}\
body{margin:0;background:var(--desk);color:var(--ink);font:16px/1.55 Georgia,'Times New Roman',serif}\
main{max-width:980px;margin:0 auto;padding:20px 32px 64px;background:var(--paper)}\
h1{font-size:25px;margin:6px 0 2px;font-weight:normal}h1 b{font-weight:bold}\
.sub{color:var(--muted);margin:0 0 18px}\
h2{font-size:23px;margin:44px 0 4px;padding-top:10px;border-top:1px solid var(--rule)}\
h3{font-size:16px;margin:22px 0 6px;letter-spacing:.02em;color:var(--muted);text-transform:uppercase;font-family:'DejaVu Sans',Verdana,sans-serif}\
code{font-family:'DejaVu Sans Mono',Menlo,Consolas,monospace;font-size:.88em;background:#f0ece3;padding:0 3px;border-radius:3px}\
pre{font-family:'DejaVu Sans Mono',Menlo,Consolas,monospace;font-size:13px;background:var(--desk);padding:8px;overflow-x:auto}\
.alarm{background:#f7e6d6;border-left:5px solid var(--apricot);padding:8px 12px}\
table{border-collapse:collapse;font-size:14px}th,td{padding:4px 8px;vertical-align:top}\
.glance{width:100%}.glance th{text-align:left;font-family:'DejaVu Sans',Verdana,sans-serif;font-size:12px;color:var(--muted);border-bottom:2px solid var(--rule)}\
.glance td{border-bottom:1px solid var(--rule)}.glance td:first-child{white-space:nowrap}.glance td:nth-child(2){min-width:15em}.glance td:nth-child(4){white-space:nowrap}.glance td:nth-child(5){font-size:13px}.glance code{white-space:nowrap}\
.kind{font-family:'DejaVu Sans',Verdana,sans-serif;font-size:11px;text-transform:uppercase;letter-spacing:.06em;padding:1px 6px;border-radius:9px;border:1px solid;white-space:nowrap}\
.k-winner{color:var(--harbour)}.k-crossover{color:var(--orchard)}.k-tie{color:var(--straw)}.k-undecided{color:var(--muted)}\
.job{font-style:italic;color:#3c3a35;margin-top:4px}\
.answer{display:grid;grid-template-columns:minmax(220px,1fr) 2fr;gap:6px 28px;margin:14px 0;padding:14px 0;border-top:3px double var(--rule);border-bottom:3px double var(--rule)}\
.say{font-size:24px;line-height:1.3;margin:0}.say code{font-size:.95em}\
.answer dl{margin:0;display:grid;grid-template-columns:max-content auto;gap:3px 14px}.answer dt{color:var(--muted);font-size:14px;padding-top:2px}.answer dd{margin:0}\
.why{margin:8px 0}.watch{border-left:3px solid var(--apricot);padding:2px 0 2px 12px;margin:10px 0}.watch ul{margin:4px 0;padding-left:18px}\
.grid th{font-family:'DejaVu Sans',Verdana,sans-serif;font-size:12px;color:var(--muted);text-align:right;border-bottom:1px solid var(--rule)}\
.grid th:first-child,.grid td:first-child{text-align:left}.grid td{text-align:right;border-bottom:1px solid #f0ebe0}\
.grid td small{display:block;color:var(--muted);font-size:11px}\
.s0{background:#e4eef1}.s1{background:#fbf1e4}.s2{background:#f6e1c9}.s3{background:#f0cfa9}.s4{background:#e8b98a}.s8{color:var(--muted);font-style:italic}\
.note{font-size:13px;color:var(--muted);margin:4px 0 0}\
figure{margin:18px 0}figcaption{font-size:14px;color:var(--muted)}svg{max-width:100%;height:auto}\
.growth td,.growth th{border-bottom:1px solid var(--rule);text-align:left}.growth th{font-family:'DejaVu Sans',Verdana,sans-serif;font-size:12px;color:var(--muted)}\
.evidence h4{margin:12px 0 2px;font-size:15px}.evidence ul{margin:2px 0;padding-left:20px}.evidence li{margin:3px 0}.evidence ul.by{font-size:14px;color:#3c3a35}\
details{margin:10px 0;border:1px solid var(--rule);padding:4px 10px}summary{cursor:pointer;color:var(--harbour)}\
pre.again{white-space:pre-wrap;word-break:break-all}dl.machine{display:grid;grid-template-columns:max-content auto;gap:2px 14px}dl.machine dt{color:var(--muted)}dl.machine dd{margin:0}\
@media (max-width:700px){.answer{grid-template-columns:1fr}main{padding:12px}}";

/// The HTML page.
pub fn html(r: &RunResults, parts: &[Part], machine: &[(String, String)], reproduce: &str) -> Result<String, crate::present::DrawError> {
    let mut s = String::new();
    let id = r.run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"/><meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/><title>framecost run {}</title><style>{STYLE}</style></head><body><main>\n",
        esc(&id)
    );
    let _ = writeln!(s, "<h1><b>Which design, from what size</b> — framecost run {}</h1>", esc(&id));
    if let Some(h) = &r.run {
        let _ = writeln!(
            s,
            "<p class=\"sub\">{} workload{} measured from {} on {} ({} logical cores), polars {}.</p>",
            parts.len(),
            if parts.len() == 1 { "" } else { "s" },
            esc(&h.started_at),
            esc(&h.machine.cpu_model),
            h.machine.logical_cores,
            esc(&h.machine.polars_version)
        );
    }
    if !r.complete() {
        let _ = writeln!(s, "<p class=\"alarm\">This run did not finish: what follows is what was measured before it stopped.</p>");
    }
    if let Some(text) = crate::present::disturbed_words(r) {
        let _ = writeln!(s, "<p class=\"alarm\">{}</p>", esc(&text));
    }

    // At a glance.
    let _ = writeln!(s, "<h3>At a glance</h3><table class=\"glance\"><thead><tr><th>workload</th><th>answer</th><th>crossover</th><th>cost at the target</th><th>watch</th></tr></thead><tbody>");
    for (k, p) in parts.iter().enumerate() {
        let [answer, kind, cross, cost, watch] = glance(&p.d);
        let _ = writeln!(
            s,
            "<tr><td><a href=\"#{}\">{}</a></td><td>{} <span class=\"kind k-{kind}\">{kind}</span></td><td>{}</td><td>{}</td><td>{}</td></tr>",
            anchor(&p.w.header.workload, k),
            esc(&p.w.header.workload),
            inline(&answer),
            inline(&cross),
            esc(&cost),
            inline(&watch)
        );
    }
    let _ = writeln!(s, "</tbody></table>");

    for (k, p) in parts.iter().enumerate() {
        s.push_str(&section(k, p)?);
    }
    let _ = writeln!(s, "<h2>Machine</h2><dl class=\"machine\">");
    for (k, v) in machine {
        let _ = writeln!(s, "<dt>{}</dt><dd>{}</dd>", esc(k), esc(v));
    }
    let _ = writeln!(s, "</dl><h3>To measure it again</h3><pre class=\"again\">{}</pre>\n</main></body></html>", esc(reproduce));
    Ok(s)
}

/// One workload's section: the job, the answer, why, what to watch, the grid of times, the
/// scaling picture, how each cost grows, the evidence, then what is folded away.
fn section(k: usize, p: &Part) -> Result<String, crate::present::DrawError> {
    let mut s = String::new();
    let ax = p.w.header.axis();
    let axis = ax.name();
    let (w, d) = (p.w, &p.d);
    let _ = writeln!(s, "<section id=\"{}\"><h2>{}</h2>", anchor(&w.header.workload, k), esc(&w.header.workload));
    if !w.header.about.is_empty() {
        let _ = writeln!(s, "<p class=\"job\">{}</p>", inline(w.header.about.trim()));
    }
    // The answer.
    let kind = d.kind.word();
    let _ = writeln!(s, "<div class=\"answer\"><div><p class=\"say\">{}</p><span class=\"kind k-{kind}\">{kind}</span></div><dl>", inline(&sentence(&d.answer)));
    if !d.from.is_empty() {
        let _ = writeln!(s, "<dt>Holds</dt><dd>{}</dd>", inline(&d.from));
    }
    if let Some((label, text)) = target_line(d) {
        let _ = writeln!(s, "<dt>{}</dt><dd>{}</dd>", esc(&label), inline(&text));
    }
    if d.crossover != "—" {
        let _ = writeln!(s, "<dt>Crossover</dt><dd>{}</dd>", inline(&d.crossover));
    }
    let _ = writeln!(s, "</dl></div>");
    let _ = writeln!(s, "<p class=\"why\">{}</p>", inline(&d.why.join(" ")));
    if !d.warnings.is_empty() {
        let _ = writeln!(s, "<div class=\"watch\"><strong>Watch</strong><ul>");
        for x in &d.warnings {
            let _ = writeln!(s, "<li>{}</li>", inline(x));
        }
        let _ = writeln!(s, "</ul></div>");
    }

    // The grid.
    let _ = writeln!(s, "<h3>Every design at every size</h3><table class=\"grid\"><thead><tr><th>time per run</th>");
    let extra = w.extra_sizes();
    for &n in &w.all_sizes() {
        let more = if extra.contains(&n) { " title=\"one more size than planned, measured only for the design whose growth class the planned sizes left unsettled\"" } else { "" };
        let _ = write!(s, "<th{more}>{}{} {axis}</th>", ax.value(n), if extra.contains(&n) { "+" } else { "" });
    }
    let _ = writeln!(s, "</tr></thead><tbody>");
    for dh in &w.header.designs {
        let _ = write!(s, "<tr><td><code>{}</code></td>", esc(&dh.name));
        for &n in &w.all_sizes() {
            let (main, second, shade, tip) = time_cell(w, &dh.name, n);
            let class = if shade < 9 { format!(" class=\"s{shade}\"") } else { String::new() };
            let title = if tip.is_empty() { String::new() } else { format!(" title=\"{}\"", esc(&tip)) };
            let small = if second.is_empty() { String::new() } else { format!("<small>{}</small>", esc(&second)) };
            let _ = write!(s, "<td{class}{title}>{}{small}</td>", esc(&main));
        }
        let _ = writeln!(s, "</tr>");
    }
    let more = if extra.is_empty() { "" } else { " <em>+</em> marks one more size than planned, measured only for the design whose growth class the planned sizes left unsettled (<code>sweep --extra-size</code>); it is not ranked." };
    let _ = writeln!(
        s,
        "</tbody></table><p class=\"note\">Median time of one run; under it, how many times the fastest design's time it took at that size (the deeper the shade, the further behind). <em>~</em> marks a time predicted from the smaller sizes for a point not run.{more} Hover a cell for its interval and samples.</p>"
    );

    for pic in p.pictures.iter().filter(|x| x.kind == "scaling") {
        let _ = writeln!(s, "<figure>{}<figcaption>{}.</figcaption></figure>", svg_inline(pic)?, esc(&pic.title));
    }

    // Growth.
    let target = p.a.predict_at.map(|t| format!("<th>time per run at {} {axis}</th>", ax.value(t))).unwrap_or_default();
    let _ = writeln!(
        s,
        "<h3>How each cost grows</h3><table class=\"growth\"><thead><tr><th>design</th><th>time grows as</th><th>allocated bytes grow as</th><th>the workload expects</th>{target}</tr></thead><tbody>"
    );
    for row in growth_rows(p) {
        let at = if target.is_empty() { String::new() } else { format!("<td>{}</td>", esc(&row[4])) };
        let _ = writeln!(s, "<tr><td><code>{}</code></td><td>{}</td><td>{}</td><td>{}</td>{at}</tr>", esc(&row[0]), esc(&row[1]), esc(&row[2]), esc(&row[3]));
    }
    let _ = writeln!(s, "</tbody></table>");

    // Evidence.
    let sections = digest::sections(&p.e.findings, false);
    if !sections.is_empty() {
        let _ = writeln!(s, "<h3>What the measurements show</h3><div class=\"evidence\">");
        for sec in &sections {
            let _ = writeln!(s, "<h4>{}</h4><ul>", inline(&who(&sec.designs)));
            for g in &sec.groups {
                if g.measured.len() == 1 {
                    let _ = writeln!(s, "<li>{} {}</li>", inline(&sentence(&g.measured[0].1)), inline(&reading(g)));
                } else {
                    let _ = write!(s, "<li>{}<ul class=\"by\">", inline(&reading(g)));
                    for (d, m) in &g.measured {
                        let _ = write!(s, "<li><code>{}</code>: {}</li>", esc(d.as_deref().unwrap_or("all designs")), inline(m));
                    }
                    let _ = writeln!(s, "</ul></li>");
                }
            }
            let _ = writeln!(s, "</ul>");
        }
        let _ = writeln!(s, "</div>");
    }
    s.push_str(&folded(p)?);
    let _ = writeln!(s, "</section>");
    Ok(s)
}

/// Folded under `<details>`: memory, the designs with their recipes and query plans, and
/// the fits in detail.
fn folded(p: &Part) -> Result<String, crate::present::DrawError> {
    let w = p.w;
    let ax = w.header.axis();
    let axis = ax.name();
    let mut s = String::new();
    let counted: Vec<_> = w.header.designs.iter().filter(|d| counts_allocations(w, &d.name)).collect();
    if !counted.is_empty() {
        let _ = writeln!(s, "<details><summary>Memory: allocated and peak live bytes per run</summary><table class=\"grid\"><thead><tr><th>allocated / peak</th>");
        for &n in &w.all_sizes() {
            let _ = write!(s, "<th>{} {axis}</th>", ax.value(n));
        }
        let _ = writeln!(s, "</tr></thead><tbody>");
        for dh in &counted {
            let _ = write!(s, "<tr><td><code>{}</code></td>", esc(&dh.name));
            for &n in &w.all_sizes() {
                match w.point(&dh.name, n).and_then(|p| p.measured.as_ref()) {
                    Some(m) => {
                        let chunks = m.output.as_ref().filter(|o| o.chunks > 1).map(|o| format!(", {} chunks", o.chunks)).unwrap_or_default();
                        let _ = write!(s, "<td>{}<small>peak {}{chunks}</small></td>", bytes(m.alloc.bytes as f64), bytes(m.alloc.peak_live as f64));
                    }
                    None => {
                        let _ = write!(s, "<td></td>");
                    }
                }
            }
            let _ = writeln!(s, "</tr>");
        }
        let _ = writeln!(s, "</tbody></table>");
        for pic in p.pictures.iter().filter(|x| x.kind == "memory") {
            let _ = writeln!(s, "<figure>{}<figcaption>{}.</figcaption></figure>", svg_inline(pic)?, esc(&pic.title));
        }
        let _ = writeln!(s, "</details>");
    }
    let _ = writeln!(s, "<details><summary>The designs, their recipes and how their steps behave</summary><ul>");
    for dh in &w.header.designs {
        let about = dh.about.as_ref().map(|a| format!(" {}", inline(&sentence(a)))).unwrap_or_default();
        let _ = writeln!(s, "<li><code>{}</code>: <code>{}</code>.{about}</li>", esc(&dh.name), esc(&dh.recipe));
    }
    let _ = writeln!(s, "</ul>");
    if !p.e.step_notes.is_empty() {
        let _ = writeln!(s, "<ul>");
        for (n, note) in &p.e.step_notes {
            let _ = writeln!(s, "<li><code>{}</code>: {}</li>", esc(n), inline_idents(&sentence(note)));
        }
        let _ = writeln!(s, "</ul>");
    }
    for dh in w.header.designs.iter().filter(|d| !d.query_plans.is_empty()) {
        let engine = dh.engine.as_deref().unwrap_or("memory");
        for plan in &dh.query_plans {
            let _ = writeln!(s, "<p>Query plan of <code>{}</code> ({} engine, optimized):</p><pre>{}</pre>", esc(&dh.name), esc(engine), esc(plan.trim_end()));
        }
    }
    let _ = writeln!(s, "</details>");
    let more = digest::sections(&p.e.findings, true).iter().flat_map(|x| x.groups.iter()).filter(|g| digest::SHOWN_ELSEWHERE.contains(&g.kind.as_str()) || g.kind == "expectation").count();
    if more > 0 {
        let _ = writeln!(s, "<details><summary>The fits in detail</summary><ul>");
        for sec in digest::sections(&p.e.findings, true) {
            for g in sec.groups.iter().filter(|g| g.kind == "growth" || g.kind == "expectation") {
                for (d, m) in &g.measured {
                    let _ = writeln!(s, "<li><code>{}</code>: {} {}</li>", esc(d.as_deref().unwrap_or("all designs")), inline(&sentence(m)), inline(&reading(g)));
                }
            }
        }
        let _ = writeln!(s, "</ul></details>");
    }
    Ok(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_become_code_and_no_backtick_is_left() {
        assert_eq!(inline("use `a<b>` now"), "use <code>a&lt;b&gt;</code> now");
        assert_eq!(inline("odd ` tick"), "odd  tick");
        assert!(!inline("`x` and `y`").contains('`'));
        assert_eq!(inline_idents("then extra_passes: 2."), "then <code>extra_passes</code>: 2.");
    }
}
