//! Growth compared between the runs over the sizes both measured: the time exponent (with
//! bootstrap intervals, counted only when the per-size comparisons agree) and the memory
//! exponent — counted allocations for steps, resident memory for programs.

use super::points::Pair;
use super::{Call, GrowthGate, PointGate, BYTES_EXPONENT_RISE};
use crate::analyse::fit_time;
use crate::fit::growth::{fit_growth, loglog_slope, GrowthFit};
use crate::results::Measured;

/// The time growth of one design: `own` are its points as just compared (in size order),
/// `rise` the exponent rise that counts. None when either run gives no exponent.
pub(super) fn time_growth(design: &str, common: &[Pair], own: &[PointGate], rise: f64, threshold: f64) -> Option<GrowthGate> {
    let seed = xxhash_rust::xxh3::xxh3_64(design.as_bytes());
    let bpts: Vec<(u64, &Measured)> = common.iter().map(|c| (c.0, c.1)).collect();
    let npts: Vec<(u64, &Measured)> = common.iter().map(|c| (c.0, c.2)).collect();
    let (bfit, bexp) = fit_time(&bpts, seed);
    let (nfit, nexp) = fit_time(&npts, seed);
    let (be, ne) = (bexp?, nexp?);
    let rank = |f: &Result<GrowthFit, _>| f.as_ref().ok().map(|g| g.label());
    // Bootstrap intervals of one run are far narrower than the variation between
    // runs of unchanged code (measured: exponent 1.44 [1.43–1.46] → 1.57
    // [1.56–1.60] between two runs of the same build). So a rise of the exponent
    // counts only when the per-size comparisons agree with it: the largest size
    // compared is a confirmed change in the same direction, and the corrected
    // ratio grew (or shrank) by more than the threshold from the smallest size to
    // the largest.
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
    Some(GrowthGate {
        design: design.to_string(),
        metric: "time".into(),
        base_class: rank(&bfit),
        new_class: rank(&nfit),
        base_exponent: Some(be.slope),
        new_exponent: Some(ne.slope),
        base_interval: Some((be.low, be.high)),
        new_interval: Some((ne.low, ne.high)),
        sizes: common.iter().map(|c| c.0).collect(),
        call: if worse { Call::Regression } else if better { Call::Improvement } else { Call::Same },
    })
}

/// The memory growth of one design: counted allocations for steps; for a program (no
/// counts) the resident memory its runs added, page-grained and noisier, so it must rise
/// twice as far. None when either run has fewer than three sizes with memory.
pub(super) fn memory_growth(design: &str, common: &[Pair]) -> Option<GrowthGate> {
    let bpts: Vec<(u64, &Measured)> = common.iter().map(|c| (c.0, c.1)).collect();
    let npts: Vec<(u64, &Measured)> = common.iter().map(|c| (c.0, c.2)).collect();
    let program = bpts.iter().chain(&npts).any(|(_, m)| !m.alloc_counted);
    let memory = |m: &Measured| if m.alloc_counted { m.alloc.bytes as f64 } else { m.peak_bytes() as f64 };
    let (metric, rise_needed) = if program { ("resident", 2.0 * BYTES_EXPONENT_RISE) } else { ("bytes", BYTES_EXPONENT_RISE) };
    let points = |pts: &[(u64, &Measured)]| -> (Vec<f64>, Vec<f64>) {
        pts.iter().map(|(n, m)| (*n as f64, memory(m))).filter(|p| p.1 > 0.0).unzip()
    };
    let slope = |pts: &[(u64, &Measured)]| {
        let (x, y) = points(pts);
        if x.len() >= 3 { loglog_slope(&x, &y).ok() } else { None }
    };
    let (bs, ns) = (slope(&bpts)?, slope(&npts)?);
    let class = |pts: &[(u64, &Measured)]| {
        let (x, y) = points(pts);
        fit_growth(&x, &y).ok().map(|f| f.label())
    };
    Some(GrowthGate {
        design: design.to_string(),
        metric: metric.into(),
        base_class: class(&bpts),
        new_class: class(&npts),
        base_exponent: Some(bs),
        new_exponent: Some(ns),
        base_interval: None,
        new_interval: None,
        sizes: common.iter().map(|c| c.0).collect(),
        call: if ns - bs >= rise_needed {
            Call::Regression
        } else if bs - ns >= rise_needed {
            Call::Improvement
        } else {
            Call::Same
        },
    })
}
