//! Checks of a design that is a program (`program: {command: [...], mode, input}`), and its
//! resolution: paths relative to the workload file made absolute, placeholders checked.
//!
//! A newcomer must know: nothing here runs the program. Whether a workload's programs may
//! run at all is decided by `sweep --allow-programs`; `lint` lists the commands.

use super::locate::YamlPath;
use super::model::{DesignSpec, EngineChoice, Feed, ProgramMode, ProgramSpec, RowOrder};
use super::validate::Checker;
use crate::plan::ProgramPlan;
use std::path::{Path, PathBuf};

/// Longest argument list and argument accepted (a spec is not a place for data).
const MAX_ARGS: usize = 256;
const MAX_ARG_LEN: usize = 4096;

/// The folder relative paths of a workload file are taken from.
pub fn workload_dir(file: &str) -> PathBuf {
    let p = Path::new(file);
    match p.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Find `name` on `PATH` (a command without a slash).
fn on_path(name: &str) -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path).map(|d| d.join(name)).find(|f| f.is_file())
}

/// The placeholders an argument uses: `input`, `input:NAME`, `output`, `rows`.
pub fn placeholders(arg: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut rest = arg;
    while let Some(start) = rest.find('{') {
        let Some(len) = rest[start..].find('}') else { break };
        out.push(rest[start + 1..start + len].to_string());
        rest = &rest[start + len + 1..];
    }
    out
}

pub(super) fn check_program(c: &mut Checker, d: &DesignSpec, p: &ProgramSpec, path: &YamlPath, file: &str, tables: &[String]) -> Option<ProgramPlan> {
    let at = path.key("program");
    let before = c.issues.len();
    if !d.steps.is_empty() {
        c.at_key(&path.key("steps"), "a design has either `steps` or a `program`, not both", None);
    }
    if !d.setup.is_empty() {
        c.at_key(&path.key("setup"), "a program design takes no `setup:` steps (its own untimed `load` is the place for set-up)", None);
    }
    if d.feed != Feed::Table {
        c.at_key(&path.key("feed"), "a program design reads the table from a file; `feed` applies to steps only", None);
    }
    if d.engine != EngineChoice::Memory {
        c.at_key(&path.key("engine"), "`engine` chooses the engine of `sql` steps; a program runs its own", None);
    }
    if let Some(e) = &d.expect {
        if e.bytes.is_some() {
            c.at_key(
                &path.key("expect").key("bytes"),
                "allocation counts exist only for steps run inside framecost; a program's memory is measured as its peak resident size",
                Some("remove `bytes:` (the resident-memory growth is still reported)".into()),
            );
        }
        if !e.dtypes.is_empty() {
            c.at_key(&path.key("expect").key("dtypes"), "a program's output dtypes are decided by the file format it writes; `dtypes` applies to steps only", None);
        }
    }
    if p.command.is_empty() {
        c.at(&at.key("command"), "expected the program and its arguments, such as [python3, designs/ledger.py]", None);
        return None;
    }
    if p.command.len() > MAX_ARGS {
        c.at(&at.key("command"), format!("expected at most {MAX_ARGS} arguments, found {}", p.command.len()), None);
    }
    for (i, a) in p.command.iter().enumerate() {
        if a.is_empty() || a.len() > MAX_ARG_LEN || a.contains('\0') {
            c.at(&at.key("command").index(i), format!("expected a non-empty argument of at most {MAX_ARG_LEN} characters without NUL"), None);
        }
        for ph in placeholders(a) {
            let known = ph == "input" || ph == "output" || ph == "rows" || ph.strip_prefix("input:").is_some_and(|n| tables.iter().any(|t| t == n));
            if !known {
                let hint = if ph.starts_with("input:") {
                    Some(format!("the tables are: {}", tables.join(", ")))
                } else {
                    Some("the placeholders are {input}, {input:TABLE}, {output} and {rows}".into())
                };
                c.at(&at.key("command").index(i), format!("unknown placeholder `{{{ph}}}`"), hint);
            } else if p.mode == ProgramMode::Worker {
                c.at(
                    &at.key("command").index(i),
                    format!("`{{{ph}}}` is replaced in `mode: process` only; a worker is told its input over the protocol"),
                    Some("set `mode: process`, or remove the placeholder".into()),
                );
            }
        }
    }
    if p.mode == ProgramMode::Process && !p.command.iter().any(|a| placeholders(a).iter().any(|ph| ph.starts_with("input"))) {
        c.at(
            &at.key("command"),
            "a program in `mode: process` must be told where its input is: put `{input}` in an argument",
            Some("for example [python3, designs/ledger.py, \"{input}\", \"{output}\"]".into()),
        );
    }
    for (k, v) in &p.env {
        if k.is_empty() || k.contains('=') || k.contains('\0') || v.contains('\0') || v.len() > MAX_ARG_LEN {
            c.at_key(&at.key("env").key(k), "expected a variable name without `=` or NUL, and a value without NUL", None);
        }
    }
    let dir = workload_dir(file);
    let mut command = p.command.clone();
    // The program itself: a path (relative to the workload) or a name on PATH.
    let prog = &p.command[0];
    if prog.contains('/') {
        let full = if Path::new(prog).is_absolute() { PathBuf::from(prog) } else { dir.join(prog) };
        if !full.is_file() {
            c.at(&at.key("command").index(0), format!("no program at {} (relative paths are taken from the workload's folder)", full.display()), None);
        }
        command[0] = absolute(&full);
    } else if on_path(prog).is_none() {
        c.at(&at.key("command").index(0), format!("`{prog}` is not found on PATH"), None);
    }
    // Arguments that name files beside the workload.
    for a in command.iter_mut().skip(1) {
        if !a.contains('{') && !a.starts_with('-') && Path::new(a.as_str()).is_relative() {
            let f = dir.join(a.as_str());
            if f.exists() {
                *a = absolute(&f);
            }
        }
    }
    if c.issues.len() > before {
        return None;
    }
    Some(ProgramPlan {
        written: p.command.clone(),
        command,
        mode: p.mode,
        input: p.input,
        any_row_order: p.row_order == RowOrder::Any,
        env: p.env.iter().map(|(k, v)| (k.clone(), v.clone())).collect(),
    })
}

/// An absolute path that keeps symlinks as they are: a virtual environment's `bin/python`
/// is a symlink whose own location is what selects the environment.
fn absolute(p: &Path) -> String {
    std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf()).display().to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn placeholders_are_found_in_order() {
        assert_eq!(placeholders("--in={input}:{rows}"), vec!["input", "rows"]);
        assert_eq!(placeholders("{input:crates}"), vec!["input:crates"]);
        assert!(placeholders("plain").is_empty());
        assert!(placeholders("{unclosed").is_empty());
    }
}
