//! Reading a user's sample file (CSV, Parquet or Arrow IPC) into a DataFrame with polars.
//!
//! A newcomer must know: CSV carries no types and no standard null marker, so the cells in
//! [`DEFAULT_NULL_MARKERS`] (an empty cell, `NA`, `N/A`, `NULL`, `null`, `NaN`, `None`)
//! are read as null unless the user names their own with `--null`; types are inferred
//! from every row (a sample is small enough), and text that is all `YYYY-MM-DD` is turned
//! into dates here. A sample whose estimated memory does not fit is refused before reading.

use polars::prelude::*;
use std::fs::File;
use std::path::Path;

/// Cells read as null in CSV samples unless `--null` is given: the markers statistics
/// tools and SQL exports commonly write for a missing value (common practice).
pub const DEFAULT_NULL_MARKERS: &[&str] = &["", "NA", "N/A", "NULL", "null", "NaN", "None"];

/// How to read samples.
#[derive(Debug, Clone)]
pub struct ReadOptions {
    /// CSV cells read as null.
    pub null_markers: Vec<String>,
    /// Read at most this many rows of each file.
    pub max_rows: Option<usize>,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions { null_markers: DEFAULT_NULL_MARKERS.iter().map(|s| s.to_string()).collect(), max_rows: None }
    }
}

/// Sample formats, by extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SampleFormat {
    Csv,
    Parquet,
    Ipc,
}

pub fn format_of(path: &Path) -> Result<SampleFormat, String> {
    match path.extension().and_then(|e| e.to_str()).map(str::to_ascii_lowercase).as_deref() {
        Some("csv") | Some("tsv") | Some("txt") => Ok(SampleFormat::Csv),
        Some("parquet") | Some("pq") => Ok(SampleFormat::Parquet),
        Some("ipc") | Some("arrow") | Some("feather") => Ok(SampleFormat::Ipc),
        _ => Err(format!("{}: cannot tell the format from the name; use .csv, .parquet or .ipc/.arrow", path.display())),
    }
}

/// Read one sample. Refuses a file whose in-memory size (estimated from the file's size:
/// ×3 for CSV text, ×6 for compressed Parquet, ×1.5 for IPC) exceeds 80% of `available`.
pub fn read_sample(path: &Path, opts: &ReadOptions, available: u64) -> Result<DataFrame, String> {
    let format = format_of(path)?;
    let len = std::fs::metadata(path).map_err(|e| format!("{}: cannot read: {e}", path.display()))?.len() as f64;
    let factor = match format {
        SampleFormat::Csv => 3.0,
        SampleFormat::Parquet => 6.0,
        SampleFormat::Ipc => 1.5,
    };
    let need = match opts.max_rows {
        Some(_) => 0.0,
        None => len * factor,
    };
    if need > available as f64 * 0.8 {
        return Err(format!(
            "{}: reading it would need about {} of memory; {} available (use --max-rows to read part of it)",
            path.display(),
            crate::units::bytes(need),
            crate::units::bytes(available as f64)
        ));
    }
    let file = File::open(path).map_err(|e| format!("{}: cannot open: {e}", path.display()))?;
    let df = match format {
        SampleFormat::Csv => {
            let sep = if path.extension().is_some_and(|e| e.eq_ignore_ascii_case("tsv")) { b'\t' } else { b',' };
            let nulls = NullValues::AllColumns(opts.null_markers.iter().map(|s| PlSmallStr::from(s.as_str())).collect());
            CsvReadOptions::default()
                .with_has_header(true)
                .with_infer_schema_length(None)
                .with_n_rows(opts.max_rows)
                .with_parse_options(CsvParseOptions::default().with_separator(sep).with_null_values(Some(nulls)))
                .into_reader_with_file_handle(file)
                .finish()
        }
        SampleFormat::Parquet => ParquetReader::new(file).with_slice(opts.max_rows.map(|n| (0, n))).finish(),
        SampleFormat::Ipc => IpcReader::new(file).with_n_rows(opts.max_rows).finish(),
    }
    .map_err(|e| format!("{}: could not read: {e}", path.display()))?;
    dates_from_text(df)
}

/// Text columns whose every non-null value is a `YYYY-MM-DD` date become date columns.
fn dates_from_text(mut df: DataFrame) -> Result<DataFrame, String> {
    let epoch = chrono::NaiveDate::from_ymd_opt(1970, 1, 1).expect("valid date");
    let names: Vec<PlSmallStr> = df.columns().iter().filter(|c| c.dtype() == &DataType::String).map(|c| c.name().clone()).collect();
    for name in names {
        let col = df.column(&name).map_err(|e| e.to_string())?;
        let ca = col.str().map_err(|e| e.to_string())?;
        let mut days: Vec<Option<i32>> = Vec::with_capacity(ca.len());
        let mut all = ca.len() > ca.null_count();
        for v in ca.iter() {
            match v {
                None => days.push(None),
                Some(t) => match chrono::NaiveDate::parse_from_str(t.trim(), "%Y-%m-%d") {
                    Ok(d) if t.trim().len() == 10 => days.push(i32::try_from((d - epoch).num_days()).ok()),
                    _ => {
                        all = false;
                        break;
                    }
                },
            }
        }
        if all {
            let s = Int32Chunked::from_iter_options(name.clone(), days.into_iter()).into_date().into_series();
            df.with_column(s.into_column()).map_err(|e| e.to_string())?;
        }
    }
    Ok(df)
}
