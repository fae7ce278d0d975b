//! Sweeps over more than rows: a `sweep:` that sets a column's distinct count (or the number
//! of columns) with the rows fixed. The tables at each point really have the swept shape,
//! the results header records the axis, every output labels it by name, and a bad axis is
//! a lint error at `file:line:column`.

use assert_cmd::Command;
use framecost::measure::inputs::SizeInputs;
use framecost::plan::AxisSet;
use framecost::results::reader::RunResults;

const SPEC: &str = "\
framecost: 1
name: crews-by-count
about: Per-crew shares of the harvest as the number of crews grows at a fixed ledger size.
seed: 7
table:
  columns:
    - {name: crew, kind: int, distinct: 10, range: [0, 1000000]}
    - {name: grams, kind: int, range: [500, 950000]}
    - {name: ripe, kind: bool}
rows: 20k
sweep: {axis: crews, column: crew, set: distinct, values: [10, 100, 1k]}
budget: {per_point: 2s, whole_run: 60s, min_samples: 3, max_samples: 6, precision: 50%}
designs:
  - name: window
    steps: [{group_shares: {by: 0, value: 1, method: window}}]
  - name: per-crew-fn
    steps: [{group_shares: {by: 0, value: 1, method: per_group_fn}}]
";

fn n_unique(df: &polars::prelude::DataFrame, col: &str) -> usize {
    df.column(col).expect("column").as_materialized_series().n_unique().expect("n_unique")
}

#[test]
fn a_distinct_axis_makes_tables_with_that_many_groups_at_fixed_rows() {
    let plan = framecost::spec::load_str("crews.yaml", SPEC).expect("lints");
    let axis = plan.axis.as_ref().expect("an axis");
    assert_eq!((axis.name.as_str(), axis.set, axis.column.as_deref(), axis.rows), ("crews", AxisSet::Distinct, Some("crew"), 20_000));
    assert_eq!(plan.sizes, vec![10, 100, 1000]);
    for &x in &plan.sizes {
        let inputs = SizeInputs::prepare(&plan, x, true, false).expect("tables");
        let df = &inputs.tables[0].1;
        assert_eq!(df.height(), 20_000, "rows stay fixed at {x} crews");
        // 20 or more rows per crew: every pool value is drawn (the chance that one of 1000 is
        // missed in 20,000 uniform draws is 1000·e^-20 ≈ 2·10^-6, and the seed is fixed).
        assert_eq!(n_unique(df, "crew"), x as usize, "distinct crews at point {x}");
        // The other columns keep their declared shape: `grams` has no pool, so nearly every
        // row differs; `ripe` is two values.
        assert!(n_unique(df, "grams") > 19_000);
        assert_eq!(n_unique(df, "ripe"), 2);
    }

    // Past a few rows per group not every group appears: the count seen follows the
    // classical occupancy expectation d·(1 − (1 − 1/d)^n) for n uniform draws over d values
    // (Feller, An Introduction to Probability Theory and Its Applications, vol. I, ch. II,
    // occupancy problems), with variance below the binomial's d·p·(1−p).
    let inputs = SizeInputs::prepare(&plan, 10_000, true, false).expect("tables");
    let seen = n_unique(&inputs.tables[0].1, "crew") as f64;
    let (d, n) = (10_000f64, 20_000f64);
    let p = 1.0 - (1.0 - 1.0 / d).powf(n);
    let expected = d * p;
    let sd = (d * p * (1.0 - p)).sqrt();
    assert!((seen - expected).abs() < 5.0 * sd, "seen {seen}, expected {expected:.0} ± {sd:.0}");
    assert!(seen < d, "with 2 rows per crew some crews are not drawn");
}

#[test]
fn a_columns_axis_repeats_the_declared_columns_with_their_kinds() {
    let text = SPEC
        .replace("sweep: {axis: crews, column: crew, set: distinct, values: [10, 100, 1k]}", "sweep: {set: columns, values: [2, 7]}")
        .replace("rows: 20k", "rows: 1000");
    let plan = framecost::spec::load_str("wide.yaml", &text).expect("lints");
    assert_eq!(plan.axis.as_ref().map(|a| a.name.as_str()), Some("columns"));
    let narrow = &SizeInputs::prepare(&plan, 2, true, false).expect("tables").tables[0].1;
    let names = |df: &polars::prelude::DataFrame| df.get_column_names().iter().map(|n| n.to_string()).collect::<Vec<_>>();
    assert_eq!(names(narrow), vec!["crew", "grams"]);
    let wide = &SizeInputs::prepare(&plan, 7, true, false).expect("tables").tables[0].1;
    assert_eq!(names(wide), vec!["crew", "grams", "ripe", "crew_2", "grams_2", "ripe_2", "crew_3"]);
    assert_eq!(wide.height(), 1000);
    // A copy has its column's kind and pool, and its own values (it is named differently).
    assert_eq!(wide.column("crew_2").expect("copy").dtype(), wide.column("crew").expect("col").dtype());
    assert_eq!(n_unique(wide, "crew_3"), 10);
    assert_ne!(wide.column("grams_2").expect("copy").as_materialized_series(), wide.column("grams").expect("col").as_materialized_series());
}

#[test]
fn a_group_sweep_records_the_axis_and_every_output_says_groups() {
    let dir = tempfile::tempdir().expect("tempdir");
    let spec = dir.path().join("crews.yaml");
    std::fs::write(&spec, SPEC).expect("write");
    let run = dir.path().join("run");
    let lint = Command::cargo_bin("framecost").expect("binary").arg("lint").arg(&spec).output().expect("runs");
    assert!(lint.status.success(), "{}", String::from_utf8_lossy(&lint.stderr));

    let out = Command::cargo_bin("framecost").expect("binary").arg("sweep").arg(&spec).arg("--out").arg(&run).output().expect("runs");
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    assert_eq!(out.status.code(), Some(0), "stdout:\n{stdout}\nstderr:\n{}", String::from_utf8_lossy(&out.stderr));

    let r = RunResults::read(&run).expect("readable");
    // A reader that does not know `axis` would label the groups as rows: the run says so.
    assert_eq!(r.run.as_ref().map(|h| h.schema.as_str()), Some(framecost::results::AXIS_SCHEMA));
    let w = &r.workloads[0];
    let axis = w.header.axis.as_ref().expect("the header records the axis");
    assert_eq!((axis.name.as_str(), axis.set, axis.column.as_deref(), axis.rows), ("crews", AxisSet::Distinct, Some("crew"), 20_000));
    assert_eq!(w.header.sizes, vec![10, 100, 1000]);
    // Every point is at a swept value; the outputs have the fixed rows.
    for p in &w.points {
        assert!([10, 100, 1000].contains(&p.rows), "{p:?}");
        if let Some(m) = &p.measured {
            assert_eq!(m.output.as_ref().expect("facts").rows, 20_000);
        }
    }
    // The generated table is the same size at every point: the rows did not move.
    let sizes: Vec<f64> = w.tables.iter().map(|t| t.table_bytes_estimate).collect();
    assert!(sizes.windows(2).all(|p| p[0] == p[1]), "{sizes:?}");

    // Labels: the terminal summary, recap, explain and the report name the axis.
    assert!(stdout.contains("swept: crews (distinct of `crew`) with 20k rows at every point"), "{stdout}");
    assert!(stdout.contains("at 1k crews"), "{stdout}");
    assert!(!stdout.contains("1k rows"), "{stdout}");
    let recap = Command::cargo_bin("framecost").expect("binary").arg("recap").arg(&run).output().expect("runs");
    let rtext = String::from_utf8_lossy(&recap.stdout);
    assert!(rtext.contains("swept: crews") && rtext.contains("at 1k crews"), "{rtext}");
    let explain = Command::cargo_bin("framecost").expect("binary").arg("explain").arg(&run).output().expect("runs");
    let etext = String::from_utf8_lossy(&explain.stdout);
    assert!(explain.status.success(), "{etext}");
    assert!(etext.contains("crews") && !etext.contains("1k rows"), "{etext}");
    let report = Command::cargo_bin("framecost").expect("binary").arg("report").arg(&run).output().expect("runs");
    assert!(report.status.success(), "{}", String::from_utf8_lossy(&report.stderr));
    let md = std::fs::read_to_string(run.join("report.md")).expect("report.md");
    assert!(md.contains("| time per run | 10 crews | 100 crews | 1k crews |"), "{md}");
    assert!(!md.contains("rows against") && !md.contains("number of rows"), "{md}");
    let svg = std::fs::read_dir(run.join("pictures"))
        .expect("run folder")
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().contains("scaling") && e.file_name().to_string_lossy().ends_with(".svg"))
        .map(|e| std::fs::read_to_string(e.path()).expect("svg"))
        .next()
        .expect("a scaling picture");
    assert!(svg.lines().any(|l| l.trim() == "crews"), "the picture's x axis is named after the axis");
    assert!(!svg.lines().any(|l| l.trim() == "rows"), "and not rows");
}

/// Lint `text` and return its problems as `line:column message`.
fn problems(text: &str) -> Vec<(usize, usize, String)> {
    match framecost::spec::load_str("bad.yaml", text) {
        Ok(_) => Vec::new(),
        Err(e) => e.0.iter().map(|i| (i.line, i.column, i.message.clone())).collect(),
    }
}

fn with_sweep(sweep: &str) -> String {
    SPEC.replace("sweep: {axis: crews, column: crew, set: distinct, values: [10, 100, 1k]}", sweep)
}

#[test]
fn a_bad_axis_is_located_at_its_line_and_column() {
    // The sweep is on line 11 of SPEC; columns count from 1.
    let line = SPEC.lines().position(|l| l.starts_with("sweep:")).expect("sweep line") + 1;
    let at = |text: &str, needle: &str| text.lines().nth(line - 1).and_then(|l| l.find(needle)).expect("needle") + 1;

    let text = with_sweep("sweep: {axis: crews, column: crow, set: distinct, values: [10, 100]}");
    let p = problems(&text);
    assert_eq!(p.len(), 1, "{p:?}");
    assert_eq!((p[0].0, p[0].1), (line, at(&text, "crow")));
    assert!(p[0].2.contains("no column `crow`"), "{p:?}");
    let Err(err) = framecost::spec::load_str("bad.yaml", &text) else { panic!("an unknown column lints") };
    assert_eq!(err.0[0].hint.as_deref(), Some("did you mean `crew`?"));

    let text = with_sweep("sweep: {axis: crews, column: ripe, set: distinct, values: [10, 100]}");
    let p = problems(&text);
    assert_eq!(p.len(), 1, "{p:?}");
    assert_eq!((p[0].0, p[0].1), (line, at(&text, "distinct")));
    assert!(p[0].2.contains("`distinct` does not apply to column `ripe`, which is bool"), "{p:?}");

    let text = with_sweep("sweep: {axis: crews, column: crew, set: skew, values: [0.5, 1]}").replace("distinct: 10, ", "");
    let p = problems(&text);
    assert!(p.iter().any(|x| x.2.contains("`skew` needs column `crew` to have `distinct`")), "{p:?}");

    // Values out of range: more distinct values than rows, zero, a share above 100%.
    let text = with_sweep("sweep: {axis: crews, column: crew, set: distinct, values: [10, 0, 30k]}");
    let p = problems(&text);
    assert_eq!(p.len(), 2, "{p:?}");
    assert_eq!((p[0].0, p[0].1), (line, at(&text, " 0,") + 1));
    assert_eq!((p[1].0, p[1].1), (line, at(&text, "30k")));
    assert!(p[1].2.contains("from 1 to the table's 20000 rows, found 30000"), "{p:?}");
    let text = with_sweep("sweep: {column: grams, set: nulls, values: [10%, 150%]}");
    let p = problems(&text);
    assert_eq!(p.len(), 1, "{p:?}");
    assert_eq!((p[0].0, p[0].1), (line, at(&text, "150%")));
    assert!(p[0].2.contains("null share above 0 and at most 100%"), "{p:?}");

    // `set: columns` takes no column; `sizes:` and `sweep:` together; a sweep without rows.
    let p = problems(&with_sweep("sweep: {set: columns, column: crew, values: [4, 8]}"));
    assert!(p.iter().any(|x| x.2.contains("takes no `column:`")), "{p:?}");
    let p = problems(&with_sweep("sweep: {set: columns, values: [4, 8]}\nsizes: [1k, 2k]"));
    assert!(p.iter().any(|x| x.2.contains("not both")), "{p:?}");
    let p = problems(&SPEC.replace("rows: 20k\n", ""));
    assert!(p.iter().any(|x| x.2.contains("needs `rows:`")), "{p:?}");

    // A step parameter bounded by the table's rows is checked against the fixed rows, not
    // against the swept values (a thousand crews is not a thousand rows).
    let text = SPEC.replace("steps: [{group_shares: {by: 0, value: 1, method: window}}]", "setup: [{split_storage: {pieces: 20000}}]\n    steps: [{group_shares: {by: 0, value: 1, method: window}}]");
    assert!(problems(&text).is_empty(), "{:?}", problems(&text));
    let p = problems(&text.replace("pieces: 20000", "pieces: 20001"));
    assert!(p.len() == 1 && p[0].2.contains("from 1 to 20000 (the largest size has 20000 rows), found 20001"), "{p:?}");

    // The command prints file:line:column.
    let dir = tempfile::tempdir().expect("tempdir");
    let f = dir.path().join("bad.yaml");
    let text = with_sweep("sweep: {axis: crews, column: crow, set: distinct, values: [10, 100]}");
    std::fs::write(&f, &text).expect("write");
    let out = Command::cargo_bin("framecost").expect("binary").arg("lint").arg(&f).output().expect("runs");
    assert_eq!(out.status.code(), Some(2));
    let all = format!("{}{}", String::from_utf8_lossy(&out.stdout), String::from_utf8_lossy(&out.stderr));
    assert!(all.contains(&format!("bad.yaml:{line}:{}", at(&text, "crow"))), "{all}");
}

#[test]
fn a_saved_columns_run_is_explained_in_columns_and_never_against_its_measurements() {
    // A recorded run (tests/data/README.md): `all-at-once-read-after` is measured fastest at
    // every size, but its fitted curve crosses `one-at-a-time-read-after`'s at about 10
    // columns. The verdict may not say the other design is cheaper below that.
    let dir = tempfile::tempdir().expect("tempdir");
    for f in ["points.jsonl", "spec-column-growth.yaml"] {
        std::fs::copy(format!("tests/data/columns-run/{f}"), dir.path().join(f)).expect("copy");
    }
    let r = RunResults::read(dir.path()).expect("readable");
    let w = &r.workloads[0];
    assert_eq!(w.header.axis.as_ref().map(|a| (a.set, a.rows)), Some((AxisSet::Columns, 8000)));
    for c in w.comparisons.iter() {
        let ratio = |d: &str| c.ratios.iter().find(|x| x.design == d).map(|x| x.ratio);
        if let (Some(a), Some(b)) = (ratio("all-at-once-read-after"), ratio("one-at-a-time-read-after")) {
            assert!(a < b, "the recorded run has all-at-once ahead at {} columns", c.rows);
        }
    }
    let out = Command::cargo_bin("framecost").expect("binary").arg("explain").arg(dir.path()).output().expect("runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{text}");
    let verdict = text.lines().find(|l| l.contains("verdict")).expect("a verdict line");
    assert!(!verdict.contains("`one-at-a-time-read-after` is cheaper"), "{verdict}");
    assert!(verdict.contains("at 128 columns"), "{verdict}");
    assert!(!text.contains(" rows:") && !text.contains("k rows"), "{text}");
}

#[test]
fn a_null_share_axis_sets_the_columns_share_of_nulls() {
    let text = with_sweep("sweep: {column: grams, set: nulls, values: [1%, 50%]}");
    let plan = framecost::spec::load_str("nulls.yaml", &text).expect("lints");
    assert_eq!(plan.sizes, vec![10_000, 500_000], "shares are kept in millionths");
    assert_eq!(plan.axis.as_ref().map(|a| a.name.as_str()), Some("null share"));
    for (x, p) in [(10_000u64, 0.01f64), (500_000, 0.5)] {
        let df = &SizeInputs::prepare(&plan, x, true, false).expect("tables").tables[0].1;
        let nulls = df.column("grams").expect("col").null_count() as f64;
        // Each row is null with probability p: a binomial count, mean n·p and variance
        // n·p·(1−p) (any probability text, e.g. Feller vol. I ch. VI).
        let n = df.height() as f64;
        let (mean, sd) = (n * p, (n * p * (1.0 - p)).sqrt());
        assert!((nulls - mean).abs() < 5.0 * sd, "{nulls} nulls at share {p}, expected {mean} ± {sd:.0}");
        assert_eq!(df.column("crew").expect("col").null_count(), 0, "only the axis's column changes");
    }
    let labels = framecost::results::Axis(plan.axis.as_ref());
    assert_eq!((labels.point(500_000), labels.value(10_000)), ("null share 50%".to_string(), "1%".to_string()));
}

#[test]
fn time_that_fits_cubic_while_bytes_grow_quadratically_is_read_as_a_pair() {
    use framecost::fit::growth::{fit_growth, GrowthClass};
    // A columns sweep of workloads/column-growth.yaml (8k rows, 4 to 128 columns, this
    // machine): `reads-between` allocated 2.07, 6.93, 26.8, 104, 414 and 1628 MiB (×4 per
    // doubling of the columns), and its time quartiles were fitted best by
    // 3.54e4 + 7.57e3·n² + 27.5·n³ ns (slope 2.11 over the largest sizes) while the measured
    // medians rose ×3.4 to ×4.6 per doubling. That curve, evaluated at the sizes:
    let columns = [4.0, 8.0, 16.0, 32.0, 64.0, 128.0];
    let time_ns: Vec<f64> = columns.iter().map(|n| 3.54e4 + 7.57e3 * n * n + 27.5 * n * n * n).collect();
    let bytes: Vec<f64> = [2.07, 6.93, 26.8, 104.0, 414.0, 1628.0].iter().map(|m| m * 1048576.0).collect();
    let time = fit_growth(&columns, &time_ns).expect("time fit");
    let bytes = fit_growth(&columns, &bytes).expect("bytes fit");
    assert_eq!((time.best, bytes.best), (GrowthClass::Cubic, GrowthClass::Quadratic), "slope {}", time.top_slope);
    let (f, note) = framecost::analyse::bounded_by_bytes(&time, Some(&bytes), None).expect("read as a pair");
    assert_eq!((f.best, f.alternative), (GrowthClass::Quadratic, Some(GrowthClass::Cubic)));
    assert!(note.contains("read as n² or n³"), "{note}");
    // Bytes growing as fast as the time leave a cubic class alone.
    let cubic: Vec<f64> = columns.iter().map(|n| 1e3 * n * n * n).collect();
    let t3 = fit_growth(&columns, &cubic).expect("fit");
    assert_eq!(t3.best, GrowthClass::Cubic);
    assert!(framecost::analyse::bounded_by_bytes(&t3, Some(&t3), None).is_none());
    // And so does a steep cubic (slope 2.5 or more) whatever the bytes.
    let steep: Vec<f64> = columns.iter().map(|n| 1e4 * n * n + 2e3 * n * n * n).collect();
    let ts = fit_growth(&columns, &steep).expect("fit");
    assert!(ts.top_slope >= 2.5 && ts.best == GrowthClass::Cubic, "{} {:?}", ts.top_slope, ts.best);
    assert!(framecost::analyse::bounded_by_bytes(&ts, Some(&bytes), None).is_none());
}

#[test]
fn allocation_counts_are_fitted_over_busy_sizes_too() {
    // The recorded columns run (tests/data/columns-run) had 3 of its 6 sizes measured on a
    // busy machine: they are left out of the time fits, but allocation counts are exact
    // whatever the load, so the class of bytes uses all six (×4 per doubling of the
    // columns for `reads-between`, ×2 for a design that copies each column once).
    let r = RunResults::read(std::path::Path::new("tests/data/columns-run")).expect("readable");
    let a = framecost::analyse::analyse(&r, &framecost::analyse::AnalyseOptions::default());
    let d = |name: &str| a.workloads[0].designs.iter().find(|d| d.design == name).expect("design");
    let between = d("reads-between");
    assert!(between.notes.iter().any(|n| n.contains("3 size(s) measured on a busy or slower machine were left out")), "{:?}", between.notes);
    assert_eq!(between.time.as_ref().map(|t| t.sizes), Some(3));
    assert_eq!(between.bytes.as_ref().map(|b| (b.class.as_str(), b.sizes)), Some(("n²", 6)));
    let after = d("all-at-once-read-after");
    assert_eq!(after.bytes.as_ref().map(|b| (b.class.as_str(), b.sizes)), Some(("n", 6)));
}

#[test]
fn the_gate_refuses_to_match_points_of_different_axes() {
    // The same workload swept over rows, then over groups: its point "1000" means 1000 rows
    // in one run and 1000 groups in the other, so nothing may be compared.
    let dir = tempfile::tempdir().expect("tempdir");
    let by_rows = SPEC
        .replace("rows: 20k\n", "")
        .replace("sweep: {axis: crews, column: crew, set: distinct, values: [10, 100, 1k]}", "sizes: [100, 1k]");
    let by_crews = SPEC.replace("values: [10, 100, 1k]", "values: [100, 1k]");
    let mut runs = Vec::new();
    for (name, text) in [("rows", by_rows), ("crews", by_crews)] {
        let spec = dir.path().join(format!("{name}.yaml"));
        std::fs::write(&spec, text).expect("write");
        let run = dir.path().join(format!("run-{name}"));
        let out = Command::cargo_bin("framecost").expect("binary").arg("sweep").arg(&spec).arg("--out").arg(&run).arg("--quiet").output().expect("runs");
        assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
        runs.push(run);
    }
    let out = Command::cargo_bin("framecost").expect("binary").arg("gate").arg(&runs[0]).arg(&runs[1]).output().expect("runs");
    let all = format!("{}{}", String::from_utf8_lossy(&out.stdout), String::from_utf8_lossy(&out.stderr));
    assert_eq!(out.status.code(), Some(2), "{all}");
    assert!(all.contains("swept over different axes") && all.contains("crews-by-count (rows → crews)"), "{all}");
}
