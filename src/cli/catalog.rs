//! `framecost catalog [--long] [FOLDER]` — the built-in workloads, one line each, and the
//! steps designs are made of. `--long` adds each step's parameters and cost-model note.

use std::path::PathBuf;

/// List the built-in workloads and the steps designs are made of.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Folder of workload files.
    #[arg(default_value = "workloads")]
    pub folder: PathBuf,
    /// Also show every step's parameters and cost-model note.
    #[arg(long)]
    pub long: bool,
}

pub fn run(args: Args) -> i32 {
    let mut code = crate::exit::OK;
    println!("workloads in {}:", args.folder.display());
    match super::expand_paths(std::slice::from_ref(&args.folder)) {
        Ok(files) => {
            for f in files {
                match crate::spec::load(&f) {
                    Ok(p) => {
                        let first = p.about.split(". ").next().unwrap_or("").trim_end_matches('.').to_string();
                        println!("  {:<22} {}", p.name, first);
                        if args.long {
                            for d in &p.designs {
                                println!("      {:<20} {}", d.name, d.recipe());
                            }
                        }
                    }
                    Err(e) => {
                        println!("  {:<22} (does not load: {})", f.display(), e.0.first().map(|i| i.message.clone()).unwrap_or_default());
                        code = crate::exit::BAD_INPUT;
                    }
                }
            }
        }
        Err(e) => {
            println!("  {e}");
            code = crate::exit::BAD_INPUT;
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
