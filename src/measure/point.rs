//! Writing a design's point the moment its sampling at one size ends — measured, failed,
//! or a trial stopped unfinished — and teaching its [`DesignState`] what later sizes admit.

use super::admit::DesignState;
use super::program::ProgramDesign;
use super::runner::{Outcome, RunError};
use super::sampling::Active;
use crate::plan::Plan;
use crate::results::writer::RunWriter;
use crate::results::*;

/// What the comparison of one size is made from: (design, samples, median, output).
pub(super) type MeasuredRow = (String, Vec<f64>, f64, Option<crate::patterns::OutputFacts>);

/// Write the point of a design whose sampling ended, the moment it ends, and update what
/// later sizes learn from it. A design interrupted before its first sample leaves no point.
pub(super) fn finish_point(
    plan: &Plan,
    rows: u64,
    a: &mut Active,
    st: &mut DesignState,
    out: &mut RunWriter,
    outcome: &mut Outcome,
    measured: &mut Vec<MeasuredRow>,
    probe_runs: &[(f64, f64)],
    programs: &[Option<ProgramDesign>],
) -> Result<(), RunError> {
    if a.written {
        return Ok(());
    }
    a.written = true;
    let point = |m: Option<Measured>, s: Option<SkipInfo>| {
        Record::Point(PointRecord { workload: plan.name.clone(), design: a.design.name.clone(), rows, measured: m, skipped: s, setup_ns: a.setup_ns })
    };
    if let Some(info) = a.overrun.take() {
        // A trial stopped unfinished: over the budget here and at every larger size.
        st.learn_trial_stopped(&info);
        out.write(point(None, Some(info)))?;
        outcome.skipped += 1;
        return Ok(());
    }
    if let Some(err) = &a.error {
        let info = SkipInfo::failed(err.clone());
        st.learn_failed(rows, &info);
        out.write(point(None, Some(info)))?;
        outcome.failures += 1;
        return Ok(());
    }
    if a.samples.is_empty() {
        return Ok(());
    }
    let m = super::sampling::summarize(a, probe_runs, programs);
    st.learn_measured(plan, rows, &m);
    measured.push((a.design.name.clone(), m.samples_ns.clone(), m.median_ns, m.output.clone()));
    out.write(point(Some(m), None))?;
    outcome.measured += 1;
    Ok(())
}
