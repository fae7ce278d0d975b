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

use super::digest::{self, counts_allocations, sentence, times, Digest};
use super::units::{bytes, time_ns};
use crate::analyse::WorkloadAnalysis;
use crate::explain::Explanation;
use crate::results::reader::{RunResults, WorkloadResults};
use crate::results::SkipReason;
use std::fmt::Write;
use std::path::{Path, PathBuf};

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

/// Escape text for HTML (and XML).
pub fn esc(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

/// Escape text for HTML and turn `names` into `<code>names</code>` (an unpaired backtick is
/// dropped, never shown raw).
pub fn inline(s: &str) -> String {
    let e = esc(s);
    let mut out = String::with_capacity(e.len() + 16);
    let parts: Vec<&str> = e.split('`').collect();
    let paired = parts.len() % 2 == 1;
    for (i, p) in parts.iter().enumerate() {
        if i % 2 == 1 && (paired || i + 1 < parts.len()) {
            let _ = write!(out, "<code>{p}</code>");
        } else {
            out.push_str(p);
        }
    }
    out
}

/// [`inline`], also setting words that are identifiers (`extra_passes`) as code.
fn inline_idents(s: &str) -> String {
    let marked: Vec<String> = s
        .split(' ')
        .map(|w| {
            let core = w.trim_end_matches([',', '.', ';', ':', ')']);
            if core.contains('_') && !core.contains('`') && core.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') {
                format!("`{core}`{}", &w[core.len()..])
            } else {
                w.to_string()
            }
        })
        .collect();
    inline(&marked.join(" "))
}

/// An anchor id for a workload: `w-` and its name's letters, digits and dashes.
fn anchor(name: &str, k: usize) -> String {
    let slug: String = name.chars().map(|c| if c.is_ascii_alphanumeric() { c.to_ascii_lowercase() } else { '-' }).collect();
    format!("w{k}-{}", slug.trim_matches('-'))
}

/// The Markdown anchor GitHub-style renderers give a `## name` heading.
fn md_anchor(name: &str) -> String {
    name.to_lowercase().chars().filter_map(|c| if c.is_alphanumeric() || c == '-' || c == '_' { Some(c) } else if c == ' ' { Some('-') } else { None }).collect()
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
    format!("{lead}. {}.", per.join("; "))
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
        Some(c) if Some(&c.design) == d.design.as_ref() => format!("`{}`: {} per run, time growing as {}", c.design, c.phrase(), c.class),
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
            let busy = if m.is_contaminated() { "; measured while the machine was busy" } else { "" };
            let tip = format!("{ci}{} samples; sampling ended: {}{busy}", m.samples_ns.len(), m.stop.label());
            (time_ns(m.median_ns), second, shade, tip)
        }
        (None, Some(sk)) => {
            let main = sk.predicted_ns.map(|p| format!("~{}", time_ns(p))).unwrap_or_else(|| "—".into());
            let second = if sk.reason == SkipReason::Failed { "failed" } else { "not run" };
            (main, second.into(), 8, format!("{}: {}", sk.reason.label(), sk.detail))
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
                let ok = da.time.as_ref().is_some_and(|t| crate::fit::growth::GrowthClass::from_label(e).is_some_and(|c| t.admits(c)));
                exp.push(format!("time {e} ({})", if ok { "met" } else { "not met" }));
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

const STYLE: &str = "\
:root{--ink:#262626;--muted:#5f5a50;--paper:#fbf9f4;--desk:#efebe2;--rule:#e0d9ca;--harbour:#1f6e8c;--apricot:#c86b1e;--orchard:#4e8f3a;--straw:#8a7412}\
body{margin:0;background:var(--desk);color:var(--ink);font:16px/1.55 Georgia,'Times New Roman',serif}\
main{max-width:980px;margin:0 auto;padding:20px 32px 64px;background:var(--paper)}\
h1{font-size:25px;margin:6px 0 2px;font-weight:normal}h1 b{font-weight:bold}\
.sub{color:var(--muted);margin:0 0 18px}\
h2{font-size:23px;margin:44px 0 4px;padding-top:10px;border-top:1px solid var(--rule)}\
h3{font-size:16px;margin:22px 0 6px;letter-spacing:.02em;color:var(--muted);text-transform:uppercase;font-family:'DejaVu Sans',Verdana,sans-serif}\
code{font-family:'DejaVu Sans Mono',Menlo,Consolas,monospace;font-size:.88em;background:#f0ece3;padding:0 3px;border-radius:3px}\
pre{font-family:'DejaVu Sans Mono',Menlo,Consolas,monospace;font-size:13px;background:var(--desk);padding:8px;overflow-x:auto}\
.alarm{background:#f7e6d6;border-left:5px solid var(--apricot);padding:8px 12px}\
table{border-collapse:collapse;font-size:14px}th,td{padding:4px 8px;vertical-align:top}\
.glance{width:100%}.glance th{text-align:left;font-family:'DejaVu Sans',Verdana,sans-serif;font-size:12px;color:var(--muted);border-bottom:2px solid var(--rule)}\
.glance td{border-bottom:1px solid var(--rule)}.glance td:first-child{white-space:nowrap}.glance td:nth-child(2){min-width:15em}.glance td:nth-child(4){white-space:nowrap}.glance td:nth-child(5){font-size:13px}.glance code{white-space:nowrap}\
.kind{font-family:'DejaVu Sans',Verdana,sans-serif;font-size:11px;text-transform:uppercase;letter-spacing:.06em;padding:1px 6px;border-radius:9px;border:1px solid;white-space:nowrap}\
.k-winner{color:var(--harbour)}.k-crossover{color:var(--orchard)}.k-tie{color:var(--straw)}.k-undecided{color:var(--muted)}\
.job{font-style:italic;color:#3c3a35;margin-top:4px}\
.answer{display:grid;grid-template-columns:minmax(220px,1fr) 2fr;gap:6px 28px;margin:14px 0;padding:14px 0;border-top:3px double var(--rule);border-bottom:3px double var(--rule)}\
.say{font-size:24px;line-height:1.3;margin:0}.say code{font-size:.95em}\
.answer dl{margin:0;display:grid;grid-template-columns:max-content auto;gap:3px 14px}.answer dt{color:var(--muted);font-size:14px;padding-top:2px}.answer dd{margin:0}\
.why{margin:8px 0}.watch{border-left:3px solid var(--apricot);padding:2px 0 2px 12px;margin:10px 0}.watch ul{margin:4px 0;padding-left:18px}\
.grid th{font-family:'DejaVu Sans',Verdana,sans-serif;font-size:12px;color:var(--muted);text-align:right;border-bottom:1px solid var(--rule)}\
.grid th:first-child,.grid td:first-child{text-align:left}.grid td{text-align:right;border-bottom:1px solid #f0ebe0}\
.grid td small{display:block;color:var(--muted);font-size:11px}\
.s0{background:#e4eef1}.s1{background:#fbf1e4}.s2{background:#f6e1c9}.s3{background:#f0cfa9}.s4{background:#e8b98a}.s8{color:var(--muted);font-style:italic}\
.note{font-size:13px;color:var(--muted);margin:4px 0 0}\
figure{margin:18px 0}figcaption{font-size:14px;color:var(--muted)}svg{max-width:100%;height:auto}\
.growth td,.growth th{border-bottom:1px solid var(--rule);text-align:left}.growth th{font-family:'DejaVu Sans',Verdana,sans-serif;font-size:12px;color:var(--muted)}\
.evidence h4{margin:12px 0 2px;font-size:15px}.evidence ul{margin:2px 0;padding-left:20px}.evidence li{margin:3px 0}.evidence ul.by{font-size:14px;color:#3c3a35}\
details{margin:10px 0;border:1px solid var(--rule);padding:4px 10px}summary{cursor:pointer;color:var(--harbour)}\
pre.again{white-space:pre-wrap;word-break:break-all}dl.machine{display:grid;grid-template-columns:max-content auto;gap:2px 14px}dl.machine dt{color:var(--muted)}dl.machine dd{margin:0}\
@media (max-width:700px){.answer{grid-template-columns:1fr}main{padding:12px}}";

/// The same drawing in fewer bytes: runs of one-line `<polyline>` elements that differ only
/// in their points (plotters writes every dash as one) become one `<path>` of move-and-line
/// commands. Only fully opaque, unfilled runs are merged, so what is drawn is unchanged.
pub fn compact_svg(svg: &str) -> String {
    fn split(line: &str) -> Option<(&str, &str)> {
        let rest = line.trim().strip_prefix("<polyline ")?.strip_suffix("/>")?;
        let (attrs, pts) = rest.split_once(" points=\"")?;
        let pts = pts.trim_end().strip_suffix('"')?;
        (attrs.contains("fill=\"none\"") && attrs.contains("opacity=\"1\"") && !attrs.contains('<')).then_some((attrs, pts))
    }
    let mut out = String::with_capacity(svg.len() / 2);
    let mut run: Option<(String, String)> = None;
    let flush = |run: &mut Option<(String, String)>, out: &mut String| {
        if let Some((attrs, d)) = run.take() {
            let _ = writeln!(out, "<path {attrs} d=\"{d}\"/>");
        }
    };
    for line in svg.lines() {
        match split(line) {
            Some((attrs, pts)) => {
                let mut d = String::new();
                for (i, p) in pts.split_whitespace().enumerate() {
                    d.push(if i == 0 { 'M' } else { 'L' });
                    d.push_str(p);
                }
                match &mut run {
                    Some((a, acc)) if a == attrs => acc.push_str(&d),
                    _ => {
                        flush(&mut run, &mut out);
                        run = Some((attrs.to_string(), d));
                    }
                }
            }
            None => {
                flush(&mut run, &mut out);
                out.push_str(line);
                out.push('\n');
            }
        }
    }
    flush(&mut run, &mut out);
    out
}

fn svg_inline(p: &Picture) -> Result<String, String> {
    let svg = std::fs::read_to_string(&p.svg).map_err(|e| format!("{}: {e}", p.svg.display()))?;
    // Inline SVG needs no namespace declaration in HTML; leaving it out keeps the page free
    // of any URL at all. The XML prologue goes too.
    let svg = match svg.find("<svg") {
        Some(i) => &svg[i..],
        None => svg.as_str(),
    }
    .replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1);
    // The picture carries its own `role="img"`, `<title>` and `<desc>`; the page adds the
    // description written from the numbers as its accessible name.
    let svg = compact_svg(&svg);
    let open_end = svg.find('>').unwrap_or(0);
    let role = if svg[..open_end].contains(" role=") { "" } else { " role=\"img\"" };
    Ok(svg.replacen("<svg", &format!("<svg{role} aria-label=\"{}\"", esc(&p.alt)), 1))
}

/// The HTML page.
pub fn html(r: &RunResults, parts: &[Part], machine: &[(String, String)], reproduce: &str) -> Result<String, String> {
    let mut s = String::new();
    let id = r.run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"/><meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/><title>framecost run {}</title><style>{STYLE}</style></head><body><main>\n",
        esc(&id)
    );
    let _ = writeln!(s, "<h1><b>Which design, from what size</b> — framecost run {}</h1>", esc(&id));
    if let Some(h) = &r.run {
        let _ = writeln!(
            s,
            "<p class=\"sub\">{} workload{} measured from {} on {} ({} logical cores), polars {}.</p>",
            parts.len(),
            if parts.len() == 1 { "" } else { "s" },
            esc(&h.started_at),
            esc(&h.machine.cpu_model),
            h.machine.logical_cores,
            esc(&h.machine.polars_version)
        );
    }
    if !r.complete() {
        let _ = writeln!(s, "<p class=\"alarm\">This run did not finish: what follows is what was measured before it stopped.</p>");
    }
    let measured: Vec<_> = r.workloads.iter().flat_map(|w| &w.points).filter_map(|p| p.measured.as_ref()).collect();
    let busy = measured.iter().filter(|m| m.is_contaminated()).count();
    if busy > 0 {
        let _ = writeln!(
            s,
            "<p class=\"alarm\">The machine was busy: {busy} of {} points were measured while other work competed for the cores. They are marked and left out of growth classes and verdicts.</p>",
            measured.len()
        );
    }

    // At a glance.
    let _ = writeln!(s, "<h3>At a glance</h3><table class=\"glance\"><thead><tr><th>workload</th><th>answer</th><th>crossover</th><th>cost at the target</th><th>watch</th></tr></thead><tbody>");
    for (k, p) in parts.iter().enumerate() {
        let [answer, kind, cross, cost, watch] = glance(&p.d);
        let _ = writeln!(
            s,
            "<tr><td><a href=\"#{}\">{}</a></td><td>{} <span class=\"kind k-{kind}\">{kind}</span></td><td>{}</td><td>{}</td><td>{}</td></tr>",
            anchor(&p.w.header.workload, k),
            esc(&p.w.header.workload),
            inline(&answer),
            inline(&cross),
            esc(&cost),
            inline(&watch)
        );
    }
    let _ = writeln!(s, "</tbody></table>");

    for (k, p) in parts.iter().enumerate() {
        let ax = p.w.header.axis();
        let axis = ax.name();
        let (w, d) = (p.w, &p.d);
        let _ = writeln!(s, "<section id=\"{}\"><h2>{}</h2>", anchor(&w.header.workload, k), esc(&w.header.workload));
        if !w.header.about.is_empty() {
            let _ = writeln!(s, "<p class=\"job\">{}</p>", inline(w.header.about.trim()));
        }
        // The answer.
        let kind = d.kind.word();
        let _ = writeln!(s, "<div class=\"answer\"><div><p class=\"say\">{}</p><span class=\"kind k-{kind}\">{kind}</span></div><dl>", inline(&sentence(&d.answer)));
        if !d.from.is_empty() {
            let _ = writeln!(s, "<dt>Holds</dt><dd>{}</dd>", inline(&d.from));
        }
        if let Some((label, text)) = target_line(d) {
            let _ = writeln!(s, "<dt>{}</dt><dd>{}</dd>", esc(&label), inline(&text));
        }
        if d.crossover != "—" {
            let _ = writeln!(s, "<dt>Crossover</dt><dd>{}</dd>", inline(&d.crossover));
        }
        let _ = writeln!(s, "</dl></div>");
        let _ = writeln!(s, "<p class=\"why\">{}</p>", inline(&d.why.join(" ")));
        if !d.warnings.is_empty() {
            let _ = writeln!(s, "<div class=\"watch\"><strong>Watch</strong><ul>");
            for x in &d.warnings {
                let _ = writeln!(s, "<li>{}</li>", inline(x));
            }
            let _ = writeln!(s, "</ul></div>");
        }

        // The grid.
        let _ = writeln!(s, "<h3>Every design at every size</h3><table class=\"grid\"><thead><tr><th>time per run</th>");
        for &n in &w.header.sizes {
            let _ = write!(s, "<th>{} {axis}</th>", ax.value(n));
        }
        let _ = writeln!(s, "</tr></thead><tbody>");
        for dh in &w.header.designs {
            let _ = write!(s, "<tr><td><code>{}</code></td>", esc(&dh.name));
            for &n in &w.header.sizes {
                let (main, second, shade, tip) = time_cell(w, &dh.name, n);
                let class = if shade < 9 { format!(" class=\"s{shade}\"") } else { String::new() };
                let title = if tip.is_empty() { String::new() } else { format!(" title=\"{}\"", esc(&tip)) };
                let small = if second.is_empty() { String::new() } else { format!("<small>{}</small>", esc(&second)) };
                let _ = write!(s, "<td{class}{title}>{}{small}</td>", esc(&main));
            }
            let _ = writeln!(s, "</tr>");
        }
        let _ = writeln!(
            s,
            "</tbody></table><p class=\"note\">Median time of one run; under it, how many times the fastest design's time it took at that size (the deeper the shade, the further behind). <em>~</em> marks a time predicted from the smaller sizes for a point not run. Hover a cell for its interval and samples.</p>"
        );

        for pic in p.pictures.iter().filter(|x| x.kind == "scaling") {
            let _ = writeln!(s, "<figure>{}<figcaption>{}.</figcaption></figure>", svg_inline(pic)?, esc(&pic.title));
        }

        // Growth.
        let target = p.a.predict_at.map(|t| format!("<th>time per run at {} {axis}</th>", ax.value(t))).unwrap_or_default();
        let _ = writeln!(
            s,
            "<h3>How each cost grows</h3><table class=\"growth\"><thead><tr><th>design</th><th>time grows as</th><th>allocated bytes grow as</th><th>the workload expects</th>{target}</tr></thead><tbody>"
        );
        for row in growth_rows(p) {
            let at = if target.is_empty() { String::new() } else { format!("<td>{}</td>", esc(&row[4])) };
            let _ = writeln!(s, "<tr><td><code>{}</code></td><td>{}</td><td>{}</td><td>{}</td>{at}</tr>", esc(&row[0]), esc(&row[1]), esc(&row[2]), esc(&row[3]));
        }
        let _ = writeln!(s, "</tbody></table>");

        // Evidence.
        let sections = digest::sections(&p.e.findings, false);
        if !sections.is_empty() {
            let _ = writeln!(s, "<h3>What the measurements show</h3><div class=\"evidence\">");
            for sec in &sections {
                let _ = writeln!(s, "<h4>{}</h4><ul>", inline(&who(&sec.designs)));
                for g in &sec.groups {
                    if g.measured.len() == 1 {
                        let _ = writeln!(s, "<li>{} {}</li>", inline(&sentence(&g.measured[0].1)), inline(&reading(g)));
                    } else {
                        let _ = write!(s, "<li>{}<ul class=\"by\">", inline(&reading(g)));
                        for (d, m) in &g.measured {
                            let _ = write!(s, "<li><code>{}</code>: {}</li>", esc(d.as_deref().unwrap_or("all designs")), inline(m));
                        }
                        let _ = writeln!(s, "</ul></li>");
                    }
                }
                let _ = writeln!(s, "</ul>");
            }
            let _ = writeln!(s, "</div>");
        }

        // Folded: memory, the designs, the evidence the summaries leave out.
        let counted: Vec<_> = w.header.designs.iter().filter(|d| counts_allocations(w, &d.name)).collect();
        if !counted.is_empty() {
            let _ = writeln!(s, "<details><summary>Memory: allocated and peak live bytes per run</summary><table class=\"grid\"><thead><tr><th>allocated / peak</th>");
            for &n in &w.header.sizes {
                let _ = write!(s, "<th>{} {axis}</th>", ax.value(n));
            }
            let _ = writeln!(s, "</tr></thead><tbody>");
            for dh in &counted {
                let _ = write!(s, "<tr><td><code>{}</code></td>", esc(&dh.name));
                for &n in &w.header.sizes {
                    match w.point(&dh.name, n).and_then(|p| p.measured.as_ref()) {
                        Some(m) => {
                            let chunks = m.output.as_ref().filter(|o| o.chunks > 1).map(|o| format!(", {} chunks", o.chunks)).unwrap_or_default();
                            let _ = write!(s, "<td>{}<small>peak {}{chunks}</small></td>", bytes(m.alloc.bytes as f64), bytes(m.alloc.peak_live as f64));
                        }
                        None => {
                            let _ = write!(s, "<td></td>");
                        }
                    }
                }
                let _ = writeln!(s, "</tr>");
            }
            let _ = writeln!(s, "</tbody></table>");
            for pic in p.pictures.iter().filter(|x| x.kind == "memory") {
                let _ = writeln!(s, "<figure>{}<figcaption>{}.</figcaption></figure>", svg_inline(pic)?, esc(&pic.title));
            }
            let _ = writeln!(s, "</details>");
        }
        let _ = writeln!(s, "<details><summary>The designs, their recipes and how their steps behave</summary><ul>");
        for dh in &w.header.designs {
            let about = dh.about.as_ref().map(|a| format!(" {}", inline(&sentence(a)))).unwrap_or_default();
            let _ = writeln!(s, "<li><code>{}</code>: <code>{}</code>.{about}</li>", esc(&dh.name), esc(&dh.recipe));
        }
        let _ = writeln!(s, "</ul>");
        if !p.e.step_notes.is_empty() {
            let _ = writeln!(s, "<ul>");
            for (n, note) in &p.e.step_notes {
                let _ = writeln!(s, "<li><code>{}</code>: {}</li>", esc(n), inline_idents(&sentence(note)));
            }
            let _ = writeln!(s, "</ul>");
        }
        for dh in w.header.designs.iter().filter(|d| !d.query_plans.is_empty()) {
            let engine = dh.engine.as_deref().unwrap_or("memory");
            for plan in &dh.query_plans {
                let _ = writeln!(s, "<p>Query plan of <code>{}</code> ({} engine, optimized):</p><pre>{}</pre>", esc(&dh.name), esc(engine), esc(plan.trim_end()));
            }
        }
        let _ = writeln!(s, "</details>");
        let more = digest::sections(&p.e.findings, true).iter().flat_map(|x| x.groups.iter()).filter(|g| digest::SHOWN_ELSEWHERE.contains(&g.kind.as_str()) || g.kind == "expectation").count();
        if more > 0 {
            let _ = writeln!(s, "<details><summary>The fits in detail</summary><ul>");
            for sec in digest::sections(&p.e.findings, true) {
                for g in sec.groups.iter().filter(|g| g.kind == "growth" || g.kind == "expectation") {
                    for (d, m) in &g.measured {
                        let _ = writeln!(s, "<li><code>{}</code>: {} {}</li>", esc(d.as_deref().unwrap_or("all designs")), inline(&sentence(m)), inline(&reading(g)));
                    }
                }
            }
            let _ = writeln!(s, "</ul></details>");
        }
        let _ = writeln!(s, "</section>");
    }
    let _ = writeln!(s, "<h2>Machine</h2><dl class=\"machine\">");
    for (k, v) in machine {
        let _ = writeln!(s, "<dt>{}</dt><dd>{}</dd>", esc(k), esc(v));
    }
    let _ = writeln!(s, "</dl><h3>To measure it again</h3><pre class=\"again\">{}</pre>\n</main></body></html>", esc(reproduce));
    Ok(s)
}

/// Escape a Markdown table cell.
fn cell(s: &str) -> String {
    s.replace('|', "\\|").replace('\n', " ")
}

/// The Markdown report (pictures linked from `pictures/`).
pub fn markdown(r: &RunResults, parts: &[Part], dir: &Path, machine: &[(String, String)], reproduce: &str) -> String {
    let mut s = String::new();
    let id = r.run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
    let _ = writeln!(s, "# Which design, from what size — framecost run {id}\n");
    if let Some(h) = &r.run {
        let _ = writeln!(
            s,
            "{} workload{} measured from {} on {} ({} logical cores), polars {}.\n",
            parts.len(),
            if parts.len() == 1 { "" } else { "s" },
            h.started_at,
            h.machine.cpu_model,
            h.machine.logical_cores,
            h.machine.polars_version
        );
    }
    if !r.complete() {
        let _ = writeln!(s, "> This run did not finish: what follows is what was measured before it stopped.\n");
    }
    let _ = writeln!(s, "## At a glance\n\n| workload | answer | crossover | cost at the target | watch |\n|---|---|---|---|---|");
    for p in parts {
        let [answer, kind, cross, cost, watch] = glance(&p.d);
        let _ = writeln!(
            s,
            "| [{}](#{}) | {} ({kind}) | {} | {} | {} |",
            cell(&p.w.header.workload),
            md_anchor(&p.w.header.workload),
            cell(&answer),
            cell(&cross),
            cell(&cost),
            cell(&watch)
        );
    }
    for p in parts {
        let ax = p.w.header.axis();
        let axis = ax.name();
        let (w, d) = (p.w, &p.d);
        let _ = writeln!(s, "\n## {}\n", w.header.workload);
        if !w.header.about.is_empty() {
            let _ = writeln!(s, "*{}*\n", w.header.about.trim());
        }
        let _ = writeln!(s, "**{}** ({})\n", sentence(&d.answer), d.kind.word());
        if !d.from.is_empty() {
            let _ = writeln!(s, "- Holds: {}", d.from);
        }
        if let Some((label, text)) = target_line(d) {
            let _ = writeln!(s, "- {label}: {text}");
        }
        if d.crossover != "—" {
            let _ = writeln!(s, "- Crossover: {}", d.crossover);
        }
        let _ = writeln!(s, "\n{}\n", d.why.join(" "));
        if !d.warnings.is_empty() {
            let _ = writeln!(s, "Watch:\n");
            for x in &d.warnings {
                let _ = writeln!(s, "- {x}");
            }
            s.push('\n');
        }
        let _ = writeln!(s, "### Every design at every size\n");
        let mut head = vec!["time per run".to_string()];
        head.extend(w.header.sizes.iter().map(|n| format!("{} {axis}", ax.value(*n))));
        let _ = writeln!(s, "| {} |\n|{}|", head.join(" | "), head.iter().enumerate().map(|(i, _)| if i == 0 { "---" } else { "---:" }).collect::<Vec<_>>().join("|"));
        for dh in &w.header.designs {
            let cells: Vec<String> = w
                .header
                .sizes
                .iter()
                .map(|&n| {
                    let (main, second, _, _) = time_cell(w, &dh.name, n);
                    if second.is_empty() {
                        main
                    } else {
                        format!("{main} ({second})")
                    }
                })
                .collect();
            let _ = writeln!(s, "| `{}` | {} |", cell(&dh.name), cells.iter().map(|c| cell(c)).collect::<Vec<_>>().join(" | "));
        }
        let _ = writeln!(s, "\nMedian time of one run, and how many times the fastest design's time it took at that size; `~` marks a time predicted for a point not run.\n");
        for pic in &p.pictures {
            let rel = pic.svg.strip_prefix(dir).unwrap_or(&pic.svg).display().to_string();
            let _ = writeln!(s, "![{}]({rel} \"{}\")\n", pic.alt.replace(['[', ']'], ""), pic.title.replace('"', "'"));
        }
        let target = p.a.predict_at.map(|t| format!(" time per run at {} {axis} |", ax.value(t))).unwrap_or_default();
        let _ = writeln!(
            s,
            "### How each cost grows\n\n| design | time grows as | allocated bytes grow as | the workload expects |{target}\n|---|---|---|---|{}",
            if target.is_empty() { "" } else { "---|" }
        );
        for row in growth_rows(p) {
            let at = if target.is_empty() { String::new() } else { format!(" {} |", cell(&row[4])) };
            let _ = writeln!(s, "| `{}` | {} | {} | {} |{at}", cell(&row[0]), cell(&row[1]), cell(&row[2]), cell(&row[3]));
        }
        let sections = digest::sections(&p.e.findings, false);
        if !sections.is_empty() {
            let _ = writeln!(s, "\n### What the measurements show\n");
            for sec in &sections {
                let _ = writeln!(s, "**{}**\n", who(&sec.designs));
                for g in &sec.groups {
                    if g.measured.len() == 1 {
                        let _ = writeln!(s, "- {} {}", sentence(&g.measured[0].1), reading(g));
                    } else {
                        let _ = writeln!(s, "- {}", reading(g));
                        for (d, m) in &g.measured {
                            let _ = writeln!(s, "  - `{}`: {m}", d.as_deref().unwrap_or("all designs"));
                        }
                    }
                }
                s.push('\n');
            }
        }
        let _ = writeln!(s, "\n### The designs\n");
        for dh in &w.header.designs {
            let about = dh.about.as_ref().map(|a| format!(" {}", sentence(a))).unwrap_or_default();
            let _ = writeln!(s, "- `{}`: `{}`.{about}", dh.name, dh.recipe);
        }
        for dh in w.header.designs.iter().filter(|d| !d.query_plans.is_empty()) {
            let engine = dh.engine.as_deref().unwrap_or("memory");
            for plan in &dh.query_plans {
                let _ = writeln!(s, "\nQuery plan of `{}` ({engine} engine, optimized):\n\n```\n{}\n```", dh.name, plan.trim_end());
            }
        }
    }
    let _ = writeln!(s, "\n## Machine\n");
    for (k, v) in machine {
        let _ = writeln!(s, "- {k}: {v}");
    }
    let _ = writeln!(s, "\n## To measure it again\n\n```\n{reproduce}\n```");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_become_code_and_no_backtick_is_left() {
        assert_eq!(inline("use `a<b>` now"), "use <code>a&lt;b&gt;</code> now");
        assert_eq!(inline("odd ` tick"), "odd  tick");
        assert!(!inline("`x` and `y`").contains('`'));
        assert_eq!(inline_idents("then extra_passes: 2."), "then <code>extra_passes</code>: 2.");
    }

    #[test]
    fn dashes_are_merged_without_changing_the_drawing() {
        let svg = "<svg>\n<polyline fill=\"none\" opacity=\"1\" stroke=\"#1F6E8C\" stroke-width=\"2\" points=\"1,2 3,4 \"/>\n<polyline fill=\"none\" opacity=\"1\" stroke=\"#1F6E8C\" stroke-width=\"2\" points=\"5,6 7,8 \"/>\n<polyline fill=\"none\" opacity=\"0.5\" stroke=\"#1F6E8C\" stroke-width=\"2\" points=\"9,9 9,10 \"/>\n</svg>";
        let c = compact_svg(svg);
        assert!(c.contains("<path fill=\"none\" opacity=\"1\" stroke=\"#1F6E8C\" stroke-width=\"2\" d=\"M1,2L3,4M5,6L7,8\"/>"), "{c}");
        // A translucent one is left alone (overlaps would darken differently).
        assert!(c.contains("opacity=\"0.5\"") && c.contains("points=\"9,9 9,10 \""), "{c}");
        assert!(roxmltree::Document::parse(&c).is_ok());
    }
}
