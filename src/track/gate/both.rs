//! `gate --recheck N` with both sides swept again: when the baseline and the new run were
//! made by the framecost build running the gate, the baseline's workloads are swept again
//! from the text the baseline recorded, in turn with the new side's, and each side's runs
//! are compared with the other's (`judge_both`), not one run against the other side's
//! spread. A baseline sweep out of line then no longer reads as a change of the new code,
//! which lets the gate also ask about steady moves under the two-run bar
//! (`wide_suspects`): row-growth's `build-once` slowed by 15%, ×1.18 over its 8 sizes
//! against a bar of ×1.2, uncalled by the two runs alone, was called on five runs of each
//! side (×1.15 against a bar of ×1.10), and nothing else was.

use super::history::{asked_with_improvements, by_design, clean, common_move, demote_unsupported, design_call, hold_points, mean, sd, suspects, History, HistoryMove, MIN_SIZES, RECHECK_LEVEL};
use super::{Call, WorkloadGate};
use crate::results::reader::WorkloadResults;

/// The designs a recheck of both sides also asks about ([`judge_both`]): moved past the
/// threshold over their sizes, relative to the workload's common move, at every size but
/// one, with the raw medians the same way — a steady move that the baseline alone did not
/// call because it lies within three spreads of one point (row-growth's `build-once`
/// slowed by 15%: ×1.12–×1.13 at 8 of 8 sizes against three catalog sweeps, a bar of
/// ×1.13–×1.20). With the baseline's runs at hand, a baseline out of line no longer reads
/// as a change, so a steady move can be asked about.
///
/// A steady move under the threshold is asked about too when its 95% interval lies above
/// ×1 and reaches past the threshold: the two runs show a slowdown and cannot rule out one
/// as large as the threshold. Between two single sweeps a design wanders by ±5–7% as a
/// whole, so a 15% slowdown can measure under the threshold: in two of nine pairings of
/// three unchanged and three slowed catalog sweeps (5 December), `build-once` (×1.15 in one
/// sweep beside its unslowed copy) moved ×1.098 [×1.051–×1.147] and ×1.092
/// [×1.047–×1.139] at 8 of 8 sizes, was not asked about, and went uncaught. Asking costs
/// resweeps, never a call: the two sides' runs decide.
pub fn wide_suspects(wg: &WorkloadGate) -> Vec<String> {
    wide_suspect_moves(wg).map(|m| m.design.clone()).collect()
}

/// The moves [`wide_suspects`] names, with their ratios (the gate's `next step` text).
pub fn wide_suspect_moves(wg: &WorkloadGate) -> impl Iterator<Item = &super::DesignMove> {
    let floor = (1.0 + wg.threshold).ln();
    wg.moves
        .iter()
        .filter(move |m| m.ratio.ln() > floor || (m.ratio_high.ln() > floor && m.ratio_low > 1.0))
        .filter(|m| m.same_way + 1 >= m.sizes && m.raw_ratio > 1.0)
}

/// Judge one workload's calls against runs of both sides (`--recheck N` when the baseline's
/// workload could be swept again too): N runs of the new code (`news`, the new run first)
/// and N of the baseline's (`bases`, the baseline first), swept in alternation. Over the
/// points clean in every run, each run's effect at a point is its log median minus the
/// mean of all runs there, minus the run's common move; a design's effect in a run is the
/// mean over its sizes. The new code's mean effect minus the baseline's is judged by
/// Welch's two-sample t at [`RECHECK_LEVEL`] one-sided, and must also pass the threshold,
/// move all sizes but one the same way, and have the raw medians moved that way. It asks
/// about the designs the baseline alone called, those [`wide_suspects`] names, and the
/// improvements; a point called against the baseline alone stands only where the two
/// sides' runs at that point differ the same way beyond the same bar.
pub fn judge_both(wg: &mut WorkloadGate, news: &[&WorkloadResults], bases: &[&WorkloadResults]) -> History {
    let (kn, kb) = (news.len(), bases.len());
    let mut out = History { runs: kn, baseline_runs: kb, ..Default::default() };
    // Points clean in every run of both sides: (design, rows, new logs, baseline logs).
    let mut keys: Vec<(String, u64, Vec<f64>, Vec<f64>)> = Vec::new();
    for p in &wg.points {
        let n: Option<Vec<f64>> = news.iter().map(|w| clean(w, &p.design, p.rows)).collect();
        let b: Option<Vec<f64>> = bases.iter().map(|w| clean(w, &p.design, p.rows)).collect();
        if let (Some(n), Some(b)) = (n, b) {
            keys.push((p.design.clone(), p.rows, n, b));
        }
    }
    if keys.len() < MIN_SIZES || kn < 2 || kb < 2 {
        return out;
    }
    let mu: Vec<f64> = keys.iter().map(|(_, _, n, b)| mean(&n.iter().chain(b).copied().collect::<Vec<_>>())).collect();
    let designs: Vec<&str> = keys.iter().map(|key| key.0.as_str()).collect();
    let effects = |logs: &[&Vec<f64>], runs: usize| -> Vec<Vec<f64>> {
        let common: Vec<f64> = (0..runs).map(|j| common_move(&designs, &(0..keys.len()).map(|i| logs[i][j] - mu[i]).collect::<Vec<_>>())).collect();
        (0..keys.len()).map(|i| (0..runs).map(|j| logs[i][j] - mu[i] - common[j]).collect()).collect()
    };
    let eff_n = effects(&keys.iter().map(|k| &k.2).collect::<Vec<_>>(), kn);
    let eff_b = effects(&keys.iter().map(|k| &k.3).collect::<Vec<_>>(), kb);
    let floor = (1.0 + wg.threshold).ln();
    let bar = |se: f64, df: f64| floor.max(crate::fit::dist::student_t_quantile(RECHECK_LEVEL, df.max(1.0)).unwrap_or(f64::INFINITY) * se);
    let flagged = asked_with_improvements(wg, suspects(wg).into_iter().chain(wide_suspects(wg)).collect());

    // Points: a change against the baseline alone stands only where both sides' runs differ.
    hold_points(wg, &mut out, &|design, rows, call| {
        let i = keys.iter().position(|key| key.0 == design && key.1 == rows)?;
        let (d, se, df) = welch(&eff_n[i], &eff_b[i]);
        Some(d.abs() > bar(se, df) && (d > 0.0) == (call == Call::Regression))
    });

    for (name, idx) in by_design(&designs) {
        let per_run = |eff: &[Vec<f64>], runs: usize| -> Vec<f64> { (0..runs).map(|j| mean(&idx.iter().map(|&i| eff[i][j]).collect::<Vec<_>>())).collect() };
        let (dn, db) = (per_run(&eff_n, kn), per_run(&eff_b, kb));
        let (d, se, df) = welch(&dn, &db);
        let b = bar(se, df);
        let raw = mean(&idx.iter().map(|&i| mean(&keys[i].2) - mean(&keys[i].3)).collect::<Vec<_>>());
        let at_size: Vec<f64> = idx.iter().map(|&i| mean(&eff_n[i]) - mean(&eff_b[i])).collect();
        let same_way = at_size.iter().filter(|x| **x != 0.0 && (**x > 0.0) == (d > 0.0)).count();
        let steady = same_way + 1 >= idx.len();
        let call = design_call(flagged.iter().any(|f| f == name), d, b, raw, steady);
        let spread = ((sd(&dn).powi(2) + sd(&db).powi(2)) / 2.0).sqrt();
        out.moves.push(HistoryMove { design: name.to_string(), sizes: idx.len(), same_way, ratio: d.exp(), bar: b.exp(), spread: spread.exp(), raw_ratio: raw.exp(), call });
    }
    demote_unsupported(wg, &out, true);
    out
}

/// Welch's two-sample comparison of `n` against `b` (two or more values each): the
/// difference of the means, its standard error √(s²ₙ/kₙ + s²ᵦ/kᵦ) and the
/// Welch–Satterthwaite degrees of freedom (both sides' own variances, not pooled: the new
/// code's runs need not wander as much as the baseline's).
fn welch(n: &[f64], b: &[f64]) -> (f64, f64, f64) {
    let (vn, vb) = (sd(n).powi(2) / n.len() as f64, sd(b).powi(2) / b.len() as f64);
    let se = (vn + vb).sqrt();
    let df = if se > 0.0 { (vn + vb).powi(2) / (vn.powi(2) / (n.len() as f64 - 1.0) + vb.powi(2) / (b.len() as f64 - 1.0)) } else { (n.len() + b.len() - 2) as f64 };
    (mean(n) - mean(b), se, df)
}


#[cfg(test)]
mod tests {
    use super::welch;

    /// Welch's statistics by hand, with the Welch–Satterthwaite formula as textbooks give it
    /// (for example the NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.5.3,
    /// cited from memory): n = 1..5 has mean 3 and variance 2.5, so s²/k = 0.5; b = 2, 4, 6
    /// has mean 4 and variance 4, so s²/k = 4/3; the difference is −1, the standard error
    /// √(0.5 + 4/3) = 1.354006, and the degrees of freedom (11/6)² / (0.5²/4 + (4/3)²/2)
    /// = 3.361111 / 0.951389 = 3.532847.
    #[test]
    fn welch_by_hand() {
        let (d, se, df) = welch(&[1.0, 2.0, 3.0, 4.0, 5.0], &[2.0, 4.0, 6.0]);
        assert!((d + 1.0).abs() < 1e-12, "{d}");
        assert!((se - 1.354006).abs() < 1e-6, "{se}");
        assert!((df - 3.532847).abs() < 1e-6, "{df}");
        // Equal values on both sides: no spread, the degrees of freedom of the pooled test.
        assert_eq!(welch(&[1.0, 1.0, 1.0], &[2.0, 2.0]), (-1.0, 0.0, 3.0));
    }

    /// Moves taken from the gates of 5 December's catalog sweeps (`gate BASE NEW --json`).
    #[test]
    fn a_steady_move_whose_interval_reaches_the_threshold_is_asked_about() {
        let mv = |design: &str, ratio: f64, low: f64, high: f64, raw: f64, same_way: usize| {
            serde_json::json!({"call": "same", "design": design, "ratio": ratio, "ratio_low": low, "ratio_high": high, "raw_ratio": raw, "same_way": same_way, "sizes": 8})
        };
        let wg: super::WorkloadGate = serde_json::from_value(serde_json::json!({
            "workload": "row-growth", "threshold": 0.1, "points": [], "growth": [], "missing": [], "unmatched_designs": [],
            "moves": [
                // Slowed 15%, measured under the threshold, its interval past it: asked.
                mv("slowed", 1.0982, 1.0512, 1.1474, 1.0845, 8),
                // Past the threshold: asked, as before.
                mv("past", 1.124, 1.075, 1.175, 1.13, 8),
                // Unchanged code: an interval across ×1, or sizes that moved both ways.
                mv("across-one", 1.021, 0.997, 1.045, 1.02, 8),
                mv("both-ways", 0.9995, 0.9618, 1.0387, 0.9638, 4),
                // Steady and above ×1 but short of the threshold at its upper end.
                mv("short", 1.04, 1.02, 1.06, 1.04, 8),
                // Steady, its interval past the threshold, but the raw medians did not rise.
                mv("raw-down", 1.098, 1.051, 1.147, 0.99, 8),
            ],
        }))
        .expect("a workload gate");
        assert_eq!(super::wide_suspects(&wg), ["slowed", "past"]);
    }

}
