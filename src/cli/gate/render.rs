//! The gate's report as text: the result first, then per workload one paragraph per design,
//! the machine's own move between the runs, and the tally.

use crate::track::gate::{Call, GateReport};

/// The gate's answer as text, decision first and within the terminal's width: the result,
/// then per workload one paragraph per design saying where it got slower or faster (with
/// the ratio judged, its interval and the rank test), or that it held; growth changes;
/// what could not be compared. `--json` carries every per-size figure.
pub fn render(r: &GateReport) -> String {
    use crate::present::terminal::{wrap, Options};
    use std::fmt::Write;
    let width = Options::detect(false).width;
    let mut s = String::new();
    let para = |s: &mut String, label: &str, text: &str| para(s, width, label, text);
    match &r.pair {
        Some((old, new)) => {
            let _ = writeln!(s, "framecost gate · run {} · `{new}` against `{old}`, sampled side by side", r.new_run);
        }
        None => {
            let _ = writeln!(s, "framecost gate · baseline {} · new {}", r.baseline_run, r.new_run);
        }
    }
    let answer = if r.failed() {
        let mut parts = Vec::new();
        if r.regressions > 0 {
            parts.push(format!("{} point(s) confirmed slower", r.regressions));
        }
        if r.growth_regressions > 0 {
            parts.push(format!("{} cost(s) growing faster with the data", r.growth_regressions));
        }
        if r.design_regressions > 0 {
            parts.push(format!("{} design(s) slower across their sizes taken together", r.design_regressions));
        }
        format!("worse: {} (exit 1)", parts.join(", "))
    } else {
        "no design got slower beyond its threshold (exit 0)".to_string()
    };
    para(&mut s, "result", &answer);
    if r.workloads.iter().flat_map(|w| &w.points).any(|p| p.normalised_by.as_deref() == Some("drift probe")) {
        para(&mut s, "judged on", "each size's ratio of medians (new over baseline) divided by the drift probe's at that size, so the machine's own change of speed is taken out; raw ratios are in --json");
    }
    if r.workloads.iter().flat_map(|w| &w.points).any(|p| p.memory_ratio.is_some()) {
        para(&mut s, "memory", "a change must also pass the threshold divided by the memory probe's ratio at its point (the cache sweeps before the design's samples): memory that got slower explains a slowdown away, never makes one; the probe's ratios are in --json");
    }
    if r.workloads.iter().flat_map(|w| &w.points).any(|p| p.files_ratio.is_some()) {
        para(&mut s, "files", "the designs that write files are probed before each sample (small files written, read back and removed); where that probe moved by a quarter or more the same way as a design's change, the change is shown but not judged: how much of the design's time is the file system's, the probe cannot say; its ratios are in --json");
    }
    if let Some(k) = r.history_runs {
        let judged = r.workloads.iter().filter(|w| w.history.is_some()).count();
        let text = if judged == 0 {
            format!("{k} runs of the baseline's code, but no workload had {} of them: judged against the baseline alone", crate::track::gate::HISTORY_MIN_RUNS)
        } else {
            format!(
                "{k} runs of the baseline's code, {judged} of {} workloads judged against them (a workload needs {}): a change is called only beyond how far the design wandered across those runs by itself, after each run's common move",
                r.workloads.len(),
                crate::track::gate::HISTORY_MIN_RUNS
            )
        };
        para(&mut s, "history", &text);
    }
    if let Some(rc) = &r.recheck {
        para(&mut s, "rechecked", &rechecked(r, rc));
    }
    if let Some(text) = machine_moves(r) {
        para(&mut s, "machine", &text);
    }
    if let Some(text) = &r.next_step {
        para(&mut s, "next step", text);
    }
    if let Some((b, n)) = &r.allocators_differ {
        let said = |a: &Option<String>| a.clone().unwrap_or_else(|| "not recorded (a run made before framecost recorded it)".into());
        para(&mut s, "allocator", &format!(
            "the runs were measured with the allocator tuned differently (baseline: {}; new: {}): designs that allocate and free many small blocks can move by that alone, not by the change gated",
            said(b),
            said(n)
        ));
    }
    if r.machines_differ {
        let y = r.yardstick_ratio.map(|y| format!("{y:.3}×")).unwrap_or_else(|| "unknown".into());
        para(&mut s, "machines", &format!("the runs were made on different machines or versions; ratios are judged divided by the yardstick's ({y})"));
    }
    for w in &r.workloads {
        let _ = writeln!(s, "\n── {} (threshold {:.0}%) {}", w.workload, w.threshold * 100.0, "─".repeat(width.saturating_sub(w.workload.chars().count() + 22).min(60)));
        let mut designs: Vec<&str> = Vec::new();
        for p in &w.points {
            if !designs.contains(&p.design.as_str()) {
                designs.push(&p.design);
            }
        }
        let name_w = designs.iter().map(|d| d.chars().count()).max().unwrap_or(0).clamp(8, 28);
        for d in designs {
            design_lines(&mut s, w, d, name_w, width);
        }
        workload_notes(&mut s, w, width);
    }
    for wname in &r.unmatched_workloads {
        let _ = writeln!(s);
        para(&mut s, "one run only", &format!("workload `{wname}`"));
    }
    let _ = writeln!(s);
    let tally = format!(
        "{} confirmed slower, {} slower at one size only, {} slower across its sizes taken together, {} growth change(s) for the worse, {} faster, {} point(s) not compared",
        r.regressions, r.unconfirmed_regressions, r.design_regressions, r.growth_regressions, r.improvements, r.missing
    );
    for l in wrap(&tally, width, "", "  ") {
        let _ = writeln!(s, "{l}");
    }
    s
}

/// The `rechecked` paragraph: what was swept again, on which side, and what could not be.
fn rechecked(r: &GateReport, rc: &crate::track::gate::RecheckSummary) -> String {
    let both: Vec<&str> = r.workloads.iter().filter(|w| w.recheck.as_ref().is_some_and(|h| h.baseline_runs > 0)).map(|w| w.workload.as_str()).collect();
    let one: Vec<&str> = rc.workloads.iter().map(String::as_str).filter(|w| !both.contains(w)).collect();
    let mut parts = Vec::new();
    if !one.is_empty() {
        parts.push(format!(
            "{} swept again to {} runs of the new code: a change there is called only where the baseline lies beyond how far those runs wandered by themselves, after each run's common move",
            one.join(", "),
            rc.runs
        ));
    }
    if !both.is_empty() {
        parts.push(format!(
            "{} swept again to {} runs of the new code and {} of the baseline's (from the workload text it recorded), both sides in turn: a change there is called where the new code's runs differ from the baseline's beyond the threshold and a two-sample bound (Welch's t, one-sided 97.5%), after each run's common move",
            both.join(", "),
            rc.runs,
            rc.runs
        ));
    }
    let mut text = if rc.workloads.is_empty() && rc.not_rechecked.is_empty() {
        "nothing would have failed, so nothing was swept again".to_string()
    } else if rc.workloads.is_empty() {
        "no failing workload could be swept again".to_string()
    } else {
        let base_kept = if both.is_empty() { String::new() } else { format!(", {} of the baseline's, kept in its rechecks folder", rc.baseline_swept) };
        format!("{} ({} new sweep(s) of the new code, kept in {}{base_kept})", parts.join("; "), rc.swept, rc.folder)
    };
    if let (true, Some(why)) = (both.is_empty(), &rc.baseline_not_swept) {
        text.push_str(&format!("; {why}"));
    }
    for (w, why) in &rc.not_rechecked {
        text.push_str(&format!("; {w} not rechecked: {why}"));
    }
    text
}

/// One labelled paragraph of the gate's answer, wrapped to the width.
fn para(s: &mut String, width: usize, label: &str, text: &str) {
    use crate::present::terminal::wrap;
    use std::fmt::Write;
    let first = format!("  {label:<13}");
    let rest = " ".repeat(first.chars().count());
    for l in wrap(text, width, &first, &rest) {
        let _ = writeln!(s, "{l}");
    }
}

/// A design's call against runs of one side's code (`--history`, `--recheck`), in words;
/// `what` says what its ratio is, given the number of runs.
fn against_runs(h: Option<&crate::track::gate::History>, d: &str, how: &str, what: &dyn Fn(usize) -> String) -> Option<String> {
    let h = h?;
    let m = h.moves.iter().find(|m| m.design == d && matches!(m.call, Call::Regression | Call::Improvement))?;
    let word = if m.call == Call::Regression { "slower" } else { "faster" };
    Some(format!(
        "{word} {how}: {:.2}× over {} sizes ({} of them the same way), {}, relative to each run's common move (raw medians {:.2}×), beyond the ×{:.2} those runs allow (their own spread ×{:.3})",
        m.ratio,
        m.sizes,
        m.same_way,
        what(h.runs),
        m.raw_ratio,
        m.bar,
        m.spread
    ))
}

/// One design's paragraph: where it got slower or faster (ratio judged, interval, rank
/// test), or that it held.
fn design_lines(s: &mut String, w: &crate::track::gate::WorkloadGate, d: &str, name_w: usize, width: usize) {
    use crate::present::terminal::wrap;
    use std::fmt::Write;
    let mut pts: Vec<_> = w.points.iter().filter(|p| p.design == d).collect();
    pts.sort_by_key(|p| p.rows);
    let judged = |p: &crate::track::gate::PointGate| p.normalised_ratio.unwrap_or(p.ratio);
    let ax = crate::results::schema::Axis(w.axis.as_ref());
    let sizes = |v: &[&&crate::track::gate::PointGate]| v.iter().map(|p| ax.point(p.rows)).collect::<Vec<_>>().join(", ");
    let times = |v: &[&&crate::track::gate::PointGate]| v.iter().map(|p| format!("{:.2}×", judged(p))).collect::<Vec<_>>().join(", ");
    let detail = |v: &[&&crate::track::gate::PointGate]| {
        let ivs: Vec<String> = v
            .iter()
            .filter_map(|p| match (p.shift, p.ratio_low, p.ratio_high) {
                // The interval belongs to the pairwise (Hodges–Lehmann) estimate, not to the
                // ratio of medians: printed together, no estimate sits outside its interval.
                (Some(h), Some(a), Some(b)) => Some(format!("{h:.2}× [{a:.2}×–{b:.2}×]")),
                (None, Some(a), Some(b)) => Some(format!("[{a:.2}×–{b:.2}×]")),
                _ => None,
            })
            .collect();
        let p_max = v.iter().filter_map(|p| p.p_value).fold(f64::NAN, f64::max);
        let mut t = String::new();
        if !ivs.is_empty() {
            t.push_str(&format!("; pairwise estimate [95% interval] {}", ivs.join(", ")));
        }
        let q_max = v.iter().filter_map(|p| p.q_value).fold(f64::NAN, f64::max);
        if p_max.is_finite() {
            t.push_str(&format!("; rank test p ≤ {p_max:.1e}"));
            if q_max.is_finite() {
                t.push_str(&format!(", q ≤ {q_max:.1e} over the {} points compared in this workload", w.points.len()));
            }
        }
        t
    };
    let pick = |call: Call, confirmed: bool| pts.iter().filter(|p| p.call == call && p.confirmed == confirmed).collect::<Vec<_>>();
    let (slower, faster) = (pick(Call::Regression, true), pick(Call::Improvement, true));
    let (slower1, faster1) = (pick(Call::Regression, false), pick(Call::Improvement, false));
    let mut said = Vec::new();
    let whole = w.moves.iter().find(|m| m.design == d && matches!(m.call, Call::Regression | Call::Improvement));
    if let Some(m) = whole {
        let word = if m.call == Call::Regression { "slower" } else { "faster" };
        let against = if w.common_mode.is_some() { " relative to the workload's common move" } else { "" };
        said.push(format!(
            "{word} across its sizes taken together: {:.2}× [95% interval {:.2}×–{:.2}×] the baseline's time{against}, the same way at {} of {} sizes (raw medians {:.2}×)",
            m.ratio, m.ratio_low, m.ratio_high, m.same_way, m.sizes, m.raw_ratio
        ));
    }
    let hist = w.history.as_ref();
    let again = w.recheck.as_ref();
    said.extend(against_runs(hist, d, "than its history", &|k| format!("the new run's time over the mean of {k} runs of the baseline's code")));
    match again.filter(|h| h.baseline_runs > 0) {
        Some(h) => said.extend(against_runs(again, d, "in the new code's runs than in the baseline's", &|k| format!("the mean of {k} runs of the new code over the mean of {} of the baseline's", h.baseline_runs))),
        None => said.extend(against_runs(again, d, "in the new code's own runs", &|k| format!("the mean of {k} runs of the new code over the baseline's time"))),
    }
    if !slower.is_empty() {
        said.push(format!("got slower at {}: {} the baseline's time{}", sizes(&slower), times(&slower), detail(&slower)));
    }
    if !faster.is_empty() {
        said.push(format!("got faster at {}: {} the baseline's time{}", sizes(&faster), times(&faster), detail(&faster)));
    }
    for (v, word) in [(&slower1, "slower"), (&faster1, "faster")] {
        let (small, lone): (Vec<_>, Vec<_>) = v.iter().copied().partition(|p| p.small_only);
        if !lone.is_empty() {
            said.push(format!("{word} at {} only ({}), not confirmed by a neighbouring size", sizes(&lone), times(&lone)));
        }
        if !small.is_empty() {
            let tail = if whole.is_some() { "reported" } else { "reported, not failing" };
            said.push(format!("{word} at {} ({}), but not at its largest size: {tail}", sizes(&small), times(&small)));
        }
    }
    let busy = pts.iter().filter(|p| p.call == Call::Unclear && p.busy).count();
    let split = pts.iter().filter(|p| p.call == Call::Unclear && p.split && !p.busy).count();
    let files: Vec<f64> = pts.iter().filter(|p| p.call == Call::Unclear && p.files_moved && !p.split && !p.busy).filter_map(|p| p.files_ratio).collect();
    let held_in = |h: Option<&crate::track::gate::History>, p: &crate::track::gate::PointGate| h.is_some_and(|h| h.held.iter().any(|(hd, n)| hd == d && *n == p.rows));
    let held_by_history = |p: &crate::track::gate::PointGate| held_in(hist, p);
    let held_by_recheck = |p: &crate::track::gate::PointGate| held_in(again, p) && !held_in(hist, p);
    let within_history = pts.iter().filter(|p| p.call == Call::Unclear && held_by_history(p)).count();
    let within_recheck = pts.iter().filter(|p| p.call == Call::Unclear && held_by_recheck(p)).count();
    let unclear = pts.iter().filter(|p| p.call == Call::Unclear && !p.busy && !p.split && !p.files_moved && !held_by_history(p) && !held_by_recheck(p)).count();
    let held: Vec<f64> = pts.iter().filter(|p| p.call == Call::Same).map(|p| judged(p)).collect();
    if said.is_empty() {
        let lo = held.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = held.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let range = if held.is_empty() { String::new() } else { format!(" ({lo:.2}× to {hi:.2}× the baseline's time)") };
        said.push(format!("no change judged at {} of {} sizes{range}", held.len(), pts.len()));
    } else if !held.is_empty() {
        said.push(format!("no change judged at the other {} size(s)", held.len()));
    }
    if unclear > 0 {
        said.push(format!("{unclear} size(s) beyond the threshold but not significant"));
    }
    if within_history > 0 {
        said.push(format!("{within_history} size(s) beyond the threshold against the baseline but within how far its {} history runs wandered, not judged", hist.map_or(0, |h| h.runs)));
    }
    if within_recheck > 0 {
        let runs = match again {
            Some(h) if h.baseline_runs > 0 => format!("{} runs of the new code and {} of the baseline's differ", h.runs, h.baseline_runs),
            h => format!("{} runs of the new code wandered", h.map_or(0, |h| h.runs)),
        };
        said.push(format!("{within_recheck} size(s) beyond the threshold against the baseline but within how far {runs}, not judged"));
    }
    if busy > 0 {
        said.push(format!("{busy} size(s) beyond the threshold but measured on a busy machine, not judged"));
    }
    if !files.is_empty() {
        let lo = files.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = files.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let range = if (hi / lo - 1.0).abs() < 0.005 { format!("×{lo:.2}") } else { format!("×{lo:.2} to ×{hi:.2}") };
        said.push(format!("{} size(s) beyond the threshold but the file system moved the same way (its probe {range} the baseline's time), not judged", files.len()));
    }
    if split > 0 {
        said.push(format!("{split} size(s) beyond the threshold but with samples in two separate groups (a median that can land in either), not judged"));
    }
    let first = format!("  {d:<name_w$}  ");
    let rest = " ".repeat(first.chars().count());
    for l in wrap(&said.join("; "), width, &first, &rest) {
        let _ = writeln!(s, "{l}");
    }
}

/// What a workload adds after its designs: growth changes, a move of the whole workload,
/// points and designs not compared.
fn workload_notes(s: &mut String, w: &crate::track::gate::WorkloadGate, width: usize) {
    let para = |s: &mut String, label: &str, text: &str| para(s, width, label, text);
    for g in &w.growth {
        let word = match g.call {
            Call::Regression => "now grows faster with the data",
            Call::Improvement => "now grows slower with the data",
            _ => continue,
        };
        let iv = |v: Option<(f64, f64)>| v.map(|(a, b)| format!(" [{a:.2}–{b:.2}]")).unwrap_or_default();
        para(
            s,
            "growth",
            &format!(
                "`{}`: its {} {word}: class {} → {}, log-log slope {:.2}{} → {:.2}{} over {} sizes",
                g.design,
                g.metric,
                g.base_class.clone().unwrap_or_else(|| "?".into()),
                g.new_class.clone().unwrap_or_else(|| "?".into()),
                g.base_exponent.unwrap_or(f64::NAN),
                iv(g.base_interval),
                g.new_exponent.unwrap_or(f64::NAN),
                iv(g.new_interval),
                g.sizes.len()
            ),
        );
    }
    if let Some(cm) = w.common_mode.as_ref().filter(|cm| (cm.ratio - 1.0).abs() > w.threshold) {
        para(
            s,
            "together",
            &format!(
                "the whole workload moved to {:.2}× the baseline's time ({}): the environment, or a change every design shares; reported, not judged — each point is judged against it",
                cm.ratio,
                if cm.spread > 0.0 { format!("median of its points, spread {:.2}×", cm.spread.exp()) } else { "the smaller of its two designs' moves".to_string() }
            ),
        );
    }
    for m in &w.missing {
        let ax = crate::results::schema::Axis(w.axis.as_ref());
        para(s, "not compared", &format!("`{}` at {} (baseline: {}; new: {})", m.design, ax.point(m.rows), m.baseline, m.new));
    }
    for d in &w.unmatched_designs {
        para(s, "one run only", &format!("design `{d}`"));
    }
}

/// How far the machine itself moved between the two runs, as its probes saw it: the
/// yardstick (once per run), the drift probe and the memory probe (at every compared point)
/// and the files probe (at the points of designs that write files),
/// each as the range holding the middle 80% of the points. When the range reaches past the
/// threshold either way, a one-point change of that size cannot be told from the machine's
/// own, and the text says so: between back-to-back catalog sweeps of unchanged code on a
/// shared 2-core machine the memory probe moved 0.9× to 1.9× within one pairing.
fn machine_moves(r: &GateReport) -> Option<String> {
    let m = r.machine_move()?;
    let mut said = Vec::new();
    if let Some(y) = m.yardstick {
        said.push(format!("the yardstick took {y:.2}× the baseline's time"));
    }
    let probes: Vec<String> = [("drift probe", m.drift), ("memory probe", m.memory), ("files probe", m.files)]
        .into_iter()
        .filter_map(|(name, range)| range.map(|(lo, hi)| format!("the {name} {lo:.2}× to {hi:.2}×")))
        .collect();
    if !probes.is_empty() {
        said.push(format!("{} (the middle 80% of the points)", probes.join(" and ")));
    }
    let threshold = r.workloads.iter().map(|w| w.threshold).fold(f64::INFINITY, f64::min);
    let mut text = format!("between the runs {}", said.join("; "));
    if threshold.is_finite() && m.widest() > 1.0 + threshold {
        text.push_str(&format!(
            ". The machine itself moved by more than the threshold ({:.0}%): a change of that size at one point cannot be told from it, so a point counts only when a neighbouring size agrees and it stands out from its workload's common move, and a design when its sizes taken together moved clearly one way; to be sure of a small change, measure both versions side by side in one sweep and gate them with `--pair OLD:NEW`",
            threshold * 100.0
        ));
    }
    Some(text)
}


#[cfg(test)]
mod tests {
    use super::*;
    use crate::track::gate::{PointGate, WorkloadGate};

    fn report(moves: &[(f64, f64)]) -> GateReport {
        let points = moves
            .iter()
            .enumerate()
            .map(|(i, &(drift, memory))| PointGate {
                design: "d".into(),
                rows: 1000 << i,
                base_median_ns: 1e6,
                new_median_ns: 1e6 * drift,
                ratio: drift,
                shift: None,
                ratio_low: None,
                ratio_high: None,
                normalised_ratio: Some(1.0),
                normalised_by: Some("drift probe".into()),
                memory_ratio: Some(memory),
                files_ratio: None,
            files_moved: false,
            size_move: None,
                p_value: None,
                q_value: None,
                call: Call::Same,
                confirmed: false,
                busy: false,
                split: false,
                small_only: false,
            })
            .collect();
        let w = WorkloadGate { workload: "w".into(), threshold: 0.1, points, growth: vec![], missing: vec![], unmatched_designs: vec![], common_mode: None, axis: None, moves: vec![], history: None, recheck: None };
        GateReport { baseline_run: "a".into(), new_run: "b".into(), yardstick_ratio: Some(1.02), workloads: vec![w], ..Default::default() }
    }

    #[test]
    fn the_machines_own_move_is_stated_and_warned_of_past_the_threshold() {
        // The drift probe's ratio is recovered as ratio / normalised ratio.
        let quiet = machine_moves(&report(&[(1.01, 0.99), (1.03, 1.02), (0.98, 1.0), (1.02, 1.04)])).unwrap();
        assert!(quiet.contains("yardstick took 1.02×") && quiet.contains("drift probe") && quiet.contains("memory probe"), "{quiet}");
        assert!(!quiet.contains("moved by more than the threshold"), "{quiet}");
        let moved = machine_moves(&report(&[(1.0, 1.0), (1.05, 1.3), (1.1, 1.5), (1.0, 1.45)])).unwrap();
        assert!(moved.contains("moved by more than the threshold (10%)"), "{moved}");
        let mut other = report(&[(1.0, 1.0)]);
        other.machines_differ = true;
        assert_eq!(machine_moves(&other), None, "different machines are said elsewhere");
    }

}
