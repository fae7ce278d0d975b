//! `sizes:` or `sweep:`: what a workload sweeps. A row sweep gives row counts; a sweep over
//! another axis fixes the first table's rows (`rows:`) and sets one shape parameter — a
//! column's distinct count, the number of columns, a null share, a skew — to each value.
//!
//! A newcomer must know: the plan keeps one list of swept values (`Plan::sizes`, whole
//! numbers) whatever the axis, so the runner, the results and the fits need not know which
//! axis it is; shares and exponents are stored in millionths ([`AxisSet::scale`]), and
//! `Plan::tables_at` / `Plan::rows_at` turn a value back into tables.

use super::locate::YamlPath;
use super::model::{ColumnKind, WorkloadSpec};
use super::suggest::closest;
use super::validate::{Checker, MAX_ROWS, MAX_SIZES};
use crate::plan::{AxisPlan, AxisSet, ColumnPlan};
use serde_yaml::Value as Y;

/// Longest axis name, in characters.
pub const MAX_AXIS_NAME: usize = 32;

/// The kinds of column each parameter applies to (as `check_columns` has it for the keys).
fn applies_to(set: AxisSet) -> &'static [ColumnKind] {
    use ColumnKind::*;
    match set {
        AxisSet::Distinct | AxisSet::Skew => &[Int, Float, Text, Category, Date],
        AxisSet::Nulls => &[Int, Float, Bool, Text, Category, Date, Key],
        AxisSet::Columns => &[],
    }
}

/// Check `sizes:`, `rows:` and `sweep:` together. Returns the swept values (sorted) and the
/// axis when it is not rows. `columns` are the first table's.
pub(super) fn check_sweep(c: &mut Checker, spec: &WorkloadSpec, columns: &[ColumnPlan]) -> (Vec<u64>, Option<AxisPlan>) {
    let root = YamlPath::root();
    let Some(sw) = &spec.sweep else {
        if let Some(_rows) = spec.rows {
            c.at_key(&root.key("rows"), "`rows:` applies only with `sweep:` (a `sizes:` ladder sweeps the rows themselves)", None);
        }
        return match &spec.sizes {
            Some(s) => (super::validate::check_sizes(c, s, &root.key("sizes")), None),
            None => {
                c.at(&root, "expected `sizes:` (the row counts to sweep) or `sweep:` (another axis, with `rows:` fixed)", None);
                (Vec::new(), None)
            }
        };
    };
    let sp = root.key("sweep");
    if spec.sizes.is_some() {
        c.at_key(&root.key("sizes"), "give `sizes:` (a row sweep) or `sweep:` (another axis with `rows:` fixed), not both", None);
    }
    if spec.tables.as_ref().is_some_and(|t| t.len() > 1) && sw.set != AxisSet::Columns && sw.column.as_deref().is_some_and(|n| n.contains('.')) {
        c.at(&sp.key("column"), "name a column of the first table (the axis sets the first table's columns)", None);
    }
    let rows = match spec.rows {
        None => {
            c.at_key(&sp, "a `sweep:` needs `rows:` at the top level (the first table's rows at every point)", None);
            1
        }
        Some(r) if r.0 == 0 || r.0 > MAX_ROWS => {
            c.at(&root.key("rows"), format!("expected from 1 to 10^10 rows, found {}", r.0), None);
            1
        }
        Some(r) => r.0,
    };
    let name = sw.axis.clone().unwrap_or_else(|| sw.set.default_name().to_string());
    if name.trim().is_empty()
        || name.chars().count() > MAX_AXIS_NAME
        || !name.chars().all(|ch| ch.is_alphanumeric() || ch == ' ' || ch == '-' || ch == '_')
    {
        c.at(&sp.key("axis"), format!("expected a short name of letters, digits, spaces, `-` or `_` (at most {MAX_AXIS_NAME}), found `{name}`"), None);
    }
    if name.trim().eq_ignore_ascii_case("rows") {
        c.at(&sp.key("axis"), "`rows` is the axis of a `sizes:` sweep; name this one after what it sets (groups, keys, columns…)", None);
    }

    // The column and whether the parameter applies to it.
    let mut column: Option<&ColumnPlan> = None;
    match (sw.set, &sw.column) {
        (AxisSet::Columns, Some(_)) => {
            c.at_key(&sp.key("column"), "`set: columns` sets the number of columns of the first table; it takes no `column:`", None);
        }
        (AxisSet::Columns, None) => {}
        (set, None) => {
            c.at_key(&sp.key("set"), format!("`set: {}` needs `column:` (the first table's column it sets)", set.label()), None);
        }
        (set, Some(name)) => match columns.iter().find(|k| &k.name == name) {
            None => {
                let hint = closest(name, columns.iter().map(|k| k.name.as_str())).map(|s| format!("did you mean `{s}`?"));
                c.at(&sp.key("column"), format!("no column `{name}` in the first table"), hint);
            }
            Some(k) if !applies_to(set).contains(&k.kind) => {
                let ok: Vec<&str> = applies_to(set).iter().map(|k| k.label()).collect();
                c.at(
                    &sp.key("set"),
                    format!("`{}` does not apply to column `{name}`, which is {} (it applies to {})", set.label(), k.kind.label(), ok.join(", ")),
                    None,
                );
            }
            Some(k) if set == AxisSet::Skew && k.distinct.is_none() && k.references.is_none() => {
                c.at(&sp.key("set"), format!("`skew` needs column `{name}` to have `distinct` (the number of values the skew is spread over)"), None);
            }
            Some(k) => column = Some(k),
        },
    }

    // The values.
    let vp = sp.key("values");
    if sw.values.is_empty() {
        c.at(&vp, "expected at least one value", None);
    }
    if sw.values.len() > MAX_SIZES {
        c.at(&vp, format!("expected at most {MAX_SIZES} values, found {}", sw.values.len()), None);
    }
    let mut out: Vec<u64> = Vec::new();
    for (i, raw) in sw.values.iter().enumerate() {
        let p = vp.index(i);
        match value(sw.set, raw, rows, column) {
            Ok(x) if out.contains(&x) => c.at(&p, "this value is listed twice", None),
            Ok(x) => out.push(x),
            Err(m) => c.at(&p, m, None),
        }
    }
    out.sort_unstable();
    if let Some(t) = spec.target {
        if sw.set.scale() != 1 {
            c.at(&root.key("target"), format!("a `target:` is a count of {name}; a sweep of `{}` has no target", sw.set.label()), None);
        } else if sw.set == AxisSet::Distinct && t.0 > rows {
            c.at(&root.key("target"), format!("expected a target of at most the table's {rows} rows (more {name} than rows cannot appear), found {}", t.0), None);
        }
    }
    (out, Some(AxisPlan { name, set: sw.set, column: sw.column.clone(), rows }))
}

/// A swept value written on the command line (`framecost table --at`), checked as lint
/// checks an entry of `values:` — against `rows`, the first table's rows it will be written
/// at — and returned as the whole number the plan stores (shares and exponents in
/// millionths). `columns` are the first table's.
pub fn value_at(axis: &AxisPlan, columns: &[ColumnPlan], text: &str, rows: u64) -> Result<u64, String> {
    let column = axis.column.as_deref().and_then(|name| columns.iter().find(|c| c.name == name));
    let Some(v) = number(&Y::String(text.to_string())) else {
        return Err(format!("expected {}, found `{text}`", expected(axis.set)));
    };
    checked(axis.set, v, rows, column)
}

/// The number a swept value stands for (`10k`, `12.5%`, `0.5`), if it is one.
fn number(raw: &Y) -> Option<f64> {
    let number = match raw {
        Y::Number(n) => n.as_f64(),
        Y::String(t) if t.trim_end().ends_with('%') => super::units::parse_share(t).ok(),
        Y::String(t) => super::units::parse_rows(t).ok().map(|v| v as f64).or_else(|| t.trim().parse::<f64>().ok()),
        _ => None,
    };
    number.filter(|v| v.is_finite())
}

/// One swept value as written, checked and stored as a whole number.
fn value(set: AxisSet, raw: &Y, rows: u64, column: Option<&ColumnPlan>) -> Result<u64, String> {
    let Some(v) = number(raw) else {
        return Err(format!("expected {}, found {}", expected(set), super::validate::yaml_kind_of(raw)));
    };
    checked(set, v, rows, column)
}

/// A swept value's number checked for its axis, as the whole number the plan stores.
fn checked(set: AxisSet, v: f64, rows: u64, column: Option<&ColumnPlan>) -> Result<u64, String> {
    match set {
        AxisSet::Distinct => {
            let hi = rows.min(1_000_000_000);
            if v.fract() != 0.0 || v < 1.0 || v > hi as f64 {
                return Err(format!("expected a whole number of distinct values from 1 to the table's {hi} rows, found {v}"));
            }
            let d = v as u64;
            if let Some(k) = column {
                if k.skew > 0.0 && d > super::limits::MAX_SKEWED_DISTINCT {
                    return Err(format!("expected at most 10^8 distinct values under `skew`, found {d}"));
                }
                if matches!(k.kind, ColumnKind::Text | ColumnKind::Category) && d as f64 > 26f64.powi(k.length.1 as i32) {
                    return Err(format!("{d} distinct words do not fit in words of at most {} characters", k.length.1));
                }
            }
            Ok(d)
        }
        AxisSet::Columns => {
            let hi = super::limits::MAX_COLUMNS as f64;
            if v.fract() != 0.0 || v < 1.0 || v > hi {
                return Err(format!("expected a whole number of columns from 1 to {hi}, found {v}"));
            }
            Ok(v as u64)
        }
        AxisSet::Nulls => {
            if !(v > 0.0 && v <= 1.0) {
                return Err(format!("expected a null share above 0 and at most 100% (growth is fitted on a log scale: start at a small share such as 1%), found {v}"));
            }
            Ok((v * 1e6).round().max(1.0) as u64)
        }
        AxisSet::Skew => {
            if !(v > 0.0 && v <= 10.0) {
                return Err(format!("expected a Zipf exponent above 0 and at most 10 (growth is fitted on a log scale: start at a small one such as 0.25), found {v}"));
            }
            Ok((v * 1e6).round().max(1.0) as u64)
        }
    }
}

fn expected(set: AxisSet) -> &'static str {
    match set {
        AxisSet::Distinct => "a count of distinct values such as 100 or 10k",
        AxisSet::Columns => "a count of columns such as 16",
        AxisSet::Nulls => "a null share such as 10% or 0.1",
        AxisSet::Skew => "a Zipf exponent such as 0.5",
    }
}
