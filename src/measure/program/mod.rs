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
//! the sample and reading `VmHWM` after it; for a process from `wait4`'s resource usage,
//! taken by a launcher so that framecost's own size is not counted (`launch.rs`).
//! There are no allocation counts for a program: the counting allocator sees only
//! framecost's own process.
//!
//! A newcomer must know: every child runs in its own process group, in a work folder inside
//! the sweep's temp folder (its current directory and `TMPDIR`), with stdin, stdout and
//! stderr owned by framecost; it is killed (the whole group) when a request outlives its
//! limit, when the sweep is interrupted, and when this module's handle is dropped. Nothing
//! here panics on what a child sends: every reply is checked, every line is length-capped.

mod files;
pub mod launch;
mod os;
mod process;

pub use files::{comparable, read_table, write_table, ProgramInputs};
pub use os::clean;
use os::*;
use super::interrupt;
use crate::plan::ProgramPlan;
use crate::spec::model::ProgramMode;
use polars::prelude::*;
use std::io::Read;
use std::os::unix::process::CommandExt;
use std::path::{Path, PathBuf};
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc::{self, Receiver, RecvTimeoutError};
use std::time::{Duration, Instant};

/// The protocol version this build speaks.
pub const PROTOCOL: u64 = 1;
/// Longest line a worker may send (a reply to `run` with 10,000 timings is ~200 KB).
const MAX_LINE: u64 = 4 << 20;
/// Most runs asked of a worker in one request.
pub const MAX_WORKER_BATCH: u64 = 10_000;
/// Error text of a request cut short by Ctrl-C or SIGTERM (not a failure of the design).
pub const INTERRUPTED: &str = "interrupted";


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
    /// The last process-mode run was stopped at its time limit (not by an interrupt).
    stopped_at_limit: bool,
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
            stopped_at_limit: false,
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

    /// The last process-mode run was stopped at its time limit (not by an interrupt).
    pub fn stopped_at_limit(&self) -> bool {
        self.stopped_at_limit
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
                let (mut wall, mut cpu, mut peak) = (0.0, 0.0, None::<u64>);
                for _ in 0..batch.max(1) {
                    let left = limit.saturating_sub(started.elapsed()).max(Duration::from_millis(100));
                    let (w, c, p) = self.run_process(left)?;
                    wall += w;
                    cpu += c;
                    peak = peak.max(p);
                }
                let b = batch.max(1) as f64;
                Ok(ProgramSample { ns_per_run: wall / b, cpu_ns_per_run: cpu / b, peak_resident: peak, resident_before: None })
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

