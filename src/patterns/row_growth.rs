//! Row growth: a table that arrives one record at a time.
//!
//! The job: turn a stream of records (a harvest ledger, a log, a sensor feed) into one
//! table. The designs differ in how often the growing table is copied. A newcomer must
//! know: every step here starts from `feed: records` (the records are made outside the
//! timed region) and ends with a table, so the designs' outputs can be compared cell by
//! cell.

use super::{polars_err, ParamDef, ParamKind, Params, Records, RunContext, Step, StepDef, StepError, Value, ValueKind};
use polars::frame::row::AnyValueBuffer;
use polars::prelude::*;

const CONSOLIDATE: &[&str] = &["each", "end", "never"];

/// The steps of this family.
pub const STEPS: &[StepDef] = &[
    StepDef {
        name: "append_rows",
        summary: "make a small table from each batch of records and append it to the growing table",
        cost_note: "Each append adds one chunk per column. With consolidate: each, the whole growing \
table is then copied into one contiguous block, so n rows cost about n²/(2·batch) row copies: \
quadratic in time and in bytes allocated. With consolidate: end, appends stay cheap (linear) and one \
copy at the end merges the chunks; with never, the result keeps one chunk per append and every \
later read pays for the fragmentation.",
        params: &[
            ParamDef { name: "batch", kind: ParamKind::per_rows(1, 10_000_000_000), default: "1", doc: "records per append" },
            ParamDef {
                name: "consolidate",
                kind: ParamKind::Choice(CONSOLIDATE),
                default: "each",
                doc: "when to merge chunks into contiguous storage: after each append, once at the end, or never",
            },
        ],
        takes: ValueKind::Records,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(AppendRows { batch: p.count("batch").max(1) as usize, consolidate: consolidate(p) })),
    },
    StepDef {
        name: "extend_rows",
        summary: "make a small table from each batch of records and extend the growing table's buffers with it",
        cost_note: "Asks polars to copy each batch's values onto the end of the growing table's own \
buffers. Numeric and boolean buffers that are not shared grow in place (amortized linear, one \
chunk); text columns are extended by adding the batch as a new chunk (polars 0.55), which is also \
linear but fragments storage like an append without consolidation. The output's chunk count shows \
it.",
        params: &[ParamDef { name: "batch", kind: ParamKind::per_rows(1, 10_000_000_000), default: "1", doc: "records per extend" }],
        takes: ValueKind::Records,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(ExtendRows { batch: p.count("batch").max(1) as usize })),
    },
    StepDef {
        name: "build_from_records",
        summary: "push every record's values into one typed buffer per column and build the table once",
        cost_note: "Each value is copied once into a growing typed buffer (capacity doubling, so amortized \
O(1) per value) and the table is built in one go: linear in time and bytes, one chunk per column. \
extra_passes > 0 repeats the build that many times and keeps the last, and slowdown: 15% keeps \
the core busy for 15% of the build's own time after it: deliberate, documented slowdowns for \
rehearsing that a regression gate catches one (a realistic 10-20% slowdown, or a doubling).",
        params: &[
            ParamDef {
                name: "extra_passes",
                kind: ParamKind::count(0, 100),
                default: "0",
                doc: "test knob: build the table this many extra times (slows the design by that factor + 1)",
            },
            ParamDef {
                name: "slowdown",
                kind: ParamKind::Number { min: 0.0, max: 10.0 },
                default: "0",
                doc: "test knob: after building, spin for this share of the build's own time (`15%` or 0.15), \
a slowdown by that fraction that allocates nothing",
            },
        ],
        takes: ValueKind::Records,
        gives: ValueKind::Frame,
        memory_factor: 3.0,
        disk_factor: 0.0,
        private_input: false,
        keeps_columns: false,
        build: |p| Ok(Box::new(BuildFromRecords { extra_passes: p.count("extra_passes"), slowdown: p.number("slowdown") })),
    },
];

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Consolidate {
    Each,
    End,
    Never,
}

fn consolidate(p: &Params) -> Consolidate {
    match p.choice("consolidate") {
        "end" => Consolidate::End,
        "never" => Consolidate::Never,
        _ => Consolidate::Each,
    }
}

fn records(step: &'static str, v: Value) -> Result<std::sync::Arc<Records>, StepError> {
    match v {
        Value::Records(r) => Ok(r),
        other => Err(StepError::WrongInput { step, wanted: "records", got: other.kind().label() }),
    }
}

struct AppendRows {
    batch: usize,
    consolidate: Consolidate,
}

impl Step for AppendRows {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "append_rows";
        let recs = records(NAME, input)?;
        let mut acc = DataFrame::empty_with_schema(&recs.schema);
        for rows in recs.rows.chunks(self.batch) {
            let piece = DataFrame::from_rows_and_schema(rows, &recs.schema).map_err(polars_err(NAME))?;
            acc.vstack_mut_owned(piece).map_err(polars_err(NAME))?;
            if self.consolidate == Consolidate::Each {
                acc.rechunk_mut();
            }
        }
        if self.consolidate == Consolidate::End {
            acc.rechunk_mut();
        }
        Ok(Value::Frame(acc))
    }
}

struct ExtendRows {
    batch: usize,
}

impl Step for ExtendRows {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "extend_rows";
        let recs = records(NAME, input)?;
        let mut acc = DataFrame::empty_with_schema(&recs.schema);
        for rows in recs.rows.chunks(self.batch) {
            let piece = DataFrame::from_rows_and_schema(rows, &recs.schema).map_err(polars_err(NAME))?;
            if acc.height() == 0 {
                acc = piece;
            } else {
                acc.extend(&piece).map_err(polars_err(NAME))?;
            }
        }
        Ok(Value::Frame(acc))
    }
}

struct BuildFromRecords {
    extra_passes: u64,
    /// Share of the build's own time to spin afterwards (the fractional slowdown knob).
    slowdown: f64,
}

impl Step for BuildFromRecords {
    fn run(&self, input: Value, _ctx: &RunContext) -> Result<Value, StepError> {
        const NAME: &str = "build_from_records";
        let recs = records(NAME, input)?;
        let t0 = std::time::Instant::now();
        for _ in 0..self.extra_passes {
            std::hint::black_box(build(&recs)?);
        }
        let out = build(&recs).map(Value::Frame);
        crate::measure::execute::spin_after(t0, self.slowdown);
        out
    }
}

/// One typed buffer per column, filled row by row, then one table.
fn build(recs: &Records) -> Result<DataFrame, StepError> {
    const NAME: &str = "build_from_records";
    {
        let mut buffers: Vec<AnyValueBuffer> =
            recs.schema.iter().map(|(_, dt)| AnyValueBuffer::new(dt, 0)).collect();
        for row in &recs.rows {
            for ((buf, v), (name, dtype)) in buffers.iter_mut().zip(row.0.iter()).zip(recs.schema.iter()) {
                if buf.add(v.clone()).is_none() {
                    return Err(StepError::Value {
                        step: NAME,
                        message: format!("value {v} does not fit column `{name}` of dtype {dtype}"),
                    });
                }
            }
        }
        let mut columns: Vec<Column> = Vec::with_capacity(buffers.len());
        for (b, (name, _)) in buffers.into_iter().zip(recs.schema.iter()) {
            columns.push(b.into_series().map_err(polars_err(NAME))?.with_name(name.clone()).into_column());
        }
        DataFrame::new(recs.len(), columns).map_err(polars_err(NAME))
    }
}
