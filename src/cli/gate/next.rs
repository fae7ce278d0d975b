//! The `next step` paragraph of a gate judged alone: what `--recheck` would sweep again.

use crate::track::gate::GateReport;

/// What to do before acting on a gate of two separate sweeps judged alone (no history, no
/// recheck, no side-by-side pair): a design also wanders by itself between two sweeps, so a
/// failure names the workloads `--recheck` would sweep again, and a pass names the steady
/// moves under the threshold whose interval reaches past it (what a recheck of both sides
/// asks about). On this machine, 4 of 6 pairings of three back-to-back catalog sweeps of
/// unchanged code failed alone and none with `--recheck 5`; two 15% slowdowns passed alone
/// under the threshold and were caught with it.
///
/// `both_sides`: the runs were both made by the build running the gate, so `--recheck` would
/// sweep the baseline's side too, and ask about the wide suspects as well (`recheck::asks`).
pub fn next_step(r: &GateReport, both_sides: bool) -> Option<String> {
    if r.pair.is_some() || r.recheck.is_some() || r.history_runs.is_some() {
        return None;
    }
    if r.failed() {
        let asked: Vec<String> = r.workloads.iter().filter(|w| super::recheck::asks(w, both_sides)).map(|w| w.workload.clone()).collect();
        return Some(format!(
            "a design also wanders by itself between two sweeps; before acting on this, run the same gate with `--recheck 5`: it sweeps {} again ({}) and calls only what holds over those runs",
            if asked.is_empty() { "the failing workloads".to_string() } else { asked.join(", ") },
            if both_sides { "the baseline's side too: this framecost build made both runs" } else { "the new code's side only: the baseline's is swept too when the framecost build running the gate made both runs" }
        ));
    }
    let steady: Vec<String> = r
        .workloads
        .iter()
        .flat_map(|w| crate::track::gate::wide_suspect_moves(w).map(move |m| format!("{} `{}` ×{:.3} [×{:.3}–×{:.3}]{}", w.workload, m.design, m.ratio, m.ratio_low, m.ratio_high, with_files(m))))
        .collect();
    (!steady.is_empty()).then(|| {
        format!(
            "slower at every size but under the bar of two single sweeps, with an interval that reaches past the threshold: {}; a slowdown of the threshold's size is not ruled out there, and `--recheck 5` with both runs made by this framecost build would sweep both sides again to tell",
            steady.join(", ")
        )
    })
}

/// What the files probe says of a steady move: the file system moved the same way by
/// `FILES_MOVE` or more, so a second sweep may see it move again.
fn with_files(m: &crate::track::gate::DesignMove) -> String {
    let way = if m.ratio >= 1.0 { crate::track::gate::Call::Regression } else { crate::track::gate::Call::Improvement };
    match m.files_ratio {
        Some(f) if crate::track::gate::files_moved_with(way, f) => format!(" (the file system moved with it: its probe ×{f:.2})"),
        _ => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::track::gate::{Call, WorkloadGate};

    fn report() -> GateReport {
        let w = WorkloadGate { workload: "w".into(), threshold: 0.1, points: vec![], growth: vec![], missing: vec![], unmatched_designs: vec![], common_mode: None, axis: None, moves: vec![], history: None, recheck: None };
        GateReport { baseline_run: "a".into(), new_run: "b".into(), workloads: vec![w], ..Default::default() }
    }

    #[test]
    fn a_gate_of_two_sweeps_alone_says_what_to_do_next() {
        use crate::track::gate::DesignMove;
        // A steady move under the threshold with its interval past it (measured: row-growth's
        // `build-once` slowed 15%, ×1.098 [×1.051–×1.147] at 8 of 8 sizes), on a gate that passed.
        let mut r = report();
        r.workloads[0].moves = vec![DesignMove { design: "d".into(), sizes: 8, same_way: 8, ratio: 1.098, ratio_low: 1.051, ratio_high: 1.147, raw_ratio: 1.085, files_ratio: None, call: Call::Same }];
        let text = next_step(&r, true).expect("a steady move is named");
        assert!(text.contains("w `d` ×1.098 [×1.051–×1.147]") && text.contains("--recheck 5"), "{text}");
        // Failed: the failing workloads are named with the recheck that would sweep them.
        let mut failed = r.clone();
        failed.workloads[0].moves[0].call = Call::Regression;
        failed.design_regressions = 1;
        let text = next_step(&failed, false).expect("a failure names the recheck");
        assert!(text.contains("sweeps w again (the new code's side only"), "{text}");
        // Already rechecked, or nothing steady: nothing to add.
        let mut done = failed.clone();
        done.recheck = Some(Default::default());
        assert_eq!(next_step(&done, true), None);
        assert_eq!(next_step(&report(), true), None);
    }
}
