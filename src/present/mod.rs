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
