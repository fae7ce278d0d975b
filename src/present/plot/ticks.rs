//! Tick values that are round in the unit printed: 1-2-5 steps for rows, times and ratios
//! (decimal units), powers of two for bytes (binary units: 1 KiB, 4 KiB, 16 KiB, 1 MiB),
//! so every label reads as a round number.

/// 1, 2, 5 × 10^k within `[lo, hi]`; only 1 × 10^k when that gives too many, and 1-2-3-5
/// or finer round steps when the range is under a decade. Returns (labelled ticks, grid-only ticks).
pub fn decimal(lo: f64, hi: f64) -> (Vec<f64>, Vec<f64>) {
    if !(lo > 0.0 && hi > lo && lo.is_finite() && hi.is_finite()) {
        return (vec![], vec![]);
    }
    let all = |mults: &[f64]| -> Vec<f64> {
        let mut v = Vec::new();
        let mut e = lo.log10().floor() as i32 - 1;
        while 10f64.powi(e) <= hi * 10.0 {
            for m in mults {
                let t = m * 10f64.powi(e);
                // Round away float noise so labels print exactly (2e-3 not 0.0020000000000000005).
                let t = format!("{t:.12e}").parse::<f64>().unwrap_or(t);
                if t >= lo * (1.0 - 1e-9) && t <= hi * (1.0 + 1e-9) {
                    v.push(t);
                }
            }
            e += 1;
        }
        v
    };
    let grid = all(&[1.0, 2.0, 5.0]);
    for mults in [&[1.0, 2.0, 5.0][..], &[1.0][..]] {
        let t = all(mults);
        if t.len() <= 9 && t.len() >= 2 {
            return (t, grid);
        }
    }
    let ones = all(&[1.0]);
    if ones.len() > 9 {
        // Many decades: every other decade (or every third...).
        let step = ones.len().div_ceil(8);
        let t: Vec<f64> = ones.iter().copied().enumerate().filter(|(k, _)| k % step == 0).map(|(_, v)| v).collect();
        return (t, ones);
    }
    let t = all(&[1.0, 2.0, 3.0, 5.0]);
    if t.len() >= 2 {
        return (t, grid);
    }
    // Under a factor of about three: finer steps, still round (0.8, 0.9, 1, 1.2, 1.5), and
    // for a very narrow range steps of a tenth of the leading digit (1.3, 1.4, 1.5).
    let t = all(&[1.0, 1.2, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]);
    if t.len() >= 2 {
        return (t, grid);
    }
    let tenths: Vec<f64> = (10..100).map(|k| k as f64 / 10.0).collect();
    let t = all(&tenths);
    let step = t.len().div_ceil(10).max(1);
    (t.into_iter().enumerate().filter(|(k, _)| k % step == 0).map(|(_, v)| v).collect(), grid)
}

/// Powers of two within `[lo, hi]`, every `step`-th (aligned so the steps land on 1 KiB,
/// 1 MiB...), at most ten. Returns (labelled ticks, grid-only ticks).
pub fn binary(lo: f64, hi: f64) -> (Vec<f64>, Vec<f64>) {
    if !(lo > 0.0 && hi > lo && lo.is_finite() && hi.is_finite()) {
        return (vec![], vec![]);
    }
    let k0 = lo.log2().ceil() as i32;
    let k1 = hi.log2().floor() as i32;
    let grid: Vec<f64> = (k0..=k1).map(|k| 2f64.powi(k)).collect();
    for step in [1, 2, 3, 5, 10, 20] {
        let t: Vec<f64> = (k0..=k1).filter(|k| k.rem_euclid(step) == 0).map(|k| 2f64.powi(k)).collect();
        if t.len() <= 10 && !t.is_empty() {
            return (t, grid);
        }
    }
    (vec![], grid)
}

/// Labelled ticks of a log axis `[lo, hi]` drawn `pixels` tall, thinned so no two labels
/// are closer than `gap` pixels: `anchor` (×1 in a ratio lane) is kept first when it is a
/// tick, then the others nearest to it outward. The ticks dropped stay as grid lines.
/// (History lanes are about 80 pixels tall: a lane spanning ×0.6 to ×1.7 got 0.8, 0.9 and 1
/// labelled 10 pixels apart, in 12-pixel type.)
pub fn spaced((bold, light): (Vec<f64>, Vec<f64>), lo: f64, hi: f64, pixels: f64, gap: f64, anchor: f64) -> (Vec<f64>, Vec<f64>) {
    if !(lo > 0.0 && hi > lo && pixels > 0.0) {
        return (bold, light);
    }
    let at = |v: f64| (v / lo).ln() / (hi / lo).ln() * pixels;
    let mut order: Vec<f64> = bold.clone();
    order.sort_by(|a, b| (a / anchor).ln().abs().total_cmp(&(b / anchor).ln().abs()));
    let mut kept: Vec<f64> = Vec::new();
    for v in order {
        if kept.iter().all(|k| (at(*k) - at(v)).abs() >= gap) {
            kept.push(v);
        }
    }
    kept.sort_by(f64::total_cmp);
    let mut grid = light;
    grid.extend(bold.iter().copied().filter(|v| !kept.contains(v)));
    grid.sort_by(f64::total_cmp);
    grid.dedup();
    (kept, grid)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Thinned labels keep ×1 and never sit closer than the gap; the rest stay as grid.
    #[test]
    fn spaced_labels_keep_the_anchor_and_their_distance() {
        let (lo, hi) = (0.55, 1.7);
        let (bold, grid) = spaced(decimal(lo, hi), lo, hi, 80.0, 15.0, 1.0);
        assert!(bold.contains(&1.0), "{bold:?}");
        let px = |v: f64| (v / lo).ln() / (hi / lo).ln() * 80.0;
        for w in bold.windows(2) {
            assert!(px(w[1]) - px(w[0]) >= 15.0, "{bold:?}");
        }
        assert!(bold.len() >= 3, "{bold:?}");
        for v in decimal(lo, hi).0 {
            assert!(bold.contains(&v) || grid.contains(&v), "{v} lost");
        }
        // Room enough: nothing dropped.
        assert_eq!(spaced(decimal(lo, hi), lo, hi, 2000.0, 15.0, 1.0).0, decimal(lo, hi).0);
    }
}
