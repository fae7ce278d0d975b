//! What can go wrong while drawing and writing pictures and pages, kept typed until a
//! command prints it (`cli::failure`). Each variant displays as the words framecost has
//! always printed for it.

use crate::results::writer::WriteError;

/// A picture, page or table of a report that could not be made.
#[derive(Debug, thiserror::Error)]
pub enum DrawError {
    /// The drawing backend refused (its own words: they are the data).
    #[error("{0}")]
    Drawing(String),
    /// A folder for the pictures could not be made.
    #[error("{0}")]
    Folder(std::io::Error),
    /// A drawn picture could not be read back for the page.
    #[error("{path}: {error}")]
    Read { path: std::path::PathBuf, error: std::io::Error },
    /// A picture or page could not be written in place.
    #[error(transparent)]
    Write(#[from] WriteError),
    /// The tables for notebooks (Parquet, CSV) could not be written.
    #[error("{0}")]
    Tables(String),
}

/// A drawing backend's error as a [`DrawError`] (for `map_err`).
pub fn drawing<E: std::fmt::Display>(e: E) -> DrawError {
    DrawError::Drawing(e.to_string())
}
