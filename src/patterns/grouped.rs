//! Grouped work: per-group totals, and per-row values computed within each row's group.
//!
//! The jobs: `group_totals` gives one row per group (count, sum and largest of an integer
//! value column, sorted by group); `group_shares` adds to every row its value's share of
//! its group's total, keeping the table's row order. The designs differ in who walks the
//! groups: native aggregation (lazy `group_by().agg()`, a window `.over()`), a join-back of
//! a native aggregate, a user function called once per group on a per-group table, or a
//! split into per-group tables (`partition_by`) and a loop. A newcomer must know: the number
//! of groups is what separates the designs, and `assign_groups` (in `setup:`) makes it
//! sweepable: with `rows_per_group` fixed, the groups grow with the rows. Values are
//! integers so every design's sums are exact and the outputs compare bit for bit.

use super::{column, column_position, polars_err, BuildError, ColumnRef, Need, ParamDef, ParamKind, Params, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;

const TOTALS: &[&str] = &["native", "per_group_fn", "partitions"];
const SHARES: &[&str] = &["window", "join_back", "per_group_fn", "partitions"];
const ROW: &str = "__row";

const BY: ParamDef = ParamDef { name: "by", kind: ParamKind::column(Need::Any), default: "0", doc: "the group column" };
const VALUE: ParamDef = ParamDef { name: "value", kind: ParamKind::column(Need::Integer), default: "1", doc: "the integer value column" };

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "assign_groups",
        summary: "replace an integer column by its value modulo (rows / rows_per_group), so the number of groups grows with the rows",
        cost_note: "One pass and one new column of n integers: linear in rows. Meant for `setup:`; on a key \
column (a permutation of 0..n) every group gets about `rows_per_group` rows.",
        params: &[
            ParamDef { name: "column", kind: ParamKind::column(Need::Integer), default: "0", doc: "the integer column to turn into a group number" },
            ParamDef { name: "rows_per_group", kind: ParamKind::per_rows(1, 10_000_000_000), default: "16", doc: "rows per group on average" },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 1.5,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: true,
        build: |p| Ok(Box::new(AssignGroups { column: p.column("column")?, rows_per_group: p.count("rows_per_group").max(1) })),
    },
    StepDef {
        name: "group_totals",
        summary: "per group: count, sum and largest of a value column, by native aggregation, a per-group user function or a loop over partitions",
        cost_note: "native hashes the keys once and aggregates in bulk: linear in rows, about one \
allocation per group (its list of row positions) and the rest in bulk. per_group_fn gathers a small table for every group and calls the user \
function on it: the same linear pass plus dozens of allocations and a function call per group, so the \
extra cost grows with the number of groups. partitions first copies the table into one table per \
group (all held at once: about one more copy of the table) and then loops the same function. Common \
practice: a user function called once per group is much slower than a native aggregate.",
        params: &[BY, VALUE, ParamDef { name: "method", kind: ParamKind::Choice(TOTALS), default: "native", doc: "who walks the groups" }],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| {
            let (by, value) = by_and_value(p)?;
            Ok(Box::new(GroupTotals { by, value, method: p.choice("method").to_string() }))
        },
    },
    StepDef {
        name: "group_shares",
        summary: "add to every row its value's share of its group's total, by a window expression, a join-back, a per-group user function or partitions",
        cost_note: "window (.over) aggregates per group and broadcasts back inside one expression: linear, \
one new column. join_back aggregates, then joins the totals onto every row (a hash join, an extra \
column and a copy of the table's columns): linear with a bigger constant. per_group_fn and partitions \
number the rows, gather or copy one table per group, call the function per group, stack the pieces \
and sort them back into row order: n log n for the sort plus allocations per group.",
        params: &[BY, VALUE, ParamDef { name: "method", kind: ParamKind::Choice(SHARES), default: "window", doc: "how group totals reach the rows" }],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 4.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| {
            let (by, value) = by_and_value(p)?;
            Ok(Box::new(GroupShares { by, value, method: p.choice("method").to_string() }))
        },
    },
];

/// The group and value columns; the same column written twice is refused when the step is
/// built (a name and a position of the same column only when it runs).
fn by_and_value(p: &Params) -> Result<(ColumnRef, ColumnRef), BuildError> {
    let (by, value) = (p.column("by")?, p.column("value")?);
    if by == value {
        return Err(BuildError { param: Some("value"), message: format!("`value` is the group column `{by}` again; the value column must be another") });
    }
    Ok((by, value))
}

fn names(df: &DataFrame, by: &ColumnRef, value: &ColumnRef, step: &'static str) -> Result<(PlSmallStr, PlSmallStr), StepError> {
    let b = column(df, by, Need::Any, step)?;
    if column_position(df, by, step)? == column_position(df, value, step)? {
        return Err(StepError::Value { step, message: "the group column and the value column must differ".into() });
    }
    let v = column(df, value, Need::Integer, step)?;
    for reserved in [ROW, "crates", "total", "heaviest", "share"] {
        if df.get_column_index(reserved).is_some() {
            return Err(StepError::Value { step, message: format!("the table already has a column `{reserved}`, which this step writes") });
        }
    }
    if df.height() == 0 {
        return Err(StepError::Value { step, message: "the table has no rows to group".into() });
    }
    Ok((b.name().clone(), v.name().clone()))
}

struct AssignGroups {
    column: ColumnRef,
    rows_per_group: u64,
}

impl Step for AssignGroups {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "assign_groups";
        let mut df = input.into_frame(NAME)?;
        let at = column_position(&df, &self.column, NAME)?;
        let c = column(&df, &self.column, Need::Integer, NAME)?;
        let groups = (df.height() as u64 / self.rows_per_group).max(1) as i64;
        let s = c.as_materialized_series().cast(&DataType::Int64).map_err(polars_err(NAME))?;
        let ca = s.i64().map_err(polars_err(NAME))?;
        let out: Int64Chunked = ca.apply_values(|v| v.rem_euclid(groups));
        let out = out.with_name(c.name().clone()).into_series().into_column();
        df.replace_column(at, out).map_err(polars_err(NAME))?;
        Ok(Value::Frame(df))
    }
}

/// The user function of the per-group designs: count, sum and largest of a group's values,
/// as a one-row table with its key.
fn user_totals(group: &DataFrame, by: &str, value: &str) -> PolarsResult<DataFrame> {
    let key = group.column(by)?.head(Some(1));
    let v = group.column(value)?.as_materialized_series().cast(&DataType::Int64)?;
    let (mut count, mut sum, mut max) = (0i64, 0i64, None::<i64>);
    for x in v.i64()?.iter().flatten() {
        count += 1;
        sum = sum.wrapping_add(x);
        max = Some(max.map_or(x, |m| m.max(x)));
    }
    DataFrame::new(
        1,
        vec![key, Column::new("crates".into(), [count]), Column::new("total".into(), [sum]), Column::new("heaviest".into(), [max])],
    )
}

struct GroupTotals {
    by: ColumnRef,
    value: ColumnRef,
    method: String,
}

impl Step for GroupTotals {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "group_totals";
        let df = input.into_frame(NAME)?;
        let (by, value) = names(&df, &self.by, &self.value, NAME)?;
        let sort = SortMultipleOptions::default();
        let out = match self.method.as_str() {
            "per_group_fn" => {
                let picked = df.select([by.clone(), value.clone()]).map_err(polars_err(NAME))?;
                let g = picked.group_by([by.clone()]).map_err(polars_err(NAME))?;
                let res = g.apply(|sub| user_totals(&sub, &by, &value)).map_err(polars_err(NAME))?;
                res.sort([by.clone()], sort).map_err(polars_err(NAME))?
            }
            "partitions" => {
                let picked = df.select([by.clone(), value.clone()]).map_err(polars_err(NAME))?;
                let parts = picked.partition_by([by.clone()], true).map_err(polars_err(NAME))?;
                let mut acc: Option<DataFrame> = None;
                for part in &parts {
                    let one = user_totals(part, &by, &value).map_err(polars_err(NAME))?;
                    match &mut acc {
                        None => acc = Some(one),
                        Some(a) => {
                            a.vstack_mut_owned(one).map_err(polars_err(NAME))?;
                        }
                    }
                }
                let acc = acc.ok_or_else(|| StepError::Value { step: NAME, message: "no groups".into() })?;
                acc.sort([by.clone()], sort).map_err(polars_err(NAME))?
            }
            _ => df
                .lazy()
                .group_by([col(by.clone())])
                .agg([
                    col(value.clone()).count().cast(DataType::Int64).alias("crates"),
                    col(value.clone()).cast(DataType::Int64).sum().alias("total"),
                    col(value.clone()).cast(DataType::Int64).max().alias("heaviest"),
                ])
                .sort([by.clone()], sort)
                .collect()
                .map_err(polars_err(NAME))?,
        };
        let mut out = out;
        out.rechunk_mut();
        Ok(Value::Frame(out))
    }
}

/// The user function of the per-group share designs: every row's value over the group's total.
fn user_shares(mut group: DataFrame, value: &str) -> PolarsResult<DataFrame> {
    let v = group.column(value)?.as_materialized_series().cast(&DataType::Int64)?;
    let ca = v.i64()?;
    let total = ca.iter().flatten().fold(0i64, |a, x| a.wrapping_add(x)) as f64;
    let share: Float64Chunked = ca.iter().map(|x| x.map(|x| x as f64 / total)).collect();
    group.with_column(share.with_name("share".into()).into_series().into_column())?;
    Ok(group)
}

struct GroupShares {
    by: ColumnRef,
    value: ColumnRef,
    method: String,
}

impl Step for GroupShares {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "group_shares";
        let df = input.into_frame(NAME)?;
        let (by, value) = names(&df, &self.by, &self.value, NAME)?;
        let share_of = |total: Expr| (col(value.clone()).cast(DataType::Float64) / total.cast(DataType::Float64)).alias("share");
        let mut out = match self.method.as_str() {
            "join_back" => {
                let totals = df.clone().lazy().group_by([col(by.clone())]).agg([col(value.clone()).cast(DataType::Int64).sum().alias("total")]);
                let mut args = JoinArgs::new(JoinType::Left);
                args.maintain_order = MaintainOrderJoin::Left;
                df.lazy()
                    .join(totals, [col(by.clone())], [col(by.clone())], args)
                    .with_column(share_of(col("total")))
                    .drop(cols(["total"]))
                    .collect()
                    .map_err(polars_err(NAME))?
            }
            "per_group_fn" | "partitions" => {
                let numbered = df.with_row_index(ROW.into(), None).map_err(polars_err(NAME))?;
                let stacked = if self.method == "per_group_fn" {
                    let g = numbered.group_by([by.clone()]).map_err(polars_err(NAME))?;
                    g.apply(|sub| user_shares(sub, &value)).map_err(polars_err(NAME))?
                } else {
                    let parts = numbered.partition_by([by.clone()], true).map_err(polars_err(NAME))?;
                    let mut acc: Option<DataFrame> = None;
                    for part in parts {
                        let one = user_shares(part, &value).map_err(polars_err(NAME))?;
                        match &mut acc {
                            None => acc = Some(one),
                            Some(a) => {
                                a.vstack_mut_owned(one).map_err(polars_err(NAME))?;
                            }
                        }
                    }
                    acc.ok_or_else(|| StepError::Value { step: NAME, message: "no groups".into() })?
                };
                stacked
                    .sort([ROW], SortMultipleOptions::default())
                    .map_err(polars_err(NAME))?
                    .drop(ROW)
                    .map_err(polars_err(NAME))?
            }
            _ => {
                let total = col(value.clone()).cast(DataType::Int64).sum().over([col(by.clone())]).map_err(polars_err(NAME))?;
                df.lazy().with_column(share_of(total)).collect().map_err(polars_err(NAME))?
            }
        };
        out.rechunk_mut();
        Ok(Value::Frame(out))
    }
}
