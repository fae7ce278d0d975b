//! Columns as step parameters: how a step names a column (by name, or by position for
//! workloads written before names), what kind of column it needs, and the one lookup every
//! family uses to find it in the table it receives.
//!
//! A newcomer must know: the spec checker resolves a column against the workload's table
//! plan when it can know the table a step sees (`spec/steps.rs`), so most mistakes are
//! reported by `lint` at their line and column; the lookup here is the run-time guard for
//! the rest (a table reshaped by an earlier step), with a typed error instead of a panic.
//! Resolve a column once per run, before any per-row loop: a lookup by name compares
//! names, it does not allocate.

use super::StepError;
use crate::results::schema::ColumnKind;
use polars::prelude::*;

/// A column as a step parameter names it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ColumnRef {
    /// By position, 0 = first (the form of older workloads).
    At(usize),
    /// By name, matched exactly.
    Named(String),
}

impl std::fmt::Display for ColumnRef {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ColumnRef::At(p) => write!(f, "{p}"),
            ColumnRef::Named(n) => write!(f, "{n}"),
        }
    }
}

impl ColumnRef {
    /// `column `weight`` or `column at position 3`, for messages.
    pub fn described(&self) -> String {
        match self {
            ColumnRef::At(p) => format!("column at position {p}"),
            ColumnRef::Named(n) => format!("column `{n}`"),
        }
    }
}

/// What a step needs of a column's values.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Need {
    /// Any column.
    Any,
    /// 64-bit integers (`int` or `key` columns).
    Integer,
    /// Numbers (`int`, `key` or `float`).
    Numeric,
    /// Integers stored underneath: `int`, `key`, `date` or `category` (what an ordered key
    /// compared as integers accepts).
    IntegerBacked,
    /// true / false.
    Boolean,
    /// Text (a `text` column; categories are not text to these steps).
    Text,
}

impl Need {
    /// Whether a generated column of `kind` satisfies the need.
    pub fn accepts(self, kind: ColumnKind) -> bool {
        use ColumnKind::*;
        match self {
            Need::Any => true,
            Need::Integer => matches!(kind, Int | Key),
            Need::Numeric => matches!(kind, Int | Key | Float),
            Need::IntegerBacked => matches!(kind, Int | Key | Date | Category),
            Need::Boolean => kind == Bool,
            Need::Text => kind == Text,
        }
    }

    /// Whether a column of dtype `dt` satisfies the need (the run-time form of `accepts`).
    pub fn accepts_dtype(self, dt: &DataType) -> bool {
        match self {
            Need::Any => true,
            Need::Integer => dt.is_integer(),
            Need::Numeric => dt.is_primitive_numeric(),
            Need::IntegerBacked => dt.to_physical().is_integer(),
            Need::Boolean => dt == &DataType::Boolean,
            Need::Text => dt == &DataType::String,
        }
    }

    /// What the column must hold, in words, for parameter docs ("numbers (int, key or float)").
    pub fn holding(self) -> &'static str {
        match self {
            Need::Any => "anything",
            Need::Integer => "integers (int or key)",
            Need::Numeric => "numbers (int, key or float)",
            Need::IntegerBacked => "integers, keys, dates or categories",
            Need::Boolean => "true/false (bool)",
            Need::Text => "text",
        }
    }

    /// The column kinds it accepts, in words ("a numeric column (int, key or float)").
    pub fn label(self) -> &'static str {
        match self {
            Need::Any => "any column",
            Need::Integer => "an integer column (int or key)",
            Need::Numeric => "a numeric column (int, key or float)",
            Need::IntegerBacked => "an integer, key, date or category column",
            Need::Boolean => "a bool column",
            Need::Text => "a text column",
        }
    }
}

/// The position of column `c` in `df`, or a typed error naming the step.
pub fn column_position(df: &DataFrame, c: &ColumnRef, step: &'static str) -> Result<usize, StepError> {
    let found = match c {
        ColumnRef::At(p) => (*p < df.width()).then_some(*p),
        // Never `get_column_index` on a wide frame without a schema: it would build one (an
        // allocation inside the timed region); comparing names allocates nothing.
        ColumnRef::Named(n) => match df.cached_schema() {
            Some(schema) => schema.index_of(n),
            None => df.columns().iter().position(|col| col.name().as_str() == n),
        },
    };
    found.ok_or_else(|| StepError::NoColumn { step, column: c.described(), width: df.width() })
}

/// Column `c` of `df`, checked against `need`, or a typed error naming the step.
pub fn column<'a>(df: &'a DataFrame, c: &ColumnRef, need: Need, step: &'static str) -> Result<&'a Column, StepError> {
    let col = &df.columns()[column_position(df, c, step)?];
    if !need.accepts_dtype(col.dtype()) {
        return Err(StepError::ColumnKind { step, column: col.name().to_string(), dtype: col.dtype().to_string(), need: need.label() });
    }
    Ok(col)
}

/// The position of column `c` in a records schema (rows as plain values).
pub fn record_position(schema: &Schema, c: &ColumnRef, step: &'static str) -> Result<usize, StepError> {
    let found = match c {
        ColumnRef::At(p) => (*p < schema.len()).then_some(*p),
        ColumnRef::Named(n) => schema.index_of(n),
    };
    found.ok_or_else(|| StepError::NoColumn { step, column: c.described(), width: schema.len() })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn looks_columns_up_by_name_or_position() {
        let df = df!("crate_id" => [1i64, 2], "kilograms" => [0.5f64, 2.0], "variety" => ["gala", "fuji"]).expect("frame");
        let by_name = ColumnRef::Named("kilograms".into());
        assert_eq!(column_position(&df, &by_name, "t").expect("found"), 1);
        assert_eq!(column_position(&df, &ColumnRef::At(2), "t").expect("found"), 2);
        let e = column_position(&df, &ColumnRef::At(9), "t").expect_err("beyond");
        assert!(e.to_string().contains("no column at position 9") && e.to_string().contains("3 columns"), "{e}");
        let e = column_position(&df, &ColumnRef::Named("weight".into()), "t").expect_err("unknown");
        assert!(e.to_string().contains("no column `weight`"), "{e}");
        let e = column(&df, &ColumnRef::Named("variety".into()), Need::Numeric, "t").expect_err("text");
        assert!(e.to_string().contains("`variety` is str, not a numeric column"), "{e}");
        assert!(column(&df, &ColumnRef::At(0), Need::Integer, "t").is_ok());
    }

    #[test]
    fn needs_agree_between_kinds_and_dtypes() {
        // The generator's dtype for each kind (`ColumnKind::dtype_label`) must be accepted by
        // the run-time check whenever the kind is accepted by the lint-time check.
        let dtypes = [
            (ColumnKind::Int, DataType::Int64),
            (ColumnKind::Key, DataType::Int64),
            (ColumnKind::Float, DataType::Float64),
            (ColumnKind::Bool, DataType::Boolean),
            (ColumnKind::Text, DataType::String),
            (ColumnKind::Date, DataType::Date),
        ];
        for need in [Need::Any, Need::Integer, Need::Numeric, Need::IntegerBacked, Need::Boolean, Need::Text] {
            for (kind, dt) in &dtypes {
                assert_eq!(need.accepts(*kind), need.accepts_dtype(dt), "{need:?} on {kind:?}");
            }
        }
    }
}
