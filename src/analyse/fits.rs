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
    let per_size: Vec<(f64, Vec<f64>)> = measured
        .iter()
        .map(|(rows, m)| (*rows as f64, m.samples_ns.iter().copied().filter(|v| *v > 0.0).collect::<Vec<_>>()))
        .filter(|(_, s)| !s.is_empty())
        .collect();
    let exponent = exponent_with_ci(&per_size, 4, 1000, seed)
        .ok()
        .map(|e| ExponentOut { slope: e.slope, low: e.lo, high: e.hi, sizes_used: e.sizes_used });
    (fit_timed(&per_size), exponent)
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
            let evidence = evidence();
            return Some((
                f,
                format!(
                    "time: {} fits best (slope {:.2} over the largest sizes) but {evidence}: read as {} or {} — data outgrowing the caches bends the curve the same way",
                    time.best.label(),
                    time.top_slope,
                    GrowthClass::Quadratic.label(),
                    time.best.label()
                ),
            ));
        }
    }
    if time.best.rank() < GrowthClass::Quadratic.rank() || time.top_slope >= MEMORY_HIERARCHY_SLOPE {
        return None;
    }
    let bytes_linear = match (bytes, bytes_slope) {
        (Some(b), _) => b.best.rank() <= GrowthClass::Linearithmic.rank() && b.alternative.is_none_or(|a| a.rank() <= GrowthClass::Linearithmic.rank()),
        (None, Some(s)) => time.top_slope < 1.3 && s < MEMORY_HIERARCHY_SLOPE,
        (None, None) => time.top_slope < 1.3,
    };
    if !bytes_linear {
        return None;
    }
    let slower = time
        .candidates
        .iter()
        .filter(|c| c.rejection.is_none() && matches!(c.class, GrowthClass::Linear | GrowthClass::Linearithmic))
        .min_by(|x, y| x.aicc.total_cmp(&y.aicc))?;
    let mut f = time.as_class(slower.class)?;
    f.alternative = Some(time.best);
    let why = match (bytes, bytes_slope) {
        (None, None) => "no byte counts".to_string(),
        _ => evidence(),
    };
    Some((
        f,
        format!(
            "time: {} fits best (slope {:.2} over the largest sizes) but {why}: read as {} or {} — data outgrowing the caches bends the curve the same way",
            time.best.label(),
            time.top_slope,
            slower.class.label(),
            time.best.label()
        ),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::growth::fit_growth;

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
