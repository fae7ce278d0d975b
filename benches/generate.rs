//! Table generation throughput, beside a plain memory copy of the same bytes measured in the
//! same run (the issue's aim: numeric columns at least one tenth of the copy's speed).
//! Both report elements per second where an element is one 8-byte cell.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use std::hint::black_box;

const NUMERIC: &str = r#"
name: bench-numeric
table:
  columns:
    - {name: parcel, kind: int, range: [1, 4000]}
    - {name: kilograms, kind: float, range: [0.5, 950.0]}
    - {name: crates, kind: int, range: [0, 100000], nulls: 2%}
    - {name: moisture, kind: float, range: [0, 1], nulls: 2%}
sizes: [1k]
designs:
  - {name: a, feed: records, steps: [build_from_records]}
  - {name: b, feed: records, steps: [build_from_records]}
"#;

const MIXED: &str = r#"
name: bench-mixed
table:
  columns:
    - {name: line, kind: key}
    - {name: farm, kind: category, distinct: 120, skew: 0.8}
    - {name: variety, kind: text, distinct: 14, skew: 1.1}
    - {name: picked_on, kind: date}
    - {name: organic, kind: bool}
sizes: [1k]
designs:
  - {name: a, feed: records, steps: [build_from_records]}
  - {name: b, feed: records, steps: [build_from_records]}
"#;

fn bench(c: &mut Criterion) {
    let numeric = framecost::spec::load_str("numeric.yaml", NUMERIC).expect("spec");
    let mixed = framecost::spec::load_str("mixed.yaml", MIXED).expect("spec");
    let rows: u64 = 1 << 20;
    let mut g = c.benchmark_group("generate");
    g.sample_size(20);
    let cells = rows * numeric.columns.len() as u64;
    g.throughput(Throughput::Elements(cells));
    g.bench_function(BenchmarkId::new("numeric-4-columns", rows), |b| {
        b.iter(|| black_box(framecost::table::generate(&numeric.columns, numeric.seed, rows).expect("table")))
    });
    // The same number of 8-byte cells copied with a plain memcpy.
    let src = vec![0x5au8; (cells * 8) as usize];
    let mut dst = vec![0u8; src.len()];
    g.bench_function(BenchmarkId::new("memcpy-same-bytes", rows), |b| {
        b.iter(|| {
            dst.copy_from_slice(black_box(&src));
            black_box(&dst);
        })
    });
    g.throughput(Throughput::Elements(rows * mixed.columns.len() as u64));
    g.bench_function(BenchmarkId::new("key-category-text-date-bool", rows), |b| {
        b.iter(|| black_box(framecost::table::generate(&mixed.columns, mixed.seed, rows).expect("table")))
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
