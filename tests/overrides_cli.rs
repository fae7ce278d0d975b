//! Command-line values that replace a workload's own (`sweep --point-budget`, `--run-budget`,
//! `--precision`, `--max-samples`, `--sizes`; `gate --threshold` for `gate.threshold`) are
//! bounded by the same checks as the YAML: a value beyond a limit is refused, exit 2, with
//! the words `lint` uses for the same value written in the workload file.

use std::process::{Command, Output};

fn framecost(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_framecost")).args(args).env("NO_COLOR", "1").output().expect("runs")
}

/// The message from its `expected` on, of the first stderr line that holds `needle`.
fn expected_part(o: &Output, needle: &str) -> String {
    let err = String::from_utf8_lossy(&o.stderr).to_string();
    let line = err.lines().find(|l| l.contains(needle)).unwrap_or_else(|| panic!("no line with `{needle}` in:\n{err}"));
    line[line.find("expected").unwrap_or_else(|| panic!("no `expected` in {line}"))..].to_string()
}

#[test]
fn values_beyond_a_limit_are_refused_in_the_words_of_the_spec_check() {
    let tiny = std::fs::read_to_string("tests/data/tiny.yaml").expect("tiny workload");
    let dir = tempfile::tempdir().expect("tempdir");
    // (command line, the same value in the workload file: text replaced, its replacement, the key lint names)
    let cases: &[(&[&str], &str, &str, &str)] = &[
        (&["--point-budget", "1e-300s"], "per_point: 300ms", "per_point: 1e-300s", "per_point"),
        (&["--run-budget", "9000h"], "whole_run: 30s", "whole_run: 9000h", "whole_run"),
        (&["--precision", "90%"], "max_samples: 20", "max_samples: 20\n  precision: 90%", "precision"),
        (&["--max-samples", "10000000"], "max_samples: 20", "max_samples: 10000000", "max_samples"),
        (&["--sizes", "20000000000"], "sizes: [250, 500, 1k, 2k, 4k, 8k, 16k, 32k, 64k, 128k]", "sizes: [20000000000]", "sizes"),
    ];
    for (k, (args, from, to, key)) in cases.iter().enumerate() {
        assert!(tiny.contains(from), "tiny.yaml holds `{from}`");
        let spec = dir.path().join(format!("case{k}.yaml"));
        std::fs::write(&spec, tiny.replacen(from, to, 1)).expect("write");
        let linted = framecost(&["lint", spec.to_str().expect("utf8")]);
        assert_eq!(linted.status.code(), Some(2), "lint refuses {to}");
        let mut cli = vec!["sweep", "tests/data/tiny.yaml", "--plan"];
        cli.extend_from_slice(args);
        let swept = framecost(&cli);
        assert_eq!(swept.status.code(), Some(2), "sweep refuses {args:?}");
        assert_eq!(expected_part(&swept, args[0]), expected_part(&linted, key), "{args:?} and `{to}`");
    }

    // The gate's threshold: `gate --threshold` and a workload's `gate.threshold`.
    let spec = dir.path().join("gate.yaml");
    std::fs::write(&spec, format!("{tiny}gate: {{threshold: 2000%}}\n")).expect("write");
    let linted = framecost(&["lint", spec.to_str().expect("utf8")]);
    assert_eq!(linted.status.code(), Some(2));
    let gated = framecost(&["gate", "no-baseline", "no-run", "--threshold", "2000%"]);
    assert_eq!(gated.status.code(), Some(2));
    assert_eq!(expected_part(&gated, "--threshold"), expected_part(&linted, "threshold"));
    // Within the limits, the values are taken (the plan is printed, exit 0).
    let ok = framecost(&["sweep", "tests/data/tiny.yaml", "--plan", "--point-budget", "1ms", "--precision", "50%", "--max-samples", "3", "--sizes", "10G"]);
    assert_eq!(ok.status.code(), Some(0), "{}", String::from_utf8_lossy(&ok.stderr));
}
