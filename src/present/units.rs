//! Human units for times, bytes and row counts, as the presentation calls them. They live in
//! `crate::units` (the results and the explanations word numbers with them too, and must not
//! import the presentation); this re-export keeps `present::units::…` paths working.

pub use crate::units::*;
