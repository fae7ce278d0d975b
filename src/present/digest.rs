//! The decision of one workload, condensed once for every reader (the terminal summary,
//! the HTML and the Markdown report): which design, from what size, at what cost at the
//! target, and why — then the warnings and the findings grouped so that no sentence is
//! said twice.
//!
//! A newcomer must know: the verdict itself is decided in `explain::verdict`; this module
//! only words it. Everything here is computed from saved results and their analysis, with
//! no clock and no randomness, so the same results always give the same words.

use crate::analyse::{DesignAnalysis, PredictionOut, WorkloadAnalysis};
use crate::explain::{Explanation, Finding, VerdictKind};
use crate::fit::growth::GrowthClass;
use crate::units::time_ns;
use crate::results::reader::WorkloadResults;
use crate::results::{ComparisonRecord, EquivalenceStatus, SkipReason};
use crate::units::rows_label;

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
    /// "~195 ms", or "~3 s (rough)" when the interval spans more than ×10.
    pub fn short(&self) -> String {
        format!("~{}{}", time_ns(self.median), if self.rough { " (rough)" } else { "" })
    }
}

/// "57×", "5.0×", "1.3×": how many times as fast, in framecost's own wording.
pub fn times(r: f64) -> String {
    if !r.is_finite() {
        "—".into()
    } else if r >= 10.0 {
        format!("{r:.0}×")
    } else {
        format!("{r:.1}×")
    }
}

/// A fragment made into a sentence: first letter upper-case, ending in a full stop.
pub fn sentence(s: &str) -> String {
    let t = s.trim().trim_end_matches([';', ',', ':']).trim_end();
    let mut out = String::with_capacity(t.len() + 1);
    let mut chars = t.chars();
    if let Some(c) = chars.next() {
        out.extend(c.to_uppercase());
        out.push_str(chars.as_str());
    }
    if !out.is_empty() && !out.ends_with(['.', '!', '?']) {
        out.push('.');
    }
    out
}

/// Ratios written the old way round ("×1.06") put the number first ("1.06×"), the way every
/// other multiple in framecost's summaries reads.
pub fn number_first(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '×' && chars.peek().is_some_and(|d| d.is_ascii_digit()) {
            let mut num = String::new();
            while let Some(&d) = chars.peek() {
                if d.is_ascii_digit() || (d == '.' && !num.is_empty()) {
                    num.push(d);
                    chars.next();
                } else {
                    break;
                }
            }
            let trail = if num.ends_with('.') { num.pop(); "." } else { "" };
            out.push_str(&num);
            out.push('×');
            out.push_str(trail);
        } else {
            out.push(c);
        }
    }
    out
}

/// True when a design's points carry allocation counts. Designs that cannot count their
/// allocations (a program run outside the process, measured by its resident memory) record
/// none at all; every built-in or SQL design allocates at least its output table.
pub fn counts_allocations(w: &WorkloadResults, design: &str) -> bool {
    let pts: Vec<_> = w.design_points(design).into_iter().filter_map(|p| p.measured.as_ref()).collect();
    pts.is_empty() || pts.iter().any(|m| m.alloc_counted && (m.alloc.count > 0 || m.alloc.bytes > 0 || m.alloc.peak_live > 0))
}

/// Allocated bytes that are the same at every measured size (two or more): constant, with no
/// fit needed (a fit of identical values has nothing to choose between).
pub fn same_bytes_everywhere(w: &WorkloadResults, design: &str) -> bool {
    let b: Vec<u64> = w.design_points(design).into_iter().filter_map(|p| p.measured.as_ref().map(|m| m.alloc.bytes)).collect();
    b.len() >= 2 && b.iter().all(|x| *x == b[0])
}

/// How a design's allocated bytes grow, for the tables: the fitted class, "constant" when
/// they are the same at every size, "slope s" from the exponent alone, or "not counted".
/// With it, whether an expected class is met (None: cannot be judged).
pub fn bytes_growth(w: &WorkloadResults, da: &DesignAnalysis, expect: Option<&str>) -> (String, Option<bool>) {
    let want = expect.and_then(GrowthClass::from_label);
    if !counts_allocations(w, &da.design) {
        return ("not counted".into(), None);
    }
    match (&da.bytes, da.bytes_exponent) {
        (Some(b), _) => (b.label(), want.map(|c| b.admits(c))),
        _ if same_bytes_everywhere(w, &da.design) => ("constant".into(), want.map(|c| c == GrowthClass::Constant)),
        (None, Some(e)) => (format!("slope {e:.2}"), None),
        (None, None) => ("—".into(), None),
    }
}

fn design<'a>(a: &'a WorkloadAnalysis, name: &str) -> Option<&'a DesignAnalysis> {
    a.designs.iter().find(|d| d.design == name)
}

fn cost_of(name: &str, p: &PredictionOut, da: Option<&DesignAnalysis>) -> Cost {
    let class = da.and_then(|d| d.time.as_ref()).map(|t| t.label()).unwrap_or_else(|| p.class.clone());
    Cost { design: name.to_string(), rows: p.rows, median: p.median, low: p.low, high: p.high, rough: p.rough, class }
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

/// Condense one workload's decision.
pub fn digest(w: &WorkloadResults, a: &WorkloadAnalysis, e: &Explanation) -> Digest {
    let ax = w.header.axis();
    let axis = ax.name();
    let v = &e.verdict;
    let cmps = clean_comparisons(w);
    let mut why = Vec::new();
    let mut answer;
    let mut from = String::new();
    let mut crossover = "none".to_string();
    let single = w.header.designs.len() == 1;
    match (v.kind, v.design.as_deref()) {
        (_, Some(d)) if single => {
            answer = format!("one design, `{d}`, tracked on its own");
            let growth = design(a, d).and_then(|x| x.time.as_ref()).map(|t| t.label());
            why.push(match growth {
                Some(g) => format!("Its time per run grows as {g}."),
                None => "Too few sizes were measured to fit how its time grows.".to_string(),
            });
            crossover = "—".into();
        }
        (VerdictKind::Winner, Some(best)) => {
            answer = format!("use `{best}`");
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
                    why.push(format!(
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
                    from = if first == c.rows { format!("at {} {axis}, the only size compared", ax.value(c.rows)) } else { format!("at every size compared, {} to {} {axis}", ax.value(first), ax.value(c.rows)) };
                } else {
                    from = format!("from {} {axis} (measured up to {})", ax.value(lead_from), ax.value(c.rows));
                    let below = a.crossovers.iter().filter(|x| x.faster_above == best && x.inside_measured).max_by(|x, y| x.rows.total_cmp(&y.rows));
                    if let Some(x) = below {
                        crossover = format!("`{}` below about {} {axis}", x.faster_below, ax.value_f(x.rows));
                        why.push(format!("Below about {} {axis} `{}` is cheaper.", ax.value_f(x.rows), x.faster_below));
                    }
                }
            } else {
                // Every size was measured on a busy machine: the verdict's own words.
                why.push(sentence(&number_first(&v.text)));
            }
            if let Some(x) = a.crossovers.iter().find(|x| x.faster_below == best && !x.inside_measured && a.predict_at.is_some_and(|t| x.rows <= t as f64)) {
                why.push(format!(
                    "The fitted curves of `{}` cross below the target, at about {} {axis}, but its measured ratio to `{best}` is not shrinking steadily: measure a larger size before acting on it.",
                    x.faster_above,
                    ax.value_f(x.rows)
                ));
                if crossover == "none" {
                    crossover = format!("`{}` fitted at about {} {axis} (not borne out by the trend)", x.faster_above, ax.value_f(x.rows));
                }
            }
        }
        (VerdictKind::Crossover, Some(to)) => {
            let at = v.decided_at.and_then(|n| cmps.iter().find(|c| c.rows == n).copied()).or_else(|| cmps.last().copied());
            let best = at.and_then(fastest).unwrap_or("").to_string();
            let x = a.crossovers.iter().find(|x| x.faster_below == best && x.faster_above == to && !x.inside_measured);
            match x {
                Some(x) => {
                    answer = format!("use `{to}` from about {} {axis}, `{best}` below", ax.value_f(x.rows));
                    from = format!("from about {} {axis} (between {} and {})", ax.value_f(x.rows), ax.value_f(x.rows_low), ax.value_f(x.rows_high));
                    crossover = format!("`{to}` from about {} {axis}", ax.value_f(x.rows));
                }
                None => {
                    answer = format!("use `{to}` at scale, `{best}` on small tables");
                    from = "beyond the measured sizes".into();
                    crossover = format!("`{to}` beyond the measured sizes");
                }
            }
            // The measured trend that supports it.
            let series: Vec<f64> = cmps.iter().filter_map(|c| Some(ratio_of(c, to)? / ratio_of(c, &best)?)).collect();
            let tail: Vec<String> = series.iter().rev().take(3).rev().map(|r| times(*r)).collect();
            if let Some(c) = at {
                why.push(format!(
                    "`{best}` is the fastest up to {} {axis}, the largest size compared, but `{to}`'s cost rises more slowly: it took {} as long as `{best}` over the last {} sizes.",
                    ax.value(c.rows),
                    tail.join(", then "),
                    tail.len()
                ));
            }
            if let Some(x) = x {
                why.push(format!(
                    "The fitted costs cross at about {} {axis} (between {} and {}), beyond the measured sizes.",
                    ax.value_f(x.rows),
                    ax.value_f(x.rows_low),
                    ax.value_f(x.rows_high)
                ));
            }
        }
        (VerdictKind::Tie, Some(pick)) => {
            answer = format!("a tie; `{pick}` suggested");
            let at = v.decided_at.map(rows_label).unwrap_or_default();
            from = format!("at {at} rows, the largest size compared");
            why.push(sentence(&number_first(&v.text)));
        }
        _ => {
            answer = "no verdict".into();
            crossover = "—".into();
            why.push(sentence(&number_first(v.text.trim_start_matches("no verdict: "))));
        }
    }
    if let Some(best) = v.design.as_deref() {
        let da = design(a, best);
        let t = da.and_then(|d| d.time.as_ref()).map(|t| t.label());
        let b = da.map(|d| bytes_growth(w, d, None).0).filter(|l| l != "not counted" && l != "—" && !l.starts_with("slope"));
        match (t, b) {
            (Some(t), Some(b)) if !single => why.push(format!("`{best}`'s time grows as {t} and its allocated bytes as {b}.")),
            (Some(t), None) if !single => why.push(format!("`{best}`'s time grows as {t}.")),
            _ => {}
        }
    }
    if answer.is_empty() {
        answer = "no verdict".into();
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
    Digest { kind: v.kind, design: v.design.clone(), answer, from, crossover, why, target: a.predict_at, costs, warnings, warning_tags, axis: w.header.axis.clone() }
}

/// Workload-level warnings, as sentences and as a few words each.
fn warnings(w: &WorkloadResults, a: &WorkloadAnalysis) -> (Vec<String>, Vec<String>) {
    let ax = w.header.axis();
    let axis = ax.name();
    let mut long = Vec::new();
    let mut tags = Vec::new();
    if let Some(c) = w.comparisons.iter().find(|c| c.equivalence.status == EquivalenceStatus::Mismatch) {
        long.push(sentence(&format!("the designs do not compute the same result (first at {} {axis}: {}), so their costs are not comparable", ax.value(c.rows), c.equivalence.note)));
        tags.push("outputs differ".to_string());
    }
    let measured: Vec<_> = w.points.iter().filter_map(|p| p.measured.as_ref()).collect();
    let busy = measured.iter().filter(|m| m.is_contaminated()).count();
    if busy > 0 {
        long.push(format!(
            "{busy} of {} points were measured while the machine was busy; they are left out of growth classes and the verdict.",
            measured.len()
        ));
        tags.push(format!("busy machine ({busy} points)"));
    }
    for d in &w.header.designs {
        let pts = w.design_points(&d.name);
        let failed: Vec<_> = pts.iter().filter(|p| p.skipped.as_ref().is_some_and(|s| s.reason == SkipReason::Failed)).collect();
        if let Some(p) = failed.first() {
            let detail = p.skipped.as_ref().map(|s| s.detail.as_str()).unwrap_or("");
            long.push(sentence(&format!("`{}` failed at {} {axis}: {detail}", d.name, ax.value(p.rows))));
            tags.push(format!("`{}` failed", d.name));
        }
        let skipped: Vec<_> = pts.iter().filter(|p| p.skipped.as_ref().is_some_and(|s| s.reason != SkipReason::Failed)).collect();
        if let Some(p) = skipped.first() {
            let reason = p.skipped.as_ref().map(|s| s.reason.label()).unwrap_or("");
            long.push(format!(
                "`{}` was not run at {} of {} sizes, from {} {axis} ({reason}).",
                d.name,
                skipped.len(),
                w.header.sizes.len(),
                ax.value(p.rows)
            ));
            tags.push(format!("`{}` not run from {} {axis}", d.name, ax.value(p.rows)));
        }
    }
    let far: Vec<&PredictionOut> = a.designs.iter().filter_map(|d| d.prediction.as_ref()).filter(|p| p.far).collect();
    if let Some(first) = far.first() {
        let lo = far.iter().map(|p| p.extrapolation_decades).fold(f64::INFINITY, f64::min);
        let hi = far.iter().map(|p| p.extrapolation_decades).fold(0.0, f64::max);
        let span = if hi - lo < 0.05 { format!("{lo:.1} decades") } else { format!("{lo:.1} to {hi:.1} decades") };
        let who = if far.len() == a.designs.len() { "every design".to_string() } else { format!("{} of {} designs", far.len(), a.designs.len()) };
        long.push(format!(
            "The target, {} {axis}, is {span} past the largest measured size for {who}: a class fitted on small sizes can change at large ones, so read the predictions there as an order of magnitude, and measure closer to the target if the decision depends on it.",
            ax.value(first.rows)
        ));
        tags.push(format!("target {span} past the data"));
    }
    (long, tags)
}

/// Findings sharing what they imply and what to do, with the designs they were measured on.
#[derive(Debug, Clone)]
pub struct Group {
    pub kind: String,
    pub implies: String,
    pub action: String,
    /// (design or None for the workload, what was measured).
    pub measured: Vec<(Option<String>, String)>,
}

/// Groups under one heading: the designs they concern (empty: the workload as a whole).
#[derive(Debug, Clone)]
pub struct Section {
    pub designs: Vec<String>,
    pub groups: Vec<Group>,
}

/// Kinds of finding the summaries show elsewhere (the growth table, the warnings).
pub const SHOWN_ELSEWHERE: &[&str] = &["growth", "extrapolation", "machine", "mismatch", "skipped"];

/// The findings grouped so that no sentence is said twice: findings with the same kind,
/// implication and action are one group listing each design's measurement, and groups
/// concerning the same designs share a heading. Unless `all`, findings shown elsewhere and
/// expectations the measurement confirms are left out.
pub fn sections(findings: &[Finding], all: bool) -> Vec<Section> {
    let mut groups: Vec<Group> = Vec::new();
    for f in findings {
        if !all && (SHOWN_ELSEWHERE.contains(&f.kind.as_str()) || (f.kind == "expectation" && f.implies == "the measurement confirms the rule")) {
            continue;
        }
        let (measured, implies, action) = (number_first(&f.measured), number_first(&f.implies), number_first(&f.action));
        match groups.iter_mut().find(|g| g.kind == f.kind && g.implies == implies && g.action == action) {
            Some(g) => g.measured.push((f.design.clone(), measured)),
            None => groups.push(Group { kind: f.kind.clone(), implies, action, measured: vec![(f.design.clone(), measured)] }),
        }
    }
    let mut out: Vec<Section> = Vec::new();
    for g in groups {
        let mut who: Vec<String> = Vec::new();
        for (d, _) in &g.measured {
            if let Some(d) = d {
                if !who.contains(d) {
                    who.push(d.clone());
                }
            }
        }
        match out.iter_mut().find(|s| s.designs == who) {
            Some(s) => s.groups.push(g),
            None => out.push(Section { designs: who, groups: vec![g] }),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn f(design: &str, kind: &str, measured: &str, implies: &str) -> Finding {
        Finding { design: Some(design.into()), kind: kind.into(), measured: measured.into(), implies: implies.into(), action: String::new() }
    }

    #[test]
    fn sentences_are_clean() {
        assert_eq!(sentence("the cost barely depends on rows"), "The cost barely depends on rows.");
        assert_eq!(sentence("`a` is fine;"), "`a` is fine.");
        assert_eq!(sentence("Done."), "Done.");
        assert_eq!(times(57.04), "57×");
        assert_eq!(times(4.96), "5.0×");
        assert_eq!(number_first("within the noise (×1.06 [×0.98–×1.12]) by ×2."), "within the noise (1.06× [0.98×–1.12×]) by 2×.");
    }

    #[test]
    fn a_shared_implication_is_said_once() {
        let same = "read it as an order of magnitude";
        let fs = vec![
            f("a", "tail", "p99 is 3× the median", same),
            f("b", "tail", "p99 is 4× the median", same),
            f("a", "chunks", "leaves 64 chunks", "storage is fragmented"),
        ];
        let s = sections(&fs, false);
        let text: Vec<&str> = s.iter().flat_map(|s| s.groups.iter().map(|g| g.implies.as_str())).collect();
        assert_eq!(text.iter().filter(|t| **t == same).count(), 1);
        assert_eq!(s[0].designs, vec!["a".to_string(), "b".to_string()]);
        assert_eq!(s[0].groups[0].measured.len(), 2);
        assert_eq!(s[1].designs, vec!["a".to_string()]);
    }
}
