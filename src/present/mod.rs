//! Presentation: everything people read. Works from saved results only.

pub mod terminal;
pub mod units;
