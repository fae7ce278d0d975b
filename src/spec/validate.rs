//! Meaning checks on a parsed spec, and its resolution into a [`Plan`].
//!
//! Every check records the YAML path of the value it judges; the [`Locator`] turns that
//! path into `line:column`. All problems are collected, not just the first, so `lint`
//! shows a whole file's worth at once.
//!
//! This file holds the checker every part shares, the workload as a whole, sizes and the
//! budget; the parts: tables (`tables.rs`), columns (`columns.rs`), the sweep
//! (`axis.rs`), designs (`designs.rs`), one step and its parameters (`steps.rs`; its
//! columns against the table it receives in `step_columns.rs`),
//! programs (`programs.rs`), queries (`queries.rs`); the bounds every value must keep are
//! in `limits.rs`.

use super::designs::check_designs;
use super::locate::{Locator, YamlPath};
use super::model::*;
use super::SpecIssue;
use crate::plan::{Budget, Plan};
use std::collections::HashSet;

pub(super) use super::steps::yaml_kind_of;

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
    /// A column's or design's name (`what`): not empty, well formed ([`name_problem`]),
    /// not already in `seen`.
    pub(super) fn name(&mut self, path: &YamlPath, name: &str, what: &str, seen: &mut HashSet<String>) {
        if name.trim().is_empty() {
            self.at(path, format!("expected a {what} name, found an empty one"), None);
        } else if let Some(m) = name_problem(name) {
            self.at(path, m, None);
        } else if !seen.insert(name.to_string()) {
            self.at(path, format!("{what} `{name}` is defined twice"), None);
        }
    }
    pub(super) fn share(&mut self, path: &YamlPath, v: f64, what: &str) -> f64 {
        if !(0.0..=1.0).contains(&v) || !v.is_finite() {
            self.at(path, format!("expected {what} between 0 and 1 (or 0% to 100%), found {v}"), None);
            return 0.0;
        }
        v
    }
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
    // Built-in steps receive the first table; on a sweep over the number of columns, at its
    // widest (a column missing there is missing everywhere).
    let widest = match &axis {
        Some(a) if a.set == crate::plan::AxisSet::Columns => crate::plan::widen(&columns, sizes.last().copied().unwrap_or(0) as usize),
        _ => columns.clone(),
    };
    let first_name = tables.first().map_or(super::tables::DEFAULT_TABLE, |t| t.name.as_str());
    let first = super::step_columns::SeenTable::of(first_name, &widest, tables.get(1..).unwrap_or_default());
    let mut designs = check_designs(&mut c, &spec.designs, &root.key("designs"), &columns, &first, largest);
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
    if let Some(m) = gate_threshold.and_then(super::limits::threshold_problem) {
        c.at(&root.key("gate").key("threshold"), m, None);
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

pub(super) fn check_sizes(c: &mut Checker, sizes: &SizeLadder, path: &YamlPath) -> Vec<u64> {
    let mut out: Vec<u64> = match sizes {
        SizeLadder::List(list) => {
            if list.is_empty() {
                c.at(path, "expected at least one size", None);
            }
            let mut seen = HashSet::new();
            for (i, s) in list.iter().enumerate() {
                if let Some(m) = super::limits::size_problem(s.0) {
                    c.at(&path.index(i), m, None);
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
