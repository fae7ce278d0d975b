//! One more size for the designs whose class is still ambiguous.
//!
//! After the planned sizes, a design whose time class the planned sizes cannot settle — two
//! classes the data cannot tell apart ("n or n log n"), or no class at all ("unclear") — is
//! measured at one more size, a step beyond the largest planned one (the ladder's own last
//! step), while the designs already settled are not (of several unsettled designs, the one
//! fastest at the largest planned size: see [`chosen`]): one more doubling tells n from n log n
//! or n log n from n² better than more samples of the sizes already measured. It is sampled
//! with half the point budget and the fewest samples, and the usual admission applies
//! (memory estimate, that point budget, the run budget), so the extra size is spent only
//! where the budget allows. Only sweeps over rows take it (an axis of another shape
//! parameter may have its own bounds), and it is taken only with `sweep --extra-size`.
//!
//! The extra size is not among the workload header's sizes: its points are recognisable as
//! the points beyond them (`WorkloadResults::extra_sizes`), and the gate, which compares the
//! header's sizes, leaves them out (which designs are ambiguous differs between runs).

use crate::fit::growth::fit_timed;
use crate::plan::Plan;
use crate::results::reader::{RunResults, WorkloadResults};

/// The size after the largest planned one, one more step of the ladder (the ratio of the
/// two largest planned sizes, at least ×2 and at most ×4); `None` for fewer than three
/// planned sizes, a sweep over another axis, or a size past the largest a spec may ask for.
pub fn next_size(plan: &Plan) -> Option<u64> {
    if plan.axis.is_some() || plan.sizes.len() < 3 {
        return None;
    }
    let (prev, last) = (plan.sizes[plan.sizes.len() - 2], plan.sizes[plan.sizes.len() - 1]);
    let step = (last as f64 / prev.max(1) as f64).clamp(2.0, 4.0);
    let next = (last as f64 * step).round() as u64;
    (next > last && next <= crate::spec::validate::MAX_ROWS).then_some(next)
}

/// Why a design's time class is not settled over its measured points, if it is not: its
/// label ("n or n log n") or "unclear". Needs the design measured at the largest planned
/// size and at three sizes or more, none of them on a busy or slower machine.
fn unsettled(w: &WorkloadResults, plan: &Plan, design: &str) -> Option<String> {
    let largest = *plan.sizes.last()?;
    let pts = w.design_points(design);
    let measured: Vec<_> = pts.iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows, m))).filter(|(rows, _)| plan.sizes.contains(rows)).collect();
    if measured.len() < crate::fit::growth::MIN_SIZES || !measured.iter().any(|(rows, _)| *rows == largest) {
        return None;
    }
    if measured.iter().any(|(_, m)| m.is_contaminated()) {
        return None;
    }
    let per_size: Vec<(f64, Vec<f64>)> = measured.iter().map(|(rows, m)| (*rows as f64, m.samples_ns.clone())).collect();
    match fit_timed(&per_size) {
        Ok(f) if f.alternative.is_some() => Some(f.label()),
        Ok(_) => None,
        Err(crate::fit::FitError::NoClassAgrees { slope }) => Some(format!("unclear (slope {slope:.2})")),
        Err(_) => None,
    }
}

/// The design (index, why) that takes the extra size: of the designs whose class is not
/// settled, the fastest at the largest planned size — the one a reader is most likely to
/// adopt, whose growth decides what it costs at the target. One design only: a comparison
/// of a subset of the designs at a size the others did not reach would rank them where the
/// verdict cannot (it is decided where every design was measured), and a table showing a
/// second design faster there than the verdict's would contradict it.
pub fn chosen(results: &RunResults, plan: &Plan) -> Option<(usize, String)> {
    // Sizes the machine ran slower at count as they will when the run is read back.
    let mut w = results.workload(&plan.name)?.clone();
    crate::results::reader::mark_slow_sizes(&mut w, crate::results::reader::slow_probe());
    let w = &w;
    let largest = plan.sizes.last().copied().unwrap_or(0);
    let median_at_largest = |i: usize| w.point(&plan.designs[i].name, largest).and_then(|p| p.measured.as_ref()).map_or(f64::INFINITY, |m| m.median_ns);
    plan.designs
        .iter()
        .enumerate()
        .filter_map(|(i, d)| unsettled(w, plan, &d.name).map(|why| (i, why)))
        .min_by(|a, b| median_at_largest(a.0).total_cmp(&median_at_largest(b.0)))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plan_with(sizes: &[u64]) -> Plan {
        let mut p = crate::spec::load_str("tiny.yaml", include_str!("../../tests/data/tiny.yaml")).expect("the test spec loads");
        p.sizes = sizes.to_vec();
        p
    }

    /// Results of `plan` whose first design costs `first(n)` and second `second(n)` (ns,
    /// with ±2% deterministic scatter over 12 samples).
    fn results(plan: &Plan, first: &dyn Fn(f64) -> f64, second: &dyn Fn(f64) -> f64) -> RunResults {
        use crate::results::*;
        let mut r = RunResults::default();
        r.push(crate::measure::headers::workload_header(plan, &[]));
        for &n in &plan.sizes {
            for (d, cost) in plan.designs.iter().zip([first, second]) {
                let samples: Vec<f64> = (0..12).map(|i| cost(n as f64) * (0.98 + 0.04 * (i as f64) / 11.0)).collect();
                let med = cost(n as f64);
                r.push(Record::Point(PointRecord {
                    workload: plan.name.clone(),
                    design: d.name.clone(),
                    rows: n,
                    measured: Some(Measured {
                        stop: StopReason::SampleCap,
                        batch: 1,
                        warmup_runs: 1,
                        samples_ns: samples,
                        median_ns: med,
                        ci_low_ns: None,
                        ci_high_ns: None,
                        ci_rel_half_width: None,
                        mean_ns: med,
                        p50_ns: med,
                        p90_ns: med,
                        p99_ns: med,
                        max_ns: med,
                        cpu_ns: med,
                        alloc: crate::measure::alloc::AllocStats::default(),
                        alloc_exact: true,
                        alloc_counted: true,
                        program: None,
                        output: None,
                        spent_s: 0.1,
                        disturbance: None,
                        bimodal: false,
                    }),
                    skipped: None,
                    setup_ns: None,
                }));
            }
        }
        r
    }

    #[test]
    fn only_a_design_whose_class_is_unsettled_takes_the_extra_size() {
        // Eight doublings from 1k rows. The first design costs n² outright (a hundredfold rise
        // per decade: settled); the second costs n with a per-row cost 8% higher at the
        // largest size than at the smallest (a table outgrowing a cache), which one sweep
        // cannot tell from n log n: it takes the extra size, with its pair as the reason.
        // (With 15% or more the fit settles on n log n, and the design would not.)
        let plan = plan_with(&[1_000, 2_000, 4_000, 8_000, 16_000, 32_000, 64_000, 128_000]);
        assert_eq!(plan.designs.len(), 2, "the test spec has two designs");
        let quadratic = |n: f64| 1e-3 * n * n;
        let bent = |n: f64| 40.0 * n * (1.0 + 0.08 * (n / 1000.0).ln() / 128f64.ln());
        let r = results(&plan, &quadratic, &bent);
        let (design, why) = chosen(&r, &plan).expect("the unsettled design");
        assert_eq!(design, 1);
        assert!(why.contains(" or "), "{why}");
        // Both settled: nobody takes it.
        let r = results(&plan, &quadratic, &|n: f64| 5e-4 * n * n);
        assert!(chosen(&r, &plan).is_none());
    }

    #[test]
    fn the_next_size_repeats_the_ladders_last_step() {
        assert_eq!(next_size(&plan_with(&[1_000, 2_000, 4_000])), Some(8_000));
        assert_eq!(next_size(&plan_with(&[1_000, 4_000, 16_000])), Some(64_000));
        // A step of ×10 is held to ×4; a step under ×2 is raised to ×2.
        assert_eq!(next_size(&plan_with(&[10, 100, 1_000])), Some(4_000));
        assert_eq!(next_size(&plan_with(&[1_000, 1_200, 1_400])), Some(2_800));
        assert_eq!(next_size(&plan_with(&[1_000, 2_000])), None, "two sizes settle nothing");
        assert_eq!(next_size(&plan_with(&[1_000, 2_000, crate::spec::validate::MAX_ROWS])), None);
    }
}
