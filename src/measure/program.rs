//! Designs that are programs of the user's, in any language, run as child processes.
//!
//! Two modes. A **worker** is one long-lived process per design that speaks framecost's
//! JSON-lines protocol (`docs/programs.md`) on its stdin and stdout: it loads each size's
//! input (untimed), runs the design `k` times and reports each run's nanoseconds measured
//! inside itself, and saves its last result for the equivalence check. A **process** design
//! is one whole run of the command per run, `{input}`, `{output}` and `{rows}` replaced; its
//! time is the process's wall time as framecost sees it, so start-up is part of it.
//!
//! For every sample framecost also records the child's CPU time (every thread) and its
//! peak resident size: for a worker by resetting the peak (`/proc/PID/clear_refs`) before
//! the sample and reading `VmHWM` after it; for a process from `wait4`'s resource usage.
//! There are no allocation counts for a program: the counting allocator sees only
//! framecost's own process.
//!
//! A newcomer must know: every child runs in its own process group, in a work folder inside
//! the sweep's temp folder (its current directory and `TMPDIR`), with stdin, stdout and
//! stderr owned by framecost; it is killed (the whole group) when a request outlives its
//! limit, when the sweep is interrupted, and when this module's handle is dropped. Nothing
//! here panics on what a child sends: every reply is checked, every line is length-capped.

use super::interrupt;
use crate::patterns::storage::TempFolder;
use crate::plan::ProgramPlan;
use crate::spec::model::{InputFormat, ProgramMode};
use polars::prelude::*;
use std::io::{BufRead, BufReader, Read, Write};
use std::os::unix::process::CommandExt;
use std::path::{Path, PathBuf};
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{self, Receiver, RecvTimeoutError};
use std::sync::Arc;
use std::time::{Duration, Instant};

/// The protocol version this build speaks.
pub const PROTOCOL: u64 = 1;
/// Longest line a worker may send (a reply to `run` with 10,000 timings is ~200 KB).
const MAX_LINE: u64 = 4 << 20;
/// Most runs asked of a worker in one request.
pub const MAX_WORKER_BATCH: u64 = 10_000;
/// Error text of a request cut short by Ctrl-C or SIGTERM (not a failure of the design).
pub const INTERRUPTED: &str = "interrupted";

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

/// One sample of a program design.
#[derive(Debug, Clone, Copy)]
pub struct ProgramSample {
    /// Wall time per run (ns): measured inside a worker, around the process otherwise.
    pub ns_per_run: f64,
    /// The child's CPU time per run (ns), every thread.
    pub cpu_ns_per_run: f64,
    /// Peak resident size during the sample (bytes), when it could be read.
    pub peak_resident: Option<u64>,
    /// Resident size just before the sample (bytes; a worker with its input loaded).
    pub resident_before: Option<u64>,
}

/// A running worker.
struct Worker {
    child: Child,
    pid: i32,
    stdin: ChildStdin,
    lines: Receiver<Result<String, String>>,
}

/// One program design across the sweep: its work folder, its log, its worker.
pub struct ProgramDesign {
    pub name: String,
    plan: ProgramPlan,
    work: PathBuf,
    log: PathBuf,
    worker: Option<Worker>,
    /// A worker that could not start: every size fails with this.
    broken: Option<String>,
    /// What the worker said about itself ("python 3.11.2 …").
    pub runtime: Option<String>,
    /// The cost of one clock reading inside the worker (ns), from its hello.
    pub clock_ns: Option<f64>,
    /// This size's input files (first table first) and row count.
    input: Vec<(String, PathBuf)>,
    rows: u64,
    /// Time the worker took to load this size's input (ns) and its resident size then.
    pub load_ns: Option<f64>,
    pub resident_before: Option<u64>,
    /// The output file of process mode's last run.
    outputs: usize,
}

impl ProgramDesign {
    /// Prepare a design's work folder inside the sweep's temp folder; a worker is started
    /// at once (so the run's header can record what it runs on) with `start_limit` to say
    /// hello.
    pub fn new(index: usize, name: &str, plan: &ProgramPlan, sweep_temp: &Path, start_limit: Duration) -> ProgramDesign {
        let work = sweep_temp.join(format!("design-{index:02}"));
        let log = sweep_temp.join(format!("design-{index:02}.log"));
        let mut d = ProgramDesign {
            name: name.to_string(),
            plan: plan.clone(),
            work,
            log,
            worker: None,
            broken: None,
            runtime: None,
            clock_ns: None,
            input: Vec::new(),
            rows: 0,
            load_ns: None,
            resident_before: None,
            outputs: 0,
        };
        if let Err(e) = std::fs::create_dir_all(&d.work) {
            d.broken = Some(format!("could not create its work folder {}: {e}", d.work.display()));
            return d;
        }
        if plan.mode == ProgramMode::Worker {
            if let Err(e) = d.start_worker(start_limit) {
                d.broken = Some(e);
            }
        }
        d
    }

    fn log_file(&self) -> Result<std::fs::File, String> {
        std::fs::OpenOptions::new()
            .create(true)
            .append(true)
            .open(&self.log)
            .map_err(|e| format!("could not open its log {}: {e}", self.log.display()))
    }

    fn command(&self, args: &[String]) -> Result<Command, String> {
        let log = self.log_file()?;
        let mut cmd = Command::new(&args[0]);
        cmd.args(&args[1..])
            .current_dir(&self.work)
            .env("TMPDIR", &self.work)
            .env("FRAMECOST_DESIGN", &self.name)
            .envs(self.plan.env.iter().map(|(k, v)| (k.as_str(), v.as_str())))
            .stderr(Stdio::from(log))
            .process_group(0);
        Ok(cmd)
    }

    fn start_worker(&mut self, limit: Duration) -> Result<(), String> {
        let mut cmd = self.command(&self.plan.command)?;
        cmd.stdin(Stdio::piped()).stdout(Stdio::piped());
        let mut child = cmd.spawn().map_err(|e| format!("could not start `{}`: {e}", self.plan.written.join(" ")))?;
        let pid = child.id() as i32;
        let (Some(stdin), Some(stdout)) = (child.stdin.take(), child.stdout.take()) else {
            kill_group(pid);
            let _ = child.wait();
            return Err("could not connect to the worker's stdin and stdout".into());
        };
        let (tx, rx) = mpsc::channel();
        std::thread::Builder::new()
            .name("framecost-worker-reader".into())
            .spawn(move || read_lines(stdout, tx))
            .map_err(|e| format!("could not start a reader thread: {e}"))?;
        self.worker = Some(Worker { child, pid, stdin, lines: rx });
        let hello = match self.receive(limit, "hello") {
            Ok(h) => h,
            Err(e) => {
                self.kill();
                return Err(e);
            }
        };
        if hello.get("framecost_worker").and_then(|v| v.as_u64()) != Some(PROTOCOL) {
            let said = short(&hello.to_string());
            self.kill();
            return Err(format!("the program did not greet as a framecost worker of protocol {PROTOCOL} (it sent {said}); see docs/programs.md"));
        }
        self.runtime = hello.get("runtime").and_then(|v| v.as_str()).map(|s| clean(s, 200));
        self.clock_ns = hello.get("clock_ns").and_then(|v| v.as_f64()).filter(|x| x.is_finite() && *x >= 0.0);
        Ok(())
    }

    /// Get ready for a size: remember its files; a worker loads the first table (untimed).
    pub fn start_size(&mut self, inputs: &ProgramInputs, rows: u64, limit: Duration) -> Result<(), String> {
        if let Some(b) = &self.broken {
            return Err(b.clone());
        }
        self.input = inputs.paths(self.plan.input).to_vec();
        self.rows = rows;
        self.load_ns = None;
        self.resident_before = None;
        if self.plan.mode == ProgramMode::Process {
            return Ok(());
        }
        let Some((_, path)) = self.input.first().cloned() else { return Err("no input file was written".into()) };
        let tables: serde_json::Map<String, serde_json::Value> =
            self.input.iter().map(|(n, p)| (n.clone(), serde_json::Value::String(p.display().to_string()))).collect();
        let req = serde_json::json!({"op": "load", "path": path.display().to_string(), "format": self.plan.input.label(), "rows": rows, "tables": tables});
        let reply = self.request(&req, limit, "load")?;
        self.load_ns = reply.get("ns").and_then(|v| v.as_f64()).filter(|x| x.is_finite() && *x >= 0.0);
        self.resident_before = self.worker.as_ref().and_then(|w| status_kib(w.pid, "VmRSS:")).map(|k| k * 1024);
        Ok(())
    }

    /// Take one sample of `batch` runs, each run limited by what is left of `limit`.
    pub fn sample(&mut self, batch: u64, limit: Duration) -> Result<ProgramSample, String> {
        if let Some(b) = &self.broken {
            return Err(b.clone());
        }
        match self.plan.mode {
            ProgramMode::Worker => self.sample_worker(batch.clamp(1, MAX_WORKER_BATCH), limit),
            ProgramMode::Process => {
                let started = Instant::now();
                let (mut wall, mut cpu, mut peak) = (0.0, 0.0, 0u64);
                for _ in 0..batch.max(1) {
                    let left = limit.saturating_sub(started.elapsed()).max(Duration::from_millis(100));
                    let (w, c, p) = self.run_process(left)?;
                    wall += w;
                    cpu += c;
                    peak = peak.max(p);
                }
                let b = batch.max(1) as f64;
                Ok(ProgramSample { ns_per_run: wall / b, cpu_ns_per_run: cpu / b, peak_resident: Some(peak), resident_before: None })
            }
        }
    }

    fn sample_worker(&mut self, batch: u64, limit: Duration) -> Result<ProgramSample, String> {
        let pid = self.worker.as_ref().map(|w| w.pid).ok_or("the worker is not running")?;
        // Reset the peak resident size, so VmHWM after the sample is this sample's peak.
        let reset = std::fs::write(format!("/proc/{pid}/clear_refs"), "5").is_ok();
        let before = status_kib(pid, "VmRSS:").map(|k| k * 1024);
        let cpu0 = task_cpu_ns(pid);
        let reply = self.request(&serde_json::json!({"op": "run", "times": batch}), limit, "run")?;
        let cpu1 = task_cpu_ns(pid);
        let peak = if reset { status_kib(pid, "VmHWM:").map(|k| k * 1024) } else { None };
        let ns: Vec<f64> = match reply.get("ns").and_then(|v| v.as_array()) {
            Some(a) => a.iter().filter_map(|x| x.as_f64()).filter(|x| x.is_finite() && *x >= 0.0).collect(),
            None => Vec::new(),
        };
        if ns.len() as u64 != batch {
            let said = short(&reply.to_string());
            self.kill();
            return Err(format!("protocol error: asked for {batch} run(s), the worker reported {} timing(s): {said}", ns.len()));
        }
        let cpu = match (cpu0, cpu1) {
            (Some(a), Some(b)) => b.saturating_sub(a) as f64 / batch as f64,
            _ => f64::NAN,
        };
        Ok(ProgramSample { ns_per_run: ns.iter().sum::<f64>() / batch as f64, cpu_ns_per_run: cpu, peak_resident: peak, resident_before: before })
    }

    /// The output of the last run, read back (None when the design saves none).
    pub fn output(&mut self, limit: Duration) -> Result<Option<DataFrame>, String> {
        match self.plan.mode {
            ProgramMode::Worker => {
                self.outputs += 1;
                let path = self.work.join(format!("output-{}.{}", self.outputs, self.plan.input.extension()));
                let reply = self.request(&serde_json::json!({"op": "save", "path": path.display().to_string(), "format": self.plan.input.label()}), limit, "save")?;
                if reply.get("saved").and_then(|v| v.as_bool()) != Some(true) {
                    return Ok(None);
                }
                let df = read_table(&path, self.plan.input);
                let _ = std::fs::remove_file(&path);
                df.map(Some)
            }
            ProgramMode::Process => {
                if !self.plan.writes_output() {
                    return Ok(None);
                }
                let path = self.output_path();
                let df = read_table(&path, self.plan.input);
                let _ = std::fs::remove_file(&path);
                df.map(Some)
            }
        }
    }

    fn output_path(&self) -> PathBuf {
        self.work.join(format!("output.{}", self.plan.input.extension()))
    }

    /// The command of process mode with its placeholders replaced.
    fn process_args(&self) -> Vec<String> {
        let out = self.output_path().display().to_string();
        let first = self.input.first().map(|p| p.1.display().to_string()).unwrap_or_default();
        self.plan
            .command
            .iter()
            .map(|a| {
                let mut s = a.replace("{input}", &first).replace("{output}", &out).replace("{rows}", &self.rows.to_string());
                for (n, p) in &self.input {
                    s = s.replace(&format!("{{input:{n}}}"), &p.display().to_string());
                }
                s
            })
            .collect()
    }

    /// One whole run of the command: (wall ns, CPU ns, peak resident bytes).
    fn run_process(&mut self, limit: Duration) -> Result<(f64, f64, u64), String> {
        let args = self.process_args();
        let mut cmd = self.command(&args)?;
        let log = self.log_file()?;
        cmd.stdin(Stdio::null()).stdout(Stdio::from(log));
        // The guard that kills the run at its limit starts before the clock.
        let killed = Arc::new(AtomicBool::new(false));
        let (tx, rx) = mpsc::channel::<Option<i32>>();
        let k = killed.clone();
        let guard = std::thread::spawn(move || {
            let Ok(Some(pid)) = rx.recv() else { return };
            let deadline = Instant::now() + limit;
            loop {
                match rx.recv_timeout(Duration::from_millis(25)) {
                    Ok(_) | Err(RecvTimeoutError::Disconnected) => return,
                    Err(RecvTimeoutError::Timeout) => {
                        if interrupt::requested() || Instant::now() >= deadline {
                            k.store(true, Ordering::SeqCst);
                            kill_group(pid);
                            return;
                        }
                    }
                }
            }
        });
        let t0 = Instant::now();
        let child = match cmd.spawn() {
            Ok(c) => c,
            Err(e) => {
                let _ = tx.send(None);
                let _ = guard.join();
                return Err(format!("could not start `{}`: {e}", self.plan.written.join(" ")));
            }
        };
        let pid = child.id() as i32;
        let _ = tx.send(Some(pid));
        let mut status: libc::c_int = 0;
        // SAFETY: a zeroed rusage is a valid value for wait4 to fill in.
        let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
        let waited = loop {
            // SAFETY: pid is our own child, not yet reaped; status and usage are valid pointers.
            let r = unsafe { libc::wait4(pid, &mut status, 0, &mut usage) };
            if r == pid {
                break Ok(());
            }
            let err = std::io::Error::last_os_error();
            if err.kind() != std::io::ErrorKind::Interrupted {
                break Err(format!("could not wait for the program: {err}"));
            }
        };
        let wall = t0.elapsed().as_nanos() as f64;
        let _ = tx.send(None);
        let _ = guard.join();
        // Anything it left running in its group goes too.
        kill_group(pid);
        drop(child);
        waited?;
        if killed.load(Ordering::SeqCst) {
            if interrupt::requested() {
                return Err(INTERRUPTED.into());
            }
            return Err(format!("still running after {}: stopped and killed{}", secs(limit), self.tail()));
        }
        if !libc::WIFEXITED(status) || libc::WEXITSTATUS(status) != 0 {
            return Err(format!("{}{}", exit_text(status), self.tail()));
        }
        let tv = |t: libc::timeval| t.tv_sec as f64 * 1e9 + t.tv_usec as f64 * 1e3;
        let cpu = tv(usage.ru_utime) + tv(usage.ru_stime);
        Ok((wall, cpu, (usage.ru_maxrss.max(0) as u64) * 1024))
    }

    /// Send one request and wait for its reply.
    fn request(&mut self, req: &serde_json::Value, limit: Duration, what: &str) -> Result<serde_json::Value, String> {
        let Some(w) = self.worker.as_mut() else { return Err("the worker is not running".into()) };
        let line = format!("{req}\n");
        if let Err(e) = write_no_sigpipe(&mut w.stdin, line.as_bytes()) {
            let status = w.child.try_wait().ok().flatten().map(|s| format!(" ({s})")).unwrap_or_default();
            self.kill();
            return Err(format!("the worker stopped reading requests{status}: {e}{}", self.tail()));
        }
        self.receive(limit, what)
    }

    /// Wait for one reply line; kill the worker when it outlives `limit`, when the sweep is
    /// interrupted, or when it breaks the protocol.
    fn receive(&mut self, limit: Duration, what: &str) -> Result<serde_json::Value, String> {
        let deadline = Instant::now() + limit;
        loop {
            let Some(w) = self.worker.as_mut() else { return Err("the worker is not running".into()) };
            match w.lines.recv_timeout(Duration::from_millis(25)) {
                Ok(Ok(line)) => {
                    let v: serde_json::Value = match serde_json::from_str(&line) {
                        Ok(v @ serde_json::Value::Object(_)) => v,
                        _ => {
                            self.kill();
                            return Err(format!(
                                "protocol error: the worker wrote `{}` to stdout, which is not a JSON object (a design should print to stderr){}",
                                short(&line),
                                self.tail()
                            ));
                        }
                    };
                    if v.get("ok").and_then(|x| x.as_bool()) == Some(false) {
                        let msg = v.get("error").and_then(|x| x.as_str()).map(|s| clean(s, 600)).unwrap_or_else(|| "no message".into());
                        let trace = v.get("trace").and_then(|x| x.as_str()).map(|s| format!("\n{}", clean_lines(s, 12))).unwrap_or_default();
                        return Err(format!("the design failed in `{what}`: {msg}{trace}"));
                    }
                    return Ok(v);
                }
                Ok(Err(e)) => {
                    self.kill();
                    return Err(format!("protocol error: {e}"));
                }
                Err(RecvTimeoutError::Timeout) => {
                    if interrupt::requested() {
                        self.kill();
                        return Err(INTERRUPTED.into());
                    }
                    if Instant::now() >= deadline {
                        self.kill();
                        return Err(format!("no answer to `{what}` within {}: stopped and killed{}", secs(limit), self.tail()));
                    }
                }
                Err(RecvTimeoutError::Disconnected) => {
                    let status = self.worker.as_mut().and_then(|w| w.child.wait().ok()).map(|s| s.to_string()).unwrap_or_else(|| "no status".into());
                    self.kill();
                    return Err(format!("the worker ended ({status}) during `{what}`{}", self.tail()));
                }
            }
        }
    }

    /// Kill the worker's whole process group and reap it.
    fn kill(&mut self) {
        if let Some(mut w) = self.worker.take() {
            kill_group(w.pid);
            let _ = w.child.wait();
        }
        if self.broken.is_none() {
            self.broken = Some("its worker was stopped after an earlier failure".into());
        }
    }

    /// Ask the worker to leave, then make sure its group is gone.
    pub fn finish(&mut self) {
        if let Some(w) = self.worker.as_mut() {
            let _ = write_no_sigpipe(&mut w.stdin, b"{\"op\":\"bye\"}\n");
            let until = Instant::now() + Duration::from_millis(500);
            while Instant::now() < until {
                if let Ok(Some(_)) = w.child.try_wait() {
                    break;
                }
                std::thread::sleep(Duration::from_millis(10));
            }
            let pid = w.pid;
            kill_group(pid);
            let _ = w.child.wait();
        }
        self.worker = None;
    }

    /// The last lines of the program's stderr, for a failure message.
    fn tail(&self) -> String {
        let Ok(mut f) = std::fs::File::open(&self.log) else { return String::new() };
        let len = f.metadata().map(|m| m.len()).unwrap_or(0);
        use std::io::Seek;
        let _ = f.seek(std::io::SeekFrom::Start(len.saturating_sub(2000)));
        let mut buf = Vec::new();
        let _ = f.take(2000).read_to_end(&mut buf);
        let text = String::from_utf8_lossy(&buf);
        let t = clean_lines(&text, 8);
        if t.trim().is_empty() {
            String::new()
        } else {
            format!("\nits stderr ends with:\n{t}")
        }
    }
}

impl Drop for ProgramDesign {
    fn drop(&mut self) {
        self.finish();
    }
}

/// Read capped lines from a worker's stdout into a channel until it closes.
fn read_lines(stdout: std::process::ChildStdout, tx: mpsc::Sender<Result<String, String>>) {
    let mut r = BufReader::new(stdout);
    loop {
        let mut buf = Vec::new();
        match (&mut r).take(MAX_LINE).read_until(b'\n', &mut buf) {
            Ok(0) => return,
            Ok(n) => {
                if buf.last() != Some(&b'\n') && n as u64 >= MAX_LINE {
                    let _ = tx.send(Err(format!("the worker sent a line longer than {} MiB", MAX_LINE >> 20)));
                    return;
                }
                let line = String::from_utf8_lossy(&buf).trim().to_string();
                if line.is_empty() {
                    continue;
                }
                if tx.send(Ok(line)).is_err() {
                    return;
                }
            }
            Err(e) => {
                let _ = tx.send(Err(format!("could not read the worker's stdout: {e}")));
                return;
            }
        }
    }
}

/// Write to a child's stdin without dying of SIGPIPE when it has gone (framecost restores
/// the default SIGPIPE action so `| head` ends it quietly): the signal is blocked on this
/// thread for the write, and one it raised is taken back before unblocking.
fn write_no_sigpipe(w: &mut ChildStdin, bytes: &[u8]) -> std::io::Result<()> {
    // SAFETY: plain signal-mask calls on this thread with valid, initialised sets.
    unsafe {
        let mut block: libc::sigset_t = std::mem::zeroed();
        let mut old: libc::sigset_t = std::mem::zeroed();
        libc::sigemptyset(&mut block);
        libc::sigaddset(&mut block, libc::SIGPIPE);
        libc::pthread_sigmask(libc::SIG_BLOCK, &block, &mut old);
        let r = w.write_all(bytes).and_then(|_| w.flush());
        if r.as_ref().is_err_and(|e| e.kind() == std::io::ErrorKind::BrokenPipe) {
            let zero = libc::timespec { tv_sec: 0, tv_nsec: 0 };
            libc::sigtimedwait(&block, std::ptr::null_mut(), &zero);
        }
        libc::pthread_sigmask(libc::SIG_SETMASK, &old, std::ptr::null_mut());
        r
    }
}

fn kill_group(pid: i32) {
    if pid > 0 {
        // SAFETY: kill has no memory effects; a negative pid names the child's own group.
        unsafe {
            libc::kill(-pid, libc::SIGKILL);
        }
    }
}

/// A field of `/proc/PID/status` in KiB (`VmHWM:`, `VmRSS:`).
fn status_kib(pid: i32, field: &str) -> Option<u64> {
    let text = std::fs::read_to_string(format!("/proc/{pid}/status")).ok()?;
    text.lines().find(|l| l.starts_with(field))?.split_whitespace().nth(1)?.parse().ok()
}

/// CPU time of every thread of a process (ns), from `/proc/PID/task/*/schedstat`.
fn task_cpu_ns(pid: i32) -> Option<u64> {
    let mut total = 0u64;
    let mut any = false;
    for e in std::fs::read_dir(format!("/proc/{pid}/task")).ok()?.flatten() {
        if let Ok(t) = std::fs::read_to_string(e.path().join("schedstat")) {
            if let Some(ns) = t.split_whitespace().next().and_then(|x| x.parse::<u64>().ok()) {
                total += ns;
                any = true;
            }
        }
    }
    any.then_some(total)
}

fn exit_text(status: libc::c_int) -> String {
    if libc::WIFEXITED(status) {
        format!("the program exited with status {}", libc::WEXITSTATUS(status))
    } else if libc::WIFSIGNALED(status) {
        format!("the program was ended by signal {}", libc::WTERMSIG(status))
    } else {
        format!("the program ended with wait status {status}")
    }
}

fn secs(d: Duration) -> String {
    crate::units::time_ns(d.as_secs_f64() * 1e9)
}

/// Text from a child made safe to print: control characters replaced, length capped.
pub fn clean(s: &str, max: usize) -> String {
    let t: String = s.chars().map(|c| if c.is_control() { ' ' } else { c }).collect();
    if t.chars().count() > max {
        format!("{}…", t.chars().take(max).collect::<String>())
    } else {
        t
    }
}

/// The last `n` lines of a child's text, each cleaned and indented.
fn clean_lines(s: &str, n: usize) -> String {
    let lines: Vec<&str> = s.lines().filter(|l| !l.trim().is_empty()).collect();
    lines[lines.len().saturating_sub(n)..].iter().map(|l| format!("  | {}", clean(l, 300))).collect::<Vec<_>>().join("\n")
}

fn short(s: &str) -> String {
    clean(s, 160)
}
