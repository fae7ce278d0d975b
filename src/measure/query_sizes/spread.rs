//! How a column's values are spread, as the generator draws them (see the module above).

use crate::plan::{ColumnPlan, TablePlan};
use crate::results::schema::RangePlan;
use crate::spec::model::ColumnKind;

/// How a column's values are spread: the sum of their squared shares, the largest share,
/// both counting only the rows that can match (not null).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Spread {
    pub sum_sq: f64,
    pub largest: f64,
}

/// The share of row pairs of two columns that are equal: at most √(Σp²·Σq²), max p, max q.
pub fn match_share(a: &Spread, b: &Spread) -> f64 {
    (a.sum_sq * b.sum_sq).sqrt().min(a.largest).min(b.largest).min(1.0)
}

/// [`Spread`] of column `c` of table `t` at `rows` rows of the swept size, as the generator
/// draws it.
pub fn values(c: &ColumnPlan, t: &TablePlan, tables: &[TablePlan], rows: u64) -> Spread {
    let own = t.rows.at(rows).max(1) as f64;
    let over = |d: f64, skew: f64| if skew > 0.0 { zipf_spread(d, skew) } else { Spread { sum_sq: 1.0 / d, largest: 1.0 / d } };
    let referenced = c.references.as_deref().and_then(|r| {
        let (table, _) = r.split_once('.')?;
        let keys = tables.iter().find(|x| x.name == table)?.rows.at(rows).max(1) as f64;
        let drawn = (c.coverage * keys).ceil().clamp(1.0, keys);
        let z = over(drawn, c.skew);
        // The unmatched share is spread over as many values above the keys.
        let u = c.unmatched.clamp(0.0, 1.0);
        Some(Spread { sum_sq: (1.0 - u).powi(2) * z.sum_sq + u * u / keys, largest: ((1.0 - u) * z.largest).max(u / keys) })
    });
    let span = |a: f64, b: f64| (b - a).abs() + 1.0;
    let spread = match (referenced, c.distinct, c.kind, c.range) {
        (Some(s), _, _, _) => s,
        (None, Some(d), _, _) => over(d.max(1) as f64, c.skew),
        (None, None, ColumnKind::Bool, _) => {
            let t = c.true_share.clamp(0.0, 1.0);
            Spread { sum_sq: t * t + (1.0 - t) * (1.0 - t), largest: t.max(1.0 - t) }
        }
        (None, None, ColumnKind::Int, RangePlan::Int(a, b)) => over(span(a as f64, b as f64), 0.0),
        (None, None, ColumnKind::Date, RangePlan::Date(a, b)) => over(span(a as f64, b as f64), 0.0),
        // A key repeats earlier keys in its `duplicates` share: fewer values, counts unknown.
        (None, None, ColumnKind::Key, _) if c.duplicates > 0.0 => Spread { sum_sq: 1.0 / (own * (1.0 - c.duplicates).max(1e-9)), largest: 1.0 },
        _ => over(own, 0.0),
    };
    let live = (1.0 - c.nulls).clamp(0.0, 1.0);
    Spread { sum_sq: spread.sum_sq * live * live, largest: spread.largest * live }
}

/// Σp² and max p of Zipf(`s`) over `d` values (p_k ∝ k^-s, the generator's alias table): the
/// first 100 000 terms summed, the rest by the integral of x^-s.
fn zipf_spread(d: f64, s: f64) -> Spread {
    let head = d.min(100_000.0) as u64;
    let (mut h1, mut h2) = (0.0_f64, 0.0_f64);
    for k in 1..=head {
        let w = (k as f64).powf(-s);
        h1 += w;
        h2 += w * w;
    }
    if d > head as f64 {
        let tail = |e: f64| {
            let (a, b) = (head as f64 + 0.5, d + 0.5);
            if (e - 1.0).abs() < 1e-12 { (b / a).ln() } else { (b.powf(1.0 - e) - a.powf(1.0 - e)) / (1.0 - e) }
        };
        h1 += tail(s);
        h2 += tail(2.0 * s);
    }
    Spread { sum_sq: h2 / (h1 * h1), largest: 1.0 / h1 }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zipf_shares_match_a_direct_sum() {
        // Reference values: the same sums term by term in Python 3.11 floats (this session):
        // Σp² and max p of Zipf(s) over d values, p_k = k^-s / Σ j^-s.
        for (d, s, sum_sq, largest) in [
            (14.0, 0.6, 0.093_605_564_084_918_95, 0.187_488_795_682_185),
            (3_000_000.0, 1.1, 0.021_460_890_497_703_736, 0.119_991_803_062_505_23),
            (2_000_000.0, 0.5, 1.887_682_502_903_854_9e-6, 0.000_353_735_984_965_800_6),
        ] {
            let z = zipf_spread(d, s);
            assert!((z.sum_sq / sum_sq - 1.0).abs() < 1e-3, "d={d} s={s}: {z:?}");
            assert!((z.largest / largest - 1.0).abs() < 1e-3, "d={d} s={s}: {z:?}");
        }
    }
}
