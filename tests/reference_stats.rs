//! Measurement statistics checked against Python's standard library (3.11, no install):
//! the ranks of the median's distribution-free 95% interval against exact binomial sums from
//! `math.comb`, and the percentiles the runner stores against `statistics.quantiles` (type 7).

use framecost::measure::stats::median_ci_ranks;
use std::process::Command;

fn python(code: &str) -> String {
    let out = Command::new("python3").args(["-c", code]).output().expect("python3 must be installed (it is on the machine and on CI)");
    assert!(out.status.success(), "python failed: {}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8_lossy(&out.stdout).to_string()
}

#[test]
fn median_interval_ranks_agree_with_exact_binomial_sums() {
    // For each n: the largest j with P(Bin(n, 1/2) < j) <= 0.025, summed exactly with
    // fractions and math.comb.
    let ns: Vec<usize> = vec![6, 7, 8, 9, 10, 12, 15, 20, 25, 30, 40, 50, 60, 80, 100, 150, 200, 500];
    let code = format!(
        "from math import comb\nfrom fractions import Fraction\nfor n in {ns:?}:\n    j=0; c=Fraction(0)\n    for k in range(n):\n        c += Fraction(comb(n,k), 2**n)\n        if c <= Fraction(1,40): j=k+1\n        else: break\n    print(n, j)\n"
    );
    let text = python(&code);
    for line in text.lines() {
        let v: Vec<usize> = line.split_whitespace().map(|x| x.parse().expect("int")).collect();
        let (n, j) = (v[0], v[1]);
        let ours = median_ci_ranks(n, 0.95);
        if j == 0 {
            assert_eq!(ours, None, "n={n}");
        } else {
            assert_eq!(ours, Some((j, n + 1 - j)), "n={n}");
        }
    }
}

#[test]
fn stored_percentiles_equal_type7_quantiles() {
    // The function the runner stores p50/p90/p99/max with (`summarize` calls it).
    // Skewed, timing-like data: a deterministic spread of 1000 values (ns) at three scales —
    // microseconds, milliseconds and seconds — so a store that clamps at a small top value
    // (the old bug: every stored percentile was 2 ns) cannot pass; plus a bimodal set with an
    // even count, where a nearest-rank p50 would sit far from the median.
    let st = framecost::table::rng::Stream::new(5, "hdr", 0);
    let mut sets: Vec<Vec<f64>> = [20_000.0, 3.0e7, 2.5e9]
        .iter()
        .map(|scale| (0..1000).map(|i| (scale * (1.0 + 3.0 * st.unit(i).powi(3))).round()).collect())
        .collect();
    sets.push((0..20).map(|i| if i % 2 == 0 { 400_000.0 + i as f64 } else { 6_600_000.0 + i as f64 }).collect());
    for data in sets {
        let got = framecost::measure::stats::tail_percentiles(&data).expect("samples");
        // Reference [computed]: Python's statistics.quantiles(method='inclusive') is
        // Hyndman & Fan type 7 (REFERENCES.md, "Python standard library as a reference").
        let code = format!(
            "import statistics\nd={data:?}\nq=statistics.quantiles(d, n=100, method='inclusive')\nprint(q[49], q[89], q[98], max(d), statistics.median(d))\n"
        );
        let want: Vec<f64> = python(&code).split_whitespace().map(|x| x.parse().expect("float")).collect();
        for (name, stored, reference) in [("p50", got.p50, want[0]), ("p90", got.p90, want[1]), ("p99", got.p99, want[2]), ("max", got.max, want[3])] {
            assert!((stored - reference).abs() <= 1e-9 * reference.abs(), "{name}: stored {stored} vs Python {reference}");
        }
        assert!((got.p50 - want[4]).abs() <= 1e-9 * want[4], "p50 {} is the median {}", got.p50, want[4]);
    }
    assert!(framecost::measure::stats::tail_percentiles(&[]).is_none());
}

#[test]
fn python_reference_examples_from_references_md() {
    // REFERENCES.md [computed]: statistics.quantiles([2,4,4,5,7,9,10,15], n=4, inclusive)
    // = [4.0, 6.0, 9.25] — confirms the Python on this machine is the documented reference.
    let out = python("import statistics\nprint(statistics.quantiles([2,4,4,5,7,9,10,15], n=4, method='inclusive'))");
    assert_eq!(out.trim(), "[4.0, 6.0, 9.25]");
}
