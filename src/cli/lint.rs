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
    let machine_caches = crate::measure::scrub::cache_levels();
    for f in &files {
        match crate::spec::load(f) {
            Ok(plan) => {
                let programs = super::sweep::program_commands(std::slice::from_ref(&plan));
                let caches = cache_note(&plan, &machine_caches);
                let slowed = slowed_note(&plan);
                if args.json {
                    docs.push(serde_json::json!({
                        "file": f.display().to_string(), "ok": true, "workload": plan.name,
                        "designs": plan.designs.len(), "sizes": plan.sizes, "problems": [],
                        "programs": programs, "caches": caches, "slowed": slowed,
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
                    if let Some(note) = &caches {
                        println!("  note: {note}");
                    }
                    if let Some(note) = &slowed {
                        println!("  note: {note}");
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

/// The designs slowed on purpose (`slowdown:`), so a rehearsal left in a workload is seen.
fn slowed_note(plan: &crate::plan::Plan) -> Option<String> {
    let slowed: Vec<String> = plan.designs.iter().filter(|d| d.slowdown > 0.0).map(|d| format!("`{}` by {:.0}%", d.name, d.slowdown * 100.0)).collect();
    (!slowed.is_empty()).then(|| format!("slowed on purpose with `slowdown:` (a rehearsal of the gate; remove it when done): {}", slowed.join(", ")))
}

/// Advice, not a problem: the table at the largest size fits in a cache of this machine
/// that the table at the target does not (`analyse::caches` for why it matters).
fn cache_note(plan: &crate::plan::Plan, caches: &[crate::results::CacheLevel]) -> Option<String> {
    let (target, largest) = (plan.target?, *plan.sizes.last()?);
    if plan.axis.is_some() {
        return None;
    }
    let c = crate::analyse::caches::levels_passed(largest, plan.table_bytes(largest), target, caches)?;
    Some(format!(
        "the table at the largest size, {}, is about {} and fits in {} of this machine; at the target, {}, it is about {}: predictions there cross that cache, which usually raises the cost per row, and no size measured shows by how much — let the sizes reach past about {}",
        plan.axis_point(largest),
        crate::units::bytes(c.fitted_bytes),
        crate::analyse::caches::levels_text(&c.levels),
        plan.axis_point(target),
        crate::units::bytes(c.target_bytes),
        crate::results::Axis(None).point_f(c.past_rows as f64)
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::results::CacheLevel;

    fn plan(sizes: &str, target: &str) -> crate::plan::Plan {
        let text = format!(
            "name: cast-ladder\nseed: 5\ntable:\n  columns:\n    - {{name: kilograms, kind: int, range: [4, 30]}}\nsizes: {sizes}\n{target}designs:\n  - {{name: one-cast, steps: [{{cast_column: {{column: kilograms, declared: float}}}}]}}\n"
        );
        crate::spec::load_str("ladder.yaml", &text).expect("a sound workload")
    }

    /// This project's machine as sysfs lists it (2 MiB L2 per core, 480 MiB L3 shared).
    const XEON: [CacheLevel; 2] = [CacheLevel { level: 2, bytes: 2 << 20, shared_by: 1 }, CacheLevel { level: 3, bytes: 480 << 20, shared_by: 2 }];

    #[test]
    fn sizes_that_stop_inside_a_cache_the_target_leaves_are_advised() {
        // One Int64 column: 8 bytes a row, as the plan estimates it.
        let p = plan("[16k, 64k]", "target: 1M\n");
        let per_row = p.table_bytes(64_000) / 64_000.0;
        let note = cache_note(&p, &XEON).expect("a note");
        assert!(note.contains("the L2 cache (2.00 MiB)"), "{note}");
        let past = (64_000.0 * (2u64 << 20) as f64 / p.table_bytes(64_000)).ceil();
        assert!(note.contains(&format!("past about {} rows", crate::units::rows_label_f(past))), "{note} ({per_row} bytes a row)");
        // Sizes already past the L2, no target, or no caches known: nothing to say; nor for
        // the shared L3 (`analyse::caches::counted`).
        assert!(cache_note(&plan("[16k, 4M]", "target: 16M\n"), &XEON).is_none());
        assert!(cache_note(&plan("[16k, 64k]", ""), &XEON).is_none());
        assert!(cache_note(&p, &[]).is_none());
    }
}
