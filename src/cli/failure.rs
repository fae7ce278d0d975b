//! One error path for every command: what a command can end with other than success, kept
//! typed until [`Failure::report`] — the one place that words it on stderr and picks the
//! exit code (the codes of [`crate::exit`], as `--help` and the manual list them).
//!
//! A command's `run` returns `Result<(), Failure>`; `cli::main` hands a failure to
//! `report` with the command's name, which prefixes every line of the command's own
//! (`framecost NAME: …`). Located problems of workload files are printed as the checker
//! words them (`file:line:column: …`), with no prefix.

use crate::exit;
use crate::measure::runner::RunError;
use crate::present::DrawError;
use crate::spec::SpecErrors;
use std::path::PathBuf;

/// How a command ended, when not in success.
#[derive(Debug)]
pub enum Failure {
    /// The command line did not parse, or asked for help or the version (clap words it; exit
    /// 2, or 0 for help and version).
    CommandLine(clap::Error),
    /// Bad input or usage: an option, a file, a run folder, a partial gate (exit 2).
    Usage(String),
    /// Workload files that do not check, each problem in turn (exit 2).
    Workloads(Vec<Problem>),
    /// The gate found a regression; its answer has been printed (exit 1).
    Regression,
    /// A run failed: a table could not be built or written (exit 3).
    Run(String),
    /// A sweep's measuring failed (exit 3), or its results could not be written (exit 4).
    Sweep(RunError),
    /// A sweep ended with failed points or sizes whose outputs differed (exit 3), or with
    /// its pictures and reports unwritten (exit 4; the measurements are kept).
    SweepEnded { failures: usize, mismatches: usize, report: Option<DrawError> },
    /// `history` could not draw a workload's picture (exit 3).
    History { workload: String, error: DrawError },
    /// `report` could not write the pictures and pages (exit 4).
    Report(DrawError),
    /// Results could not be written (exit 4): what was being written and why.
    Write(String),
    /// The sweep was interrupted (exit 130): where the finished points are, and how many;
    /// nothing is said by a measuring child (its parent speaks).
    Interrupted(Option<(PathBuf, usize)>),
}

/// One problem of the workloads a command was given.
#[derive(Debug)]
pub enum Problem {
    /// A file's located problems, as the checker words them.
    Located(SpecErrors),
    /// A line of the command's own.
    Said(String),
}

impl From<RunError> for Failure {
    fn from(e: RunError) -> Self {
        Failure::Sweep(e)
    }
}

impl Failure {
    /// The exit code (see [`crate::exit::ALL`]).
    pub fn code(&self) -> i32 {
        match self {
            Failure::CommandLine(e) if e.use_stderr() => exit::BAD_INPUT,
            Failure::CommandLine(_) => exit::OK,
            Failure::Usage(_) | Failure::Workloads(_) => exit::BAD_INPUT,
            Failure::Regression => exit::REGRESSION,
            Failure::Run(_) | Failure::History { .. } => exit::RUN_FAILED,
            Failure::Sweep(RunError::Write(_)) => exit::WRITE_FAILED,
            Failure::Sweep(_) => exit::RUN_FAILED,
            Failure::SweepEnded { failures, mismatches, .. } if failures + mismatches > 0 => exit::RUN_FAILED,
            Failure::SweepEnded { .. } | Failure::Report(_) | Failure::Write(_) => exit::WRITE_FAILED,
            Failure::Interrupted(_) => exit::INTERRUPTED,
        }
    }

    /// What is said on stderr: `(own, line)` pairs, `own` lines carrying the command's name.
    pub fn lines(&self) -> Vec<(bool, String)> {
        let own = |s: String| vec![(true, s)];
        match self {
            Failure::CommandLine(e) => vec![(false, e.render().to_string())],
            Failure::Usage(m) | Failure::Run(m) => own(m.clone()),
            Failure::Workloads(ps) => ps
                .iter()
                .map(|p| match p {
                    Problem::Located(e) => (false, e.to_string()),
                    Problem::Said(m) => (true, m.clone()),
                })
                .collect(),
            Failure::Regression => Vec::new(),
            Failure::Sweep(RunError::Write(w)) => own(format!("could not write results: {w}")),
            Failure::Sweep(RunError::Lost { workload, restarts, last }) => {
                let why = crate::present::causes::words(last, crate::results::Axis(None));
                own(format!("could not measure `{workload}`: its measuring process ended abnormally {restarts} times; the last: {why}"))
            }
            Failure::Sweep(other) => own(other.to_string()),
            Failure::SweepEnded { failures, mismatches, report } => {
                let mut v = Vec::new();
                if let Some(e) = report {
                    v.push((true, format!("could not write results: the pictures and reports: {e} (the measurements are kept; `framecost report` redraws them)")));
                }
                if failures + mismatches > 0 {
                    v.push((true, format!("{failures} failed point(s), {mismatches} size(s) where outputs differed")));
                }
                v
            }
            Failure::History { workload, error } => own(format!("{}: {error}", crate::units::escaped(workload))),
            Failure::Report(e) => own(format!("could not write the report: {e}")),
            Failure::Write(m) => own(m.clone()),
            Failure::Interrupted(None) => Vec::new(),
            Failure::Interrupted(Some((dir, points))) => {
                let dir = dir.display();
                vec![
                    (true, format!("interrupted; {points} finished point(s) are in {dir}/points.jsonl (partial summary: {dir}/summary.json)")),
                    (true, format!("redraw it with `framecost report {dir}`, or see it with `framecost recap {dir}`")),
                ]
            }
        }
    }

    /// Say it on stderr for command `name` and give the exit code: the one place a
    /// command's failure becomes words and a number.
    pub fn report(self, name: &str) -> i32 {
        if let Failure::CommandLine(e) = &self {
            // clap paints its own message (help on stdout, errors on stderr).
            let _ = e.print();
            return self.code();
        }
        for (own, line) in self.lines() {
            if own {
                eprintln!("framecost {name}: {line}");
            } else {
                eprintln!("{line}");
            }
        }
        self.code()
    }
}

/// A usage failure from anything that displays: the common short form.
pub fn usage(m: impl std::fmt::Display) -> Failure {
    Failure::Usage(m.to_string())
}
