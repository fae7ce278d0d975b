//! What users of command-line tools expect: completions, a man page, exit codes in
//! `--help`, `--color` with NO_COLOR honoured, `--json` documents that name their schema,
//! built-in workloads that work from any folder, and errors on stderr only.

use assert_cmd::Command;
use std::path::Path;

fn run_in(dir: &Path, args: &[&str], env: &[(&str, &str)]) -> std::process::Output {
    let mut c = Command::cargo_bin("framecost").expect("binary");
    c.current_dir(dir).args(args).env_remove("NO_COLOR").env_remove("CLICOLOR_FORCE").env_remove("CLICOLOR");
    for (k, v) in env {
        c.env(k, v);
    }
    c.output().expect("runs")
}

fn json(o: &std::process::Output) -> serde_json::Value {
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("not JSON ({e}): {}", String::from_utf8_lossy(&o.stdout)))
}

const ESC: u8 = 0x1b;

#[test]
fn completions_manual_and_exit_codes() {
    let here = Path::new(".");
    let o = run_in(here, &["completions", "bash"], &[]);
    assert_eq!(o.status.code(), Some(0));
    let bash = String::from_utf8_lossy(&o.stdout);
    // GNU Bash manual, "Programmable Completion Builtins": `complete -F FUNCTION NAME`.
    assert!(bash.contains("complete -F") && bash.contains("framecost"), "{bash}");
    for sub in ["sweep", "recap", "catalog", "completions", "manual"] {
        assert!(bash.contains(sub), "bash completion lacks {sub}");
    }
    for shell in ["zsh", "fish", "elvish", "powershell"] {
        let o = run_in(here, &["completions", shell], &[]);
        assert!(o.status.success() && o.stdout.len() > 500, "{shell}");
    }
    assert_eq!(run_in(here, &["completions", "tcsh"], &[]).status.code(), Some(2));

    let o = run_in(here, &["manual"], &[]);
    assert_eq!(o.status.code(), Some(0));
    let man = String::from_utf8_lossy(&o.stdout);
    // man(7): a page begins with the .TH title line and has .SH sections, NAME first.
    assert!(man.starts_with(".ie") || man.contains("\n.TH framecost 1") || man.starts_with(".TH framecost 1"), "{}", &man[..200.min(man.len())]);
    assert!(man.contains(".SH NAME") && man.contains(".SH SYNOPSIS") && man.contains(".SH \"EXIT STATUS\""));
    for (code, _) in framecost::exit::ALL {
        assert!(man.contains(&format!("\\fB{code}\\fR")), "the man page lacks exit code {code}");
    }
    let tmp = tempfile::tempdir().expect("tempdir");
    let pages = tmp.path().join("man1");
    let o = run_in(here, &["manual", "--out", pages.to_str().expect("utf8")], &[]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    for p in ["framecost.1", "framecost-sweep.1", "framecost-gate.1", "framecost-manual.1"] {
        let page = std::fs::read_to_string(pages.join(p)).unwrap_or_else(|e| panic!("{p}: {e}"));
        assert!(page.contains(".SH \"EXIT STATUS\""), "{p}");
    }

    for args in [&["--help"][..], &["sweep", "--help"][..]] {
        let o = run_in(here, args, &[]);
        let help = String::from_utf8_lossy(&o.stdout);
        assert!(help.contains("Exit codes:"), "{args:?}: {help}");
        for (code, what) in framecost::exit::ALL {
            assert!(help.contains(&format!("{code:>3}  ")) && help.contains(&what[..12]), "{args:?} lacks {code}");
        }
    }
}

#[test]
fn colour_follows_the_flag_no_color_and_the_terminal() {
    let here = Path::new(".");
    // Help is coloured only when asked: output here is a pipe, not a terminal.
    let has_esc = |o: &std::process::Output| o.stdout.contains(&ESC);
    assert!(has_esc(&run_in(here, &["--color", "always", "--help"], &[])));
    assert!(!has_esc(&run_in(here, &["--color", "never", "--help"], &[])));
    assert!(!has_esc(&run_in(here, &["--help"], &[])), "auto on a pipe must not colour");
    assert!(!has_esc(&run_in(here, &["--color=auto", "--help"], &[("NO_COLOR", "1")])));

    // The run summary: bold headings with --color always, none with never or NO_COLOR.
    let tmp = tempfile::tempdir().expect("tempdir");
    let run = tmp.path().join("run");
    let o = run_in(here, &["sweep", "tests/data/tiny.yaml", "--sizes", "1k,2k,4k", "--quiet", "--out", run.to_str().expect("utf8")], &[]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    let r = run.to_str().expect("utf8");
    let always = run_in(here, &["recap", r, "--color", "always"], &[]);
    // ECMA-48 SGR: ESC [ 1 m is bold.
    assert!(always.stdout.windows(4).any(|w| w == b"\x1b[1m"), "{}", String::from_utf8_lossy(&always.stdout));
    assert!(!has_esc(&run_in(here, &["recap", r, "--color", "never"], &[])));
    assert!(!has_esc(&run_in(here, &["recap", r], &[("NO_COLOR", "1")])));

    // Every --json document names its schema.
    for (args, schema) in [
        (vec!["recap", r, "--json"], "framecost.recap/1"),
        (vec!["explain", r, "--json"], "framecost.explain/1"),
        (vec!["catalog", "--json"], "framecost.catalog/1"),
        (vec!["lint", "tests/data/tiny.yaml", "--json"], "framecost.lint/1"),
    ] {
        let o = run_in(here, &args, &[]);
        assert_eq!(o.status.code(), Some(0), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
        assert_eq!(json(&o)["schema"], schema, "{args:?}");
    }
    let doc = json(&run_in(here, &["recap", r, "--json"], &[]));
    assert_eq!(doc["summary"]["workloads"][0]["workload"], "tiny-ledger");
    assert!(doc["verdicts"][0]["verdict"]["text"].is_string(), "{doc}");
    let gate = run_in(here, &["gate", r, r, "--json"], &[]);
    if gate.status.code() == Some(0) {
        assert_eq!(json(&gate)["schema"], "framecost.gate/1");
    }
    let again = tmp.path().join("again");
    let o = run_in(here, &["sweep", "tests/data/tiny.yaml", "--sizes", "1k,2k", "--json", "--out", again.to_str().expect("utf8")], &[]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    let doc = json(&o);
    assert_eq!(doc["schema"], "framecost.sweep/1");
    assert_eq!(doc["run"], again.to_str().expect("utf8"));
    assert_eq!(doc["failed_points"], 0);
    assert_eq!(doc["tables"].as_array().expect("tables").len(), 3, "{doc}");
}

#[test]
fn built_in_workloads_work_from_any_folder_and_errors_go_to_stderr() {
    let elsewhere = tempfile::tempdir().expect("tempdir");
    let o = run_in(elsewhere.path(), &["catalog"], &[]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("key-lookups") && text.contains("row-growth"), "{text}");
    let doc = json(&run_in(elsewhere.path(), &["catalog", "--json"], &[]));
    let names: Vec<&str> = doc["workloads"].as_array().expect("list").iter().filter_map(|w| w["name"].as_str()).collect();
    assert_eq!(names, framecost::builtin::names());
    assert!(doc["steps"].as_array().expect("steps").len() > 10);

    let o = run_in(elsewhere.path(), &["sweep", "--builtin", "row-growth", "--plan"], &[]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(String::from_utf8_lossy(&o.stdout).contains("row-growth"));

    // Errors: stderr only, stdout empty, exit 2.
    for args in [&["sweep", "--builtin", "row-growt"][..], &["catalog", "no-such-folder"][..], &["recap", "no-such-run"][..], &["lint", "no-such.yaml"][..]] {
        let o = run_in(elsewhere.path(), args, &[]);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(!err.is_empty(), "{args:?}: nothing on stderr");
        let out = String::from_utf8_lossy(&o.stdout);
        assert!(!out.contains("no such") && !out.contains("no built-in"), "{args:?}: error on stdout: {out}");
    }
    let o = run_in(elsewhere.path(), &["sweep", "--builtin", "row-growt"], &[]);
    assert!(String::from_utf8_lossy(&o.stderr).contains("row-growth"), "the error names the closest built-in");
    // The shells complete built-in names.
    let bash = run_in(elsewhere.path(), &["completions", "bash"], &[]);
    assert!(String::from_utf8_lossy(&bash.stdout).contains("key-lookups"));

    // lint --json keeps every problem's place.
    let broken = std::fs::canonicalize("tests/data/broken/04-unknown-step.yaml").expect("path");
    let o = run_in(elsewhere.path(), &["lint", broken.to_str().expect("utf8"), "--json"], &[]);
    assert_eq!(o.status.code(), Some(2));
    let doc = json(&o);
    let p = &doc["files"][0]["problems"][0];
    assert!(p["line"].as_u64().expect("line") > 1 && p["column"].as_u64().expect("column") >= 1, "{doc}");
}
