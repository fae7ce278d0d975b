//! The written report of a run, as one self-contained HTML page and as Markdown, laid out
//! around the decision each workload asks for.
//!
//! The page opens with one line per workload (the answer, its kind, the crossover, the
//! cost at the target, what to watch), each linking to its section. A section says, in
//! order: the job; the answer in large type with the size it holds from, the cost at the
//! target and the crossover; why, in whole sentences; what to watch; one design × size grid
//! of times shaded by each design's multiple of the fastest; one picture (time against
//! rows); how each cost grows; the evidence, grouped so no sentence repeats. Memory, the
//! designs' recipes and query plans, and the cost-model notes are folded away under
//! `<details>`. Every picture carries a text alternative that states what it shows.
//!
//! A newcomer must know: the page must stay well-formed XML (the tests parse it so), refer
//! to nothing outside itself but its own anchors, and come out byte for byte the same from
//! the same results (no clock, no randomness, no hash-map order).
//!
//! Files: this one holds what both pages share (the pictures and their descriptions, the
//! grid cells, the growth rows, the overview cells); `html.rs` and `markdown.rs` lay the
//! pages out; `svg.rs` makes the drawn pictures inline.

mod html;
mod markdown;
mod svg;

pub use html::{esc, html, inline};
pub use markdown::markdown;
pub use svg::compact_svg;

use super::digest::{self, counts_allocations, sentence, times, Digest};
use super::units::{bytes, time_ns};
use crate::analyse::WorkloadAnalysis;
use crate::explain::Explanation;
use crate::results::reader::WorkloadResults;
use crate::results::SkipReason;
use std::path::PathBuf;

/// One drawn picture of a workload.
pub struct Picture {
    /// scaling, memory, distribution or ratios.
    pub kind: String,
    pub title: String,
    pub svg: PathBuf,
    /// What the picture shows, for readers who cannot see it.
    pub alt: String,
}

/// Everything one workload's section needs.
pub struct Part<'a> {
    pub w: &'a WorkloadResults,
    pub a: &'a WorkloadAnalysis,
    pub e: &'a Explanation,
    pub d: Digest,
    pub pictures: Vec<Picture>,
}

/// What a picture shows, in words, from the same numbers it is drawn from.
pub fn describe(kind: &str, w: &WorkloadResults, a: &WorkloadAnalysis) -> String {
    let ax = w.header.axis();
    let axis = ax.name();
    if kind == "distribution" {
        return describe_percentiles(w);
    }
    let mut per = Vec::new();
    for (i, d) in w.header.designs.iter().enumerate() {
        let pts: Vec<_> = w.design_points(&d.name).into_iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows, m))).collect();
        let (Some(first), Some(last)) = (pts.first(), pts.last()) else {
            per.push(format!("{} was not measured", d.name));
            continue;
        };
        let growth = |g: Option<&crate::analyse::GrowthOut>| g.map(|g| format!(", growing as {}", g.label())).unwrap_or_default();
        let line = match kind {
            "scaling" => format!(
                "{} from {} at {} {axis} to {} at {}{}",
                d.name,
                time_ns(first.1.median_ns),
                ax.value(first.0),
                time_ns(last.1.median_ns),
                ax.value(last.0),
                growth(a.designs.get(i).and_then(|x| x.time.as_ref()))
            ),
            "memory" if !counts_allocations(w, &d.name) => format!("{}: allocations not counted", d.name),
            "memory" => format!(
                "{} allocates from {} at {} {axis} to {} at {}{}",
                d.name,
                bytes(first.1.alloc.bytes as f64),
                ax.value(first.0),
                bytes(last.1.alloc.bytes as f64),
                ax.value(last.0),
                growth(a.designs.get(i).and_then(|x| x.bytes.as_ref()))
            ),
            "ratios" => {
                let r = |n: u64| w.comparison(n).and_then(|c| c.ratios.iter().find(|r| r.design == d.name)).map(|r| times(r.ratio)).unwrap_or_else(|| "—".into());
                format!("{} from {} the fastest at {} {axis} to {} at {}", d.name, r(first.0), ax.value(first.0), r(last.0), ax.value(last.0))
            }
            _ => format!("{} at {} {axis}: {}", d.name, ax.value(last.0), time_ns(last.1.median_ns)),
        };
        per.push(line);
    }
    let lead = match kind {
        "scaling" => {
            let t = a.predict_at.map(|t| format!(", with each fitted curve continued to the target of {} {axis}", ax.value(t))).unwrap_or_default();
            format!("Median time per run against the number of {axis}, both on logarithmic scales, one line per design{t}")
        }
        "memory" => format!("Allocated and peak live bytes per run against the number of {axis}, on logarithmic scales"),
        "ratios" => "Each design's time as a multiple of the fastest design's at each size".to_string(),
        _ => "A picture of the workload's measurements".to_string(),
    };
    let moved = if kind == "scaling" { shared_moves(w, a).map(|m| format!(" {m}.")).unwrap_or_default() } else { String::new() };
    format!("{lead}. {}.{moved}", per.join("; "))
}

/// The sizes at which every design moved together by 3% or more, which the fitted curves
/// leave out (`analyse::SizeShift`), in words; None when there are none.
fn shared_moves(w: &WorkloadResults, a: &WorkloadAnalysis) -> Option<String> {
    let ax = w.header.axis();
    let moved: Vec<String> =
        a.shifts.iter().filter(|s| (s.factor - 1.0).abs() >= 0.03).map(|s| format!("{} {} {:.2}×", ax.value(s.rows), ax.name(), s.factor)).collect();
    (!moved.is_empty()).then(|| format!("Curves fitted with the move every design made together taken out at {}", moved.join(", ")))
}

/// The percentile picture in words, at the size `plot::draw_all` draws it (the largest size
/// with every design measured, else the largest with two or more).
fn describe_percentiles(w: &WorkloadResults) -> String {
    let ax = w.header.axis();
    let axis = ax.name();
    let all = w.header.designs.len();
    let count = |n: u64| w.header.designs.iter().filter(|d| w.point(&d.name, n).is_some_and(|p| p.measured.is_some())).count();
    let Some(n) = w.header.sizes.iter().rev().copied().find(|&n| count(n) == all).or_else(|| w.header.sizes.iter().rev().copied().find(|&n| count(n) >= 2)) else {
        return "Time per run by percentile: no size had two designs measured.".into();
    };
    let per: Vec<String> = w
        .header
        .designs
        .iter()
        .filter_map(|d| {
            let m = w.point(&d.name, n)?.measured.as_ref()?;
            Some(format!("{} median {}, 90th percentile {}, 99th {}", d.name, time_ns(m.p50_ns), time_ns(m.p90_ns), time_ns(m.p99_ns)))
        })
        .collect();
    format!("Time per run by percentile at {} {axis}, one line per design. {}.", ax.value(n), per.join("; "))
}

/// Pictures of a workload as drawn by `plot::draw_all`, with their alternatives.
pub fn pictures(drawn: Vec<(String, PathBuf)>, w: &WorkloadResults, a: &WorkloadAnalysis) -> Vec<Picture> {
    drawn
        .into_iter()
        .map(|(title, svg)| {
            let stem = svg.file_stem().and_then(|s| s.to_str()).unwrap_or("");
            let kind = ["scaling", "memory", "distribution", "ratios"].iter().find(|k| stem.ends_with(&format!("-{k}"))).copied().unwrap_or("picture").to_string();
            let alt = describe(&kind, w, a);
            // The scaling picture's caption says where its curves leave a shared move out.
            let title = match shared_moves(w, a) {
                Some(m) if kind == "scaling" => format!("{title}. {m}"),
                _ => title,
            };
            Picture { kind, title, svg, alt }
        })
        .collect()
}

/// Overview cells of one workload: answer, kind, crossover, cost at the target, watch.
fn glance(d: &Digest) -> [String; 5] {
    let ax = crate::results::Axis(d.axis.as_ref());
    let axis = ax.name();
    let cost = match d.costs.first() {
        Some(c) if Some(&c.design) == d.design.as_ref() => format!("{} at {} {axis}", c.short(), ax.value(c.rows)),
        _ => "—".into(),
    };
    let watch = if d.warning_tags.is_empty() { "—".to_string() } else { d.warning_tags.join("; ") };
    [d.answer.clone(), d.kind.word().to_string(), d.crossover.clone(), cost, watch]
}

/// The target line of a section.
fn target_line(d: &Digest) -> Option<(String, String)> {
    let ax = crate::results::Axis(d.axis.as_ref());
    let axis = ax.name();
    let t = d.target?;
    let text = match d.costs.first() {
        Some(c) if Some(&c.design) == d.design.as_ref() => format!("`{}`: {} per run, time growing as {}{}", c.design, c.phrase(), c.class, c.allowance_clause()),
        _ => "no prediction for the decided design".into(),
    };
    Some((format!("At {} {axis}", ax.value(t)), text))
}

/// A grid cell: (main text, second line, shade 0–4, tooltip).
fn time_cell(w: &WorkloadResults, design: &str, n: u64) -> (String, String, usize, String) {
    let Some(p) = w.point(design, n) else { return (String::new(), String::new(), 9, String::new()) };
    match (&p.measured, &p.skipped) {
        (Some(m), _) => {
            let r = w.comparison(n).and_then(|c| c.ratios.iter().find(|r| r.design == design)).map(|r| r.ratio);
            let (second, shade) = match r {
                Some(x) if (x - 1.0).abs() < 1e-12 => ("fastest".to_string(), 0),
                Some(x) => (format!("{} the fastest", times(x)), if x < 1.2 { 0 } else if x < 2.0 { 1 } else if x < 5.0 { 2 } else if x < 20.0 { 3 } else { 4 }),
                None => (String::new(), 9),
            };
            let ci = match (m.ci_low_ns, m.ci_high_ns) {
                (Some(a), Some(b)) => format!("95% interval {} to {}; ", time_ns(a), time_ns(b)),
                _ => String::new(),
            };
            let busy = m.disturbed_because().map(|w| format!("; {w}")).unwrap_or_default();
            let tip = format!("{ci}{} samples; sampling ended: {}{busy}", m.samples_ns.len(), m.stop.label());
            (time_ns(m.median_ns), second, shade, tip)
        }
        (None, Some(sk)) => {
            let tip = format!("{}: {}", sk.reason.label(), crate::present::causes::skip_words(sk, w.header.axis()));
            // A trial that ran and was stopped: its time passes the limit; not a prediction.
            if let Some(limit) = sk.trial_stopped(n) {
                return (format!("> {}", time_ns(limit)), "trial stopped".into(), 8, tip);
            }
            let main = sk.predicted_ns.map(|p| format!("~{}", time_ns(p))).unwrap_or_else(|| "—".into());
            let second = if sk.reason == SkipReason::Failed { "failed" } else { "not run" };
            (main, second.into(), 8, tip)
        }
        _ => ("—".into(), String::new(), 9, String::new()),
    }
}

/// Growth rows: (design, time, bytes, expected, at target).
fn growth_rows(p: &Part) -> Vec<[String; 5]> {
    p.w.header
        .designs
        .iter()
        .zip(&p.a.designs)
        .map(|(d, da)| {
            let time = match (&da.time, &da.time_exponent) {
                (Some(t), Some(e)) => format!("{} (slope {:.2})", t.label(), e.slope),
                (Some(t), None) => t.label(),
                (None, Some(e)) => format!("slope {:.2}", e.slope),
                (None, None) => "too few sizes".into(),
            };
            let (mem, bytes_met) = digest::bytes_growth(p.w, da, d.expect_bytes.as_deref());
            let mut exp = Vec::new();
            if let Some(e) = &d.expect_time {
                let meets = da.time.as_ref().map_or(crate::analyse::Meets::No, |t| t.meets(e));
                exp.push(format!("time {e} ({})", meets.word()));
            }
            if let Some(e) = &d.expect_bytes {
                exp.push(format!("bytes {e} ({})", match bytes_met { Some(true) => "met", Some(false) => "not met", None => "not judged" }));
            }
            let at = match &da.prediction {
                Some(pr) if pr.rough => format!("about {} (order of magnitude)", time_ns(pr.median)),
                Some(pr) => format!("{} ({} to {})", time_ns(pr.median), time_ns(pr.low), time_ns(pr.high)),
                None => "—".into(),
            };
            [d.name.clone(), time, mem, if exp.is_empty() { "—".into() } else { exp.join(", ") }, at]
        })
        .collect()
}

/// A finding group as one paragraph of sentences.
fn reading(g: &digest::Group) -> String {
    let mut t = sentence(&g.implies);
    if !g.action.is_empty() {
        t.push(' ');
        t.push_str(&sentence(&g.action));
    }
    t
}

fn who(designs: &[String]) -> String {
    match designs.len() {
        0 => "The workload as a whole".into(),
        1 => format!("`{}`", designs[0]),
        _ => {
            let names: Vec<String> = designs.iter().map(|d| format!("`{d}`")).collect();
            format!("{} and {}", names[..names.len() - 1].join(", "), names[names.len() - 1])
        }
    }
}

