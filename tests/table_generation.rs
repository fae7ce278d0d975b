//! Synthetic tables: deterministic bit for bit, and each column has the properties its spec
//! asks for. Zipf frequencies are checked against the Zipf probability mass function
//! p(k) = k^-s / H(d, s) (the definition, e.g. NIST/SEMATECH e-Handbook of Statistical
//! Methods, "Zipf distribution"; the normalising sum is computed here).

use framecost::table::{fingerprint, generate};
use polars::prelude::*;

const SPEC: &str = r#"
name: gen
seed: 99
table:
  columns:
    - {name: id, kind: key}
    - {name: sorted_id, kind: key, order: sorted}
    - {name: dup_id, kind: key, duplicates: 0.25}
    - {name: farm, kind: category, distinct: 50}
    - {name: variety, kind: text, distinct: 20, skew: 1.2, length: [5, 9]}
    - {name: parcel, kind: int, range: [10, 20], nulls: 0.1}
    - {name: week, kind: int, range: [1, 52], order: clustered, run: 100}
    - {name: kilograms, kind: float, range: [0.5, 950.0], order: sorted}
    - {name: heavy, kind: float, range: [0, 1], order: reverse}
    - {name: picked_on, kind: date, range: [2026-06-01, 2026-06-30]}
    - {name: organic, kind: bool, true_share: 0.3}
sizes: [1k]
designs:
  - {name: a, feed: records, steps: [build_from_records]}
  - {name: b, feed: records, steps: [build_from_records]}
"#;

fn plan() -> framecost::plan::Plan {
    framecost::spec::load_str("gen.yaml", SPEC).expect("spec")
}

#[test]
fn same_spec_and_seed_give_the_same_table() {
    let p = plan();
    let a = generate(&p.columns, p.seed, 20_000).expect("table");
    let b = generate(&p.columns, p.seed, 20_000).expect("table");
    assert_eq!(fingerprint(&a), fingerprint(&b));
    assert!(a.equals_missing(&b));
    let c = generate(&p.columns, p.seed + 1, 20_000).expect("table");
    assert_ne!(fingerprint(&a), fingerprint(&c), "another seed gives another table");
    // Random-order columns do not depend on the table's size: a prefix is the smaller table.
    let small = generate(&p.columns, p.seed, 5_000).expect("table");
    for name in ["farm", "variety", "parcel", "picked_on", "organic"] {
        let big = a.column(name).expect("col").slice(0, 5_000);
        assert!(big.as_materialized_series().equals_missing(small.column(name).expect("col").as_materialized_series()), "{name}");
    }
}

#[test]
fn fingerprint_ignores_chunking_but_not_contents() {
    let p = plan();
    let df = generate(&p.columns, p.seed, 3_000).expect("table");
    let mut chunked = df.slice(0, 1000);
    chunked.vstack_mut(&df.slice(1000, 1000)).expect("vstack");
    chunked.vstack_mut(&df.slice(2000, 1000)).expect("vstack");
    assert!(chunked.max_n_chunks() >= 3);
    assert_eq!(fingerprint(&df), fingerprint(&chunked));
    let changed = df.slice(0, 2_999);
    assert_ne!(fingerprint(&df), fingerprint(&changed));
}

#[test]
fn columns_have_the_properties_asked_for() {
    let p = plan();
    let n = 200_000u64;
    let df = generate(&p.columns, p.seed, n).expect("table");
    assert_eq!(df.height() as u64, n);

    // Keys: unique, a permutation of 0..n; sorted keys sorted; duplicated keys ~25% repeats.
    let id = df.column("id").expect("id").as_materialized_series().clone();
    assert_eq!(id.n_unique().expect("unique") as u64, n);
    assert_eq!(id.min::<i64>().expect("min"), Some(0));
    assert_eq!(id.max::<i64>().expect("max"), Some(n as i64 - 1));
    let sorted = df.column("sorted_id").expect("col").as_materialized_series().i64().expect("i64").clone();
    assert!(sorted.into_no_null_iter().collect::<Vec<_>>().windows(2).all(|w| w[0] < w[1]));
    let dup = df.column("dup_id").expect("col").as_materialized_series().n_unique().expect("unique") as f64;
    let repeated = 1.0 - dup / n as f64;
    assert!((repeated - 0.25).abs() < 0.01, "share of repeated keys {repeated}");

    // Nulls: 10% ± 0.5% (binomial sd at n = 200k is 0.07%).
    let parcel = df.column("parcel").expect("col").as_materialized_series().clone();
    let share = parcel.null_count() as f64 / n as f64;
    assert!((share - 0.1).abs() < 0.005, "null share {share}");
    let pi = parcel.i64().expect("i64");
    assert_eq!(pi.min(), Some(10));
    assert_eq!(pi.max(), Some(20));

    // Distinct values: exactly the pool size at this many rows.
    let farm = df.column("farm").expect("col");
    assert!(matches!(farm.dtype(), DataType::Categorical(..)));
    assert_eq!(farm.as_materialized_series().n_unique().expect("unique"), 50);
    assert_eq!(df.column("variety").expect("col").as_materialized_series().n_unique().expect("unique"), 20);

    // Zipf skew s = 1.2 over 20 words: the commonest word's share is 1/H(20, 1.2).
    let h: f64 = (1..=20).map(|k| (k as f64).powf(-1.2)).sum();
    let variety = df.column("variety").expect("col").as_materialized_series().str().expect("str").clone();
    let mut counts = std::collections::HashMap::new();
    for v in variety.iter().flatten() {
        *counts.entry(v.to_string()).or_insert(0u64) += 1;
        assert!((5..=9).contains(&v.len()), "word length of {v}");
    }
    let mut freq: Vec<f64> = counts.values().map(|&c| c as f64 / n as f64).collect();
    freq.sort_by(|a, b| b.total_cmp(a));
    for (k, f) in freq.iter().take(3).enumerate() {
        let want = ((k + 1) as f64).powf(-1.2) / h;
        assert!((f - want).abs() < 0.005, "rank {} share {f} vs Zipf {want}", k + 1);
    }

    // Clustered: runs of 100 equal values.
    let week = df.column("week").expect("col").as_materialized_series().i64().expect("i64").clone();
    let w: Vec<i64> = week.into_no_null_iter().collect();
    assert!(w.chunks(100).all(|c| c.iter().all(|&x| x == c[0])));
    assert!(w.chunks(100).map(|c| c[0]).collect::<std::collections::HashSet<_>>().len() > 40);

    // Sorted and reverse floats; bounds kept.
    let kg: Vec<f64> = df.column("kilograms").expect("col").as_materialized_series().f64().expect("f64").into_no_null_iter().collect();
    assert!(kg.windows(2).all(|w| w[0] <= w[1]));
    assert!(kg[0] >= 0.5 && *kg.last().expect("last") <= 950.0);
    let heavy: Vec<f64> = df.column("heavy").expect("col").as_materialized_series().f64().expect("f64").into_no_null_iter().collect();
    assert!(heavy.windows(2).all(|w| w[0] >= w[1]));

    // Dates inside June 2026; booleans ~30% true.
    let dates = df.column("picked_on").expect("col");
    assert_eq!(dates.dtype(), &DataType::Date);
    let days = dates.as_materialized_series().to_physical_repr().i32().expect("i32").clone();
    // 2026-06-01 is day 20605 after 1970-01-01 (computed: 56 years incl. 14 leap days, + 151).
    assert_eq!(days.min(), Some(20605));
    assert_eq!(days.max(), Some(20634));
    let org = df.column("organic").expect("col").as_materialized_series().bool().expect("bool").clone();
    let t = org.sum().unwrap_or(0) as f64 / n as f64;
    assert!((t - 0.3).abs() < 0.005, "true share {t}");
}

#[test]
fn category_columns_hold_the_same_words_as_text_columns() {
    // Categories are built straight from category ids; their words and nulls must be the
    // ones the text path draws for the same column (same name, seed and parameters).
    let spec = |kind: &str| {
        format!(
            "name: g\nseed: 5\ntable:\n  columns:\n    - {{name: farm, kind: {kind}, distinct: 40, skew: 0.9, nulls: 5%, length: [3, 8]}}\nsizes: [1k]\ndesigns:\n  - {{name: a, feed: records, steps: [build_from_records]}}\n  - {{name: b, feed: records, steps: [build_from_records]}}\n"
        )
    };
    let cat = framecost::spec::load_str("c.yaml", &spec("category")).expect("spec");
    let text = framecost::spec::load_str("t.yaml", &spec("text")).expect("spec");
    let a = generate(&cat.columns, cat.seed, 30_000).expect("table");
    let b = generate(&text.columns, text.seed, 30_000).expect("table");
    let a = a.column("farm").expect("col");
    assert!(matches!(a.dtype(), DataType::Categorical(..)));
    let a = a.cast(&DataType::String).expect("cast");
    let b = b.column("farm").expect("col");
    assert!(a.as_materialized_series().equals_missing(b.as_materialized_series()));
    assert!(a.null_count() > 0);
}
