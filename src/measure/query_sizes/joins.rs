//! The rows an SQL join makes (see the module above).

use super::spread::{match_share, values};
use crate::plan::{ColumnPlan, TablePlan};
use sqlparser::ast::{BinaryOperator, Expr, JoinConstraint, JoinOperator, Select, TableFactor, Visitor};
use std::ops::ControlFlow;

/// The most bytes any join of `query` makes over `tables` at `rows` rows of the swept size:
/// its estimated rows times the joined tables' row bytes (all their columns: an upper bound,
/// as polars carries only those the query uses). With `ungrouped_only`, only joins whose
/// SELECT neither groups nor removes duplicates count (on the streaming engine the joined
/// rows of a grouping SELECT flow into its groups instead of being held). None when the
/// query joins no two workload tables.
pub fn joined_bytes(query: &str, tables: &[TablePlan], rows: u64, ungrouped_only: bool) -> Option<Joins> {
    let mut v = JoinVisit { tables, rows, ungrouped_only, most: None };
    crate::spec::sql_rules::visit_statements(query, &mut v)?;
    v.most
}

/// The largest join of a query: its rows and bytes, and what the streaming engine builds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Joins {
    /// Rows and bytes of the largest counted join (0 when only uncounted ones join).
    pub rows: f64,
    pub bytes: f64,
    /// The bytes of the smaller input of each join, summed over the SELECT's joins (the
    /// largest SELECT's; every SELECT counts, grouping or not): the side a hash join builds.
    pub build_bytes: f64,
}

struct JoinVisit<'a> {
    tables: &'a [TablePlan],
    rows: u64,
    ungrouped_only: bool,
    most: Option<Joins>,
}

impl Visitor for JoinVisit<'_> {
    type Break = ();
    fn pre_visit_select(&mut self, sel: &Select) -> ControlFlow<()> {
        let grouped = crate::spec::sql_rules::is_grouped(sel) || sel.distinct.is_some();
        if let Some(mut j) = select_joins(sel, self.tables, self.rows) {
            if self.ungrouped_only && grouped {
                (j.rows, j.bytes) = (0.0, 0.0);
            }
            let m = self.most.get_or_insert(Joins { rows: 0.0, bytes: 0.0, build_bytes: 0.0 });
            if j.bytes > m.bytes {
                (m.rows, m.bytes) = (j.rows, j.bytes);
            }
            m.build_bytes = m.build_bytes.max(j.build_bytes);
        }
        ControlFlow::Continue(())
    }
}

/// One joined input of a SELECT: the name it is known by and its table.
pub(super) struct Joined<'a> {
    pub(super) names: Vec<String>,
    pub(super) table: &'a TablePlan,
}

/// Rows times row bytes of the SELECT's joined inputs, when it joins at least two tables of
/// the workload (None otherwise, or when an input is not a workload table).
fn select_joins(sel: &Select, tables: &[TablePlan], rows: u64) -> Option<Joins> {
    let mut inputs: Vec<Joined> = Vec::new();
    let mut out_rows = 0.0_f64;
    let mut row_bytes = 0.0_f64;
    let (mut joins, mut left_bytes, mut build_bytes) = (0, 0.0_f64, 0.0_f64);
    let bytes_of = |t: &TablePlan| t.bytes(rows);
    let wheres = sel.selection.as_ref().map(conjuncts).unwrap_or_default();
    for (i, twj) in sel.from.iter().enumerate() {
        let first = resolve(&twj.relation, tables)?;
        let n = first.table.rows.at(rows).max(1) as f64;
        if i == 0 {
            out_rows = n;
        } else {
            // A comma: a cross product unless WHERE equates it with what came before.
            joins += 1;
            out_rows = joined_rows(out_rows, n, &wheres, &inputs, &first, tables, rows, true);
            build_bytes += left_bytes.min(bytes_of(first.table));
        }
        left_bytes += bytes_of(first.table);
        row_bytes += first.table.columns.iter().map(ColumnPlan::bytes_per_row).sum::<f64>();
        inputs.push(first);
        for j in &twj.joins {
            let next = resolve(&j.relation, tables)?;
            let n = next.table.rows.at(rows).max(1) as f64;
            joins += 1;
            out_rows = match &j.join_operator {
                JoinOperator::CrossJoin(JoinConstraint::None) => out_rows * n,
                JoinOperator::Semi(_) | JoinOperator::LeftSemi(_) | JoinOperator::Anti(_) | JoinOperator::LeftAnti(_) => out_rows,
                JoinOperator::RightSemi(_) | JoinOperator::RightAnti(_) => n,
                op => {
                    let inner = match constraint(op) {
                        Some(JoinConstraint::On(e)) => joined_rows(out_rows, n, &conjuncts(e), &inputs, &next, tables, rows, false),
                        Some(JoinConstraint::Using(cols)) => {
                            let names: Vec<String> = cols.iter().filter_map(|c| c.0.last().map(|p| p.to_string())).collect();
                            using_rows(out_rows, n, &names, &inputs, &next, tables, rows)
                        }
                        Some(JoinConstraint::None) => out_rows * n,
                        _ => out_rows.max(n),
                    };
                    // Outer joins keep their unmatched rows besides.
                    match op {
                        JoinOperator::Left(_) | JoinOperator::LeftOuter(_) => inner + out_rows,
                        JoinOperator::Right(_) | JoinOperator::RightOuter(_) => inner + n,
                        JoinOperator::FullOuter(_) => inner + out_rows + n,
                        _ => inner,
                    }
                }
            };
            row_bytes += next.table.columns.iter().map(ColumnPlan::bytes_per_row).sum::<f64>();
            build_bytes += left_bytes.min(bytes_of(next.table));
            left_bytes += bytes_of(next.table);
            inputs.push(next);
        }
    }
    // (A cross join of many tables passes any float; nothing holds 1e300 rows either.)
    let out_rows = out_rows.min(1e300);
    (joins > 0).then_some(Joins { rows: out_rows, bytes: out_rows * row_bytes, build_bytes })
}

/// The join's constraint, for the operators that have one.
fn constraint(op: &JoinOperator) -> Option<&JoinConstraint> {
    match op {
        JoinOperator::Join(c)
        | JoinOperator::Inner(c)
        | JoinOperator::Left(c)
        | JoinOperator::LeftOuter(c)
        | JoinOperator::Right(c)
        | JoinOperator::RightOuter(c)
        | JoinOperator::FullOuter(c)
        | JoinOperator::StraightJoin(c) => Some(c),
        _ => None,
    }
}

/// A FROM item that is a workload table, with the name it can be referred to by (its alias
/// when it has one, as SQL wants).
pub(super) fn resolve<'a>(factor: &TableFactor, tables: &'a [TablePlan]) -> Option<Joined<'a>> {
    let TableFactor::Table { name, alias, .. } = factor else { return None };
    let written = name.0.last().map(|p| p.to_string()).unwrap_or_default();
    let written = written.trim_matches('"').to_string();
    let table = tables
        .iter()
        .find(|t| t.name.eq_ignore_ascii_case(&written))
        .or_else(|| written.eq_ignore_ascii_case(crate::spec::tables::DEFAULT_TABLE).then(|| tables.first()).flatten())?;
    let names = vec![alias.as_ref().map_or(written.to_lowercase(), |a| a.name.value.to_lowercase())];
    Some(Joined { names, table })
}

/// The parts of an AND chain.
fn conjuncts(e: &Expr) -> Vec<&Expr> {
    match e {
        Expr::BinaryOp { left, op: BinaryOperator::And, right } => {
            let mut v = conjuncts(left);
            v.extend(conjuncts(right));
            v
        }
        Expr::Nested(inner) => conjuncts(inner),
        _ => vec![e],
    }
}

/// A column reference `q.c` or `c`: (qualifier, name).
fn column_ref(e: &Expr) -> Option<(Option<String>, String)> {
    match e {
        Expr::Identifier(i) => Some((None, i.value.clone())),
        Expr::CompoundIdentifier(parts) if parts.len() >= 2 => {
            Some((Some(parts[parts.len() - 2].value.to_lowercase()), parts[parts.len() - 1].value.clone()))
        }
        Expr::Nested(inner) => column_ref(inner),
        _ => None,
    }
}

/// Find column `(qualifier, name)` among `inputs`.
fn find_in<'a>(r: &(Option<String>, String), inputs: &[&Joined<'a>]) -> Option<(&'a TablePlan, &'a ColumnPlan)> {
    inputs.iter().find_map(|j| {
        if r.0.as_ref().is_some_and(|q| !j.names.contains(q)) {
            return None;
        }
        j.table.columns.iter().find(|c| c.name.eq_ignore_ascii_case(&r.1)).map(|c| (j.table, c))
    })
}

/// Rows of `left` rows (made of `inputs`) joined with `n` rows of `next` on the equalities
/// among `parts`; with equalities it cannot resolve, the larger input; with none at all, or
/// for a comma without one in WHERE (`cross`), their product.
#[allow(clippy::too_many_arguments)]
fn joined_rows(left: f64, n: f64, parts: &[&Expr], inputs: &[Joined], next: &Joined, tables: &[TablePlan], rows: u64, cross: bool) -> f64 {
    let earlier: Vec<&Joined> = inputs.iter().collect();
    let mut share: Option<f64> = None;
    let mut equalities = 0;
    for e in parts {
        let Expr::BinaryOp { left: l, op: BinaryOperator::Eq, right: r } = e else { continue };
        equalities += 1;
        let (Some(l), Some(r)) = (column_ref(l), column_ref(r)) else { continue };
        let pair = match (find_in(&l, &[next]), find_in(&r, &earlier)) {
            (Some(a), Some(b)) => Some((a, b)),
            _ => match (find_in(&r, &[next]), find_in(&l, &earlier)) {
                (Some(a), Some(b)) => Some((a, b)),
                _ => None,
            },
        };
        if let Some(((ta, ca), (tb, cb))) = pair {
            let s = match_share(&values(ca, ta, tables, rows), &values(cb, tb, tables, rows));
            share = Some(share.map_or(s, |x: f64| x.min(s)));
        }
    }
    match share {
        Some(s) => left * n * s,
        // No equality at all: polars pairs every row with every row and filters the pairs
        // (`ON a.grams < b.grams` on 8k rows peaked at 976 MiB, 16 bytes a pair).
        None if cross || equalities == 0 => left * n,
        // An equality of expressions it cannot read: counted as a key join.
        None => left.max(n),
    }
}

/// Rows of a `USING (cols)` join: equalities on the same names.
fn using_rows(left: f64, n: f64, names: &[String], inputs: &[Joined], next: &Joined, tables: &[TablePlan], rows: u64) -> f64 {
    let earlier: Vec<&Joined> = inputs.iter().collect();
    let share = names
        .iter()
        .filter_map(|c| {
            let r = (None, c.trim_matches('"').to_string());
            let ((ta, ca), (tb, cb)) = (find_in(&r, &[next])?, find_in(&r, &earlier)?);
            Some(match_share(&values(ca, ta, tables, rows), &values(cb, tb, tables, rows)))
        })
        .reduce(f64::min);
    share.map_or(left.max(n), |s| left * n * s)
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::shed;
    use super::*;

    /// Joined rows: the bytes over the joined tables' row bytes (prices with deliveries, or
    /// deliveries twice for a self-join).
    fn joined(q: &str, rows: u64) -> Option<f64> {
        let tables = shed();
        let row_bytes = |t: &TablePlan| t.columns.iter().map(ColumnPlan::bytes_per_row).sum::<f64>();
        let per_row = if q.contains("prices") { row_bytes(&tables[0]) + row_bytes(&tables[1]) } else { 2.0 * row_bytes(&tables[1]) };
        joined_bytes(q, &tables, rows, false).map(|j| j.bytes / per_row)
    }

    #[test]
    fn joins_make_the_rows_their_keys_allow() {
        let n = 1_000_000;
        // Deliveries to the 14 priced varieties: one price per delivery.
        let priced = "SELECT * FROM deliveries AS d JOIN prices AS p ON d.variety_id = p.variety_id";
        assert_eq!(joined(priced, n), Some(n as f64));
        assert_eq!(joined("SELECT * FROM deliveries JOIN prices USING (variety_id)", n), Some(n as f64));
        // The other way round, and with a comma and WHERE.
        assert_eq!(joined("SELECT * FROM prices AS p JOIN deliveries AS d ON p.variety_id = d.variety_id", n), Some(n as f64));
        assert_eq!(joined("SELECT * FROM prices AS p, deliveries AS d WHERE d.variety_id = p.variety_id AND d.grams > 9", n), Some(n as f64));
        // Left outer: the unmatched rows besides; cross: the product.
        assert_eq!(joined("SELECT * FROM deliveries AS d LEFT JOIN prices AS p ON d.variety_id = p.variety_id", n), Some(2.0 * n as f64));
        assert_eq!(joined("SELECT * FROM deliveries CROSS JOIN prices", n), Some(14.0 * n as f64));
        // A self-join on six crews (a tenth null, never matching): n²·0.9²/6 rows.
        let crews = joined("SELECT * FROM deliveries AS a JOIN deliveries AS b ON a.crew = b.crew", n).expect("a join");
        assert!((crews / (n as f64 * n as f64 * 0.81 / 6.0) - 1.0).abs() < 1e-9, "{crews}");
        // AND: the tightest equality; a unique key matches once.
        let both = joined("SELECT * FROM deliveries AS a JOIN deliveries AS b ON a.crew = b.crew AND a.delivery_id = b.delivery_id", n);
        assert_eq!(both, Some(n as f64));
        // No equality at all: every pair (polars filters a cross join); an equality of
        // expressions it cannot read: the larger input.
        assert_eq!(joined("SELECT * FROM deliveries AS a JOIN deliveries AS b ON a.grams < b.grams", n), Some(n as f64 * n as f64));
        assert_eq!(joined("SELECT * FROM deliveries AS a JOIN deliveries AS b ON a.grams + 1 = b.grams", n), Some(n as f64));
        // No join at all, or a join of something that is not a workload table.
        assert_eq!(joined("SELECT crew, COUNT(*) FROM deliveries GROUP BY crew", n), None);
        assert_eq!(joined("SELECT * FROM deliveries AS a JOIN (SELECT 1 AS crew) AS b ON a.crew = b.crew", n), None);
        // On the streaming engine a grouping SELECT's join feeds its groups.
        let grouped = "SELECT a.crew, COUNT(*) FROM deliveries AS a JOIN deliveries AS b ON a.crew = b.crew GROUP BY a.crew";
        assert!(joined_bytes(grouped, &shed(), n, false).is_some_and(|j| j.bytes > 0.0));
        let streaming = joined_bytes(grouped, &shed(), n, true).expect("a join");
        assert_eq!((streaming.rows, streaming.bytes), (0.0, 0.0));
        // What a hash join builds: the smaller input, whichever engine.
        let deliveries = shed()[1].bytes(n);
        assert_eq!(streaming.build_bytes, deliveries);
        let priced = joined_bytes("SELECT * FROM deliveries AS d JOIN prices AS p ON d.variety_id = p.variety_id", &shed(), n, true);
        assert_eq!(priced.map(|j| j.build_bytes), Some(shed()[0].bytes(n)));
    }
}
