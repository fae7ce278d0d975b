//! The regression gate on deterministic inputs: synthetic runs whose samples are drawn from
//! known distributions (seeded log-normal noise), with an injected 20% slowdown at the
//! largest sizes, an injected change of growth class, machine drift that the yardstick
//! explains, missing points, and many seeds of no change at all to measure the false-alarm
//! rate against the test's nominal level (α = 0.05). Then the CLI on runs written to disk:
//! exit codes, JSON, named baselines and the history picture.

use assert_cmd::Command;
use framecost::measure::alloc::AllocStats;
use framecost::measure::clock::ClockInfo;
use framecost::measure::machine::{MachineFingerprint, Yardstick};
use framecost::plan::Budget;
use framecost::results::reader::RunResults;
use framecost::results::*;
use framecost::table::rng::Stream;
use framecost::track::gate::{compare, Call, GateOptions};

const SIZES: [u64; 8] = [1_000, 2_000, 4_000, 8_000, 16_000, 32_000, 64_000, 128_000];

fn machine(cpu: &str) -> MachineFingerprint {
    MachineFingerprint {
        cpu_model: cpu.into(),
        logical_cores: 2,
        physical_cores: Some(2),
        memory_total_bytes: 24 << 30,
        os: "test".into(),
        kernel: "test".into(),
        arch: "x86_64".into(),
        framecost_version: "0".into(),
        polars_version: "0".into(),
        polars_threads: 2,
    }
}

/// Log-normal noise: exp(σ·z) with z standard normal (Box–Muller on the seeded stream).
fn noisy(st: &Stream, i: u64, sigma: f64) -> f64 {
    let u1 = st.unit(2 * i).max(1e-12);
    let u2 = st.unit(2 * i + 1);
    let z = (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos();
    (sigma * z).exp()
}

/// A run with one workload and one design whose median time at n is `cost(n)`.
fn run(id: &str, seed: u64, cpu: &str, yard: f64, cost: &dyn Fn(u64) -> f64, bytes: &dyn Fn(u64) -> f64, skip: &[u64]) -> RunResults {
    let mut r = RunResults::default();
    r.push(Record::Run(RunHeader {
        schema: SCHEMA.into(),
        run_id: id.into(),
        started_at: format!("2026-12-01T{id}"),
        command: vec![],
        machine: machine(cpu),
        clock: ClockInfo { reported_resolution_ns: 1.0, observed_step_ns: 20.0, read_cost_ns: 20.0 },
        yardstick: Yardstick { kernel: "test".into(), median_ns: yard, rounds_ns: vec![yard] },
        available_memory_bytes: 1 << 34,
        forced: false,
        cache_sweep_bytes: None,
        cache_sweep_threads: None,
        caches: vec![],
        allocator: None,
        build: None,
    }));
    r.push(Record::Workload(WorkloadHeader {
        workload: "ledger".into(),
        file: "x".into(),
        spec_hash: "0".into(),
        seed: 1,
        about: String::new(),
        target: None,
        sizes: SIZES.to_vec(),
        budget: Budget { per_point_s: 1.0, whole_run_s: 10.0, precision: 0.03, min_samples: 6, max_samples: 20, warmup: 1 },
        columns: vec![],
        designs: vec![DesignHeader {
            name: "build".into(),
            about: None,
            recipe: "x".into(),
            steps: vec![],
            feed: "records".into(),
            expect_time: None,
            expect_bytes: None,
            expect_dtypes: vec![],
            engine: None,
            query_plans: vec![],
            program: None,
        }],
        outputs_differ: None,
        gate_threshold: None,
        spec_text: String::new(),
        axis: None,
    }));
    let st = Stream::new(seed, id, 0);
    for (k, &n) in SIZES.iter().enumerate() {
        if skip.contains(&n) {
            r.push(Record::Point(PointRecord {
                workload: "ledger".into(),
                design: "build".into(),
                rows: n,
                measured: None,
                skipped: Some(SkipInfo { reason: SkipReason::PredictedOverBudget, predicted_ns: Some(1e9), predicted_bytes: None, cause: None, detail: String::new() }),
                setup_ns: None,
            }));
            continue;
        }
        let samples: Vec<f64> = (0..20).map(|i| cost(n) * noisy(&st, (k * 100 + i) as u64, 0.03)).collect();
        let mut s = samples.clone();
        s.sort_by(f64::total_cmp);
        let med = (s[9] + s[10]) / 2.0;
        r.push(Record::Point(PointRecord {
            workload: "ledger".into(),
            design: "build".into(),
            rows: n,
            measured: Some(Measured {
                stop: StopReason::SampleCap,
                batch: 1,
                warmup_runs: 1,
                samples_ns: samples,
                median_ns: med,
                ci_low_ns: Some(s[5]),
                ci_high_ns: Some(s[14]),
                ci_rel_half_width: None,
                mean_ns: med,
                p50_ns: med,
                p90_ns: s[17],
                p99_ns: s[19],
                max_ns: s[19],
                cpu_ns: med,
                alloc: AllocStats { bytes: bytes(n) as u64, count: 10, peak_live: bytes(n) as u64 },
                alloc_exact: true,
                alloc_counted: true,
                program: None,
                output: None,
                spent_s: 0.1,
                disturbance: None,
                bimodal: false,
            }),
            skipped: None,
            setup_ns: None,
        }));
    }
    r.push(Record::End(EndRecord { finished_at: "end".into(), elapsed_s: 1.0, mismatches: 0 }));
    r
}

fn linear(n: u64) -> f64 {
    50_000.0 + 100.0 * n as f64
}
fn lin_bytes(n: u64) -> f64 {
    64.0 * n as f64
}

#[test]
fn an_injected_slowdown_at_the_largest_sizes_is_flagged_there_only() {
    let base = run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let slow = |n: u64| if n >= 64_000 { 1.2 * linear(n) } else { linear(n) };
    let new = run("b", 2, "cpu", 1e8, &slow, &lin_bytes, &[]);
    let g = compare(&base, &new, &GateOptions::default());
    let w = &g.workloads[0];
    for p in &w.points {
        let want = if p.rows >= 64_000 { Call::Regression } else { Call::Same };
        assert_eq!(p.call, want, "at {} rows: ratio {:.3}, p {:?}", p.rows, p.ratio, p.p_value);
        if p.rows >= 64_000 {
            let (lo, hi) = (p.ratio_low.expect("interval"), p.ratio_high.expect("interval"));
            assert!(lo < 1.2 && 1.2 < hi, "the interval [{lo}, {hi}] holds the injected 1.2");
        }
    }
    assert_eq!(g.regressions, 2);
    assert!(g.failed());
}

#[test]
fn an_injected_change_of_growth_class_is_a_growth_regression() {
    let base = run("a", 3, "cpu", 1e8, &linear, &lin_bytes, &[]);
    // Equal at 1k rows, quadratic beyond: the kind of change a copy-per-append bug makes.
    let quad = |n: u64| linear(1_000) * (n as f64 / 1_000.0).powi(2);
    let quad_bytes = |n: u64| lin_bytes(1_000) * (n as f64 / 1_000.0).powi(2);
    let new = run("b", 4, "cpu", 1e8, &quad, &quad_bytes, &[]);
    let g = compare(&base, &new, &GateOptions::default());
    let growth = &g.workloads[0].growth;
    let time = growth.iter().find(|x| x.metric == "time").expect("time");
    let bytes = growth.iter().find(|x| x.metric == "bytes").expect("bytes");
    assert_eq!(time.call, Call::Regression, "{time:?}");
    assert_eq!(bytes.call, Call::Regression, "{bytes:?}");
    // Classes as labels: the base may be reported as a pair ("n or n log n") on noisy data.
    assert_eq!(time.new_class.as_deref(), Some("n²"));
    let base = time.base_class.as_deref().expect("base class");
    assert!(base == "n" || base == "n or n log n", "{base}");
    assert!(g.growth_regressions >= 2 && g.failed());
}

#[test]
fn no_change_stays_within_the_nominal_false_alarm_rate() {
    // 200 pairs of runs from the same distribution, 8 sizes each: 1600 point tests.
    let mut alarms_default = 0;
    let mut alarms_rank_only = 0;
    let mut growth_alarms = 0;
    let tests = 200 * SIZES.len();
    for seed in 0..200u64 {
        let base = run("a", 1000 + seed, "cpu", 1e8, &linear, &lin_bytes, &[]);
        let new = run("b", 5000 + seed, "cpu", 1e8, &linear, &lin_bytes, &[]);
        let g = compare(&base, &new, &GateOptions::default());
        alarms_default += g.regressions;
        growth_alarms += g.growth_regressions;
        // With a near-zero threshold the gate is the rank test alone: two-sided α = 0.05,
        // so regressions (one side) should be at most about 2.5%, and alarms of either side
        // at most 5% (plus three standard errors of a binomial proportion).
        let g0 = compare(&base, &new, &GateOptions { threshold: Some(1e-9), ..GateOptions::default() });
        alarms_rank_only += g0.workloads[0].points.iter().filter(|p| matches!(p.call, Call::Regression | Call::Improvement)).count();
    }
    let rate = alarms_rank_only as f64 / tests as f64;
    let bound = 0.05 + 3.0 * (0.05f64 * 0.95 / tests as f64).sqrt();
    eprintln!("false alarms: default gate {alarms_default}/{tests}, rank test alone {rate:.4} (bound {bound:.4}), growth {growth_alarms}/200");
    assert!(rate <= bound, "rank-test false-alarm rate {rate} above {bound}");
    assert_eq!(alarms_default, 0, "3% noise never crosses a 10% threshold with significance");
    assert!(growth_alarms <= 10, "growth false alarms {growth_alarms} of 200 runs");
}

#[test]
fn machine_drift_is_normalised_by_the_yardstick_and_missing_points_are_reported() {
    let base = run("a", 7, "old cpu", 1e8, &linear, &lin_bytes, &[]);
    // A machine 30% slower at everything, the yardstick included.
    let slower = |n: u64| 1.3 * linear(n);
    let new = run("b", 8, "new cpu", 1.3e8, &slower, &lin_bytes, &[128_000]);
    let g = compare(&base, &new, &GateOptions::default());
    assert!(g.machines_differ);
    assert!((g.yardstick_ratio.expect("ratio") - 1.3).abs() < 1e-12);
    let w = &g.workloads[0];
    for p in &w.points {
        assert!(p.ratio > 1.2, "raw ratio shows the slower machine");
        let nr = p.normalised_ratio.expect("normalised");
        assert!((nr - 1.0).abs() < 0.06, "normalised ratio {nr}");
        assert_ne!(p.call, Call::Regression);
    }
    assert_eq!(w.missing.len(), 1);
    assert_eq!(w.missing[0].rows, 128_000);
    assert!(w.missing[0].new.starts_with("skipped"));
    assert!(!g.failed());
}

fn write_run(dir: &std::path::Path, r: &RunResults) {
    std::fs::create_dir_all(dir).expect("dir");
    let mut text = String::new();
    let push = |rec: Record, text: &mut String| {
        text.push_str(&serde_json::to_string(&rec).expect("json"));
        text.push('\n');
    };
    push(Record::Run(r.run.clone().expect("header")), &mut text);
    for w in &r.workloads {
        push(Record::Workload(w.header.clone()), &mut text);
        for p in &w.points {
            push(Record::Point(p.clone()), &mut text);
        }
    }
    push(Record::End(r.end.clone().expect("end")), &mut text);
    std::fs::write(dir.join("points.jsonl"), text).expect("write");
    std::fs::write(dir.join("summary.json"), "{}").expect("write");
}

#[test]
fn gate_cli_exit_codes_json_baselines_and_history() {
    let tmp = tempfile::tempdir().expect("tempdir");
    let base = run("120000", 11, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let slow = |n: u64| if n >= 64_000 { 1.2 * linear(n) } else { linear(n) };
    let new = run("130000", 12, "cpu", 1e8, &slow, &lin_bytes, &[]);
    let same = run("140000", 13, "cpu", 1e8, &slow, &lin_bytes, &[]);
    // 30% slower at 16k rows alone: the jump noise gives one point, not a change.
    let blip = |n: u64| if n == 16_000 { 1.3 * slow(n) } else { slow(n) };
    let one = run("150000", 14, "cpu", 1e8, &blip, &lin_bytes, &[]);
    let runs = tmp.path().join("runs");
    write_run(&runs.join("r1"), &base);
    write_run(&runs.join("r2"), &new);
    write_run(&runs.join("r3"), &same);
    write_run(&runs.join("r4"), &one);
    let fc = || Command::cargo_bin("framecost").expect("binary");

    let out = fc().arg("gate").arg(runs.join("r1")).arg(runs.join("r2")).output().expect("runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(1), "{text}");
    assert!(text.contains("got slower at 64k rows") && text.contains("result       worse"), "{text}");
    let out = fc().arg("gate").arg(runs.join("r2")).arg(runs.join("r3")).output().expect("runs");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stdout));
    let out = fc().arg("gate").arg(runs.join("r1")).arg(runs.join("r2")).arg("--json").output().expect("runs");
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    assert_eq!(doc["regressions"], 2);
    assert_eq!(fc().arg("gate").arg(runs.join("r1")).arg(tmp.path().join("nothing")).output().expect("runs").status.code(), Some(2));
    assert_eq!(fc().args(["gate", "x", "y", "--threshold", "-3%"]).output().expect("runs").status.code(), Some(2));

    // Named baselines.
    let store = tmp.path().join("store");
    let out = fc().args(["baseline", "save"]).arg(runs.join("r1")).arg("main").arg("--store").arg(&store).output().expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let out = fc().args(["baseline", "list", "--store"]).arg(&store).output().expect("runs");
    assert!(String::from_utf8_lossy(&out.stdout).contains("main"));
    let out = fc().args(["gate", "main"]).arg(runs.join("r2")).arg("--store").arg(&store).output().expect("runs");
    assert_eq!(out.status.code(), Some(1));

    // History: a picture per workload, the change marked and listed.
    let out = fc().arg("history").arg(&runs).output().expect("runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(text.contains("build at 64k rows got slower"), "{text}");
    // History marks what the gate confirms; the one-size jump is only counted.
    assert!(!text.contains("at 16k rows got"), "{text}");
    assert!(text.contains("1 unconfirmed move(s) not marked"), "{text}");
    let png = image::open(runs.join("history").join("ledger-history.png")).expect("png").to_rgb8();
    assert_eq!(png.dimensions(), (1000, 720));
    let svg = std::fs::read_to_string(runs.join("history").join("ledger-history.svg")).expect("svg");
    roxmltree::Document::parse(&svg).expect("svg parses");
}

#[test]
fn a_slowdown_at_one_size_only_is_reported_but_not_confirmed() {
    // 30% slower at 16k rows alone: the kind of jump run-to-run noise gives one point.
    let base = run("a", 21, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let bump = |n: u64| if n == 16_000 { 1.3 * linear(n) } else { linear(n) };
    let new = run("b", 22, "cpu", 1e8, &bump, &lin_bytes, &[]);
    let g = compare(&base, &new, &GateOptions::default());
    let p = g.workloads[0].points.iter().find(|p| p.rows == 16_000).expect("point");
    assert_eq!(p.call, Call::Regression);
    assert!(!p.confirmed);
    assert_eq!(g.regressions, 0);
    assert_eq!(g.unconfirmed_regressions, 1);
    assert!(!g.failed());
}

/// `r` with a comparison record at every size whose drift probe took `probe_ns`.
fn with_probe(mut r: RunResults, probe_ns: f64) -> RunResults {
    for &n in SIZES.iter() {
        r.workloads[0].comparisons.push(ComparisonRecord {
            workload: "ledger".into(),
            rows: n,
            fastest: Some("build".into()),
            ratios: vec![],
            equivalence: Equivalence { status: EquivalenceStatus::NotChecked, groups: vec![], note: String::new() },
            probe_ns: Some(probe_ns),
            remeasured_after: None,
        });
    }
    r
}

#[test]
fn the_drift_correction_never_turns_equal_medians_into_a_change() {
    // The same samples in both runs, but the probe 19% slower in the new one: the corrected
    // ratio is ×0.84, the raw one ×1.00. The old gate called every size an improvement.
    let base = with_probe(run("a", 31, "cpu", 1e8, &linear, &lin_bytes, &[]), 100_000.0);
    let new = with_probe(run("a", 31, "cpu", 1e8, &linear, &lin_bytes, &[]), 119_000.0);
    let g = compare(&base, &new, &GateOptions::default());
    for p in &g.workloads[0].points {
        assert_eq!(p.ratio, 1.0);
        assert!((p.normalised_ratio.expect("corrected") - 1.0 / 1.19).abs() < 1e-9);
        assert_eq!(p.call, Call::Same, "{p:?}");
    }
    assert_eq!(g.improvements, 0);
    assert!(!g.failed());
    // A real 25% slowdown on a machine that was 19% slower too is explained away (the
    // correction may remove a change), not turned into one.
    let slow = |n: u64| 1.25 * linear(n);
    let new = with_probe(run("b", 32, "cpu", 1e8, &slow, &lin_bytes, &[]), 119_000.0);
    let g = compare(&base, &new, &GateOptions::default());
    assert!(g.workloads[0].points.iter().all(|p| p.call != Call::Improvement));
}

#[test]
fn the_pairwise_estimate_lies_inside_its_interval() {
    // The estimate printed beside the interval is the Hodges–Lehmann estimate the interval
    // belongs to (the old report printed the ratio of medians beside it: ×2.009 with an
    // interval of ×1.913–×1.986). Checked on every point of noisy runs, with and without
    // a machine correction.
    for seed in 0..20u64 {
        let base = run("a", 300 + seed, "cpu", 1e8, &linear, &lin_bytes, &[]);
        let double = |n: u64| 2.0 * linear(n);
        let new = with_probe(run("b", 400 + seed, "cpu", 1e8, &double, &lin_bytes, &[]), 100_000.0 * (1.0 + seed as f64 / 100.0));
        let base = with_probe(base, 100_000.0);
        for p in &compare(&base, &new, &GateOptions::default()).workloads[0].points {
            let (lo, e, hi) = (p.ratio_low.expect("lo"), p.shift.expect("estimate"), p.ratio_high.expect("hi"));
            assert!(lo <= e && e <= hi, "{lo} ≤ {e} ≤ {hi} at {} rows", p.rows);
        }
    }
}

#[test]
fn an_exponent_rise_without_per_size_agreement_is_not_a_growth_regression() {
    // Unchanged code measured twice can differ in its fitted exponent by more than the
    // bootstrap intervals allow (within-run intervals are narrow). Here the new run is 8%
    // faster at the smallest sizes and the same at the largest: the exponent rises, but no
    // size got slower, so there is no growth regression. Turning the check off, or raising
    // its threshold, is honoured too.
    let base = run("a", 41, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let tilted = |n: u64| linear(n) * (0.92 + 0.08 * (n as f64 / 128_000.0).min(1.0));
    let new = run("b", 42, "cpu", 1e8, &tilted, &lin_bytes, &[]);
    let g = compare(&base, &new, &GateOptions::default());
    let time = g.workloads[0].growth.iter().find(|x| x.metric == "time").expect("time");
    assert!(time.new_exponent > time.base_exponent, "{time:?}");
    assert_ne!(time.call, Call::Regression, "{time:?}");
    assert!(!g.failed());
    let off = compare(&base, &new, &GateOptions { growth_rise: None, ..GateOptions::default() });
    assert!(off.workloads[0].growth.iter().all(|x| x.metric != "time"));
}

/// `r` with every measured point's disturbance set to `at(rows)`.
fn with_disturbance(mut r: RunResults, at: &dyn Fn(u64) -> Disturbance) -> RunResults {
    for p in r.workloads[0].points.iter_mut() {
        let rows = p.rows;
        if let Some(m) = p.measured.as_mut() {
            m.disturbance = Some(at(rows));
        }
    }
    r
}

/// `r` with every point's share of the machine taken by other work set to `share`.
fn with_others(r: RunResults, share: f64) -> RunResults {
    with_disturbance(r, &|_| Disturbance { others_share: Some(share), ..Default::default() })
}

#[test]
fn a_change_that_follows_the_others_share_of_the_machine_is_not_called() {
    // Below the busy mark, other work that takes a tenth of a 2-core machine slows a step that
    // uses both cores: back to back here, the same SQL window query measured x1.57 to x1.79
    // slower at five sizes while the others' share went from 0.00 to about 0.11. A 60%
    // slowdown with that rise is shown, unclear, and fails nothing; the same slowdown with
    // the share moving by 0.03 stands; a 25% speed-up while the share fell by 0.13 is unclear.
    let base = with_others(run("a", 61, "cpu", 1e8, &linear, &lin_bytes, &[]), 0.0);
    let slow = |n: u64| 1.6 * linear(n);
    let g = compare(&base, &with_others(run("b", 62, "cpu", 1e8, &slow, &lin_bytes, &[]), 0.11), &GateOptions::default());
    assert!(g.workloads[0].points.iter().all(|p| p.call == Call::Unclear && p.busy && p.ratio > 1.4), "{:?}", g.workloads[0].points);
    assert_eq!(g.regressions + g.unconfirmed_regressions, 0);
    assert!(!g.failed());
    let g = compare(&base, &with_others(run("c", 63, "cpu", 1e8, &slow, &lin_bytes, &[]), 0.03), &GateOptions::default());
    assert!(g.workloads[0].points.iter().all(|p| p.call == Call::Regression && !p.busy), "{:?}", g.workloads[0].points);
    assert!(g.failed());
    let fast = |n: u64| 0.75 * linear(n);
    let busier = with_others(run("d", 64, "cpu", 1e8, &linear, &lin_bytes, &[]), 0.13);
    let g = compare(&busier, &with_others(run("e", 65, "cpu", 1e8, &fast, &lin_bytes, &[]), 0.0), &GateOptions::default());
    assert!(g.workloads[0].points.iter().all(|p| p.call == Call::Unclear), "{:?}", g.workloads[0].points);
    assert_eq!(g.improvements, 0);
    // A slowdown while the share fell is not explained by it: it stands.
    let g = compare(&busier, &with_others(run("f", 66, "cpu", 1e8, &slow, &lin_bytes, &[]), 0.0), &GateOptions::default());
    assert!(g.failed());
}

#[test]
fn points_measured_on_a_busy_machine_are_never_called() {
    // The same 20% slowdown as above, but the new run's sizes from 64k were measured while
    // other processes took the machine: contention moves medians by more than a change of
    // the code would, so those points are shown, called unclear, and fail nothing.
    let base = run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let slow = |n: u64| if n >= 64_000 { 1.2 * linear(n) } else { linear(n) };
    let mut new = run("b", 2, "cpu", 1e8, &slow, &lin_bytes, &[]);
    for p in new.workloads[0].points.iter_mut().filter(|p| p.rows >= 64_000) {
        let m = p.measured.as_mut().expect("measured");
        m.disturbance = Some(Disturbance { others_share: Some(0.6), busy: true, reasons: vec!["other-processes".into()], ..Default::default() });
    }
    let g = compare(&base, &new, &GateOptions::default());
    for p in &g.workloads[0].points {
        if p.rows >= 64_000 {
            assert_eq!(p.call, Call::Unclear, "at {} rows", p.rows);
            assert!(p.busy && p.ratio > 1.1);
        } else {
            assert_eq!(p.call, Call::Same, "at {} rows", p.rows);
            assert!(!p.busy);
        }
    }
    assert_eq!(g.regressions + g.unconfirmed_regressions + g.growth_regressions, 0);
    assert!(!g.failed());
}

#[test]
fn points_whose_samples_split_into_two_groups_are_never_called() {
    // At the two largest sizes the new run's samples fell into two groups and the medians
    // landed in the slow one, ×3 the baseline's (a cross-column sweep: 1.77 ms against
    // 0.41 ms of unchanged code): shown, called unclear, failing nothing.
    let base = run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let jump = |n: u64| if n >= 64_000 { 3.0 * linear(n) } else { linear(n) };
    let mut new = run("b", 2, "cpu", 1e8, &jump, &lin_bytes, &[]);
    for p in new.workloads[0].points.iter_mut().filter(|p| p.rows >= 64_000) {
        p.measured.as_mut().expect("measured").bimodal = true;
    }
    let g = compare(&base, &new, &GateOptions::default());
    for p in &g.workloads[0].points {
        let expected = if p.rows >= 64_000 { Call::Unclear } else { Call::Same };
        assert_eq!(p.call, expected, "at {} rows", p.rows);
        assert_eq!(p.split, p.rows >= 64_000);
    }
    assert!(!g.failed(), "{:?}", g.workloads[0].growth);
}

#[test]
fn a_slowdown_at_the_smallest_sizes_only_is_reported_but_does_not_fail() {
    // 30% slower at the two smallest sizes, both confirmed by each other, nothing at the
    // larger six: runs of microseconds move that much between runs of unchanged code.
    let base = run("a", 31, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let bump = |n: u64| if n <= 2_000 { 1.3 * linear(n) } else { linear(n) };
    let new = run("b", 32, "cpu", 1e8, &bump, &lin_bytes, &[]);
    let g = compare(&base, &new, &GateOptions::default());
    let small: Vec<_> = g.workloads[0].points.iter().filter(|p| p.rows <= 2_000).collect();
    assert!(small.iter().all(|p| p.call == Call::Regression && !p.confirmed && p.small_only), "{small:?}");
    assert_eq!(g.regressions, 0);
    assert_eq!(g.unconfirmed_regressions, 2);
    assert!(!g.failed());
}

#[test]
fn a_slowdown_at_most_sizes_stands_even_when_a_largest_size_held() {
    // 15% slower at every size but the largest, where the new run's memory happened to be
    // faster (what a memory-bound design shows between sweeps on a shared machine): seven
    // of eight sizes agree, so the change stands. At three sizes out of eight it would not.
    let base = run("a", 41, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let most = |n: u64| if n < 128_000 { 1.15 * linear(n) } else { linear(n) };
    let g = compare(&base, &run("b", 42, "cpu", 1e8, &most, &lin_bytes, &[]), &GateOptions::default());
    let sizes = g.workloads[0].points.len();
    assert!(sizes >= 8, "{sizes}");
    assert_eq!(g.regressions, sizes - 1, "{:?}", g.workloads[0].points);
    assert!(g.failed());
    let few = |n: u64| if n <= 4_000 && n >= 1_000 { 1.15 * linear(n) } else { linear(n) };
    let g = compare(&base, &run("c", 43, "cpu", 1e8, &few, &lin_bytes, &[]), &GateOptions::default());
    assert_eq!(g.regressions, 0, "{:?}", g.workloads[0].points);
    assert!(!g.failed());
}

/// `r` with every point's memory probe (the cache sweeps before its samples) at `ns`.
fn with_memory(r: RunResults, ns: &dyn Fn(u64) -> f64) -> RunResults {
    with_disturbance(r, &|rows| Disturbance { memory_probe_ns: Some(ns(rows)), ..Default::default() })
}

#[test]
fn slower_memory_explains_a_slowdown_away_but_never_makes_one() {
    // 20% slower from 64k rows. With the memory probe 20% slower at those points too, the
    // slowdown is the machine's memory, not the code: not called. With the probe unchanged,
    // it is called as without a probe. With equal medians and a faster probe, nothing is
    // called (the probe only explains changes away).
    let base = with_memory(run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]), &|_| 2e6);
    let slow = |n: u64| if n >= 64_000 { 1.2 * linear(n) } else { linear(n) };
    let slow_memory = |n: u64| if n >= 64_000 { 2.4e6 } else { 2e6 };
    let g = compare(&base, &with_memory(run("b", 2, "cpu", 1e8, &slow, &lin_bytes, &[]), &slow_memory), &GateOptions::default());
    for p in &g.workloads[0].points {
        assert_ne!(p.call, Call::Regression, "at {} rows: memory ratio {:?}", p.rows, p.memory_ratio);
    }
    assert!(!g.failed());
    let g = compare(&base, &with_memory(run("b", 2, "cpu", 1e8, &slow, &lin_bytes, &[]), &|_| 2e6), &GateOptions::default());
    assert_eq!(g.regressions, 2, "the same slowdown with unchanged memory is caught");
    let g = compare(&base, &with_memory(run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]), &|_| 1.5e6), &GateOptions::default());
    assert!(g.workloads[0].points.iter().all(|p| p.call == Call::Same && p.memory_ratio == Some(0.75)));
}

/// `r` with every point's files probe (small files written and read back before its
/// samples) at `ns`.
fn with_files(r: RunResults, ns: &dyn Fn(u64) -> f64) -> RunResults {
    with_disturbance(r, &|rows| Disturbance { files_probe_ns: Some(ns(rows)), ..Default::default() })
}

#[test]
fn a_slowdown_with_a_slower_file_system_is_shown_unjudged_and_never_made() {
    // Twice as slow at every size, as storage's one-file-per-parcel design measured between
    // two sweeps of unchanged code when the file system slowed (5 December: x1.64 to x2.04).
    // With the files probe twice as slow at those points, neither a point nor the design as
    // a whole is called (shown, not judged); with the probe unchanged the slowdown fails the
    // gate; a faster file system never turns equal medians into an improvement.
    let base = with_files(run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]), &|_| 1e6);
    let twice = |n: u64| 2.0 * linear(n);
    let g = compare(&base, &with_files(run("b", 2, "cpu", 1e8, &twice, &lin_bytes, &[]), &|_| 2e6), &GateOptions::default());
    for p in &g.workloads[0].points {
        assert_eq!(p.files_ratio, Some(2.0));
        assert_eq!((p.call, p.files_moved), (Call::Unclear, true), "at {} rows: {p:?}", p.rows);
    }
    assert!(g.workloads[0].moves.iter().all(|m| m.call != Call::Regression && m.files_ratio.is_some()), "{:?}", g.workloads[0].moves);
    assert!(!g.failed());
    let g = compare(&base, &with_files(run("b", 2, "cpu", 1e8, &twice, &lin_bytes, &[]), &|_| 1e6), &GateOptions::default());
    assert!(g.regressions >= 2, "the same slowdown with an unchanged file system is caught: {:?}", g.workloads[0].points);
    assert!(g.failed());
    let g = compare(&base, &with_files(run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]), &|_| 0.5e6), &GateOptions::default());
    assert!(g.workloads[0].points.iter().all(|p| p.call == Call::Same), "{:?}", g.workloads[0].points);
    assert!(!g.failed());
}

/// `r` with its run header saying the caches were swept with a `bytes` buffer on `threads`.
fn swept(mut r: RunResults, bytes: u64, threads: Option<u32>) -> RunResults {
    let h = r.run.as_mut().expect("a run header");
    h.cache_sweep_bytes = Some(bytes);
    h.cache_sweep_threads = threads;
    r
}

#[test]
fn memory_probes_of_runs_swept_differently_are_not_compared() {
    // The same 20% slowdown as above, with the new run's memory probe 1.67x the baseline's.
    // When the runs swept the caches the same way that explains the slowdown away; when the
    // baseline read its 256 MiB buffer in two halves at once (15 ms on this project's
    // machine) and the new run on one thread (25 ms), the probes time different sweeps and
    // the slowdown is caught as without a probe.
    let mib256 = 256 << 20;
    let slow = |n: u64| if n >= 64_000 { 1.2 * linear(n) } else { linear(n) };
    let base = || with_memory(run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]), &|_| 15e6);
    let new = || with_memory(run("b", 2, "cpu", 1e8, &slow, &lin_bytes, &[]), &|_| 25e6);
    let same = compare(&swept(base(), mib256, Some(2)), &swept(new(), mib256, Some(2)), &GateOptions::default());
    assert_eq!(same.regressions, 0, "{:?}", same.workloads[0].points);
    assert!(!same.failed());
    let differ = compare(&swept(base(), mib256, Some(2)), &swept(new(), mib256, None), &GateOptions::default());
    assert_eq!(differ.regressions, 2, "{:?}", differ.workloads[0].points);
    assert!(differ.workloads[0].points.iter().all(|p| p.memory_ratio.is_none()));
    assert!(differ.failed());
}

#[test]
fn an_extra_size_in_one_run_only_leaves_the_comparison_complete() {
    // The extra size (one step past the planned sizes, for a design whose class was
    // unsettled) depends on the run: a baseline that has it and a new run that does not
    // still compare completely, and the extra point is not compared.
    let mut base = run("a", 1, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let mut extra = base.workloads[0].points.last().expect("a point").clone();
    extra.rows = 256_000;
    base.workloads[0].points.push(extra);
    assert_eq!(base.workloads[0].extra_sizes(), vec![256_000]);
    let new = run("b", 2, "cpu", 1e8, &linear, &lin_bytes, &[]);
    let c = framecost::track::completeness::check(&base, &new);
    assert_eq!(c.missing_points, 0, "{:?}", c.problems());
    let g = compare(&base, &new, &GateOptions::default());
    assert!(g.workloads[0].points.iter().all(|p| p.rows != 256_000));
    assert!(g.workloads[0].missing.iter().all(|m| m.rows != 256_000), "{:?}", g.workloads[0].missing);
}

/// `gate RUN --pair OLD:NEW` on real sweeps: the same step twice in one workload, one copy
/// slowed by 50% (`slowdown: 50%`), is caught at the sizes compared; the same step twice
/// unchanged passes. The margins are wide on purpose (50% against a 20% threshold; two
/// identical designs sampled side by side measured within ±8% of each other in 18 sweeps
/// here, busy or quiet), so the test does not need a quiet machine; `DEVELOPERS.md` shows
/// the 15% rehearsal measured by command. Then the argument errors: exit 2.
#[test]
fn two_designs_of_one_sweep_are_gated_side_by_side() {
    let dir = tempfile::tempdir().expect("tempdir");
    let spec = |slow: &str| {
        format!(
            "name: side-by-side\nseed: 11\ntable:\n  columns:\n    - {{name: line, kind: key, order: sorted}}\n    - {{name: kilograms, kind: float, range: [1, 500]}}\nsizes: [2k, 8k, 32k]\nbudget: {{per_point: 400ms, whole_run: 20s}}\ndesigns:\n  - name: before\n    feed: records\n    steps: [build_from_records]\n  - name: after\n    feed: records\n    steps: [{{build_from_records: {{slowdown: {slow}}}}}]\n"
        )
    };
    let mut exits = Vec::new();
    for (name, slow) in [("slowed", "50%"), ("same", "0%")] {
        let yaml = dir.path().join(format!("{name}.yaml"));
        std::fs::write(&yaml, spec(slow)).expect("write");
        let out = dir.path().join(name);
        let s = Command::cargo_bin("framecost").expect("binary").arg("sweep").arg(&yaml).args(["--quiet", "--out"]).arg(&out).output().expect("sweeps");
        assert!(s.status.success(), "{}", String::from_utf8_lossy(&s.stderr));
        let g = Command::cargo_bin("framecost").expect("binary").arg("gate").arg(&out).args(["--pair", "before:after", "--threshold", "20%", "--json"]).output().expect("gates");
        let doc: serde_json::Value = serde_json::from_slice(&g.stdout).expect("json");
        assert_eq!(doc["pair"], serde_json::json!(["before", "after"]), "{doc}");
        let points = doc["workloads"][0]["points"].as_array().expect("points").clone();
        assert_eq!(points.len(), 3, "every size compared: {doc}");
        if name == "slowed" {
            for p in &points {
                assert_eq!(p["call"], "regression", "{p}");
                assert!(p["ratio"].as_f64().expect("ratio") > 1.2, "{p}");
            }
        }
        exits.push(g.status.code());
    }
    assert_eq!(exits, vec![Some(1), Some(0)]);
    let run = dir.path().join("same");
    for args in [vec!["--pair", "before"], vec!["--pair", "before:nothing"], vec!["--pair", "before:before"]] {
        let g = Command::cargo_bin("framecost").expect("binary").arg("gate").arg(&run).args(&args).output().expect("gates");
        assert_eq!(g.status.code(), Some(2), "{args:?}: {}", String::from_utf8_lossy(&g.stderr));
    }
    let g = Command::cargo_bin("framecost").expect("binary").arg("gate").arg(&run).arg(&run).args(["--pair", "before:after"]).output().expect("gates");
    assert_eq!(g.status.code(), Some(2), "a second run with --pair is a usage error");
    // The rehearsal workload the README points to lints.
    let l = Command::cargo_bin("framecost").expect("binary").args(["lint", "workloads/rehearsal/side-by-side.yaml"]).output().expect("lints");
    assert!(l.status.success(), "{}", String::from_utf8_lossy(&l.stderr));
}

/// `gate BASE NEW --json` on recorded runs; (exit code, report).
fn gate_recorded(base: &str, new: &str) -> (i32, serde_json::Value) {
    let out = assert_cmd::Command::cargo_bin("framecost").expect("binary").args(["gate", base, new, "--json"]).output().expect("runs");
    (out.status.code().unwrap_or(-1), serde_json::from_slice(&out.stdout).expect("json"))
}

#[test]
fn a_fifteen_percent_slowdown_between_separate_sweeps_is_caught_at_most_sizes() {
    // Three real sweeps of the rehearsal workload (tests/data/README.md): two unchanged, one
    // with `slowdown: 15%` on `build-once`. Against either unchanged sweep the slowed design
    // passes the threshold at six of its ten sizes (four neighbours confirming each other,
    // two alone, the largest among them) and is faster at none; the machine's own move
    // between the sweeps hid it at the others. It fails the gate on that design alone;
    // the two unchanged sweeps pass against each other both ways.
    let dir = "tests/data/gate-runs";
    for base in ["ledger-a", "ledger-b"] {
        let (code, g) = gate_recorded(&format!("{dir}/{base}"), &format!("{dir}/ledger-slowed"));
        assert_eq!(code, 1, "{base}: {g}");
        let points = g["workloads"][0]["points"].as_array().expect("points");
        let confirmed: Vec<&str> = points.iter().filter(|p| p["call"] == "regression" && p["confirmed"] == true).map(|p| p["design"].as_str().expect("design")).collect();
        assert!(confirmed.len() >= 4 && confirmed.iter().all(|d| *d == "build-once"), "{base}: {confirmed:?}");
        assert!(points.iter().filter(|p| p["design"] == "build-once").all(|p| p["call"] != "improvement"));
    }
    for (a, b) in [("ledger-a", "ledger-b"), ("ledger-b", "ledger-a")] {
        let (code, g) = gate_recorded(&format!("{dir}/{a}"), &format!("{dir}/{b}"));
        assert_eq!(code, 0, "{a} -> {b}: {g}");
    }
}

#[test]
fn a_steady_fifteen_percent_slowdown_is_caught_over_the_sizes_together() {
    // Two more recorded sweeps of the same rehearsal (tests/data/README.md): `ledger-c`
    // unchanged, `ledger-slowed-2` with `slowdown: 15%` on `build-once`. Against every
    // unchanged sweep the slowed design is confirmed at too few sizes for the point rule
    // (the machine's own move hides it at most of them), yet it moved the same way at nine
    // or ten sizes of ten: the sizes judged together fail the gate on it alone. The three
    // unchanged sweeps pass against one another both ways, no design called as a whole.
    let dir = "tests/data/gate-runs";
    for base in ["ledger-a", "ledger-b", "ledger-c"] {
        let (code, g) = gate_recorded(&format!("{dir}/{base}"), &format!("{dir}/ledger-slowed-2"));
        assert_eq!(code, 1, "{base}: {g}");
        assert_eq!(g["design_regressions"], 1, "{base}: {g}");
        let w = &g["workloads"][0];
        let called: Vec<(&str, &str)> = w["moves"]
            .as_array()
            .expect("moves")
            .iter()
            .filter(|m| m["call"] != "same" && m["call"] != "unclear")
            .map(|m| (m["design"].as_str().expect("design"), m["call"].as_str().expect("call")))
            .collect();
        assert_eq!(called, vec![("build-once", "regression")], "{base}: {w}");
        let m = w["moves"].as_array().expect("moves").iter().find(|m| m["design"] == "build-once").expect("build-once");
        let (r, lo, hi) = (m["ratio"].as_f64().expect("ratio"), m["ratio_low"].as_f64().expect("low"), m["ratio_high"].as_f64().expect("high"));
        // The rehearsal slowed the build by 15%: the pooled estimate lands near it, inside its own interval.
        assert!(lo > 1.0 && lo < r && r < hi && (1.05..1.25).contains(&r), "{base}: {m}");
        // Nothing else is flagged: no confirmed regression of another design.
        assert!(w["points"].as_array().expect("points").iter().all(|p| p["design"] == "build-once" || p["call"] != "regression"), "{base}: {w}");
        // The text says why it failed, with the pooled figures.
        let out = assert_cmd::Command::cargo_bin("framecost").expect("binary").env("COLUMNS", "200").args(["gate", &format!("{dir}/{base}"), &format!("{dir}/ledger-slowed-2")]).output().expect("runs");
        let text = String::from_utf8_lossy(&out.stdout);
        assert!(text.contains("worse: 1 design(s) slower across their sizes taken together (exit 1)"), "{text}");
        let line = text.lines().find(|l| l.contains("build-once")).expect("build-once line");
        assert!(line.contains("slower across its sizes taken together") && line.contains("[95% interval"), "{line}");
    }
    for a in ["ledger-a", "ledger-b", "ledger-c"] {
        for b in ["ledger-a", "ledger-b", "ledger-c"] {
            if a == b {
                continue;
            }
            let (code, g) = gate_recorded(&format!("{dir}/{a}"), &format!("{dir}/{b}"));
            assert_eq!(code, 0, "{a} -> {b}: {g}");
            let moves = g["workloads"][0]["moves"].as_array().expect("moves").clone();
            assert!(moves.iter().all(|m| m["call"] == "same" || m["call"] == "unclear"), "{a} -> {b}: {moves:?}");
        }
    }
}

#[test]
fn history_marks_a_design_moved_over_its_sizes_taken_together() {
    // The two recorded sweeps of the rehearsal above: `ledger-slowed-2` was swept first (with
    // `slowdown: 15%` on `build-once`), `ledger-c` just after without it. No size of the
    // design is confirmed by a neighbour between them, so the only mark is the design's move
    // over its sizes taken together: faster in the later, unchanged run.
    let tmp = tempfile::tempdir().expect("tempdir");
    for name in ["ledger-slowed-2", "ledger-c"] {
        let to = tmp.path().join(name);
        std::fs::create_dir_all(&to).expect("mkdir");
        std::fs::copy(format!("tests/data/gate-runs/{name}/points.jsonl"), to.join("points.jsonl")).expect("copy");
    }
    let out = assert_cmd::Command::cargo_bin("framecost").expect("binary").arg("history").arg(tmp.path()).output().expect("runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(text.contains("build-once got faster over its sizes taken together"), "{text}");
    assert!(!text.contains("rows got"), "{text}");
    let svg = std::fs::read_to_string(tmp.path().join("history").join("tiny-ledger-history.svg")).expect("svg");
    assert!(svg.contains("build-once got faster over its sizes taken together"), "the picture's description names the move");
}

#[test]
fn chance_passes_among_a_workloads_many_tests_are_not_called() {
    // Cross-column cut from two back-to-back catalog sweeps of unchanged code
    // (tests/data/README.md, `cross-a`, `cross-b`): `horizontal-sum`, whose samples spread
    // from 0.9 to 4.7 ms at one size, measured ×1.25 and ×1.26 at 16k and 32k rows with rank
    // tests at p = 0.021 and 0.031. Two neighbours agreeing used to fail the gate; among the
    // workload's 28 tests those p-values are what chance gives (Benjamini–Hochberg q ≈ 0.10).
    let dir = "tests/data/gate-runs";
    for (a, b) in [("cross-a", "cross-b"), ("cross-b", "cross-a")] {
        let (code, g) = gate_recorded(&format!("{dir}/{a}"), &format!("{dir}/{b}"));
        assert_eq!(code, 0, "{a} -> {b}: {g}");
        let pts = g["workloads"][0]["points"].as_array().expect("points");
        assert_eq!(pts.len(), 28);
        assert!(pts.iter().all(|p| p["call"] != "regression" && p["call"] != "improvement"), "{a} -> {b}");
        if a == "cross-a" {
            for rows in [16000, 32000] {
                let p = pts.iter().find(|p| p["design"] == "horizontal-sum" && p["rows"] == rows).expect("point");
                let (pv, qv) = (p["p_value"].as_f64().expect("p"), p["q_value"].as_f64().expect("q"));
                assert!(pv < 0.05 && qv >= 0.05 && qv >= pv, "{rows}: p {pv} q {qv}");
                assert_eq!(p["call"], "unclear");
            }
        }
    }
}

#[test]
fn a_leftover_of_the_machine_move_is_not_called_a_change_of_the_design() {
    // Workloads cut from three back-to-back catalog sweeps of unchanged code
    // (tests/data/README.md, `drift-a`/`drift-b`, `selfjoin-a`/`selfjoin-b`): between them
    // the machine slowed the whole workload, and one design more than its siblings and the
    // drift probe — type-drift's 50 µs `one-cast`, sql-self-join's two-threaded `window`.
    // What the corrections left over passed the threshold at (nearly) every size, but is
    // smaller than what they took out: the machine's move, not the design's.
    let dir = "tests/data/gate-runs";
    for (a, b, design) in [("drift-a", "drift-b", "one-cast"), ("selfjoin-a", "selfjoin-b", "window")] {
        let (code, g) = gate_recorded(&format!("{dir}/{a}"), &format!("{dir}/{b}"));
        assert_eq!(code, 0, "{a} -> {b}: {g}");
        let moves = g["workloads"][0]["moves"].as_array().expect("moves");
        let m = moves.iter().find(|m| m["design"] == design).expect("the design's move");
        let (left, raw) = (m["ratio"].as_f64().expect("ratio"), m["raw_ratio"].as_f64().expect("raw"));
        // The recorded situation: past the 10% threshold after the corrections, with the
        // interval above ×1, and the raw medians moved far more. Not called: `unclear` by the
        // machine-share rule, or `same` where the bar of three spreads of the workload's
        // points around their sizes' moves is higher still (type-drift: ×1.22).
        assert!(left > 1.10 && m["ratio_low"].as_f64().expect("low") > 1.0, "{m}");
        assert!(left.ln() < (raw / left).ln(), "{m}");
        assert!(m["call"] == "unclear" || m["call"] == "same", "{m}");
        assert_eq!(g["design_regressions"], 0, "{g}");
    }
}

fn with_allocator(mut r: RunResults, allocator: Option<&str>) -> RunResults {
    if let Some(h) = r.run.as_mut() {
        h.allocator = allocator.map(str::to_string);
    }
    r
}

/// Runs measured with the allocator tuned differently (here: a run made before framecost
/// recorded its tuning, when glibc's fast bins were still on, against one made after) are
/// said to differ, in the JSON and the text; the same tuning, or none recorded in either,
/// says nothing. It informs and changes no call.
#[test]
fn runs_measured_with_a_differently_tuned_allocator_are_said_to_differ() {
    let tmp = tempfile::tempdir().expect("tempdir");
    let tuned = Some("glibc: blocks of 128 KiB and more fresh from the system, heap never trimmed, fast bins off");
    let older = with_allocator(run("160000", 41, "cpu", 1e8, &linear, &lin_bytes, &[]), None);
    let newer = with_allocator(run("170000", 42, "cpu", 1e8, &linear, &lin_bytes, &[]), tuned);
    let again = with_allocator(run("180000", 43, "cpu", 1e8, &linear, &lin_bytes, &[]), tuned);
    let g = compare(&older, &newer, &GateOptions::default());
    assert_eq!(g.allocators_differ, Some((None, tuned.map(str::to_string))));
    let calls = |g: &framecost::track::gate::GateReport| g.workloads[0].points.iter().map(|p| p.call).collect::<Vec<_>>();
    assert_eq!(calls(&g), calls(&compare(&with_allocator(older.clone(), tuned), &newer, &GateOptions::default())));
    assert_eq!(compare(&newer, &again, &GateOptions::default()).allocators_differ, None);
    for (name, r) in [("older", &older), ("newer", &newer)] {
        write_run(&tmp.path().join(name), r);
    }
    let out = Command::cargo_bin("framecost").expect("binary").env("COLUMNS", "200").arg("gate").arg(tmp.path().join("older")).arg(tmp.path().join("newer")).output().expect("runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("allocator") && text.contains("baseline: not recorded") && text.contains("fast bins off"), "{text}");
}
