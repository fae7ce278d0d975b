//! The regression gate: compare a baseline run with a new run of the same workloads, size by
//! size and class by class.
//!
//! A point (design × size) is a **regression** only when both hold: the ratio of medians
//! new/base exceeds the threshold (default 10%, or the workload's `gate.threshold`), and a
//! two-sided Mann–Whitney test on the samples is significant (α = 0.05). Improvements are
//! judged alike. A regression fails the gate when it is **confirmed**: seen at a
//! neighbouring size of the same design too (or the design was compared at one size only).
//! Samples within one run share that run's conditions, so a single point can differ between
//! two runs by more than its own samples suggest; a change in the code shows at more than
//! one size. Unconfirmed regressions are reported, not hidden.
//!
//! A design has a **growth regression** when its time exponent over the sizes both runs
//! measured rose by 0.1 or more (`--growth-rise`) with the two bootstrap intervals apart
//! **and** the per-size comparisons agree — the largest size is a confirmed regression and
//! the ratio new/base grew by more than the threshold from the smallest size to the largest
//! (bootstrap intervals within one run are narrower than the variation between runs of
//! unchanged code) — or when its allocated-bytes exponent (exact counts) rose by 0.15 or
//! more. Points missing from either run are reported, not ignored.
//!
//! Machine speed: each size of a run also times a fixed drift probe in the same rounds as
//! the designs, so a ratio can be divided by how much faster or slower the machine itself
//! was at that size (a busy neighbour, a slower machine, another polars build affects the
//! designs and the probe alike; a slower design does not move the probe). That corrected
//! ratio is judged together with the raw one: a change is called only when both pass the
//! threshold in the same direction, so the correction can explain a change away but never
//! create one from equal medians. Both are shown. Runs without probes fall back to dividing
//! by the ratio of the runs' yardsticks when the machines differ. A newcomer must know: this works from saved results
//! alone and never reruns anything.

use super::stats::{hodges_lehmann_ratio_ci, mann_whitney, Method};
use crate::analyse::fit_time;
use crate::results::reader::{RunResults, WorkloadResults};
use crate::results::Measured;
use serde::{Deserialize, Serialize};

/// Settings of a gate.
#[derive(Debug, Clone)]
pub struct GateOptions {
    /// Replace every workload's threshold (a share: 0.1 = 10%).
    pub threshold: Option<f64>,
    /// Significance level of the rank test.
    pub alpha: f64,
    /// Time-exponent rise that counts as a growth regression; None turns the growth check
    /// of time off (bytes are exact counts and keep their own rule).
    pub growth_rise: Option<f64>,
}

impl Default for GateOptions {
    fn default() -> Self {
        GateOptions { threshold: None, alpha: 0.05, growth_rise: Some(TIME_EXPONENT_RISE) }
    }
}

/// The default share a median may grow before it counts.
pub const DEFAULT_THRESHOLD: f64 = 0.10;
/// Exponent rise that counts as a growth regression (time, with separated intervals).
pub const TIME_EXPONENT_RISE: f64 = 0.10;
/// Exponent rise that counts as a growth regression of allocated bytes (exact counts).
pub const BYTES_EXPONENT_RISE: f64 = 0.15;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Call {
    Regression,
    Improvement,
    /// Within the threshold, or a difference the test does not support.
    Same,
    /// Beyond the threshold, but too few samples (or too much noise) to be significant.
    Unclear,
}

impl Call {
    pub fn mark(self) -> &'static str {
        match self {
            Call::Regression => "▲",
            Call::Improvement => "▼",
            Call::Same => "·",
            Call::Unclear => "?",
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct PointGate {
    pub design: String,
    pub rows: u64,
    pub base_median_ns: f64,
    pub new_median_ns: f64,
    /// new / base, raw.
    pub ratio: f64,
    /// Hodges–Lehmann estimate of the ratio (the median of all pairwise ratios, after the
    /// same correction as `normalised_ratio`), the centre of the interval below.
    #[serde(default)]
    pub shift: Option<f64>,
    /// Hodges–Lehmann (Moses) interval of that estimate (95%), when the samples allow one.
    pub ratio_low: Option<f64>,
    pub ratio_high: Option<f64>,
    /// The ratio corrected for the machine's own speed: divided by the drift probe's ratio at
    /// this size (both runs timed the probe in the same rounds as the designs), or, without
    /// probes, by the yardstick ratio when the machines differ. This is the ratio judged.
    pub normalised_ratio: Option<f64>,
    /// What the ratio was divided by: "drift probe" or "yardstick".
    #[serde(default)]
    pub normalised_by: Option<String>,
    pub p_value: Option<f64>,
    pub call: Call,
    /// A regression or improvement seen at a neighbouring size of the same design too (or
    /// the design was compared at one size only). Only confirmed changes fail the gate.
    #[serde(default)]
    pub confirmed: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct GrowthGate {
    pub design: String,
    /// "time", "bytes" (counted allocations) or "resident" (a program's resident memory).
    pub metric: String,
    pub base_class: Option<String>,
    pub new_class: Option<String>,
    pub base_exponent: Option<f64>,
    pub new_exponent: Option<f64>,
    /// Bootstrap intervals (time only).
    pub base_interval: Option<(f64, f64)>,
    pub new_interval: Option<(f64, f64)>,
    pub sizes: Vec<u64>,
    pub call: Call,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct MissingPoint {
    pub design: String,
    pub rows: u64,
    /// "measured", "skipped: <reason>" or "absent".
    pub baseline: String,
    pub new: String,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct WorkloadGate {
    pub workload: String,
    pub threshold: f64,
    pub points: Vec<PointGate>,
    pub growth: Vec<GrowthGate>,
    pub missing: Vec<MissingPoint>,
    /// Designs in one run only.
    pub unmatched_designs: Vec<String>,
    /// The move the whole workload shared (three or more designs), when there is one to
    /// discount: see [`common_mode`].
    #[serde(default)]
    pub common_mode: Option<CommonMode>,
    /// What the workload swept when not rows (the same in both runs), for labels.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub axis: Option<crate::results::schema::AxisPlan>,
}

/// What the points of a workload moved together between the two runs.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct CommonMode {
    /// Median of the judged ratios over every point of every design.
    pub ratio: f64,
    /// Robust spread of the points' log-ratios around it (1.4826 × median absolute deviation).
    pub spread: f64,
}

/// Confirmation of one design's points (in size order): a regression or improvement is
/// confirmed when a neighbouring compared size made the same call, or the design was
/// compared at one size only. A change in the code shows at more than one size; run-to-run
/// noise of one point rarely repeats at the next (two independent tests).
fn confirm(points: &mut [PointGate]) {
    let calls: Vec<Call> = points.iter().map(|p| p.call).collect();
    for (k, p) in points.iter_mut().enumerate() {
        let next_to = |j: Option<usize>| j.and_then(|j| calls.get(j)).is_some_and(|c| *c == p.call);
        p.confirmed = matches!(p.call, Call::Regression | Call::Improvement)
            && (calls.len() == 1 || next_to(k.checked_sub(1)) || next_to(Some(k + 1)));
    }
}

/// How many robust spreads a point must stand out from its workload's common move.
pub const COMMON_MODE_SPREADS: f64 = 3.0;

/// Between two runs of unchanged code on a shared machine whole workloads move together —
/// their designs run one after another in one process and share its memory, caches and
/// neighbours, which the small CPU-bound drift probe does not see — and single points
/// scatter by more than their own samples show (measured here: three default catalog
/// sweeps of the same build gave 8 to 33 confirmed regressions between pairs). With three
/// or more designs, a workload's points are therefore also judged against the workload's
/// common move: a point is a change only when, divided by the median ratio of all the
/// workload's points, it still passes the threshold and stands out by
/// [`COMMON_MODE_SPREADS`] robust spreads. The common move itself is reported, not judged:
/// a change that slows every design alike (a library upgrade) shows there, so keep a design
/// the change cannot touch in a workload meant to gate such changes. Confirmation is
/// recomputed afterwards.
pub fn common_mode(wg: &mut WorkloadGate, designs: usize, threshold: f64) {
    if designs < 3 || wg.points.len() < 3 {
        return;
    }
    let judged = |p: &PointGate| p.normalised_ratio.unwrap_or(p.ratio).ln();
    let mut logs: Vec<f64> = wg.points.iter().map(judged).filter(|x| x.is_finite()).collect();
    if logs.len() < 3 {
        return;
    }
    logs.sort_by(f64::total_cmp);
    let med = crate::fit::sample::quantile_sorted(&logs, 0.5);
    let mut dev: Vec<f64> = logs.iter().map(|x| (x - med).abs()).collect();
    dev.sort_by(f64::total_cmp);
    let spread = 1.4826 * crate::fit::sample::quantile_sorted(&dev, 0.5);
    wg.common_mode = Some(CommonMode { ratio: med.exp(), spread });
    let bar = (1.0 + threshold).ln().max(COMMON_MODE_SPREADS * spread);
    for p in wg.points.iter_mut() {
        let stands_out = (judged(p) - med).abs() > bar;
        if matches!(p.call, Call::Regression | Call::Improvement) && !stands_out {
            p.call = Call::Unclear;
        }
    }
    // Each design's points are contiguous, in size order (as `compare` pushes them).
    let mut start = 0;
    while start < wg.points.len() {
        let end = (start..wg.points.len()).find(|&i| wg.points[i].design != wg.points[start].design).unwrap_or(wg.points.len());
        confirm(&mut wg.points[start..end]);
        start = end;
    }
    // A time growth call needs its design's largest size to agree (see `compare`): recheck
    // it against the calls as they are now.
    for g in wg.growth.iter_mut().filter(|g| g.metric == "time" && matches!(g.call, Call::Regression | Call::Improvement)) {
        let largest = wg.points.iter().filter(|p| p.design == g.design).max_by_key(|p| p.rows);
        if !largest.is_some_and(|p| p.call == g.call && p.confirmed) {
            g.call = Call::Same;
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct GateReport {
    pub baseline_run: String,
    pub new_run: String,
    pub machines_differ: bool,
    /// new yardstick / baseline yardstick.
    pub yardstick_ratio: Option<f64>,
    pub workloads: Vec<WorkloadGate>,
    /// Workloads in one run only.
    pub unmatched_workloads: Vec<String>,
    /// Confirmed point regressions.
    pub regressions: usize,
    /// Point regressions seen at one size only (reported, not failing).
    #[serde(default)]
    pub unconfirmed_regressions: usize,
    pub growth_regressions: usize,
    pub improvements: usize,
    pub missing: usize,
}

impl GateReport {
    /// True when anything got worse.
    pub fn failed(&self) -> bool {
        self.regressions > 0 || self.growth_regressions > 0
    }
}

fn status(w: &WorkloadResults, design: &str, rows: u64) -> String {
    match w.point(design, rows) {
        Some(p) if p.measured.is_some() => "measured".into(),
        Some(p) => format!("skipped: {}", p.skipped.as_ref().map(|s| s.reason.label()).unwrap_or("?")),
        None => "absent".into(),
    }
}

/// The call on one point. `raw` is new/base as measured, `corrected` the same after the
/// machine-speed correction (if any). A change is called only when the raw ratio and the
/// corrected one both pass the threshold in the same direction: the correction may explain
/// a change away (the machine was slower), but never turn equal medians into one.
fn judge(raw: f64, corrected: Option<f64>, p: Option<f64>, threshold: f64, alpha: f64) -> Call {
    let significant = p.is_some_and(|p| p < alpha);
    let up = |r: f64| r > 1.0 + threshold;
    let down = |r: f64| r < 1.0 / (1.0 + threshold);
    let c = corrected.unwrap_or(raw);
    if up(raw) && up(c) {
        if significant { Call::Regression } else { Call::Unclear }
    } else if down(raw) && down(c) {
        if significant { Call::Improvement } else { Call::Unclear }
    } else {
        Call::Same
    }
}

/// Compare two runs.
pub fn compare(base: &RunResults, new: &RunResults, opts: &GateOptions) -> GateReport {
    let (bh, nh) = (base.run.as_ref(), new.run.as_ref());
    let machines_differ = match (bh, nh) {
        (Some(b), Some(n)) => !b.machine.same_machine(&n.machine),
        _ => false,
    };
    let yardstick_ratio = match (bh, nh) {
        (Some(b), Some(n)) if b.yardstick.median_ns > 0.0 => Some(n.yardstick.median_ns / b.yardstick.median_ns),
        _ => None,
    };
    let mut report = GateReport {
        baseline_run: bh.map(|h| h.run_id.clone()).unwrap_or_default(),
        new_run: nh.map(|h| h.run_id.clone()).unwrap_or_default(),
        machines_differ,
        yardstick_ratio,
        workloads: vec![],
        unmatched_workloads: vec![],
        regressions: 0,
        unconfirmed_regressions: 0,
        growth_regressions: 0,
        improvements: 0,
        missing: 0,
    };
    for bw in &base.workloads {
        let Some(nw) = new.workloads.iter().find(|w| w.header.workload == bw.header.workload) else {
            report.unmatched_workloads.push(format!("{} (baseline only)", bw.header.workload));
            continue;
        };
        if bw.header.axis != nw.header.axis {
            // Swept over different axes (say rows, then columns): equal numbers mean different points.
            report.unmatched_workloads.push(format!("{} (swept over {} in the baseline, {} in the new run)", bw.header.workload, bw.header.axis().name(), nw.header.axis().name()));
            continue;
        }
        let threshold = opts.threshold.or(nw.header.gate_threshold).unwrap_or(DEFAULT_THRESHOLD);
        let mut wg = WorkloadGate {
            workload: bw.header.workload.clone(),
            threshold,
            points: vec![],
            growth: vec![],
            missing: vec![],
            unmatched_designs: vec![],
            common_mode: None,
            axis: nw.header.axis.clone(),
        };
        for d in &bw.header.designs {
            if !nw.header.designs.iter().any(|x| x.name == d.name) {
                wg.unmatched_designs.push(format!("{} (baseline only)", d.name));
                continue;
            }
            let mut sizes: Vec<u64> = bw.header.sizes.iter().chain(&nw.header.sizes).copied().collect();
            sizes.sort_unstable();
            sizes.dedup();
            let mut common: Vec<(u64, &Measured, &Measured)> = Vec::new();
            for n in sizes {
                let b = bw.point(&d.name, n).and_then(|p| p.measured.as_ref());
                let m = nw.point(&d.name, n).and_then(|p| p.measured.as_ref());
                match (b, m) {
                    (Some(b), Some(m)) => common.push((n, b, m)),
                    _ => wg.missing.push(MissingPoint { design: d.name.clone(), rows: n, baseline: status(bw, &d.name, n), new: status(nw, &d.name, n) }),
                }
            }
            for &(n, b, m) in &common {
                let ratio = m.median_ns / b.median_ns;
                let ci = hodges_lehmann_ratio_ci(&b.samples_ns, &m.samples_ns, 0.95).ok();
                let probe = match (bw.comparison(n).and_then(|c| c.probe_ns), nw.comparison(n).and_then(|c| c.probe_ns)) {
                    (Some(pb), Some(pn)) if pb > 0.0 && pn > 0.0 => Some(pn / pb),
                    _ => None,
                };
                let (normalised, by) = match (probe, machines_differ, yardstick_ratio) {
                    (Some(pr), _, _) => (Some(ratio / pr), Some("drift probe".to_string())),
                    (None, true, Some(y)) => (Some(ratio / y), Some("yardstick".to_string())),
                    _ => (None, None),
                };
                // The rank test compares the samples after the same correction.
                let scale = normalised.map(|x| x / ratio).unwrap_or(1.0);
                let adjusted: Vec<f64> = m.samples_ns.iter().map(|v| v * scale).collect();
                let p = mann_whitney(&adjusted, &b.samples_ns, Method::Auto).ok().map(|t| t.p_two_sided);
                let call = judge(ratio, normalised, p, threshold, opts.alpha);
                wg.points.push(PointGate {
                    design: d.name.clone(),
                    rows: n,
                    base_median_ns: b.median_ns,
                    new_median_ns: m.median_ns,
                    ratio,
                    shift: ci.map(|c| c.1 * scale),
                    ratio_low: ci.map(|c| c.0 * scale),
                    ratio_high: ci.map(|c| c.2 * scale),
                    normalised_ratio: normalised,
                    normalised_by: by,
                    p_value: p,
                    call,
                    confirmed: false,
                });
            }
            // Confirmation: the same call at a neighbouring compared size (see `confirm`).
            let first = wg.points.len() - common.len();
            confirm(&mut wg.points[first..]);
            // Growth over the sizes both runs measured.
            let seed = xxhash_rust::xxh3::xxh3_64(d.name.as_bytes());
            let bpts: Vec<(u64, &Measured)> = common.iter().map(|c| (c.0, c.1)).collect();
            let npts: Vec<(u64, &Measured)> = common.iter().map(|c| (c.0, c.2)).collect();
            let (bfit, bexp) = fit_time(&bpts, seed);
            let (nfit, nexp) = fit_time(&npts, seed);
            let sizes: Vec<u64> = common.iter().map(|c| c.0).collect();
            if let (Some(be), Some(ne), Some(rise)) = (&bexp, &nexp, opts.growth_rise) {
                let rank = |f: &Result<crate::fit::growth::GrowthFit, _>| f.as_ref().ok().map(|g| g.label());
                // Bootstrap intervals of one run are far narrower than the variation between
                // runs of unchanged code (measured: exponent 1.44 [1.43–1.46] → 1.57
                // [1.56–1.60] between two runs of the same build). So a rise of the exponent
                // counts only when the per-size comparisons agree with it: the largest size
                // compared is a confirmed change in the same direction, and the corrected
                // ratio grew (or shrank) by more than the threshold from the smallest size to
                // the largest.
                let own = &wg.points[first..];
                let judged = |p: &PointGate| p.normalised_ratio.unwrap_or(p.ratio);
                let (small, large) = (own.first(), own.last());
                let spread = match (small, large) {
                    (Some(a), Some(b)) if own.len() >= 2 => judged(b) / judged(a),
                    _ => 1.0,
                };
                let largest_is = |c: Call| large.is_some_and(|p| p.call == c && p.confirmed);
                let worse = ne.slope - be.slope >= rise
                    && ne.low > be.high
                    && largest_is(Call::Regression)
                    && spread > 1.0 + threshold;
                let better = be.slope - ne.slope >= rise
                    && be.low > ne.high
                    && largest_is(Call::Improvement)
                    && spread < 1.0 / (1.0 + threshold);
                wg.growth.push(GrowthGate {
                    design: d.name.clone(),
                    metric: "time".into(),
                    base_class: rank(&bfit),
                    new_class: rank(&nfit),
                    base_exponent: Some(be.slope),
                    new_exponent: Some(ne.slope),
                    base_interval: Some((be.low, be.high)),
                    new_interval: Some((ne.low, ne.high)),
                    sizes: sizes.clone(),
                    call: if worse { Call::Regression } else if better { Call::Improvement } else { Call::Same },
                });
            }
            // Memory: counted allocations for steps; for a program (no counts) the resident
            // memory its runs added, page-grained and noisier, so it must rise twice as far.
            let program = bpts.iter().chain(&npts).any(|(_, m)| !m.alloc_counted);
            let memory = |m: &Measured| if m.alloc_counted { m.alloc.bytes as f64 } else { m.peak_bytes() as f64 };
            let (metric, rise_needed) = if program { ("resident", 2.0 * BYTES_EXPONENT_RISE) } else { ("bytes", BYTES_EXPONENT_RISE) };
            let slope = |pts: &[(u64, &Measured)]| {
                let v: Vec<(f64, f64)> = pts.iter().map(|(n, m)| (*n as f64, memory(m))).filter(|p| p.1 > 0.0).collect();
                let (x, y): (Vec<f64>, Vec<f64>) = v.into_iter().unzip();
                if x.len() >= 3 { crate::fit::growth::loglog_slope(&x, &y).ok() } else { None }
            };
            if let (Some(bs), Some(ns)) = (slope(&bpts), slope(&npts)) {
                let bytes_class = |pts: &[(u64, &Measured)]| {
                    let v: Vec<(f64, f64)> = pts.iter().map(|(n, m)| (*n as f64, memory(m))).filter(|p| p.1 > 0.0).collect();
                    let (x, y): (Vec<f64>, Vec<f64>) = v.into_iter().unzip();
                    crate::fit::growth::fit_growth(&x, &y).ok().map(|f| f.label())
                };
                wg.growth.push(GrowthGate {
                    design: d.name.clone(),
                    metric: metric.into(),
                    base_class: bytes_class(&bpts),
                    new_class: bytes_class(&npts),
                    base_exponent: Some(bs),
                    new_exponent: Some(ns),
                    base_interval: None,
                    new_interval: None,
                    sizes,
                    call: if ns - bs >= rise_needed {
                        Call::Regression
                    } else if bs - ns >= rise_needed {
                        Call::Improvement
                    } else {
                        Call::Same
                    },
                });
            }
        }
        for d in &nw.header.designs {
            if !bw.header.designs.iter().any(|x| x.name == d.name) {
                wg.unmatched_designs.push(format!("{} (new run only)", d.name));
            }
        }
        common_mode(&mut wg, bw.header.designs.len().min(nw.header.designs.len()), threshold);
        report.regressions += wg.points.iter().filter(|p| p.call == Call::Regression && p.confirmed).count();
        report.unconfirmed_regressions += wg.points.iter().filter(|p| p.call == Call::Regression && !p.confirmed).count();
        report.improvements += wg.points.iter().filter(|p| p.call == Call::Improvement && p.confirmed).count();
        report.growth_regressions += wg.growth.iter().filter(|g| g.call == Call::Regression).count();
        report.missing += wg.missing.len();
        report.workloads.push(wg);
    }
    for nw in &new.workloads {
        if !base.workloads.iter().any(|w| w.header.workload == nw.header.workload) {
            report.unmatched_workloads.push(format!("{} (new run only)", nw.header.workload));
        }
    }
    report
}

#[cfg(test)]
mod common_mode_tests {
    use super::*;

    fn point(design: &str, rows: u64, ratio: f64) -> PointGate {
        PointGate {
            design: design.into(),
            rows,
            base_median_ns: 1e6,
            new_median_ns: 1e6 * ratio,
            ratio,
            shift: Some(ratio),
            ratio_low: None,
            ratio_high: None,
            normalised_ratio: None,
            normalised_by: None,
            p_value: Some(1e-6),
            call: if ratio > 1.1 { Call::Regression } else { Call::Same },
            confirmed: ratio > 1.1,
        }
    }

    fn workload(ratios: &[(&str, f64)]) -> WorkloadGate {
        let mut points = Vec::new();
        for (d, r) in ratios {
            for rows in [1_000, 4_000, 16_000, 64_000] {
                // A little scatter, the same in every design: ±2%.
                let wobble = 1.0 + 0.02 * ((rows / 1000) % 3) as f64 - 0.02;
                points.push(point(d, rows, r * wobble));
            }
        }
        WorkloadGate {
            workload: "w".into(),
            threshold: 0.1,
            points,
            growth: vec![],
            missing: vec![],
            unmatched_designs: vec![],
            common_mode: None,
            axis: None,
        }
    }

    #[test]
    fn a_move_shared_by_every_design_is_reported_not_judged() {
        let mut w = workload(&[("a", 1.3), ("b", 1.3), ("c", 1.3)]);
        common_mode(&mut w, 3, 0.1);
        assert!(w.points.iter().all(|p| p.call == Call::Unclear && !p.confirmed), "{:?}", w.points);
        let cm = w.common_mode.expect("common mode");
        assert!((cm.ratio - 1.3).abs() < 0.03, "{cm:?}");
    }

    #[test]
    fn one_design_slower_than_its_workload_stays_a_regression() {
        let mut w = workload(&[("a", 1.0), ("b", 1.0), ("c", 1.5), ("d", 1.0)]);
        common_mode(&mut w, 4, 0.1);
        for p in &w.points {
            let want = if p.design == "c" { Call::Regression } else { Call::Same };
            assert_eq!(p.call, want, "{p:?}");
        }
        assert!(w.points.iter().filter(|p| p.design == "c").all(|p| p.confirmed));
    }

    #[test]
    fn fewer_than_three_designs_are_left_alone() {
        let mut w = workload(&[("a", 1.3), ("b", 1.3)]);
        common_mode(&mut w, 2, 0.1);
        assert!(w.common_mode.is_none());
        assert!(w.points.iter().all(|p| p.call == Call::Regression));
    }
}
