//! A table split into pieces (one of them retyped, as one shed's export would be) and the
//! pieces stacked back together: strictly, relaxed to a common supertype, or each cast to
//! the declared schema first.

use super::{replace, PIECES};
use crate::patterns::{column, polars_err, ColumnRef, Need, RunContext, Step, StepError, Value};
use polars::prelude::*;
use std::sync::Arc;

/// Pieces of one table, as `split_into_pieces` leaves them.
pub struct Pieces(pub Vec<DataFrame>);

pub(super) struct SplitIntoPieces {
    pub(super) parts: usize,
    pub(super) column: ColumnRef,
    pub(super) retype: String,
}

impl Step for SplitIntoPieces {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "split_into_pieces";
        let df = input.into_frame(NAME)?;
        let c = column(&df, &self.column, Need::Any, NAME)?.clone();
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

pub(super) struct StackPieces {
    pub(super) mode: String,
    pub(super) column: ColumnRef,
    pub(super) declared: DataType,
}

impl Step for StackPieces {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
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
                let name = column(first, &self.column, Need::Any, NAME)?.name().clone();
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
