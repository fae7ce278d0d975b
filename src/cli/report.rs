//! `framecost report RUN` — redraw a saved run's pictures and reports without running
//! anything: `pictures/*.svg|png`, `report.md`, `report.html` (self-contained) and the
//! tables `points.parquet`, `samples.parquet` and `points.csv`, written into the run folder
//! (or `--out DIR`).

use crate::analyse::AnalyseOptions;
use super::failure::{usage, Failure};
use crate::spec::units::parse_rows;
use std::path::PathBuf;

/// Redraw a saved run's pictures and reports from its results alone.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// A run folder.
    pub run: PathBuf,
    /// Write into this folder instead of the run folder.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Predict at this many rows instead of each workload's target.
    #[arg(long, value_name = "ROWS")]
    pub at: Option<String>,
}

pub fn run(a: Args) -> Result<(), Failure> {
    let r = crate::results::reader::RunResults::read(&a.run).map_err(usage)?;
    let at = a.at.as_deref().map(parse_rows).transpose().map_err(|e| usage(format!("--at: expected {e}")))?;
    let dir = a.out.clone().unwrap_or_else(|| if a.run.is_dir() { a.run.clone() } else { a.run.parent().map(PathBuf::from).unwrap_or_default() });
    let analysed = crate::explain::Analysed::new(&r, &AnalyseOptions { at, ..AnalyseOptions::default() });
    let w = crate::present::report::write(&dir, &analysed).map_err(Failure::Report)?;
    println!(
        "report: {}\n        {}\ntables: {}\n        {}\n        {}\npictures: {} files in {}",
        w.html.display(),
        w.markdown.display(),
        dir.join("points.parquet").display(),
        dir.join("samples.parquet").display(),
        w.csv.display(),
        w.pictures.len(),
        dir.join("pictures").display()
    );
    Ok(())
}
