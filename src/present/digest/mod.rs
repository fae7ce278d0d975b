//! The decision of one workload, condensed once for every reader (the terminal summary,
//! the HTML and the Markdown report): which design, from what size, at what cost at the
//! target, and why — then the warnings and the findings grouped so that no sentence is
//! said twice.
//!
//! A newcomer must know: the verdict itself is decided in `explain::verdict`; this module
//! only words it. Everything here is computed from saved results and their analysis, with
//! no clock and no randomness, so the same results always give the same words.
//!
//! Files: this one words the answer; `words.rs` holds the small wording helpers,
//! `evidence.rs` the memory columns and the warnings, `sections.rs` the grouping of findings.

mod evidence;
mod sections;
mod words;

pub use evidence::{bytes_growth, counts_allocations, same_bytes_everywhere};
pub use sections::{sections, Group, Section, SHOWN_ELSEWHERE};
pub use words::{number_first, sentence, times};

use crate::analyse::{DesignAnalysis, PredictionOut, WorkloadAnalysis};
use crate::explain::{Explanation, Verdict, VerdictKind};
use crate::results::reader::WorkloadResults;
use crate::results::ComparisonRecord;
use crate::units::{rows_label, time_ns};
use evidence::warnings;

/// The decision of one workload, in words.
#[derive(Debug, Clone)]
pub struct Digest {
    pub kind: VerdictKind,
    /// The design to use (None: undecided).
    pub design: Option<String>,
    /// A few words: "use `build-once`", "`a` or `b` (within the noise)", "no verdict".
    pub answer: String,
    /// From what size the answer holds, as a phrase ("at every size compared, 500 to 64k rows").
    pub from: String,
    /// Where one design overtakes another, as a short phrase ("none", "`b` from about 300k rows").
    pub crossover: String,
    /// Why, as whole sentences (capitalised, ending in a full stop; names in backticks).
    pub why: Vec<String>,
    /// Where predictions are made.
    pub target: Option<u64>,
    /// The predicted cost of each design at the target, the decided design first.
    pub costs: Vec<Cost>,
    /// What to be careful about, as whole sentences.
    pub warnings: Vec<String>,
    /// The same warnings in a few words each, for one-line overviews.
    pub warning_tags: Vec<String>,
    /// What was swept when it was not rows, for labels.
    pub axis: Option<crate::results::AxisPlan>,
}

/// One design's predicted time per run at the target.
#[derive(Debug, Clone)]
pub struct Cost {
    pub design: String,
    pub rows: u64,
    pub median: f64,
    pub low: f64,
    pub high: f64,
    /// The interval is wider than ×10.
    pub rough: bool,
    /// The growth class it was predicted with ("n", "n or n log n").
    pub class: String,
    /// The factor each way the interval allows for extrapolating, and how far past the
    /// largest fitted size the target lies (`PredictionOut::allowance`).
    pub allowance: Option<(f64, f64)>,
}

impl Cost {
    /// "195 ms (142 ms to 266 ms)", or "about 3 s (an order of magnitude only)".
    pub fn phrase(&self) -> String {
        if self.rough {
            format!("about {} (an order of magnitude only)", time_ns(self.median))
        } else {
            format!("{} ({} to {})", time_ns(self.median), time_ns(self.low), time_ns(self.high))
        }
    }
    /// "; the interval allows ×1.9 either way for reaching ×4 past the largest fitted size",
    /// or nothing inside the fitted sizes.
    pub fn allowance_clause(&self) -> String {
        match self.allowance {
            Some((a, beyond)) => format!("; the interval allows ×{} either way for reaching ×{} past the largest fitted size", crate::units::short(a), crate::units::short(beyond)),
            None => String::new(),
        }
    }
    /// "~195 ms", or "~3 s (rough)" when the interval spans more than ×10.
    pub fn short(&self) -> String {
        format!("~{}{}", time_ns(self.median), if self.rough { " (rough)" } else { "" })
    }
}

fn design<'a>(a: &'a WorkloadAnalysis, name: &str) -> Option<&'a DesignAnalysis> {
    a.designs.iter().find(|d| d.design == name)
}

fn cost_of(name: &str, p: &PredictionOut, da: Option<&DesignAnalysis>) -> Cost {
    let class = da.and_then(|d| d.time.as_ref()).map(|t| t.label()).unwrap_or_else(|| p.class.clone());
    Cost { design: name.to_string(), rows: p.rows, median: p.median, low: p.low, high: p.high, rough: p.rough, class, allowance: p.allowance.map(|a| (a, p.beyond_fitted())) }
}

/// Comparisons with two or more designs and no point measured on a busy machine, by size.
fn clean_comparisons(w: &WorkloadResults) -> Vec<&ComparisonRecord> {
    let mut v: Vec<&ComparisonRecord> = w
        .comparisons
        .iter()
        .filter(|c| c.ratios.len() >= 2)
        .filter(|c| c.ratios.iter().all(|r| w.point(&r.design, c.rows).and_then(|p| p.measured.as_ref()).is_none_or(|m| !m.is_contaminated())))
        .collect();
    v.sort_by_key(|c| c.rows);
    v
}

fn fastest(c: &ComparisonRecord) -> Option<&str> {
    c.ratios.iter().min_by(|x, y| x.ratio.total_cmp(&y.ratio)).map(|r| r.design.as_str())
}

fn ratio_of(c: &ComparisonRecord, d: &str) -> Option<f64> {
    c.ratios.iter().find(|r| r.design == d).map(|r| r.ratio)
}

fn median(w: &WorkloadResults, d: &str, n: u64) -> Option<f64> {
    w.point(d, n).and_then(|p| p.measured.as_ref()).map(|m| m.median_ns)
}

/// The answer as it is being worded; the part of [`digest`] for the verdict's kind fills it.
struct Said {
    answer: String,
    from: String,
    crossover: String,
    why: Vec<String>,
}

/// Condense one workload's decision.
pub fn digest(w: &WorkloadResults, a: &WorkloadAnalysis, e: &Explanation) -> Digest {
    let v = &e.verdict;
    let cmps = clean_comparisons(w);
    let mut said = Said { answer: String::new(), from: String::new(), crossover: "none".to_string(), why: Vec::new() };
    let single = w.header.designs.len() == 1;
    match (v.kind, v.design.as_deref()) {
        (_, Some(d)) if single => {
            said.answer = format!("one design, `{d}`, tracked on its own");
            let growth = design(a, d).and_then(|x| x.time.as_ref()).map(|t| t.label());
            said.why.push(match growth {
                Some(g) => format!("Its time per run grows as {g}."),
                None => "Too few sizes were measured to fit how its time grows.".to_string(),
            });
            said.crossover = "—".into();
        }
        (VerdictKind::Winner, Some(best)) => {
            winner(&mut said, w, a, v, &cmps, best);
            // Timed without its set-up, a winner is the fastest per run, not overall: say
            // what the set-up costs (the pay-back finding).
            if let Some(f) = e.findings.iter().find(|f| f.kind == "payback" && f.design.as_deref() == Some(best)) {
                let what = f.measured.strip_prefix("its ").map_or_else(|| format!(" {}", f.measured), |rest| format!("'s {rest}"));
                said.why.push(sentence(&format!("`{best}`{what}: {}", f.implies)));
            }
        }
        (VerdictKind::Crossover, Some(to)) => crossover(&mut said, w, a, v, &cmps, to),
        (VerdictKind::Tie, Some(pick)) => {
            said.answer = format!("a tie; `{pick}` suggested");
            let at = v.decided_at.map(rows_label).unwrap_or_default();
            said.from = format!("at {at} rows, the largest size compared");
            said.why.push(sentence(&number_first(&v.text)));
        }
        _ => {
            said.answer = "no verdict".into();
            said.crossover = "—".into();
            said.why.push(sentence(&number_first(v.text.trim_start_matches("no verdict: "))));
        }
    }
    if let Some(best) = v.design.as_deref() {
        let da = design(a, best);
        let t = da.and_then(|d| d.time.as_ref()).map(|t| t.label());
        let b = da.map(|d| bytes_growth(w, d, None).0).filter(|l| l != "not counted" && l != "—" && !l.starts_with("slope"));
        match (t, b) {
            (Some(t), Some(b)) if !single => said.why.push(format!("`{best}`'s time grows as {t} and its allocated bytes as {b}.")),
            (Some(t), None) if !single => said.why.push(format!("`{best}`'s time grows as {t}.")),
            _ => {}
        }
    }
    if said.answer.is_empty() {
        said.answer = "no verdict".into();
    }

    // Cost at the target: the decided design first, then the others in workload order.
    let mut costs = Vec::new();
    let order: Vec<&str> = v.design.iter().map(String::as_str).chain(w.header.designs.iter().map(|d| d.name.as_str()).filter(|n| Some(*n) != v.design.as_deref())).collect();
    for name in order {
        if let Some(da) = design(a, name) {
            if let Some(p) = &da.prediction {
                costs.push(cost_of(name, p, Some(da)));
            }
        }
    }

    let (warnings, warning_tags) = warnings(w, a);
    Digest { kind: v.kind, design: v.design.clone(), answer: said.answer, from: said.from, crossover: said.crossover, why: said.why, target: a.predict_at, costs, warnings, warning_tags, axis: w.header.axis.clone() }
}

/// A winner: by how much at the largest size compared cleanly, from what size it leads,
/// and a crossover the fitted curves suggest but the trend does not bear out.
fn winner(said: &mut Said, w: &WorkloadResults, a: &WorkloadAnalysis, v: &Verdict, cmps: &[&ComparisonRecord], best: &str) {
    let ax = w.header.axis();
    let axis = ax.name();
    said.answer = format!("use `{best}`");
    let at = v.decided_at.and_then(|n| cmps.iter().find(|c| c.rows == n).copied()).or_else(|| cmps.last().copied());
    if let Some(c) = at {
        let mut others: Vec<_> = c.ratios.iter().filter(|r| r.design != best).collect();
        others.sort_by(|x, y| x.ratio.total_cmp(&y.ratio));
        let mine = ratio_of(c, best).unwrap_or(1.0);
        if let Some(r) = others.first() {
            let interval = match (r.low, r.high) {
                (Some(lo), Some(hi)) => format!(" (95% interval {} to {})", times(lo / mine), times(hi / mine)),
                _ => String::new(),
            };
            let t_best = median(w, best, c.rows).map(time_ns).unwrap_or_default();
            let t_run = median(w, &r.design, c.rows).map(time_ns).unwrap_or_default();
            said.why.push(format!(
                "At {} {axis}, the largest size where the designs were compared cleanly, `{best}` takes {t_best} per run and the next best, `{}`, takes {t_run}: `{best}` is {} faster{interval}.",
                ax.value(c.rows),
                r.design,
                times(r.ratio / mine)
            ));
        }
        // From what size it leads without interruption.
        let mut lead_from = c.rows;
        for k in cmps.iter().rev() {
            if k.rows > c.rows {
                continue;
            }
            if fastest(k) == Some(best) {
                lead_from = k.rows;
            } else {
                break;
            }
        }
        let first = cmps.first().map(|k| k.rows).unwrap_or(lead_from);
        if lead_from == first {
            said.from = if first == c.rows { format!("at {} {axis}, the only size compared", ax.value(c.rows)) } else { format!("at every size compared, {} to {} {axis}", ax.value(first), ax.value(c.rows)) };
        } else {
            said.from = format!("from {} {axis} (measured up to {})", ax.value(lead_from), ax.value(c.rows));
            let below = a.crossovers.iter().filter(|x| x.faster_above == best && x.inside_measured).max_by(|x, y| x.rows.total_cmp(&y.rows));
            if let Some(x) = below {
                said.crossover = format!("`{}` below about {} {axis}", x.faster_below, ax.value_f(x.rows));
                said.why.push(format!("Below about {} {axis} `{}` is cheaper.", ax.value_f(x.rows), x.faster_below));
            }
        }
    } else {
        // Every size was measured on a busy machine: the verdict's own words.
        said.why.push(sentence(&number_first(&v.text)));
    }
    if let Some((x, why)) = crate::explain::verdict::unacted_crossing(w, a, cmps, best) {
        said.why.push(format!(
            "The fitted curves of `{}` cross below the target, at about {} {axis}, {why}: measure a larger size before acting on it.",
            x.faster_above,
            ax.value_f(x.rows)
        ));
        if said.crossover == "none" {
            said.crossover = format!("`{}` fitted at about {} {axis} (not borne out by the measurements)", x.faster_above, ax.value_f(x.rows));
        }
    }
}

/// A crossover: which design from what size, and the measured trend that supports it.
fn crossover(said: &mut Said, w: &WorkloadResults, a: &WorkloadAnalysis, v: &Verdict, cmps: &[&ComparisonRecord], to: &str) {
    let ax = w.header.axis();
    let axis = ax.name();
    let at = v.decided_at.and_then(|n| cmps.iter().find(|c| c.rows == n).copied()).or_else(|| cmps.last().copied());
    let best = at.and_then(fastest).unwrap_or("").to_string();
    let x = a.crossovers.iter().find(|x| x.faster_below == best && x.faster_above == to && !x.inside_measured);
    match x {
        Some(x) => {
            said.answer = format!("use `{to}` from about {} {axis}, `{best}` below", ax.value_f(x.rows));
            said.from = format!("from about {} {axis} (between {} and {})", ax.value_f(x.rows), ax.value_f(x.rows_low), ax.value_f(x.rows_high));
            said.crossover = format!("`{to}` from about {} {axis}", ax.value_f(x.rows));
        }
        None => {
            said.answer = format!("use `{to}` at scale, `{best}` on small tables");
            said.from = "beyond the measured sizes".into();
            said.crossover = format!("`{to}` beyond the measured sizes");
        }
    }
    // The measured trend that supports it.
    let series: Vec<f64> = cmps.iter().filter_map(|c| Some(ratio_of(c, to)? / ratio_of(c, &best)?)).collect();
    let tail: Vec<String> = series.iter().rev().take(3).rev().map(|r| times(*r)).collect();
    if let Some(c) = at {
        said.why.push(format!(
            "`{best}` is the fastest up to {} {axis}, the largest size compared, but `{to}`'s cost rises more slowly: it took {} as long as `{best}` over the last {} sizes.",
            ax.value(c.rows),
            tail.join(", then "),
            tail.len()
        ));
    }
    if let Some(x) = x {
        said.why.push(format!(
            "The fitted costs cross at about {} {axis} (between {} and {}), beyond the measured sizes.",
            ax.value_f(x.rows),
            ax.value_f(x.rows_low),
            ax.value_f(x.rows_high)
        ));
    }
}
