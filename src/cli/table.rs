//! `framecost table SPEC --rows N --write FILE` — write a workload's generated table at one
//! size, so the same data can be fed to any tool and what framecost measured can be checked
//! by hand.
//!
//! The format follows the extension: `.parquet`, `.csv`, `.ipc` (or `.arrow`). `--table
//! NAME` picks one of a workload's tables (a single `table:` is called `data`). The table is
//! the one `sweep` builds at that size: same spec, same seed, same bytes. Before anything is
//! generated the memory of the table and the size of the file are estimated; a size that
//! would use more than 80% of the available memory or of the folder's free disk is refused
//! with the estimate (`--force` to write anyway). Only the named file is written, atomically:
//! under a temporary name in the same folder, then renamed. Exit 0 on success, 2 for bad
//! input or a refused size, 3 when writing failed.

use crate::units::bytes;
use crate::table::write::{self, FileFormat};
use std::path::PathBuf;

/// Write a workload's generated table to a Parquet, CSV or Arrow IPC file.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The workload file.
    pub spec: PathBuf,
    /// Rows to generate, e.g. 5000, 250k, 1.5M.
    #[arg(long, value_name = "N")]
    pub rows: String,
    /// File to write; the extension picks the format (.parquet, .csv, .ipc).
    #[arg(long, value_name = "FILE")]
    pub write: PathBuf,
    /// Which of the workload's tables (a single `table:` is called `data`).
    #[arg(long, value_name = "NAME")]
    pub table: Option<String>,
    /// Write even when the estimates say it will not fit.
    #[arg(long)]
    pub force: bool,
}

fn fail(msg: impl std::fmt::Display) -> i32 {
    eprintln!("framecost table: {msg}");
    crate::exit::BAD_INPUT
}

/// Share of available memory or free disk one write may use (the sweep's own rule).
const SHARE: f64 = 0.8;

pub fn run(args: Args) -> i32 {
    let rows = match crate::spec::units::parse_rows(&args.rows) {
        Ok(0) => return fail("--rows: expected at least 1 row"),
        Ok(n) if n > crate::spec::validate::MAX_ROWS => return fail(format!("--rows: expected at most 10^10 rows, found {n}")),
        Ok(n) => n,
        Err(e) => return fail(format!("--rows: expected {e}")),
    };
    let format = match FileFormat::from_path(&args.write) {
        Ok(f) => f,
        Err(e) => return fail(e),
    };
    let plan = match crate::spec::load(&args.spec) {
        Ok(p) => p,
        Err(e) => return fail(e),
    };
    let columns = match write::columns_of(&plan, args.table.as_deref()) {
        Ok(c) => c,
        Err(e) => return fail(e),
    };
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
    let mut df = match crate::table::generate(columns, plan.seed, rows) {
        Ok(df) => df,
        Err(e) => {
            eprintln!("framecost table: could not build the table of `{}` at {rows} rows: {e}", plan.name);
            return crate::exit::RUN_FAILED;
        }
    };
    let fingerprint = crate::table::fingerprint(&df);
    match write::write_atomic(&mut df, &args.write, format) {
        Ok(len) => {
            println!(
                "{}: {} rows × {} columns of `{}` (seed {}), {} {} (estimated {}), contents {}",
                args.write.display(),
                rows,
                columns.len(),
                plan.name,
                plan.seed,
                format.label(),
                bytes(len as f64),
                bytes(need_disk),
                fingerprint
            );
            crate::exit::OK
        }
        Err(e) => {
            eprintln!("framecost table: {e}");
            crate::exit::RUN_FAILED
        }
    }
}
