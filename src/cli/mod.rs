//! The command line: one file per command, each with its help text and one entry point.

pub mod baseline;
pub mod catalog;
pub mod explain;
pub mod gate;
pub mod history;
pub mod lint;
pub mod recap;
pub mod report;
pub mod shape;
pub mod sweep;
pub mod table;

use clap::{Parser, Subcommand};

/// How the cost of table-pipeline designs grows with the data.
#[derive(Debug, Parser)]
#[command(name = "framecost", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    Sweep(sweep::Args),
    Lint(lint::Args),
    Catalog(catalog::Args),
    Explain(explain::Args),
    Gate(gate::Args),
    Baseline(baseline::Args),
    History(history::Args),
    Recap(recap::Args),
    Report(report::Args),
    Table(table::Args),
    Shape(shape::Args),
}

/// Run the command line; returns the process exit code.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { crate::exit::BAD_INPUT } else { crate::exit::OK };
            let _ = e.print();
            return code;
        }
    };
    match cli.command {
        Command::Sweep(a) => sweep::run(a),
        Command::Lint(a) => lint::run(a),
        Command::Catalog(a) => catalog::run(a),
        Command::Explain(a) => explain::run(a),
        Command::Gate(a) => gate::run(a),
        Command::Baseline(a) => baseline::run(a),
        Command::History(a) => history::run(a),
        Command::Recap(a) => recap::run(a),
        Command::Report(a) => report::run(a),
        Command::Table(a) => table::run(a),
        Command::Shape(a) => shape::run(a),
    }
}

/// Workload files named on the command line: files as given, folders expanded to their
/// `*.yaml` / `*.yml` files in name order.
pub fn expand_paths(paths: &[std::path::PathBuf]) -> Result<Vec<std::path::PathBuf>, String> {
    let mut out = Vec::new();
    for p in paths {
        if p.is_dir() {
            let mut found: Vec<_> = std::fs::read_dir(p)
                .map_err(|e| format!("{}: cannot list the folder: {e}", p.display()))?
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|f| f.is_file() && matches!(f.extension().and_then(|x| x.to_str()), Some("yaml") | Some("yml")))
                .collect();
            found.sort();
            if found.is_empty() {
                return Err(format!("{}: no workload files (*.yaml) in this folder", p.display()));
            }
            out.extend(found);
        } else if p.exists() {
            out.push(p.clone());
        } else {
            return Err(format!("{}: no such file or folder", p.display()));
        }
    }
    Ok(out)
}
