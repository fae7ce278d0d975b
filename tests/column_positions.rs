//! The older way of naming a column — by position, `column: 1` — still plans and runs the
//! same as naming it: every built-in workload (which now names its columns) is turned back
//! into the position form, and both forms must give the same designs, the same steps with
//! the same parameters (a name and its position being the same column), and the same
//! output, cell for cell, when each design runs on the same generated table.
//!
//! No outside reference is involved: the check is of framecost against itself across the
//! two spellings the workload format accepts.

mod common;

use framecost::patterns::{ColumnRef, ParamValue, RunContext, Value};
use framecost::plan::Plan;
use std::sync::Arc;

/// The parameter names that take columns in the built-in workloads.
const COLUMN_KEYS: &[&str] = &["column", "first", "second", "key", "value", "by", "a", "b", "flag", "source"];

/// `text` with every `key: name` under `designs:` (a column parameter naming a column of
/// the first table) written as `key: position`.
fn to_positions(text: &str, columns: &[String]) -> String {
    let mut inside = false;
    let lines: Vec<String> = text
        .lines()
        .map(|l| {
            if !l.starts_with([' ', '-', '#']) && !l.is_empty() {
                inside = l.starts_with("designs:");
            }
            if inside { positions_in(l, columns) } else { l.to_string() }
        })
        .collect();
    lines.join("\n") + "\n"
}

/// One line with its column names written as positions.
fn positions_in(line: &str, columns: &[String]) -> String {
    let mut out = line.to_string();
    let mut by_length: Vec<(usize, &String)> = columns.iter().enumerate().collect();
    by_length.sort_by_key(|(_, n)| std::cmp::Reverse(n.len()));
    for (pos, name) in by_length {
        for key in COLUMN_KEYS {
            for end in ["}", ","] {
                out = out.replace(&format!("{{{key}: {name}{end}"), &format!("{{{key}: {pos}{end}"));
                out = out.replace(&format!(" {key}: {name}{end}"), &format!(" {key}: {pos}{end}"));
            }
        }
    }
    out
}

/// A parameter with a named column of the first table written as its position.
fn as_position(v: &ParamValue, plan: &Plan) -> ParamValue {
    match v {
        ParamValue::Column(ColumnRef::Named(n)) => match plan.columns.iter().position(|c| &c.name == n) {
            Some(p) => ParamValue::Column(ColumnRef::At(p)),
            None => v.clone(),
        },
        other => other.clone(),
    }
}

/// The output facts of every design that runs on the first table alone.
fn outputs(plan: &Plan, rows: u64) -> Vec<(String, String)> {
    let df = framecost::table::generate(&plan.columns, plan.seed, rows).expect("table");
    let records = Arc::new(framecost::patterns::Records::from_frame(&df).expect("records"));
    let ctx = RunContext::default();
    let mut out = Vec::new();
    for d in plan.designs.iter().filter(|d| d.program.is_none() && d.steps.iter().chain(&d.setup).all(|s| s.def.name != "sql")) {
        let feed = match d.feed {
            framecost::spec::model::Feed::Records => Value::Records(records.clone()),
            framecost::spec::model::Feed::Table => Value::Frame(df.clone()),
        };
        let mut v = feed;
        for s in d.setup.iter().chain(&d.steps) {
            v = s.runner.run(v, &ctx).unwrap_or_else(|e| panic!("{}: {}: {e}", plan.name, d.name));
        }
        out.push((d.name.clone(), framecost::patterns::OutputFacts::of(&v).fingerprint));
    }
    out
}

#[test]
fn positions_plan_and_run_like_names() {
    let mut compared = 0;
    let mut files: Vec<_> = std::fs::read_dir("workloads").expect("workloads").map(|e| e.expect("entry").path()).collect();
    files.sort();
    for path in files.iter().filter(|p| p.extension().is_some_and(|e| e == "yaml")) {
        let text = std::fs::read_to_string(path).expect("workload");
        let named = framecost::spec::load_str("named.yaml", &text).expect("the built-in workload lints");
        let columns: Vec<String> = named.columns.iter().map(|c| c.name.clone()).collect();
        let old = to_positions(&text, &columns);
        if old.trim_end() == text.trim_end() {
            continue; // names no column
        }
        let positional = framecost::spec::load_str("positions.yaml", &old).unwrap_or_else(|e| panic!("{}: the position form lints: {e:?}", path.display()));
        assert_eq!(named.designs.len(), positional.designs.len());
        for (a, b) in named.designs.iter().zip(&positional.designs) {
            assert_eq!(a.name, b.name);
            let steps = |d: &framecost::plan::DesignPlan| d.setup.iter().chain(&d.steps).map(|s| s.def.name).collect::<Vec<_>>();
            assert_eq!(steps(a), steps(b), "{}: {}", path.display(), a.name);
            for (sa, sb) in a.setup.iter().chain(&a.steps).zip(b.setup.iter().chain(&b.steps)) {
                for (k, va) in &sa.params.0 {
                    let vb = &sb.params.0[k];
                    assert_eq!(as_position(va, &named), as_position(vb, &positional), "{}: {} {}.{k}", path.display(), a.name, sa.def.name);
                }
            }
        }
        // Small tables: the same output from both spellings, design by design.
        let rows = named.sizes.first().copied().unwrap_or(1000).min(2000);
        assert_eq!(outputs(&named, rows), outputs(&positional, rows), "{}", path.display());
        compared += 1;
    }
    eprintln!("{compared} workloads compared in both forms");
    assert!(compared >= 10, "only {compared} workloads name columns");
}

#[test]
fn a_named_column_that_moved_is_still_found() {
    // The same workload with its columns in another order: names follow the column,
    // positions do not (which is why the built-in workloads name them).
    let spec = |order: &str| {
        format!(
            "name: moved\ntable:\n  columns:\n{order}sizes: [1k]\ndesigns:\n  - {{name: by-name, steps: [{{read_cells: {{column: kilograms, reads: 50}}}}]}}\n"
        )
    };
    let first = "    - {name: kilograms, kind: float, range: [1.0, 9.0]}\n    - {name: variety, kind: text, distinct: 5}\n";
    let second = "    - {name: variety, kind: text, distinct: 5}\n    - {name: kilograms, kind: float, range: [1.0, 9.0]}\n";
    assert!(common::lint_problems(&spec(first)).is_empty());
    assert!(common::lint_problems(&spec(second)).is_empty());
    let moved = spec(second).replace("column: kilograms", "column: 0");
    let problems = common::lint_problems(&moved);
    assert!(problems.iter().any(|p| p.contains("`variety` holds text")), "{problems:?}");
}

#[test]
fn the_checker_says_nothing_it_cannot_know() {
    // After a transpose the columns are the rows: no check, the step decides when it runs.
    let reshaped = "name: reshaped\ntable:\n  columns:\n    - {name: kilograms, kind: float}\n    - {name: variety, kind: text, distinct: 5}\nsizes: [1k]\ndesigns:\n  - {name: after-transpose, steps: [transpose_rows, {sum_across: {first: column_7, count: 3}}]}\n";
    assert_eq!(common::lint_problems(reshaped), Vec::<String>::new());
    // A sweep over the number of columns: a copy that exists at the widest point is a
    // column of the table (`kilograms_2`, the second copy of `kilograms`).
    let widened = "name: widened\ntable:\n  columns:\n    - {name: kilograms, kind: float}\n    - {name: variety, kind: text, distinct: 5}\nrows: 1k\nsweep: {axis: columns, set: columns, values: [2, 4, 8]}\ndesigns:\n  - {name: copy, steps: [{read_cells: {column: kilograms_2}}]}\n  - {name: far, steps: [{read_cells: {column: 6}}]}\n";
    assert_eq!(common::lint_problems(widened), Vec::<String>::new());
    let too_far = widened.replace("column: 6}", "column: 8}");
    let problems = common::lint_problems(&too_far);
    assert!(problems.iter().any(|p| p.contains("no column at position 8") && p.contains("has 8 columns")), "{problems:?}");
}
