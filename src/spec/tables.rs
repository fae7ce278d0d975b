//! The tables of a workload: one `table:` (named `data` in queries unless it has a `name:`)
//! or several related `tables:`, each sized from the swept size and with keys that may
//! reference another table's key.
//!
//! A newcomer must know: a referenced column must be a `key` column without duplicates
//! (its values are then exactly 0..rows), so a referencing value either matches one row or,
//! for the `unmatched` share, none; the checks here make that so before anything runs.

use super::locate::YamlPath;
use super::model::{ColumnKind, TableRows, TableSpec, WorkloadSpec};
use super::suggest::closest;
use super::columns::check_columns;
use super::validate::Checker;
use crate::plan::{RowsPlan, TablePlan};
use std::collections::HashSet;

/// The name a lone `table:` has in queries when it has no `name:`.
pub const DEFAULT_TABLE: &str = "data";

/// Check `table:` / `tables:` and resolve every table.
pub(super) fn check_tables(c: &mut Checker, spec: &WorkloadSpec) -> Vec<TablePlan> {
    let root = YamlPath::root();
    let list: Vec<(&TableSpec, YamlPath, bool)> = match (&spec.table, &spec.tables) {
        (Some(_), Some(_)) => {
            c.at_key(&root.key("tables"), "give either `table:` (one table) or `tables:` (several), not both", None);
            return Vec::new();
        }
        (None, None) => {
            c.at(&root, "expected `table:` (one synthetic table) or `tables:` (several related ones)", None);
            return Vec::new();
        }
        (Some(t), None) => vec![(t, root.key("table"), false)],
        (None, Some(ts)) => {
            if ts.is_empty() {
                c.at(&root.key("tables"), "expected at least one table", None);
            }
            ts.iter().enumerate().map(|(i, t)| (t, root.key("tables").index(i), true)).collect()
        }
    };
    let mut seen = HashSet::new();
    let mut out = Vec::new();
    for (t, p, named) in &list {
        let name = match &t.name {
            Some(n) => n.clone(),
            None if *named => {
                c.at(p, "expected a `name:` for every table under `tables:` (queries use it)", None);
                format!("table{}", out.len())
            }
            None => DEFAULT_TABLE.to_string(),
        };
        if t.name.is_some() && !is_identifier(&name) {
            c.at(&p.key("name"), format!("expected a table name of letters, digits and `_`, not starting with a digit, found `{name}`"), None);
        } else if !seen.insert(name.to_lowercase()) {
            c.at(&p.key("name"), format!("table `{name}` is defined twice"), None);
        }
        let rows = match &t.rows {
            None => RowsPlan::Swept,
            Some(r) => match parse_table_rows(r) {
                Ok(r) => r,
                Err(e) => {
                    c.at(&p.key("rows"), e, None);
                    RowsPlan::Swept
                }
            },
        };
        let columns = check_columns(c, t, &p.key("columns"));
        out.push(TablePlan { name, rows, columns });
    }
    check_references(c, &list.iter().map(|l| l.1.clone()).collect::<Vec<_>>(), &out);
    out
}

fn is_identifier(s: &str) -> bool {
    !s.is_empty()
        && s.len() <= 64
        && s.chars().all(|ch| ch.is_ascii_alphanumeric() || ch == '_')
        && !s.starts_with(|ch: char| ch.is_ascii_digit())
}

/// `1/20` (a share of the swept size), `365` or `2k` (a fixed count).
fn parse_table_rows(r: &TableRows) -> Result<RowsPlan, String> {
    let bad = |t: &str| format!("expected the swept size's share as `1/20` or a fixed row count like `365` or `2k`, found `{t}`");
    match r {
        TableRows::Count(0) => Err("expected at least 1 row, found 0".into()),
        TableRows::Count(n) if *n > super::validate::MAX_ROWS => Err(format!("expected at most 10^10 rows, found {n}")),
        TableRows::Count(n) => Ok(RowsPlan::Fixed(*n)),
        TableRows::Text(t) => {
            if let Some((a, b)) = t.split_once('/') {
                let (a, b) = (a.trim().parse::<u64>().map_err(|_| bad(t))?, b.trim().parse::<u64>().map_err(|_| bad(t))?);
                if a == 0 || b == 0 || a > 1000 || b > 1_000_000 {
                    return Err(format!("expected a share `a/b` with 1 ≤ a ≤ 1000 and 1 ≤ b ≤ 10^6, found `{t}`"));
                }
                Ok(RowsPlan::Share(a, b))
            } else {
                match super::units::parse_rows(t) {
                    Ok(0) => Err("expected at least 1 row, found 0".into()),
                    Ok(n) if n <= super::validate::MAX_ROWS => Ok(RowsPlan::Fixed(n)),
                    _ => Err(bad(t)),
                }
            }
        }
    }
}

/// Every `references: table.column` must name a key column without duplicates in a table
/// of this workload.
fn check_references(c: &mut Checker, paths: &[YamlPath], tables: &[TablePlan]) {
    for (ti, t) in tables.iter().enumerate() {
        for (ci, col) in t.columns.iter().enumerate() {
            let Some(r) = &col.references else { continue };
            let p = paths[ti].key("columns").index(ci).key("references");
            let Some((tn, cn)) = r.split_once('.') else {
                c.at(&p, format!("expected `table.column` of a key, found `{r}`"), None);
                continue;
            };
            let Some(target) = tables.iter().find(|x| x.name == tn) else {
                let hint = closest(tn, tables.iter().map(|x| x.name.as_str())).map(|s| format!("did you mean `{s}`?"));
                c.at(&p, format!("no table `{tn}` in this workload"), hint);
                continue;
            };
            let Some(kc) = target.columns.iter().find(|x| x.name == cn) else {
                let hint = closest(cn, target.columns.iter().map(|x| x.name.as_str())).map(|s| format!("did you mean `{s}`?"));
                c.at(&p, format!("table `{tn}` has no column `{cn}`"), hint);
                continue;
            };
            if kc.kind != ColumnKind::Key || kc.duplicates > 0.0 {
                c.at(&p, format!("`{tn}.{cn}` must be a `key` column without duplicates to be referenced"), None);
            }
        }
    }
}
