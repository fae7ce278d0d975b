//! The fidelity report: a sample's column statistics beside those of a table generated from
//! the inferred spec at the sample's size, with a flag where they differ beyond a stated
//! tolerance.
//!
//! Both sides are measured by the same code ([`super::profile`]), and the kind of both is
//! decided by the same rule ([`super::infer::classify`]), so a difference is the model's,
//! not the measurement's. The tolerances are in [`TOLERANCES`], printed with every report.

use super::profile::{Profile, ValueClass};
use serde::Serialize;

/// The tolerances, as printed with the report and written in the docs.
pub const TOLERANCES: &str = "kind equal; null share within 3 standard errors of a share at the sample's rows (at least 1 point); \
distinct within 10% rounded down (counts under 10 exact); p10/p50/p90 within 10% of the sample's min–max span (lengths: at least 1 character); \
most frequent value's share within 3 standard errors (at least 5 points)";

/// Largest difference of distinct counts that still matches: 10%, rounded down.
pub fn distinct_tolerance(d: f64) -> f64 {
    (0.1 * d).floor()
}

fn share_tolerance(p: f64, n: usize, floor: f64) -> f64 {
    (3.0 * (p * (1.0 - p) / n.max(1) as f64).sqrt()).max(floor)
}

/// One side of a comparison.
#[derive(Debug, Clone, Serialize)]
pub struct Side {
    /// framecost kind by the shape rule (None: cannot be modelled).
    pub kind: Option<String>,
    pub dtype: String,
    pub rows: usize,
    pub null_share: f64,
    pub distinct: usize,
    /// p10, p50, p90 of values (or of lengths for text, days for dates).
    pub percentiles: Option<[f64; 3]>,
    pub top_share: Option<f64>,
}

/// A column's comparison.
#[derive(Debug, Clone, Serialize)]
pub struct ColumnFidelity {
    pub column: String,
    /// What the percentiles are of: `values`, `days` or `lengths`.
    pub percentiles_of: &'static str,
    pub sample: Side,
    pub generated: Side,
    /// Statistics beyond tolerance: `kind`, `null_share`, `distinct`, `p10`, `p50`, `p90`, `top_share`.
    pub differs: Vec<String>,
}

fn side(p: &Profile) -> Side {
    Side {
        kind: super::infer::classify(p).ok().map(|k| k.label().to_string()),
        dtype: p.dtype.clone(),
        rows: p.rows,
        null_share: p.null_share(),
        distinct: p.distinct,
        percentiles: p.quantiles,
        top_share: p.top_share(),
    }
}

/// Compare a sample column with the generated one.
pub fn compare(sample: &Profile, generated: &Profile) -> ColumnFidelity {
    compare_as(sample, generated, false)
}

/// Compare a referring column of related samples with the generated reference: its values
/// are the referenced key's integers whatever the sample's were, so both sides are of kind
/// `reference` and only nulls, distinct values and the top share (how unevenly rows share a
/// key) are compared.
pub fn compare_reference(sample: &Profile, generated: &Profile) -> ColumnFidelity {
    compare_as(sample, generated, true)
}

fn compare_as(sample: &Profile, generated: &Profile, reference: bool) -> ColumnFidelity {
    let (mut a, mut b) = (side(sample), side(generated));
    if reference {
        for s in [&mut a, &mut b] {
            s.kind = Some("reference".into());
            s.percentiles = None;
        }
    }
    let mut differs = Vec::new();
    if a.kind != b.kind {
        differs.push("kind".to_string());
    }
    if (a.null_share - b.null_share).abs() > share_tolerance(a.null_share, a.rows, 0.01) {
        differs.push("null_share".into());
    }
    if (a.distinct as f64 - b.distinct as f64).abs() > distinct_tolerance(a.distinct as f64) {
        differs.push("distinct".into());
    }
    let text = sample.class == ValueClass::Text;
    // Generated keys are 0..rows−1 whatever the sample's keys were: their percentiles say
    // nothing about the model, so keys are compared on the other statistics only.
    let key = a.kind.as_deref() == Some("key");
    let (a, b) = if key { (Side { percentiles: None, ..a }, Side { percentiles: None, ..b }) } else { (a, b) };
    if let (Some(pa), Some(pb)) = (a.percentiles, b.percentiles) {
        let span = sample.max.unwrap_or(0.0) - sample.min.unwrap_or(0.0);
        let tol = (0.1 * span).max(if text { 1.0 } else { 0.0 });
        for (i, name) in ["p10", "p50", "p90"].iter().enumerate() {
            if (pa[i] - pb[i]).abs() > tol + 1e-9 * span.abs() {
                differs.push(name.to_string());
            }
        }
    } else if a.percentiles.is_some() != b.percentiles.is_some() {
        differs.push("p50".into());
    }
    match (a.top_share, b.top_share) {
        (Some(x), Some(y)) if (x - y).abs() > share_tolerance(x, sample.nonnull(), 0.05) => differs.push("top_share".into()),
        (Some(_), None) | (None, Some(_)) => differs.push("top_share".into()),
        _ => {}
    }
    let percentiles_of = match sample.class {
        _ if reference => "referenced keys (not compared)",
        _ if key => "keys (not compared)",
        ValueClass::Text => "lengths",
        ValueClass::Date => "days",
        _ => "values",
    };
    ColumnFidelity { column: sample.name.clone(), percentiles_of, sample: a, generated: b, differs }
}

fn num(x: f64) -> String {
    if x.fract() == 0.0 && x.abs() < 1e12 {
        format!("{}", x as i64)
    } else if x.abs() >= 100.0 {
        format!("{x:.1}")
    } else {
        format!("{x:.3}").trim_end_matches('0').trim_end_matches('.').to_string()
    }
}

fn pct(x: Option<f64>) -> String {
    x.map(|v| format!("{:.1}%", v * 100.0)).unwrap_or_else(|| "–".into())
}

fn triple(p: Option<[f64; 3]>) -> String {
    p.map(|q| format!("{}/{}/{}", num(q[0]), num(q[1]), num(q[2]))).unwrap_or_else(|| "–".into())
}

/// The report as text lines: one block per column, `sample ▸ generated`, a `≠` on every
/// statistic beyond tolerance.
pub fn render(table: &str, rows: usize, cols: &[ColumnFidelity]) -> String {
    let mut out = format!("fidelity of `{table}`: the sample ({rows} rows) ▸ a table generated from the inferred spec at {rows} rows\n");
    let w = cols.iter().map(|c| c.column.chars().count()).max().unwrap_or(6).max(6);
    let mark = |c: &ColumnFidelity, k: &str| if c.differs.iter().any(|d| d == k) { "≠" } else { " " };
    for c in cols {
        let kinds = format!("{} ▸ {}", c.sample.kind.as_deref().unwrap_or("—"), c.generated.kind.as_deref().unwrap_or("—"));
        let q = ["p10", "p50", "p90"].iter().map(|k| mark(c, k)).collect::<String>();
        out += &format!(
            "  {:<w$}  {}{:<21} nulls {}{:>6} ▸ {:<6} distinct {}{:>6} ▸ {:<6} top {}{:>6} ▸ {:<6} {} {}{} ▸ {}\n",
            c.column,
            mark(c, "kind"),
            kinds,
            mark(c, "null_share"),
            pct(Some(c.sample.null_share)),
            pct(Some(c.generated.null_share)),
            mark(c, "distinct"),
            c.sample.distinct,
            c.generated.distinct,
            mark(c, "top_share"),
            pct(c.sample.top_share),
            pct(c.generated.top_share),
            c.percentiles_of,
            if q.trim().is_empty() { " " } else { "≠" },
            triple(c.sample.percentiles),
            triple(c.generated.percentiles),
        );
    }
    let flagged: Vec<String> = cols.iter().filter(|c| !c.differs.is_empty()).map(|c| format!("{} ({})", c.column, c.differs.join(", "))).collect();
    if flagged.is_empty() {
        out += "  every statistic within tolerance\n";
    } else {
        out += &format!("  ≠ beyond tolerance: {}\n", flagged.join("; "));
    }
    out += &format!("  tolerances: {TOLERANCES}\n");
    out
}
