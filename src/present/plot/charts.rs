//! The other pictures of a workload: memory curves (allocated and peak live bytes beside the
//! table's own size), time by percentile at one size, and each design's cost relative to the
//! cheapest at each size.

use super::look::*;
use super::{design_words, frame, log_axis, log_chart, span, sub, ticks};
use crate::results::reader::WorkloadResults;
use crate::units::{bytes_tick, escaped, size_label, time_tick};
use plotters::prelude::*;

/// Memory curves: allocated bytes per run (filled marks, thick) and peak live bytes (hollow
/// marks, thin and faint) per design, beside the table's own estimated size (a pale band).
pub fn memory<DB: DrawingBackend>(root: Area<DB>, w: &WorkloadResults) -> Res<String> {
    root.fill(&PAPER).map_err(err)?;
    let designs: Vec<String> = w.header.designs.iter().map(|d| d.name.clone()).collect();
    let xs = w.points.iter().filter(|p| p.measured.is_some()).map(|p| p.rows as f64);
    let ys = w
        .points
        .iter()
        .filter_map(|p| p.measured.as_ref())
        .flat_map(|m| [m.alloc.bytes as f64, m.peak_bytes() as f64])
        .chain(w.tables.iter().map(|t| t.table_bytes_estimate));
    let title = format!("{} — memory per run", escaped(&w.header.workload));
    let (Some((x0, x1)), Some((y0, y1))) = (span(xs), span(ys)) else {
        text(&root, &title, (18, 12), 20.0, TEXT)?;
        return root.present().map(|_| "No measured points to draw.".to_string()).map_err(err);
    };
    let table_ink = tint(MUTED, 0.45);
    let mut rows: Vec<(Sample, String)> = designs.iter().enumerate().map(|(i, d)| (Sample::Design(i), escaped(d).into_owned())).collect();
    rows.push((Sample::Line { pattern: &[], width: 2, ink: TEXT, mark: Some(true) }, "allocated per run".into()));
    let programs = w.header.designs.iter().any(|d| d.program.is_some());
    let processes = w.header.designs.iter().any(|d| d.program.as_ref().is_some_and(|p| p.mode == "process"));
    let peak_label = match (programs, processes) {
        // A process started per run has no "before": its peak is whole, not added.
        (_, true) => "peak live (programs: resident)",
        (true, false) => "peak live (programs: resident added)",
        _ => "peak live",
    };
    rows.push((Sample::Line { pattern: &[], width: 1, ink: tint(TEXT, 0.5), mark: Some(false) }, peak_label.into()));
    rows.push((Sample::Line { pattern: &[], width: 6, ink: table_ink, mark: None }, "the table's own size".into()));
    let f = frame(&root, &title, &rows, 0)?;
    let chart_area = sub(&root, f.chart);
    let chart = log_chart(&chart_area, (x0, x1), (y0, y1), "bytes", true, &|v: &f64| bytes_tick(*v), w.header.axis())?;
    let px = |x: f64, y: f64| chart.backend_coord(&(x, y));
    let mut tables: Vec<&crate::results::TableRecord> = w.tables.iter().filter(|t| t.table_bytes_estimate > 0.0 && (t.rows as f64) > x0 && (t.rows as f64) < x1).collect();
    tables.sort_by_key(|t| t.rows);
    tables.dedup_by_key(|t| t.rows);
    let table: Vec<(i32, i32)> = tables.iter().map(|t| px(t.rows as f64, t.table_bytes_estimate.clamp(y0, y1))).collect();
    pattern_line(&root, &table, &[], table_ink, 6)?;
    for (i, d) in designs.iter().enumerate() {
        let pts: Vec<(f64, &crate::results::Measured)> = w.design_points(d).iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows as f64, m))).collect();
        let alloc: Vec<(i32, i32)> = pts.iter().filter(|(_, m)| m.alloc.bytes > 0).map(|(n, m)| px(*n, m.alloc.bytes as f64)).collect();
        // A program has no allocation counts: its peak is the resident memory its runs added
        // (a process started per run: its whole peak).
        let peak: Vec<(i32, i32)> = pts.iter().filter(|(_, m)| m.peak_bytes() > 0).map(|(n, m)| px(*n, m.peak_bytes() as f64)).collect();
        design_line(&root, &peak, i, 1, 0.5)?;
        for p in &peak {
            draw_mark(&root, *p, mark_of(i), tint(ink(i), 0.7), false)?;
        }
        design_line(&root, &alloc, i, 2, 1.0)?;
        for p in &alloc {
            mark(&root, *p, i, true)?;
        }
    }
    legend(&root, f.legend, &rows)?;
    root.present().map_err(err)?;
    Ok(format!(
        "Log-log chart of bytes against {}. Designs: {}. Filled marks on thick lines are the bytes allocated per run; hollow marks on thin faint lines the peak of live bytes; the pale band is the table's own estimated size.",
        w.header.axis().name(),
        design_words(&designs)
    ))
}

/// Latency by percentile for each design at one size (from the samples).
pub fn distribution<DB: DrawingBackend>(root: Area<DB>, w: &WorkloadResults, rows_at: u64) -> Res<String> {
    let ax = w.header.axis();
    let axis = ax.name();
    root.fill(&PAPER).map_err(err)?;
    let designs: Vec<String> = w.header.designs.iter().map(|d| d.name.clone()).collect();
    let ys = designs.iter().filter_map(|d| w.point(d, rows_at).and_then(|p| p.measured.as_ref())).flat_map(|m| m.samples_ns.iter().copied());
    let title = format!("{} — time per run by percentile at {} {axis}", escaped(&w.header.workload), size_label(rows_at as f64));
    let Some((y0, y1)) = span(ys) else {
        text(&root, &title, (18, 12), 20.0, TEXT)?;
        return root.present().map(|_| "No samples to draw.".to_string()).map_err(err);
    };
    let mut rows: Vec<(Sample, String)> = designs.iter().enumerate().map(|(i, d)| (Sample::Design(i), escaped(d).into_owned())).collect();
    rows.push((Sample::Mark(true), "every twelfth sample".into()));
    let f = frame(&root, &title, &rows, 0)?;
    let chart_area = sub(&root, f.chart);
    let mut chart = ChartBuilder::on(&chart_area)
        .margin_top(8)
        .margin_right(18)
        .margin_left(10)
        .x_label_area_size(46)
        .y_label_area_size(82)
        .build_cartesian_2d(0f64..100f64, log_axis(y0, y1, ticks::decimal(y0, y1)))
        .map_err(err)?;
    chart
        .configure_mesh()
        .light_line_style(RULE.mix(0.45))
        .bold_line_style(RULE)
        .axis_style(MUTED)
        .label_style((FONT, 14).into_font().color(&TEXT))
        .x_labels(11)
        .x_desc("percentile of the samples")
        .y_desc("time per run")
        .axis_desc_style((FONT, 15).into_font().color(&TEXT))
        .x_label_formatter(&|v| format!("p{v:.0}"))
        .y_label_formatter(&|v| time_tick(*v))
        .draw()
        .map_err(err)?;
    for (i, d) in designs.iter().enumerate() {
        let Some(m) = w.point(d, rows_at).and_then(|p| p.measured.as_ref()) else { continue };
        let mut s = m.samples_ns.clone();
        s.sort_by(f64::total_cmp);
        let n = s.len();
        let pts: Vec<(i32, i32)> = s
            .iter()
            .enumerate()
            .map(|(k, v)| chart.backend_coord(&(if n == 1 { 50.0 } else { 100.0 * k as f64 / (n - 1) as f64 }, *v)))
            .collect();
        design_line(&root, &pts, i, 2, 1.0)?;
        for p in pts.iter().step_by((n / 12).max(1)) {
            mark(&root, *p, i, true)?;
        }
    }
    legend(&root, f.legend, &rows)?;
    root.present().map_err(err)?;
    Ok(format!(
        "Each design's samples at {} {axis}, sorted: percentile across, time per run up (log scale). A flat line means steady runs; a rise at the right end means occasional slow runs. Designs: {}.",
        size_label(rows_at as f64),
        design_words(&designs)
    ))
}

/// Each design's median over the best median at each size.
pub fn ratios<DB: DrawingBackend>(root: Area<DB>, w: &WorkloadResults) -> Res<String> {
    root.fill(&PAPER).map_err(err)?;
    let designs: Vec<String> = w.header.designs.iter().map(|d| d.name.clone()).collect();
    let xs = w.comparisons.iter().filter(|c| c.ratios.len() >= 2).map(|c| c.rows as f64);
    let ys = w.comparisons.iter().flat_map(|c| c.ratios.iter().flat_map(|r| [Some(r.ratio), r.high]).flatten()).chain([1.0]);
    let title = format!("{} — cost relative to the cheapest design", escaped(&w.header.workload));
    let (Some((x0, x1)), Some((_, y1))) = (span(xs), span(ys)) else {
        text(&root, &title, (18, 12), 20.0, TEXT)?;
        return root.present().map(|_| "No sizes with two or more designs compared.".to_string()).map_err(err);
    };
    let rows: Vec<(Sample, String)> = designs.iter().enumerate().map(|(i, d)| (Sample::Design(i), escaped(d).into_owned())).collect();
    let f = frame(&root, &title, &rows, 0)?;
    let chart_area = sub(&root, f.chart);
    let chart = log_chart(&chart_area, (x0, x1), (0.8, y1.max(2.0)), "× the cheapest", false, &|v: &f64| format!("×{}", crate::units::short(*v)), w.header.axis())?;
    for (i, d) in designs.iter().enumerate() {
        let pts: Vec<(i32, i32)> = w
            .comparisons
            .iter()
            .filter(|c| c.ratios.len() >= 2)
            .filter_map(|c| c.ratios.iter().find(|r| &r.design == d).map(|r| (c.rows as f64, r.ratio)))
            .map(|(n, r)| chart.backend_coord(&(n, r)))
            .collect();
        design_line(&root, &pts, i, 2, 1.0)?;
        for p in &pts {
            mark(&root, *p, i, true)?;
        }
    }
    legend(&root, f.legend, &rows)?;
    root.present().map_err(err)?;
    Ok(format!(
        "Log-log chart of each design's median time over the cheapest design's at each size (×1 is the cheapest). Designs: {}.",
        design_words(&designs)
    ))
}
