//! Sizes an SQL query reaches before it runs, bounded from the table plan: the groups its
//! GROUP BY and DISTINCT keep, and the rows its joins make.
//!
//! **Groups.** On the streaming engine a query reads its tables a chunk at a time, so its
//! memory is the state it keeps between chunks: for GROUP BY and DISTINCT, one entry per
//! group. That state is small when the groups are few (a monthly statement per variety) and
//! as large as the in-memory engine's when every row is its own group. A streaming GROUP BY
//! on a unique key of a two-column integer table peaked at 73, 147, 274 and 552 MiB at 1M,
//! 2M, 4M and 8M rows here (polars 0.55, 2 threads): about 69 bytes a group, 4.3× the
//! table's bytes. The bound: a grouping expression takes at most the product of the distinct
//! values of the columns it names (from each column's plan: its `distinct` count, its value
//! range, the keys it references, at most its table's rows; a null adds one), `x % k` at most
//! `k` values, a constant one; a GROUP BY at most the product over its expressions, and at
//! most the rows of the largest table. Anything it cannot resolve (a column of a subquery, a
//! `SELECT *` under DISTINCT, a UNION that removes duplicates) counts as every row being a
//! group.
//!
//! **Joins.** An equality join of `a.x = b.y` makes Σ over values v of count_a(v)·count_b(v)
//! rows; with the columns' value shares p and q that is n_a·n_b·Σ p_v·q_v, which is at most
//! n_a·n_b·√(Σp²·Σq²) (Cauchy–Schwarz: exact for a self-join on one column), at most
//! n_a·n_b·max q (each row of `a` meets at most the commonest value's rows of `b`; for a
//! unique key, one) and at most n_a·n_b·max p. The shares follow the generator: uniform over
//! a `distinct` count, a range, or the referenced keys, Zipf over them with `skew`, a flag
//! by its `true_share`; nulls never match. Textbook estimators assume uniform shares and
//! divide by the larger distinct count (the System R rule, Selinger et al., "Access Path
//! Selection in a Relational Database Management System", SIGMOD 1979); for uniform shares
//! the bound here is the same, and with skew it is larger, as the rows are. Several
//! equalities joined by AND make at most what the tightest makes; a join with no equality it
//! can resolve is counted as the larger of its inputs (a key join), and a cross join as their
//! product. Measured here on sql-self-join (14 varieties, Zipf 0.6): peak live bytes of 40–41
//! bytes per joined row from 500 to 8k rows, against the bound's rows times the two tables'
//! row bytes (64).

use crate::plan::{ColumnPlan, TablePlan};
use crate::spec::model::ColumnKind;
use crate::results::schema::RangePlan;
use sqlparser::ast::{BinaryOperator, Expr, GroupByExpr, JoinConstraint, JoinOperator, Query, Select, SelectItem, SetExpr, TableFactor, Value, Visit, Visitor};
use std::collections::HashMap;
use std::ops::ControlFlow;

/// The most groups any GROUP BY or DISTINCT of `query` keeps over `tables` (shaped for the
/// point) at `rows` rows of the swept size; None when the query does not hash its rows (or
/// does not parse: polars reports that).
pub fn groups_bound(query: &str, tables: &[TablePlan], rows: u64) -> Option<f64> {
    let statements = sqlparser::parser::Parser::parse_sql(&sqlparser::dialect::GenericDialect {}, query).ok()?;
    let ceiling = tables.iter().map(|t| t.rows.at(rows)).max().unwrap_or(rows).max(1) as f64;
    let mut v = Groups { tables, rows, ceiling, most: None };
    for s in &statements {
        let _ = s.visit(&mut v);
    }
    v.most.map(|g| g.clamp(1.0, ceiling))
}

/// The most bytes any join of `query` makes over `tables` at `rows` rows of the swept size:
/// its estimated rows times the joined tables' row bytes (all their columns: an upper bound,
/// as polars carries only those the query uses). With `ungrouped_only`, only joins whose
/// SELECT neither groups nor removes duplicates count (on the streaming engine the joined
/// rows of a grouping SELECT flow into its groups instead of being held). None when no join
/// is counted.
pub fn joined_bytes(query: &str, tables: &[TablePlan], rows: u64, ungrouped_only: bool) -> Option<Joins> {
    let statements = sqlparser::parser::Parser::parse_sql(&sqlparser::dialect::GenericDialect {}, query).ok()?;
    let mut v = JoinVisit { tables, rows, ungrouped_only, most: None };
    for s in &statements {
        let _ = s.visit(&mut v);
    }
    v.most
}

/// The largest join of a query: its rows and bytes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Joins {
    pub rows: f64,
    pub bytes: f64,
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
        if !(self.ungrouped_only && grouped) {
            if let Some(j) = select_joins(sel, self.tables, self.rows) {
                if self.most.is_none_or(|m| j.bytes > m.bytes) {
                    self.most = Some(j);
                }
            }
        }
        ControlFlow::Continue(())
    }
}

/// One joined input of a SELECT: the name it is known by, its table, its rows.
struct Joined<'a> {
    names: Vec<String>,
    table: &'a TablePlan,
}

/// Rows times row bytes of the SELECT's joined inputs, when it joins at least two tables of
/// the workload (None otherwise, or when an input is not a workload table).
fn select_joins(sel: &Select, tables: &[TablePlan], rows: u64) -> Option<Joins> {
    let mut inputs: Vec<Joined> = Vec::new();
    let mut out_rows = 0.0_f64;
    let mut row_bytes = 0.0_f64;
    let mut joins = 0;
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
        }
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
            inputs.push(next);
        }
    }
    (joins > 0).then_some(Joins { rows: out_rows, bytes: out_rows * row_bytes })
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

/// A FROM item that is a workload table, with the names it can be referred to by.
fn resolve<'a>(factor: &TableFactor, tables: &'a [TablePlan]) -> Option<Joined<'a>> {
    let TableFactor::Table { name, alias, .. } = factor else { return None };
    let written = name.0.last().map(|p| p.to_string()).unwrap_or_default();
    let written = written.trim_matches('"').to_string();
    let table = tables
        .iter()
        .find(|t| t.name.eq_ignore_ascii_case(&written))
        .or_else(|| written.eq_ignore_ascii_case(crate::spec::tables::DEFAULT_TABLE).then(|| tables.first()).flatten())?;
    let mut names = vec![written.to_lowercase()];
    if let Some(a) = alias {
        names = vec![a.name.value.to_lowercase()];
    }
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
/// among `parts`; without one, the larger input (`cross`: their product).
#[allow(clippy::too_many_arguments)]
fn joined_rows(left: f64, n: f64, parts: &[&Expr], inputs: &[Joined], next: &Joined, tables: &[TablePlan], rows: u64, cross: bool) -> f64 {
    let earlier: Vec<&Joined> = inputs.iter().collect();
    let mut share: Option<f64> = None;
    for e in parts {
        let Expr::BinaryOp { left: l, op: BinaryOperator::Eq, right: r } = e else { continue };
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
        None if cross => left * n,
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

/// How a column's values are spread: the sum of their squared shares, the largest share,
/// both counting only the rows that can match (not null).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Spread {
    pub sum_sq: f64,
    pub largest: f64,
}

/// The share of row pairs of two columns that are equal: at most √(Σp²·Σq²), max p, max q.
pub fn match_share(a: &Spread, b: &Spread) -> f64 {
    (a.sum_sq * b.sum_sq).sqrt().min(a.largest).min(b.largest).min(1.0)
}

/// [`Spread`] of column `c` of table `t` at `rows` rows of the swept size, as the generator
/// draws it.
pub fn values(c: &ColumnPlan, t: &TablePlan, tables: &[TablePlan], rows: u64) -> Spread {
    let own = t.rows.at(rows).max(1) as f64;
    let over = |d: f64, skew: f64| if skew > 0.0 { zipf_spread(d, skew) } else { Spread { sum_sq: 1.0 / d, largest: 1.0 / d } };
    let referenced = c.references.as_deref().and_then(|r| {
        let (table, _) = r.split_once('.')?;
        let keys = tables.iter().find(|x| x.name == table)?.rows.at(rows).max(1) as f64;
        let drawn = (c.coverage * keys).ceil().clamp(1.0, keys);
        let z = over(drawn, c.skew);
        // The unmatched share is spread over as many values above the keys.
        let u = c.unmatched.clamp(0.0, 1.0);
        Some(Spread { sum_sq: (1.0 - u).powi(2) * z.sum_sq + u * u / keys, largest: ((1.0 - u) * z.largest).max(u / keys) })
    });
    let span = |a: f64, b: f64| (b - a).abs() + 1.0;
    let spread = match (referenced, c.distinct, c.kind, c.range) {
        (Some(s), _, _, _) => s,
        (None, Some(d), _, _) => over(d.max(1) as f64, c.skew),
        (None, None, ColumnKind::Bool, _) => {
            let t = c.true_share.clamp(0.0, 1.0);
            Spread { sum_sq: t * t + (1.0 - t) * (1.0 - t), largest: t.max(1.0 - t) }
        }
        (None, None, ColumnKind::Int, RangePlan::Int(a, b)) => over(span(a as f64, b as f64), 0.0),
        (None, None, ColumnKind::Date, RangePlan::Date(a, b)) => over(span(a as f64, b as f64), 0.0),
        // A key repeats earlier keys in its `duplicates` share: fewer values, counts unknown.
        (None, None, ColumnKind::Key, _) if c.duplicates > 0.0 => Spread { sum_sq: 1.0 / (own * (1.0 - c.duplicates).max(1e-9)), largest: 1.0 },
        _ => over(own, 0.0),
    };
    let live = (1.0 - c.nulls).clamp(0.0, 1.0);
    Spread { sum_sq: spread.sum_sq * live * live, largest: spread.largest * live }
}

/// Σp² and max p of Zipf(`s`) over `d` values (p_k ∝ k^-s, the generator's alias table): the
/// first 100 000 terms summed, the rest by the integral of x^-s.
fn zipf_spread(d: f64, s: f64) -> Spread {
    let head = d.min(100_000.0) as u64;
    let (mut h1, mut h2) = (0.0_f64, 0.0_f64);
    for k in 1..=head {
        let w = (k as f64).powf(-s);
        h1 += w;
        h2 += w * w;
    }
    if d > head as f64 {
        let tail = |e: f64| {
            let (a, b) = (head as f64 + 0.5, d + 0.5);
            if (e - 1.0).abs() < 1e-12 { (b / a).ln() } else { (b.powf(1.0 - e) - a.powf(1.0 - e)) / (1.0 - e) }
        };
        h1 += tail(s);
        h2 += tail(2.0 * s);
    }
    Spread { sum_sq: h2 / (h1 * h1), largest: 1.0 / h1 }
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
        for factor in factors {
            if let TableFactor::Table { name, alias, .. } = factor {
                let written = name.0.last().map(|p| p.to_string()).unwrap_or_default();
                let written = written.trim_matches('"');
                let table = tables
                    .iter()
                    .find(|t| t.name.eq_ignore_ascii_case(written))
                    .or_else(|| (written.eq_ignore_ascii_case(crate::spec::tables::DEFAULT_TABLE)).then(|| tables.first()).flatten());
                if let Some(t) = table {
                    named.insert(written.to_lowercase(), t);
                    if let Some(a) = alias {
                        named.insert(a.name.value.to_lowercase(), t);
                    }
                    read.push(t);
                }
            }
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
    use super::*;
    use crate::plan::RowsPlan;

    fn col(name: &str, kind: ColumnKind) -> ColumnPlan {
        ColumnPlan {
            name: name.into(),
            kind,
            nulls: 0.0,
            distinct: None,
            range: RangePlan::None,
            order: Default::default(),
            run: 1,
            skew: 0.0,
            duplicates: 0.0,
            length: (0, 0),
            true_share: 0.5,
            references: None,
            unmatched: 0.0,
            coverage: 1.0,
        }
    }

    /// The shed's ledger: 14 varieties priced; deliveries reference them.
    fn shed() -> Vec<TablePlan> {
        let prices = TablePlan { name: "prices".into(), rows: RowsPlan::Fixed(14), columns: vec![col("variety_id", ColumnKind::Key)] };
        let mut variety = col("variety_id", ColumnKind::Int);
        variety.references = Some("prices.variety_id".into());
        let mut grams = col("grams", ColumnKind::Int);
        grams.range = RangePlan::Int(500, 950_000);
        let mut crew = col("crew", ColumnKind::Category);
        crew.distinct = Some(6);
        crew.nulls = 0.1;
        let deliveries = TablePlan {
            name: "deliveries".into(),
            rows: RowsPlan::Swept,
            columns: vec![col("delivery_id", ColumnKind::Key), variety, grams, crew, col("ripe", ColumnKind::Bool)],
        };
        vec![prices, deliveries]
    }

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
    fn zipf_shares_match_a_direct_sum() {
        // Reference values: the same sums term by term in Python 3.11 floats (this session):
        // Σp² and max p of Zipf(s) over d values, p_k = k^-s / Σ j^-s.
        for (d, s, sum_sq, largest) in [
            (14.0, 0.6, 0.093_605_564_084_918_95, 0.187_488_795_682_185),
            (3_000_000.0, 1.1, 0.021_460_890_497_703_736, 0.119_991_803_062_505_23),
            (2_000_000.0, 0.5, 1.887_682_502_903_854_9e-6, 0.000_353_735_984_965_800_6),
        ] {
            let z = zipf_spread(d, s);
            assert!((z.sum_sq / sum_sq - 1.0).abs() < 1e-3, "d={d} s={s}: {z:?}");
            assert!((z.largest / largest - 1.0).abs() < 1e-3, "d={d} s={s}: {z:?}");
        }
    }

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
        // No equality it can resolve: the larger input.
        assert_eq!(joined("SELECT * FROM deliveries AS a JOIN deliveries AS b ON a.grams < b.grams", n), Some(n as f64));
        // No join at all, or a join of something that is not a workload table.
        assert_eq!(joined("SELECT crew, COUNT(*) FROM deliveries GROUP BY crew", n), None);
        assert_eq!(joined("SELECT * FROM deliveries AS a JOIN (SELECT 1 AS crew) AS b ON a.crew = b.crew", n), None);
        // On the streaming engine a grouping SELECT's join feeds its groups.
        let grouped = "SELECT a.crew, COUNT(*) FROM deliveries AS a JOIN deliveries AS b ON a.crew = b.crew GROUP BY a.crew";
        assert!(joined_bytes(grouped, &shed(), n, false).is_some());
        assert_eq!(joined_bytes(grouped, &shed(), n, true), None);
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
