//! Writes a run folder: `points.jsonl` record by record (each line flushed and synced as it
//! is written), `summary.json` atomically at the end (temp file + rename).
//!
//! Every other file (summary, analysis, reports, pictures) goes through [`replace_with`]: a
//! temp file of a unique name made with `O_EXCL` in the same folder (so a planted symlink is
//! never followed), synced, renamed over the target (which replaces a symlink rather than
//! writing through it), then the folder synced; the temp file is removed on any failure.
//! [`file_stem`] turns a name read from a results file into a safe file name.

use super::reader::RunResults;
use super::summary::Summary;
use super::Record;
use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};

#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    #[error("cannot write results in {path}: {source}")]
    Io {
        path: String,
        #[source]
        source: std::io::Error,
    },
    #[error("cannot encode a results record: {0}")]
    Encode(#[from] serde_json::Error),
}

fn io(path: &Path) -> impl FnOnce(std::io::Error) -> WriteError + '_ {
    move |source| WriteError::Io { path: path.display().to_string(), source }
}

/// An open run folder.
pub struct RunWriter {
    dir: PathBuf,
    points: File,
    /// Everything written so far, kept for the summary and the terminal view.
    pub results: RunResults,
}

impl RunWriter {
    /// Create `dir` (it must not hold a run already) and open `points.jsonl` in it.
    pub fn create(dir: &Path) -> Result<RunWriter, WriteError> {
        std::fs::create_dir_all(dir).map_err(io(dir))?;
        let path = dir.join("points.jsonl");
        let points = OpenOptions::new().create_new(true).append(true).open(&path).map_err(io(&path))?;
        Ok(RunWriter { dir: dir.to_path_buf(), points, results: RunResults::default() })
    }

    /// Open the run in `dir` to add records to it (a measuring child of `sweep`), with what
    /// it already holds read back.
    pub fn append(dir: &Path) -> Result<RunWriter, WriteError> {
        let path = dir.join("points.jsonl");
        let points = OpenOptions::new().append(true).open(&path).map_err(io(&path))?;
        let results = RunResults::read(dir).map_err(|e| WriteError::Io { path: path.display().to_string(), source: std::io::Error::other(e.to_string()) })?;
        Ok(RunWriter { dir: dir.to_path_buf(), points, results })
    }

    /// Read back what other processes (a measuring child) added to the run.
    pub fn reload(&mut self) -> Result<(), WriteError> {
        let path = self.dir.join("points.jsonl");
        self.results = RunResults::read(&self.dir).map_err(|e| WriteError::Io { path: path.display().to_string(), source: std::io::Error::other(e.to_string()) })?;
        Ok(())
    }

    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// How long `points.jsonl` is now: a place [`RunWriter::cut_back`] can return to.
    pub fn mark(&self) -> Result<u64, WriteError> {
        let path = self.dir.join("points.jsonl");
        Ok(self.points.metadata().map_err(io(&path))?.len())
    }

    /// Drop every record written after `mark` (from [`RunWriter::mark`]) from the file and
    /// from what is kept in memory; the next record is appended where the file now ends.
    pub fn cut_back(&mut self, mark: u64) -> Result<(), WriteError> {
        let path = self.dir.join("points.jsonl");
        self.points.set_len(mark).map_err(io(&path))?;
        self.points.sync_all().map_err(io(&path))?;
        self.reload()
    }

    /// Append one record and make it durable before returning.
    pub fn write(&mut self, mut rec: Record) -> Result<(), WriteError> {
        if let Record::Point(p) = &mut rec {
            let axis = self.results.workload(&p.workload).and_then(|w| w.header.axis.as_ref());
            super::cause::fill_detail(p, axis);
        }
        let mut line = serde_json::to_string(&rec)?;
        line.push('\n');
        let path = self.dir.join("points.jsonl");
        self.points.write_all(line.as_bytes()).map_err(io(&path))?;
        self.points.flush().map_err(io(&path))?;
        self.points.sync_data().map_err(io(&path))?;
        self.results.push(rec);
        Ok(())
    }

    /// Write a side file (a copy of a spec, for instance) into the run folder.
    pub fn side_file(&self, name: &str, text: &str) -> Result<(), WriteError> {
        write_atomic(&self.dir.join(file_stem(name)), text).map(|_| ())
    }

    /// Write `summary.json` atomically from everything recorded.
    pub fn finish(&self) -> Result<PathBuf, WriteError> {
        let summary = Summary::from_results(&self.results);
        write_atomic(&self.dir.join("summary.json"), &serde_json::to_string_pretty(&summary)?)
    }

    /// Write a partial `summary.json` marked as interrupted (no end record is written).
    pub fn finish_interrupted(&self) -> Result<PathBuf, WriteError> {
        let summary = Summary { interrupted: true, ..Summary::from_results(&self.results) };
        write_atomic(&self.dir.join("summary.json"), &serde_json::to_string_pretty(&summary)?)
    }
}

/// Write a file so that readers see either the old content or the new, never a part.
pub fn write_atomic(path: &Path, text: &str) -> Result<PathBuf, WriteError> {
    replace_with(path, |tmp| {
        let mut f = OpenOptions::new().write(true).truncate(true).open(tmp)?;
        f.write_all(text.as_bytes())
    })
}

/// Replace `path` with what `fill` writes into a fresh temp file beside it (see the module
/// note). `fill` receives the temp file's path, already created empty.
pub fn replace_with(path: &Path, fill: impl FnOnce(&Path) -> std::io::Result<()>) -> Result<PathBuf, WriteError> {
    use std::sync::atomic::{AtomicU64, Ordering};
    static NEXT: AtomicU64 = AtomicU64::new(0);
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_else(|| "file".into());
    // The temp name ends like the target, so writers that pick a format by extension agree.
    let tmp = dir.join(format!(".tmp-{}-{}-{name}", std::process::id(), NEXT.fetch_add(1, Ordering::Relaxed)));
    let result = (|| {
        // O_EXCL: fails on anything already there, a symlink included.
        OpenOptions::new().write(true).create_new(true).open(&tmp)?;
        fill(&tmp)?;
        File::open(&tmp)?.sync_all()?;
        std::fs::rename(&tmp, path)?;
        // Make the rename itself durable.
        File::open(&dir)?.sync_all()
    })();
    match result {
        Ok(()) => Ok(path.to_path_buf()),
        Err(source) => {
            let _ = std::fs::remove_file(&tmp);
            Err(WriteError::Io { path: path.display().to_string(), source })
        }
    }
}

/// A name read from a results file made safe as a file name: letters, digits, `-` and `_`
/// kept, anything else (`/`, `.`, control characters) replaced by `_`, at most 64 characters;
/// a name that had to change gets a short hash of the original so two names cannot collide.
pub fn file_stem(name: &str) -> String {
    let (stem, ext) = match name.rsplit_once('.') {
        // Keep a plain extension (`spec-x.yaml`), sanitise the rest.
        Some((s, e)) if !e.is_empty() && e.len() <= 8 && e.chars().all(|c| c.is_ascii_alphanumeric()) => (s, Some(e)),
        _ => (name, None),
    };
    let mut out: String = stem
        .chars()
        .take(64)
        .map(|c| if c.is_ascii_alphanumeric() || c == '-' || c == '_' { c } else { '_' })
        .collect();
    if out != stem || out.is_empty() {
        out.push_str(&format!("-{:08x}", xxhash_rust::xxh3::xxh3_64(stem.as_bytes()) as u32));
    }
    match ext {
        Some(e) => format!("{out}.{e}"),
        None => out,
    }
}
