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
    /// Designs that are programs, not allowed to run: their commands (exit 2).
    ProgramsNotAllowed(Vec<String>),
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
            Failure::Usage(_) | Failure::Workloads(_) | Failure::ProgramsNotAllowed(_) => exit::BAD_INPUT,
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
            Failure::ProgramsNotAllowed(commands) => {
                let mut v = vec![(true, "these workloads have designs that are programs; they would run:".to_string())];
                v.extend(commands.iter().map(|c| (false, format!("  {c}"))));
                v.push((true, "nothing was run: read the commands above, then add --allow-programs to run them".into()));
                v
            }
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

#[cfg(test)]
mod tests {
    use super::*;

    /// Each ending keeps the code `--help` documents for it, and says what it always said.
    #[test]
    fn each_failure_has_its_documented_code_and_words() {
        let draw = || DrawError::Drawing("backend refused".into());
        let cases: Vec<(Failure, i32, &str)> = vec![
            (Failure::Usage("--at: expected a row count".into()), exit::BAD_INPUT, "--at: expected a row count"),
            (Failure::Workloads(vec![Problem::Said("1 of 2 file(s) have problems".into())]), exit::BAD_INPUT, "1 of 2 file(s)"),
            (Failure::ProgramsNotAllowed(vec!["w/d: python3 x.py".into()]), exit::BAD_INPUT, "  w/d: python3 x.py"),
            (Failure::Regression, exit::REGRESSION, ""),
            (Failure::Run("could not build the table".into()), exit::RUN_FAILED, "could not build"),
            (Failure::Sweep(RunError::Stopped { workload: "w".into(), code: 3 }), exit::RUN_FAILED, "exit code 3"),
            (Failure::SweepEnded { failures: 2, mismatches: 0, report: None }, exit::RUN_FAILED, "2 failed point(s), 0 size(s)"),
            (Failure::SweepEnded { failures: 0, mismatches: 0, report: Some(draw()) }, exit::WRITE_FAILED, "the pictures and reports: backend refused"),
            (Failure::History { workload: "w".into(), error: draw() }, exit::RUN_FAILED, "w: backend refused"),
            (Failure::Report(draw()), exit::WRITE_FAILED, "could not write the report: backend refused"),
            (Failure::Write("could not write: broken pipe".into()), exit::WRITE_FAILED, "could not write: broken pipe"),
            (Failure::Interrupted(Some((PathBuf::from("r"), 3))), exit::INTERRUPTED, "3 finished point(s) are in r/points.jsonl"),
            (Failure::Interrupted(None), exit::INTERRUPTED, ""),
        ];
        for (f, code, words) in cases {
            assert_eq!(f.code(), code, "{f:?}");
            assert!(exit::ALL.iter().any(|(c, _)| *c == code), "{code} is documented");
            let said: Vec<String> = f.lines().into_iter().map(|(_, l)| l).collect();
            if words.is_empty() {
                assert!(said.is_empty(), "{f:?} says nothing itself: {said:?}");
            } else {
                assert!(said.iter().any(|l| l.contains(words)), "{f:?}: {said:?}");
            }
        }
    }
}
