//! The query check: every `sql` step is planned against tables with no rows and the
//! declared column dtypes, so a missing table or column, a type error or a syntax error is
//! reported at the query's `file:line:column` with a did-you-mean — and nothing runs on
//! data. The optimized plan of each query is kept for the run's records.
//!
//! A newcomer must know: polars' messages rarely carry a position, so the place is found by
//! the identifier the message quotes (or the `Line:, Column:` of a syntax error) inside the
//! query, then mapped through the YAML scalar's style (plain, quoted, `|` or `>` block) to
//! the file. A query after a built-in step cannot be checked here (that step's output
//! columns are not known before running); it is planned when it runs.

use super::locate::{Pos, YamlPath};
use super::suggest::closest;
use super::validate::Checker;
use crate::patterns::sql::{plan_query, RunContext};
use crate::plan::{DesignPlan, TablePlan};
use polars::prelude::*;

/// Plan every query of every design; record problems and the optimized plans.
pub(super) fn check_queries(c: &mut Checker, text: &str, tables: &[TablePlan], designs: &mut [DesignPlan], path: &YamlPath) {
    if !designs.iter().any(|d| d.setup.iter().chain(&d.steps).any(|s| s.def.name == "sql")) {
        return;
    }
    let empties = match crate::table::related::empty_tables(tables, 0, false) {
        Ok(t) => t,
        Err(e) => {
            c.at(path, format!("could not make empty tables to plan the queries against: {e}"), None);
            return;
        }
    };
    let mut names: Vec<String> = empties.iter().map(|(n, _)| n.clone()).collect();
    names.push(crate::spec::tables::DEFAULT_TABLE.to_string());
    let columns: Vec<String> = empties.iter().flat_map(|(_, df)| df.get_column_names_owned()).map(|s| s.to_string()).collect();
    for (i, d) in designs.iter_mut().enumerate() {
        let ctx = RunContext { tables: empties.iter().map(|(n, df)| (n.clone(), df.clone().lazy())).collect(), engine: d.engine, ..RunContext::default() };
        // What flows into the next step: None once a built-in step has changed it unseen.
        let mut data: Option<DataFrame> = empties.first().map(|(_, df)| df.clone());
        let mut plans = Vec::new();
        let steps: Vec<(&str, usize, &crate::plan::StepPlan)> =
            d.setup.iter().enumerate().map(|(j, s)| ("setup", j, s)).chain(d.steps.iter().enumerate().map(|(j, s)| ("steps", j, s))).collect();
        for (list, j, s) in steps {
            if s.def.name != "sql" {
                data = None;
                continue;
            }
            let query = s.params.text("query");
            let qpath = path.index(i).key(list).index(j).key("sql").key("query");
            let Some(input) = data.take() else {
                plans.push("(not planned before running: it follows a built-in step)".to_string());
                continue;
            };
            let planned = plan_query(query, &ctx, input).and_then(|mut lf| {
                let schema = lf.collect_schema()?;
                let plan = lf.describe_optimized_plan()?;
                Ok((schema, plan))
            });
            if let (Ok(_), Some(b)) = (&planned, super::sql_rules::check(query)) {
                let at = c.loc.value(&qpath).map(|v| map_offset(text, v, query, offset_of(query, b.line, b.column)));
                c.push(at, &qpath, b.message, None);
                break;
            }
            match planned {
                Ok((schema, plan)) => {
                    data = Some(DataFrame::empty_with_schema(&schema));
                    plans.push(plan);
                }
                Err(e) => {
                    report(c, text, &qpath, query, &e.to_string(), &names, &columns);
                    break;
                }
            }
        }
        d.query_plans = plans;
    }
}

/// A design on the streaming engine needs tables that can be written chunk by chunk.
pub(super) fn check_streaming(c: &mut Checker, tables: &[TablePlan], designs: &[DesignPlan], path: &YamlPath) {
    for (i, d) in designs.iter().enumerate() {
        if d.engine != crate::spec::model::EngineChoice::Streaming {
            continue;
        }
        if let Some(why) = tables.iter().find_map(crate::table::related::chunk_blocker) {
            c.at(&path.index(i).key("engine"), format!("the streaming engine reads its tables as chunks, but {why}"), None);
        }
    }
}

/// One located problem for a query that did not plan.
fn report(c: &mut Checker, text: &str, qpath: &YamlPath, query: &str, message: &str, tables: &[String], columns: &[String]) {
    let mut message = message.lines().map(str::trim).filter(|l| !l.is_empty()).collect::<Vec<_>>().join(" ");
    // polars appends its partial plan and its own suggestion; the hint below replaces both.
    for cut in [" Resolved plan until failure", " Did you mean"] {
        if let Some(i) = message.find(cut) {
            message.truncate(i);
        }
    }
    let (offset, word) = place_in_query(query, &message);
    let lower = message.to_lowercase();
    let pool: Vec<&str> = if lower.contains("relation") {
        tables.iter().map(String::as_str).collect()
    } else if lower.contains("not found") || lower.contains("no column") {
        columns.iter().map(String::as_str).collect()
    } else {
        Vec::new()
    };
    let hint = word
        .as_deref()
        .and_then(|w| closest(w, pool.into_iter().filter(|p| !p.eq_ignore_ascii_case(w))))
        .map(|s| format!("did you mean `{s}`?"));
    let at = c.loc.value(qpath).map(|v| map_offset(text, v, query, offset));
    c.push(at, qpath, format!("the query does not plan: {message}"), hint);
}

/// Where in the query the message points (a char offset), and the word found there.
fn place_in_query(query: &str, message: &str) -> (usize, Option<String>) {
    // A syntax error: "... at Line: L, Column: C".
    if let Some(i) = message.find("Line: ") {
        let rest = &message[i + 6..];
        let line: usize = rest.split(|ch: char| !ch.is_ascii_digit()).next().and_then(|x| x.parse().ok()).unwrap_or(1);
        let col: usize = rest.find("Column: ").and_then(|k| rest[k + 8..].split(|ch: char| !ch.is_ascii_digit()).next()?.parse().ok()).unwrap_or(1);
        let off = offset_of(query, line, col);
        let word: String = query.chars().skip(off).take_while(|ch| ch.is_alphanumeric() || *ch == '_').collect();
        return (off.min(query.chars().count()), (!word.is_empty()).then_some(word));
    }
    // Otherwise the first quoted name in the message that occurs in the query as a word.
    for q in quoted(message) {
        if let Some(off) = find_word(query, &q) {
            return (off, Some(q));
        }
    }
    (0, None)
}

/// Char offset of 1-based `line` and `column` in the query.
fn offset_of(query: &str, line: usize, column: usize) -> usize {
    let before: usize = query.split('\n').take(line.saturating_sub(1)).map(|l| l.chars().count() + 1).sum();
    before + column.saturating_sub(1)
}

/// Texts between matching quotes, backticks or double quotes.
fn quoted(message: &str) -> Vec<String> {
    let mut out = Vec::new();
    for quote in ['"', '`', '\''] {
        let parts: Vec<&str> = message.split(quote).collect();
        for k in (1..parts.len()).step_by(2) {
            let w = parts[k].trim();
            if !w.is_empty() && w.len() <= 64 && !w.contains(' ') {
                out.push(w.to_string());
            }
        }
    }
    out
}

/// Char offset of `word` as a whole word in `query` (case-insensitive).
fn find_word(query: &str, word: &str) -> Option<usize> {
    let q: Vec<char> = query.to_lowercase().chars().collect();
    let w: Vec<char> = word.to_lowercase().chars().collect();
    let is_word = |ch: char| ch.is_alphanumeric() || ch == '_';
    (0..q.len().saturating_sub(w.len() - 1).max(0)).find(|&i| {
        q[i..].starts_with(&w)
            && (i == 0 || !is_word(q[i - 1]))
            && q.get(i + w.len()).is_none_or(|&ch| !is_word(ch))
    })
}

/// The file position of char `offset` of a query whose YAML value starts at `v`.
fn map_offset(text: &str, v: Pos, query: &str, offset: usize) -> Pos {
    let lines: Vec<&str> = text.lines().collect();
    let Some(first) = lines.get(v.line.saturating_sub(1)) else { return v };
    let lead = first.chars().nth(v.column.saturating_sub(1)).unwrap_or(' ');
    let before = lines.get(v.line.wrapping_sub(2)).map(|l| l.trim_end()).unwrap_or("");
    let block_above = ["|", "|-", "|+", ">", ">-", ">+"].iter().any(|m| before.ends_with(&format!(" {m}")));
    if lead == '|' || lead == '>' || block_above {
        // A block scalar: its content lines (the parser marks the first of them, or the
        // indicator above them) share one indentation.
        let (from, mut indent) = if block_above { (v.line - 1, Some(v.column - 1)) } else { (v.line, None) };
        let mut rest = offset;
        for (k, l) in lines.iter().enumerate().skip(from) {
            if l.trim().is_empty() {
                continue;
            }
            let ind = l.len() - l.trim_start().len();
            if indent.is_some_and(|i| ind < i) {
                break;
            }
            let ind = *indent.get_or_insert(ind);
            let body = l.get(ind..).unwrap_or("").chars().count();
            if rest <= body {
                return Pos { line: k + 1, column: ind + rest + 1 };
            }
            rest -= body + 1;
        }
        return v;
    }
    // A plain or quoted scalar on the key's line (a long one may continue on later lines).
    let quote = usize::from(lead == '"' || lead == '\'');
    let first_len = first.chars().count().saturating_sub(v.column - 1 + quote);
    if offset <= first_len || query.lines().count() <= 1 {
        return Pos { line: v.line, column: v.column + quote + offset };
    }
    Pos { line: v.line, column: v.column + quote }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn offsets_map_through_each_scalar_style() {
        let text = "q: \"SELECT a FROM t\"\nr: |\n  SELECT a\n  FROM tt\n";
        assert_eq!(map_offset(text, Pos { line: 1, column: 4 }, "SELECT a FROM t", 7), Pos { line: 1, column: 12 });
        assert_eq!(map_offset(text, Pos { line: 2, column: 4 }, "SELECT a\nFROM tt\n", 14), Pos { line: 4, column: 8 });
        // the parser may mark the first content line instead of the indicator
        assert_eq!(map_offset(text, Pos { line: 3, column: 3 }, "SELECT a\nFROM tt\n", 14), Pos { line: 4, column: 8 });
        assert_eq!(find_word("select amount, am from x", "am"), Some(15));
        assert_eq!(place_in_query("SELECT\n FRM x", "sql parser error: Expected: end of statement, found: x at Line: 2, Column: 6").0, 12);
    }
}
