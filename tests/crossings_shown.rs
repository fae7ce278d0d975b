//! A crossing drawn in a scaling picture is one the measurements show: for "at about X
//! rows, A becomes cheaper than B" among the measured sizes, B's measured median is below
//! A's at some size under X and A's below B's at some size over X; past the measured sizes,
//! B is still the cheaper at the largest size both were measured at. Fitted curves alone
//! cross where every measurement has one design ahead (a constant fit against a rising
//! one); such crossings are not drawn.
//!
//! Checked on recorded runs (tests/data/README.md), re-drawn with `framecost report`; the
//! medians are read straight from `points.jsonl`, not through framecost's analysis.

use assert_cmd::Command;
use std::collections::HashMap;
use std::path::Path;

/// Recorded runs over rows, and how many crossings each must still show (the related
/// routes run's only crossing is one its measurements contradict).
const RUNS: &[(&str, Option<usize>)] = &[
    ("tests/data/plots/row-growth", None),
    ("tests/data/verdict-runs/cell-reads-close", None),
    ("tests/data/verdict-runs/cross-column-split", None),
    ("tests/data/verdict-runs/related-routes", Some(0)),
    ("tests/data/verdict-runs/grower-totals-gaining", None),
];

/// Median time per (design, rows) of the measured points.
fn medians(run: &str) -> HashMap<(String, u64), f64> {
    let text = std::fs::read_to_string(Path::new(run).join("points.jsonl")).expect("points");
    let mut out = HashMap::new();
    for line in text.lines() {
        let v: serde_json::Value = serde_json::from_str(line).expect("json line");
        if v["record"] != "point" {
            continue;
        }
        if let Some(m) = v["measured"]["median_ns"].as_f64() {
            out.insert((v["design"].as_str().expect("design").to_string(), v["rows"].as_u64().expect("rows")), m);
        }
    }
    out
}

/// "54.7k" → 54700, "1.68M" → 1.68e6, "870" → 870.
fn size(s: &str) -> f64 {
    let (num, mult) = match s.chars().last() {
        Some('k') => (&s[..s.len() - 1], 1e3),
        Some('M') => (&s[..s.len() - 1], 1e6),
        Some('G') => (&s[..s.len() - 1], 1e9),
        _ => (s, 1.0),
    };
    num.parse::<f64>().unwrap_or_else(|_| panic!("size {s}")) * mult
}

/// (X, A, B, the words in brackets) of every "Crossing k: at about X rows (…), A becomes
/// cheaper than B." in a description.
fn crossings(desc: &str) -> Vec<(f64, String, String, String)> {
    desc.split("Crossing ")
        .skip(1)
        .map(|c| {
            let rest = c.split_once(": at about ").expect("at about").1;
            let (x, rest) = rest.split_once(" rows (").expect("rows");
            let (range, rest) = rest.split_once("), ").expect("interval");
            let (a, b) = rest.split_once(" becomes cheaper than ").expect("cheaper");
            (size(x), a.to_string(), b.trim_end().trim_end_matches('.').to_string(), range.to_string())
        })
        .collect()
}

/// Whether the analysis found every crossing of `a` above `b` unbounded (its interval runs
/// to the end of the search).
fn unbounded(run: &str, a: &str, b: &str) -> bool {
    let o = Command::cargo_bin("framecost").expect("binary").args(["explain", run, "--json"]).output().expect("runs");
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).expect("json");
    let all = doc["analysis"]["workloads"][0]["crossovers"].as_array().expect("crossovers").clone();
    let pair: Vec<&serde_json::Value> = all.iter().filter(|c| c["faster_above"] == a && c["faster_below"] == b).collect();
    !pair.is_empty() && pair.iter().all(|c| c["bounded"] == false)
}

#[test]
fn every_crossing_drawn_is_one_the_medians_show() {
    let tmp = tempfile::tempdir().expect("tempdir");
    for (k, (run, expected)) in RUNS.iter().enumerate() {
        let out = tmp.path().join(format!("r{k}"));
        let o = Command::cargo_bin("framecost").expect("binary").arg("report").arg(run).arg("--out").arg(&out).output().expect("runs");
        assert!(o.status.success(), "{run}: {}", String::from_utf8_lossy(&o.stderr));
        let med = medians(run);
        let mut shown = 0;
        for e in std::fs::read_dir(out.join("pictures")).expect("pictures").flatten() {
            let p = e.path();
            if !p.to_string_lossy().ends_with("-scaling.svg") {
                continue;
            }
            let svg = std::fs::read_to_string(&p).expect("svg");
            let doc = roxmltree::Document::parse(&svg).expect("svg parses");
            let desc: String = doc.descendants().filter(|n| n.has_tag_name("desc")).filter_map(|n| n.text()).collect();
            for (x, a, b, range) in crossings(&desc) {
                shown += 1;
                // An interval that runs to the end of the search is not printed as one.
                if unbounded(run, &a, &b) {
                    assert!(!range.contains("between") && range.contains("do not pin it down"), "{run}: unbounded crossing printed as ({range})");
                } else {
                    assert!(range.starts_with("between "), "{run}: ({range})");
                }
                let at = |d: &str, below: bool| {
                    med.iter().filter(|((n, r), _)| n == d && if below { (*r as f64) < x } else { (*r as f64) > x }).map(|((_, r), m)| (*r, *m)).collect::<HashMap<u64, f64>>()
                };
                let (a_lo, b_lo, a_hi, b_hi) = (at(&a, true), at(&b, true), at(&a, false), at(&b, false));
                let compared_above = a_hi.keys().any(|r| b_hi.contains_key(r));
                if compared_above {
                    // Among the measured sizes: the medians must show both sides.
                    let b_cheaper_below = b_lo.iter().any(|(r, mb)| a_lo.get(r).is_some_and(|ma| mb < ma));
                    let a_cheaper_above = a_hi.iter().any(|(r, ma)| b_hi.get(r).is_some_and(|mb| ma < mb));
                    assert!(b_cheaper_below && a_cheaper_above, "{run}: crossing at {x} rows, `{a}` cheaper than `{b}` above it, is not what the medians show");
                } else {
                    // Predicted past the measured sizes: `b` must still be the cheaper one at
                    // the largest size both were measured at.
                    let last = b_lo.keys().filter(|r| a_lo.contains_key(r)).max().expect("a size compared below the crossing");
                    assert!(b_lo[last] < a_lo[last], "{run}: crossing predicted at {x} rows, but `{a}` is already cheaper than `{b}` at {last} rows");
                }
            }
        }
        if let Some(n) = expected {
            assert_eq!(shown, *n, "{run}: crossings drawn");
        }
    }
}
