//! The command line: one file per command, each with its help text and one entry point.

pub mod baseline;
pub mod catalog;
pub mod completions;
pub mod explain;
pub mod failure;
pub mod gate;
pub mod history;
pub mod lint;
pub mod manual;
pub mod recap;
pub mod report;
pub mod shape;
pub mod sweep;
pub mod table;

use clap::{CommandFactory, FromArgMatches, Parser, Subcommand};
pub use failure::{Failure, Problem};

/// How the cost of table-pipeline designs grows with the data.
#[derive(Debug, Parser)]
#[command(name = "framecost", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    /// When to colour output; `auto`: on a terminal, unless NO_COLOR is set.
    #[arg(long, global = true, value_name = "WHEN", default_value = "auto")]
    pub color: ColorWhen,
    #[command(subcommand)]
    pub command: Command,
}

/// The `--color` choices.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ColorWhen {
    Auto,
    Always,
    Never,
}

impl ColorWhen {
    /// The choice in `args`, read before parsing so that clap's own help and errors follow
    /// it too (the last `--color` wins, as clap would decide).
    pub fn from_args(args: &[std::ffi::OsString]) -> ColorWhen {
        let mut when = ColorWhen::Auto;
        let mut it = args.iter().skip(1).map(|a| a.to_string_lossy());
        while let Some(a) = it.next() {
            if a == "--" {
                break;
            }
            let value = if a == "--color" { it.next().map(|v| v.into_owned()) } else { a.strip_prefix("--color=").map(str::to_string) };
            match value.as_deref() {
                Some("always") => when = ColorWhen::Always,
                Some("never") => when = ColorWhen::Never,
                Some("auto") => when = ColorWhen::Auto,
                _ => {}
            }
        }
        when
    }

    /// Make the choice the process's own: anstream (and so every styled print) and clap.
    fn apply(self, cmd: clap::Command) -> clap::Command {
        let (stream, help) = match self {
            ColorWhen::Auto => (anstream::ColorChoice::Auto, clap::ColorChoice::Auto),
            ColorWhen::Always => (anstream::ColorChoice::Always, clap::ColorChoice::Always),
            ColorWhen::Never => (anstream::ColorChoice::Never, clap::ColorChoice::Never),
        };
        stream.write_global();
        cmd.color(help)
    }
}

/// The exit codes as `--help` lists them (from [`crate::exit::ALL`]).
pub fn exit_codes_help() -> String {
    let mut s = String::from("Exit codes:\n");
    for (code, what) in crate::exit::ALL {
        s.push_str(&format!("  {code:>3}  {what}\n"));
    }
    s
}

/// The whole command line as clap sees it, exit codes under every command's help.
pub fn command() -> clap::Command {
    let codes = exit_codes_help();
    let with = codes.clone();
    Cli::command().after_help(codes).mut_subcommands(move |s| s.after_help(with.clone()))
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
    Completions(completions::Args),
    Manual(manual::Args),
}

/// Run the command line; returns the process exit code. Every command's failure goes
/// through [`Failure::report`], the one place that words it and picks the code.
pub fn main() -> i32 {
    // Measurement records why points were skipped as numbers; present words them.
    crate::results::cause::word_with(crate::present::causes::words);
    let args: Vec<std::ffi::OsString> = std::env::args_os().collect();
    let cmd = ColorWhen::from_args(&args).apply(command());
    let cli = match cmd.try_get_matches_from(args).and_then(|m| Cli::from_arg_matches(&m)) {
        Ok(c) => c,
        Err(e) => return Failure::CommandLine(e).report("framecost"),
    };
    let name = cli.command.name();
    match dispatch(cli.command) {
        Ok(()) => crate::exit::OK,
        Err(f) => f.report(name),
    }
}

/// Run one command.
pub fn dispatch(command: Command) -> Result<(), Failure> {
    match command {
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
        Command::Completions(a) => completions::run(a),
        Command::Manual(a) => manual::run(a),
    }
}

impl Command {
    /// The command's name as typed, for its messages (`framecost NAME: …`).
    pub fn name(&self) -> &'static str {
        match self {
            Command::Sweep(_) => "sweep",
            Command::Lint(_) => "lint",
            Command::Catalog(_) => "catalog",
            Command::Explain(_) => "explain",
            Command::Gate(_) => "gate",
            Command::Baseline(_) => "baseline",
            Command::History(_) => "history",
            Command::Recap(_) => "recap",
            Command::Report(_) => "report",
            Command::Table(_) => "table",
            Command::Shape(_) => "shape",
            Command::Completions(_) => "completions",
            Command::Manual(_) => "manual",
        }
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
