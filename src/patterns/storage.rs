//! Storage: many small tables in one file each, or one file with a key column.
//!
//! The job: the packing shed keeps one small table per parcel (its crates of the day) and
//! must write them to disk and read them back. The designs differ in file layout (one file
//! per parcel, or one file holding every parcel with the parcel as a column) and in format
//! (Parquet, Arrow IPC, CSV). Formats that carry a schema and per-file metadata (footers,
//! dictionaries, statistics) pay that overhead once per file, so for many tiny tables the
//! metadata can outweigh the data. A newcomer must know: files are written only inside a
//! fresh folder of the run context's temp folder (the system's, read once before timing)
//! made for one step run
//! (`framecost-<pid>-<counter>`, never reused, never outside it) and that folder is removed
//! when the value holding it is dropped — after `read_files`, or on any error — so
//! `write_files` must be followed by `read_files` in the same design.

use super::{column_position, polars_err, ColumnRef, Need, ParamDef, ParamKind, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;
use std::fs::File;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;

const FORMATS: &[&str] = &["parquet", "ipc", "csv"];
const LAYOUTS: &[&str] = &["per_key", "one_file"];
/// The name of the value passed from `write_files` to `read_files`.
pub const STORED: &str = "files on disk";

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "write_files",
        summary: "write the table to a fresh temp folder: one file per key value, or one file with the key as a column",
        cost_note: "Groups the rows by the key (linear), then encodes and writes them. Per file the format \
pays a fixed cost — opening and closing the file, and for Parquet and Arrow IPC a schema, a footer \
and per-column metadata — so with layout: per_key the time and bytes on disk grow with the number \
of keys as well as the rows, and for tiny tables the fixed part dominates. One file pays it once. \
CSV has the least per-file overhead but writes every value as text (larger per row for numbers \
and dates, and types are lost until read back with a schema). Memory: about one encoded copy of \
the table.",
        params: &[
            ParamDef { name: "format", kind: ParamKind::Choice(FORMATS), default: "parquet", doc: "file format" },
            ParamDef {
                name: "layout",
                kind: ParamKind::Choice(LAYOUTS),
                default: "per_key",
                doc: "one file per key value, or one file holding every key (rows grouped by key)",
            },
            ParamDef { name: "column", kind: ParamKind::column(Need::Any), default: "0", doc: "the key column" },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Custom(STORED),
        memory_factor: 3.0,
        disk_factor: 4.0,
        private_input: false,
        keeps_columns: false,
        build: |p| {
            Ok(Box::new(WriteFiles {
                format: match p.choice("format") {
                    "ipc" => Format::Ipc,
                    "csv" => Format::Csv,
                    _ => Format::Parquet,
                },
                per_key: p.choice("layout") != "one_file",
                column: p.column("column")?,
            }))
        },
    },
    StepDef {
        name: "read_files",
        summary: "read the written files back into one table (with the original dtypes), then remove the folder",
        cost_note: "Decodes every file and stacks the pieces, then merges them into one chunk per column: \
linear in the rows, plus a fixed cost per file (open, parse the footer or header). CSV must parse \
every value from text. With evidence: true it adds `disk_bytes_per_row` and `disk_bytes_per_table` \
columns (total bytes on disk divided by rows, and by key values), so the bytes each design wrote \
travel with its output. Removing the folder is part of the timed work.",
        params: &[ParamDef {
            name: "evidence",
            kind: ParamKind::Flag,
            default: "true",
            doc: "add the bytes-on-disk columns to the output",
        }],
        takes: ValueKind::Custom(STORED),
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(ReadFiles { evidence: p.flag("evidence") })),
    },
];

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Parquet,
    Ipc,
    Csv,
}

impl Format {
    pub fn extension(self) -> &'static str {
        match self {
            Format::Parquet => "parquet",
            Format::Ipc => "arrow",
            Format::Csv => "csv",
        }
    }
}

static COUNTER: AtomicU64 = AtomicU64::new(0);

/// A folder of the system temp directory that belongs to one step run; removed on drop.
pub struct TempFolder {
    path: PathBuf,
}

impl TempFolder {
    /// Make a new, empty folder `framecost-<pid>-<counter>` in the system's temp folder;
    /// never reuses an existing one.
    pub fn create() -> std::io::Result<TempFolder> {
        TempFolder::create_in(&std::env::temp_dir())
    }

    /// The same, in `base` (a run's context names it, so a step need not read the
    /// environment inside the timed region).
    pub fn create_in(base: &Path) -> std::io::Result<TempFolder> {
        let mut last = None;
        for _ in 0..16 {
            let n = COUNTER.fetch_add(1, Ordering::Relaxed);
            let path = base.join(format!("framecost-{}-{n}", std::process::id()));
            match std::fs::create_dir(&path) {
                Ok(()) => return Ok(TempFolder { path }),
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => last = Some(e),
                Err(e) => return Err(e),
            }
        }
        Err(last.unwrap_or_else(|| std::io::Error::other("no free temp folder name")))
    }

    pub fn path(&self) -> &Path {
        &self.path
    }

    /// A file inside the folder, named by framecost alone (never by data values).
    fn file(&self, index: usize, ext: &str) -> PathBuf {
        self.path.join(format!("part-{index:06}.{ext}"))
    }
}

/// How long a leftover folder must have gone untouched before [`remove_stale`] removes it.
const STALE_AFTER: std::time::Duration = std::time::Duration::from_secs(600);

/// Remove `framecost-<pid>-<n>` folders in `base` left by processes that ended without
/// cleaning up (killed by a signal, the machine's OOM killer, a power cut): their process is
/// gone and nothing in them changed for ten minutes. A folder of a live process, of a pid
/// that exists again, or of any other name is left alone. Returns how many were removed.
pub fn remove_stale(base: &Path) -> usize {
    let Ok(entries) = std::fs::read_dir(base) else { return 0 };
    let own = std::process::id();
    let mut removed = 0;
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().to_string();
        let Some(pid) = stale_owner(&name) else { continue };
        if pid == own || alive(pid) {
            continue;
        }
        let Ok(meta) = std::fs::symlink_metadata(e.path()) else { continue };
        let idle = meta.modified().ok().and_then(|m| m.elapsed().ok()).is_some_and(|d| d >= STALE_AFTER);
        if meta.is_dir() && idle && std::fs::remove_dir_all(e.path()).is_ok() {
            removed += 1;
        }
    }
    removed
}

/// The pid in a name `framecost-<pid>-<counter>`, if it is one.
fn stale_owner(name: &str) -> Option<u32> {
    let rest = name.strip_prefix("framecost-")?;
    let (pid, n) = rest.split_once('-')?;
    (!pid.is_empty() && !n.is_empty() && pid.bytes().all(|b| b.is_ascii_digit()) && n.bytes().all(|b| b.is_ascii_digit())).then_some(())?;
    pid.parse().ok()
}

/// Whether a process with this pid exists (signal 0 checks without sending anything; a
/// process of another user answers EPERM, which also means it exists).
fn alive(pid: u32) -> bool {
    let Ok(p) = i32::try_from(pid) else { return true };
    if p <= 0 {
        return true;
    }
    // SAFETY: kill with signal 0 sends nothing; it only reports whether `p` exists.
    let r = unsafe { libc::kill(p, 0) };
    r == 0 || std::io::Error::last_os_error().raw_os_error() != Some(libc::ESRCH)
}

impl Drop for TempFolder {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.path);
    }
}

/// What `write_files` leaves on disk. The folder (and every file) goes when this is dropped.
pub struct Stored {
    pub folder: TempFolder,
    pub files: Vec<PathBuf>,
    pub format: Format,
    pub schema: Schema,
    pub rows: u64,
    /// Key values, that is small tables.
    pub tables: u64,
    /// Bytes of every file together.
    pub bytes: u64,
}

fn io_err(step: &'static str, what: &str, path: &Path, e: std::io::Error) -> StepError {
    StepError::Value { step, message: format!("{what} {}: {e}", path.display()) }
}

struct WriteFiles {
    format: Format,
    per_key: bool,
    column: ColumnRef,
}

impl Step for WriteFiles {
    fn run(&self, input: Value, ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "write_files";
        let df = input.into_frame(NAME)?;
        let key = df.columns()[column_position(&df, &self.column, NAME)?].name().clone();
        // Row numbers of each key value, in order of first appearance.
        let groups: Vec<Vec<IdxSize>> = {
            let gb = df.group_by_stable([key.as_str()]).map_err(polars_err(NAME))?;
            gb.get_groups()
                .iter()
                .map(|g| match g {
                    GroupsIndicator::Idx((_, idx)) => idx.to_vec(),
                    GroupsIndicator::Slice([first, len]) => (first..first + len).collect(),
                })
                .collect()
        };
        let base = ctx.temp_base();
        let folder = TempFolder::create_in(&base).map_err(|e| io_err(NAME, "could not create a temp folder in", &base, e))?;
        let mut stored = Stored {
            folder,
            files: Vec::new(),
            format: self.format,
            schema: df.schema().as_ref().clone(),
            rows: df.height() as u64,
            tables: groups.len() as u64,
            bytes: 0,
        };
        // On any error below, `stored` is dropped and its folder removed.
        let pieces: Vec<Vec<IdxSize>> = if self.per_key { groups } else { vec![groups.concat()] };
        for (i, idx) in pieces.into_iter().enumerate() {
            let mut part = df.take(&IdxCa::from_vec("row".into(), idx)).map_err(polars_err(NAME))?;
            let path = stored.folder.file(i, self.format.extension());
            write_one(NAME, self.format, &path, &mut part)?;
            let len = std::fs::metadata(&path).map_err(|e| io_err(NAME, "could not read the size of", &path, e))?.len();
            stored.bytes += len;
            stored.files.push(path);
        }
        Ok(Value::Custom(STORED, Arc::new(stored)))
    }
}

fn write_one(step: &'static str, format: Format, path: &Path, df: &mut DataFrame) -> Result<(), StepError> {
    let mut file = File::create(path).map_err(|e| io_err(step, "could not create", path, e))?;
    match format {
        Format::Parquet => ParquetWriter::new(&mut file).finish(df).map(|_| ()),
        Format::Ipc => IpcWriter::new(&mut file).finish(df),
        Format::Csv => CsvWriter::new(&mut file).include_header(true).finish(df),
    }
    .map_err(polars_err(step))
}

struct ReadFiles {
    evidence: bool,
}

impl Step for ReadFiles {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "read_files";
        let stored: Arc<Stored> = input.into_custom(NAME, STORED)?;
        // CSV carries no types: read text as text (categorical columns too), then cast.
        let csv_schema: Schema = stored
            .schema
            .iter()
            .map(|(n, dt)| {
                let dt = if matches!(dt, DataType::Categorical(..) | DataType::Enum(..)) { DataType::String } else { dt.clone() };
                (n.clone(), dt)
            })
            .collect();
        let csv_schema = Arc::new(csv_schema);
        let mut acc: Option<DataFrame> = None;
        for path in &stored.files {
            let file = File::open(path).map_err(|e| io_err(NAME, "could not open", path, e))?;
            let part = match stored.format {
                Format::Parquet => ParquetReader::new(file).finish(),
                Format::Ipc => IpcReader::new(file).finish(),
                Format::Csv => CsvReadOptions::default()
                    .with_has_header(true)
                    .with_schema(Some(csv_schema.clone()))
                    .into_reader_with_file_handle(file)
                    .finish(),
            }
            .map_err(polars_err(NAME))?;
            match acc.as_mut() {
                None => acc = Some(part),
                Some(a) => {
                    a.vstack_mut_owned(part).map_err(polars_err(NAME))?;
                }
            }
        }
        let mut df = acc.unwrap_or_else(|| DataFrame::empty_with_schema(&stored.schema));
        // Back to the dtypes that were written (a no-op where the format kept them).
        let height = df.height();
        let mut cols = Vec::with_capacity(df.width());
        for c in df.into_columns() {
            let want = stored.schema.get(c.name()).cloned().unwrap_or_else(|| c.dtype().clone());
            let c = if c.dtype() == &want { c } else { c.strict_cast(&want).map_err(polars_err(NAME))? };
            cols.push(c);
        }
        df = DataFrame::new(height, cols).map_err(polars_err(NAME))?;
        df.rechunk_mut();
        if self.evidence {
            let per_row = stored.bytes as f64 / stored.rows.max(1) as f64;
            let per_table = stored.bytes as f64 / stored.tables.max(1) as f64;
            df.with_column(Column::new_scalar("disk_bytes_per_row".into(), Scalar::from(per_row), height))
                .map_err(polars_err(NAME))?;
            df.with_column(Column::new_scalar("disk_bytes_per_table".into(), Scalar::from(per_table), height))
                .map_err(polars_err(NAME))?;
        }
        Ok(Value::Frame(df))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_idle_folders_of_ended_processes_are_removed() {
        let base = tempfile::tempdir().expect("tempdir");
        // Pids that cannot exist (above the kernel's pid limit, 2^22 at most on Linux).
        let gone = base.path().join("framecost-99999999-0");
        let fresh = base.path().join("framecost-99999998-1");
        let mine = base.path().join(format!("framecost-{}-7", std::process::id()));
        let other = base.path().join("framecost-fuzz");
        for d in [&gone, &fresh, &mine, &other] {
            std::fs::create_dir_all(d.join("inner")).expect("mkdir");
        }
        let old = std::time::SystemTime::now() - std::time::Duration::from_secs(3600);
        for d in [&gone, &mine, &other] {
            std::fs::File::open(d).expect("open").set_modified(old).expect("mtime");
        }
        assert_eq!(remove_stale(base.path()), 1);
        assert!(!gone.exists());
        // Its own folder, another name, and a folder touched a moment ago stay.
        assert!(mine.exists() && other.exists() && fresh.exists());
        assert_eq!(stale_owner("framecost-12-3"), Some(12));
        assert_eq!(stale_owner("framecost-12-"), None);
        assert_eq!(stale_owner("framecost-x-3"), None);
        assert_eq!(stale_owner(".deliveries.framecost-12.tmp"), None);
    }
}
