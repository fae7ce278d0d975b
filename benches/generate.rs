//! Table generation throughput of every column kind, each beside a plain memory copy of the
//! same number of bytes measured in the same run (the aim: numeric kinds — int, float,
//! date, key — at least 25% of the copy's speed, the others at least 10%).
//!
//! Criterion measures each kind and its copy (bytes per second, so the two read side by
//! side); then a summary times generator and copy interleaved (A B A B …, 15 rounds each,
//! medians) and prints generation speed as a share of copy speed per kind — ratios from one
//! run on one machine, never compared with a fixed time.

use criterion::{BenchmarkId, Criterion, Throughput};
use std::hint::black_box;
use std::time::Instant;

/// One column per kind, as a workload would write it.
const KINDS: &[(&str, &str)] = &[
    ("int", "{name: crates, kind: int, range: [0, 100000], nulls: 2%}"),
    ("float", "{name: kilograms, kind: float, range: [0.5, 950.0], nulls: 2%}"),
    ("bool", "{name: organic, kind: bool, true_share: 0.3}"),
    ("date", "{name: picked_on, kind: date, range: [2026-06-01, 2026-10-31]}"),
    ("key", "{name: line, kind: key}"),
    ("category", "{name: farm, kind: category, distinct: 120, skew: 0.8}"),
    ("text", "{name: variety, kind: text, distinct: 14, skew: 1.1}"),
];

const ROWS: u64 = 1 << 20;

fn plan(column: &str) -> framecost::plan::Plan {
    let text = format!(
        "name: bench\ntable:\n  columns:\n    - {column}\nsizes: [1k]\ndesigns:\n  - {{name: a, feed: records, steps: [build_from_records]}}\n  - {{name: b, feed: records, steps: [build_from_records]}}\n"
    );
    framecost::spec::load_str("bench.yaml", &text).expect("spec")
}

/// In-memory bytes of the generated column (values, offsets/views, validity).
fn column_bytes(p: &framecost::plan::Plan) -> usize {
    let df = framecost::table::generate(&p.columns, p.seed, ROWS).expect("table");
    df.estimated_size()
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() {
    let mut c = Criterion::default().sample_size(10).configure_from_args();
    let mut summary = Vec::new();
    for (kind, column) in KINDS {
        let p = plan(column);
        let bytes = column_bytes(&p);
        let src = vec![0x5au8; bytes];
        let mut dst = vec![0u8; bytes];
        let mut g = c.benchmark_group(format!("generate-{kind}"));
        g.throughput(Throughput::Bytes(bytes as u64));
        g.bench_function(BenchmarkId::new("generate", ROWS), |b| {
            b.iter(|| black_box(framecost::table::generate(&p.columns, p.seed, ROWS).expect("table")))
        });
        g.bench_function(BenchmarkId::new("copy-same-bytes", ROWS), |b| {
            b.iter(|| {
                dst.copy_from_slice(black_box(&src));
                black_box(&dst);
            })
        });
        g.finish();
        // Interleaved medians for the ratio.
        let (mut tg, mut tc) = (Vec::new(), Vec::new());
        for _ in 0..15 {
            let t = Instant::now();
            black_box(framecost::table::generate(&p.columns, p.seed, ROWS).expect("table"));
            tg.push(t.elapsed().as_secs_f64());
            let t = Instant::now();
            dst.copy_from_slice(black_box(&src));
            black_box(&dst);
            tc.push(t.elapsed().as_secs_f64());
        }
        summary.push((kind, bytes, median(tc) / median(tg)));
    }
    c.final_summary();
    println!("\ngeneration speed as a share of a memory copy of the same bytes ({ROWS} rows, same run):");
    for (kind, bytes, ratio) in summary {
        let aim = if matches!(*kind, "int" | "float" | "date" | "key") { 0.25 } else { 0.10 };
        let mark = if ratio >= aim { "meets" } else { "below" };
        println!("  {kind:<9} {:>8.1} MiB  {:>6.1}%  ({mark} the {:.0}% aim)", bytes as f64 / 1048576.0, ratio * 100.0, aim * 100.0);
    }
}
