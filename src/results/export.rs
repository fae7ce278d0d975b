//! Tables for notebooks, written with polars from saved results: `points.parquet` (one row
//! per point), `samples.parquet` (one row per sample) and `points.csv` (the points again,
//! for spreadsheets). Columns are documented in `docs/results.md`.
//!
//! A newcomer must know: the CSV is the only file a spreadsheet opens, so only there is a
//! text cell that starts like a formula (`=`, `+`, `-`, `@`, tab, carriage return) prefixed
//! with `'` (the usual defence against CSV formula injection); the Parquet files keep names
//! exactly as recorded. Rows are in a fixed order (workload, size, design as declared), so
//! writing twice from the same results gives the same bytes.

use super::reader::{RunResults, WorkloadResults};
use super::PointRecord;
use polars::prelude::*;
use std::path::{Path, PathBuf};

/// The files written.
#[derive(Debug, Clone)]
pub struct Exports {
    pub points_parquet: PathBuf,
    pub samples_parquet: PathBuf,
    pub csv: PathBuf,
}

/// A text cell as a spreadsheet should see it: a leading formula character made inert.
pub fn neutralise(cell: &str) -> String {
    if cell.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        format!("'{cell}")
    } else {
        cell.to_string()
    }
}

/// An enum's name as the results file writes it (`point_budget`, `predicted_over_budget`).
fn tag<T: serde::Serialize>(v: T) -> String {
    serde_json::to_value(v).ok().and_then(|x| x.as_str().map(str::to_string)).unwrap_or_default()
}

/// Every point of a run in table order: workload order, then size, then the designs'
/// declared order.
fn ordered(r: &RunResults) -> Vec<(&WorkloadResults, &PointRecord)> {
    let mut out = Vec::new();
    for w in &r.workloads {
        let mut pts: Vec<&PointRecord> = w.points.iter().collect();
        pts.sort_by_key(|p| (p.rows, w.header.designs.iter().position(|d| d.name == p.design)));
        out.extend(pts.into_iter().map(|p| (w, p)));
    }
    out
}

/// One row per point. `text` is applied to every text cell (identity for Parquet,
/// [`neutralise`] for the CSV).
fn points_frame_with(r: &RunResults, text: fn(&str) -> String) -> PolarsResult<DataFrame> {
    let pts = ordered(r);
    let ms = |f: &dyn Fn(&super::Measured) -> f64| -> Vec<Option<f64>> { pts.iter().map(|(_, p)| p.measured.as_ref().map(f)).collect() };
    let mo = |f: &dyn Fn(&super::Measured) -> Option<f64>| -> Vec<Option<f64>> { pts.iter().map(|(_, p)| p.measured.as_ref().and_then(f)).collect() };
    let mu = |f: &dyn Fn(&super::Measured) -> u64| -> Vec<Option<u64>> { pts.iter().map(|(_, p)| p.measured.as_ref().map(f)).collect() };
    let mou = |f: &dyn Fn(&super::Measured) -> Option<u64>| -> Vec<Option<u64>> { pts.iter().map(|(_, p)| p.measured.as_ref().and_then(f)).collect() };
    let ratio = |p: &PointRecord, w: &WorkloadResults| w.comparison(p.rows).and_then(|c| c.ratios.iter().find(|r| r.design == p.design).cloned());
    let ratios: Vec<Option<super::Ratio>> = pts.iter().map(|(w, p)| if p.measured.is_some() { ratio(p, w) } else { None }).collect();
    let cols = vec![
        Column::new("workload".into(), pts.iter().map(|(w, _)| text(&w.header.workload)).collect::<Vec<_>>()),
        Column::new("design".into(), pts.iter().map(|(_, p)| text(&p.design)).collect::<Vec<_>>()),
        Column::new("rows".into(), pts.iter().map(|(_, p)| p.rows).collect::<Vec<_>>()),
        Column::new(
            "status".into(),
            pts.iter().map(|(_, p)| if p.measured.is_some() { "measured" } else { "skipped" }).collect::<Vec<_>>(),
        ),
        Column::new("median_ns".into(), ms(&|m| m.median_ns)),
        Column::new("ci_low_ns".into(), mo(&|m| m.ci_low_ns)),
        Column::new("ci_high_ns".into(), mo(&|m| m.ci_high_ns)),
        Column::new("ci_rel_half_width".into(), mo(&|m| m.ci_rel_half_width)),
        Column::new("mean_ns".into(), ms(&|m| m.mean_ns)),
        Column::new("p50_ns".into(), ms(&|m| m.p50_ns)),
        Column::new("p90_ns".into(), ms(&|m| m.p90_ns)),
        Column::new("p99_ns".into(), ms(&|m| m.p99_ns)),
        Column::new("max_ns".into(), ms(&|m| m.max_ns)),
        Column::new("cpu_ns".into(), ms(&|m| m.cpu_ns)),
        Column::new("samples".into(), mu(&|m| m.samples_ns.len() as u64)),
        Column::new("batch".into(), mu(&|m| m.batch)),
        Column::new("warmup_runs".into(), mu(&|m| m.warmup_runs)),
        // Empty for a program design: it has no allocation counts (not zero allocations).
        Column::new("alloc_bytes".into(), mou(&|m| m.alloc_counted.then_some(m.alloc.bytes))),
        Column::new("alloc_count".into(), mou(&|m| m.alloc_counted.then_some(m.alloc.count))),
        Column::new("peak_live_bytes".into(), mou(&|m| m.alloc_counted.then_some(m.alloc.peak_live))),
        Column::new("peak_resident_bytes".into(), mou(&|m| m.program.map(|p| p.peak_resident_bytes))),
        Column::new("resident_before_bytes".into(), mou(&|m| m.program.and_then(|p| p.resident_before_bytes))),
        Column::new("child_cpu_ns".into(), mo(&|m| m.program.and_then(|p| p.child_cpu_ns))),
        Column::new("alloc_exact".into(), pts.iter().map(|(_, p)| p.measured.as_ref().map(|m| m.alloc_exact)).collect::<Vec<_>>()),
        Column::new("output_rows".into(), pts.iter().map(|(_, p)| p.measured.as_ref().and_then(|m| m.output.as_ref()).map(|o| o.rows)).collect::<Vec<_>>()),
        Column::new(
            "output_chunks".into(),
            pts.iter().map(|(_, p)| p.measured.as_ref().and_then(|m| m.output.as_ref()).map(|o| o.chunks)).collect::<Vec<_>>(),
        ),
        Column::new("ratio_to_fastest".into(), ratios.iter().map(|r| r.as_ref().map(|r| r.ratio)).collect::<Vec<_>>()),
        Column::new("ratio_low".into(), ratios.iter().map(|r| r.as_ref().and_then(|r| r.low)).collect::<Vec<_>>()),
        Column::new("ratio_high".into(), ratios.iter().map(|r| r.as_ref().and_then(|r| r.high)).collect::<Vec<_>>()),
        Column::new("stop".into(), pts.iter().map(|(_, p)| p.measured.as_ref().map(|m| tag(m.stop))).collect::<Vec<_>>()),
        Column::new("busy".into(), pts.iter().map(|(_, p)| p.measured.as_ref().map(|m| m.is_contaminated())).collect::<Vec<_>>()),
        Column::new("bimodal".into(), pts.iter().map(|(_, p)| p.measured.as_ref().map(|m| m.bimodal)).collect::<Vec<_>>()),
        Column::new("setup_ns".into(), pts.iter().map(|(_, p)| p.setup_ns).collect::<Vec<_>>()),
        Column::new("spent_s".into(), ms(&|m| m.spent_s)),
        Column::new("skip_reason".into(), pts.iter().map(|(_, p)| p.skipped.as_ref().map(|s| tag(s.reason))).collect::<Vec<_>>()),
        Column::new("predicted_ns".into(), pts.iter().map(|(_, p)| p.skipped.as_ref().and_then(|s| s.predicted_ns)).collect::<Vec<_>>()),
        Column::new(
            "predicted_bytes".into(),
            pts.iter().map(|(_, p)| p.skipped.as_ref().and_then(|s| s.predicted_bytes)).collect::<Vec<_>>(),
        ),
        Column::new("skip_detail".into(), pts.iter().map(|(_, p)| p.skipped.as_ref().map(|s| text(&s.detail))).collect::<Vec<_>>()),
    ];
    DataFrame::new(pts.len(), cols)
}

/// One row per point, names as recorded (what `points.parquet` holds).
pub fn points_frame(r: &RunResults) -> PolarsResult<DataFrame> {
    points_frame_with(r, |s| s.to_string())
}

/// One row per sample of every measured point, in the order the samples were taken.
pub fn samples_frame(r: &RunResults) -> PolarsResult<DataFrame> {
    let (mut wl, mut de, mut rows, mut idx, mut ns, mut batch) = (Vec::new(), Vec::new(), Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for (w, p) in ordered(r) {
        let Some(m) = &p.measured else { continue };
        for (i, &s) in m.samples_ns.iter().enumerate() {
            wl.push(w.header.workload.clone());
            de.push(p.design.clone());
            rows.push(p.rows);
            idx.push(i as u32);
            ns.push(s);
            batch.push(m.batch);
        }
    }
    let n = ns.len();
    DataFrame::new(
        n,
        vec![
            Column::new("workload".into(), wl),
            Column::new("design".into(), de),
            Column::new("rows".into(), rows),
            Column::new("sample".into(), idx),
            Column::new("ns_per_run".into(), ns),
            Column::new("batch".into(), batch),
        ],
    )
}

fn write_with(path: &Path, fill: impl FnOnce(std::fs::File) -> PolarsResult<()>) -> Result<PathBuf, String> {
    super::writer::replace_with(path, |tmp| {
        let f = std::fs::OpenOptions::new().write(true).truncate(true).open(tmp)?;
        fill(f).map_err(std::io::Error::other)
    })
    .map_err(|e| e.to_string())
}

/// Write `points.parquet`, `samples.parquet` and `points.csv` into `dir`, each atomically.
pub fn write(dir: &Path, r: &RunResults) -> Result<Exports, String> {
    std::fs::create_dir_all(dir).map_err(|e| format!("{}: cannot create the folder: {e}", dir.display()))?;
    let enc = |what: &str, e: PolarsError| format!("cannot build the {what} table: {e}");
    let mut points = points_frame(r).map_err(|e| enc("points", e))?;
    let mut samples = samples_frame(r).map_err(|e| enc("samples", e))?;
    let mut sheet = points_frame_with(r, neutralise).map_err(|e| enc("points", e))?;
    let points_parquet = write_with(&dir.join("points.parquet"), |f| ParquetWriter::new(f).finish(&mut points).map(|_| ()))?;
    let samples_parquet = write_with(&dir.join("samples.parquet"), |f| ParquetWriter::new(f).finish(&mut samples).map(|_| ()))?;
    // RFC 4180: comma-separated, CRLF records, quoted only where needed.
    let csv = write_with(&dir.join("points.csv"), |mut f| {
        CsvWriter::new(&mut f).include_header(true).with_line_terminator("\r\n".into()).with_quote_style(QuoteStyle::Necessary).finish(&mut sheet)
    })?;
    Ok(Exports { points_parquet, samples_parquet, csv })
}

#[cfg(test)]
mod tests {
    use super::neutralise;

    #[test]
    fn formula_cells_are_made_inert() {
        // OWASP, "CSV Injection": cells beginning with =, +, -, @, tab or carriage return
        // are prefixed with a single quote.
        assert_eq!(neutralise("=HYPERLINK(\"x\")"), "'=HYPERLINK(\"x\")");
        assert_eq!(neutralise("+1"), "'+1");
        assert_eq!(neutralise("-x"), "'-x");
        assert_eq!(neutralise("@sum"), "'@sum");
        assert_eq!(neutralise("\tx"), "'\tx");
        assert_eq!(neutralise("build-once"), "build-once");
    }
}
