//! One workload across many runs, in framecost's "lanes": one lane per design, stacked on a
//! shared axis of runs (in time order). In a lane each measured size is a line of the design's
//! ink, paler for smaller sizes, showing time per run relative to that size's first run (×1),
//! so a change at any size shows as a step whatever its absolute cost; a column at the right
//! of each lane gives each size's first and latest time. ▲ above a point: the gate between that run
//! and the one before called this size slower; ▽ below: faster. The same mark on a bar at the
//! top of a lane: the gate called the design slower (faster) over its sizes taken together,
//! though perhaps at no single size. A numbered rule between two
//! runs: the workload file changed there (its spec hash differs), listed in a key below.

use super::look::*;
use super::{ensure_font, key, log_axis, ticks, write_png, write_svg};
use crate::units::{escaped, size_label, time_ns};
use crate::results::reader::WorkloadResults;
use plotters::prelude::*;
use std::path::{Path, PathBuf};

/// A change the gate found between a run and the one before it.
#[derive(Debug, Clone, PartialEq)]
pub struct RunMark {
    /// Index of the later run in the series.
    pub run: usize,
    pub design: String,
    /// The size, or `None` for a move of the design over its sizes taken together.
    pub rows: Option<u64>,
    /// Slower (true) or faster.
    pub worse: bool,
}

/// The runs (indices into the series) whose workload file differs from the run before:
/// (index, previous hash, new hash).
pub fn spec_changes(runs: &[(String, &WorkloadResults)]) -> Vec<(usize, String, String)> {
    runs.windows(2)
        .enumerate()
        .filter(|(_, w)| w[0].1.header.spec_hash != w[1].1.header.spec_hash)
        .map(|(k, w)| (k + 1, w[0].1.header.spec_hash.clone(), w[1].1.header.spec_hash.clone()))
        .collect()
}

/// `20261202-103000` → `12-02 10:30`; other ids unchanged.
pub fn short_run_id(id: &str) -> String {
    let b = id.as_bytes();
    if id.len() >= 13 && b[8] == b'-' && id.is_char_boundary(13) && id[..8].bytes().all(|c| c.is_ascii_digit()) {
        return format!("{}-{} {}:{}", &id[4..6], &id[6..8], &id[9..11], &id[11..13]);
    }
    escaped(id).into_owned()
}

/// Axis labels for the runs: `12-02 10:30`, or `10:30:12` when two runs share a minute.
fn run_labels(runs: &[(String, &WorkloadResults)]) -> Vec<String> {
    let short: Vec<String> = runs.iter().map(|(id, _)| short_run_id(id)).collect();
    let mut sorted = short.clone();
    sorted.sort();
    sorted.dedup();
    if sorted.len() == short.len() {
        return short;
    }
    runs.iter()
        .map(|(id, _)| match id.split_once('-') {
            Some((_, t)) if t.len() == 6 && t.bytes().all(|c| c.is_ascii_digit()) => format!("{}:{}:{}", &t[0..2], &t[2..4], &t[4..6]),
            _ => escaped(id).into_owned(),
        })
        .collect()
}

const WIDTH: u32 = 1000;
/// Lanes are at least this tall; the picture is at least 720 pixels tall (lanes share it).
const MIN_LANE: i32 = 110;
const MIN_HEIGHT: i32 = 720;
/// Everything but the lanes: title and subtitle (68), the run axis (40), the note line (44).
const FIXED: i32 = 68 + 40 + 44;

/// The picture's height for `designs` lanes and `changes` key lines.
pub fn history_size(designs: usize, changes: usize) -> (u32, u32) {
    let key_h = if changes == 0 { 0 } else { 14 + 18 * changes as i32 };
    (WIDTH, (FIXED + MIN_LANE * designs.max(1) as i32 + key_h).max(MIN_HEIGHT) as u32)
}

fn designs_of(runs: &[(String, &WorkloadResults)]) -> Vec<String> {
    let mut designs: Vec<String> = Vec::new();
    for (_, w) in runs {
        for d in &w.header.designs {
            if !designs.contains(&d.name) {
                designs.push(d.name.clone());
            }
        }
    }
    designs
}

/// Draw the lanes. Returns the picture's description.
pub fn history<DB: DrawingBackend>(root: Area<DB>, workload: &str, runs: &[(String, &WorkloadResults)], changes: &[RunMark]) -> Res<String> {
    ensure_font();
    root.fill(&PAPER).map_err(err)?;
    let designs = designs_of(runs);
    let edits = spec_changes(runs);
    let (w, h) = root.dim_in_pixel();
    let (w, h) = (w as i32, h as i32);
    let key_lines: Vec<String> = edits
        .iter()
        .map(|(k, old, new)| format!("the workload file changed before run {} (spec {} → {})", escaped(&runs[*k].0), short_hash(old), short_hash(new)))
        .collect();
    let key_h = if key_lines.is_empty() { 0 } else { 14 + 18 * key_lines.len() as i32 };
    text(&root, &fit_text(&root, &format!("{} — time per run across {} runs", escaped(workload), runs.len()), 20.0, w - 36), (18, 12), 20.0, TEXT)?;
    text(&root, "each line is one size, relative to its first run (×1); first → latest time at the right", (18, 44), 12.0, MUTED)?;
    let top = 68;
    let right = 200; // the column of first and latest times
    let n = runs.len().max(2) as f64;
    let lane_h = ((h - FIXED - key_h) / designs.len().max(1) as i32).max(MIN_LANE);
    let lanes_bottom = top + lane_h * designs.len().max(1) as i32;
    let mut plot_x = (0, 0);
    let g = Lanes { top, lane_h, w, right, n, count: designs.len() };
    let mut desc_lanes = Vec::new();
    for (i, d) in designs.iter().enumerate() {
        let (span, desc) = lane(&root, &g, i, d, runs, changes)?;
        plot_x = span;
        desc_lanes.push(desc);
    }
    // Workload-file changes: a numbered rule between the two runs, across every lane.
    for (k, (run, _, _)) in edits.iter().enumerate() {
        let span = (plot_x.1 - plot_x.0) as f64 / (n - 0.2);
        let x = plot_x.0 + ((*run as f64 - 0.5 + 0.4) * span).round() as i32;
        pattern_line(&root, &[(x, top + 14), (x, lanes_bottom)], &[6.0, 4.0], TEXT, 1)?;
        let label = format!("{}", k + 1);
        let (tw, _) = text_size(&root, &label, 12.0);
        root.draw(&Rectangle::new([(x - tw / 2 - 3, top - 2), (x + tw / 2 + 3, top + 13)], PAPER.filled())).map_err(err)?;
        root.draw(&Rectangle::new([(x - tw / 2 - 3, top - 2), (x + tw / 2 + 3, top + 13)], TEXT.stroke_width(1))).map_err(err)?;
        text(&root, &label, (x - tw / 2, top - 1), 12.0, TEXT)?;
    }
    // How to read the marks, one line under the lanes.
    let note_y = h - key_h - 30;
    let mut x = 18;
    root.draw(&Polygon::new(vec![(x + 6, note_y + 1), (x + 12, note_y + 10), (x, note_y + 10)], TEXT.filled())).map_err(err)?;
    x += 18;
    x = text(&root, "slower than the run before (gate)", (x, note_y), 12.0, MUTED)?.x1 + 18;
    root.draw(&PathElement::new(vec![(x, note_y + 2), (x + 12, note_y + 2), (x + 6, note_y + 11), (x, note_y + 2)], TEXT.stroke_width(2))).map_err(err)?;
    x += 18;
    x = text(&root, "faster", (x, note_y), 12.0, MUTED)?.x1 + 18;
    root.draw(&Rectangle::new([(x, note_y), (x + 20, note_y + 3)], TEXT.filled())).map_err(err)?;
    root.draw(&Polygon::new(vec![(x + 10, note_y + 5), (x + 16, note_y + 14), (x + 4, note_y + 14)], TEXT.filled())).map_err(err)?;
    x += 26;
    x = text(&root, "over its sizes taken together", (x, note_y), 12.0, MUTED)?.x1 + 18;
    pattern_line(&root, &[(x + 6, note_y - 2), (x + 6, note_y + 14)], &[6.0, 4.0], TEXT, 1)?;
    x += 16;
    text(&root, "workload file changed (numbered below)", (x, note_y), 12.0, MUTED)?;
    key(&root, Zone { x0: 18, y0: h - key_h, x1: w - 18, y1: h - 4 }, &key_lines)?;
    root.present().map_err(err)?;
    let mut desc = format!(
        "Time per run of workload {} across {} runs, one lane per design; each line is one size relative to its first run. Times: {}.",
        escaped(workload),
        runs.len(),
        desc_lanes.join("; ")
    );
    for m in changes {
        desc += &format!(
            " Run {}: {} {} {}.",
            escaped(&runs.get(m.run).map(|r| r.0.clone()).unwrap_or_default()),
            escaped(&m.design),
            if m.worse { "got slower" } else { "got faster" },
            m.rows.map_or_else(|| "over its sizes taken together".to_string(), |r| format!("at {} rows", size_label(r as f64)))
        );
    }
    for l in &key_lines {
        desc += &format!(" {}{}.", l[..1].to_uppercase(), &l[1..]);
    }
    Ok(desc)
}

/// Where the lanes go: the top of the first, each one's height, the picture's width, the
/// column of times at the right, the number of runs across, the number of lanes.
struct Lanes {
    top: i32,
    lane_h: i32,
    w: i32,
    right: i32,
    n: f64,
    count: usize,
}

/// One design's lane: a line per size relative to its first run, the gate's marks, and the
/// column of first and latest times. Returns the plot's pixel span across and the lane in words.
fn lane<DB: DrawingBackend>(root: &Area<DB>, g: &Lanes, i: usize, d: &str, runs: &[(String, &WorkloadResults)], changes: &[RunMark]) -> Res<((i32, i32), String)> {
    let last_lane = i + 1 == g.count;
    let lane = root.clone().shrink((0, g.top + g.lane_h * i as i32), ((g.w - g.right) as u32, (g.lane_h + if last_lane { 40 } else { 0 }) as u32));
    let mut sizes: Vec<u64> = runs.iter().flat_map(|(_, r)| r.design_points(d).into_iter().filter(|p| p.measured.is_some()).map(|p| p.rows)).collect();
    sizes.sort_unstable();
    sizes.dedup();
    let first_of = |size: u64| runs.iter().find_map(|(_, r)| r.point(d, size).and_then(|p| p.measured.as_ref()).map(|m| m.median_ns));
    let rel = |r: &WorkloadResults, size: u64| -> Option<f64> {
        let m = r.point(d, size)?.measured.as_ref()?.median_ns;
        let f = first_of(size)?;
        (f > 0.0 && m > 0.0).then(|| m / f)
    };
    let all: Vec<f64> = sizes.iter().flat_map(|&s| runs.iter().filter_map(move |(_, r)| rel(r, s))).collect();
    let lo = all.iter().copied().fold(1.0, f64::min).min(0.8) / 1.15;
    let hi = all.iter().copied().fold(1.0, f64::max).max(1.25) * 1.15;
    let labels = run_labels(runs);
    let mut chart = ChartBuilder::on(&lane)
        .margin_top(28)
        .margin_bottom(6)
        .margin_left(10)
        .margin_right(10)
        .x_label_area_size(if last_lane { 40 } else { 0 })
        .y_label_area_size(70)
        .build_cartesian_2d(-0.4f64..(g.n - 0.6), log_axis(lo, hi, ticks::spaced(ticks::decimal(lo, hi), lo, hi, (g.lane_h - 34) as f64, 15.0, 1.0)))
        .map_err(err)?;
    chart
        .configure_mesh()
        .light_line_style(RULE.mix(0.45))
        .bold_line_style(RULE)
        .axis_style(MUTED)
        .label_style((FONT, 12).into_font().color(&TEXT))
        .x_labels(runs.len().min(8))
        .x_label_formatter(&|v| {
            let k = v.round();
            if (v - k).abs() < 1e-6 && k >= 0.0 { labels.get(k as usize).cloned().unwrap_or_default() } else { String::new() }
        })
        .y_label_formatter(&|v| format!("×{}", crate::units::short(*v)))
        .draw()
        .map_err(err)?;
    let (xr, yr) = chart.plotting_area().get_pixel_range();
    // The lane's name, with the design's mark, in the lane's head.
    let head = g.top + g.lane_h * i as i32 + 6;
    mark(root, (26, head + 8), i, true)?;
    text(root, &fit_text(root, &escaped(d), 14.0, g.w - g.right - 60), (40, head), 14.0, TEXT)?;
    let px = |x: f64, y: f64| chart.backend_coord(&(x, y));
    let mut latest = Vec::new();
    for (k, &size) in sizes.iter().enumerate() {
        let keep = 0.35 + 0.65 * (k + 1) as f64 / sizes.len() as f64;
        let c = tint(ink(i), keep);
        let pts: Vec<(i32, i32)> = runs.iter().enumerate().filter_map(|(r, (_, res))| rel(res, size).map(|v| px(r as f64, v))).collect();
        pattern_line(root, &pts, dashes_of(i), c, 2)?;
        for p in &pts {
            draw_mark(root, *p, mark_of(i), c, true)?;
        }
        for m in changes.iter().filter(|m| &m.design == d && m.rows == Some(size)) {
            if let Some(v) = runs.get(m.run).and_then(|(_, res)| rel(res, size)) {
                let (x, y) = px(m.run as f64, v);
                if m.worse {
                    root.draw(&Polygon::new(vec![(x, y - 18), (x + 6, y - 9), (x - 6, y - 9)], TEXT.filled())).map_err(err)?;
                } else {
                    let tri = vec![(x - 6, y + 9), (x + 6, y + 9), (x, y + 18), (x - 6, y + 9)];
                    root.draw(&PathElement::new(tri, TEXT.stroke_width(2))).map_err(err)?;
                }
            }
        }
        if let Some(m) = runs.iter().rev().find_map(|(_, r)| r.point(d, size).and_then(|p| p.measured.as_ref())) {
            latest.push((size, first_of(size).unwrap_or(m.median_ns), m.median_ns, c));
        }
    }
    // Moves over the design's sizes taken together: the mark on a bar at the top of the lane,
    // above that run.
    for m in changes.iter().filter(|m| &m.design == d && m.rows.is_none()) {
        let (x, _) = px(m.run as f64, 1.0);
        let y = yr.start + 4;
        root.draw(&Rectangle::new([(x - 10, y), (x + 10, y + 3)], TEXT.filled())).map_err(err)?;
        if m.worse {
            root.draw(&Polygon::new(vec![(x, y + 5), (x + 6, y + 14), (x - 6, y + 14)], TEXT.filled())).map_err(err)?;
        } else {
            let tri = vec![(x - 6, y + 5), (x + 6, y + 5), (x, y + 14), (x - 6, y + 5)];
            root.draw(&PathElement::new(tri, TEXT.stroke_width(2))).map_err(err)?;
        }
    }
    // The column of latest times, largest size first; as many as fit the lane.
    let col_x = g.w - g.right + 8;
    let fits = ((yr.end - yr.start) / 16).max(1) as usize;
    let shown: Vec<&(u64, f64, f64, RGBColor)> = latest.iter().rev().take(fits).collect();
    for (k, (size, first, ns, c)) in shown.iter().enumerate() {
        let y = yr.start + 16 * k as i32;
        root.draw(&Rectangle::new([(col_x, y + 3), (col_x + 14, y + 11)], c.filled())).map_err(err)?;
        let words = format!("{}: {} → {}", size_label(*size as f64), time_ns(*first), time_ns(*ns));
        text(root, &fit_text(root, &words, 12.0, g.right - 32), (col_x + 20, y), 12.0, TEXT)?;
    }
    let desc = format!(
        "{} ({}): {}",
        escaped(d),
        look_words(i),
        latest.iter().rev().map(|(s, first, ns, _)| format!("{} rows {} first, {} latest", size_label(*s as f64), time_ns(*first), time_ns(*ns))).collect::<Vec<_>>().join(", ")
    );
    // Lane separator.
    if !last_lane {
        root.draw(&PathElement::new(vec![(12, g.top + g.lane_h * (i as i32 + 1)), (g.w - 12, g.top + g.lane_h * (i as i32 + 1))], RULE.stroke_width(1))).map_err(err)?;
    }
    Ok(((xr.start, xr.end), desc))
}

fn short_hash(h: &str) -> String {
    escaped(&h.chars().take(8).collect::<String>()).into_owned()
}

/// Draw a history picture as SVG and PNG; returns the SVG path.
pub fn draw_history(dir: &Path, workload: &str, runs: &[(String, &WorkloadResults)], changes: &[RunMark]) -> Res<PathBuf> {
    ensure_font();
    std::fs::create_dir_all(dir).map_err(crate::present::DrawError::Folder)?;
    let stem = crate::results::writer::file_stem(workload);
    let svg_path = dir.join(format!("{stem}-history.svg"));
    let png_path = dir.join(format!("{stem}-history.png"));
    let size = history_size(designs_of(runs).len(), spec_changes(runs).len());
    let mut text = String::new();
    let desc = {
        let root = SVGBackend::with_string(&mut text, size).into_drawing_area();
        history(root, workload, runs, changes)?
    };
    let title = format!("{}: time per run across {} runs", escaped(workload), runs.len());
    write_svg(&svg_path, &titled_svg(&text, &title, &desc))?;
    write_png(&png_path, size, |root| history(root, workload, runs, changes).map(|_| ()))?;
    Ok(svg_path)
}
