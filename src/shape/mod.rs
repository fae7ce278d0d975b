//! Tables shaped like the user's data: read samples, measure every column, infer a table
//! spec that framecost's generator can build, and check the result by generating a table
//! from that spec at the sample's size and measuring it the same way.
//!
//! The flow is one way: [`read`] (file → DataFrame) → [`profile`] (column → statistics) →
//! [`infer`] (statistics → column spec and the reasons) → [`render`] (specs → commented YAML,
//! loaded back through `spec::load_str` so it always lints) → `table::generate` at the
//! sample's rows → [`profile`] again → [`fidelity`] (the two side by side). With several
//! samples, [`refs`] finds key references between them, and [`related`] writes them as one
//! workload with `tables:` when it finds some. A newcomer must know: raw values
//! never reach the spec (generated labels are synthetic); only `--keep-labels` copies the
//! most frequent labels, into comments.

pub mod fidelity;
pub mod infer;
pub mod profile;
pub mod read;
pub mod refs;
pub mod related;
pub mod render;

use polars::prelude::*;
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Version of `shape --json` output.
pub const SCHEMA: &str = "framecost.shape/1";

/// How to shape.
#[derive(Debug, Clone, Default)]
pub struct ShapeOptions {
    pub read: read::ReadOptions,
    pub keep_labels: bool,
    pub seed: u64,
    /// The full data's row count (of the largest table when samples are related).
    pub full_rows: Option<u64>,
}

/// One sample's outcome.
pub struct TableShape {
    pub name: String,
    pub file: PathBuf,
    pub rows: usize,
    pub columns: Vec<infer::Inferred>,
    /// The workload skeleton (checked: it lints).
    pub spec_text: String,
    /// The sample beside a table generated from the spec at the sample's rows: this table's
    /// own skeleton, or — when the samples are related — the related workload's table.
    pub fidelity: Vec<fidelity::ColumnFidelity>,
    /// Top labels per text column (`--keep-labels` only).
    pub labels: Vec<(String, Vec<(String, u64)>)>,
}

/// Samples related by key references, as one workload with `tables:`.
pub struct RelatedShape {
    pub layout: related::Layout,
    /// The workload (checked: it lints).
    pub spec_text: String,
}

/// Everything `shape` found.
pub struct ShapeOutcome {
    pub tables: Vec<TableShape>,
    pub references: Vec<refs::Reference>,
    /// Several samples with references between them: one workload relating them (the
    /// per-sample skeletons are then not written).
    pub related: Option<RelatedShape>,
}

/// A workload name from a file's stem: letters, digits, `-` and `_`, at most 64.
pub fn table_name(path: &Path, taken: &[String]) -> String {
    let stem = path.file_stem().map(|s| s.to_string_lossy().to_string()).unwrap_or_default();
    let mut base: String = stem.chars().map(|c| if c.is_ascii_alphanumeric() || c == '-' || c == '_' { c } else { '-' }).take(60).collect();
    if base.is_empty() {
        base = "sample".into();
    }
    let mut name = base.clone();
    let mut i = 2;
    while taken.contains(&name) {
        name = format!("{base}-{i}");
        i += 1;
    }
    name
}

/// The most frequent labels of a text column (for `--keep-labels`).
fn top_labels(s: &Series, k: usize) -> Vec<(String, u64)> {
    let Ok(t) = s.cast(&DataType::String) else { return Vec::new() };
    let Ok(ca) = t.str() else { return Vec::new() };
    let mut m: std::collections::HashMap<&str, u64> = std::collections::HashMap::new();
    for v in ca.iter().flatten() {
        *m.entry(v).or_insert(0) += 1;
    }
    let mut v: Vec<(String, u64)> = m.into_iter().map(|(a, b)| (a.to_string(), b)).collect();
    v.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
    v.truncate(k);
    v
}

/// Shape every sample.
pub fn shape(paths: &[PathBuf], opts: &ShapeOptions) -> Result<ShapeOutcome, String> {
    let available = crate::measure::machine::available_memory();
    let mut names: Vec<String> = Vec::new();
    let mut frames = Vec::new();
    for p in paths {
        let df = read::read_sample(p, &opts.read, available)?;
        if df.width() == 0 {
            return Err(format!("{}: the file has no columns", p.display()));
        }
        names.push(table_name(p, &names));
        frames.push(df);
    }
    let named: Vec<(String, &DataFrame)> = names.iter().cloned().zip(frames.iter()).collect();
    let references = if frames.len() > 1 { refs::find(&named) } else { Vec::new() };
    let mut tables = Vec::new();
    for ((name, df), path) in named.iter().zip(paths) {
        let profiles = profile::profile_all(df).map_err(|e| format!("{}: {e}", path.display()))?;
        let columns: Vec<infer::Inferred> = profiles.iter().map(infer::infer).collect();
        let labels: Vec<(String, Vec<(String, u64)>)> = if opts.keep_labels {
            columns
                .iter()
                .filter(|c| c.profile.class == profile::ValueClass::Text)
                .map(|c| (c.profile.name.clone(), df.column(&c.profile.name).map(|s| top_labels(s.as_materialized_series(), 5)).unwrap_or_default()))
                .collect()
        } else {
            Vec::new()
        };
        let file = path.display().to_string();
        let doc = render::TableDoc { name, file: &file, rows: df.height(), seed: opts.seed, full_rows: opts.full_rows, columns: &columns, references: &references, labels: &labels };
        let spec_text = render::workload(&doc);
        let plan = crate::spec::load_str(&format!("{name}.yaml"), &spec_text)
            .map_err(|e| format!("{}: the inferred spec does not lint (a framecost bug; please report it):\n{e}", path.display()))?;
        let generated = crate::table::generate(&plan.columns, plan.seed, df.height() as u64)
            .map_err(|e| format!("{}: could not generate a table from the inferred spec: {e}", path.display()))?;
        let fidelity = fidelity_of(&columns, &generated, &[])?;
        tables.push(TableShape { name: name.clone(), file: path.clone(), rows: df.height(), columns, spec_text, fidelity, labels });
    }
    let related = relate(&mut tables, &references, opts.seed, opts.full_rows)?;
    Ok(ShapeOutcome { tables, references, related })
}

/// Each modelled column of a sample beside the generated one; `referring` columns are
/// compared as references (their values are the referenced key's integers).
fn fidelity_of(columns: &[infer::Inferred], generated: &DataFrame, referring: &[&str]) -> Result<Vec<fidelity::ColumnFidelity>, String> {
    let gen_profiles = profile::profile_all(generated)?;
    Ok(columns
        .iter()
        .filter(|c| c.spec.is_ok() || referring.contains(&c.profile.name.as_str()))
        .filter_map(|c| {
            let g = gen_profiles.iter().find(|g| g.name == c.profile.name)?;
            Some(if referring.contains(&c.profile.name.as_str()) { fidelity::compare_reference(&c.profile, g) } else { fidelity::compare(&c.profile, g) })
        })
        .collect())
}

/// The related workload of samples with references between them, and each table's fidelity
/// against it (generated as a sweep does, at the largest sample's rows).
fn relate(tables: &mut [TableShape], references: &[refs::Reference], seed: u64, full_rows: Option<u64>) -> Result<Option<RelatedShape>, String> {
    let sizes: Vec<(&str, usize)> = tables.iter().map(|t| (t.name.as_str(), t.rows)).collect();
    let Some(layout) = related::layout(&sizes, references) else { return Ok(None) };
    let files: Vec<String> = tables.iter().map(|t| t.file.display().to_string()).collect();
    let docs: Vec<render::TableDoc> = tables
        .iter()
        .zip(&files)
        .map(|(t, file)| render::TableDoc { name: &t.name, file, rows: t.rows, seed, full_rows, columns: &t.columns, references, labels: &t.labels })
        .collect();
    let spec_text = related::workload(&layout, &docs, seed);
    let plan = crate::spec::load_str("related.yaml", &spec_text)
        .map_err(|e| format!("the related workload does not lint (a framecost bug; please report it):\n{e}"))?;
    let generated = crate::table::related::generate_tables(&plan.tables, plan.seed, plan.related, tables[layout.swept].rows as u64)
        .map_err(|e| format!("could not generate the related tables: {e}"))?;
    for (i, t) in tables.iter_mut().enumerate() {
        let Some((_, df)) = generated.iter().find(|(n, _)| n == &layout.names[i]) else { continue };
        let referring: Vec<&str> = layout.used.iter().filter(|r| r.table == t.name).map(|r| r.column.as_str()).collect();
        t.fidelity = fidelity_of(&t.columns, df, &referring)?;
    }
    Ok(Some(RelatedShape { layout, spec_text }))
}

/// `shape --json`: everything as one document.
#[derive(Serialize)]
pub struct JsonOut<'a> {
    pub schema: &'static str,
    pub tolerances: &'static str,
    pub tables: Vec<JsonTable<'a>>,
    pub references: &'a [refs::Reference],
    /// Samples related by references: the one workload written for them (else null).
    pub related: Option<JsonRelated<'a>>,
}

#[derive(Serialize)]
pub struct JsonRelated<'a> {
    /// Where the workload was written (None: not written).
    pub spec_file: Option<String>,
    pub spec: &'a str,
    /// The tables' names in the workload, in the samples' order.
    pub tables: &'a [String],
    /// The table whose rows follow the swept size.
    pub swept_table: &'a str,
    /// The references stated as `references:` keys.
    pub references: &'a [refs::Reference],
}

#[derive(Serialize)]
pub struct JsonTable<'a> {
    pub name: &'a str,
    pub file: String,
    pub rows: usize,
    /// Where the skeleton was written (None: not written, or written as part of `related`).
    pub spec_file: Option<String>,
    pub spec: &'a str,
    pub columns: Vec<JsonColumn<'a>>,
    pub not_modelled: Vec<JsonUnmodelled<'a>>,
    pub fidelity: &'a [fidelity::ColumnFidelity],
}

#[derive(Serialize)]
pub struct JsonColumn<'a> {
    pub name: &'a str,
    pub dtype: &'a str,
    pub kind: &'a str,
    pub measured: &'a str,
    pub choices: &'a [String],
    pub distinct_growth_exponent: Option<f64>,
    pub spec: &'a crate::spec::model::ColumnSpec,
}

#[derive(Serialize)]
pub struct JsonUnmodelled<'a> {
    pub name: &'a str,
    pub dtype: &'a str,
    pub reason: &'a str,
}

impl ShapeOutcome {
    /// `written`: where each skeleton went — the related workload alone when there is one,
    /// else one per table.
    pub fn json(&self, written: &[Option<String>]) -> serde_json::Value {
        let own = |i: usize| if self.related.is_some() { None } else { written.get(i).cloned().flatten() };
        let tables = self
            .tables
            .iter()
            .enumerate()
            .map(|(i, t)| JsonTable {
                name: &t.name,
                file: t.file.display().to_string(),
                rows: t.rows,
                spec_file: own(i),
                spec: &t.spec_text,
                columns: t
                    .columns
                    .iter()
                    .filter_map(|c| {
                        c.spec.as_ref().ok().map(|s| JsonColumn {
                            name: &c.profile.name,
                            dtype: &c.profile.dtype,
                            kind: s.kind.label(),
                            measured: &c.measured,
                            choices: &c.choices,
                            distinct_growth_exponent: c.growth,
                            spec: s,
                        })
                    })
                    .collect(),
                not_modelled: t
                    .columns
                    .iter()
                    .filter_map(|c| c.spec.as_ref().err().map(|r| JsonUnmodelled { name: &c.profile.name, dtype: &c.profile.dtype, reason: r }))
                    .collect(),
                fidelity: &t.fidelity,
            })
            .collect();
        let related = self.related.as_ref().map(|r| JsonRelated {
            spec_file: written.first().cloned().flatten(),
            spec: &r.spec_text,
            tables: &r.layout.names,
            swept_table: &r.layout.names[r.layout.swept],
            references: &r.layout.used,
        });
        serde_json::to_value(JsonOut { schema: SCHEMA, tolerances: fidelity::TOLERANCES, tables, references: &self.references, related }).unwrap_or_default()
    }
}
