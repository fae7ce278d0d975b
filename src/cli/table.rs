//! `framecost table SPEC --rows N --write FILE` — write a workload's generated table at one
//! size, so the same data can be fed to any tool and what framecost measured can be checked
//! by hand.
//!
//! The format follows the extension: `.parquet`, `.csv`, `.ipc` (or `.arrow`). `--table
//! NAME` picks one of a workload's tables (a single `table:` also answers to `data`); a
//! table whose rows are a share of the swept size gets that share of `--rows`. A workload
//! that sweeps another axis (`rows:` + `sweep:`) is written at one of its points with `--at
//! VALUE` (a count of groups or columns, a null share, a skew), at its own `rows:` unless
//! `--rows` is given; the value is checked as lint checks the workload's `values:`. The
//! table is the one `sweep` builds at that point: same spec, same seed, same bytes. Before
//! anything is generated the memory of the table and the size of the file are estimated; a
//! size that would use more than 80% of the available memory or of the folder's free disk
//! is refused with the estimate (`--force` to write anyway). Only the named file is written,
//! atomically: under a temporary name in the same folder, then renamed. Exit 0 on success,
//! 2 for bad input or a refused size, 3 when writing failed.

use super::Failure;
use crate::units::bytes;
use crate::table::write::{self, FileFormat};
use std::path::PathBuf;

/// Write a workload's generated table to a Parquet, CSV or Arrow IPC file.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The workload file.
    pub spec: PathBuf,
    /// Rows to generate, e.g. 5000, 250k, 1.5M (the swept size; a table declared as a share
    /// of it gets its share). Needed unless the workload fixes its rows with `rows:`.
    #[arg(long, value_name = "N")]
    pub rows: Option<String>,
    /// For a workload that sweeps another axis than rows: the point to write the table at,
    /// e.g. 1k (groups or columns), 10% (a null share), 0.8 (a skew). Without it, the table
    /// as declared.
    #[arg(long, value_name = "VALUE")]
    pub at: Option<String>,
    /// File to write; the extension picks the format (.parquet, .csv, .ipc).
    #[arg(long, value_name = "FILE")]
    pub write: PathBuf,
    /// Which of the workload's tables (the first when not given; a single `table:` is also
    /// called `data`).
    #[arg(long, value_name = "NAME")]
    pub table: Option<String>,
    /// Write even when the estimates say it will not fit.
    #[arg(long)]
    pub force: bool,
}

fn fail(msg: impl std::fmt::Display) -> Result<(), Failure> {
    Err(super::failure::usage(msg))
}

/// Share of available memory or free disk one write may use (the sweep's own rule).
const SHARE: f64 = 0.8;

pub fn run(args: Args) -> Result<(), Failure> {
    let format = match FileFormat::from_path(&args.write) {
        Ok(f) => f,
        Err(e) => return fail(e),
    };
    let plan = match crate::spec::load(&args.spec) {
        Ok(p) => p,
        Err(e) => return fail(e),
    };
    let (rows, at) = match point(&args, &plan) {
        Ok(p) => p,
        Err(e) => return fail(e),
    };
    let tables = match at {
        Some(x) => plan.tables_at(x),
        None => plan.tables.clone(),
    };
    let table = match write::table_of(&tables, args.table.as_deref(), &plan.name) {
        Ok(t) => t,
        Err(e) => return fail(e),
    };
    let columns = &table.columns;
    let swept = rows;
    let rows = table.rows.at(swept);
    let folder = match args.write.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    if !folder.is_dir() {
        return fail(format!("{}: no such folder to write into", folder.display()));
    }
    let need_mem = write::memory_bytes(columns, rows, format);
    let avail = crate::measure::machine::available_memory() as f64;
    if need_mem > avail * SHARE && !args.force {
        return fail(format!(
            "{} rows would need about {} of memory; {} available, {:.0}% of it may be used (--force to write anyway)",
            rows,
            bytes(need_mem),
            bytes(avail),
            SHARE * 100.0
        ));
    }
    let need_disk = write::file_bytes(columns, rows, format);
    if let Some(free) = crate::measure::memory::available_disk(&folder) {
        if need_disk > free as f64 * SHARE && !args.force {
            return fail(format!(
                "the {} file would take about {}; {} free in {}, {:.0}% of it may be used (--force to write anyway)",
                format.label(),
                bytes(need_disk),
                bytes(free as f64),
                folder.display(),
                SHARE * 100.0
            ));
        }
    }
    let mut df = match crate::table::related::generate_table_span(&tables, table, plan.seed, plan.related, swept, 0..rows) {
        Ok(df) => df,
        Err(e) => return Err(Failure::Run(format!("could not build the table of `{}` at {rows} rows: {e}", plan.name))),
    };
    let mut what = format!("`{}`", plan.name);
    if tables.len() > 1 {
        what.push_str(&format!(" table `{}`", table.name));
    }
    if let (Some(x), Some(axis)) = (at, &plan.axis) {
        what.push_str(&format!(" at {}", axis.point(x as f64)));
    }
    let fingerprint = crate::table::fingerprint(&df);
    match write::write_atomic(&mut df, &args.write, format) {
        Ok(len) => {
            println!(
                "{}: {} rows × {} columns of {} (seed {}), {} {} (estimated {}), contents {}",
                args.write.display(),
                rows,
                columns.len(),
                what,
                plan.seed,
                format.label(),
                bytes(len as f64),
                bytes(need_disk),
                fingerprint
            );
            Ok(())
        }
        Err(e) => Err(Failure::Run(e)),
    }
}

/// The rows to write and, for a workload that sweeps another axis, the swept value asked
/// for with `--at` (checked by the rule `values:` entries follow).
fn point(args: &Args, plan: &crate::plan::Plan) -> Result<(u64, Option<u64>), String> {
    if let (Some(_), None) = (&args.at, &plan.axis) {
        return Err(format!("--at: `{}` sweeps rows (`sizes:`), not another axis; its table at a size is written with --rows alone", plan.name));
    }
    let rows = match (&args.rows, &plan.axis) {
        (Some(text), _) => match crate::spec::units::parse_rows(text) {
            Ok(0) => return Err("--rows: expected at least 1 row".into()),
            // The bound of a `sizes:` entry, checked by the same rule.
            Ok(n) if crate::spec::limits::size_problem(n).is_some() => return Err(format!("--rows: {}", crate::spec::limits::size_problem(n).unwrap_or_default())),
            Ok(n) => n,
            Err(e) => return Err(format!("--rows: expected {e}")),
        },
        (None, Some(axis)) => axis.rows,
        (None, None) => {
            let largest = plan.sizes.last().map(|&n| crate::spec::units::rows_label(n)).unwrap_or_else(|| "10k".into());
            return Err(format!("--rows is needed: `{}` sweeps rows (its `sizes:` go up to {largest}), so say how many to write, e.g. --rows {largest}", plan.name));
        }
    };
    // The swept value, when the workload sweeps another axis and one was asked for.
    let at = match (&args.at, &plan.axis) {
        (None, _) | (_, None) => None,
        (Some(text), Some(axis)) => match crate::spec::axis::value_at(axis, &plan.columns, text, rows) {
            Ok(x) => Some(x),
            Err(e) => {
                let over = axis.column.as_deref().map(|c| format!("`{}` of column `{c}`", axis.set.label())).unwrap_or_else(|| "the number of columns".into());
                let (first, last) = (plan.sizes.first().copied().unwrap_or(0), plan.sizes.last().copied().unwrap_or(0));
                return Err(format!(
                    "--at {text}: {e} (`{}` sweeps {} — {over} — from {} to {} at {} rows)",
                    plan.name,
                    axis.name,
                    axis.value_label(first as f64),
                    axis.value_label(last as f64),
                    crate::spec::units::rows_label(rows)
                ));
            }
        },
    };
    Ok((rows, at))
}
