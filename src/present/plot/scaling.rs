//! The scaling picture: time per run against the swept size on log-log axes, one curve per
//! design (medians with their 95% intervals, the fitted growth, the fit continued to the
//! target, skipped points at their predicted cost, a stopped trial at its limit), crossovers
//! ringed and numbered.

use super::look::*;
use super::{design_words, frame, key, log_chart, plot_rect, span, sub};
use crate::analyse::{CrossoverOut, DesignAnalysis, WorkloadAnalysis};
use crate::results::reader::WorkloadResults;
use crate::units::{escaped, size_label, time_tick};
use plotters::prelude::*;

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
    // A crossing among the measured sizes only where the measurements show it.
    let crossings: Vec<_> = a
        .crossovers
        .iter()
        .filter(|c| if c.inside_measured { c.borne_out(&w.comparisons) } else { c.bounded })
        .filter(|c| c.rows > x0 && c.rows < x1)
        .collect();
    let key_lines = crossing_lines(&crossings, axis);
    let rows = legend_rows(w, a, &designs, &crossings);
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
    let pl = Plane { px: &px, y: (y0, y1), target };
    for (i, d) in designs.iter().enumerate() {
        scaling_design(&root, &pl, w, fit_of(d), i, d, &mut placer, &mut labels)?;
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

/// Each crossing in words for the key below the plot.
fn crossing_lines(crossings: &[&CrossoverOut], axis: &str) -> Vec<String> {
    crossings
        .iter()
        .map(|c| {
            // The size first, so a line shortened to fit still says where. An interval that
            // runs to the end of the search is no information (one drawn as "between 16k
            // and 1.02G" said nothing the chart does not): it is said to be open instead.
            let range = if c.bounded {
                format!("between {} and {}", size_label(c.rows_low), size_label(c.rows_high))
            } else {
                "the fits do not pin it down".to_string()
            };
            format!("at about {} {axis} ({range}), {} becomes cheaper than {}", size_label(c.rows), escaped(&c.faster_above), escaped(&c.faster_below))
        })
        .collect()
}

/// The legend: each design, then only the marks and lines the picture shows.
fn legend_rows(w: &WorkloadResults, a: &WorkloadAnalysis, designs: &[String], crossings: &[&CrossoverOut]) -> Vec<(Sample, String)> {
    let fit_of = |d: &str| a.designs.iter().find(|x| x.design == d);
    let target = a.predict_at;
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
    rows
}

/// Where every design's curve is drawn: rows × time to pixels, the time range shown, the target.
struct Plane<'p> {
    px: &'p dyn Fn(f64, f64) -> (i32, i32),
    y: (f64, f64),
    target: Option<u64>,
}

/// One design's curve: its intervals, its fitted growth over the measured sizes and then
/// (faint) to the target, its medians, and its skipped points at their predicted cost.
#[allow(clippy::too_many_arguments)]
fn scaling_design<DB: DrawingBackend>(
    root: &Area<DB>,
    pl: &Plane,
    w: &WorkloadResults,
    da: Option<&DesignAnalysis>,
    i: usize,
    d: &str,
    placer: &mut Placer,
    labels: &mut Vec<(String, (i32, i32))>,
) -> Res<()> {
    let pts = w.design_points(d);
    let measured: Vec<(f64, &crate::results::Measured)> = pts.iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows as f64, m))).collect();
    for (n, m) in &measured {
        if let (Some(lo), Some(hi)) = (m.ci_low_ns, m.ci_high_ns) {
            let a0 = (pl.px)(*n, lo.max(pl.y.0));
            let a1 = (pl.px)(*n, hi.min(pl.y.1));
            root.draw(&PathElement::new(vec![a0, a1], ink(i).stroke_width(2))).map_err(err)?;
            root.draw(&PathElement::new(vec![(a0.0 - 4, a0.1), (a0.0 + 4, a0.1)], ink(i).stroke_width(1))).map_err(err)?;
            root.draw(&PathElement::new(vec![(a1.0 - 4, a1.1), (a1.0 + 4, a1.1)], ink(i).stroke_width(1))).map_err(err)?;
        }
    }
    // The fitted growth curve over the measured range, then continued (faint) to the target.
    if let (Some(fit), Some(first), Some(last)) = (da.and_then(|da| da.time.as_ref()), measured.first(), measured.last()) {
        let f = |n: f64| fit.cost_at(n).unwrap_or(f64::NAN);
        let curve = |cost: &dyn Fn(f64) -> f64, from: f64, to: f64| -> Vec<(i32, i32)> {
            (0..=60)
                .map(|k| from * (to / from).powf(k as f64 / 60.0))
                .filter(|n| cost(*n).is_finite())
                .map(|n| (pl.px)(n, cost(n).clamp(pl.y.0, pl.y.1)))
                .collect()
        };
        design_line(root, &curve(&f, first.0, last.0), i, 1, 1.0)?;
        if let Some(t) = pl.target.filter(|&t| t as f64 > last.0) {
            // A prediction raised by the recent trend continues along that trend from the
            // largest fitted size, one with a copying term along its own curve (rows plus
            // the bytes copied), so the line meets the mark at the target.
            let prediction = da.and_then(|da| da.prediction.as_ref());
            let copying = prediction.and_then(|p| p.copying.as_ref()).filter(|c| c.cost_at(t as f64).is_some());
            let class = |n: f64| copying.and_then(|c| c.cost_at(n)).unwrap_or_else(|| f(n));
            let continued = match prediction.and_then(|p| p.trend.as_ref()) {
                Some(tr) => {
                    // The trend up to its reach, then growing as the class does from there.
                    let h = if tr.reach_rows > 0.0 { tr.reach_rows } else { f64::INFINITY };
                    let along = |n: f64| if n <= h { tr.cost_at(n) } else { tr.cost_at(h) * class(n) / class(h) };
                    curve(&along, tr.from_rows as f64, t as f64)
                }
                None => curve(&class, last.0, t as f64),
            };
            design_line(root, &continued, i, 2, 0.4)?;
            if let Some(p) = da.and_then(|da| da.prediction.as_ref()) {
                let c = (pl.px)(t as f64, p.median.clamp(pl.y.0, pl.y.1));
                draw_mark(root, c, mark_of(i), tint(ink(i), 0.75), false)?;
                placer.reserve_point(c, 7);
            }
        }
    }
    let line: Vec<(i32, i32)> = measured.iter().map(|(n, m)| (pl.px)(*n, m.median_ns)).collect();
    design_line(root, &line, i, 2, 1.0)?;
    for p in &line {
        mark(root, *p, i, true)?;
        placer.reserve_point(*p, 7);
    }
    for p in pts.iter().filter(|p| p.skipped.is_some()) {
        let Some(sk) = p.skipped.as_ref() else { continue };
        // A trial stopped unfinished is drawn at its limit (the time it is known to pass).
        let (at, label) = match sk.trial_stopped(p.rows) {
            Some(limit) => (Some(limit), "trial stopped: at least this"),
            None => (sk.predicted_ns, "skipped"),
        };
        if let Some(v) = at {
            let c = (pl.px)(p.rows as f64, v.clamp(pl.y.0, pl.y.1));
            mark(root, c, i, false)?;
            placer.reserve_point(c, 7);
            labels.push((label.into(), c));
        }
    }
    Ok(())
}
