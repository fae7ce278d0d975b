//! `framecost shape FILE... [--out SPEC.yaml] [--keep-labels] [--json]` — infer a workload
//! whose table mirrors each sample (CSV, Parquet or Arrow IPC), and show how close a table
//! generated from it comes.
//!
//! Per column it measures kind, null share, distinct count (and whether it grows with the
//! rows), range, text lengths, order, skew and duplicated keys, and writes them with the
//! spec's own keys, commented with what was measured. A column it cannot model is listed
//! with the reason. Then it generates a table from the spec at the sample's size and prints
//! the fidelity report: each statistic of the sample beside the generated one, with `≠`
//! beyond the stated tolerances. With several files it looks for key references between
//! them: when it finds some, it writes one workload whose `tables:` are related by them
//! (placeholder designs in SQL join them) and checks each table as a sweep generates it;
//! when it finds none, one workload per file.
//!
//! Output: with `--out`, the skeleton goes to that file (several unrelated files:
//! `OUT-<table>.yaml` beside it) and the report to stdout; without it, the skeleton goes to stdout and the
//! report to stderr; `--json` puts everything on stdout as one JSON document
//! (`schema: framecost.shape/1`). CSV cells `NA`, `N/A`, `NULL`, `null`, `NaN`, `None` and
//! empty cells are null unless `--null` names others. Exit 0 on success, 2 for bad input.

use super::Failure;
use crate::shape::{self, read::ReadOptions, ShapeOptions};
use std::path::{Path, PathBuf};

/// Infer a workload whose table mirrors sample files, and check it.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Sample files: .csv (.tsv), .parquet, .ipc/.arrow.
    #[arg(required = true)]
    pub files: Vec<PathBuf>,
    /// Write the workload skeleton here (several unrelated files: OUT-<table>.yaml beside it).
    #[arg(long, value_name = "SPEC.yaml")]
    pub out: Option<PathBuf>,
    /// Copy the most frequent labels of text columns into the comments (default: never).
    #[arg(long)]
    pub keep_labels: bool,
    /// Everything as one JSON document on stdout.
    #[arg(long)]
    pub json: bool,
    /// A CSV cell read as null (repeatable; replaces the default list).
    #[arg(long = "null", value_name = "TEXT")]
    pub nulls: Vec<String>,
    /// Read at most this many rows of each file.
    #[arg(long, value_name = "N")]
    pub max_rows: Option<String>,
    /// Seed written into the skeleton.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// How many rows the full data has (of the largest table, when the samples are
    /// related), e.g. `40M`: the skeleton's sizes go towards it and its target is set to it.
    #[arg(long, value_name = "N")]
    pub full_rows: Option<String>,
    /// Replace skeleton files that already exist.
    #[arg(long)]
    pub force: bool,
}

fn fail(msg: impl std::fmt::Display) -> Result<(), Failure> {
    Err(super::failure::usage(msg))
}

/// Where each table's skeleton goes.
fn targets(out: &Path, names: &[String]) -> Vec<PathBuf> {
    if names.len() == 1 {
        return vec![out.to_path_buf()];
    }
    let stem = out.file_stem().map(|s| s.to_string_lossy().to_string()).unwrap_or_else(|| "shape".into());
    names.iter().map(|n| out.with_file_name(format!("{stem}-{n}.yaml"))).collect()
}

fn write_spec(path: &Path, text: &str) -> Result<(), String> {
    use std::io::Write;
    crate::table::write::replace_atomically(path, |f| f.write_all(text.as_bytes()).map_err(|e| format!("{}: cannot write: {e}", path.display()))).map(|_| ())
}

fn report(outcome: &shape::ShapeOutcome) -> String {
    let mut s = String::new();
    for t in &outcome.tables {
        s += &shape::fidelity::render(&t.name, t.rows, &t.fidelity);
        for c in t.columns.iter().filter(|c| c.spec.is_err()) {
            s += &format!("  not modelled: `{}` ({}): {}\n", c.profile.name, c.profile.dtype, c.spec.as_ref().err().map(String::as_str).unwrap_or(""));
        }
    }
    if outcome.tables.len() > 1 {
        if outcome.references.is_empty() {
            s += "key references: none found; one workload per file\n";
        }
        for r in &outcome.references {
            s += &format!(
                "key reference: {}.{} → {}.{} ({} of {} distinct values found among {} unique values{})\n",
                r.table,
                r.column,
                r.refers_to_table,
                r.refers_to_column,
                r.found,
                r.distinct,
                r.target_values,
                if r.names_relate { "; names relate" } else { "" }
            );
        }
        if let Some(rel) = &outcome.related {
            let used: Vec<String> = rel.layout.used.iter().map(|r| format!("{}.{} → {}.{}", r.table, r.column, r.refers_to_table, r.refers_to_column)).collect();
            s += &format!(
                "related workload: {} tables (`{}` follows the swept size), related by {}\n",
                rel.layout.names.len(),
                rel.layout.names[rel.layout.swept],
                used.join(", ")
            );
            let left = outcome.references.len() - rel.layout.used.len();
            if left > 0 {
                s += &format!("  {left} reference(s) not stated: a referenced column is a key and cannot refer in turn\n");
            }
        }
    }
    s
}

pub fn run(args: Args) -> Result<(), Failure> {
    let mut read = ReadOptions::default();
    if !args.nulls.is_empty() {
        read.null_markers = args.nulls.clone();
    }
    if let Some(m) = &args.max_rows {
        match crate::spec::units::parse_rows(m) {
            Ok(n) if n > 0 => read.max_rows = Some(n as usize),
            Ok(_) => return fail("--max-rows: expected at least 1 row"),
            Err(e) => return fail(format!("--max-rows: expected {e}")),
        }
    }
    for f in &args.files {
        if !f.is_file() {
            return fail(format!("{}: no such file", f.display()));
        }
    }
    if let Some(out) = &args.out {
        let folder = out.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
        if !folder.is_dir() {
            return fail(format!("{}: no such folder to write the skeleton into", folder.display()));
        }
    }
    let full_rows = match args.full_rows.as_deref().map(crate::spec::units::parse_rows).transpose() {
        Ok(Some(0)) => return fail("--full-rows: expected at least 1 row"),
        Ok(n) => n,
        Err(e) => return fail(format!("--full-rows: expected {e}")),
    };
    let opts = ShapeOptions { read, keep_labels: args.keep_labels, seed: args.seed, full_rows };
    let outcome = match shape::shape(&args.files, &opts) {
        Ok(o) => o,
        Err(e) => return fail(e),
    };
    let names: Vec<String> = outcome.tables.iter().map(|t| t.name.clone()).collect();
    // Related samples: one workload; else one per sample.
    let texts: Vec<&str> = match &outcome.related {
        Some(r) => vec![r.spec_text.as_str()],
        None => outcome.tables.iter().map(|t| t.spec_text.as_str()).collect(),
    };
    let mut written: Vec<Option<String>> = vec![None; texts.len()];
    if let Some(out) = &args.out {
        let paths = if outcome.related.is_some() { vec![out.clone()] } else { targets(out, &names) };
        if let Some(p) = paths.iter().find(|p| p.exists() && !args.force) {
            return fail(format!("{}: already exists (--force to replace it)", p.display()));
        }
        for (i, (p, t)) in paths.iter().zip(&texts).enumerate() {
            if let Err(e) = write_spec(p, t) {
                return fail(e);
            }
            written[i] = Some(p.display().to_string());
        }
    }
    if args.json {
        match serde_json::to_string_pretty(&outcome.json(&written)) {
            Ok(s) => println!("{s}"),
            Err(e) => return fail(format!("could not write JSON: {e}")),
        }
        return Ok(());
    }
    let text = report(&outcome);
    if args.out.is_some() {
        for w in written.iter().flatten() {
            println!("wrote {w}");
        }
        print!("{text}");
    } else {
        print!("{}", texts.join("---\n"));
        eprint!("{text}");
    }
    Ok(())
}
