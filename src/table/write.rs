//! Writing a generated table to a file, so the same data can be fed to any tool and what
//! framecost measured can be checked by hand.
//!
//! The format follows the file's extension (`.parquet`, `.csv`, `.ipc` or `.arrow`). A
//! newcomer must know two things: the file is written under a temporary name in the same
//! folder and renamed into place, so a reader never sees half a file and an interrupted
//! write leaves the old file (if any) untouched; and [`file_bytes`] is the size estimate the
//! `table` command checks against free disk before anything is generated.

use crate::plan::{ColumnPlan, TablePlan};
use crate::spec::suggest::closest;
use crate::spec::model::ColumnKind;
use polars::prelude::*;
use std::fs::File;
use std::path::{Path, PathBuf};

/// The name a workload's single `table:` answers to (`--table data`) whatever its `name:`.
pub const SINGLE_TABLE: &str = "data";

/// The table called `name` among a workload's tables (None: the first). `workload` names
/// the workload in the message when there is no such table.
pub fn table_of<'a>(tables: &'a [TablePlan], name: Option<&str>, workload: &str) -> Result<&'a TablePlan, String> {
    let found = match name {
        None => tables.first(),
        Some(n) => tables.iter().find(|t| t.name == n).or_else(|| (n == SINGLE_TABLE && tables.len() == 1).then(|| &tables[0])),
    };
    found.ok_or_else(|| {
        let asked = name.unwrap_or_default();
        let names: Vec<&str> = tables.iter().map(|t| t.name.as_str()).collect();
        let hint = closest(asked, names.iter().copied().chain((tables.len() == 1).then_some(SINGLE_TABLE)))
            .map(|s| format!(" (did you mean `{s}`?)"))
            .unwrap_or_default();
        format!("`{workload}` has no table `{asked}`{hint}; its tables: {}", names.join(", "))
    })
}

/// File formats a table can be written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FileFormat {
    Parquet,
    Csv,
    Ipc,
}

impl FileFormat {
    /// The format named by a path's extension.
    pub fn from_path(path: &Path) -> Result<FileFormat, String> {
        let ext = path.extension().and_then(|e| e.to_str()).map(str::to_ascii_lowercase);
        match ext.as_deref() {
            Some("parquet") => Ok(FileFormat::Parquet),
            Some("csv") => Ok(FileFormat::Csv),
            Some("ipc") | Some("arrow") => Ok(FileFormat::Ipc),
            Some(other) => Err(format!("{}: cannot tell the format from `.{other}`; use .parquet, .csv or .ipc", path.display())),
            None => Err(format!("{}: the file needs an extension to choose the format: .parquet, .csv or .ipc", path.display())),
        }
    }
    pub fn label(self) -> &'static str {
        match self {
            FileFormat::Parquet => "Parquet",
            FileFormat::Csv => "CSV",
            FileFormat::Ipc => "Arrow IPC",
        }
    }
}

/// Characters one CSV cell of a column takes, roughly (with its separator).
fn csv_cell_bytes(c: &ColumnPlan, rows: u64) -> f64 {
    let digits = |v: f64| v.abs().max(1.0).log10().floor() + 2.0;
    let value = match (c.kind, c.range) {
        (ColumnKind::Key, _) => digits(rows as f64),
        (ColumnKind::Int, crate::plan::RangePlan::Int(a, b)) => digits(a as f64).max(digits(b as f64)),
        (ColumnKind::Int, _) => 8.0,
        // Floats are written with full precision: up to 17 significant digits, sign, point.
        (ColumnKind::Float, _) => 20.0,
        (ColumnKind::Date, _) => 10.0,
        (ColumnKind::Bool, _) => 5.0,
        (ColumnKind::Text | ColumnKind::Category, _) => (c.length.0 + c.length.1) as f64 / 2.0 + 2.0,
    };
    (value * (1.0 - c.nulls)).max(0.0) + 1.0
}

/// Estimated size of the written file. Parquet and IPC are bounded by the in-memory size
/// (Parquet usually much smaller); CSV by the text width of each cell.
pub fn file_bytes(columns: &[ColumnPlan], rows: u64, format: FileFormat) -> f64 {
    match format {
        FileFormat::Parquet | FileFormat::Ipc => columns.iter().map(|c| c.bytes_per_row()).sum::<f64>() * rows as f64,
        FileFormat::Csv => columns.iter().map(|c| csv_cell_bytes(c, rows)).sum::<f64>() * rows as f64,
    }
}

/// Memory the write needs at its peak: the table, plus the encoder's copy for Parquet and
/// IPC (they encode a whole row group or batch before writing it).
pub fn memory_bytes(columns: &[ColumnPlan], rows: u64, format: FileFormat) -> f64 {
    let table = columns.iter().map(|c| c.bytes_per_row()).sum::<f64>() * rows as f64;
    match format {
        FileFormat::Csv => table * 1.1,
        FileFormat::Parquet | FileFormat::Ipc => table * 2.0,
    }
}

/// A temporary name beside `path`, hidden and unique to this process.
fn temp_beside(path: &Path) -> PathBuf {
    let name = path.file_name().map(|n| n.to_string_lossy().to_string()).unwrap_or_else(|| "table".into());
    path.with_file_name(format!(".{name}.framecost-{}.tmp", std::process::id()))
}

/// Write a file atomically: `fill` writes a temporary file beside `path`, which is synced
/// and renamed into place; on any error the temporary file is removed. Returns the bytes.
pub fn replace_atomically(path: &Path, fill: impl FnOnce(&mut File) -> Result<(), String>) -> Result<u64, String> {
    let tmp = temp_beside(path);
    let result = (|| -> Result<u64, String> {
        let mut file = File::create(&tmp).map_err(|e| format!("{}: cannot create: {e}", tmp.display()))?;
        fill(&mut file)?;
        file.sync_all().map_err(|e| format!("{}: could not flush: {e}", tmp.display()))?;
        let len = file.metadata().map(|m| m.len()).unwrap_or(0);
        std::fs::rename(&tmp, path).map_err(|e| format!("{}: could not move the finished file into place: {e}", path.display()))?;
        Ok(len)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// Write `df` to `path` in `format`, atomically (temporary name in the same folder, then
/// rename). Returns the bytes written.
pub fn write_atomic(df: &mut DataFrame, path: &Path, format: FileFormat) -> Result<u64, String> {
    replace_atomically(path, |file| {
        match format {
            FileFormat::Parquet => ParquetWriter::new(file).finish(df).map(|_| ()),
            FileFormat::Ipc => IpcWriter::new(file).finish(df),
            FileFormat::Csv => CsvWriter::new(file).include_header(true).finish(df),
        }
        .map_err(|e| format!("{}: could not write the {} file: {e}", path.display(), format.label()))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats_follow_the_extension() {
        assert_eq!(FileFormat::from_path(Path::new("a/b.parquet")), Ok(FileFormat::Parquet));
        assert_eq!(FileFormat::from_path(Path::new("b.CSV")), Ok(FileFormat::Csv));
        assert_eq!(FileFormat::from_path(Path::new("b.arrow")), Ok(FileFormat::Ipc));
        assert!(FileFormat::from_path(Path::new("b.xlsx")).unwrap_err().contains(".parquet, .csv or .ipc"));
        assert!(FileFormat::from_path(Path::new("b")).is_err());
    }
}
