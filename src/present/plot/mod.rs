//! Pictures of a run, drawn with plotters as SVG and PNG: scaling curves (log-log, medians
//! with their 95% intervals, the fitted growth curve, the prediction continued to the target,
//! crossovers and skipped points), memory curves (allocated and peak live bytes beside the
//! table's own size), latency by percentile at one size, and each design's cost relative to
//! the best. `history.rs` draws one workload across many runs.
//!
//! Look (`look.rs`): framecost's own palette on a warm paper background; every design also
//! has its own marker shape and dash pattern (the dash phase runs on across a curve's
//! vertices), so the pictures read in grey print and with colour-vision deficiencies. Every
//! picture has the same frame: a title band on top, the plot, a legend band to its right
//! (never over the data) and, when there is something to list, a numbered key below (the
//! crossovers). Labels inside the plot go through a placer that keeps them apart. Ticks
//! (`ticks.rs`) are round in the unit printed. Each SVG carries a `<title>` and a `<desc>`.
//! Text uses the embedded DejaVu Sans (assets/fonts, Bitstream Vera licence), so nothing
//! depends on installed fonts. Everything is drawn from saved results and their analysis,
//! and drawing the same results twice gives the same files (no clock, no randomness).

mod history;
pub mod look;
pub mod ticks;

pub use history::{draw_history, history, short_run_id, spec_changes, RunMark};
pub use look::INKS;

use crate::analyse::WorkloadAnalysis;
use crate::units::{bytes_tick, escaped, size_label, time_tick};
use crate::results::reader::WorkloadResults;
use look::*;
use plotters::coord::combinators::BindKeyPoints;

use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::{Path, PathBuf};

const SIZE: (u32, u32) = (960, 600);
const TITLE_BAND: i32 = 44;

/// Register the embedded font once (plotters' ab_glyph text needs it for every backend).
fn ensure_font() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        let bytes: &'static [u8] = include_bytes!("../../../assets/fonts/DejaVuSans.ttf");
        let _ = plotters::style::register_font(FONT, FontStyle::Normal, bytes);
        let _ = plotters::style::register_font(FONT, FontStyle::Bold, bytes);
    });
}

fn span(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    let v: Vec<f64> = values.filter(|x| x.is_finite() && *x > 0.0).collect();
    if v.is_empty() {
        return None;
    }
    let lo = v.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = v.iter().copied().fold(0.0, f64::max);
    Some((lo / 1.6, hi * 1.6))
}

/// The frame of a picture: title band, plot, legend band to the right, key band below.
struct Frame {
    chart: Zone,
    legend: Zone,
    key: Zone,
}

fn frame<DB: DrawingBackend>(root: &Area<DB>, title: &str, legend_rows: &[(Sample, String)], key_lines: usize) -> Res<Frame> {
    let (w, h) = root.dim_in_pixel();
    let (w, h) = (w as i32, h as i32);
    let lw = legend_width(root, legend_rows);
    let key_h = if key_lines == 0 { 0 } else { 14 + 18 * key_lines as i32 };
    text(root, &fit_text(root, title, 20.0, w - 36), (18, 12), 20.0, TEXT)?;
    Ok(Frame {
        chart: Zone { x0: 0, y0: TITLE_BAND, x1: w - lw, y1: h - key_h },
        legend: Zone { x0: w - lw, y0: TITLE_BAND + 10, x1: w - 6, y1: h - key_h - 10 },
        key: Zone { x0: 18, y0: h - key_h, x1: w - 18, y1: h - 4 },
    })
}

fn sub<DB: DrawingBackend>(root: &Area<DB>, r: Zone) -> Area<DB> {
    root.clone().shrink((r.x0, r.y0), ((r.x1 - r.x0).max(1) as u32, (r.y1 - r.y0).max(1) as u32))
}

/// The numbered key below the plot: one line each.
fn key<DB: DrawingBackend>(root: &Area<DB>, band: Zone, lines: &[String]) -> Res<()> {
    if lines.is_empty() {
        return Ok(());
    }
    root.draw(&PathElement::new(vec![(band.x0, band.y0 + 4), (band.x1, band.y0 + 4)], RULE.stroke_width(1))).map_err(err)?;
    for (k, l) in lines.iter().enumerate() {
        let y = band.y0 + 10 + 18 * k as i32;
        text(root, &format!("{}", k + 1), (band.x0 + 4, y), 13.0, TEXT)?;
        text(root, &fit_text(root, l, 13.0, band.x1 - band.x0 - 30), (band.x0 + 26, y), 13.0, TEXT)?;
    }
    Ok(())
}

type LogAxis = plotters::coord::combinators::WithKeyPoints<plotters::coord::combinators::LogCoord<f64>>;
type LogLog = Cartesian2d<LogAxis, LogAxis>;

fn log_axis(lo: f64, hi: f64, (bold, light): (Vec<f64>, Vec<f64>)) -> LogAxis {
    let c: plotters::coord::combinators::LogCoord<f64> = (lo..hi).log_scale().into();
    c.with_key_points(bold).with_light_points(light)
}

/// A log-log chart over rows × value in `area`, with round ticks.
fn log_chart<'a, DB: DrawingBackend>(
    area: &'a Area<DB>,
    x: (f64, f64),
    y: (f64, f64),
    y_desc: &str,
    y_binary: bool,
    y_fmt: &dyn Fn(&f64) -> String,
    x_axis: crate::results::Axis,
) -> Res<ChartContext<'a, DB, LogLog>> {
    let yt = if y_binary { ticks::binary(y.0, y.1) } else { ticks::decimal(y.0, y.1) };
    let mut chart = ChartBuilder::on(area)
        .margin_top(8)
        .margin_right(18)
        .margin_left(10)
        .x_label_area_size(46)
        .y_label_area_size(82)
        .build_cartesian_2d(log_axis(x.0, x.1, ticks::decimal(x.0, x.1)), log_axis(y.0, y.1, yt))
        .map_err(err)?;
    chart
        .configure_mesh()
        .light_line_style(RULE.mix(0.45))
        .bold_line_style(RULE)
        .axis_style(MUTED)
        .label_style((FONT, 14).into_font().color(&TEXT))
        .x_desc(x_axis.name())
        .y_desc(y_desc)
        .axis_desc_style((FONT, 15).into_font().color(&TEXT))
        .x_label_formatter(&|v| if x_axis.0.is_some_and(|a| a.set.scale() != 1) { x_axis.value_f(*v) } else { size_label(*v) })
        .y_label_formatter(y_fmt)
        .draw()
        .map_err(err)?;
    Ok(chart)
}

fn plot_rect<DB: DrawingBackend, CT: CoordTranslate>(c: &ChartContext<'_, DB, CT>) -> Zone {
    let (xr, yr) = c.plotting_area().get_pixel_range();
    Zone { x0: xr.start, y0: yr.start, x1: xr.end, y1: yr.end }
}

fn design_words(names: &[String]) -> String {
    names.iter().enumerate().map(|(i, n)| format!("{} ({})", escaped(n), look_words(i))).collect::<Vec<_>>().join("; ")
}

/// Scaling curves: one picture per workload. Returns the picture's description.
pub fn scaling<DB: DrawingBackend>(root: Area<DB>, w: &WorkloadResults, a: &WorkloadAnalysis) -> Res<String> {
    let ax = w.header.axis();
    let axis = ax.name();
    root.fill(&PAPER).map_err(err)?;
    let designs: Vec<String> = w.header.designs.iter().map(|d| d.name.clone()).collect();
    let fit_of = |d: &str| a.designs.iter().find(|x| x.design == d);
    let target = a.predict_at;
    let xs = w.points.iter().map(|p| p.rows as f64).chain(target.map(|t| t as f64));
    let ys = w
        .points
        .iter()
        .flat_map(|p| {
            let m = p.measured.as_ref();
            [m.map(|m| m.median_ns), m.and_then(|m| m.ci_low_ns), m.and_then(|m| m.ci_high_ns), p.skipped.as_ref().and_then(|s| s.predicted_ns)]
        })
        .flatten()
        .chain(a.designs.iter().filter_map(|d| d.prediction.as_ref().map(|p| p.median)));
    let title = format!("{} — time per run as the {} grow", escaped(&w.header.workload), w.header.axis().name());
    let (Some((x0, x1)), Some((y0, y1))) = (span(xs), span(ys)) else {
        text(&root, &title, (18, 12), 20.0, TEXT)?;
        return root.present().map(|_| "No measured points to draw.".to_string()).map_err(err);
    };
    let crossings: Vec<_> = a.crossovers.iter().filter(|c| (c.bounded || c.inside_measured) && c.rows > x0 && c.rows < x1).collect();
    let key_lines: Vec<String> = crossings
        .iter()
        .map(|c| {
            // The size first, so a line shortened to fit still says where.
            format!(
                "at about {} {axis} (between {} and {}), {} becomes cheaper than {}",
                size_label(c.rows),
                size_label(c.rows_low),
                size_label(c.rows_high),
                escaped(&c.faster_above),
                escaped(&c.faster_below)
            )
        })
        .collect();
    let has_skipped = w.points.iter().any(|p| p.skipped.as_ref().is_some_and(|s| s.predicted_ns.is_some()));
    let mut rows: Vec<(Sample, String)> = designs.iter().enumerate().map(|(i, d)| (Sample::Design(i), escaped(d).into_owned())).collect();
    rows.push((Sample::Line { pattern: &[], width: 2, ink: TEXT, mark: Some(true) }, "measured median".into()));
    // Only what the picture shows gets a legend row.
    let has_interval = w.points.iter().filter_map(|p| p.measured.as_ref()).any(|m| m.ci_low_ns.is_some() && m.ci_high_ns.is_some());
    let fitted = |d: &str| fit_of(d).is_some_and(|da| da.time.is_some()) && w.design_points(d).iter().filter(|p| p.measured.is_some()).count() >= 1;
    let has_fit = designs.iter().any(|d| fitted(d));
    if has_interval {
        rows.push((Sample::Interval, "its 95% interval".into()));
    }
    if has_fit {
        rows.push((Sample::Line { pattern: &[], width: 1, ink: TEXT, mark: None }, "fitted growth".into()));
    }
    if let Some(t) = target.filter(|_| has_fit) {
        rows.push((Sample::Line { pattern: &[], width: 2, ink: tint(TEXT, 0.4), mark: Some(false) }, format!("fit continued to {}", size_label(t as f64))));
    }
    if has_skipped {
        rows.push((Sample::Mark(false), "skipped: predicted cost".into()));
    }
    if !crossings.is_empty() {
        rows.push((Sample::Ring, "curves cross (see below)".into()));
    }
    let f = frame(&root, &title, &rows, key_lines.len())?;
    let chart_area = sub(&root, f.chart);
    let chart = log_chart(&chart_area, (x0, x1), (y0, y1), "time per run", false, &|v: &f64| time_tick(*v), w.header.axis())?;
    let px = |x: f64, y: f64| chart.backend_coord(&(x, y));
    let plot = plot_rect(&chart);
    let mut placer = Placer::new(plot);
    let mut labels: Vec<(String, (i32, i32))> = Vec::new();
    // Target: a faint rule.
    if let Some(t) = target.filter(|&t| (t as f64) < x1) {
        let (tx, _) = px(t as f64, y1);
        pattern_line(&root, &[(tx, plot.y0), (tx, plot.y1)], &[2.0, 5.0], MUTED, 1)?;
        labels.push((format!("target {}", size_label(t as f64)), (tx, plot.y0 + 4)));
    }
    for (i, d) in designs.iter().enumerate() {
        let pts = w.design_points(d);
        let measured: Vec<(f64, &crate::results::Measured)> = pts.iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows as f64, m))).collect();
        for (n, m) in &measured {
            if let (Some(lo), Some(hi)) = (m.ci_low_ns, m.ci_high_ns) {
                let a0 = px(*n, lo.max(y0));
                let a1 = px(*n, hi.min(y1));
                root.draw(&PathElement::new(vec![a0, a1], ink(i).stroke_width(2))).map_err(err)?;
                root.draw(&PathElement::new(vec![(a0.0 - 4, a0.1), (a0.0 + 4, a0.1)], ink(i).stroke_width(1))).map_err(err)?;
                root.draw(&PathElement::new(vec![(a1.0 - 4, a1.1), (a1.0 + 4, a1.1)], ink(i).stroke_width(1))).map_err(err)?;
            }
        }
        // The fitted growth curve over the measured range, then continued (faint) to the target.
        if let (Some(fit), Some(first), Some(last)) = (fit_of(d).and_then(|da| da.time.as_ref()), measured.first(), measured.last()) {
            let f = |n: f64| fit.cost_at(n).unwrap_or(f64::NAN);
            let curve = |from: f64, to: f64| -> Vec<(i32, i32)> {
                (0..=60)
                    .map(|k| from * (to / from).powf(k as f64 / 60.0))
                    .filter(|n| f(*n).is_finite())
                    .map(|n| (n, f(n).clamp(y0, y1)))
                    .map(|(n, y)| px(n, y))
                    .collect()
            };
            design_line(&root, &curve(first.0, last.0), i, 1, 1.0)?;
            if let Some(t) = target.filter(|&t| t as f64 > last.0) {
                design_line(&root, &curve(last.0, t as f64), i, 2, 0.4)?;
                if let Some(p) = fit_of(d).and_then(|da| da.prediction.as_ref()) {
                    let c = px(t as f64, p.median.clamp(y0, y1));
                    draw_mark(&root, c, mark_of(i), tint(ink(i), 0.75), false)?;
                    placer.reserve_point(c, 7);
                }
            }
        }
        let line: Vec<(i32, i32)> = measured.iter().map(|(n, m)| px(*n, m.median_ns)).collect();
        design_line(&root, &line, i, 2, 1.0)?;
        for p in &line {
            mark(&root, *p, i, true)?;
            placer.reserve_point(*p, 7);
        }
        for p in pts.iter().filter(|p| p.skipped.is_some()) {
            if let Some(pred) = p.skipped.as_ref().and_then(|s| s.predicted_ns) {
                let c = px(p.rows as f64, pred.clamp(y0, y1));
                mark(&root, c, i, false)?;
                placer.reserve_point(c, 7);
                labels.push(("skipped".into(), c));
            }
        }
    }
    // Crossovers: a ring on the faster design's fitted curve, numbered; the key says what it is.
    let mut numbers = Vec::new();
    for (k, c) in crossings.iter().enumerate() {
        let y = fit_of(&c.faster_above).and_then(|da| da.time.as_ref()).and_then(|g| g.cost_at(c.rows)).filter(|v| v.is_finite()).unwrap_or(y0);
        let at = px(c.rows, y.clamp(y0, y1));
        ring(&root, at)?;
        placer.reserve_point(at, 12);
        numbers.push((format!("{}", k + 1), at));
    }
    for (s, at) in numbers {
        placer.place(&root, &s, at, 13.0, TEXT)?;
    }
    for (s, at) in labels {
        placer.place(&root, &s, at, 12.0, MUTED)?;
    }
    legend(&root, f.legend, &rows)?;
    key(&root, f.key, &key_lines)?;
    root.present().map_err(err)?;
    let mut desc = format!(
        "Log-log chart of time per run against {axis}, from {} to {} {axis}. Designs: {}. Filled marks are measured medians with their 95% intervals, thin lines the fitted growth",
        size_label(w.header.sizes.first().copied().unwrap_or(0) as f64),
        size_label(w.header.sizes.last().copied().unwrap_or(0) as f64),
        design_words(&designs)
    );
    if let Some(t) = target {
        desc += &format!("; faint lines continue each fit to the target of {} {axis} and end in a hollow mark", size_label(t as f64));
    }
    desc.push('.');
    for (k, l) in key_lines.iter().enumerate() {
        desc += &format!(" Crossing {}: {l}.", k + 1);
    }
    Ok(desc)
}

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
    let peak_label = if programs { "peak live (programs: resident added)" } else { "peak live" };
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
        // A program has no allocation counts: its peak is the resident memory its runs added.
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

/// Draw one picture as SVG (with its title and description) and PNG.
fn both(dir: &Path, stem: &str, size: (u32, u32), title: &str, draw: impl Fn(Area<SVGBackend<'_>>) -> Res<String>, draw_png: impl Fn(Area<BitMapBackend<'_>>) -> Res<String>) -> Res<PathBuf> {
    let svg_path = dir.join(format!("{stem}.svg"));
    let png_path = dir.join(format!("{stem}.png"));
    let mut text = String::new();
    let desc = {
        let root = SVGBackend::with_string(&mut text, size).into_drawing_area();
        draw(root)?
    };
    write_svg(&svg_path, &titled_svg(&text, title, &desc))?;
    write_png(&png_path, size, |root| draw_png(root).map(|_| ()))?;
    Ok(svg_path)
}

/// The pictures of one workload, each as SVG and PNG in `dir`. Returns (title, SVG path).
pub fn draw_all(dir: &Path, w: &WorkloadResults, a: &WorkloadAnalysis) -> Res<Vec<(String, PathBuf)>> {
    let ax = w.header.axis();
    let axis = ax.name();
    ensure_font();
    std::fs::create_dir_all(dir).map_err(err)?;
    // The workload name comes from a results file: never a path of its own.
    let name = crate::results::writer::file_stem(&w.header.workload);
    // The size for the distribution picture: the largest with every design measured, or
    // failing that the largest with two or more.
    let all = w.header.designs.len();
    let count = |n: u64| w.header.designs.iter().filter(|d| w.point(&d.name, n).is_some_and(|p| p.measured.is_some())).count();
    let dist_rows = w.header.sizes.iter().rev().copied().find(|&n| count(n) == all).or_else(|| w.header.sizes.iter().rev().copied().find(|&n| count(n) >= 2));
    let workload = crate::units::escaped(&w.header.workload).into_owned();
    let mut out = Vec::new();
    let mut one = |kind: &str, title: String, svg: &dyn Fn(Area<SVGBackend<'_>>) -> Res<String>, png: &dyn Fn(Area<BitMapBackend<'_>>) -> Res<String>| -> Res<()> {
        let p = both(dir, &format!("{name}-{kind}"), SIZE, &format!("{workload}: {title}"), svg, png)?;
        out.push((title, p));
        Ok(())
    };
    one("scaling", format!("Time per run as the {axis} grow"), &|r| scaling(r, w, a), &|r| scaling(r, w, a))?;
    one("memory", "Allocated and peak live bytes".into(), &|r| memory(r, w), &|r| memory(r, w))?;
    if let Some(n) = dist_rows {
        one("distribution", format!("Time by percentile at {} {axis}", size_label(n as f64)), &|r| distribution(r, w, n), &|r| distribution(r, w, n))?;
    }
    one("ratios", "Cost relative to the cheapest design".into(), &|r| ratios(r, w), &|r| ratios(r, w))?;
    Ok(out)
}

/// Write an SVG by temp file and rename (never through an existing file or symlink).
fn write_svg(path: &Path, text: &str) -> Res<()> {
    crate::results::writer::write_atomic(path, text).map(|_| ()).map_err(|e| e.to_string())
}

/// Draw a PNG into a fresh temp file beside `path`, then rename it over `path`.
fn write_png(path: &Path, size: (u32, u32), draw: impl FnOnce(DrawingArea<BitMapBackend<'_>, Shift>) -> Res<()>) -> Res<()> {
    let mut drawn: Res<()> = Ok(());
    let written = crate::results::writer::replace_with(path, |tmp| {
        drawn = draw(BitMapBackend::new(tmp, size).into_drawing_area());
        drawn.as_ref().map(|_| ()).map_err(|e| std::io::Error::other(e.to_string()))
    });
    drawn?;
    written.map(|_| ()).map_err(|e| e.to_string())
}
