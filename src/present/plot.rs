//! Pictures of a run, drawn with plotters as SVG and PNG: scaling curves (log-log, medians
//! with their 95% intervals, the fitted growth curve, the prediction continued to the target,
//! crossovers and skipped points), memory curves (allocated and peak live bytes beside the
//! table's own size), latency by percentile at one size, and each design's cost relative to
//! the best.
//!
//! Look: framecost's own palette on a warm paper background; every design also has its own
//! marker shape and line pattern, so the pictures read in grey print and with colour-vision
//! deficiencies. Text uses the embedded DejaVu Sans (assets/fonts, Bitstream Vera licence),
//! so nothing depends on installed fonts. A newcomer must know: everything here is drawn
//! from saved results and their analysis, and drawing the same results twice gives the
//! same files (no clock, no randomness).

use crate::analyse::WorkloadAnalysis;
use crate::present::units::{bytes, time_ns};
use crate::results::reader::WorkloadResults;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::{Path, PathBuf};

/// Design colours (framecost's own), chosen to stay apart in lightness as well as hue.
pub const INKS: [RGBColor; 6] = [
    RGBColor(0x1f, 0x6e, 0x8c), // harbour blue
    RGBColor(0xc8, 0x6b, 0x1e), // apricot
    RGBColor(0x4e, 0x8f, 0x3a), // orchard green
    RGBColor(0x8e, 0x3b, 0x7a), // plum
    RGBColor(0x5c, 0x5c, 0x5c), // slate
    RGBColor(0xb8, 0x9b, 0x1c), // straw
];
const PAPER: RGBColor = RGBColor(0xfb, 0xf9, 0xf4);
const RULE: RGBColor = RGBColor(0xe4, 0xdf, 0xd3);
const TEXT: RGBColor = RGBColor(0x26, 0x26, 0x26);
const MUTED: RGBColor = RGBColor(0x8a, 0x84, 0x78);
/// Line patterns per design: (dash, gap) in pixels; (0, 0) is solid.
const PATTERNS: [(u32, u32); 6] = [(0, 0), (10, 4), (3, 3), (16, 5), (6, 2), (2, 6)];
const SIZE: (u32, u32) = (960, 600);
const FONT: &str = "sans-serif";

fn ink(i: usize) -> RGBColor {
    INKS[i % INKS.len()]
}

/// Register the embedded font once (plotters' ab_glyph text needs it for every backend).
fn ensure_font() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        let bytes: &'static [u8] = include_bytes!("../../assets/fonts/DejaVuSans.ttf");
        let _ = plotters::style::register_font(FONT, FontStyle::Normal, bytes);
        let _ = plotters::style::register_font(FONT, FontStyle::Bold, bytes);
    });
}

type Res<T> = Result<T, String>;
fn err<E: std::fmt::Display>(e: E) -> String {
    e.to_string()
}

/// Draw a marker of design `i`'s shape.
fn mark<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, at: (i32, i32), i: usize, filled: bool) -> Res<()> {
    let c = ink(i);
    let style = if filled { c.filled() } else { c.stroke_width(2) };
    let (x, y) = at;
    match i % 6 {
        0 => area.draw(&Circle::new(at, 5, style)).map_err(err),
        1 => area.draw(&Polygon::new(vec![(x, y - 6), (x + 6, y + 5), (x - 6, y + 5)], style)).map_err(err),
        2 => area.draw(&Rectangle::new([(x - 5, y - 5), (x + 5, y + 5)], style)).map_err(err),
        3 => area.draw(&Polygon::new(vec![(x, y - 7), (x + 6, y), (x, y + 7), (x - 6, y)], style)).map_err(err),
        4 => {
            area.draw(&PathElement::new(vec![(x - 5, y - 5), (x + 5, y + 5)], c.stroke_width(3))).map_err(err)?;
            area.draw(&PathElement::new(vec![(x - 5, y + 5), (x + 5, y - 5)], c.stroke_width(3))).map_err(err)
        }
        _ => area.draw(&Polygon::new(vec![(x - 6, y - 5), (x + 6, y - 5), (x, y + 6)], style)).map_err(err),
    }
}

/// A polyline in design `i`'s pattern, in pixel coordinates.
fn pattern_line<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, pts: &[(i32, i32)], i: usize, width: u32, dashed: bool) -> Res<()> {
    let (dash, gap) = if dashed { (7, 6) } else { PATTERNS[i % PATTERNS.len()] };
    let style = ink(i).stroke_width(width);
    if dash == 0 {
        return area.draw(&PathElement::new(pts.to_vec(), style)).map_err(err);
    }
    // Walk the polyline and emit dashes.
    for w in pts.windows(2) {
        let (x0, y0) = (w[0].0 as f64, w[0].1 as f64);
        let (x1, y1) = (w[1].0 as f64, w[1].1 as f64);
        let len = ((x1 - x0).powi(2) + (y1 - y0).powi(2)).sqrt();
        if len < 1e-9 {
            continue;
        }
        let mut t = 0.0;
        while t < len {
            let t2 = (t + dash as f64).min(len);
            let p = |s: f64| ((x0 + (x1 - x0) * s / len) as i32, (y0 + (y1 - y0) * s / len) as i32);
            area.draw(&PathElement::new(vec![p(t), p(t2)], style)).map_err(err)?;
            t = t2 + gap as f64;
        }
    }
    Ok(())
}

/// One chart: log-log axes over rows × value, with its frame, grid and labels. Returns the
/// plotting area's mapping closure inputs (ranges) via the chart context.
macro_rules! log_chart {
    ($root:expr, $title:expr, $x:expr, $y:expr, $ylabel:expr, $yfmt:expr, $axis:expr) => {{
        let mut chart = ChartBuilder::on($root)
            .caption($title, (FONT, 22).into_font().color(&TEXT))
            .margin(18)
            .x_label_area_size(46)
            .y_label_area_size(78)
            .build_cartesian_2d($x.log_scale(), $y.log_scale())
            .map_err(err)?;
        chart
            .configure_mesh()
            .light_line_style(RULE.mix(0.5))
            .bold_line_style(RULE)
            .axis_style(MUTED)
            .label_style((FONT, 14).into_font().color(&TEXT))
            .x_desc($axis.name())
            .y_desc($ylabel)
            .axis_desc_style((FONT, 15).into_font().color(&TEXT))
            .x_label_formatter(&|v| $axis.value_f(*v))
            .y_label_formatter($yfmt)
            .draw()
            .map_err(err)?;
        chart
    }};
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

/// A legend box in the upper left: marker, line pattern and name per design.
fn legend<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, names: &[String], extra: &[(&str, RGBColor, bool)]) -> Res<()> {
    let x0 = 100;
    let y0 = 62;
    let rows = names.len() + extra.len();
    let width = 14 + 58 + 10 + 8 * names.iter().map(|n| n.len()).chain(extra.iter().map(|e| e.0.len())).max().unwrap_or(8) as i32;
    area.draw(&Rectangle::new([(x0 - 8, y0 - 12), (x0 + width, y0 + 22 * rows as i32 - 4)], PAPER.mix(0.92).filled()))
        .map_err(err)?;
    area.draw(&Rectangle::new([(x0 - 8, y0 - 12), (x0 + width, y0 + 22 * rows as i32 - 4)], RULE.stroke_width(1))).map_err(err)?;
    for (i, n) in names.iter().enumerate() {
        let y = y0 + 22 * i as i32;
        pattern_line(area, &[(x0, y), (x0 + 46, y)], i, 2, false)?;
        mark(area, (x0 + 23, y), i, true)?;
        area.draw(&Text::new(n.clone(), (x0 + 58, y - 8), (FONT, 14).into_font().color(&TEXT))).map_err(err)?;
    }
    for (k, (label, color, dashed)) in extra.iter().enumerate() {
        let y = y0 + 22 * (names.len() + k) as i32;
        if *dashed {
            for s in (0..46).step_by(10) {
                area.draw(&PathElement::new(vec![(x0 + s, y), (x0 + s + 5, y)], color.stroke_width(2))).map_err(err)?;
            }
        } else {
            area.draw(&PathElement::new(vec![(x0, y), (x0 + 46, y)], color.stroke_width(2))).map_err(err)?;
        }
        area.draw(&Text::new(label.to_string(), (x0 + 58, y - 8), (FONT, 14).into_font().color(&TEXT))).map_err(err)?;
    }
    Ok(())
}

/// Scaling curves: one picture per workload.
pub fn scaling<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, w: &WorkloadResults, a: &WorkloadAnalysis) -> Res<()> {
    root.fill(&PAPER).map_err(err)?;
    let designs: Vec<String> = w.header.designs.iter().map(|d| d.name.clone()).collect();
    let target = a.predict_at;
    let xs = w.points.iter().map(|p| p.rows as f64).chain(target.map(|t| t as f64));
    let ys = w
        .points
        .iter()
        .flat_map(|p| {
            let m = p.measured.as_ref();
            [
                m.map(|m| m.median_ns),
                m.and_then(|m| m.ci_low_ns),
                m.and_then(|m| m.ci_high_ns),
                p.skipped.as_ref().and_then(|s| s.predicted_ns),
            ]
        })
        .flatten()
        .chain(a.designs.iter().filter_map(|d| d.prediction.as_ref().map(|p| p.median)));
    let (Some((x0, x1)), Some((y0, y1))) = (span(xs), span(ys)) else {
        return root.present().map_err(err);
    };
    let title = format!("{} — time per run", w.header.workload);
    let chart = log_chart!(&root, title, (x0..x1), (y0..y1), "time per run", &|v: &f64| time_ns(*v), w.header.axis());
    let area = chart.plotting_area().strip_coord_spec();
    let to_px = |c: &ChartContext<DB, _>, x: f64, y: f64| c.backend_coord(&(x, y));
    let to_local = |p: (i32, i32)| {
        let (ox, oy) = area.get_base_pixel();
        (p.0 - ox, p.1 - oy)
    };
    for (i, d) in designs.iter().enumerate() {
        let pts = w.design_points(d);
        let measured: Vec<(f64, &crate::results::Measured)> =
            pts.iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows as f64, m))).collect();
        // Intervals of the median.
        for (n, m) in &measured {
            if let (Some(lo), Some(hi)) = (m.ci_low_ns, m.ci_high_ns) {
                let a0 = to_local(to_px(&chart, *n, lo.max(y0)));
                let a1 = to_local(to_px(&chart, *n, hi.min(y1)));
                area.draw(&PathElement::new(vec![a0, a1], ink(i).stroke_width(2))).map_err(err)?;
                area.draw(&PathElement::new(vec![(a0.0 - 4, a0.1), (a0.0 + 4, a0.1)], ink(i).stroke_width(1))).map_err(err)?;
                area.draw(&PathElement::new(vec![(a1.0 - 4, a1.1), (a1.0 + 4, a1.1)], ink(i).stroke_width(1))).map_err(err)?;
            }
        }
        // The fitted growth curve over the measured range, then continued (dashed) to the target.
        if let Some(fit) = a.designs.get(i).and_then(|da| da.time.as_ref()) {
            if let (Some(first), Some(last)) = (measured.first(), measured.last()) {
                let f = |n: f64| fit.cost_at(n).unwrap_or(f64::NAN);
                let curve = |from: f64, to: f64| -> Vec<(i32, i32)> {
                    (0..=60)
                        .map(|k| from * (to / from).powf(k as f64 / 60.0))
                        .filter_map(|n| f(n).is_finite().then(|| (n, f(n).clamp(y0, y1))))
                        .map(|(n, y)| to_local(to_px(&chart, n, y)))
                        .collect()
                };
                pattern_line(&area, &curve(first.0, last.0), i, 1, false)?;
                if let Some(t) = target {
                    if t as f64 > last.0 {
                        pattern_line(&area, &curve(last.0, t as f64), i, 2, true)?;
                        if let Some(p) = a.designs.get(i).and_then(|da| da.prediction.as_ref()) {
                            let c = to_local(to_px(&chart, t as f64, p.median.clamp(y0, y1)));
                            mark(&area, c, i, false)?;
                        }
                    }
                }
            }
        }
        // Measured medians, joined.
        let line: Vec<(i32, i32)> = measured.iter().map(|(n, m)| to_local(to_px(&chart, *n, m.median_ns))).collect();
        pattern_line(&area, &line, i, 2, false)?;
        for p in &line {
            mark(&area, *p, i, true)?;
        }
        // Skipped points at their predicted cost, hollow.
        for p in pts.iter().filter(|p| p.skipped.is_some()) {
            if let Some(pred) = p.skipped.as_ref().and_then(|s| s.predicted_ns) {
                let c = to_local(to_px(&chart, p.rows as f64, pred.clamp(y0, y1)));
                mark(&area, c, i, false)?;
                area.draw(&Text::new("skipped", (c.0 + 8, c.1 - 16), (FONT, 12).into_font().color(&MUTED))).map_err(err)?;
            }
        }
    }
    // Crossovers: a dotted vertical rule with the size.
    for c in a.crossovers.iter().filter(|c| c.bounded || c.inside_measured) {
        if c.rows > x0 && c.rows < x1 {
            let top = to_local(to_px(&chart, c.rows, y1));
            let bottom = to_local(to_px(&chart, c.rows, y0));
            let mut y = top.1;
            while y < bottom.1 {
                area.draw(&PathElement::new(vec![(top.0, y), (top.0, (y + 3).min(bottom.1))], MUTED.stroke_width(1))).map_err(err)?;
                y += 7;
            }
            let label = format!("{} overtakes {} ≈ {}", c.faster_above, c.faster_below, w.header.axis().value_f(c.rows));
            area.draw(&Text::new(label, (top.0 + 6, top.1 + 6), (FONT, 12).into_font().color(&TEXT))).map_err(err)?;
        }
    }
    if let Some(t) = target {
        let top = to_local(to_px(&chart, t as f64, y1));
        area.draw(&Text::new(format!("target {}", w.header.axis().value_f(t as f64)), (top.0 - 80, top.1 + 6), (FONT, 12).into_font().color(&MUTED)))
            .map_err(err)?;
    }
    let extra: Vec<(&str, RGBColor, bool)> = if target.is_some() { vec![("prediction to the target", MUTED, true)] } else { vec![] };
    legend(&root, &designs, &extra)?;
    root.present().map_err(err)
}

/// Memory curves: allocated bytes per run (solid) and peak live bytes (dashed) per design,
/// beside the table's own estimated size.
pub fn memory<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, w: &WorkloadResults) -> Res<()> {
    root.fill(&PAPER).map_err(err)?;
    let designs: Vec<String> = w.header.designs.iter().map(|d| d.name.clone()).collect();
    let xs = w.points.iter().filter(|p| p.measured.is_some()).map(|p| p.rows as f64);
    let ys = w
        .points
        .iter()
        .filter_map(|p| p.measured.as_ref())
        .flat_map(|m| [m.alloc.bytes as f64, m.alloc.peak_live as f64])
        .chain(w.tables.iter().map(|t| t.table_bytes_estimate));
    let (Some((x0, x1)), Some((y0, y1))) = (span(xs), span(ys)) else {
        return root.present().map_err(err);
    };
    let title = format!("{} — memory", w.header.workload);
    let chart = log_chart!(&root, title, (x0..x1), (y0..y1), "bytes", &|v: &f64| bytes(*v), w.header.axis());
    let area = chart.plotting_area().strip_coord_spec();
    let (ox, oy) = area.get_base_pixel();
    let px = |c: &ChartContext<DB, _>, x: f64, y: f64| {
        let p = c.backend_coord(&(x, y));
        (p.0 - ox, p.1 - oy)
    };
    let table: Vec<(i32, i32)> = w.tables.iter().map(|t| px(&chart, t.rows as f64, t.table_bytes_estimate.max(y0))).collect();
    let mut k = 0;
    while k + 1 < table.len() {
        area.draw(&PathElement::new(vec![table[k], table[k + 1]], TEXT.stroke_width(1))).map_err(err)?;
        k += 1;
    }
    for (i, d) in designs.iter().enumerate() {
        let pts: Vec<(f64, &crate::results::Measured)> =
            w.design_points(d).iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows as f64, m))).collect();
        let alloc: Vec<(i32, i32)> = pts.iter().filter(|(_, m)| m.alloc.bytes > 0).map(|(n, m)| px(&chart, *n, m.alloc.bytes as f64)).collect();
        let peak: Vec<(i32, i32)> =
            pts.iter().filter(|(_, m)| m.alloc.peak_live > 0).map(|(n, m)| px(&chart, *n, m.alloc.peak_live as f64)).collect();
        pattern_line(&area, &alloc, i, 2, false)?;
        for p in &alloc {
            mark(&area, *p, i, true)?;
        }
        pattern_line(&area, &peak, i, 1, true)?;
        for p in &peak {
            mark(&area, *p, i, false)?;
        }
    }
    legend(&root, &designs, &[("table's own size", TEXT, false), ("peak live (hollow, dashed)", MUTED, true)])?;
    chart.plotting_area().present().map_err(err)
}

/// Latency by percentile for each design at one size (from the samples).
pub fn distribution<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, w: &WorkloadResults, rows: u64) -> Res<()> {
    root.fill(&PAPER).map_err(err)?;
    let designs: Vec<String> = w.header.designs.iter().map(|d| d.name.clone()).collect();
    let ys = designs
        .iter()
        .filter_map(|d| w.point(d, rows).and_then(|p| p.measured.as_ref()))
        .flat_map(|m| m.samples_ns.iter().copied());
    let Some((y0, y1)) = span(ys) else { return root.present().map_err(err) };
    let mut chart = ChartBuilder::on(&root)
        .caption(format!("{} — time per run by percentile at {}", w.header.workload, w.header.axis().point(rows)), (FONT, 22).into_font().color(&TEXT))
        .margin(18)
        .x_label_area_size(46)
        .y_label_area_size(78)
        .build_cartesian_2d(0f64..100f64, (y0..y1).log_scale())
        .map_err(err)?;
    chart
        .configure_mesh()
        .light_line_style(RULE.mix(0.5))
        .bold_line_style(RULE)
        .axis_style(MUTED)
        .label_style((FONT, 14).into_font().color(&TEXT))
        .x_desc("percentile of samples")
        .y_desc("time per run")
        .axis_desc_style((FONT, 15).into_font().color(&TEXT))
        .x_label_formatter(&|v| format!("p{v:.0}"))
        .y_label_formatter(&|v| time_ns(*v))
        .draw()
        .map_err(err)?;
    let area = chart.plotting_area().strip_coord_spec();
    let (ox, oy) = area.get_base_pixel();
    for (i, d) in designs.iter().enumerate() {
        let Some(m) = w.point(d, rows).and_then(|p| p.measured.as_ref()) else { continue };
        let mut s = m.samples_ns.clone();
        s.sort_by(f64::total_cmp);
        let n = s.len();
        let pts: Vec<(i32, i32)> = s
            .iter()
            .enumerate()
            .map(|(k, v)| {
                let pct = if n == 1 { 50.0 } else { 100.0 * k as f64 / (n - 1) as f64 };
                let p = chart.backend_coord(&(pct, *v));
                (p.0 - ox, p.1 - oy)
            })
            .collect();
        pattern_line(&area, &pts, i, 2, false)?;
        for p in pts.iter().step_by((n / 12).max(1)) {
            mark(&area, *p, i, true)?;
        }
    }
    legend(&root, &designs, &[])?;
    root.present().map_err(err)
}

/// Each design's median over the best median at each size.
pub fn ratios<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, w: &WorkloadResults) -> Res<()> {
    root.fill(&PAPER).map_err(err)?;
    let designs: Vec<String> = w.header.designs.iter().map(|d| d.name.clone()).collect();
    let xs = w.comparisons.iter().filter(|c| c.ratios.len() >= 2).map(|c| c.rows as f64);
    let ys = w.comparisons.iter().flat_map(|c| c.ratios.iter().flat_map(|r| [Some(r.ratio), r.high]).flatten()).chain([1.0]);
    let (Some((x0, x1)), Some((_, y1))) = (span(xs), span(ys)) else {
        return root.present().map_err(err);
    };
    let title = format!("{} — cost relative to the best design", w.header.workload);
    let chart = log_chart!(&root, title, (x0..x1), (0.8..y1.max(2.0)), "× the best", &|v: &f64| format!("×{}", crate::present::units::short(*v)), w.header.axis());
    let area = chart.plotting_area().strip_coord_spec();
    let (ox, oy) = area.get_base_pixel();
    for (i, d) in designs.iter().enumerate() {
        let pts: Vec<(i32, i32)> = w
            .comparisons
            .iter()
            .filter(|c| c.ratios.len() >= 2)
            .filter_map(|c| c.ratios.iter().find(|r| &r.design == d).map(|r| (c.rows as f64, r.ratio)))
            .map(|(n, r)| {
                let p = chart.backend_coord(&(n, r));
                (p.0 - ox, p.1 - oy)
            })
            .collect();
        pattern_line(&area, &pts, i, 2, false)?;
        for p in &pts {
            mark(&area, *p, i, true)?;
        }
    }
    legend(&root, &designs, &[])?;
    root.present().map_err(err)
}

/// The pictures of one workload, each as SVG and PNG in `dir`. Returns the SVG paths.
pub fn draw_all(dir: &Path, w: &WorkloadResults, a: &WorkloadAnalysis) -> Res<Vec<(String, PathBuf)>> {
    ensure_font();
    std::fs::create_dir_all(dir).map_err(err)?;
    // The workload name comes from a results file: never a path of its own.
    let name = crate::results::writer::file_stem(&w.header.workload);
    // The size for the distribution picture: the largest with every design measured, or
    // failing that the largest with two or more.
    let all = w.header.designs.len();
    let count = |n: u64| w.header.designs.iter().filter(|d| w.point(&d.name, n).is_some_and(|p| p.measured.is_some())).count();
    let dist_rows = w.header.sizes.iter().rev().copied().find(|&n| count(n) == all).or_else(|| w.header.sizes.iter().rev().copied().find(|&n| count(n) >= 2));
    let mut out = Vec::new();
    macro_rules! both {
        ($kind:expr, $title:expr, $f:expr) => {{
            let svg_path = dir.join(format!("{name}-{}.svg", $kind));
            let png_path = dir.join(format!("{name}-{}.png", $kind));
            let mut text = String::new();
            {
                let root = SVGBackend::with_string(&mut text, SIZE).into_drawing_area();
                $f(root)?;
            }
            write_svg(&svg_path, &text)?;
            write_png(&png_path, SIZE, |root| $f(root))?;
            out.push(($title.to_string(), svg_path));
        }};
    }
    both!("scaling", format!("Time per run as the {} grow", w.header.axis().name()), |r| scaling(r, w, a));
    both!("memory", "Allocated and peak live bytes", |r| memory(r, w));
    if let Some(n) = dist_rows {
        both!("distribution", format!("Time by percentile at {}", w.header.axis().point(n)), |r| distribution(r, w, n));
    }
    both!("ratios", "Cost relative to the best design", |r| ratios(r, w));
    Ok(out)
}

/// One workload across many runs: a panel per design, a line per size (darker for larger
/// sizes), x = the runs in time order; ▲/▼ where the gate between consecutive runs found a
/// regression or an improvement at that size.
pub fn history<DB: DrawingBackend>(
    root: DrawingArea<DB, Shift>,
    workload: &str,
    runs: &[(String, &WorkloadResults)],
    changes: &[(usize, String, u64, bool)],
) -> Res<()> {
    ensure_font();
    root.fill(&PAPER).map_err(err)?;
    let mut designs: Vec<String> = Vec::new();
    for (_, w) in runs {
        for d in &w.header.designs {
            if !designs.contains(&d.name) {
                designs.push(d.name.clone());
            }
        }
    }
    let (title_area, body) = root.split_vertically(40);
    title_area
        .draw(&Text::new(format!("{workload} — time per run across {} runs", runs.len()), (18, 10), (FONT, 22).into_font().color(&TEXT)))
        .map_err(err)?;
    let cols = if designs.len() > 2 { 2 } else { 1 };
    let rows = designs.len().div_ceil(cols).max(1);
    let panels = body.split_evenly((rows, cols));
    for (i, d) in designs.iter().enumerate() {
        let Some(panel) = panels.get(i) else { break };
        let mut sizes: Vec<u64> = runs.iter().flat_map(|(_, w)| w.design_points(d).into_iter().filter(|p| p.measured.is_some()).map(|p| p.rows)).collect();
        sizes.sort_unstable();
        sizes.dedup();
        let ys = runs.iter().flat_map(|(_, w)| w.design_points(d).into_iter().filter_map(|p| p.measured.as_ref().map(|m| m.median_ns)));
        let Some((y0, y1)) = span(ys) else { continue };
        let n = runs.len().max(2) as f64;
        let labels: Vec<String> = runs.iter().map(|(id, _)| id.clone()).collect();
        let mut chart = ChartBuilder::on(panel)
            .caption(d.clone(), (FONT, 15).into_font().color(&ink(i)))
            .margin(10)
            .x_label_area_size(30)
            .y_label_area_size(64)
            .build_cartesian_2d(-0.3f64..(n - 0.7), (y0..y1).log_scale())
            .map_err(err)?;
        chart
            .configure_mesh()
            .light_line_style(RULE.mix(0.4))
            .bold_line_style(RULE)
            .axis_style(MUTED)
            .label_style((FONT, 11).into_font().color(&TEXT))
            .x_labels(runs.len().min(8))
            .x_label_formatter(&|v| {
                let k = v.round() as usize;
                if (v - k as f64).abs() < 1e-6 { labels.get(k).map(|l| l.chars().skip(4).collect()).unwrap_or_default() } else { String::new() }
            })
            .y_label_formatter(&|v| time_ns(*v))
            .draw()
            .map_err(err)?;
        let area = chart.plotting_area().strip_coord_spec();
        let (ox, oy) = area.get_base_pixel();
        for (k, &size) in sizes.iter().enumerate() {
            let shade = 0.35 + 0.65 * (k + 1) as f64 / sizes.len() as f64;
            let base = ink(i);
            let c = RGBColor(
                (255.0 - (255.0 - base.0 as f64) * shade) as u8,
                (255.0 - (255.0 - base.1 as f64) * shade) as u8,
                (255.0 - (255.0 - base.2 as f64) * shade) as u8,
            );
            let pts: Vec<(i32, i32)> = runs
                .iter()
                .enumerate()
                .filter_map(|(r, (_, w))| w.point(d, size).and_then(|p| p.measured.as_ref()).map(|m| (r as f64, m.median_ns)))
                .map(|(x, y)| {
                    let p = chart.backend_coord(&(x, y));
                    (p.0 - ox, p.1 - oy)
                })
                .collect();
            area.draw(&PathElement::new(pts.clone(), c.stroke_width(2))).map_err(err)?;
            for p in &pts {
                area.draw(&Circle::new(*p, 3, c.filled())).map_err(err)?;
            }
            if let Some(last) = pts.last() {
                area.draw(&Text::new(crate::spec::units::rows_label(size), (last.0 + 5, last.1 - 6), (FONT, 10).into_font().color(&MUTED)))
                    .map_err(err)?;
            }
            for (r, _, _, worse) in changes.iter().filter(|c| &c.1 == d && c.2 == size) {
                if let Some(m) = runs.get(*r).and_then(|(_, w)| w.point(d, size)).and_then(|p| p.measured.as_ref()) {
                    let p = chart.backend_coord(&(*r as f64, m.median_ns));
                    let (x, y) = (p.0 - ox, p.1 - oy);
                    let (col, tri) = if *worse {
                        (INKS[1], vec![(x, y - 14), (x + 7, y - 4), (x - 7, y - 4)])
                    } else {
                        (INKS[2], vec![(x, y + 14), (x + 7, y + 4), (x - 7, y + 4)])
                    };
                    area.draw(&Polygon::new(tri, col.filled())).map_err(err)?;
                }
            }
        }
    }
    root.present().map_err(err)
}

/// Draw a history picture as SVG and PNG; returns the SVG path.
pub fn draw_history(dir: &Path, workload: &str, runs: &[(String, &WorkloadResults)], changes: &[(usize, String, u64, bool)]) -> Res<PathBuf> {
    ensure_font();
    std::fs::create_dir_all(dir).map_err(err)?;
    let stem = crate::results::writer::file_stem(workload);
    let svg_path = dir.join(format!("{stem}-history.svg"));
    let png_path = dir.join(format!("{stem}-history.png"));
    let mut text = String::new();
    {
        let root = SVGBackend::with_string(&mut text, (1000, 720)).into_drawing_area();
        history(root, workload, runs, changes)?;
    }
    write_svg(&svg_path, &text)?;
    write_png(&png_path, (1000, 720), |root| history(root, workload, runs, changes))?;
    Ok(svg_path)
}

/// Write an SVG by temp file and rename (never through an existing file or symlink).
fn write_svg(path: &Path, text: &str) -> Res<()> {
    crate::results::writer::write_atomic(path, text).map(|_| ()).map_err(|e| e.to_string())
}

/// Draw a PNG into a fresh temp file beside `path`, then rename it over `path`.
fn write_png(path: &Path, size: (u32, u32), draw: impl FnOnce(DrawingArea<BitMapBackend<'_>, plotters::coord::Shift>) -> Res<()>) -> Res<()> {
    let mut drawn: Res<()> = Ok(());
    let written = crate::results::writer::replace_with(path, |tmp| {
        drawn = draw(BitMapBackend::new(tmp, size).into_drawing_area());
        drawn.as_ref().map(|_| ()).map_err(|e| std::io::Error::other(e.to_string()))
    });
    drawn?;
    written.map(|_| ()).map_err(|e| e.to_string())
}
