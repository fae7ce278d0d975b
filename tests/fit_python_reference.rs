//! Simple regression against Python's standard library
//! (`statistics.linear_regression`, Python ≥ 3.10; CI and this machine have
//! 3.11). The test writes random data sets to a temporary file, runs
//! `python3 -c ...` on them and compares slope and intercept.
//!
//! Weighted fits are checked honestly through integer weights: a point of
//! weight w is the same as w copies of the point, so Python fits the expanded
//! data and we fit the original data with weights.

use framecost::fit::lsq::solve;
use framecost::fit::rng::SplitMix64;
use std::process::Command;

const SCRIPT: &str = r#"
import sys, statistics
sets = {}
for line in open(sys.argv[1]):
    k, x, y, w = line.split()
    sets.setdefault(int(k), []).append((float(x), float(y), int(w)))
for k in sorted(sets):
    pts = sets[k]
    xs = [p[0] for p in pts]; ys = [p[1] for p in pts]
    u = statistics.linear_regression(xs, ys)
    ex = [p[0] for p in pts for _ in range(p[2])]
    ey = [p[1] for p in pts for _ in range(p[2])]
    w = statistics.linear_regression(ex, ey)
    print(k, repr(u.slope), repr(u.intercept), repr(w.slope), repr(w.intercept))
"#;

struct DataSet {
    x: Vec<f64>,
    y: Vec<f64>,
    w: Vec<u32>,
}

fn random_sets() -> Vec<DataSet> {
    let mut rng = SplitMix64::new(20240611);
    (0..8)
        .map(|k| {
            let m = 5 + rng.below(40);
            let offset = [0.0, 1e3, -50.0, 1e5][k % 4];
            let spread = [1.0, 10.0, 1e3, 0.01][k % 4];
            let slope = 4.0 * rng.next_f64() - 2.0;
            let intercept = 100.0 * rng.next_f64() - 50.0;
            let x: Vec<f64> = (0..m).map(|_| offset + spread * rng.next_f64()).collect();
            let y: Vec<f64> = x
                .iter()
                .map(|&x| intercept + slope * x + spread * rng.standard_normal())
                .collect();
            let w: Vec<u32> = (0..m).map(|_| 1 + rng.below(4) as u32).collect();
            DataSet { x, y, w }
        })
        .collect()
}

fn line_fit(x: &[f64], y: &[f64], w: Option<&[f64]>) -> (f64, f64) {
    let rows: Vec<Vec<f64>> = x.iter().map(|&v| vec![1.0, v]).collect();
    let fit = solve(&rows, y, w).expect("line fit");
    (fit.coef[1], fit.coef[0])
}

#[test]
fn python_docs_example() {
    // Source [published]: Python documentation, statistics.linear_regression
    // example — x = [1971, 1975, 1979, 1982, 1983], y = [1, 2, 3, 4, 5] gives
    // slope 0.31 and intercept −610.18 (printed to 2 decimals in the docs).
    let x = [1971.0, 1975.0, 1979.0, 1982.0, 1983.0];
    let y = [1.0, 2.0, 3.0, 4.0, 5.0];
    let (slope, intercept) = line_fit(&x, &y, None);
    assert!((slope - 0.31).abs() < 0.005, "slope {slope}");
    assert!((intercept + 610.18).abs() < 0.005, "intercept {intercept}");
}

#[test]
fn matches_python_statistics_linear_regression() {
    let sets = random_sets();
    let mut text = String::new();
    for (k, s) in sets.iter().enumerate() {
        for i in 0..s.x.len() {
            text.push_str(&format!("{k} {} {} {}\n", s.x[i], s.y[i], s.w[i]));
        }
    }
    let path = std::env::temp_dir().join(format!("framecost-pyref-{}.txt", std::process::id()));
    std::fs::write(&path, text).expect("write temporary data file");
    let output = Command::new("python3")
        .arg("-c")
        .arg(SCRIPT)
        .arg(&path)
        .output();
    let _ = std::fs::remove_file(&path);
    let output = output.unwrap_or_else(|e| {
        panic!("python3 is needed for this reference test and could not be run: {e}")
    });
    assert!(
        output.status.success(),
        "python3 failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    let stdout = String::from_utf8_lossy(&output.stdout);
    let lines: Vec<&str> = stdout.lines().collect();
    assert_eq!(lines.len(), sets.len(), "python printed: {stdout}");

    for line in lines {
        let f: Vec<&str> = line.split_whitespace().collect();
        let k: usize = f[0].parse().expect("set index");
        let num = |i: usize| -> f64 { f[i].parse().expect("python float") };
        let s = &sets[k];
        let scale_x = s.x.iter().fold(0.0_f64, |m, v| m.max(v.abs()));

        let (slope, intercept) = line_fit(&s.x, &s.y, None);
        let weights: Vec<f64> = s.w.iter().map(|&w| w as f64).collect();
        let (wslope, wintercept) = line_fit(&s.x, &s.y, Some(&weights));

        for (what, ours_s, ours_i, py_s, py_i) in [
            ("unweighted", slope, intercept, num(1), num(2)),
            ("weighted", wslope, wintercept, num(3), num(4)),
        ] {
            // Slope to 1e-12 relative; the intercept's error scale is
            // |slope|·max|x| (it is ȳ − slope·x̄), so it is compared on that
            // scale too.
            let es = ((ours_s - py_s) / py_s).abs();
            let ei = (ours_i - py_i).abs() / (py_i.abs() + py_s.abs() * scale_x);
            println!("set {k} {what}: slope {ours_s} vs {py_s} ({es:.1e}), intercept {ours_i} vs {py_i} ({ei:.1e})");
            assert!(
                es < 1e-12,
                "set {k} {what} slope: ours {ours_s}, python {py_s}"
            );
            assert!(
                ei < 1e-12,
                "set {k} {what} intercept: ours {ours_i}, python {py_i}"
            );
        }
    }
}
