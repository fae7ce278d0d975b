//! The columns of a table checked and resolved into [`ColumnPlan`]s: names, which keys
//! apply to which kind of column, shares, skew, distinct counts, word lengths, and ranges
//! (numbers or dates). Called for each table by `tables.rs`.

use super::locate::YamlPath;
use super::model::*;
use super::limits::{MAX_COLUMNS, MAX_SKEWED_DISTINCT};
use super::validate::Checker;
use crate::plan::{ColumnPlan, RangePlan};
use std::collections::HashSet;

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
        c.name(&p.key("name"), &col.name, "column", &mut seen);
        let kind = col.kind;
        check_applies(c, col, &p);
        use ColumnKind::*;
        let unmatched = col.unmatched.map(|s| c.share(&p.key("unmatched"), s.0, "a share of unmatched values")).unwrap_or(0.0);
        if col.coverage.is_some() && col.references.is_none() {
            c.at_key(&p.key("coverage"), "`coverage` applies only with `references` (the share of the referenced keys that rows draw from)", None);
        }
        let coverage = match col.coverage {
            Some(s) if s.0 <= 0.0 && s.0.is_finite() => {
                c.at(&p.key("coverage"), format!("expected a share of the referenced keys above 0 and up to 1 (or 100%), found {}", s.0), None);
                1.0
            }
            Some(s) => c.share(&p.key("coverage"), s.0, "a share of the referenced keys"),
            None => 1.0,
        };
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
            coverage,
        });
    }
    out
}

/// Keys that apply to some kinds of column only, and keys that need another key.
fn check_applies(c: &mut Checker, col: &ColumnSpec, p: &YamlPath) {
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
