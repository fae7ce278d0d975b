//! Reports of a run, redrawn from saved results alone: pictures (SVG and PNG) in
//! `pictures/`, `report.md` (linking the SVGs), `report.html` (one self-contained file:
//! SVGs and styles inline; no scripts, fonts or links to anything outside it) and
//! `points.csv` (the per-point table for notebooks).
//!
//! Each workload's section puts the verdict first — the same sentence the terminal prints
//! — then the job, the pictures, the findings, the per-size table, and at the end the
//! machine and the command that reproduces the run. Writing twice from the same results
//! gives the same files.

use crate::analyse::{analyse, AnalyseOptions, WorkloadAnalysis};
use crate::explain::{explain, Explanation};
use crate::present::units::{bytes, ratio, time_ns};
use crate::results::reader::{RunResults, WorkloadResults};
use std::fmt::Write;
use std::path::{Path, PathBuf};

/// What was written.
#[derive(Debug, Clone)]
pub struct Written {
    pub markdown: PathBuf,
    pub html: PathBuf,
    pub csv: PathBuf,
    pub pictures: Vec<PathBuf>,
}

fn esc(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

/// The command that reproduces the run, quoted for a POSIX shell.
pub fn reproduce(r: &RunResults) -> String {
    let Some(h) = &r.run else { return String::new() };
    h.command
        .iter()
        .map(|a| if a.chars().all(|c| c.is_ascii_alphanumeric() || "-_./=,:%".contains(c)) { a.clone() } else { format!("'{}'", a.replace('\'', "'\\''")) })
        .collect::<Vec<_>>()
        .join(" ")
}

/// Rows of the per-size table: (size, design, median, interval, ratio, allocated, peak, chunks, ended by).
fn size_rows(w: &WorkloadResults) -> Vec<[String; 9]> {
    let mut out = Vec::new();
    for &n in &w.header.sizes {
        for d in &w.header.designs {
            let Some(p) = w.point(&d.name, n) else { continue };
            let r = w.comparison(n).and_then(|c| c.ratios.iter().find(|r| r.design == d.name));
            let row = match (&p.measured, &p.skipped) {
                (Some(m), _) => [
                    w.header.axis().value(n),
                    d.name.clone(),
                    time_ns(m.median_ns),
                    match (m.ci_low_ns, m.ci_high_ns) {
                        (Some(a), Some(b)) => format!("{}–{}", time_ns(a), time_ns(b)),
                        _ => "—".into(),
                    },
                    r.map(|r| match (r.low, r.high) {
                        (Some(a), Some(b)) if (r.ratio - 1.0).abs() > 1e-12 => format!("{} ({}–{})", ratio(r.ratio), ratio(a), ratio(b)),
                        _ => ratio(r.ratio),
                    })
                    .unwrap_or_default(),
                    bytes(m.alloc.bytes as f64),
                    bytes(m.alloc.peak_live as f64),
                    m.output.as_ref().map(|o| o.chunks.to_string()).unwrap_or_default(),
                    format!("{} ({} samples)", m.stop.label(), m.samples_ns.len()),
                ],
                (None, Some(s)) => [
                    w.header.axis().value(n),
                    d.name.clone(),
                    s.predicted_ns.map(|p| format!("~{} predicted", time_ns(p))).unwrap_or_else(|| "—".into()),
                    String::new(),
                    String::new(),
                    String::new(),
                    String::new(),
                    String::new(),
                    format!("skipped: {}", s.reason.label()),
                ],
                _ => continue,
            };
            out.push(row);
        }
    }
    out
}

const HEAD: [&str; 9] = ["rows", "design", "median", "95% interval", "× fastest (95%)", "allocated", "peak live", "chunks", "ended by"];

/// The per-point table as CSV (RFC 4180: comma-separated, quoted where needed).
pub fn csv(r: &RunResults) -> String {
    let mut s = String::from(
        "workload,design,rows,status,median_ns,ci_low_ns,ci_high_ns,p50_ns,p90_ns,p99_ns,max_ns,cpu_ns,samples,batch,alloc_bytes,alloc_count,peak_live_bytes,output_rows,output_chunks,ratio_to_fastest,stop,skip_reason,predicted_ns\r\n",
    );
    let q = |t: &str| {
        // A cell a spreadsheet would run as a formula is prefixed with `'` (common practice
        // against CSV formula injection).
        let t = if t.starts_with(['=', '+', '-', '@', '\t', '\r']) { format!("'{t}") } else { t.to_string() };
        if t.contains([',', '"', '\n', '\r']) {
            format!("\"{}\"", t.replace('"', "\"\""))
        } else {
            t
        }
    };
    let o = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_default();
    for w in &r.workloads {
        let mut pts: Vec<_> = w.points.iter().collect();
        pts.sort_by_key(|p| (p.rows, w.header.designs.iter().position(|d| d.name == p.design)));
        for p in pts {
            let ratio = w.comparison(p.rows).and_then(|c| c.ratios.iter().find(|r| r.design == p.design)).map(|r| r.ratio);
            let line = match (&p.measured, &p.skipped) {
                (Some(m), _) => vec![
                    q(&w.header.workload),
                    q(&p.design),
                    p.rows.to_string(),
                    "measured".into(),
                    format!("{}", m.median_ns),
                    o(m.ci_low_ns),
                    o(m.ci_high_ns),
                    format!("{}", m.p50_ns),
                    format!("{}", m.p90_ns),
                    format!("{}", m.p99_ns),
                    format!("{}", m.max_ns),
                    format!("{}", m.cpu_ns),
                    m.samples_ns.len().to_string(),
                    m.batch.to_string(),
                    m.alloc.bytes.to_string(),
                    m.alloc.count.to_string(),
                    m.alloc.peak_live.to_string(),
                    m.output.as_ref().map(|x| x.rows.to_string()).unwrap_or_default(),
                    m.output.as_ref().map(|x| x.chunks.to_string()).unwrap_or_default(),
                    o(ratio),
                    m.stop.label().replace(' ', "_"),
                    String::new(),
                    String::new(),
                ],
                (None, Some(sk)) => {
                    let mut v = vec![q(&w.header.workload), q(&p.design), p.rows.to_string(), "skipped".into()];
                    v.extend(std::iter::repeat_n(String::new(), 17));
                    v.push(serde_json::to_value(sk.reason).ok().and_then(|x| x.as_str().map(str::to_string)).unwrap_or_default());
                    v.push(o(sk.predicted_ns));
                    v
                }
                _ => continue,
            };
            s.push_str(&line.join(","));
            s.push_str("\r\n");
        }
    }
    s
}

fn machine_lines(r: &RunResults) -> Vec<(String, String)> {
    let Some(h) = &r.run else { return vec![] };
    let m = &h.machine;
    vec![
        ("run".into(), format!("{} (started {})", h.run_id, h.started_at)),
        ("CPU".into(), format!("{} — {} logical cores{}", m.cpu_model, m.logical_cores, m.physical_cores.map(|p| format!(", {p} physical")).unwrap_or_default())),
        ("memory".into(), format!("{} total, {} available at the start", bytes(m.memory_total_bytes as f64), bytes(h.available_memory_bytes as f64))),
        ("system".into(), format!("{} (kernel {}, {})", m.os, m.kernel, m.arch)),
        ("versions".into(), format!("framecost {}, polars {} ({} threads)", m.framecost_version, m.polars_version, m.polars_threads)),
        ("clock".into(), format!("read cost {:.1} ns, step {:.0} ns", h.clock.read_cost_ns, h.clock.observed_step_ns)),
        ("yardstick".into(), format!("{} — {}", time_ns(h.yardstick.median_ns), h.yardstick.kernel)),
    ]
}

fn markdown(r: &RunResults, parts: &[(&WorkloadResults, &WorkloadAnalysis, &Explanation, Vec<(String, PathBuf)>)], dir: &Path) -> String {
    let mut s = String::new();
    let id = r.run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
    let _ = writeln!(s, "# framecost run {id}\n");
    if !r.complete() {
        let _ = writeln!(s, "> This run did not finish: what follows is what was measured before it stopped.\n");
    }
    for (w, _a, e, pics) in parts {
        let _ = writeln!(s, "## {}\n", w.header.workload);
        let _ = writeln!(s, "**Verdict ({}):** {}\n", e.verdict.kind.word(), e.verdict.text);
        if !w.header.about.is_empty() {
            let _ = writeln!(s, "{}\n", w.header.about);
        }
        for (title, p) in pics {
            let rel = p.strip_prefix(dir).unwrap_or(p).display().to_string();
            let _ = writeln!(s, "![{title}]({rel})\n");
        }
        let _ = writeln!(s, "### Findings\n");
        for f in &e.findings {
            let who = f.design.as_deref().unwrap_or("all designs");
            let action = if f.action.is_empty() { String::new() } else { format!(" {}.", f.action) };
            let _ = writeln!(s, "- **{who}** — {}: {}.{action}", f.measured, f.implies);
        }
        let _ = writeln!(s, "\n### Per size\n");
        let _ = writeln!(s, "| {} | {} |", w.header.axis().name(), HEAD[1..].join(" | "));
        let _ = writeln!(s, "|{}|", HEAD.iter().map(|_| "---").collect::<Vec<_>>().join("|"));
        for row in size_rows(w) {
            let _ = writeln!(s, "| {} |", row.join(" | "));
        }
        let _ = writeln!(s, "\n### Designs\n");
        for d in &w.header.designs {
            let _ = writeln!(s, "- `{}`: {}{}", d.name, d.recipe, d.about.as_ref().map(|a| format!(" — {a}")).unwrap_or_default());
        }
        for d in w.header.designs.iter().filter(|d| !d.query_plans.is_empty()) {
            let engine = d.engine.as_deref().unwrap_or("memory");
            for plan in &d.query_plans {
                let _ = writeln!(s, "\nQuery plan of `{}` ({engine} engine, optimized):\n\n```\n{}\n```", d.name, plan.trim_end());
            }
        }
        s.push('\n');
    }
    let _ = writeln!(s, "## Machine\n");
    for (k, v) in machine_lines(r) {
        let _ = writeln!(s, "- {k}: {v}");
    }
    let _ = writeln!(s, "\n## Reproduce\n\n```\n{}\n```", reproduce(r));
    s
}

const STYLE: &str = "body{margin:0;background:#f4f1ea;color:#262626;font:16px/1.5 Georgia,'Times New Roman',serif}\
main{max-width:1000px;margin:0 auto;padding:24px 28px 60px;background:#fbf9f4}\
h1{font-size:26px;margin:8px 0 4px}h2{font-size:22px;border-top:3px solid #1f6e8c;padding-top:14px;margin-top:36px}\
h3{font-size:17px;margin:22px 0 6px;color:#4a4a4a}\
.verdict{background:#e7f0f3;border-left:6px solid #1f6e8c;padding:10px 14px;font-size:17px}\
.warn{background:#f7ebe0;border-left:6px solid #c86b1e;padding:8px 12px}\
figure{margin:16px 0}figcaption{font-size:14px;color:#5c5c5c}svg{max-width:100%;height:auto}\
table{border-collapse:collapse;font-size:13px;width:100%}th,td{padding:3px 6px;border-bottom:1px solid #e4dfd3;text-align:right}\
th:nth-child(2),td:nth-child(2),th:first-child,td:first-child{text-align:left}\
ul.findings li{margin:4px 0}code,pre{font-family:'DejaVu Sans Mono',Menlo,Consolas,monospace;font-size:13px}\
pre{background:#efebe2;padding:8px;overflow-x:auto}dl{display:grid;grid-template-columns:max-content auto;gap:2px 14px}dt{color:#5c5c5c}";

fn html(r: &RunResults, parts: &[(&WorkloadResults, &WorkloadAnalysis, &Explanation, Vec<(String, PathBuf)>)]) -> Result<String, String> {
    let mut s = String::new();
    let id = r.run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"/><title>framecost run {}</title><style>{STYLE}</style></head><body><main>\n",
        esc(&id)
    );
    let _ = writeln!(s, "<h1>framecost run {}</h1>", esc(&id));
    if !r.complete() {
        let _ = writeln!(s, "<p class=\"warn\">This run did not finish: what follows is what was measured before it stopped.</p>");
    }
    for (w, _a, e, pics) in parts {
        let _ = writeln!(s, "<h2>{}</h2>", esc(&w.header.workload));
        let _ = writeln!(s, "<p class=\"verdict\"><strong>Verdict ({}):</strong> {}</p>", e.verdict.kind.word(), esc(&e.verdict.text));
        if !w.header.about.is_empty() {
            let _ = writeln!(s, "<p>{}</p>", esc(&w.header.about));
        }
        for (title, p) in pics {
            let svg = std::fs::read_to_string(p).map_err(|e| format!("{}: {e}", p.display()))?;
            // Inline SVG needs no namespace declaration in HTML; leaving it out keeps the page
            // free of any URL at all.
            let svg = match svg.find("<svg") {
                Some(i) => &svg[i..],
                None => svg.as_str(),
            }
            .replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1);
            let _ = writeln!(s, "<figure>{svg}<figcaption>{}</figcaption></figure>", esc(title));
        }
        let _ = writeln!(s, "<h3>Findings</h3><ul class=\"findings\">");
        for f in &e.findings {
            let who = f.design.as_deref().unwrap_or("all designs");
            let action = if f.action.is_empty() { String::new() } else { format!(" {}.", esc(&f.action)) };
            let _ = writeln!(s, "<li><strong>{}</strong> — {}: {}.{action}</li>", esc(who), esc(&f.measured), esc(&f.implies));
        }
        let _ = writeln!(s, "</ul><h3>Per size</h3><table><thead><tr>");
        for h in std::iter::once(w.header.axis().name()).chain(HEAD[1..].iter().copied()) {
            let _ = write!(s, "<th>{}</th>", esc(h));
        }
        let _ = writeln!(s, "</tr></thead><tbody>");
        for row in size_rows(w) {
            let _ = write!(s, "<tr>");
            for c in row {
                let _ = write!(s, "<td>{}</td>", esc(&c));
            }
            let _ = writeln!(s, "</tr>");
        }
        let _ = writeln!(s, "</tbody></table><h3>Designs</h3><ul>");
        for d in &w.header.designs {
            let _ = writeln!(
                s,
                "<li><code>{}</code>: {}{}</li>",
                esc(&d.name),
                esc(&d.recipe),
                d.about.as_ref().map(|a| format!(" — {}", esc(a))).unwrap_or_default()
            );
        }
        let _ = writeln!(s, "</ul>");
        for d in w.header.designs.iter().filter(|d| !d.query_plans.is_empty()) {
            let engine = d.engine.as_deref().unwrap_or("memory");
            for plan in &d.query_plans {
                let _ = writeln!(s, "<p>Query plan of <code>{}</code> ({engine} engine, optimized):</p><pre>{}</pre>", esc(&d.name), esc(plan.trim_end()));
            }
        }
    }
    let _ = writeln!(s, "<h2>Machine</h2><dl>");
    for (k, v) in machine_lines(r) {
        let _ = writeln!(s, "<dt>{}</dt><dd>{}</dd>", esc(&k), esc(&v));
    }
    let _ = writeln!(s, "</dl><h2>Reproduce</h2><pre>{}</pre>\n</main></body></html>", esc(&reproduce(r)));
    Ok(s)
}

/// Draw and write everything for a run into `dir`.
pub fn write(dir: &Path, r: &RunResults, opts: &AnalyseOptions) -> Result<Written, String> {
    let analysis = analyse(r, opts);
    let explanations: Vec<Explanation> = r.workloads.iter().zip(&analysis.workloads).map(|(w, a)| explain(w, a)).collect();
    let pic_dir = dir.join("pictures");
    let mut parts = Vec::new();
    let mut pictures = Vec::new();
    for ((w, a), e) in r.workloads.iter().zip(&analysis.workloads).zip(&explanations) {
        let pics = crate::present::plot::draw_all(&pic_dir, w, a)?;
        for (_, p) in &pics {
            pictures.push(p.clone());
            pictures.push(p.with_extension("png"));
        }
        parts.push((w, a, e, pics));
    }
    let md = markdown(r, &parts, dir);
    let page = html(r, &parts)?;
    let markdown = dir.join("report.md");
    let html_path = dir.join("report.html");
    let csv_path = dir.join("points.csv");
    let io = |p: &Path, t: &str| crate::results::writer::write_atomic(p, t).map_err(|e| e.to_string());
    io(&markdown, &md)?;
    io(&html_path, &page)?;
    io(&csv_path, &csv(r))?;
    Ok(Written { markdown, html: html_path, csv: csv_path, pictures })
}
