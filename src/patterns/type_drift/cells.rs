//! Cells written one at a time into a column: a dynamically typed cell (`Cell`), a column
//! filled cell by cell that lets the values decide its dtype or keeps the declared one
//! (`Cells`), and the steps that fill a column, cast it to the declared type, or write one
//! value of another type into it.

use super::{replace};
use crate::patterns::{column, polars_err, ColumnRef, Need, RunContext, Step, StepError, Value};
use polars::prelude::*;

/// One value as a dynamically typed table would hold it.
#[derive(Debug, Clone)]
enum Cell {
    Null,
    Bool(bool),
    Int(i64),
    Float(f64),
    Text(String),
}

impl Cell {
    fn of(v: &AnyValue) -> Cell {
        match v {
            AnyValue::Null => Cell::Null,
            AnyValue::Boolean(b) => Cell::Bool(*b),
            AnyValue::Int8(x) => Cell::Int(*x as i64),
            AnyValue::Int16(x) => Cell::Int(*x as i64),
            AnyValue::Int32(x) => Cell::Int(*x as i64),
            AnyValue::Int64(x) => Cell::Int(*x),
            AnyValue::UInt8(x) => Cell::Int(*x as i64),
            AnyValue::UInt16(x) => Cell::Int(*x as i64),
            AnyValue::UInt32(x) => Cell::Int(*x as i64),
            AnyValue::UInt64(x) if *x <= i64::MAX as u64 => Cell::Int(*x as i64),
            AnyValue::Float32(x) => Cell::Float(*x as f64),
            AnyValue::Float64(x) => Cell::Float(*x),
            AnyValue::String(s) => Cell::Text(s.to_string()),
            AnyValue::StringOwned(s) => Cell::Text(s.to_string()),
            other => Cell::Text(other.to_string()),
        }
    }
    /// bool < int < float < text; null fits anything.
    fn rank(&self) -> u8 {
        match self {
            Cell::Null => 0,
            Cell::Bool(_) => 1,
            Cell::Int(_) => 2,
            Cell::Float(_) => 3,
            Cell::Text(_) => 4,
        }
    }
    fn text(&self) -> Option<String> {
        match self {
            Cell::Null => None,
            Cell::Bool(b) => Some(b.to_string()),
            Cell::Int(x) => Some(x.to_string()),
            Cell::Float(x) => Some(x.to_string()),
            Cell::Text(s) => Some(s.clone()),
        }
    }
}

/// A cell-addressable column whose type is that of the values in it.
enum Cells {
    Null(usize),
    Bool(Vec<Option<bool>>),
    Int(Vec<Option<i64>>),
    Float(Vec<Option<f64>>),
    Text(Vec<Option<String>>),
}

impl Cells {
    fn rank(&self) -> u8 {
        match self {
            Cells::Null(_) => 0,
            Cells::Bool(_) => 1,
            Cells::Int(_) => 2,
            Cells::Float(_) => 3,
            Cells::Text(_) => 4,
        }
    }
    fn len(&self) -> usize {
        match self {
            Cells::Null(n) => *n,
            Cells::Bool(v) => v.len(),
            Cells::Int(v) => v.len(),
            Cells::Float(v) => v.len(),
            Cells::Text(v) => v.len(),
        }
    }
    /// Convert every cell to the kind of rank `to` (a copy of the whole column).
    fn widen(&mut self, to: u8) {
        let n = self.len();
        let old = std::mem::replace(self, Cells::Null(n));
        *self = match (to, old) {
            (1, Cells::Null(n)) => Cells::Bool(vec![None; n]),
            (2, Cells::Null(n)) => Cells::Int(vec![None; n]),
            (2, Cells::Bool(v)) => Cells::Int(v.into_iter().map(|b| b.map(i64::from)).collect()),
            (3, Cells::Null(n)) => Cells::Float(vec![None; n]),
            (3, Cells::Bool(v)) => Cells::Float(v.into_iter().map(|b| b.map(|b| if b { 1.0 } else { 0.0 })).collect()),
            (3, Cells::Int(v)) => Cells::Float(v.into_iter().map(|x| x.map(|x| x as f64)).collect()),
            (_, Cells::Null(n)) => Cells::Text(vec![None; n]),
            (_, Cells::Bool(v)) => Cells::Text(v.into_iter().map(|b| b.map(|b| b.to_string())).collect()),
            (_, Cells::Int(v)) => Cells::Text(v.into_iter().map(|x| x.map(|x| x.to_string())).collect()),
            (_, Cells::Float(v)) => Cells::Text(v.into_iter().map(|x| x.map(|x| x.to_string())).collect()),
            (_, t @ Cells::Text(_)) => t,
        };
    }
    /// Write one cell; the caller has made sure the cell fits (rank ≤ the column's).
    fn set(&mut self, i: usize, c: Cell) {
        match (self, c) {
            (Cells::Null(_), _) => {}
            (Cells::Bool(v), Cell::Bool(b)) => v[i] = Some(b),
            (Cells::Bool(v), _) => v[i] = None,
            (Cells::Int(v), Cell::Int(x)) => v[i] = Some(x),
            (Cells::Int(v), Cell::Bool(b)) => v[i] = Some(i64::from(b)),
            (Cells::Int(v), _) => v[i] = None,
            (Cells::Float(v), Cell::Float(x)) => v[i] = Some(x),
            (Cells::Float(v), Cell::Int(x)) => v[i] = Some(x as f64),
            (Cells::Float(v), Cell::Bool(b)) => v[i] = Some(if b { 1.0 } else { 0.0 }),
            (Cells::Float(v), _) => v[i] = None,
            (Cells::Text(v), c) => v[i] = c.text(),
        }
    }
    fn into_column(self, name: PlSmallStr) -> Column {
        match self {
            Cells::Null(n) => Series::full_null(name, n, &DataType::Null).into_column(),
            Cells::Bool(v) => BooleanChunked::from_iter_options(name, v.into_iter()).into_series().into_column(),
            Cells::Int(v) => Int64Chunked::from_iter_options(name, v.into_iter()).into_series().into_column(),
            Cells::Float(v) => Float64Chunked::from_iter_options(name, v.into_iter()).into_series().into_column(),
            Cells::Text(v) => StringChunked::from_iter_options(name, v.into_iter()).into_series().into_column(),
        }
    }
}

pub(super) struct FillCells {
    pub(super) column: ColumnRef,
    pub(super) typed: bool,
    pub(super) declared: DataType,
}

impl Step for FillCells {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "fill_cells";
        let df = input.into_frame(NAME)?;
        let src = column(&df, &self.column, Need::Any, NAME)?.clone();
        let src = src.as_materialized_series().rechunk();
        let n = src.len();
        let mut cells = if self.typed {
            match self.declared {
                DataType::Int64 => Cells::Int(vec![Some(i64::MIN); n]),
                DataType::String => Cells::Text(vec![Some(String::new()); n]),
                _ => Cells::Float(vec![Some(f64::NAN); n]),
            }
        } else {
            Cells::Null(n)
        };
        for (i, v) in src.iter().enumerate() {
            let mut c = Cell::of(&v);
            if self.typed {
                // Convert the value to the declared type; refuse what would not fit.
                c = match (&cells, c) {
                    (Cells::Int(_), Cell::Float(x)) if x.fract() == 0.0 && x.abs() < 9.0e18 => Cell::Int(x as i64),
                    (Cells::Int(_) | Cells::Float(_), Cell::Text(t)) => match t.trim().parse::<f64>() {
                        Ok(x) if matches!(cells, Cells::Float(_)) => Cell::Float(x),
                        Ok(x) if x.fract() == 0.0 && x.abs() < 9.0e18 => Cell::Int(x as i64),
                        _ => return Err(StepError::Value { step: NAME, message: format!("row {i}: `{t}` is not a {}", self.declared) }),
                    },
                    (Cells::Int(_), c @ Cell::Float(_)) => {
                        return Err(StepError::Value { step: NAME, message: format!("row {i}: {c:?} does not fit Int64") })
                    }
                    (_, c) => c,
                };
            } else if c.rank() > cells.rank() {
                cells.widen(c.rank());
            }
            cells.set(i, c);
        }
        let out = replace(NAME, df, cells.into_column(src.name().clone()))?;
        Ok(Value::Frame(out))
    }
}

pub(super) struct CastColumn {
    pub(super) column: ColumnRef,
    pub(super) declared: DataType,
}

impl Step for CastColumn {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "cast_column";
        let df = input.into_frame(NAME)?;
        let c = column(&df, &self.column, Need::Any, NAME)?.clone();
        let c = c.strict_cast(&self.declared).map_err(polars_err(NAME))?;
        Ok(Value::Frame(replace(NAME, df, c)?))
    }
}

pub(super) struct WriteCell {
    pub(super) column: ColumnRef,
    pub(super) row: f64,
    pub(super) value: String,
}

impl Step for WriteCell {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "write_cell";
        let df = input.into_frame(NAME)?;
        let c = column(&df, &self.column, Need::Any, NAME)?.clone();
        let n = c.len();
        if n == 0 {
            return Err(StepError::Value { step: NAME, message: "the table has no rows to write into".into() });
        }
        let k = ((self.row.clamp(0.0, 1.0) * (n - 1) as f64).floor() as usize).min(n - 1);
        let value = match self.value.as_str() {
            "text" => AnyValue::StringOwned("re-weigh".into()),
            "fraction" => AnyValue::Float64(0.5),
            _ => AnyValue::Null,
        };
        let s = c.as_materialized_series();
        let target = match value.dtype() {
            DataType::Null => s.dtype().clone(),
            DataType::String => DataType::String,
            // A fraction: floats keep their type, integers and booleans widen to Float64,
            // anything else (text, dates, …) only has text in common with it.
            _ => match s.dtype() {
                dt if dt.is_float() => dt.clone(),
                dt if dt.is_integer() || dt == &DataType::Boolean => DataType::Float64,
                _ => DataType::String,
            },
        };
        // The whole column takes the common type first (a copy when it changes).
        let whole = s.cast(&target).map_err(polars_err(NAME))?;
        let cell = Series::from_any_values(s.name().clone(), &[value], false)
            .and_then(|x| x.cast(&target))
            .map_err(polars_err(NAME))?;
        let mut out = whole.slice(0, k);
        out.append(&cell).map_err(polars_err(NAME))?;
        out.append(&whole.slice(k as i64 + 1, n - k - 1)).map_err(polars_err(NAME))?;
        let out = out.rechunk();
        Ok(Value::Frame(replace(NAME, df, out.into_column())?))
    }
}
