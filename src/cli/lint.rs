//! `framecost lint FILE...` — check workload files without running anything.
//!
//! Prints every problem as `file:line:column: path: what was expected, what was found`,
//! with a did-you-mean for unknown keys, steps and values (on stderr; the `ok` lines on
//! stdout). `--json` prints one document instead (`framecost.lint/1`, see docs/results.md).
//! Exit 0 when all files are sound, 2 otherwise.

use super::{Failure, Problem};
use std::path::PathBuf;

/// Schema of the `--json` document.
pub const SCHEMA: &str = "framecost.lint/1";

/// Check workload files without running them.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Workload files or folders of them.
    #[arg(required = true)]
    pub paths: Vec<PathBuf>,
    /// Print one JSON document (every file, every located problem) instead of text.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: Args) -> Result<(), Failure> {
    let files = super::expand_paths(&args.paths).map_err(Failure::Usage)?;
    let mut bad = 0;
    let mut problems = Vec::new();
    let mut docs = Vec::new();
    for f in &files {
        match crate::spec::load(f) {
            Ok(plan) => {
                let programs = super::sweep::program_commands(std::slice::from_ref(&plan));
                if args.json {
                    docs.push(serde_json::json!({
                        "file": f.display().to_string(), "ok": true, "workload": plan.name,
                        "designs": plan.designs.len(), "sizes": plan.sizes, "problems": [],
                        "programs": programs,
                    }));
                } else {
                    let over = match &plan.axis {
                        Some(a) => format!("{} values of {} at {} rows", plan.sizes.len(), a.name, crate::units::rows_label(a.rows)),
                        None => format!("{} sizes", plan.sizes.len()),
                    };
                    println!("{}: ok — {} with {} designs over {over}", f.display(), plan.name, plan.designs.len());
                    // Programs run with the user's permissions: say what `sweep --allow-programs` would run.
                    for c in &programs {
                        println!("  runs a program (needs sweep --allow-programs): {c}");
                    }
                }
            }
            Err(errs) => {
                bad += 1;
                if args.json {
                    let problems: Vec<_> = errs
                        .0
                        .iter()
                        .map(|i| serde_json::json!({ "line": i.line, "column": i.column, "message": i.message, "hint": i.hint }))
                        .collect();
                    docs.push(serde_json::json!({ "file": f.display().to_string(), "ok": false, "problems": problems }));
                } else {
                    problems.push(Problem::Located(errs));
                }
            }
        }
    }
    if args.json {
        let doc = serde_json::json!({ "schema": SCHEMA, "files": docs, "files_with_problems": bad });
        println!("{}", serde_json::to_string_pretty(&doc).unwrap_or_default());
    } else if bad > 0 {
        problems.push(Problem::Said(format!("{bad} of {} file(s) have problems", files.len())));
    }
    if bad > 0 {
        return Err(Failure::Workloads(problems));
    }
    Ok(())
}
