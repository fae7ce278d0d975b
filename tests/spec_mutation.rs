//! Property test of the spec reader and checker: tens of thousands of mutants of the
//! built-in workloads (numbers replaced by extreme values, bytes and lines cut, repeated or
//! swapped, hostile tokens inserted) must never panic, every problem must be located inside
//! the file, and a spec that is accepted must have every bound respected. Deterministic:
//! the mutants come from a fixed seed.

use framecost::fit::rng::SplitMix64;
use framecost::spec::{load_str, validate};

/// Values a mutant puts in place of a number: zero, negatives, the edges of the integer
/// types, huge and tiny floats, and words that are not numbers.
const EXTREMES: &[&str] = &[
    "0", "-1", "1e18", "1e308", "-1.7e308", "1e-300", "1e-300s", "4294967295", "9223372036854775807",
    "18446744073709551615", "18446744073709551616", "1000000000", "1e15", ".nan", ".inf", "-.inf", "1G", "1000000G",
    "0.0000001ms", "~", "[]", "{}", "\"\"", "'\u{1b}[31m'", "\"a\\nb\"", "1_000_000_000_000", "0x7fffffffffffffff",
];

/// Tokens inserted at random places.
const TOKENS: &[&str] = &["[", "]", "{", "}", ":", "- ", "&a ", "*a", "!!binary ", "? ", "#", "\t", "\u{1b}", "\u{0}", "'", "\"", "\n  ", ",", "%YAML 1.2\n---\n"];

fn workloads() -> Vec<(String, String)> {
    let mut out: Vec<(String, String)> = std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/workloads"))
        .expect("workloads folder")
        .filter_map(|e| e.ok())
        .map(|e| e.path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .map(|p| (p.display().to_string(), std::fs::read_to_string(&p).expect("readable workload")))
        .collect();
    out.sort();
    out
}

/// Byte offsets where a number starts and ends (digits, `.`, `e`, sign after `e`).
fn numbers(text: &str) -> Vec<(usize, usize)> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        if b[i].is_ascii_digit() && (i == 0 || !b[i - 1].is_ascii_alphanumeric() && b[i - 1] != b'_') {
            let start = i;
            while i < b.len() && (b[i].is_ascii_alphanumeric() || b[i] == b'.' || b[i] == b'_') {
                i += 1;
            }
            out.push((start, i));
        } else {
            i += 1;
        }
    }
    out
}

fn char_boundary(text: &str, mut i: usize) -> usize {
    i = i.min(text.len());
    while !text.is_char_boundary(i) {
        i -= 1;
    }
    i
}

fn mutate(text: &str, rng: &mut SplitMix64) -> String {
    let mut t = text.to_string();
    for _ in 0..1 + rng.below(3) {
        match rng.below(6) {
            0 | 1 => {
                let nums = numbers(&t);
                if let Some(&(a, b)) = nums.get(rng.below(nums.len())) {
                    t.replace_range(a..b, EXTREMES[rng.below(EXTREMES.len())]);
                }
            }
            2 => {
                let at = char_boundary(&t, rng.below(t.len() + 1));
                t.insert_str(at, TOKENS[rng.below(TOKENS.len())]);
            }
            3 => {
                let a = char_boundary(&t, rng.below(t.len() + 1));
                let b = char_boundary(&t, a + rng.below(40));
                t.replace_range(a..b, "");
            }
            4 => {
                let mut lines: Vec<&str> = t.lines().collect();
                if lines.len() > 1 {
                    let (i, j) = (rng.below(lines.len()), rng.below(lines.len()));
                    lines.swap(i, j);
                }
                t = lines.join("\n");
            }
            _ => {
                let lines: Vec<&str> = t.lines().collect();
                let i = rng.below(lines.len());
                let mut v = lines.clone();
                v.insert(i, lines[i]);
                t = v.join("\n");
            }
        }
    }
    t
}

#[test]
fn mutated_workloads_never_panic_and_every_problem_is_located() {
    let files = workloads();
    assert!(files.len() >= 10, "expected the built-in catalog, found {} files", files.len());
    let mut rng = SplitMix64::new(0x5eed_f00d);
    let (mut accepted, mut refused) = (0usize, 0usize);
    const CASES: usize = 20_000;
    for case in 0..CASES {
        let (name, text) = &files[case % files.len()];
        let m = mutate(text, &mut rng);
        let lines = m.lines().count().max(1) + 1;
        let outcome = std::panic::catch_unwind(|| load_str(name, &m));
        let Ok(result) = outcome else { panic!("case {case}: the checker panicked on a mutant of {name}:\n{m}") };
        match result {
            Ok(plan) => {
                accepted += 1;
                // Whatever is accepted respects the bounds the runner relies on.
                assert!(plan.sizes.iter().all(|&n| (1..=validate::MAX_ROWS).contains(&n)), "case {case}: sizes {:?}", plan.sizes);
                assert!(validate::budget_problems(&plan.budget).is_empty(), "case {case}: budget {:?}", plan.budget);
                assert!(validate::plan_param_problems(&plan).is_empty(), "case {case}");
                assert!(plan.designs.iter().all(|d| validate::name_problem(&d.name).is_none()), "case {case}");
            }
            Err(errs) => {
                refused += 1;
                assert!(!errs.0.is_empty(), "case {case}: an error without a problem");
                for e in &errs.0 {
                    assert!(e.line >= 1 && e.line <= lines, "case {case}: line {} outside 1..={lines}: {e}", e.line);
                    assert!(!e.message.is_empty(), "case {case}: empty message");
                }
            }
        }
    }
    eprintln!("{CASES} mutants: {accepted} accepted, {refused} refused, 0 panics");
    // Both outcomes must occur, or the mutants test nothing.
    assert!(accepted > 100 && refused > 1000, "accepted {accepted}, refused {refused}");
}

#[test]
fn extreme_step_parameters_are_refused_by_lint() {
    // The values hostile testing found crashing or hanging sweeps; each must be refused
    // with the parameter named.
    let base = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data/tiny.yaml")).expect("tiny spec");
    let cases: &[(&str, &str)] = &[
        ("grow_columns: {columns: 1000000000000000000}", "columns"),
        ("lookup_scan: {probes: 1000000000000000000}", "probes"),
        ("probe_key_index: {probes: 9223372036854775807}", "probes"),
        ("read_cells: {reads: 1000000000000000000}", "reads"),
        ("split_into_pieces: {parts: 4294967295}", "parts"),
    ];
    for (step, param) in cases {
        let text = format!("{base}\n  - name: hostile\n    steps:\n      - {step}\n");
        let Err(errs) = load_str("hostile.yaml", &text) else { panic!("{step} was accepted") };
        assert!(errs.0.iter().any(|e| e.message.contains(param) && e.message.contains("from")), "{step}: {errs}");
    }
}

#[test]
fn deep_nesting_is_refused_quickly() {
    // 200 KB of brackets: refused by the pre-scan before any parser runs.
    let text = format!("name: x\nsizes: {}\n", "[".repeat(200_000));
    let Err(errs) = load_str("deep.yaml", &text) else { panic!("deep nesting was accepted") };
    assert!(errs.0[0].message.contains("brackets"), "{errs}");
    assert_eq!((errs.0[0].line, errs.0[0].column), (2, 72));
}
