//! `framecost catalog [--long] [--json] [FOLDER]` — the workloads, one line each, and the
//! steps designs are made of. Without FOLDER, the built-in workloads embedded in the binary
//! (so it works from any folder); `--long` adds each step's parameters and cost-model note;
//! `--json` prints one document (`framecost.catalog/1`, see docs/results.md).

use super::{Failure, Problem};
use crate::plan::Plan;
use std::path::PathBuf;

/// Schema of the `--json` document.
pub const SCHEMA: &str = "framecost.catalog/1";

/// List the built-in workloads (or a folder's) and the steps designs are made of.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// A folder of workload files to list instead of the built-in workloads.
    pub folder: Option<PathBuf>,
    /// Also show every step's parameters and cost-model note.
    #[arg(long)]
    pub long: bool,
    /// Print one JSON document instead of text.
    #[arg(long)]
    pub json: bool,
}

/// The workloads to list: (label, plan) for each that loads, and the problems of the others.
fn workloads(args: &Args) -> (Vec<(String, Plan)>, Vec<Problem>) {
    let mut ok = Vec::new();
    let mut bad = Vec::new();
    match &args.folder {
        None => {
            for name in crate::builtin::names() {
                match crate::builtin::load(name) {
                    Ok(p) => ok.push((crate::builtin::label(name), p)),
                    Err(e) => bad.push(Problem::Said(format!("built-in `{name}` does not load: {e}"))),
                }
            }
        }
        Some(folder) => match super::expand_paths(std::slice::from_ref(folder)) {
            Ok(files) => {
                for f in files {
                    match crate::spec::load(&f) {
                        Ok(p) => ok.push((f.display().to_string(), p)),
                        Err(e) => {
                            bad.push(Problem::Located(e));
                            bad.push(Problem::Said(format!("{} does not load (left out of the list)", f.display())));
                        }
                    }
                }
            }
            Err(e) => bad.push(Problem::Said(e)),
        },
    }
    (ok, bad)
}

fn json(args: &Args, list: &[(String, Plan)]) -> serde_json::Value {
    let workloads: Vec<_> = list
        .iter()
        .map(|(file, p)| {
            serde_json::json!({
                "name": p.name,
                "file": file,
                "about": p.about,
                "designs": p.designs.iter().map(|d| serde_json::json!({ "name": d.name, "recipe": d.recipe() })).collect::<Vec<_>>(),
            })
        })
        .collect();
    let steps: Vec<_> = crate::patterns::all_steps()
        .map(|(family, s)| {
            serde_json::json!({
                "name": s.name,
                "family": family,
                "summary": s.summary,
                "takes": s.takes.label(),
                "gives": s.gives.label(),
                "cost_note": s.cost_note,
                "params": s.params.iter().map(param_json).collect::<Vec<_>>(),
            })
        })
        .collect();
    let source = args.folder.as_ref().map(|f| f.display().to_string()).unwrap_or_else(|| "built-in".into());
    serde_json::json!({ "schema": SCHEMA, "source": source, "workloads": workloads, "steps": steps })
}

pub fn run(args: Args) -> Result<(), Failure> {
    if let Some(folder) = &args.folder {
        super::expand_paths(std::slice::from_ref(folder)).map_err(Failure::Usage)?;
    }
    let (list, bad) = workloads(&args);
    // The list is printed either way; the workloads that did not load make it a failure.
    let code = if bad.is_empty() { Ok(()) } else { Err(Failure::Workloads(bad)) };
    if args.json {
        println!("{}", serde_json::to_string_pretty(&json(&args, &list)).unwrap_or_default());
        return code;
    }
    match &args.folder {
        None => println!("built-in workloads (sweep one with `framecost sweep --builtin NAME`):"),
        Some(f) => println!("workloads in {}:", f.display()),
    }
    for (_, p) in &list {
        let first = p.about.split(". ").next().unwrap_or("").trim_end_matches('.').to_string();
        println!("  {:<22} {}", p.name, first);
        if args.long {
            for d in &p.designs {
                println!("      {:<20} {}", d.name, d.recipe());
            }
        }
    }
    println!("\nsteps:");
    for (family, s) in crate::patterns::all_steps() {
        println!("  {:<22} [{family}] {}", s.name, s.summary);
        if args.long {
            for p in s.params {
                println!("      {:<18} {} (default {}): {}", p.name, p.kind.describe(), p.default, p.doc);
            }
            println!("      takes {}, gives {}", s.takes.label(), s.gives.label());
            println!("      cost: {}", s.cost_note);
            println!();
        }
    }
    code
}

/// One step parameter; a column parameter also says what its column must hold (`needs`,
/// the column kinds accepted) and, for a run of columns, which parameter counts them.
fn param_json(p: &crate::patterns::ParamDef) -> serde_json::Value {
    let mut v = serde_json::json!({ "name": p.name, "kind": p.kind.describe(), "default": p.default, "doc": p.doc });
    if let crate::patterns::ParamKind::Column { need, span } = p.kind {
        v["needs"] = serde_json::json!(need.label());
        if let Some(count) = span {
            v["run_length"] = serde_json::json!(count);
        }
    }
    v
}
