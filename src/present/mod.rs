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
/// (`Disturbance::machine_slow`). None when every point is clean.
pub fn disturbed_words(measured: &[&crate::results::Measured]) -> Option<String> {
    let (busy, slow) = disturbed_counts(measured);
    let mut parts = Vec::new();
    if busy > 0 {
        parts.push(format!("The machine was busy: {busy} of {} points were measured while other work competed for the cores.", measured.len()));
    }
    if slow > 0 {
        parts.push(format!(
            "The machine ran slower at some sizes: {slow} of {} points were measured while the drift probe took ×{} or more its usual time, though no other process took the cores (a neighbour on the same host, a slower clock).",
            measured.len(),
            crate::results::reader::SLOW_PROBE
        ));
    }
    (!parts.is_empty()).then(|| format!("{} They are marked and left out of growth classes and verdicts.", parts.join(" ")))
}

/// Points measured while the machine was busy, and those measured while it ran slower with
/// nothing else busy (`Measured::is_busy`, `Disturbance::machine_slow`).
pub fn disturbed_counts(measured: &[&crate::results::Measured]) -> (usize, usize) {
    let busy = measured.iter().filter(|m| m.is_busy()).count();
    let slow = measured.iter().filter(|m| m.is_contaminated() && !m.is_busy()).count();
    (busy, slow)
}
