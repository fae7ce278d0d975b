//! How one design's fits are read: time fitted on each size's quartiles with a bootstrap
//! exponent, a prediction widened to cover the class the data cannot tell apart, and the
//! cache reading — time that looks superlinear while the allocated bytes do not is read as
//! a pair of classes. Used by the analysis and by the gate (`fit_time`).

use super::output::{ExponentOut, PredictionOut};
use crate::fit::growth::{exponent_with_ci, fit_timed, GrowthClass, GrowthFit};
use crate::fit::predict::{extrapolation_allowance, is_rough, predict, widen_for_extrapolation};

/// Fit how time grows over measured points `(rows, measured)`: the growth class on each
/// size's quartiles (`fit::growth::fit_timed`), and the log-log exponent of medians over
/// the top four sizes with a 95% bootstrap interval (deterministic from `seed`).
pub fn fit_time(measured: &[(u64, &crate::results::Measured)], seed: u64) -> (Result<GrowthFit, crate::fit::FitError>, Option<ExponentOut>) {
    (fit_time_class(measured), time_exponent(measured, seed))
}

/// The growth class of [`fit_time`] alone.
pub fn fit_time_class(measured: &[(u64, &crate::results::Measured)]) -> Result<GrowthFit, crate::fit::FitError> {
    fit_timed(&per_size(measured))
}

/// The bootstrap exponent of [`fit_time`] alone.
pub fn time_exponent(measured: &[(u64, &crate::results::Measured)], seed: u64) -> Option<ExponentOut> {
    exponent_with_ci(&per_size(measured), 4, 1000, seed)
        .ok()
        .map(|e| ExponentOut { slope: e.slope, low: e.lo, high: e.hi, sizes_used: e.sizes_used })
}

/// Each size's positive samples.
fn per_size(measured: &[(u64, &crate::results::Measured)]) -> Vec<(f64, Vec<f64>)> {
    measured
        .iter()
        .map(|(rows, m)| (*rows as f64, m.samples_ns.iter().copied().filter(|v| *v > 0.0).collect::<Vec<_>>()))
        .filter(|(_, s)| !s.is_empty())
        .collect()
}

/// The prediction of a fit at `rows`: its own class's interval, widened to cover the
/// alternative class's interval when the data cannot tell the two apart.
pub fn predict_with_alternative(f: &GrowthFit, rows: u64, max_fitted: f64) -> Option<PredictionOut> {
    let p = predict(f, rows as f64, max_fitted).ok()?;
    let alt = f.alternative.and_then(|c| f.as_class(c)).and_then(|g| predict(&g, rows as f64, max_fitted).ok());
    let (low, high) = match alt {
        Some(a) => (p.lo.min(a.lo), p.hi.max(a.hi)),
        None => (p.lo, p.hi),
    };
    Some(PredictionOut {
        rows,
        median: p.median,
        low,
        high,
        extrapolation_decades: p.extrapolation_decades,
        far: p.warn_far,
        rough: is_rough(low, high),
        class: f.best.label().to_string(),
        alternative: alt.and(f.alternative).map(|c| c.label().to_string()),
        copying: None,
        trend: None,
        allowance: None,
    })
}

/// A time prediction past the largest fitted size, its interval widened for the
/// extrapolation itself (`fit::predict`, "Extrapolation allowance"): the last step of a
/// time prediction, after any copying term and recent trend, so it widens what is reported.
pub fn allow_for_extrapolation(p: PredictionOut, max_fitted: f64) -> PredictionOut {
    let allowance = extrapolation_allowance(p.rows as f64, max_fitted);
    if allowance <= 0.0 {
        return p;
    }
    let (low, high) = widen_for_extrapolation(p.median, p.low, p.high, allowance);
    PredictionOut { low, high, rough: is_rough(low, high), allowance: Some(allowance.exp()), ..p }
}

/// Below this log-log slope over the largest sizes, a superlinear time class is not taken
/// alone when the work's own evidence (allocated bytes) grows no faster than n log n.
pub const MEMORY_HIERARCHY_SLOPE: f64 = 1.5;

/// Time that looks quadratic while the bytes allocated grow at most as n log n: as a table
/// outgrows the processor's caches (here, from L1 through a 32 MiB L3 to main memory
/// between about 10k and 4M rows of a few columns) each row costs more, which bends the
/// time curve upward over exactly the sizes a sweep measures, and then it straightens
/// again. Over the measured range this cannot be told from a quadratic term by time alone,
/// so the class becomes the best slower class (n or n log n) with the superlinear class as
/// its alternative ("n or n²"): the prediction interval covers both. Designs whose bytes
/// grow superlinearly (repeated copying) keep their class. Without byte counts, the slope
/// must stay under 1.3 for the same reading.
///
/// The same one rank up: time that looks cubic (slope under 2.5) while the bytes grow as n²
/// — repeated copying of a table that grows, whose copies outgrow the caches — is read as
/// "n² or n³" (a columns sweep of `workloads/column-growth.yaml` showed time n³ with
/// doubling ratios of ×3.4 to ×4.6 and bytes growing ×4 per doubling).
///
/// `bytes` is the bytes' growth fit. With fewer than five sizes there is none: then the
/// time's slope decides as it does without byte counts, and the bytes' log-log slope
/// (`bytes_slope`) can only stop a reading, never start one — bytes growing faster than
/// the reading allows (from 1.5 for "n or n²", from 2.5 for "n² or n³") show the work
/// itself grows. (Measured: `row-growth`'s `one-at-a-time` fitted on its four sizes up to
/// 4k rows, time slope 1.29, bytes slope 1.89, was read as "n log n or n²" and predicted
/// 16k 62% under. Letting a linear bytes slope start the reading instead misread
/// `column-growth`'s designs, whose work grows as n² without allocating more: fitted on
/// four sizes they went from within 25% to 69–72% under.)
///
/// Below [`CACHE_BEND_SLOPE`], with the bytes counted and growing no faster than n log n
/// (their class, or over fewer than five sizes their slope under 1.5: this changes a pair,
/// never the class a median comes from, so the slope may start it),
/// the superlinear class is not even kept as the alternative: the time is read as "n or
/// n log n" (the neighbour only where its fit was accepted), whether the superlinear class
/// fitted best or only nearly as well ([`ALTERNATIVE_MARGIN`](crate::fit::growth::ALTERNATIVE_MARGIN)).
/// A bend that small is what the caches do, and whether a run's few percent of curvature
/// lands within the alternative's margin or just outside it is chance: re-judging six triples
/// of saved catalog sweeps of unchanged code, 33 of the 64 design × metric cells whose class
/// differed between the runs of a triple were "n or n log n" in one run and "n log n or n²"
/// in another, at slopes of 1.0–1.25; with this reading the cells
/// with the same class or pair in all three runs went from 89–93% to 95–98%, and the hold-out
/// checks (fit on sizes up to N/4, predict N) kept the same 97% inside their intervals — the
/// extrapolation allowance, not the n² curve, is what widens an interval past the fitted
/// sizes. Medians are unchanged: they come from the class. Without byte counts nothing says
/// the work is linear, and the n² alternative stays.
pub fn bounded_by_bytes(time: &GrowthFit, bytes: Option<&GrowthFit>, bytes_slope: Option<f64>) -> Option<(GrowthFit, String)> {
    let evidence = || match (bytes, bytes_slope) {
        (Some(b), _) => format!("allocated bytes grow as {}", b.label()),
        (None, Some(s)) => format!("allocated bytes grow with log-log slope {s:.2}"),
        (None, None) => "there are no byte counts to tell them apart".to_string(),
    };
    if time.best == GrowthClass::Cubic && time.top_slope < MEMORY_HIERARCHY_SLOPE + 1.0 {
        // With byte counts, they must grow as n²; without (a program), the slope must stay
        // under 2.3, as it must stay under 1.3 one rank down.
        let quadratic = match (bytes, bytes_slope) {
            (Some(b), _) => b.best == GrowthClass::Quadratic && b.alternative.is_none_or(|a| a.rank() <= GrowthClass::Quadratic.rank()),
            (None, Some(s)) => time.top_slope < 2.3 && s < MEMORY_HIERARCHY_SLOPE + 1.0,
            (None, None) => time.top_slope < 2.3,
        };
        let candidate = time.candidates.iter().any(|c| c.rejection.is_none() && c.class == GrowthClass::Quadratic);
        if quadratic && candidate {
            let mut f = time.as_class(GrowthClass::Quadratic)?;
            f.alternative = Some(time.best);
            let note = cache_bend_note(time.best, "fits best", time.top_slope, &evidence(), &f);
            return Some((f, note));
        }
    }
    if time.top_slope >= MEMORY_HIERARCHY_SLOPE {
        return None;
    }
    let bytes_linear = match (bytes, bytes_slope) {
        (Some(b), _) => b.best.rank() <= GrowthClass::Linearithmic.rank() && b.alternative.is_none_or(|a| a.rank() <= GrowthClass::Linearithmic.rank()),
        (None, Some(s)) => time.top_slope < CACHE_BEND_SLOPE && s < MEMORY_HIERARCHY_SLOPE,
        (None, None) => time.top_slope < CACHE_BEND_SLOPE,
    };
    if !bytes_linear {
        return None;
    }
    // A small bend with the bytes counted: no superlinear alternative either.
    let counted = bytes.is_some() || bytes_slope.is_some();
    let calm = counted && time.top_slope < CACHE_BEND_SLOPE;
    if time.best.rank() < GrowthClass::Quadratic.rank() {
        let faster = time.alternative.filter(|a| a.rank() >= GrowthClass::Quadratic.rank())?;
        if !calm || time.best.rank() < GrowthClass::Linear.rank() {
            return None;
        }
        let f = with_neighbour(time, time.best)?;
        let note = cache_bend_note(faster, "fits nearly as well", time.top_slope, &evidence(), &f);
        return Some((f, note));
    }
    let slower = time
        .candidates
        .iter()
        .filter(|c| c.rejection.is_none() && matches!(c.class, GrowthClass::Linear | GrowthClass::Linearithmic))
        .min_by(|x, y| x.aicc.total_cmp(&y.aicc))?;
    let f = if calm {
        with_neighbour(time, slower.class)?
    } else {
        let mut f = time.as_class(slower.class)?;
        f.alternative = Some(time.best);
        f
    };
    let why = match (bytes, bytes_slope) {
        (None, None) => "no byte counts".to_string(),
        _ => evidence(),
    };
    let note = cache_bend_note(time.best, "fits best", time.top_slope, &why, &f);
    Some((f, note))
}

/// Under this log-log slope over the largest sizes, time that bends upward while the
/// counted bytes grow no faster than n log n is read as "n or n log n", with no superlinear
/// alternative ([`bounded_by_bytes`]); without byte counts, the slope under which a
/// superlinear best class is read as "n or n log n" with that class as its alternative.
pub const CACHE_BEND_SLOPE: f64 = 1.3;

/// `time` seen as `class` (n or n log n) with the other of the two as its alternative,
/// where that one's fit was accepted.
fn with_neighbour(time: &GrowthFit, class: GrowthClass) -> Option<GrowthFit> {
    let neighbour = match class {
        GrowthClass::Linear => GrowthClass::Linearithmic,
        GrowthClass::Linearithmic => GrowthClass::Linear,
        _ => return None,
    };
    let mut f = time.as_class(class)?;
    f.alternative = time.candidate(neighbour).filter(|c| c.rejection.is_none()).map(|_| neighbour);
    Some(f)
}

/// "time: n² fits best (slope 1.12 over the largest sizes) but allocated bytes grow as n:
/// read as n or n log n — …": what a re-reading of `faster` (the class that fitted best, or
/// nearly as well) was read as, and why.
fn cache_bend_note(faster: GrowthClass, how: &str, slope: f64, why: &str, read: &GrowthFit) -> String {
    format!(
        "time: {} {how} (slope {slope:.2} over the largest sizes) but {why}: read as {} — data outgrowing the caches bends the curve the same way",
        faster.label(),
        read.label(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::growth::fit_growth;

    /// Each size's time quartiles (µs) and allocated bytes: `(rows, [q1, median, q3], bytes)`.
    type Measured = [(f64, [f64; 3], f64)];

    fn fits_of(points: &Measured) -> (GrowthFit, GrowthFit) {
        let quartiles: Vec<(f64, [f64; 3])> = points.iter().map(|&(n, q, _)| (n, q)).collect();
        let time = crate::fit::growth::fit_quartiles_us(&quartiles);
        let sizes: Vec<f64> = points.iter().map(|p| p.0).collect();
        let bytes: Vec<f64> = points.iter().map(|p| p.2).collect();
        (time, fit_growth(&sizes, &bytes).unwrap())
    }

    // `workloads/subsets.yaml`'s `deep-copy`, swept on this project's 2-core machine
    // (December 2026): time bends up (slope 1.13 over the largest sizes) while the bytes
    // grow as n exactly.
    const DEEP_COPY: &Measured = &[
        (4000.0, [75.0, 77.1, 79.2], 110984.0),
        (16000.0, [147.0, 149.1, 153.1], 424472.0),
        (64000.0, [427.4, 432.2, 478.3], 1678472.0),
        (256000.0, [3046.8, 3093.2, 3129.6], 6694472.0),
        (1024000.0, [14399.8, 14565.1, 14725.6], 26758472.0),
    ];

    // `workloads/cross-column.yaml`'s `transpose-numeric`, the same sweep: n log n fits
    // best with n² within the alternative's margin (slope 1.24), bytes grow as n.
    const TRANSPOSE: &Measured = &[
        (1000.0, [1019.8, 1084.9, 1137.4], 838106.0),
        (2000.0, [1843.9, 1885.0, 1947.5], 1640538.0),
        (4000.0, [3284.6, 3335.8, 3545.9], 3245402.0),
        (8000.0, [6163.4, 6434.5, 7770.2], 6455130.0),
        (16000.0, [12215.4, 13752.3, 17886.7], 12874586.0),
        (32000.0, [26791.2, 33555.9, 40388.0], 25713498.0),
        (64000.0, [65823.3, 84789.1, 86875.4], 51391322.0),
    ];

    #[test]
    fn a_small_bend_with_linear_bytes_is_read_as_n_or_n_log_n() {
        let (time, bytes) = fits_of(DEEP_COPY);
        assert!(time.best.rank() >= GrowthClass::Quadratic.rank() && time.top_slope < CACHE_BEND_SLOPE, "the case this guards: {:?} {}", time.best, time.top_slope);
        assert_eq!(bytes.best, GrowthClass::Linear);
        let (f, note) = bounded_by_bytes(&time, Some(&bytes), None).expect("re-read");
        assert!(f.best.rank() <= GrowthClass::Linearithmic.rank() && f.alternative.is_none_or(|a| a.rank() <= GrowthClass::Linearithmic.rank()), "{}", f.label());
        assert!(note.contains(&format!("fits best (slope {:.2}", time.top_slope)) && note.contains(&format!("read as {}", f.label())), "{note}");
        // The median comes from the slower class either way; only the pair changed.
        let slower = time.as_class(f.best).unwrap();
        assert_eq!(f.cost_at(4.096e6), slower.cost_at(4.096e6));
        // A bytes slope over fewer sizes counts as counted bytes; no counts at all keep n².
        let (g, _) = bounded_by_bytes(&time, None, Some(1.0)).expect("re-read");
        assert_eq!((g.best, g.alternative), (f.best, f.alternative));
        let (h, _) = bounded_by_bytes(&time, None, None).expect("re-read");
        assert_eq!((h.best, h.alternative), (f.best, Some(time.best)));
    }

    #[test]
    fn a_quadratic_alternative_to_a_small_bend_is_dropped_when_bytes_are_linear() {
        let (time, bytes) = fits_of(TRANSPOSE);
        assert_eq!((time.best, time.alternative), (GrowthClass::Linearithmic, Some(GrowthClass::Quadratic)), "the case this guards (slope {})", time.top_slope);
        assert_eq!(bytes.best, GrowthClass::Linear);
        let (f, note) = bounded_by_bytes(&time, Some(&bytes), None).expect("re-read");
        assert_eq!((f.best, f.alternative), (GrowthClass::Linearithmic, Some(GrowthClass::Linear)));
        assert!(note.starts_with("time: n² fits nearly as well") && note.contains("read as n or n log n"), "{note}");
        // Bytes that grow as fast as the time leave the pair alone, as does no count at all.
        let (quad, _) = fits_of(&TRANSPOSE.iter().map(|&(n, q, _)| (n, q, n * n)).collect::<Vec<_>>());
        assert!(bounded_by_bytes(&time, Some(&quad), None).is_none());
        assert!(bounded_by_bytes(&time, None, None).is_none());
        // A steeper bend (slope 1.3 or more) keeps the n² alternative.
        let mut steep = time.clone();
        steep.top_slope = CACHE_BEND_SLOPE;
        assert!(bounded_by_bytes(&steep, Some(&bytes), None).is_none());
    }

    #[test]
    fn a_cache_step_without_byte_counts_reads_as_n2_or_n3() {
        // A cost that is n² with a cubic part a quarter of it at the largest size (slope
        // about 2.1 over 2k..16k): exactly the shape a table outgrowing the caches gives an
        // n² design (measured: list membership in a Python program, doubling ratios 3.9,
        // 7.1, 4.1, 3.8). With no byte counts to tell them apart it is read as a pair.
        let sizes = [1000.0, 2000.0, 4000.0, 8000.0, 16000.0];
        let ms: Vec<f64> = sizes.iter().map(|n| n * n * (1.0 + n / 48_000.0)).collect();
        let time = fit_growth(&sizes, &ms).unwrap();
        assert_eq!(time.best, GrowthClass::Cubic, "the case this guards");
        assert!(time.top_slope < 2.3, "{}", time.top_slope);
        let (f, note) = bounded_by_bytes(&time, None, None).expect("read as a pair");
        assert_eq!(f.best, GrowthClass::Quadratic);
        assert_eq!(f.alternative, Some(GrowthClass::Cubic));
        assert!(note.contains("no byte counts"), "{note}");
        // A steeper rise (slope 2.9: a real cubic cost) keeps its class.
        let cubic: Vec<f64> = sizes.iter().map(|n| 1e-3 * n * n * n).collect();
        let time = fit_growth(&sizes, &cubic).unwrap();
        assert_eq!(time.best, GrowthClass::Cubic);
        assert!(bounded_by_bytes(&time, None, None).is_none());
    }
}
