//! How far the machine itself moved between the two runs of a gate, as its probes saw it.

use super::GateReport;

/// How far the machine itself moved between the two runs, as its probes saw it: the
/// yardstick (once per run), and the drift probe and the memory probe (at every compared
/// point) and the files probe (at the points of designs that write files), each as the
/// range holding the middle 80% of the points.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MachineMove {
    pub yardstick: Option<f64>,
    pub drift: Option<(f64, f64)>,
    pub memory: Option<(f64, f64)>,
    /// The files probe's range, over the points of designs that write files. Not part of
    /// [`MachineMove::widest`]: it moves only those designs.
    pub files: Option<(f64, f64)>,
}

impl MachineMove {
    /// The largest move either way, as a factor (≥ 1): 1.5 for ×0.67 or ×1.5.
    pub fn widest(&self) -> f64 {
        let ends = self.yardstick.into_iter().chain(self.drift.into_iter().chain(self.memory).flat_map(|(lo, hi)| [lo, hi]));
        ends.map(|x| x.ln().abs()).fold(0.0, f64::max).exp()
    }
}

impl GateReport {
    /// How far the machine moved between the runs (none when they ran on different
    /// machines, or nothing was compared).
    pub fn machine_move(&self) -> Option<MachineMove> {
        if self.machines_differ {
            return None;
        }
        let points = self.workloads.iter().flat_map(|w| &w.points);
        let drift: Vec<f64> = points.clone().filter(|p| p.normalised_by.as_deref() == Some("drift probe")).filter_map(|p| p.normalised_ratio.map(|n| p.ratio / n)).collect();
        let memory: Vec<f64> = points.clone().filter_map(|p| p.memory_ratio).collect();
        let files: Vec<f64> = points.filter_map(|p| p.files_ratio).collect();
        let range = |v: &[f64]| -> Option<(f64, f64)> {
            let mut v: Vec<f64> = v.iter().copied().filter(|x| x.is_finite() && *x > 0.0).collect();
            if v.is_empty() {
                return None;
            }
            v.sort_by(f64::total_cmp);
            Some((crate::fit::sample::quantile_sorted(&v, 0.1), crate::fit::sample::quantile_sorted(&v, 0.9)))
        };
        let m = MachineMove { yardstick: self.yardstick_ratio, drift: range(&drift), memory: range(&memory), files: range(&files) };
        (m.yardstick.is_some() || m.drift.is_some() || m.memory.is_some()).then_some(m)
    }
}

#[cfg(test)]
mod tests {
    use super::MachineMove;

    /// The widest move is the largest factor either way over every probe's ends.
    #[test]
    fn the_widest_machine_move_counts_both_directions() {
        let m = MachineMove { yardstick: Some(1.11), drift: Some((0.82, 1.44)), memory: Some((0.6, 1.3)), files: None };
        assert!((m.widest() - 1.0 / 0.6).abs() < 1e-9, "{}", m.widest());
        let m = MachineMove { yardstick: Some(1.05), drift: None, memory: None, files: None };
        assert!((m.widest() - 1.05).abs() < 1e-9);
        assert_eq!(MachineMove { yardstick: None, drift: None, memory: None, files: None }.widest(), 1.0);
    }
}
