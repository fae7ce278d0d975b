//! Reports of a run, redrawn from saved results alone: pictures (SVG and PNG) in
//! `pictures/`, `report.md` (linking the SVGs), `report.html` (one self-contained file:
//! SVGs and styles inline; no scripts, fonts or links to anything outside it) and
//! the notebook tables (`points.parquet`, `samples.parquet`, `points.csv`: `results::export`).
//!
//! The pages themselves are laid out in `page/` (decision first, an overview across
//! workloads, a design × size grid, one picture open and the rest folded); this file draws
//! the pictures, writes the files and holds the CSV. Writing twice from the same results
//! gives the same files. The analysis and explanations come made ([`Analysed`]): nothing
//! here fits or judges.

use crate::explain::Analysed;
use crate::present::page::{self, Part};
use crate::present::DrawError;
use crate::units::{bytes, time_ns};
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
        (
            "caches".into(),
            match h.cache_sweep() {
                Some((b, 1)) => format!("swept before every sample (a {} read): each sample starts cold", bytes(b as f64)),
                Some((b, t)) => format!("swept before every sample (a {} read, in {t} parts at once): each sample starts cold", bytes(b as f64)),
                None => "left as the previous sample left them (--warm-caches, or a run before cache sweeps)".into(),
            } + &cache_levels(&h.caches),
        ),
    ]
}

/// "; data caches L1 48.0 KiB, L2 2.00 MiB per core, L3 480 MiB shared by 2", empty when the
/// run recorded none.
fn cache_levels(caches: &[crate::results::CacheLevel]) -> String {
    let each: Vec<String> = caches
        .iter()
        .map(|c| match c.shared_by {
            1 => format!("L{} {} per core", c.level, bytes(c.bytes as f64)),
            n => format!("L{} {} shared by {n}", c.level, bytes(c.bytes as f64)),
        })
        .collect();
    if each.is_empty() { String::new() } else { format!("; data caches {}", each.join(", ")) }
}

/// Draw and write everything for an analysed run into `dir`.
pub fn write(dir: &Path, an: &Analysed) -> Result<Written, DrawError> {
    let r = an.results;
    // The tables for notebooks first: they need no drawing, so a picture that fails cannot cost them.
    let exports = crate::results::export::write(dir, r).map_err(DrawError::Tables)?;
    let pic_dir = dir.join("pictures");
    let mut parts = Vec::new();
    let mut pictures = Vec::new();
    for crate::explain::AnalysedWorkload { w, a, e } in an.workloads() {
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
    let io = |p: &Path, t: &str| crate::results::writer::write_atomic(p, t);
    io(&markdown, &md)?;
    io(&html_path, &html)?;
    Ok(Written { markdown, html: html_path, csv: exports.csv, pictures })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::results::CacheLevel;

    #[test]
    fn the_caches_line_lists_each_level_and_who_shares_it() {
        // This project's machine as sysfs lists it.
        let xeon = [
            CacheLevel { level: 1, bytes: 48 << 10, shared_by: 1 },
            CacheLevel { level: 2, bytes: 2 << 20, shared_by: 1 },
            CacheLevel { level: 3, bytes: 480 << 20, shared_by: 2 },
        ];
        assert_eq!(cache_levels(&xeon), "; data caches L1 48.0 KiB per core, L2 2.00 MiB per core, L3 480 MiB shared by 2");
        assert_eq!(cache_levels(&[]), "");
    }
}
