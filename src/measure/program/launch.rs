//! The launcher of process-mode runs: framecost's own binary, started with a hidden first
//! argument, starts the user's program, waits for it, and writes what it measured to a
//! report file.
//!
//! Why a go-between: Linux's peak resident size of a process (`ru_maxrss` from `wait4`)
//! is carried over from the process image it replaced by `exec` — for a child of
//! framecost, from framecost itself (its tables, its polars), whether the child was forked
//! or spawned sharing its memory. Measured: `test -e FILE` as a process design reported a
//! peak of 78.5 MiB, framecost's size at that point, where the command needs about 1 MiB.
//! The launcher is a fresh start of the binary that has loaded nothing, and it forks (a
//! fork copies only the pages a process wrote) before the program's `exec`, so the program
//! inherits about 3.5 MiB: `test -e FILE` reads 3.6 MiB, and a Python program holding 50 MiB
//! read 64.49 MiB where `/usr/bin/time` gave 64.62 MiB. The report gives the launcher's
//! written memory (`RssAnon`) as the floor: a peak near it says only "no more than this".
//!
//! The launcher times the program itself, from just before it is spawned to just after it
//! is reaped, so its own start-up is not in the program's time. It inherits the process
//! group framecost made for it, so killing the group at a limit kills both; then no report
//! is written.

use std::ffi::OsString;
use std::os::unix::process::CommandExt;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;
use std::time::Instant;

/// The hidden first argument that makes the binary a launcher.
pub const LAUNCH_ARG: &str = "__framecost-launch";

static LAUNCHER: OnceLock<PathBuf> = OnceLock::new();

/// Declare the binary that can act as launcher (`main` does, with its own path). Library
/// code run from elsewhere (unit tests) has none and runs programs directly, without a
/// peak resident size.
pub fn set_launcher(exe: PathBuf) {
    let _ = LAUNCHER.set(exe);
}

pub fn launcher() -> Option<&'static Path> {
    LAUNCHER.get().map(|p| p.as_path())
}

/// What one launched run measured.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Launched {
    pub wall_ns: f64,
    pub cpu_ns: f64,
    /// `ru_maxrss` of the program (bytes).
    pub peak_bytes: u64,
    /// The launcher's written memory when it started the program (bytes), which the forked
    /// program carries until its `exec`: the least `peak_bytes` can say.
    pub floor_bytes: u64,
    /// The raw wait status.
    pub status: libc::c_int,
}

impl Launched {
    fn line(&self) -> String {
        format!("ok {} {} {} {} {}\n", self.wall_ns, self.cpu_ns, self.peak_bytes, self.floor_bytes, self.status)
    }

    /// Read a report the launcher wrote; `Err` carries what went wrong in words.
    pub fn read(path: &Path) -> Result<Launched, String> {
        let text = std::fs::read_to_string(path).map_err(|e| format!("the launcher left no report ({e})"))?;
        let text = text.trim_end();
        if let Some(msg) = text.strip_prefix("error ") {
            return Err(msg.to_string());
        }
        let f: Vec<&str> = text.split(' ').collect();
        let bad = || format!("the launcher's report is damaged: {text:?}");
        if f.len() != 6 || f[0] != "ok" {
            return Err(bad());
        }
        Ok(Launched {
            wall_ns: f[1].parse().map_err(|_| bad())?,
            cpu_ns: f[2].parse().map_err(|_| bad())?,
            peak_bytes: f[3].parse().map_err(|_| bad())?,
            floor_bytes: f[4].parse().map_err(|_| bad())?,
            status: f[5].parse().map_err(|_| bad())?,
        })
    }
}

/// When the binary was started as a launcher (`exe LAUNCH_ARG REPORT PROGRAM ARGS…`), do
/// the launcher's work and give its exit code; otherwise `None`.
pub fn run_if_launcher() -> Option<i32> {
    let mut args = std::env::args_os();
    let _exe = args.next();
    if args.next().as_deref() != Some(std::ffi::OsStr::new(LAUNCH_ARG)) {
        return None;
    }
    let rest: Vec<OsString> = args.collect();
    let (Some(report), Some(program)) = (rest.first(), rest.get(1)) else {
        eprintln!("framecost: {LAUNCH_ARG} needs a report file and a program");
        return Some(2);
    };
    let report = PathBuf::from(report);
    let result = launch(program, &rest[2..]);
    let line = match &result {
        Ok(l) => l.line(),
        Err(e) => format!("error {}\n", e.replace('\n', " ")),
    };
    if std::fs::write(&report, line).is_err() {
        return Some(4);
    }
    Some(if result.is_ok() { 0 } else { 127 })
}

/// Start `program`, wait for it, and measure it.
fn launch(program: &OsString, args: &[OsString]) -> Result<Launched, String> {
    let floor_bytes = own_peak_bytes().unwrap_or(0);
    let t0 = Instant::now();
    let mut cmd = std::process::Command::new(program);
    cmd.args(args);
    // A hook before `exec` makes the standard library fork instead of spawning in this
    // process's memory (`posix_spawn`, which lends the child this process's whole image):
    // a fork copies only the pages this process wrote, so the program inherits a smaller
    // peak.
    // SAFETY: the hook does nothing, which is async-signal-safe.
    unsafe {
        cmd.pre_exec(|| Ok(()));
    }
    let child = cmd
        .spawn()
        .map_err(|e| format!("could not start `{}`: {e}", program.to_string_lossy()))?;
    let pid = child.id() as i32;
    let mut status: libc::c_int = 0;
    // SAFETY: a zeroed rusage is a valid value for wait4 to fill in.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    loop {
        // SAFETY: pid is our own child, not yet reaped; status and usage are valid pointers.
        let r = unsafe { libc::wait4(pid, &mut status, 0, &mut usage) };
        if r == pid {
            break;
        }
        let err = std::io::Error::last_os_error();
        if err.kind() != std::io::ErrorKind::Interrupted {
            return Err(format!("could not wait for the program: {err}"));
        }
    }
    let wall_ns = t0.elapsed().as_nanos() as f64;
    drop(child);
    let tv = |t: libc::timeval| t.tv_sec as f64 * 1e9 + t.tv_usec as f64 * 1e3;
    Ok(Launched {
        wall_ns,
        cpu_ns: tv(usage.ru_utime) + tv(usage.ru_stime),
        peak_bytes: (usage.ru_maxrss.max(0) as u64) * 1024,
        floor_bytes,
        status,
    })
}

/// This process's written (anonymous) resident memory (`RssAnon`), in bytes.
fn own_peak_bytes() -> Option<u64> {
    super::os::status_kib(std::process::id() as i32, "RssAnon:").map(|k| k * 1024)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_report_reads_back_as_written() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("r");
        let l = Launched { wall_ns: 1234567.0, cpu_ns: 1000000.0, peak_bytes: 3 << 20, floor_bytes: 2 << 20, status: 0 };
        std::fs::write(&p, l.line()).unwrap();
        assert_eq!(Launched::read(&p), Ok(l));
        std::fs::write(&p, "error could not start `x`: No such file\n").unwrap();
        assert_eq!(Launched::read(&p), Err("could not start `x`: No such file".to_string()));
        std::fs::write(&p, "ok 1 2\n").unwrap();
        assert!(Launched::read(&p).unwrap_err().contains("damaged"));
        assert!(Launched::read(&dir.path().join("none")).unwrap_err().contains("no report"));
    }

    #[test]
    fn the_launcher_measures_a_program_it_starts() {
        // `launch` itself, in this process: sh ends with status 3 after a short sleep.
        let l = launch(&"sh".into(), &["-c".into(), "sleep 0.05; exit 3".into()]).unwrap();
        assert!(libc::WIFEXITED(l.status) && libc::WEXITSTATUS(l.status) == 3, "{l:?}");
        assert!(l.wall_ns >= 5e7, "{l:?}");
        assert!(l.peak_bytes > 0 && l.floor_bytes > 0, "{l:?}");
        assert!(launch(&"/nonexistent/program".into(), &[]).unwrap_err().contains("could not start"));
    }
}
