//! Meaning checks on a parsed spec, and its resolution into a [`Plan`].
//!
//! Every check records the YAML path of the value it judges; the [`Locator`] turns that
//! path into `line:column`. All problems are collected, not just the first, so `lint`
//! shows a whole file's worth at once.

use super::locate::{Locator, YamlPath};
use super::model::*;
use super::suggest::closest;
use super::SpecIssue;
use crate::patterns::{self, ParamKind, ParamValue, Params, ValueKind};
use crate::plan::{Budget, ColumnPlan, DesignPlan, Plan, RangePlan, StepPlan};
use serde_yaml::Value as Y;
use std::collections::{BTreeMap, HashSet};

/// Largest row count framecost accepts in a spec (10 billion).
pub const MAX_ROWS: u64 = 10_000_000_000;
/// Largest number of sizes in one ladder.
pub const MAX_SIZES: usize = 64;
pub use super::limits::*;

pub(super) struct Checker<'a> {
    pub(super) file: &'a str,
    pub(super) loc: &'a Locator,
    pub(super) issues: Vec<SpecIssue>,
}

impl Checker<'_> {
    /// A problem located at the value of `path`.
    pub(super) fn at(&mut self, path: &YamlPath, message: impl Into<String>, hint: Option<String>) {
        let p = self.loc.value(path);
        self.push(p, path, message.into(), hint);
    }
    /// A problem located at the key of `path` (an unknown or misplaced key).
    pub(super) fn at_key(&mut self, path: &YamlPath, message: impl Into<String>, hint: Option<String>) {
        let p = self.loc.key(path);
        self.push(p, path, message.into(), hint);
    }
    pub(super) fn push(&mut self, at: Option<super::locate::Pos>, path: &YamlPath, message: String, hint: Option<String>) {
        let p = at.unwrap_or(super::locate::Pos { line: 1, column: 1 });
        self.issues.push(SpecIssue { file: self.file.to_string(), line: p.line, column: p.column, message: format!("{path}: {message}"), hint });
    }
    fn share(&mut self, path: &YamlPath, v: f64, what: &str) -> f64 {
        if !(0.0..=1.0).contains(&v) || !v.is_finite() {
            self.at(path, format!("expected {what} between 0 and 1 (or 0% to 100%), found {v}"), None);
            return 0.0;
        }
        v
    }
}

fn article(word: &str) -> &'static str {
    if word.starts_with(['a', 'e', 'i', 'o', 'u']) {
        "an"
    } else {
        "a"
    }
}

fn parse_date(s: &str) -> Option<i32> {
    let d = chrono::NaiveDate::parse_from_str(s.trim(), "%Y-%m-%d").ok()?;
    let epoch = chrono::NaiveDate::from_ymd_opt(1970, 1, 1)?;
    i32::try_from((d - epoch).num_days()).ok()
}

/// Check a parsed spec and resolve it. Returns every problem found.
pub fn check(file: &str, text: &str, spec: &WorkloadSpec, loc: &Locator) -> Result<Plan, Vec<SpecIssue>> {
    let mut c = Checker { file, loc, issues: Vec::new() };
    let root = YamlPath::root();

    if spec.framecost != FORMAT_VERSION {
        c.at(
            &root.key("framecost"),
            format!("this file is in workload format {}, but this framecost reads format {FORMAT_VERSION}", spec.framecost),
            None,
        );
    }
    if spec.name.is_empty()
        || spec.name.len() > 64
        || !spec.name.chars().all(|ch| ch.is_ascii_alphanumeric() || ch == '-' || ch == '_')
    {
        c.at(
            &root.key("name"),
            format!("expected a short name of letters, digits, `-` or `_` (at most 64), found `{}`", spec.name),
            None,
        );
    }

    let tables = super::tables::check_tables(&mut c, spec);
    let columns = tables.first().map(|t| t.columns.clone()).unwrap_or_default();
    let (sizes, axis) = super::axis::check_sweep(&mut c, spec, &columns);
    // Per-row step parameters are checked against the rows of the largest point.
    let largest = match &axis {
        Some(a) => a.rows,
        None => sizes.last().copied().unwrap_or(MAX_ROWS),
    };
    let target = spec.target.map(|t| t.0);
    if let Some(t) = target {
        if t == 0 || t > MAX_ROWS * 1000 {
            c.at(&root.key("target"), format!("expected a target of 1 row to 10^13 rows, found {t}"), None);
        }
    }
    let budget = check_budget(&mut c, &spec.budget, &root.key("budget"));
    let table_names: Vec<String> = tables.iter().map(|t| t.name.clone()).collect();
    let mut designs = check_designs(&mut c, &spec.designs, &root.key("designs"), &columns, largest);
    for (i, d) in spec.designs.iter().enumerate() {
        if let Some(p) = &d.program {
            let plan = super::programs::check_program(&mut c, d, p, &root.key("designs").index(i), file, &table_names);
            designs[i].program = plan;
        }
    }
    super::queries::check_streaming(&mut c, &tables, &designs, &root.key("designs"));
    if c.issues.is_empty() {
        // Queries are planned only when everything else is sound (they need the tables).
        super::queries::check_queries(&mut c, text, &tables, &mut designs, &root.key("designs"));
    }
    if let Some(reason) = &spec.outputs_differ {
        if reason.trim().is_empty() {
            c.at(&root.key("outputs_differ"), "expected a sentence saying why the designs' outputs differ", None);
        }
    }

    let gate_threshold = spec.gate.as_ref().and_then(|g| g.threshold).map(|t| t.0);
    if let Some(t) = gate_threshold {
        if !(t > 0.0 && t <= 10.0) {
            c.at(&root.key("gate").key("threshold"), format!("expected a threshold above 0% and at most 1000%, found {t}"), None);
        }
    }
    if !c.issues.is_empty() {
        return Err(c.issues);
    }
    Ok(Plan {
        file: file.to_string(),
        spec_hash: format!("{:016x}", xxhash_rust::xxh3::xxh3_64(text.as_bytes())),
        spec_text: text.to_string(),
        name: spec.name.clone(),
        about: spec.about.trim().to_string(),
        seed: spec.seed,
        columns,
        related: spec.tables.is_some(),
        tables,
        sizes,
        axis,
        target,
        budget,
        designs,
        outputs_differ: spec.outputs_differ.clone(),
        gate_threshold,
    })
}

pub(super) fn check_columns(c: &mut Checker, table: &TableSpec, path: &YamlPath) -> Vec<ColumnPlan> {
    if table.columns.is_empty() {
        c.at(path, "expected at least one column", None);
    }
    if table.columns.len() > MAX_COLUMNS {
        c.at(path, format!("expected at most {MAX_COLUMNS} columns, found {}", table.columns.len()), None);
    }
    let mut seen = HashSet::new();
    let mut out = Vec::new();
    for (i, col) in table.columns.iter().enumerate() {
        let p = path.index(i);
        if col.name.trim().is_empty() {
            c.at(&p.key("name"), "expected a column name, found an empty one", None);
        } else if let Some(m) = name_problem(&col.name) {
            c.at(&p.key("name"), m, None);
        } else if !seen.insert(col.name.clone()) {
            c.at(&p.key("name"), format!("column `{}` is defined twice", col.name), None);
        }
        let kind = col.kind;
        let applies = |c: &mut Checker, present: bool, key: &str, ok: &[ColumnKind]| {
            if present && !ok.contains(&kind) {
                let names: Vec<&str> = ok.iter().map(|k| k.label()).collect();
                c.at_key(
                    &p.key(key),
                    format!("`{key}` does not apply to {} {} column (it applies to {})", article(kind.label()), kind.label(), names.join(", ")),
                    None,
                );
            }
        };
        use ColumnKind::*;
        applies(c, col.distinct.is_some(), "distinct", &[Int, Float, Text, Category, Date]);
        applies(c, col.range.is_some(), "range", &[Int, Float, Date]);
        applies(c, col.length.is_some(), "length", &[Text, Category]);
        applies(c, col.true_share.is_some(), "true_share", &[Bool]);
        applies(c, col.duplicates.is_some(), "duplicates", &[Key]);
        applies(c, col.skew.is_some(), "skew", &[Int, Float, Text, Category, Date]);
        applies(c, col.references.is_some(), "references", &[Int]);
        if col.unmatched.is_some() && col.references.is_none() {
            c.at_key(&p.key("unmatched"), "`unmatched` applies only with `references` (the share of values without a match)", None);
        }
        let unmatched = col.unmatched.map(|s| c.share(&p.key("unmatched"), s.0, "a share of unmatched values")).unwrap_or(0.0);
        if col.run.is_some() && col.order != Order::Clustered {
            c.at_key(&p.key("run"), "`run` applies only with `order: clustered`", None);
        }

        let nulls = col.nulls.map(|s| c.share(&p.key("nulls"), s.0, "a null share")).unwrap_or(0.0);
        let duplicates = col.duplicates.map(|s| s.0).unwrap_or(0.0);
        if !(0.0..1.0).contains(&duplicates) {
            c.at(&p.key("duplicates"), format!("expected a share of duplicated keys from 0 up to (not including) 1, found {duplicates}"), None);
        }
        let true_share = col.true_share.map(|s| c.share(&p.key("true_share"), s.0, "a share of true values")).unwrap_or(0.5);
        let skew = col.skew.unwrap_or(0.0);
        if !skew.is_finite() || !(0.0..=10.0).contains(&skew) {
            c.at(&p.key("skew"), format!("expected a Zipf exponent from 0 (uniform) to 10, found {skew}"), None);
        }
        let distinct = match (col.distinct, kind) {
            (Some(0), _) => {
                c.at(&p.key("distinct"), "expected at least 1 distinct value, found 0", None);
                None
            }
            (Some(d), _) if d > 1_000_000_000 => {
                c.at(&p.key("distinct"), format!("expected at most 10^9 distinct values, found {d}"), None);
                None
            }
            (Some(d), _) => Some(d),
            (None, Text | Category) => Some(100),
            (None, _) => None,
        };
        if skew > 0.0 && distinct.is_none() && col.references.is_none() {
            c.at_key(&p.key("skew"), "`skew` needs `distinct` (the number of values the skew is spread over)", None);
        }
        if let Some(d) = distinct.filter(|&d| skew > 0.0 && d > MAX_SKEWED_DISTINCT) {
            c.at(
                &p.key("distinct"),
                format!("expected at most 10^8 distinct values under `skew` (the skew table holds about 36 bytes per value), found {d}"),
                None,
            );
        }
        let run = col.run.unwrap_or(64);
        if run == 0 {
            c.at(&p.key("run"), "expected a run length of at least 1 row, found 0", None);
        }
        let length = match &col.length {
            None => (4, 12),
            Some(v) if v.len() == 2 && v[0] >= 1 && v[0] <= v[1] && v[1] <= 256 => (v[0] as u32, v[1] as u32),
            Some(v) => {
                c.at(&p.key("length"), format!("expected [shortest, longest] word length with 1 ≤ shortest ≤ longest ≤ 256, found {v:?}"), None);
                (4, 12)
            }
        };
        if let (Text | Category, Some(d)) = (kind, distinct) {
            // The word pool needs enough room for `d` distinct words of the given lengths.
            let room = 26f64.powi(length.1 as i32);
            if (d as f64) > room {
                c.at_key(&p.key("distinct"), format!("{d} distinct words do not fit in words of at most {} characters", length.1), None);
            }
        }
        let range = check_range(c, col, &p.key("range"));
        out.push(ColumnPlan {
            name: col.name.clone(),
            kind,
            nulls,
            distinct,
            range,
            order: col.order,
            run: run.max(1),
            skew,
            duplicates,
            length,
            true_share,
            references: col.references.clone(),
            unmatched,
        });
    }
    out
}

fn check_range(c: &mut Checker, col: &ColumnSpec, path: &YamlPath) -> RangePlan {
    let default = match col.kind {
        ColumnKind::Int => RangePlan::Int(0, 1_000_000),
        ColumnKind::Float => RangePlan::Float(0.0, 1.0),
        ColumnKind::Date => RangePlan::Date(parse_date("2020-01-01").unwrap_or(0), parse_date("2029-12-31").unwrap_or(3652)),
        _ => RangePlan::None,
    };
    let Some(bounds) = &col.range else { return default };
    if bounds.len() != 2 {
        c.at(path, format!("expected [lowest, highest], found {} value(s)", bounds.len()), None);
        return default;
    }
    let r = match (col.kind, &bounds[0], &bounds[1]) {
        (ColumnKind::Int, Bound::Int(a), Bound::Int(b)) => RangePlan::Int(*a, *b),
        (ColumnKind::Float, a, b) => {
            let num = |x: &Bound| match x {
                Bound::Int(v) => Some(*v as f64),
                Bound::Float(v) => Some(*v),
                Bound::Text(_) => None,
            };
            match (num(a), num(b)) {
                (Some(a), Some(b)) if a.is_finite() && b.is_finite() && (b - a).is_finite() => RangePlan::Float(a, b),
                _ => {
                    c.at(path, "expected two finite numbers for a float range, whose width is finite too", None);
                    return default;
                }
            }
        }
        (ColumnKind::Date, Bound::Text(a), Bound::Text(b)) => match (parse_date(a), parse_date(b)) {
            (Some(a), Some(b)) => RangePlan::Date(a, b),
            _ => {
                c.at(path, format!("expected two dates as YYYY-MM-DD, found [{a}, {b}]"), None);
                return default;
            }
        },
        (ColumnKind::Int, _, _) => {
            c.at(path, "expected two whole numbers for an int range", None);
            return default;
        }
        (ColumnKind::Date, _, _) => {
            c.at(path, "expected two dates as YYYY-MM-DD (quoted or not) for a date range", None);
            return default;
        }
        _ => return default,
    };
    let ordered = match r {
        RangePlan::Int(a, b) => a <= b,
        RangePlan::Float(a, b) => a <= b,
        RangePlan::Date(a, b) => a <= b,
        RangePlan::None => true,
    };
    if !ordered {
        c.at(path, "expected the lowest value first: the range is empty", None);
        return default;
    }
    r
}

pub(super) fn check_sizes(c: &mut Checker, sizes: &SizeLadder, path: &YamlPath) -> Vec<u64> {
    let mut out: Vec<u64> = match sizes {
        SizeLadder::List(list) => {
            if list.is_empty() {
                c.at(path, "expected at least one size", None);
            }
            let mut seen = HashSet::new();
            for (i, s) in list.iter().enumerate() {
                if s.0 == 0 || s.0 > MAX_ROWS {
                    c.at(&path.index(i), format!("expected a size from 1 to 10^10 rows, found {}", s.0), None);
                } else if !seen.insert(s.0) {
                    c.at(&path.index(i), format!("size {} is listed twice", s.0), None);
                }
            }
            list.iter().map(|s| s.0).filter(|&s| s > 0 && s <= MAX_ROWS).collect()
        }
        SizeLadder::Ladder(l) => {
            let mut ok = true;
            if l.from.0 == 0 || l.from.0 > MAX_ROWS {
                c.at(&path.key("from"), format!("expected a first size from 1 to 10^10 rows, found {}", l.from.0), None);
                ok = false;
            }
            if l.to.0 < l.from.0 || l.to.0 > MAX_ROWS {
                c.at(&path.key("to"), format!("expected a last size from `from` ({}) to 10^10 rows, found {}", l.from.0, l.to.0), None);
                ok = false;
            }
            if !(l.factor > 1.0 && l.factor <= 100.0) {
                c.at(&path.key("factor"), format!("expected a growth factor above 1 and at most 100, found {}", l.factor), None);
                ok = false;
            }
            let mut v = Vec::new();
            if ok {
                let mut x = l.from.0 as f64;
                while x.round() as u64 <= l.to.0 && v.len() <= MAX_SIZES {
                    let n = x.round() as u64;
                    if v.last() != Some(&n) {
                        v.push(n);
                    }
                    x *= l.factor;
                }
            }
            v
        }
    };
    if out.len() > MAX_SIZES {
        c.at(path, format!("expected at most {MAX_SIZES} sizes, the ladder gives more"), None);
    }
    out.sort_unstable();
    out
}

fn check_budget(c: &mut Checker, b: &BudgetSpec, path: &YamlPath) -> Budget {
    let budget = Budget {
        per_point_s: b.per_point.0,
        whole_run_s: b.whole_run.0,
        precision: b.precision.0,
        min_samples: b.min_samples,
        max_samples: b.max_samples,
        warmup: b.warmup,
    };
    for (key, message) in budget_problems(&budget) {
        c.at(&path.key(key), message, None);
    }
    budget
}

fn check_designs(c: &mut Checker, designs: &[DesignSpec], path: &YamlPath, columns: &[ColumnPlan], largest: u64) -> Vec<DesignPlan> {
    if designs.is_empty() {
        c.at(path, "expected at least one design (one is tracked on its own growth; two or more are compared)", None);
    }
    let mut seen = HashSet::new();
    let mut out = Vec::new();
    for (i, d) in designs.iter().enumerate() {
        let p = path.index(i);
        if d.name.trim().is_empty() {
            c.at(&p.key("name"), "expected a design name, found an empty one", None);
        } else if let Some(m) = name_problem(&d.name) {
            c.at(&p.key("name"), m, None);
        } else if !seen.insert(d.name.clone()) {
            c.at(&p.key("name"), format!("design `{}` is defined twice", d.name), None);
        }
        if d.steps.is_empty() && d.program.is_none() {
            c.at(&p.key("steps"), "expected at least one step (or a `program:`)", None);
        }
        let mut flowing = match d.feed {
            Feed::Table => ValueKind::Frame,
            Feed::Records => ValueKind::Records,
        };
        let mut broken = false;
        let mut lists: [Vec<StepPlan>; 2] = [Vec::new(), Vec::new()];
        for (li, (key, raws)) in [("setup", &d.setup), ("steps", &d.steps)].into_iter().enumerate() {
            for (j, raw) in raws.iter().enumerate() {
                if broken {
                    break;
                }
                let sp = p.key(key).index(j);
                let Some(step) = check_step(c, raw, &sp, largest) else {
                    // The chain cannot be judged past a step we could not read.
                    broken = true;
                    break;
                };
                if step.def.takes != flowing {
                    let first = li == 0 && j == 0 || (li == 1 && j == 0 && d.setup.is_empty());
                    let fix = if first && step.def.takes == ValueKind::Records {
                        Some("set `feed: records` on this design".to_string())
                    } else {
                        None
                    };
                    c.at(
                        &sp,
                        format!("step `{}` needs {} but receives {}", step.def.name, step.def.takes.label(), flowing.label()),
                        fix,
                    );
                }
                flowing = step.def.gives;
                lists[li].push(step);
            }
        }
        let [setup, steps] = lists;
        if d.engine == EngineChoice::Streaming {
            if let Some(j) = steps.iter().position(|s| s.def.name != "sql") {
                c.at(&p.key("steps").index(j), "a design with `engine: streaming` runs only `sql` steps (its tables stay on disk)", None);
            }
            if !d.setup.is_empty() {
                c.at_key(&p.key("setup"), "a design with `engine: streaming` takes no `setup:` steps", None);
            }
        }
        if !broken && !d.steps.is_empty() && flowing != ValueKind::Frame {
            c.at(&p.key("steps"), format!("the last step must give a table (so designs can be compared), but it gives {}", flowing.label()), None);
        }
        let mut growth = |key: &str, v: &Option<String>| -> Option<&'static str> {
            let v = v.as_ref()?;
            let canon = canonical_growth(v);
            if canon.is_none() {
                let all = GROWTH_LABELS.iter().flat_map(|(_, s)| s.iter().copied());
                let hint = closest(v, all).map(|s| format!("did you mean `{s}`?"));
                let names: Vec<&str> = GROWTH_LABELS.iter().map(|(c, _)| *c).collect();
                c.at(&p.key("expect").key(key), format!("expected a growth class ({}), found `{v}`", names.join(", ")), hint);
            }
            canon
        };
        let (expect_time, expect_bytes) = match &d.expect {
            Some(e) => (growth("time", &e.time), growth("bytes", &e.bytes)),
            None => (None, None),
        };
        let mut expect_dtypes = Vec::new();
        for (col, kind) in d.expect.iter().flat_map(|e| &e.dtypes) {
            if columns.iter().any(|k| &k.name == col) {
                expect_dtypes.push((col.clone(), kind.dtype_label()));
            } else {
                let hint = closest(col, columns.iter().map(|k| k.name.as_str())).map(|s| format!("did you mean `{s}`?"));
                c.at(&p.key("expect").key("dtypes").key(col), format!("no column `{col}` in the table"), hint);
            }
        }
        out.push(DesignPlan {
            name: d.name.clone(),
            about: d.about.clone(),
            feed: d.feed,
            engine: d.engine,
            setup,
            steps,
            expect_time,
            expect_bytes,
            expect_dtypes,
            query_plans: Vec::new(),
            program: None,
        });
    }
    out
}

pub(super) fn yaml_kind_of(v: &Y) -> &'static str {
    yaml_kind(v)
}

fn yaml_kind(v: &Y) -> &'static str {
    match v {
        Y::Null => "nothing",
        Y::Bool(_) => "true/false",
        Y::Number(_) => "a number",
        Y::String(_) => "text",
        Y::Sequence(_) => "a list",
        Y::Mapping(_) => "a mapping",
        Y::Tagged(_) => "a tagged value",
    }
}

fn check_step(c: &mut Checker, raw: &Y, path: &YamlPath, largest: u64) -> Option<StepPlan> {
    let (name, params_raw): (String, Option<&Y>) = match raw {
        Y::String(s) => (s.clone(), None),
        Y::Mapping(m) if m.len() == 1 => {
            let (k, v) = m.iter().next()?;
            match k {
                Y::String(s) => (s.clone(), Some(v)),
                _ => {
                    c.at(path, "expected a step name as the key", None);
                    return None;
                }
            }
        }
        Y::Mapping(m) => {
            c.at(path, format!("expected one step per list item, `name: {{params}}`, found a mapping with {} keys", m.len()), None);
            return None;
        }
        other => {
            c.at(path, format!("expected a step (`name` or `name: {{params}}`), found {}", yaml_kind(other)), None);
            return None;
        }
    };
    let Some(def) = patterns::find_step(&name) else {
        let hint = closest(&name, patterns::all_steps().map(|(_, s)| s.name)).map(|s| format!("did you mean `{s}`?"));
        c.at_key(&path.key(&name), format!("unknown step `{name}` (see `framecost catalog --long` for the steps)"), hint);
        return None;
    };
    let pp = path.key(&name);
    let mut given: BTreeMap<String, &Y> = BTreeMap::new();
    match params_raw {
        None | Some(Y::Null) => {}
        Some(Y::Mapping(m)) => {
            for (k, v) in m {
                match k {
                    Y::String(s) => {
                        given.insert(s.clone(), v);
                    }
                    _ => c.at(&pp, "expected parameter names as keys", None),
                }
            }
        }
        Some(other) => {
            c.at(&pp, format!("expected the step's parameters as a mapping, found {}", yaml_kind(other)), None);
            return None;
        }
    }
    let mut params = Params::default();
    let before = c.issues.len();
    for k in given.keys() {
        if !def.params.iter().any(|p| p.name == k.as_str()) {
            let hint = closest(k, def.params.iter().map(|p| p.name)).map(|s| format!("did you mean `{s}`?"));
            let known: Vec<&str> = def.params.iter().map(|p| p.name).collect();
            let known = if known.is_empty() { "it takes none".to_string() } else { format!("it takes {}", known.join(", ")) };
            c.at_key(&pp.key(k), format!("step `{name}` has no parameter `{k}` ({known})"), hint);
        }
    }
    for pd in def.params {
        let raw = given.get(pd.name).copied();
        let default_y: Y = serde_yaml::from_str(pd.default).unwrap_or(Y::Null);
        let v = raw.unwrap_or(&default_y);
        let vp = pp.key(pd.name);
        let got = match (pd.kind, v) {
            (ParamKind::Count { .. }, Y::Number(n)) => match n.as_u64() {
                Some(x) => match count_problem(&pd.kind, x, largest) {
                    None => Some(ParamValue::Count(x)),
                    Some(m) => {
                        c.at(&vp, format!("`{}`: {m}", pd.name), None);
                        continue;
                    }
                },
                _ => None,
            },
            (ParamKind::Number { min, max }, Y::Number(n)) => match n.as_f64() {
                Some(x) if x >= min && x <= max => Some(ParamValue::Number(x)),
                _ => None,
            },
            // A share written with a percent sign: `15%` is 0.15.
            (ParamKind::Number { min, max }, Y::String(t)) if t.trim_end().ends_with('%') => {
                match crate::spec::units::parse_share(t) {
                    Ok(x) if x >= min && x <= max => Some(ParamValue::Number(x)),
                    _ => None,
                }
            }
            (ParamKind::Choice(opts), Y::String(s)) => {
                if opts.contains(&s.as_str()) {
                    Some(ParamValue::Choice(s.clone()))
                } else {
                    let hint = closest(s, opts.iter().copied()).map(|h| format!("did you mean `{h}`?"));
                    c.at(&vp, format!("expected {}, found `{s}`", pd.kind.describe()), hint);
                    continue;
                }
            }
            (ParamKind::Flag, Y::Bool(b)) => Some(ParamValue::Flag(*b)),
            (ParamKind::Text, Y::String(t)) if !t.trim().is_empty() => Some(ParamValue::Text(t.clone())),
            _ => None,
        };
        match got {
            Some(g) => {
                params.0.insert(pd.name.to_string(), g);
            }
            None => {
                let found = match v {
                    Y::Number(n) => n.to_string(),
                    Y::String(s) => format!("`{s}`"),
                    other => yaml_kind(other).to_string(),
                };
                c.at(&vp, format!("expected {} for `{}`, found {found}", pd.kind.describe(), pd.name), None);
            }
        }
    }
    if c.issues.len() != before {
        return None;
    }
    let runner: std::sync::Arc<dyn crate::patterns::Step> = std::sync::Arc::from((def.build)(&params));
    Some(StepPlan { def, label: params.describe(def.name), params, runner })
}
