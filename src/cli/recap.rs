//! `framecost recap RUN` — print a saved run's terminal summary again, from its results
//! file alone (also works on a run that was interrupted). `--json` prints the run's summary
//! and verdicts as one document (`framecost.recap/1`, see docs/results.md).

use crate::analyse::AnalyseOptions;
use crate::explain::Analysed;
use crate::results::reader::RunResults;
use std::path::PathBuf;

/// Schema of the `--json` document.
pub const SCHEMA: &str = "framecost.recap/1";

/// Show a saved run's summary again, from its results alone.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// A run folder (or its points.jsonl).
    pub run: PathBuf,
    /// Print everything: all findings, cost-model notes, intervals, chunks.
    #[arg(long)]
    pub long: bool,
    /// Print one JSON document (summary and verdicts) instead of text.
    #[arg(long)]
    pub json: bool,
}

/// A run as one JSON document: its summary (as in `summary.json`) and each workload's
/// verdict. `sweep --json` prints the same with a few fields more.
pub fn document(schema: &str, an: &Analysed) -> serde_json::Value {
    let r = an.results;
    let verdicts: Vec<_> = an.workloads().map(|x| serde_json::json!({ "workload": x.w.header.workload, "verdict": x.e.verdict })).collect();
    serde_json::json!({
        "schema": schema,
        "complete": r.complete(),
        "damaged_lines": r.damaged_lines,
        "summary": crate::results::summary::Summary::from_results(r),
        "verdicts": verdicts,
    })
}

pub fn run(args: Args) -> Result<(), super::Failure> {
    let r = RunResults::read(&args.run).map_err(super::failure::usage)?;
    let analysed = Analysed::new(&r, &AnalyseOptions::default());
    if args.json {
        let mut doc = document(SCHEMA, &analysed);
        doc["run"] = args.run.display().to_string().into();
        println!("{}", serde_json::to_string_pretty(&doc).unwrap_or_default());
    } else {
        use crate::present::terminal::{render_with, Options, Style};
        print!("{}", render_with(&analysed, Style::detect(), Options::detect(args.long)));
    }
    Ok(())
}
