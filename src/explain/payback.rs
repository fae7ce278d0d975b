//! Set-up pay-back: a design that prepares a structure in `setup:` (an index, a copy, a
//! sort) is timed without it, so it always looks fast. This finding puts the set-up cost
//! back: at the largest size where the design and the fastest design without set-up were
//! both measured, after how many runs the prepared structure has paid for itself.
//!
//! A newcomer must know: set-up is timed once per size outside the sampled region
//! (`PointRecord::setup_ns`); runs made before it was recorded simply have no finding.

use super::Finding;
use crate::units::time_ns;
use crate::results::reader::WorkloadResults;

/// The designs measured without any set-up.
fn plain_designs(w: &WorkloadResults) -> Vec<&str> {
    w.header.designs.iter().filter(|d| w.points.iter().filter(|p| p.design == d.name).all(|p| p.setup_ns.is_none())).map(|d| d.name.as_str()).collect()
}

/// The fastest of `plain` measured at `rows`, with its median.
fn fastest_plain<'a>(w: &WorkloadResults, plain: &[&'a str], rows: u64) -> Option<(&'a str, f64)> {
    plain.iter().filter_map(|o| w.point(o, rows).and_then(|q| q.measured.as_ref()).map(|m| (*o, m.median_ns))).min_by(|a, b| a.1.total_cmp(&b.1))
}

/// Runs after which a set-up of `setup` ns is won back by runs of `mine` ns against `theirs`
/// (None: the runs save nothing, so it never is).
fn runs_to_win_back(setup: f64, mine: f64, theirs: f64) -> Option<f64> {
    (theirs > mine).then(|| (setup / (theirs - mine)).ceil().max(1.0))
}

/// For `design`'s set-up at `rows`: the fastest design without set-up measured there, and the
/// runs after which the set-up is won back against it (None inside: never). The verdict's
/// clause and the pay-back finding both come from here, so they cannot disagree.
pub fn won_back_at(w: &WorkloadResults, design: &str, rows: u64) -> Option<(String, Option<f64>)> {
    let p = w.point(design, rows)?;
    let (setup, mine) = (p.setup_ns?, p.measured.as_ref()?.median_ns);
    let (other, theirs) = fastest_plain(w, &plain_designs(w), rows)?;
    Some((other.to_string(), runs_to_win_back(setup, mine, theirs)))
}

/// One finding per design with a timed set-up, against the fastest design without one.
pub fn findings(w: &WorkloadResults) -> Vec<Finding> {
    let mut out = Vec::new();
    let plain = plain_designs(w);
    for d in &w.header.designs {
        let with_setup: Vec<_> = w.design_points(&d.name).into_iter().filter(|p| p.setup_ns.is_some() && p.measured.is_some()).collect();
        let Some(last) = with_setup.iter().rev().find(|p| plain.iter().any(|o| w.point(o, p.rows).is_some_and(|q| q.measured.is_some()))) else {
            continue;
        };
        let (rows, setup) = (last.rows, last.setup_ns.unwrap_or(0.0));
        let mine = last.measured.as_ref().map_or(f64::NAN, |m| m.median_ns);
        let Some((other, theirs)) = fastest_plain(w, &plain, rows) else {
            continue;
        };
        let saved = theirs - mine;
        let (measured, implies) = if let Some(runs) = runs_to_win_back(setup, mine, theirs) {
            (
                format!(
                    "its set-up took {} at {}; each run then saves {} against `{other}` ({} vs {})",
                    time_ns(setup),
                    w.header.axis().point(rows),
                    time_ns(saved),
                    time_ns(mine),
                    time_ns(theirs)
                ),
                format!("the prepared structure pays for itself after {runs:.0} run{} at this size; for fewer runs, `{other}` is cheaper overall", if runs == 1.0 { "" } else { "s" }),
            )
        } else {
            (
                format!("its set-up took {} at {} and its runs are no faster than `{other}`'s ({} vs {})", time_ns(setup), w.header.axis().point(rows), time_ns(mine), time_ns(theirs)),
                "the prepared structure never pays for itself at this size".to_string(),
            )
        };
        out.push(Finding { design: Some(d.name.clone()), kind: "payback".into(), measured, implies, action: String::new() });
    }
    out
}
