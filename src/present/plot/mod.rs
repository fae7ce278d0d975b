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
//!
//! Files: this one holds the frame every picture shares, the log-log chart, and the drawing
//! of a workload's pictures into files; `scaling.rs` and `charts.rs` draw the pictures.

mod charts;
mod history;
pub mod look;
mod scaling;
pub mod ticks;

pub use charts::{distribution, memory, ratios};
pub use history::{draw_history, history, short_run_id, spec_changes, RunMark};
pub use look::INKS;
pub use scaling::scaling;

use crate::analyse::WorkloadAnalysis;
use crate::results::reader::WorkloadResults;
use crate::units::{escaped, size_label};
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
    std::fs::create_dir_all(dir).map_err(crate::present::DrawError::Folder)?;
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
    Ok(crate::results::writer::write_atomic(path, text).map(|_| ())?)
}

/// Draw a PNG into a fresh temp file beside `path`, then rename it over `path`.
fn write_png(path: &Path, size: (u32, u32), draw: impl FnOnce(DrawingArea<BitMapBackend<'_>, Shift>) -> Res<()>) -> Res<()> {
    let mut drawn: Res<()> = Ok(());
    let written = crate::results::writer::replace_with(path, |tmp| {
        drawn = draw(BitMapBackend::new(tmp, size).into_drawing_area());
        drawn.as_ref().map(|_| ()).map_err(|e| std::io::Error::other(e.to_string()))
    });
    drawn?;
    Ok(written.map(|_| ())?)
}
