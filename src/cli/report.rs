//! `framecost report RUN` — redraw a saved run's pictures and reports without running
//! anything: `pictures/*.svg|png`, `report.md`, `report.html` (self-contained) and the
//! tables `points.parquet`, `samples.parquet` and `points.csv`, written into the run folder
//! (or `--out DIR`).

use crate::analyse::AnalyseOptions;
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

pub fn run(a: Args) -> i32 {
    let r = match crate::results::reader::RunResults::read(&a.run) {
        Ok(r) => r,
        Err(e) => {
            eprintln!("framecost report: {e}");
            return crate::exit::BAD_INPUT;
        }
    };
    let at = match a.at.as_deref().map(parse_rows).transpose() {
        Ok(v) => v,
        Err(e) => {
            eprintln!("framecost report: --at: expected {e}");
            return crate::exit::BAD_INPUT;
        }
    };
    let dir = a.out.clone().unwrap_or_else(|| if a.run.is_dir() { a.run.clone() } else { a.run.parent().map(PathBuf::from).unwrap_or_default() });
    let analysed = crate::explain::Analysed::new(&r, &AnalyseOptions { at, ..AnalyseOptions::default() });
    match crate::present::report::write(&dir, &analysed) {
        Ok(w) => {
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
            crate::exit::OK
        }
        Err(e) => {
            eprintln!("framecost report: could not write the report: {e}");
            crate::exit::WRITE_FAILED
        }
    }
}
