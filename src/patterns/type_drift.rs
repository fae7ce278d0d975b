//! Type drift: a column whose dtype ends up other than the schema declares.
//!
//! The job: the shed's schema declares `kilograms` as Float64, but the small shed's scale
//! reports whole kilograms and one shed exports its readings as text. Filling a column
//! created empty (all nulls, dtype Null) one cell at a time lets each written value decide
//! the dtype — it ends as whatever the readings happened to be (Int64 here), not the
//! declared Float64; a column created typed (with a sentinel in every cell) keeps its type.
//! Writing one value of another type into a typed column casts the whole column. Stacking
//! pieces whose dtypes differ either fails (strict), or silently widens to a common
//! supertype (relaxed — text, if one piece is text), unless each piece is cast to the
//! declared schema first. A newcomer must know: the evidence here is the output's dtypes
//! (recorded with every point), and the designs that drift are *meant* to disagree with
//! the ones that keep the schema — the workload declares that in `outputs_differ`.

use super::{polars_err, ParamDef, ParamKind, Params, Step, StepDef, StepError, Value, ValueKind};
use polars::prelude::*;
use std::sync::Arc;

const DECLARED: &[&str] = &["float", "int", "text"];
const COLUMN: ParamDef =
    ParamDef { name: "column", kind: ParamKind::position(), default: "0", doc: "position of the column (0 = first)" };
const DECLARED_PARAM: ParamDef =
    ParamDef { name: "declared", kind: ParamKind::Choice(DECLARED), default: "float", doc: "the dtype the schema declares: Float64, Int64 or String" };
/// The name of the value `split_into_pieces` passes to `stack_pieces`.
pub const PIECES: &str = "table pieces";

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "fill_cells",
        summary: "rebuild a column by writing its values one cell at a time into a new column, created empty or typed",
        cost_note: "Linear: one write per row into a cell-addressable buffer. With start: empty the column \
begins with dtype Null and every value of a wider kind than the column holds (bool < int < float < \
text) first converts every cell written so far (one O(n) copy per widening), and the column ends \
with the dtype of the values seen — not the declared one (drift). With start: typed the column \
begins in the declared dtype, every cell holding a sentinel (NaN, the smallest Int64, or empty \
text), and each written value is converted to it: no widening, no drift. Bytes ≈ one buffer of \
the column, plus a copy per widening.",
        params: &[
            COLUMN,
            ParamDef { name: "start", kind: ParamKind::Choice(&["empty", "typed"]), default: "empty", doc: "create the new column all-null (untyped) or typed with a sentinel" },
            DECLARED_PARAM,
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        build: |p| Box::new(FillCells { column: p.count("column") as usize, typed: p.choice("start") == "typed", declared: declared(p) }),
    },
    StepDef {
        name: "cast_column",
        summary: "cast one column to the declared dtype in one vectorised pass",
        cost_note: "One pass writing a new buffer of the declared dtype: linear time, bytes ≈ one column \
(nothing when the column already has that dtype). Fails, rather than guess, when a value cannot be \
represented (strict cast).",
        params: &[COLUMN, DECLARED_PARAM],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        build: |p| Box::new(CastColumn { column: p.count("column") as usize, declared: declared(p) }),
    },
    StepDef {
        name: "write_cell",
        summary: "write one value (a text note, a missing value, or a fraction) into one cell of a typed column",
        cost_note: "Columns are immutable shared buffers, so changing one cell copies the column (linear \
time and bytes for a single value). If the value's type does not fit the column, the whole column \
is first cast to the common supertype — a text note turns a numeric column into text (String): \
the dtype drifts and every later numeric operation on it fails or must parse.",
        params: &[
            COLUMN,
            ParamDef { name: "row", kind: ParamKind::Number { min: 0.0, max: 1.0 }, default: "0.5", doc: "which row, as a share of the table's rows" },
            ParamDef { name: "value", kind: ParamKind::Choice(&["text", "missing", "fraction"]), default: "text", doc: "the value written: the note `re-weigh`, a missing value (null), or 0.5" },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        build: |p| Box::new(WriteCell { column: p.count("column") as usize, row: p.number("row"), value: p.choice("value").to_string() }),
    },
    StepDef {
        name: "split_into_pieces",
        summary: "cut the table into equal pieces, every other one with a column re-typed (as another shed's export would be)",
        cost_note: "Slicing is free; each re-typed piece costs one cast of its column (linear in its rows). \
Usually set-up for `stack_pieces`.",
        params: &[
            ParamDef { name: "parts", kind: ParamKind::per_rows(1, 1_000_000).costing(1024.0, 0.0), default: "8", doc: "number of pieces" },
            COLUMN,
            ParamDef { name: "retype", kind: ParamKind::Choice(&["float", "text", "none"]), default: "text", doc: "dtype of the column in the odd-numbered pieces" },
        ],
        takes: ValueKind::Frame,
        gives: ValueKind::Custom(PIECES),
        memory_factor: 2.0,
        disk_factor: 0.0,
        private_input: false,
        build: |p| Box::new(SplitIntoPieces { parts: p.count("parts").max(1) as usize, column: p.count("column") as usize, retype: p.choice("retype").to_string() }),
    },
    StepDef {
        name: "stack_pieces",
        summary: "stack table pieces into one table: strict, conformed to the declared dtype, or relaxed to a supertype",
        cost_note: "Linear in the rows: the pieces' chunks are collected, then merged into one chunk per \
column. mode: strict fails at the first piece whose dtypes differ; conform first casts the column \
of every piece to the declared dtype (one pass each); relaxed lets polars cast every piece to the \
common supertype of the pieces — correct values, but the dtype drifts (to text as soon as one \
piece holds the column as text).",
        params: &[
            ParamDef { name: "mode", kind: ParamKind::Choice(&["strict", "conform", "relaxed"]), default: "strict", doc: "how differing dtypes are handled" },
            COLUMN,
            DECLARED_PARAM,
        ],
        takes: ValueKind::Custom(PIECES),
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        build: |p| Box::new(StackPieces { mode: p.choice("mode").to_string(), column: p.count("column") as usize, declared: declared(p) }),
    },
];

fn declared(p: &Params) -> DataType {
    match p.choice("declared") {
        "int" => DataType::Int64,
        "text" => DataType::String,
        _ => DataType::Float64,
    }
}

fn column_at(step: &'static str, df: &DataFrame, pos: usize) -> Result<Column, StepError> {
    df.columns().get(pos).cloned().ok_or_else(|| StepError::Value {
        step,
        message: format!("the table has {} columns, so there is no column at position {pos}", df.width()),
    })
}

/// Put `c` in place of the column of the same name, keeping its position.
fn replace(step: &'static str, mut df: DataFrame, c: Column) -> Result<DataFrame, StepError> {
    df.with_column(c).map_err(polars_err(step))?;
    Ok(df)
}

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

struct FillCells {
    column: usize,
    typed: bool,
    declared: DataType,
}

impl Step for FillCells {
    fn run(&self, input: Value) -> Result<Value, StepError> {
        const NAME: &str = "fill_cells";
        let df = input.into_frame(NAME)?;
        let src = column_at(NAME, &df, self.column)?;
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

struct CastColumn {
    column: usize,
    declared: DataType,
}

impl Step for CastColumn {
    fn run(&self, input: Value) -> Result<Value, StepError> {
        const NAME: &str = "cast_column";
        let df = input.into_frame(NAME)?;
        let c = column_at(NAME, &df, self.column)?;
        let c = c.strict_cast(&self.declared).map_err(polars_err(NAME))?;
        Ok(Value::Frame(replace(NAME, df, c)?))
    }
}

struct WriteCell {
    column: usize,
    row: f64,
    value: String,
}

impl Step for WriteCell {
    fn run(&self, input: Value) -> Result<Value, StepError> {
        const NAME: &str = "write_cell";
        let df = input.into_frame(NAME)?;
        let c = column_at(NAME, &df, self.column)?;
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

/// Pieces of one table, as `split_into_pieces` leaves them.
pub struct Pieces(pub Vec<DataFrame>);

struct SplitIntoPieces {
    parts: usize,
    column: usize,
    retype: String,
}

impl Step for SplitIntoPieces {
    fn run(&self, input: Value) -> Result<Value, StepError> {
        const NAME: &str = "split_into_pieces";
        let df = input.into_frame(NAME)?;
        let c = column_at(NAME, &df, self.column)?;
        let to = match self.retype.as_str() {
            "float" => Some(DataType::Float64),
            "text" => Some(DataType::String),
            _ => None,
        };
        let size = df.height().div_ceil(self.parts).max(1);
        let mut pieces = Vec::with_capacity(self.parts);
        let mut off = 0usize;
        let mut i = 0usize;
        while off < df.height() || (pieces.is_empty() && df.height() == 0) {
            let piece = df.slice(off as i64, size);
            let piece = match &to {
                Some(dt) if i % 2 == 1 => {
                    let cast = piece.column(c.name()).map_err(polars_err(NAME))?.cast(dt).map_err(polars_err(NAME))?;
                    replace(NAME, piece, cast)?
                }
                _ => piece,
            };
            pieces.push(piece);
            off += size;
            i += 1;
            if df.height() == 0 {
                break;
            }
        }
        Ok(Value::Custom(PIECES, Arc::new(Pieces(pieces))))
    }
}

struct StackPieces {
    mode: String,
    column: usize,
    declared: DataType,
}

impl Step for StackPieces {
    fn run(&self, input: Value) -> Result<Value, StepError> {
        const NAME: &str = "stack_pieces";
        let pieces: Arc<Pieces> = input.into_custom(NAME, PIECES)?;
        let Some(first) = pieces.0.first() else {
            return Err(StepError::Value { step: NAME, message: "no pieces to stack".into() });
        };
        let mut out = match self.mode.as_str() {
            "relaxed" => {
                let lazy: Vec<LazyFrame> = pieces.0.iter().map(|p| p.clone().lazy()).collect();
                let args = UnionArgs { to_supertypes: true, diagonal: true, rechunk: false, ..Default::default() };
                concat(lazy, args).and_then(|lf| lf.collect()).map_err(polars_err(NAME))?
            }
            mode => {
                let conform = mode == "conform";
                let name = column_at(NAME, first, self.column)?.name().clone();
                let fix = |p: &DataFrame| -> Result<DataFrame, StepError> {
                    if !conform {
                        return Ok(p.clone());
                    }
                    let c = p.column(&name).map_err(polars_err(NAME))?.strict_cast(&self.declared).map_err(polars_err(NAME))?;
                    replace(NAME, p.clone(), c)
                };
                let mut acc = fix(first)?;
                for p in &pieces.0[1..] {
                    acc.vstack_mut_owned(fix(p)?).map_err(polars_err(NAME))?;
                }
                acc
            }
        };
        out.rechunk_mut();
        Ok(Value::Frame(out))
    }
}
