//! `framecost recap RUN` — print a saved run's terminal summary again, from its results
//! file alone (also works on a run that was interrupted).

use std::path::PathBuf;

/// Show a saved run's summary again, from its results alone.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// A run folder (or its points.jsonl).
    pub run: PathBuf,
    /// Print everything: all findings, cost-model notes, intervals, chunks.
    #[arg(long)]
    pub long: bool,
}

pub fn run(args: Args) -> i32 {
    match crate::results::reader::RunResults::read(&args.run) {
        Ok(r) => {
            use crate::present::terminal::{render_with, Options, Style};
            print!("{}", render_with(&r, Style::detect(), Options::detect(args.long)));
            crate::exit::OK
        }
        Err(e) => {
            eprintln!("framecost recap: {e}");
            crate::exit::BAD_INPUT
        }
    }
}
