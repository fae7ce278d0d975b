//! `framecost lint` on broken specs: every file gives a located, specific message, exit 2,
//! and never a panic. Each case names the file, the exact `line:column` the message must
//! point at, and words the message must contain.

use assert_cmd::Command;

const CASES: &[(&str, &str, &[&str])] = &[
    ("01-bad-yaml.yaml", "4:1", &["did not find expected"]),
    ("02-unknown-top-key.yaml", "5:1", &["unknown field `sizs`", "did you mean `sizes`?"]),
    ("03-wrong-type-seed.yaml", "2:7", &["seed", "lots", "whole number"]),
    ("04-unknown-step.yaml", "10:9", &["unknown step `append_row`", "did you mean `append_rows`?"]),
    ("05-nulls-above-one.yaml", "7:14", &["table.columns[1].nulls", "between 0 and 1", "1.5"]),
    ("06-negative-budget.yaml", "7:14", &["budget.per_point", "above zero", "-5"]),
    ("07-zero-size.yaml", "5:13", &["sizes[1]", "found 0"]),
    ("08-impossible-ladder.yaml", "5:24", &["sizes.to", "64000", "1000"]),
    ("09-no-design.yaml", "6:10", &["at least one design"]),
    ("10-unknown-param.yaml", "10:23", &["no parameter `bacth`", "did you mean `batch`?"]),
    ("11-bad-choice.yaml", "10:47", &["one of each, end, never", "`eech`", "did you mean `each`?"]),
    ("12-wrong-feed.yaml", "9:9", &["needs records but receives a table", "feed: records"]),
    ("13-unknown-kind.yaml", "4:23", &["unknown variant `integer`", "did you mean `int`?"]),
    ("14-empty-range.yaml", "4:35", &["lowest value first"]),
    ("15-duplicate-design.yaml", "8:12", &["design `x` is defined twice"]),
    ("16-bad-expectation.yaml", "10:20", &["growth class", "did you mean `quadratic`?"]),
    ("17-bad-date.yaml", "4:36", &["YYYY-MM-DD", "2026-02-30"]),
    ("18-length-on-int.yaml", "4:28", &["`length` does not apply to an int column"]),
    ("19-empty.yaml", "1:1", &["the file is empty"]),
    ("20-bad-rows.yaml", "5:13", &["whole number of rows", "2.5"]),
    ("21-not-a-mapping.yaml", "1:1", &["expected a workload"]),
    ("22-step-params-list.yaml", "10:22", &["parameters as a mapping", "found a list"]),
    // Queries: planned against empty tables of the declared dtypes, located inside the query.
    ("23-sql-unknown-column.yaml", "20:30", &["unable to find column \"kilogram\"", "did you mean `kilograms`?"]),
    ("24-sql-unknown-table.yaml", "20:37", &["relation 'delivery' was not found", "did you mean `deliveries`?"]),
    ("25-sql-syntax.yaml", "20:32", &["sql parser error", "found: FRM"]),
    ("26-sql-type-sum-text.yaml", "23:20", &["`sum` operation not supported for dtype `str`"]),
    ("27-sql-join-unknown-column.yaml", "24:36", &["no column named 'member'", "did you mean `member_id`?"]),
    ("28-sql-order-by-unknown.yaml", "20:67", &["\"kilo\"", "did you mean `kilograms`?"]),
    ("29-sql-unknown-function.yaml", "20:30", &["unsupported function 'average'"]),
    ("30-sql-ambiguous-column.yaml", "20:30", &["ambiguous reference to column \"member_id\""]),
    ("31-sql-type-arithmetic.yaml", "20:30", &["arithmetic on dtypes str"]),
    ("32-sql-group-by-unknown.yaml", "23:35", &["\"distric\"", "did you mean `district`?"]),
    ("33-sql-missing-query.yaml", "20:9", &["expected text for `query`, found nothing"]),
    ("34-sql-second-step.yaml", "21:81", &["steps[1]", "\"membr_id\"", "did you mean `member_id`?"]),
    ("35-streaming-builtin-step.yaml", "24:13", &["engine: streaming", "only `sql` steps"]),
    ("36-bad-reference.yaml", "13:50", &["no column `membr_id`", "did you mean `member_id`?"]),
    ("37-bad-table-rows.yaml", "6:11", &["1/zero"]),
    ("38-sql-aggregate-without-group-by.yaml", "20:30", &["`member_id` is neither in a GROUP BY nor inside an aggregate", "SUM"]),
    // Step columns: resolved against the table plan, by name or by position.
    ("39-wrong-column-name.yaml", "11:30", &["no column `kilogram` in table `data`", "crate_id, kilograms, variety", "did you mean `kilograms`?"]),
    ("40-text-column-for-number.yaml", "11:43", &["`value`", "column `variety` holds text (kind `text`)", "needs an integer column"]),
    ("41-position-beyond-table.yaml", "12:30", &["no column at position 9", "has 4 columns (positions 0 to 3)"]),
    ("42-count-beyond-table.yaml", "12:44", &["`count`", "5 columns from `top_kg` (position 1) run past the end", "has 4 columns"]),
    // The table is followed through a set-up step that keeps its columns.
    ("43-column-after-setup.yaml", "14:16", &["`key`", "`kilograms` holds decimal numbers (kind `float`)", "needs an integer column"]),
    // Built-in steps receive the first of several tables; a column of another is named there.
    ("44-column-of-another-table.yaml", "17:28", &["no column `district` in table `deliveries`", "`district` is in table `members`"]),
    // A step's constructor refuses, located at the parameter it names.
    ("45-same-column-twice.yaml", "10:42", &["step `group_shares` cannot be built", "`value` is the group column `grams` again"]),
    // The rehearsal knob: steps only, and within its range.
    ("46-slowdown-on-program.yaml", "9:15", &["`slowdown:` slows a design's steps", "in the program itself"]),
    ("47-slowdown-too-large.yaml", "10:15", &["expected a slowdown from 0% to 1000%", "found 2000%"]),
];

#[test]
fn every_broken_spec_is_located_and_specific() {
    assert!(CASES.len() >= 15);
    for (file, place, words) in CASES {
        let path = format!("tests/data/broken/{file}");
        let out = Command::cargo_bin("framecost").expect("binary").args(["lint", &path]).output().expect("runs");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{file}: exit code; stderr:\n{err}");
        assert!(!err.contains("panicked"), "{file} panicked:\n{err}");
        let first = err.lines().next().unwrap_or("");
        assert!(first.starts_with(&format!("{path}:{place}: ")), "{file}: expected {path}:{place}, got:\n{err}");
        for w in *words {
            assert!(first.contains(w), "{file}: message lacks `{w}`:\n{first}");
        }
    }
}

#[test]
fn the_builtin_catalog_lints_clean() {
    let out = Command::cargo_bin("framecost").expect("binary").args(["lint", "workloads"]).output().expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
}

#[test]
fn a_design_slowed_on_purpose_is_named_by_lint() {
    // The rehearsal knob is a design key; lint accepts it and says it is there, so a
    // rehearsal left in a workload does not slow a CI baseline unseen.
    let text = std::fs::read_to_string("workloads/row-growth.yaml").expect("workload");
    let slowed = text.replacen("    steps:\n      - build_from_records\n", "    steps:\n      - build_from_records\n    slowdown: 15%\n", 1);
    assert_ne!(slowed, text, "the build-once design was found");
    let dir = tempfile::tempdir().expect("tempdir");
    let p = dir.path().join("slowed.yaml");
    std::fs::write(&p, slowed).expect("write");
    let out = Command::cargo_bin("framecost").expect("binary").arg("lint").arg(&p).output().expect("runs");
    let said = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(said.contains("slowed on purpose") && said.contains("`build-once` by 15%"), "{said}");
}

#[test]
fn lint_never_panics_on_mangled_input() {
    // Every prefix of a real workload file, and the same with characters swapped: lint must
    // answer each with ok or a located problem, never a panic.
    let text = std::fs::read_to_string("workloads/row-growth.yaml").expect("workload");
    let dir = tempfile::tempdir().expect("tempdir");
    let mut cuts: Vec<String> = (0..text.len()).step_by(37).filter(|&i| text.is_char_boundary(i)).map(|i| text[..i].to_string()).collect();
    cuts.push(text.replace(':', ""));
    cuts.push(text.replace('-', "["));
    cuts.push(text.replace("  ", " "));
    for (i, t) in cuts.iter().enumerate() {
        let p = dir.path().join(format!("cut{i}.yaml"));
        std::fs::write(&p, t).expect("write");
        let out = Command::cargo_bin("framecost").expect("binary").arg("lint").arg(&p).output().expect("runs");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(!err.contains("panicked"), "case {i} panicked:\n{err}");
        assert!(matches!(out.status.code(), Some(0) | Some(2)), "case {i}: {:?}", out.status);
        if out.status.code() == Some(2) {
            assert!(err.contains(&format!("cut{i}.yaml:")), "case {i}: unlocated:\n{err}");
        }
    }
}
