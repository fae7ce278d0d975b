//! `framecost lint FILE...` — check workload files without running anything.
//!
//! Prints every problem as `file:line:column: path: what was expected, what was found`,
//! with a did-you-mean for unknown keys, steps and values. Exit 0 when all files are
//! sound, 2 otherwise.

use std::path::PathBuf;

/// Check workload files without running them.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Workload files or folders of them.
    #[arg(required = true)]
    pub paths: Vec<PathBuf>,
}

pub fn run(args: Args) -> i32 {
    let files = match super::expand_paths(&args.paths) {
        Ok(f) => f,
        Err(e) => {
            eprintln!("framecost lint: {e}");
            return crate::exit::BAD_INPUT;
        }
    };
    let mut bad = 0;
    for f in &files {
        match crate::spec::load(f) {
            Ok(plan) => {
                println!("{}: ok — {} with {} designs over {} sizes", f.display(), plan.name, plan.designs.len(), plan.sizes.len());
                // Programs run with the user's permissions: say what `sweep --allow-programs` would run.
                for c in super::sweep::program_commands(std::slice::from_ref(&plan)) {
                    println!("  runs a program (needs sweep --allow-programs): {c}");
                }
            }
            Err(errs) => {
                bad += 1;
                eprintln!("{errs}");
            }
        }
    }
    if bad > 0 {
        eprintln!("framecost lint: {bad} of {} file(s) have problems", files.len());
        crate::exit::BAD_INPUT
    } else {
        crate::exit::OK
    }
}
