//! Presentation: everything people read. Works from saved results only.

pub mod causes;
pub mod color;
pub mod digest;
pub mod error;
pub mod page;
pub mod plot;
pub mod report;
pub mod terminal;
pub mod units;

pub use error::DrawError;

/// The run-level warning when points were left out as disturbed: other work took the
/// machine (`Disturbance::busy`), or the machine itself ran slower at some sizes
/// (`Disturbance::machine_slow`); and the sizes measured a second time because the machine
/// ran slower during the first (`ComparisonRecord::remeasured_after`). None when there is
/// nothing to say.
pub fn disturbed_words(r: &crate::results::reader::RunResults) -> Option<String> {
    let measured: Vec<&crate::results::Measured> = r.workloads.iter().flat_map(|w| &w.points).filter_map(|p| p.measured.as_ref()).collect();
    let (busy, slow) = disturbed_counts(&measured);
    let mut parts = Vec::new();
    if busy > 0 {
        parts.push(format!("The machine was busy: {busy} of {} points were measured while other work competed for the cores.", measured.len()));
    }
    if slow > 0 {
        parts.push(format!(
            "The machine ran slower at some sizes: {slow} of {} points were measured while the drift probe took {} times its usual time or more, though no other process took the cores (a neighbour on the same host, a slower clock).",
            measured.len(),
            crate::results::reader::slow_probe()
        ));
    }
    if !parts.is_empty() {
        parts.push("They are marked and left out of growth classes and verdicts.".into());
    }
    let again: Vec<f64> = r.workloads.iter().flat_map(|w| &w.comparisons).filter_map(|c| c.remeasured_after).collect();
    if !again.is_empty() {
        let top = again.iter().copied().fold(f64::NAN, f64::max);
        let sizes = if again.len() == 1 { "1 size was".to_string() } else { format!("{} sizes were", again.len()) };
        parts.push(format!("{sizes} measured a second time because the machine ran slower during the first (the drift probe took up to {top:.2} times its usual time); the second measurement is the one kept."));
    }
    (!parts.is_empty()).then(|| parts.join(" "))
}

/// Points measured while the machine was busy, and those measured while it ran slower with
/// nothing else busy (`Measured::is_busy`, `Disturbance::machine_slow`).
pub fn disturbed_counts(measured: &[&crate::results::Measured]) -> (usize, usize) {
    let busy = measured.iter().filter(|m| m.is_busy()).count();
    let slow = measured.iter().filter(|m| m.is_contaminated() && !m.is_busy()).count();
    (busy, slow)
}
