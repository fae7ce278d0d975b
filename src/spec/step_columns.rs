//! A step's column parameters resolved against the table the step receives, as a query
//! engine compiles names against a schema: a name that is not there (with the nearest one),
//! a position past the table, a column of the wrong kind, a run of columns that goes past
//! the table's end — each reported at the parameter's line and column.
//!
//! A newcomer must know: the check runs only where the table a step sees is known — the
//! workload's first table, for the first step of a design and for the steps after steps
//! that keep the table's columns (`StepDef::keeps_columns`); after any other step nothing
//! is said (no false errors), and the run-time lookup (`patterns::columns`) is the guard.

use super::locate::YamlPath;
use super::suggest::closest;
use super::validate::Checker;
use crate::patterns::{ColumnRef, ParamKind, ParamValue, Params, StepDef};
use crate::plan::ColumnPlan;
use crate::spec::model::ColumnKind;

/// The table a step receives, as far as the checker can know it.
#[derive(Debug, Clone)]
pub(super) struct SeenTable {
    /// The table's name in the workload (`data` for a lone `table:`).
    pub name: String,
    pub columns: Vec<(String, ColumnKind)>,
    /// The workload's other tables and their column names (built-in steps never see them;
    /// a name found there gets a hint).
    pub others: Vec<(String, Vec<String>)>,
}

impl SeenTable {
    /// The first table, `name` with `columns`, beside the workload's `others`.
    pub fn of(name: &str, columns: &[ColumnPlan], others: &[crate::plan::TablePlan]) -> SeenTable {
        SeenTable {
            name: name.to_string(),
            columns: columns.iter().map(|c| (c.name.clone(), c.kind)).collect(),
            others: others.iter().map(|t| (t.name.clone(), t.columns.iter().map(|c| c.name.clone()).collect())).collect(),
        }
    }

    /// The same table as a design's feed gives it: as records, categories become text.
    pub fn fed(&self, records: bool) -> SeenTable {
        let mut t = self.clone();
        if records {
            for (_, k) in &mut t.columns {
                if *k == ColumnKind::Category {
                    *k = ColumnKind::Text;
                }
            }
        }
        t
    }

    /// The position of `c`, or why it is not there.
    fn position(&self, c: &ColumnRef) -> Result<usize, (String, Option<String>)> {
        let width = self.columns.len();
        match c {
            ColumnRef::At(p) if *p < width => Ok(*p),
            ColumnRef::At(p) => {
                Err((format!("no column at position {p}: table `{}` has {width} columns (positions 0 to {})", self.name, width.saturating_sub(1)), None))
            }
            ColumnRef::Named(n) => match self.columns.iter().position(|(name, _)| name == n) {
                Some(p) => Ok(p),
                None => {
                    let elsewhere = self.others.iter().find(|(_, cols)| cols.contains(n)).map(|(t, _)| {
                        format!("`{n}` is in table `{t}`; built-in steps receive the first table, `{}` — an `sql` step can join it in", self.name)
                    });
                    let near = || closest(n, self.columns.iter().map(|(name, _)| name.as_str())).map(|s| format!("did you mean `{s}`?"));
                    let hint = elsewhere.or_else(near);
                    Err((format!("no column `{n}` in table `{}` (its columns: {})", self.name, self.listed()), hint))
                }
            },
        }
    }

    /// The column names, the first dozen of them on a wide table.
    fn listed(&self) -> String {
        const SHOWN: usize = 12;
        let names: Vec<String> = self.columns.iter().take(SHOWN).map(|(n, _)| n.clone()).collect();
        match self.columns.len().checked_sub(SHOWN) {
            Some(more) if more > 0 => format!("{} and {more} more", names.join(", ")),
            _ => names.join(", "),
        }
    }
}

/// Check every column parameter of one step against the table it receives.
pub(super) fn check_columns(c: &mut Checker, def: &StepDef, params: &Params, given: &dyn Fn(&str) -> bool, step: &YamlPath, seen: &SeenTable) {
    for pd in def.params {
        let ParamKind::Column { need, span } = pd.kind else { continue };
        let Some(ParamValue::Column(col)) = params.0.get(pd.name) else { continue };
        let at = step.key(pd.name);
        let what = if given(pd.name) { format!("`{}`", pd.name) } else { format!("`{}` (by default {col})", pd.name) };
        let first = match seen.position(col) {
            Ok(p) => p,
            Err((message, hint)) => {
                c.at(&at, format!("{what}: {message}"), hint);
                continue;
            }
        };
        let count = match span.map(|s| (s, params.count(s) as usize)) {
            Some((s, n)) if first.saturating_add(n) > seen.columns.len() => {
                let message = format!(
                    "{n} columns from `{}` (position {first}) run past the end of table `{}`, which has {} columns",
                    seen.columns[first].0,
                    seen.name,
                    seen.columns.len()
                );
                let place = if given(s) { step.key(s) } else { at.clone() };
                c.at(&place, format!("`{s}`: {message}"), Some(format!("at most {} from there", seen.columns.len() - first)));
                continue;
            }
            Some((_, n)) => n.max(1),
            None => 1,
        };
        for (name, kind) in &seen.columns[first..first + count] {
            if !need.accepts(*kind) {
                let whose = if count > 1 { format!("one of the {count} columns from {col}, ") } else { String::new() };
                c.at(&at, format!("{what}: {whose}column `{name}` holds {} (kind `{}`), but step `{}` needs {}", kind_words(*kind), kind.label(), def.name, need.label()), None);
                break;
            }
        }
    }
}

/// A column kind in words, for messages.
fn kind_words(k: ColumnKind) -> &'static str {
    match k {
        ColumnKind::Int => "whole numbers",
        ColumnKind::Float => "decimal numbers",
        ColumnKind::Bool => "true/false",
        ColumnKind::Text => "text",
        ColumnKind::Category => "categories",
        ColumnKind::Date => "dates",
        ColumnKind::Key => "row keys",
    }
}
