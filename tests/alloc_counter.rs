//! The counting allocator, alone in its own test binary: counters are process-wide, so no
//! other test may run beside these checks.

use framecost::measure::alloc::{live_bytes, Window};

#[test]
fn counts_known_allocations_exactly() {
    // A single allocation of a known size: bytes and count are exact, and the peak is the
    // block itself.
    let w = Window::open();
    let v: Vec<u8> = Vec::with_capacity(1 << 20);
    std::hint::black_box(&v);
    drop(v);
    let s = w.close();
    assert_eq!(s.bytes, 1 << 20, "{s:?}");
    assert_eq!(s.count, 1, "{s:?}");
    assert_eq!(s.peak_live, 1 << 20, "{s:?}");

    // Doubling growth of a Vec<u64> to 1000 elements: the textbook amortized pattern. With
    // Rust's growth policy (capacity 4, then doubling) the requested sizes are
    // 4, 8, 16, …, 1024 elements: sum = (2048 - 4) · 8 bytes — the geometric series of
    // the dynamic-table analysis (Cormen et al., Introduction to Algorithms, ch. 17).
    let w = Window::open();
    let mut g: Vec<u64> = Vec::new();
    for i in 0..1000u64 {
        g.push(std::hint::black_box(i));
    }
    drop(g);
    let s = w.close();
    assert_eq!(s.count, 9, "{s:?}"); // 4, 8, …, 1024: nine sizes
    assert_eq!(s.bytes, (2048 - 4) * 8, "{s:?}");
    // Live bytes return to where they were.
    let before = live_bytes();
    let x = std::hint::black_box(vec![0u8; 4096]);
    assert_eq!(live_bytes(), before + 4096);
    drop(x);
    assert_eq!(live_bytes(), before);
}
