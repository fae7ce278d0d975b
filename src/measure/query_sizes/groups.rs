//! The groups a GROUP BY or DISTINCT keeps (see the module above).

use super::joins::resolve;
use crate::plan::{ColumnPlan, TablePlan};
use crate::results::schema::RangePlan;
use crate::spec::model::ColumnKind;
use sqlparser::ast::{BinaryOperator, Expr, GroupByExpr, Query, Select, SelectItem, SetExpr, Value, Visitor};
use std::collections::HashMap;
use std::ops::ControlFlow;

/// The most groups any GROUP BY or DISTINCT of `query` keeps over `tables` (shaped for the
/// point) at `rows` rows of the swept size; None when the query does not hash its rows (or
/// does not parse: polars reports that).
pub fn groups_bound(query: &str, tables: &[TablePlan], rows: u64) -> Option<f64> {
    let ceiling = tables.iter().map(|t| t.rows.at(rows)).max().unwrap_or(rows).max(1) as f64;
    let mut v = Groups { tables, rows, ceiling, most: None };
    crate::spec::sql_rules::visit_statements(query, &mut v)?;
    v.most.map(|g| g.clamp(1.0, ceiling))
}

struct Groups<'a> {
    tables: &'a [TablePlan],
    rows: u64,
    ceiling: f64,
    most: Option<f64>,
}

impl Visitor for Groups<'_> {
    type Break = ();
    fn pre_visit_query(&mut self, q: &Query) -> ControlFlow<()> {
        if let Some(g) = self.in_set(&q.body) {
            self.most = Some(self.most.map_or(g, |m| m.max(g)));
        }
        ControlFlow::Continue(())
    }
}

impl Groups<'_> {
    /// Groups the set expression hashes itself (its subqueries are visited on their own).
    fn in_set(&self, s: &SetExpr) -> Option<f64> {
        match s {
            SetExpr::Select(sel) => self.in_select(sel),
            SetExpr::SetOperation { left, right, set_quantifier, .. } => {
                let own = (!matches!(set_quantifier, sqlparser::ast::SetQuantifier::All)).then_some(self.ceiling);
                [own, self.in_set(left), self.in_set(right)].into_iter().flatten().reduce(f64::max)
            }
            SetExpr::Query(q) => self.in_set(&q.body),
            _ => None,
        }
    }

    fn in_select(&self, sel: &Select) -> Option<f64> {
        let scope = Scope::of(sel, self.tables);
        let keys: Vec<&Expr> = match &sel.group_by {
            GroupByExpr::Expressions(v, _) if !v.is_empty() => v.iter().collect(),
            // GROUP BY ALL: the projection's expressions that are not aggregates; all of them
            // is an upper bound.
            GroupByExpr::All(_) => match projected(sel) {
                Some(v) => v,
                None => return Some(self.ceiling),
            },
            _ if sel.distinct.is_some() => match projected(sel) {
                Some(v) => v,
                None => return Some(self.ceiling),
            },
            _ => return None,
        };
        let groups = |e: &Expr| match number(e) {
            // GROUP BY 2: the projection's second expression.
            Some(k) if k >= 1.0 && k.fract() == 0.0 => match sel.projection.get(k as usize - 1) {
                Some(SelectItem::UnnamedExpr(x) | SelectItem::ExprWithAlias { expr: x, .. }) => self.expr_groups(x, &scope, sel, 0),
                _ => self.ceiling,
            },
            _ => self.expr_groups(e, &scope, sel, 0),
        };
        Some(keys.iter().map(|e| groups(e)).product::<f64>().min(self.ceiling))
    }

    /// Distinct values `e` can take in the select's scope (at most the ceiling).
    fn expr_groups(&self, e: &Expr, scope: &Scope, sel: &Select, depth: usize) -> f64 {
        let column = |table: Option<&str>, name: &str| -> Option<f64> {
            let found = scope.column(table, name)?;
            Some(distinct_values(found.1, found.0, self.tables, self.rows))
        };
        let groups = match e {
            Expr::Value(_) => 1.0,
            Expr::Nested(inner) => self.expr_groups(inner, scope, sel, depth),
            Expr::BinaryOp { left, op: BinaryOperator::Modulo, right } => match number(right) {
                Some(k) if k >= 1.0 => k.min(self.expr_groups(left, scope, sel, depth)),
                _ => self.named_columns(e, scope, sel, depth),
            },
            Expr::Identifier(i) => column(None, &i.value)
                // GROUP BY an output name (polars allows it): that output's expression.
                .or_else(|| (depth < 4).then(|| alias_expr(sel, &i.value)).flatten().map(|x| self.expr_groups(x, scope, sel, depth + 1)))
                .unwrap_or(self.ceiling),
            Expr::CompoundIdentifier(parts) if parts.len() >= 2 => {
                let (q, c) = (&parts[parts.len() - 2].value, &parts[parts.len() - 1].value);
                column(Some(q), c).unwrap_or(self.ceiling)
            }
            _ => self.named_columns(e, scope, sel, depth),
        };
        groups.clamp(1.0, self.ceiling)
    }

    /// The product of the distinct values of every column named inside `e` (a function of
    /// them takes no more values than their combinations).
    fn named_columns(&self, e: &Expr, scope: &Scope, sel: &Select, depth: usize) -> f64 {
        let mut product = 1.0_f64;
        let _ = sqlparser::ast::visit_expressions(e, |x| {
            if matches!(x, Expr::Identifier(_) | Expr::CompoundIdentifier(_)) && !std::ptr::eq(x, e) {
                product = (product * self.expr_groups(x, scope, sel, depth)).min(self.ceiling);
            }
            ControlFlow::<()>::Continue(())
        });
        product
    }
}

/// The projection's expressions (None when it has a wildcard: unknown columns).
fn projected(sel: &Select) -> Option<Vec<&Expr>> {
    sel.projection
        .iter()
        .map(|item| match item {
            SelectItem::UnnamedExpr(e) | SelectItem::ExprWithAlias { expr: e, .. } => Some(e),
            _ => None,
        })
        .collect()
}

/// The expression a projection names `alias`.
fn alias_expr<'s>(sel: &'s Select, alias: &str) -> Option<&'s Expr> {
    sel.projection.iter().find_map(|item| match item {
        SelectItem::ExprWithAlias { expr, alias: a } if a.value.eq_ignore_ascii_case(alias) => Some(expr),
        _ => None,
    })
}

/// A whole-number literal's value.
fn number(e: &Expr) -> Option<f64> {
    match e {
        Expr::Value(v) => match &v.value {
            Value::Number(n, _) => n.parse::<f64>().ok().map(f64::abs),
            _ => None,
        },
        Expr::Nested(inner) => number(inner),
        _ => None,
    }
}

/// The workload tables a select reads, by the name or alias it gives them.
struct Scope<'a> {
    named: HashMap<String, &'a TablePlan>,
    read: Vec<&'a TablePlan>,
}

impl<'a> Scope<'a> {
    fn of(sel: &Select, tables: &'a [TablePlan]) -> Self {
        let mut named = HashMap::new();
        let mut read = Vec::new();
        let factors = sel.from.iter().flat_map(|f| std::iter::once(&f.relation).chain(f.joins.iter().map(|j| &j.relation)));
        for j in factors.filter_map(|f| resolve(f, tables)) {
            for n in j.names {
                named.insert(n, j.table);
            }
            read.push(j.table);
        }
        Scope { named, read }
    }

    /// The table and plan of column `name`: of table or alias `table` when qualified, else of
    /// the first table read that has it (SQL refuses a name two tables share).
    fn column(&self, table: Option<&str>, name: &str) -> Option<(&'a TablePlan, &'a ColumnPlan)> {
        let find = |t: &'a TablePlan| t.columns.iter().find(|c| c.name.eq_ignore_ascii_case(name)).map(|c| (t, c));
        match table {
            Some(q) => self.named.get(&q.to_lowercase()).and_then(|t| find(t)),
            None => self.read.iter().find_map(|t| find(t)),
        }
    }
}

/// Distinct values column `c` of table `t` takes at `rows` rows of the swept size: its
/// `distinct` count, its value range or the keys it references, at most the table's rows;
/// plus one for nulls.
pub fn distinct_values(c: &ColumnPlan, t: &TablePlan, tables: &[TablePlan], rows: u64) -> f64 {
    let own = t.rows.at(rows).max(1) as f64;
    let referenced = c.references.as_deref().and_then(|r| {
        let (table, _) = r.split_once('.')?;
        let keys = tables.iter().find(|x| x.name == table)?.rows.at(rows).max(1) as f64;
        let drawn = (c.coverage * keys).ceil().clamp(1.0, keys);
        Some(drawn + if c.unmatched > 0.0 { (c.unmatched * own).ceil().min(keys) } else { 0.0 })
    });
    let span = |a: f64, b: f64| (b - a).abs() + 1.0;
    let values = match (referenced, c.distinct, c.kind, c.range) {
        (Some(k), _, _, _) => k,
        (None, Some(d), _, _) => d as f64,
        (None, None, ColumnKind::Bool, _) => 2.0,
        (None, None, ColumnKind::Int, RangePlan::Int(a, b)) => span(a as f64, b as f64),
        (None, None, ColumnKind::Date, RangePlan::Date(a, b)) => span(a as f64, b as f64),
        _ => own,
    };
    values.min(own) + if c.nulls > 0.0 { 1.0 } else { 0.0 }
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::shed;
    use super::*;

    fn bound(q: &str, rows: u64) -> Option<f64> {
        groups_bound(q, &shed(), rows)
    }

    #[test]
    fn groups_follow_the_columns_plans() {
        let n = 2_000_000;
        // A referencing column: the referenced table's keys.
        let statement = "SELECT d.variety_id, SUM(d.grams * p.cents_per_kg) FROM deliveries AS d \
                         JOIN prices AS p ON d.variety_id = p.variety_id GROUP BY d.variety_id";
        assert_eq!(bound(statement, n), Some(14.0));
        // A unique key: every row.
        assert_eq!(bound("SELECT delivery_id, SUM(grams) FROM deliveries GROUP BY delivery_id", n), Some(n as f64));
        // A declared distinct count, plus one for nulls; a flag; their combinations.
        assert_eq!(bound("SELECT crew, COUNT(*) FROM deliveries GROUP BY crew", n), Some(7.0));
        assert_eq!(bound("SELECT crew, ripe, COUNT(*) FROM deliveries GROUP BY crew, ripe", n), Some(14.0));
        // A value range, at most the rows; a remainder by a constant.
        assert_eq!(bound("SELECT grams, COUNT(*) FROM deliveries GROUP BY grams", 1000), Some(1000.0));
        assert_eq!(bound("SELECT grams, COUNT(*) FROM deliveries GROUP BY grams", n), Some(949_501.0));
        assert_eq!(bound("SELECT grams % 7 AS g, SUM(grams) FROM deliveries GROUP BY grams % 7", n), Some(7.0));
        // An output name (polars allows it), and DISTINCT over the projection.
        assert_eq!(bound("SELECT grams % 7 AS g, SUM(grams) FROM deliveries GROUP BY g", n), Some(7.0));
        assert_eq!(bound("SELECT DISTINCT crew, ripe FROM deliveries", n), Some(14.0));
        // By position: the projection's expressions, not the constants 1 and 2.
        assert_eq!(bound("SELECT delivery_id, crew, COUNT(*) FROM deliveries GROUP BY 1, 2", n), Some(n as f64));
        assert_eq!(bound("SELECT crew, ripe, COUNT(*) FROM deliveries GROUP BY 2", n), Some(2.0));
        // The largest over subqueries.
        let nested = "SELECT crew, MAX(total) FROM (SELECT crew, delivery_id, SUM(grams) AS total FROM deliveries \
                      GROUP BY crew, delivery_id) AS t GROUP BY crew";
        assert_eq!(bound(nested, n), Some(n as f64));
    }

    #[test]
    fn what_cannot_be_resolved_counts_every_row() {
        let n = 500_000;
        assert_eq!(bound("SELECT DISTINCT * FROM deliveries", n), Some(n as f64));
        assert_eq!(bound("SELECT crew FROM deliveries UNION SELECT crew FROM deliveries", n), Some(n as f64));
        assert_eq!(bound("SELECT mystery, COUNT(*) FROM deliveries GROUP BY mystery", n), Some(n as f64));
        // No hashing at all.
        assert_eq!(bound("SELECT * FROM deliveries ORDER BY grams", n), None);
        assert_eq!(bound("SELECT crew FROM deliveries UNION ALL SELECT crew FROM deliveries", n), None);
    }

    #[test]
    fn references_count_their_coverage_and_unmatched_keys() {
        let mut tables = shed();
        let c = &mut tables[1].columns[1];
        c.coverage = 0.5;
        c.unmatched = 0.1;
        let (t, c) = (&tables[1], &tables[1].columns[1]);
        // 7 covered keys plus unmatched values above the keys (at most as many as the keys).
        assert_eq!(distinct_values(c, t, &tables, 1_000_000), 21.0);
    }
}
