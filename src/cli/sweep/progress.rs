//! Progress of a sweep on stderr: on a terminal a bar with the elapsed time and an estimate
//! of what is left; otherwise one plain line per finished workload (and per finished size
//! of a long workload), so a CI log shows the sweep moving.

use crate::measure::runner::Progress;
use crate::plan::Plan;
use crate::units::rows_label;
use std::time::Instant;

/// Progress on stderr: on a terminal a bar with the elapsed time and an estimate of what is
/// left; otherwise one plain line per finished workload (and per finished size once a
/// workload has run for [`LONG_WORKLOAD_S`]), so a CI log shows the sweep moving. Drawn
/// only from the runner's calls between samples (never from a timer thread: the
/// allocation counter is process-wide).
pub struct Bar {
    pub pb: Option<indicatif::ProgressBar>,
    state: std::sync::Mutex<BarState>,
}

/// A workload that has run this long reports each finished size when piped.
const LONG_WORKLOAD_S: f64 = 20.0;

#[derive(Default)]
struct BarState {
    /// (name, sizes, designs, run budget in seconds) of every workload, in sweep order.
    plans: Vec<(String, Vec<u64>, usize, f64)>,
    /// Index of the current workload.
    current: usize,
    /// Points finished in the current workload.
    done_here: usize,
    /// Work finished (Σ rows of finished points) and in all, for the estimate.
    work_done: f64,
    work_total: f64,
    points_done: u64,
    started: Option<Instant>,
    workload_started: Option<Instant>,
    size_started: Option<Instant>,
}

fn hms(s: f64) -> String {
    let s = s.max(0.0).round() as u64;
    if s >= 3600 {
        format!("{}h{:02}m", s / 3600, (s % 3600) / 60)
    } else if s >= 60 {
        format!("{}m{:02}s", s / 60, s % 60)
    } else {
        format!("{s}s")
    }
}

impl Bar {
    pub fn new(plans: &[Plan]) -> Bar {
        use std::io::IsTerminal;
        let total: u64 = plans.iter().map(|p| (p.sizes.len() * p.designs.len()) as u64).sum();
        let state = BarState {
            plans: plans.iter().map(|p| (p.name.clone(), p.sizes.clone(), p.designs.len(), p.budget.whole_run_s)).collect(),
            work_total: plans.iter().map(|p| p.sizes.iter().map(|&n| n as f64).sum::<f64>() * p.designs.len() as f64).sum(),
            started: Some(Instant::now()),
            ..BarState::default()
        };
        let pb = std::io::stderr().is_terminal().then(|| {
            let pb = indicatif::ProgressBar::with_draw_target(Some(total), indicatif::ProgressDrawTarget::stderr());
            if let Ok(st) = indicatif::ProgressStyle::with_template("{bar:20} {pos}/{len} points · {wide_msg}") {
                pb.set_style(st);
            }
            pb
        });
        Bar { pb, state: std::sync::Mutex::new(state) }
    }

    /// A workload starts (called by `run` before the runner).
    pub fn begin(&self, index: usize) {
        if let Ok(mut st) = self.state.lock() {
            st.current = index;
            st.done_here = 0;
            st.workload_started = Some(Instant::now());
            st.size_started = Some(Instant::now());
        }
    }

    /// A workload ended: one plain line when piped.
    pub fn end(&self, summary: &str) {
        if self.pb.is_some() {
            return;
        }
        if let Ok(st) = self.state.lock() {
            let Some((name, ..)) = st.plans.get(st.current) else { return };
            let took = st.workload_started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
            let all = st.started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
            eprintln!(
                "framecost: {name} done in {} ({}/{} workloads, {} elapsed){}",
                hms(took),
                st.current + 1,
                st.plans.len(),
                hms(all),
                if summary.is_empty() { String::new() } else { format!(": {summary}") }
            );
        }
    }

    /// Seconds left: the pace so far (by rows, as cost grows at least with the rows), but
    /// never more than what the run budgets still allow.
    fn left(st: &BarState) -> Option<f64> {
        let elapsed = st.started?.elapsed().as_secs_f64();
        if st.work_done <= 0.0 {
            return None;
        }
        let by_pace = elapsed / st.work_done * (st.work_total - st.work_done);
        let here = st.workload_started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
        let budget: f64 = st.plans.get(st.current).map(|p| (p.3 - here).max(0.0)).unwrap_or(0.0)
            + st.plans.iter().skip(st.current + 1).map(|p| p.3).sum::<f64>();
        Some(by_pace.min(budget))
    }
}

impl Progress for Bar {
    fn point(&self, workload: &str, rows: u64, _index: usize, design: &str, samples: usize) {
        let Some(pb) = &self.pb else { return };
        let Ok(st) = self.state.lock() else { return };
        let elapsed = st.started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
        let left = Bar::left(&st).map(|s| format!(" · about {} left", hms(s))).unwrap_or_default();
        pb.set_message(format!("{} elapsed{left} · {workload} · {} rows · {design} · {samples} samples", hms(elapsed), rows_label(rows)));
    }
    fn rewound(&self, kept: usize) {
        let Ok(mut st) = self.state.lock() else { return };
        let lost = st.done_here.saturating_sub(kept);
        st.done_here = kept;
        st.points_done = st.points_done.saturating_sub(lost as u64);
        if let Some(pb) = &self.pb {
            pb.set_position(st.points_done);
        }
    }
    fn point_done(&self) {
        let Ok(mut st) = self.state.lock() else { return };
        st.points_done += 1;
        st.done_here += 1;
        let Some((name, sizes, designs, _)) = st.plans.get(st.current).cloned() else { return };
        let k = (st.done_here - 1) / designs.max(1);
        st.work_done += sizes.get(k).copied().unwrap_or(0) as f64;
        if let Some(pb) = &self.pb {
            pb.inc(1);
            return;
        }
        // Piped: one line per finished size of a long workload.
        if designs > 0 && st.done_here % designs == 0 && st.done_here < designs * sizes.len() {
            let here = st.workload_started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
            let size_took = st.size_started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
            st.size_started = Some(Instant::now());
            if here >= LONG_WORKLOAD_S {
                let left = Bar::left(&st).map(|s| format!(", about {} left", hms(s))).unwrap_or_default();
                eprintln!(
                    "framecost: {name} · {} rows done in {} (size {}/{}{left})",
                    rows_label(sizes[k]),
                    hms(size_took),
                    k + 1,
                    sizes.len()
                );
            }
        }
    }
}

