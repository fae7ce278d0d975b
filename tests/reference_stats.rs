//! Measurement statistics checked against Python's standard library (3.11, no install):
//! the ranks of the median's distribution-free 95% interval against exact binomial sums from
//! `math.comb`, and hdrhistogram percentiles against `statistics.quantiles` (type 7) within
//! the bound derived in REFERENCES.md for hdrhistogram 7.x at 3 significant digits.

use framecost::measure::stats::median_ci_ranks;
use hdrhistogram::Histogram;
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
fn hdr_percentiles_agree_with_type7_quantiles_within_the_known_bound() {
    // Skewed, timing-like data: a deterministic log-normal-ish spread of 1000 values (ns).
    let st = framecost::table::rng::Stream::new(5, "hdr", 0);
    let data: Vec<u64> = (0..1000).map(|i| (20_000.0 * (1.0 + 3.0 * st.unit(i).powi(3))) as u64).collect();
    let mut h = Histogram::<u64>::new(3).expect("hist");
    for &x in &data {
        h.record(x).expect("record");
    }
    let code = format!(
        "import statistics\nd={data:?}\nq=statistics.quantiles(d, n=100, method='inclusive')\nprint(q[49], q[89], q[98])\n"
    );
    let q7: Vec<f64> = python(&code).split_whitespace().map(|x| x.parse().expect("float")).collect();
    let mut sorted = data.clone();
    sorted.sort_unstable();
    for (q, want) in [(0.5, q7[0]), (0.9, q7[1]), (0.99, q7[2])] {
        let got = h.value_at_quantile(q) as f64;
        let k = ((q * 1000.0f64).ceil() as usize).max(1); // nearest rank, 1-based
        let bound = (sorted[k] - sorted[k - 2]) as f64 + sorted[k - 1] as f64 / 1024.0;
        assert!((got - want).abs() <= bound, "q={q}: hdr {got} vs type-7 {want}, bound {bound}");
    }
}

#[test]
fn python_reference_examples_from_references_md() {
    // REFERENCES.md [computed]: statistics.quantiles([2,4,4,5,7,9,10,15], n=4, inclusive)
    // = [4.0, 6.0, 9.25] — confirms the Python on this machine is the documented reference.
    let out = python("import statistics\nprint(statistics.quantiles([2,4,4,5,7,9,10,15], n=4, method='inclusive'))");
    assert_eq!(out.trim(), "[4.0, 6.0, 9.25]");
}
