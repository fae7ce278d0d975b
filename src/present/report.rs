//! Reports of a run, redrawn from saved results alone: pictures (SVG and PNG) in
//! `pictures/`, `report.md` (linking the SVGs), `report.html` (one self-contained file:
//! SVGs and styles inline; no scripts, fonts or links to anything outside it) and
//! `points.csv` (the per-point table for notebooks).
//!
//! The pages themselves are laid out in `page.rs` (decision first, an overview across
//! workloads, a design × size grid, one picture open and the rest folded); this file draws
//! the pictures, writes the files and holds the CSV. Writing twice from the same results
//! gives the same files.

use crate::analyse::{analyse, AnalyseOptions};
use crate::explain::{explain, Explanation};
use crate::present::page::{self, Part};
use crate::present::units::{bytes, time_ns};
use crate::results::reader::RunResults;
use std::path::{Path, PathBuf};

/// What was written.
#[derive(Debug, Clone)]
pub struct Written {
    pub markdown: PathBuf,
    pub html: PathBuf,
    pub csv: PathBuf,
    pub pictures: Vec<PathBuf>,
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

/// Draw and write everything for a run into `dir`.
pub fn write(dir: &Path, r: &RunResults, opts: &AnalyseOptions) -> Result<Written, String> {
    let analysis = analyse(r, opts);
    let explanations: Vec<Explanation> = r.workloads.iter().zip(&analysis.workloads).map(|(w, a)| explain(w, a)).collect();
    let pic_dir = dir.join("pictures");
    let mut parts = Vec::new();
    let mut pictures = Vec::new();
    for ((w, a), e) in r.workloads.iter().zip(&analysis.workloads).zip(&explanations) {
        let drawn = crate::present::plot::draw_all(&pic_dir, w, a)?;
        for (_, p) in &drawn {
            pictures.push(p.clone());
            pictures.push(p.with_extension("png"));
        }
        let d = crate::present::digest::digest(w, a, e);
        parts.push(Part { w, a, e, d, pictures: page::pictures(drawn, w, a) });
    }
    let machine = machine_lines(r);
    let again = reproduce(r);
    let md = page::markdown(r, &parts, dir, &machine, &again);
    let html = page::html(r, &parts, &machine, &again)?;
    let markdown = dir.join("report.md");
    let html_path = dir.join("report.html");
    let csv_path = dir.join("points.csv");
    let io = |p: &Path, t: &str| crate::results::writer::write_atomic(p, t).map_err(|e| e.to_string());
    io(&markdown, &md)?;
    io(&html_path, &html)?;
    io(&csv_path, &csv(r))?;
    Ok(Written { markdown, html: html_path, csv: csv_path, pictures })
}
