//! `framecost baseline save RUN NAME` / `framecost baseline list` — keep runs under a name
//! so a gate can compare against them later (`framecost gate NAME NEW`). A saved baseline is
//! a copy of the run's `points.jsonl` and `summary.json` in `<store>/<NAME>/`.

use super::failure::{usage, Failure};
use crate::results::reader::RunResults;
use std::path::PathBuf;

/// Save a run as a named baseline, or list the saved ones.
#[derive(Debug, clap::Args)]
pub struct Args {
    #[command(subcommand)]
    pub action: Action,
    /// Where saved baselines live.
    #[arg(long, default_value = "baselines", value_name = "DIR", global = true)]
    pub store: PathBuf,
}

#[derive(Debug, clap::Subcommand)]
pub enum Action {
    /// Save a run folder under a name (replacing an older one with --replace).
    Save {
        run: PathBuf,
        name: String,
        #[arg(long)]
        replace: bool,
    },
    /// List saved baselines.
    List,
}

pub fn run(a: Args) -> Result<(), Failure> {
    let bad = |m: String| Err(Failure::Usage(m));
    match a.action {
        Action::Save { run, name, replace } => {
            if name.is_empty() || !name.chars().all(|c| c.is_ascii_alphanumeric() || "-_.".contains(c)) || name.starts_with('.') {
                return bad(format!("expected a name of letters, digits, `-`, `_` or `.`, found `{name}`"));
            }
            let r = RunResults::read(&run).map_err(usage)?;
            if !r.complete() {
                return bad(format!("{} did not finish; only complete runs can be baselines", run.display()));
            }
            let dir = a.store.join(&name);
            if dir.exists() && !replace {
                return bad(format!("baseline `{name}` exists already (--replace to overwrite)"));
            }
            let src = if run.is_dir() { run.clone() } else { run.parent().map(PathBuf::from).unwrap_or_default() };
            if let Err(e) = std::fs::create_dir_all(&dir) {
                return bad(format!("{}: {e}", dir.display()));
            }
            for f in ["points.jsonl", "summary.json"] {
                if let Err(e) = std::fs::copy(src.join(f), dir.join(f)) {
                    return bad(format!("{}: {e}", src.join(f).display()));
                }
            }
            println!("saved {} as baseline `{name}` in {}", run.display(), dir.display());
            Ok(())
        }
        Action::List => {
            let Ok(entries) = std::fs::read_dir(&a.store) else {
                println!("no baselines in {}", a.store.display());
                return Ok(());
            };
            let mut rows: Vec<(String, String)> = entries
                .filter_map(|e| e.ok())
                .filter(|e| e.path().join("points.jsonl").exists())
                .filter_map(|e| {
                    let r = RunResults::read(&e.path()).ok()?;
                    let h = r.run?;
                    let names: Vec<String> = r.workloads.iter().map(|w| w.header.workload.clone()).collect();
                    Some((e.file_name().to_string_lossy().to_string(), format!("run {} on {} · {}", h.run_id, h.machine.cpu_model, names.join(", "))))
                })
                .collect();
            rows.sort();
            if rows.is_empty() {
                println!("no baselines in {}", a.store.display());
            }
            for (n, d) in rows {
                println!("{n:<24} {d}");
            }
            Ok(())
        }
    }
}
