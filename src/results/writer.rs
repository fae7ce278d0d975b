//! Writes a run folder: `points.jsonl` record by record (each line flushed and synced as it
//! is written), `summary.json` atomically at the end (temp file + rename).

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

    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Append one record and make it durable before returning.
    pub fn write(&mut self, rec: Record) -> Result<(), WriteError> {
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
        let path = self.dir.join(name);
        std::fs::write(&path, text).map_err(io(&path))
    }

    /// Write `summary.json` atomically from everything recorded.
    pub fn finish(&self) -> Result<PathBuf, WriteError> {
        let summary = Summary::from_results(&self.results);
        write_atomic(&self.dir.join("summary.json"), &serde_json::to_string_pretty(&summary)?)
    }
}

/// Write a file so that readers see either the old content or the new, never a part.
pub fn write_atomic(path: &Path, text: &str) -> Result<PathBuf, WriteError> {
    let tmp = path.with_extension("json.tmp");
    {
        let mut f = File::create(&tmp).map_err(io(&tmp))?;
        f.write_all(text.as_bytes()).map_err(io(&tmp))?;
        f.sync_all().map_err(io(&tmp))?;
    }
    std::fs::rename(&tmp, path).map_err(io(path))?;
    Ok(path.to_path_buf())
}
