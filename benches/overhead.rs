//! The measurement loop's own overhead: what one sample costs beyond the design itself —
//! two clock reads, two CPU-clock reads and an allocation window — and the counting
//! allocator's cost per allocation; plus the per-size statistics (median interval and the
//! bootstrap of ratios).

use criterion::{criterion_group, criterion_main, Criterion};
use framecost::measure::alloc::Window;
use framecost::measure::clock::process_cpu_ns;
use framecost::measure::stats::{median_ci_sorted, ratio_ci};
use std::hint::black_box;
use std::time::Instant;

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("overhead");
    g.bench_function("clock-read", |b| b.iter(|| black_box(Instant::now())));
    g.bench_function("cpu-clock-read", |b| b.iter(|| black_box(process_cpu_ns())));
    g.bench_function("sample-wrapper", |b| {
        // Everything the runner does around a sample's timed region, with nothing inside.
        b.iter(|| {
            let cpu0 = process_cpu_ns();
            let w = Window::open();
            let t0 = Instant::now();
            let e = t0.elapsed();
            let a = w.close();
            black_box((e, a, process_cpu_ns() - cpu0))
        })
    });
    g.bench_function("counted-alloc-free-64B", |b| {
        b.iter(|| {
            let v: Vec<u8> = Vec::with_capacity(black_box(64));
            black_box(&v);
        })
    });
    let st = framecost::table::rng::Stream::new(1, "bench", 0);
    let a: Vec<f64> = (0..60).map(|i| 1e6 * (1.0 + 0.05 * st.unit(i))).collect();
    let bb: Vec<f64> = (0..60).map(|i| 2e6 * (1.0 + 0.05 * st.unit(i + 100))).collect();
    g.bench_function("median-interval-60", |b| {
        b.iter(|| {
            let mut s = a.clone();
            s.sort_by(f64::total_cmp);
            black_box(median_ci_sorted(&s, 0.95))
        })
    });
    g.bench_function("ratio-bootstrap-1000x60", |b| b.iter(|| black_box(ratio_ci(&a, &bb, 1000, 0.95, 7))));
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
