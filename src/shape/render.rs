//! Writing an inferred table as a workload skeleton: YAML whose comments say what was
//! measured and why each key has its value.
//!
//! The text is written by hand (serde would drop the comments), then loaded back through
//! `spec::load_str` by the caller, so a skeleton that would not lint is never written.
//! One sample becomes a workload with one `table:` ([`workload`]). Several samples related
//! by key references become one workload with `tables:` ([`related_workload`]): the
//! referenced column is a key, the referring column an integer `references:` it, the
//! largest sample's table follows the swept size and the others keep their share of it,
//! and the placeholder designs are SQL joining them.

use super::infer::Inferred;
use super::refs::Reference;
use crate::spec::model::{Bound, ColumnSpec, Order};

/// A YAML scalar for a name, quoted when plain YAML would misread it.
pub fn yaml_str(s: &str) -> String {
    let plain = !s.is_empty()
        && s.chars().all(|c| c.is_alphanumeric() || c == '_' || c == '-' || c == '.' || c == ' ')
        && !s.starts_with([' ', '-', '.'])
        && !s.ends_with(' ')
        && s.parse::<f64>().is_err()
        && !matches!(s.to_lowercase().as_str(), "true" | "false" | "yes" | "no" | "null" | "on" | "off" | "y" | "n" | "~");
    if plain {
        s.to_string()
    } else {
        format!("\"{}\"", s.replace('\\', "\\\\").replace('"', "\\\""))
    }
}

fn bound(b: &Bound) -> String {
    match b {
        Bound::Int(i) => i.to_string(),
        Bound::Float(f) => {
            let t = format!("{f}");
            if t.contains(['.', 'e', 'E']) || t.contains("inf") || t.contains("NaN") {
                t
            } else {
                format!("{t}.0")
            }
        }
        Bound::Text(t) => t.clone(),
    }
}

/// One column as a flow mapping.
pub fn column_yaml(c: &ColumnSpec) -> String {
    let mut parts = vec![format!("name: {}", yaml_str(&c.name)), format!("kind: {}", c.kind.label())];
    if let Some(n) = c.nulls {
        parts.push(format!("nulls: {}", n.0));
    }
    if let Some(d) = c.distinct {
        parts.push(format!("distinct: {d}"));
    }
    if let Some(s) = c.skew {
        parts.push(format!("skew: {s}"));
    }
    if let Some(r) = &c.range {
        parts.push(format!("range: [{}]", r.iter().map(bound).collect::<Vec<_>>().join(", ")));
    }
    if let Some(l) = &c.length {
        parts.push(format!("length: [{}, {}]", l[0], l[1]));
    }
    if let Some(t) = c.true_share {
        parts.push(format!("true_share: {}", t.0));
    }
    if let Some(d) = c.duplicates {
        parts.push(format!("duplicates: {}", d.0));
    }
    let order = match c.order {
        Order::Random => None,
        Order::Sorted => Some("sorted"),
        Order::Reverse => Some("reverse"),
        Order::Clustered => Some("clustered"),
    };
    if let Some(o) = order {
        parts.push(format!("order: {o}"));
    }
    if let Some(r) = c.run {
        parts.push(format!("run: {r}"));
    }
    if let Some(r) = &c.references {
        parts.push(format!("references: {r}"));
    }
    if let Some(u) = c.unmatched {
        parts.push(format!("unmatched: {}", u.0));
    }
    if let Some(v) = c.coverage {
        parts.push(format!("coverage: {}", v.0));
    }
    format!("{{{}}}", parts.join(", "))
}

/// What the skeleton is made from.
pub struct TableDoc<'a> {
    pub name: &'a str,
    pub file: &'a str,
    pub rows: usize,
    pub seed: u64,
    /// The full data's row count (`shape --full-rows`): the skeleton's target.
    pub full_rows: Option<u64>,
    pub columns: &'a [Inferred],
    pub references: &'a [Reference],
    /// Top labels per column, only with `--keep-labels`.
    pub labels: &'a [(String, Vec<(String, u64)>)],
}

/// Smallest first size of a skeleton: below about a thousand rows a run is mostly fixed
/// cost, and growth does not show (a 300-row sample used to get sizes 75 to 1.2k rows).
pub const FIRST_SIZE_MIN: u64 = 1000;
/// Largest size a skeleton reaches without `--full-rows` (or four times the sample, when
/// that is more).
pub const LADDER_REACH: u64 = 256_000;
/// Most sizes a skeleton lists.
pub const LADDER_MOST: usize = 8;

/// The skeleton's sizes: from a quarter of the sample's rows (at least
/// [`FIRST_SIZE_MIN`], rounded down to 1, 2 or 5 times a power of ten) in steps of ×4, up to the full data's rows when known (`--full-rows`),
/// else to four times the sample or [`LADDER_REACH`], whichever is more; steps of ×2 when
/// ×4 would give fewer than five sizes; at most [`LADDER_MOST`] sizes. The sweep's own
/// guards skip or refuse sizes that would not fit its budgets or memory.
pub fn ladder(rows: usize, full: Option<u64>) -> Vec<u64> {
    // Rounded down to 1, 2 or 5 times a power of ten, so the sizes read as round numbers.
    let quarter = (rows as u64 / 4).max(FIRST_SIZE_MIN);
    let decade = 10u64.pow(quarter.ilog10());
    let start = [5, 2, 1].into_iter().map(|m| m * decade).find(|&s| s <= quarter).unwrap_or(decade);
    let reach = full.filter(|f| *f > start).unwrap_or_else(|| (rows as u64 * 4).max(LADDER_REACH));
    let steps = |factor: u64| {
        let mut v = vec![start];
        while v.len() < LADDER_MOST {
            let next = v[v.len() - 1] * factor;
            if next > reach {
                break;
            }
            v.push(next);
        }
        v
    };
    let four = steps(4);
    if four.len() >= 5 { four } else { steps(2) }
}

/// The sizes line and, with the full data's rows, the target line, with a comment.
pub(super) fn sizes_yaml(rows: usize, full: Option<u64>) -> String {
    let v = ladder(rows, full);
    let list = v.iter().map(|&n| crate::units::rows_label(n)).collect::<Vec<_>>().join(", ");
    match full {
        Some(f) => format!(
            "# sizes: from a quarter of the sample (at least 1k rows) towards the full data's {} rows
sizes: [{list}]
target: {}
",
            crate::units::rows_label(f),
            crate::units::rows_label(f)
        ),
        None => format!(
            "# sizes: from a quarter of the sample (at least 1k rows); give `shape --full-rows N` (or add
# `target: N`) for predictions at the full data's size
sizes: [{list}]
"
        ),
    }
}

/// What the related workload changes about a column: its spec and why, one comment line.
pub(super) type Remodel = Option<(ColumnSpec, String)>;

/// A table's columns as YAML list items indented by `pad`, each with its comments;
/// `remodel` replaces a column's inferred spec (keys and references of related tables).
pub(super) fn columns_yaml(t: &TableDoc, pad: &str, remodel: &dyn Fn(&Inferred) -> Remodel) -> String {
    let mut y = String::new();
    for c in t.columns {
        y += &format!("{pad}# {}: {} ({})\n", c.profile.name, c.measured, c.profile.dtype);
        if let Some((_, labels)) = t.labels.iter().find(|(n, _)| n == &c.profile.name) {
            let l: Vec<String> = labels.iter().map(|(v, k)| format!("{v} {k}")).collect();
            y += &format!("{pad}#   most frequent (kept with --keep-labels): {}\n", l.join(", "));
        }
        for r in t.references.iter().filter(|r| r.table == t.name && r.column == c.profile.name) {
            y += &format!(
                "{pad}#   refers to {}.{}: {} of its {} distinct values found there ({} values, unique)\n",
                r.refers_to_table, r.refers_to_column, r.found, r.distinct, r.target_values
            );
        }
        let changed = remodel(c);
        for ch in &c.choices {
            y += &format!("{pad}#   {ch}\n");
        }
        match (&changed, &c.spec) {
            (Some((spec, why)), _) => {
                y += &format!("{pad}#   {why}\n");
                y += &format!("{pad}- {}\n", column_yaml(spec));
            }
            (None, Ok(spec)) => y += &format!("{pad}- {}\n", column_yaml(spec)),
            (None, Err(reason)) => y += &format!("{pad}# NOT MODELLED: `{}`: {reason}\n", c.profile.name),
        }
    }
    y
}

/// The whole workload skeleton for one table.
pub fn workload(t: &TableDoc) -> String {
    let mut y = String::new();
    y += &format!("# Workload skeleton written by `framecost shape` from {} ({} rows).\n", t.file, t.rows);
    y += "# The table mirrors the sample; the designs below are placeholders: replace them with\n";
    y += "# the designs you want to compare. Comments say what was measured in the sample.\n";
    y += &format!("name: {}\n", t.name);
    y += &format!("about: >\n  A table shaped like {} ({} rows, {} columns).\n", t.file, t.rows, t.columns.len());
    y += &format!("seed: {}\n", t.seed);
    y += "table:\n  columns:\n";
    y += &columns_yaml(t, "    ", &|_| None);
    y += &sizes_yaml(t.rows, t.full_rows);
    y += "budget: {per_point: 2s, whole_run: 60s}\n";
    y += "designs:   # placeholders: two generic designs that work on any table\n";
    y += "  - name: build-once\n    feed: records\n    steps: [build_from_records]\n";
    y += "  - name: batches-of-256\n    feed: records\n    steps: [{append_rows: {batch: 256, consolidate: end}}]\n";
    y
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_that_yaml_would_misread_are_quoted() {
        assert_eq!(yaml_str("bill_length_mm"), "bill_length_mm");
        assert_eq!(yaml_str("yes"), "\"yes\"");
        assert_eq!(yaml_str("2024"), "\"2024\"");
        assert_eq!(yaml_str("a: b"), "\"a: b\"");
        assert_eq!(yaml_str("say \"hi\""), "\"say \\\"hi\\\"\"");
    }

    #[test]
    fn the_ladder_starts_at_a_quarter_of_the_sample_and_reaches_past_it() {
        // A small sample: from 1k rows (not 75), ×4, to 256k.
        assert_eq!(ladder(300, None), vec![1_000, 4_000, 16_000, 64_000, 256_000]);
        // A mid-size sample: ×4 would give three sizes up to 4× the sample, so ×2.
        assert_eq!(ladder(100_000, None), vec![20_000, 40_000, 80_000, 160_000, 320_000]);
        // Round first sizes: a quarter of 5364 rows is 1341, read as 1k.
        assert_eq!(ladder(5_364, None)[..3], [1_000, 4_000, 16_000]);
        // With the full data's rows: towards it, at most eight sizes.
        assert_eq!(ladder(300, Some(40_000_000)), vec![1_000, 4_000, 16_000, 64_000, 256_000, 1_024_000, 4_096_000, 16_384_000]);
        assert_eq!(ladder(2_000_000, Some(10_000_000)), vec![500_000, 1_000_000, 2_000_000, 4_000_000, 8_000_000]);
        // A full size below the first size is ignored.
        assert_eq!(ladder(8_000, Some(500)), ladder(8_000, None));
        let y = sizes_yaml(300, Some(40_000_000));
        assert!(y.contains("target: 40M\n") && y.contains("sizes: [1k, 4k,"), "{y}");
        assert!(!sizes_yaml(300, None).contains("\ntarget:"));
    }
}
