//! The files a program design reads and writes: one size's tables in the formats its
//! designs read (removed after the size), and a program's output read back and put in a
//! comparable order for the equivalence check.

use crate::patterns::storage::TempFolder;
use crate::spec::model::InputFormat;
use polars::prelude::*;
use std::path::{Path, PathBuf};

/// The files of one size, in the formats the size's program designs read. Removed when
/// dropped (after the size).
pub struct ProgramInputs {
    _folder: TempFolder,
    files: Vec<(InputFormat, Vec<(String, PathBuf)>)>,
}

impl ProgramInputs {
    /// Write every table once per format (untimed).
    pub fn write(tables: &[(String, DataFrame)], formats: &[InputFormat]) -> Result<ProgramInputs, String> {
        let folder = TempFolder::create().map_err(|e| format!("could not create a temp folder for the program inputs: {e}"))?;
        let mut files = Vec::new();
        for &f in formats {
            if files.iter().any(|(g, _)| *g == f) {
                continue;
            }
            let mut paths = Vec::new();
            for (name, df) in tables {
                // Table names are checked identifiers; the file name is framecost's own.
                let path = folder.path().join(format!("{name}.{}", f.extension()));
                write_table(df, &path, f)?;
                paths.push((name.clone(), path));
            }
            files.push((f, paths));
        }
        Ok(ProgramInputs { _folder: folder, files })
    }

    /// The tables' files in format `f` (first table first).
    pub fn paths(&self, f: InputFormat) -> &[(String, PathBuf)] {
        self.files.iter().find(|(g, _)| *g == f).map(|(_, p)| p.as_slice()).unwrap_or(&[])
    }
}

/// Write one table in a program's format.
pub fn write_table(df: &DataFrame, path: &Path, f: InputFormat) -> Result<(), String> {
    let mut df = df.clone();
    let file = std::fs::File::create(path).map_err(|e| format!("could not write {}: {e}", path.display()))?;
    let done = match f {
        InputFormat::Parquet => ParquetWriter::new(file).finish(&mut df).map(|_| ()),
        InputFormat::Ipc => IpcWriter::new(file).finish(&mut df),
        InputFormat::Csv => CsvWriter::new(file).finish(&mut df),
    };
    done.map_err(|e| format!("could not write {}: {e}", path.display()))
}

/// Read a table a program wrote, in format `f`.
pub fn read_table(path: &Path, f: InputFormat) -> Result<DataFrame, String> {
    let meta = std::fs::metadata(path).map_err(|e| format!("the program wrote no output at {}: {e}", path.display()))?;
    if !meta.is_file() {
        return Err(format!("the program's output {} is not a file", path.display()));
    }
    let file = std::fs::File::open(path).map_err(|e| format!("could not open the program's output {}: {e}", path.display()))?;
    let read = match f {
        InputFormat::Parquet => ParquetReader::new(file).finish(),
        InputFormat::Ipc => IpcReader::new(file).finish(),
        InputFormat::Csv => CsvReadOptions::default().with_infer_schema_length(None).into_reader_with_file_handle(file).finish(),
    };
    read.map_err(|e| format!("could not read the program's output {} as {}: {e}", path.display(), f.label()))
}

/// The table as the equivalence check sees it when programs take part: written as CSV and
/// read back (so every design's output went through the same text form, whatever its
/// in-memory types), rows sorted when their order carries no meaning.
pub fn comparable(df: &DataFrame, any_order: bool) -> Result<DataFrame, String> {
    let mut buf = Vec::new();
    let mut copy = df.clone();
    CsvWriter::new(&mut buf).finish(&mut copy).map_err(|e| format!("could not write the output as CSV: {e}"))?;
    let back = CsvReadOptions::default()
        .with_infer_schema_length(None)
        .into_reader_with_file_handle(std::io::Cursor::new(buf))
        .finish()
        .map_err(|e| format!("could not read the output back from CSV: {e}"))?;
    if !any_order || back.width() == 0 || back.height() < 2 {
        return Ok(back);
    }
    let names: Vec<PlSmallStr> = back.get_column_names().into_iter().cloned().collect();
    back.sort(names, SortMultipleOptions::default()).map_err(|e| format!("could not sort the output's rows: {e}"))
}
