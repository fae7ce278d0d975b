//! Rules of standard SQL that polars' SQL engine does not enforce, checked at lint time on
//! the query's syntax tree (sqlparser, the parser polars uses).
//!
//! One rule so far: a SELECT without GROUP BY that mixes an aggregate (`SUM(x)`) with a
//! plain column. Standard SQL refuses it; polars broadcasts the aggregate to every row,
//! which is rarely what was meant and gives a result other engines will not. A newcomer
//! must know: window functions (`SUM(x) OVER (…)`) are not aggregates here.

use sqlparser::ast::{visit_expressions, Expr, GroupByExpr, Query, Select, SelectItem, SetExpr, Visit, Visitor};
use sqlparser::dialect::GenericDialect;
use sqlparser::parser::Parser;
use std::ops::ControlFlow;

const AGGREGATES: &[&str] =
    &["sum", "count", "avg", "mean", "min", "max", "median", "stddev", "stdev", "variance", "var", "first", "last", "array_agg", "string_agg"];

/// A broken rule: what, and where in the query (1-based line and column).
pub struct RuleBreak {
    pub message: String,
    pub line: usize,
    pub column: usize,
}

/// The first rule the query breaks, if any (a query that does not parse breaks none here:
/// polars reports it).
pub fn check(query: &str) -> Option<RuleBreak> {
    let mut v = Finder { found: None };
    visit_statements(query, &mut v)?;
    v.found
}

/// Parse `query` as polars' SQL parser does (the generic dialect) and walk every statement
/// with `v`; None when it does not parse.
pub fn visit_statements<V: Visitor>(query: &str, v: &mut V) -> Option<()> {
    let statements = Parser::parse_sql(&GenericDialect {}, query).ok()?;
    for s in &statements {
        let _ = s.visit(v);
    }
    Some(())
}

struct Finder {
    found: Option<RuleBreak>,
}

impl Visitor for Finder {
    type Break = ();
    fn pre_visit_query(&mut self, q: &Query) -> ControlFlow<()> {
        if self.found.is_none() {
            self.found = in_set(&q.body);
        }
        ControlFlow::Continue(())
    }
}

fn in_set(s: &SetExpr) -> Option<RuleBreak> {
    match s {
        SetExpr::Select(sel) => in_select(sel),
        SetExpr::SetOperation { left, right, .. } => in_set(left).or_else(|| in_set(right)),
        _ => None,
    }
}

/// Whether the SELECT has a GROUP BY (of some expressions, or ALL).
pub fn is_grouped(sel: &Select) -> bool {
    match &sel.group_by {
        GroupByExpr::Expressions(v, _) => !v.is_empty(),
        GroupByExpr::All(_) => true,
    }
}

fn in_select(sel: &Select) -> Option<RuleBreak> {
    if is_grouped(sel) {
        return None;
    }
    let mut aggregate = None;
    let mut plain = None;
    for item in &sel.projection {
        let e = match item {
            SelectItem::UnnamedExpr(e) | SelectItem::ExprWithAlias { expr: e, .. } => e,
            _ => continue,
        };
        if let Some(name) = first_aggregate(e) {
            aggregate.get_or_insert(name);
        } else if let Some(col) = first_column(e) {
            plain.get_or_insert(col);
        }
    }
    let (agg, (col, line, column)) = (aggregate?, plain?);
    Some(RuleBreak {
        message: format!(
            "`{col}` is neither in a GROUP BY nor inside an aggregate, beside {agg}(…): standard SQL refuses this, and polars \
             would repeat the aggregate on every row; add `GROUP BY {col}` or aggregate the column"
        ),
        line,
        column,
    })
}

/// The name of the first aggregate call (not a window function) inside `e`.
fn first_aggregate(e: &Expr) -> Option<String> {
    let found = visit_expressions(e, |x| {
        if let Expr::Function(f) = x {
            let name = f.name.to_string().to_lowercase();
            if f.over.is_none() && AGGREGATES.contains(&name.as_str()) {
                return ControlFlow::Break(name.to_uppercase());
            }
        }
        ControlFlow::Continue(())
    });
    match found {
        ControlFlow::Break(n) => Some(n),
        ControlFlow::Continue(()) => None,
    }
}

/// The first column named inside `e`, with where it starts.
fn first_column(e: &Expr) -> Option<(String, usize, usize)> {
    let found = visit_expressions(e, |x| match x {
        Expr::Identifier(i) => ControlFlow::Break((i.value.clone(), i.span.start.line as usize, i.span.start.column as usize)),
        Expr::CompoundIdentifier(parts) if !parts.is_empty() => {
            let name = parts.iter().map(|p| p.value.as_str()).collect::<Vec<_>>().join(".");
            ControlFlow::Break((name, parts[0].span.start.line as usize, parts[0].span.start.column as usize))
        }
        _ => ControlFlow::Continue(()),
    });
    match found {
        ControlFlow::Break(c) => Some(c),
        ControlFlow::Continue(()) => None,
    }
}

#[cfg(test)]
mod tests {
    use super::check;

    #[test]
    fn aggregate_beside_a_plain_column_needs_group_by() {
        let b = check("SELECT member_id, SUM(kilograms) AS kg FROM deliveries").expect("flagged");
        assert_eq!((b.line, b.column), (1, 8));
        assert!(b.message.contains("`member_id`") && b.message.contains("SUM"));
        assert!(check("SELECT member_id, SUM(kilograms) FROM deliveries GROUP BY member_id").is_none());
        assert!(check("SELECT member_id, SUM(kilograms) OVER (PARTITION BY member_id) FROM deliveries").is_none());
        assert!(check("SELECT COUNT(*) AS n, SUM(kilograms) AS kg FROM deliveries").is_none());
        // inside a subquery too
        assert!(check("SELECT * FROM (SELECT variety, MAX(kilograms) AS top FROM deliveries) AS t").is_some());
    }
}
