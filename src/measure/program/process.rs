//! A program design in process mode: one whole run of the command per run, with
//! `{input}`, `{output}` and `{rows}` replaced; its time is the process's wall time as
//! the launcher sees it (the program's start-up included), its CPU time and peak resident
//! size come from `wait4`'s resource usage of the program (see `launch.rs`).

use super::os::*;
use super::ProgramDesign;
use std::path::PathBuf;
use std::process::Stdio;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{self, RecvTimeoutError};
use std::sync::Arc;
use crate::measure::interrupt;
use super::INTERRUPTED;
use super::launch::{launcher, Launched, LAUNCH_ARG};
use std::time::{Duration, Instant};

impl ProgramDesign {
    pub(super) fn output_path(&self) -> PathBuf {
        self.work.join(format!("output.{}", self.plan.input.extension()))
    }

    /// The command of process mode with its placeholders replaced.
    pub(super) fn process_args(&self) -> Vec<String> {
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

    /// One whole run of the command: (wall ns, CPU ns, peak resident bytes). The run goes
    /// through the launcher (`launch.rs`) when this is framecost's binary, so the peak is the
    /// program's own and the time is taken around the program alone; without a launcher (the
    /// library run from a test harness) the program is started directly and its peak is not
    /// known.
    pub(super) fn run_process(&mut self, limit: Duration) -> Result<(f64, f64, Option<u64>), String> {
        let args = self.process_args();
        self.stopped_at_limit = false;
        let report = self.log.with_extension("launch");
        let _ = std::fs::remove_file(&report);
        let launched_args: Vec<String>;
        let via = match launcher() {
            Some(exe) => {
                launched_args = [exe.display().to_string(), LAUNCH_ARG.to_string(), report.display().to_string()].into_iter().chain(args.iter().cloned()).collect();
                &launched_args
            }
            None => &args,
        };
        let mut cmd = self.command(via)?;
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
            self.stopped_at_limit = true;
            return Err(format!("still running after {}: stopped and killed{}", secs(limit), self.tail()));
        }
        let tv = |t: libc::timeval| t.tv_sec as f64 * 1e9 + t.tv_usec as f64 * 1e3;
        let (wall, cpu, peak, status) = if launcher().is_some() {
            if !libc::WIFEXITED(status) || libc::WEXITSTATUS(status) != 0 {
                // The launcher could not start the program or write its report.
                let why = Launched::read(&report).err().unwrap_or_else(|| exit_text(status));
                return Err(format!("{why}{}", self.tail()));
            }
            let l = Launched::read(&report)?;
            (l.wall_ns, l.cpu_ns, Some(l.peak_bytes), l.status)
        } else {
            (wall, tv(usage.ru_utime) + tv(usage.ru_stime), None, status)
        };
        if !libc::WIFEXITED(status) || libc::WEXITSTATUS(status) != 0 {
            return Err(format!("{}{}", exit_text(status), self.tail()));
        }
        Ok((wall, cpu, peak))
    }

}
