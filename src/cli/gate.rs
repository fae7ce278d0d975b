//! `framecost gate BASELINE NEW` — compare two runs of the same workloads, size by size and
//! class by class, and fail (exit 1) when something got slower beyond the threshold with a
//! significant rank test, or started to scale worse. Exit 0 when nothing got worse, 2 for
//! bad input. BASELINE is a run folder or the name of a saved baseline.

use crate::present::units::time_ns;
use crate::results::reader::RunResults;
use crate::spec::units::{parse_share, rows_label};
use crate::track::gate::{compare, Call, GateOptions, GateReport};
use comfy_table::{presets, CellAlignment, ContentArrangement, Table};
use std::path::{Path, PathBuf};

/// Schema of the `--json` document (docs/results.md).
pub const SCHEMA: &str = "framecost.gate/1";

/// Compare a baseline run with a new run; exit 1 on a regression.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The baseline: a run folder, or a name saved with `framecost baseline save`.
    pub baseline: String,
    /// The new run folder.
    pub new: PathBuf,
    /// How much slower a median may get before it counts, e.g. `10%` (default: each
    /// workload's `gate.threshold`, else 10%).
    #[arg(long, value_name = "SHARE")]
    pub threshold: Option<String>,
    /// Significance level of the rank test.
    #[arg(long, default_value_t = 0.05, value_name = "ALPHA")]
    pub alpha: f64,
    /// Where saved baselines live.
    #[arg(long, default_value = "baselines", value_name = "DIR")]
    pub store: PathBuf,
    /// Time-exponent rise that counts as a growth regression, e.g. `0.1` (the default); the
    /// per-size comparisons must agree with it too.
    #[arg(long, value_name = "EXPONENT", conflicts_with = "no_growth_check")]
    pub growth_rise: Option<f64>,
    /// Judge sizes only: no growth check of time exponents (bytes keep theirs).
    #[arg(long)]
    pub no_growth_check: bool,
    /// Print the comparison as JSON.
    #[arg(long)]
    pub json: bool,
    /// Judge what can be compared even when the comparison is partial (the new run did not
    /// finish, designs match nothing, records are duplicated or damaged). Without it such
    /// a comparison is refused with exit 2.
    #[arg(long)]
    pub partial_ok: bool,
}

/// A run folder, or a saved baseline's folder by name.
pub fn resolve(arg: &str, store: &Path) -> PathBuf {
    let p = PathBuf::from(arg);
    if p.exists() {
        return p;
    }
    store.join(arg)
}

pub fn run(a: Args) -> i32 {
    let bad = |m: String| {
        eprintln!("framecost gate: {m}");
        crate::exit::BAD_INPUT
    };
    let threshold = match a.threshold.as_deref().map(parse_share).transpose() {
        Ok(Some(t)) if !(t > 0.0 && t <= 10.0) => return bad(format!("--threshold: expected above 0% and at most 1000%, found {t}")),
        Ok(t) => t,
        Err(e) => return bad(format!("--threshold: expected {e}")),
    };
    if !(a.alpha > 0.0 && a.alpha < 1.0) {
        return bad(format!("--alpha: expected a level between 0 and 1, found {}", a.alpha));
    }
    let base_dir = resolve(&a.baseline, &a.store);
    let base = match RunResults::read(&base_dir) {
        Ok(r) => r,
        Err(e) => return bad(format!("baseline: {e}")),
    };
    let new = match RunResults::read(&a.new) {
        Ok(r) => r,
        Err(e) => return bad(format!("new run: {e}")),
    };
    // Refuse to pass on a comparison of little or nothing (see track::completeness).
    let completeness = crate::track::completeness::check(&base, &new);
    let problems = completeness.problems();
    if !problems.is_empty() {
        let lines = problems.iter().map(|p| format!("  - {p}")).collect::<Vec<_>>().join("\n");
        if !a.partial_ok {
            return bad(format!(
                "the comparison would be partial ({} of {} baseline points comparable):\n{lines}\n(--partial-ok judges what can be compared)",
                completeness.comparable_points, completeness.baseline_points
            ));
        }
        eprintln!("framecost gate: partial comparison (--partial-ok):\n{lines}");
    }
    let growth_rise = match (a.no_growth_check, a.growth_rise) {
        (true, _) => None,
        (false, Some(r)) if !(r > 0.0 && r <= 3.0) => return bad(format!("--growth-rise: expected an exponent above 0 and at most 3, found {r}")),
        (false, Some(r)) => Some(r),
        (false, None) => Some(crate::track::gate::TIME_EXPONENT_RISE),
    };
    let report = compare(&base, &new, &GateOptions { threshold, alpha: a.alpha, growth_rise });
    if report.workloads.is_empty() {
        return bad(format!("the runs share no workload ({})", report.unmatched_workloads.join(", ")));
    }
    if a.json {
        // The report's own fields, with the schema beside them (docs/results.md).
        let mut doc = serde_json::to_value(&report).unwrap_or_default();
        if let Some(o) = doc.as_object_mut() {
            o.insert("schema".into(), SCHEMA.into());
        }
        println!("{}", serde_json::to_string_pretty(&doc).unwrap_or_default());
    } else {
        print!("{}", render(&report));
    }
    if report.failed() {
        crate::exit::REGRESSION
    } else {
        crate::exit::OK
    }
}

/// The verdict table and notes as text.
pub fn render(r: &GateReport) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(s, "gate: baseline {} → new {}", r.baseline_run, r.new_run);
    if r.workloads.iter().flat_map(|w| &w.points).any(|p| p.normalised_by.as_deref() == Some("drift probe")) {
        let _ = writeln!(s, "  ratios are corrected by the drift probe timed beside the designs at each size (raw ratios in brackets)");
    }
    if r.machines_differ {
        let _ = writeln!(
            s,
            "  the runs were made on different machines or versions: ratios are also shown divided by the yardstick ratio ({}), and that one is judged",
            r.yardstick_ratio.map(|y| format!("×{y:.3}")).unwrap_or_else(|| "unknown".into())
        );
    }
    for w in &r.workloads {
        let _ = writeln!(s, "\n▌ {} (threshold {:.0}%)", w.workload, w.threshold * 100.0);
        let mut sizes: Vec<u64> = w.points.iter().map(|p| p.rows).collect();
        sizes.sort_unstable();
        sizes.dedup();
        let mut designs: Vec<String> = Vec::new();
        for p in &w.points {
            if !designs.contains(&p.design) {
                designs.push(p.design.clone());
            }
        }
        let mut t = Table::new();
        t.load_preset(presets::NOTHING).set_content_arrangement(ContentArrangement::Disabled);
        let mut head = vec!["new / baseline".to_string()];
        head.extend(sizes.iter().map(|n| rows_label(*n)));
        t.set_header(head);
        for d in &designs {
            let mut row = vec![d.clone()];
            for &n in &sizes {
                row.push(match w.points.iter().find(|p| &p.design == d && p.rows == n) {
                    Some(p) => {
                        let shown = match p.normalised_ratio {
                            Some(nr) => format!("×{:.2} (raw {:.2})", nr, p.ratio),
                            None => format!("×{:.2}", p.ratio),
                        };
                        let mark = match (p.call, p.confirmed) {
                            (Call::Regression, false) => "△",
                            (Call::Improvement, false) => "▽",
                            (c, _) => c.mark(),
                        };
                        format!("{shown} {mark}")
                    }
                    None => String::new(),
                });
            }
            t.add_row(row);
        }
        for c in t.column_iter_mut().skip(1) {
            c.set_cell_alignment(CellAlignment::Right);
        }
        for line in t.to_string().lines() {
            let _ = writeln!(s, "  {}", line.trim_end());
        }
        for p in w.points.iter().filter(|p| matches!(p.call, Call::Regression | Call::Improvement)) {
            let _ = writeln!(
                s,
                "  {}{} {} at {} rows: medians {} → {} (×{:.3}{}){}, p = {}",
                if p.call == Call::Regression { "regression" } else { "improvement" },
                if p.confirmed { "" } else { " at this size only (not confirmed)" },
                p.design,
                rows_label(p.rows),
                time_ns(p.base_median_ns),
                time_ns(p.new_median_ns),
                p.ratio,
                p.normalised_ratio.map(|n| format!(", ×{n:.3} corrected for the machine")).unwrap_or_default(),
                match (p.shift, p.ratio_low, p.ratio_high) {
                    (Some(e), Some(a), Some(b)) => format!("; pairwise estimate ×{e:.3}, 95% interval ×{a:.3}–×{b:.3}"),
                    _ => String::new(),
                },
                p.p_value.map(|v| format!("{v:.2e}")).unwrap_or_else(|| "n/a".into())
            );
        }
        for g in &w.growth {
            let tag = match g.call {
                Call::Regression => "GROWTH REGRESSION",
                Call::Improvement => "growth improvement",
                _ => continue,
            };
            let iv = |v: Option<(f64, f64)>| v.map(|(a, b)| format!(" [{a:.2}–{b:.2}]")).unwrap_or_default();
            let _ = writeln!(
                s,
                "  {tag}: {} {} exponent {:.2}{} → {:.2}{} (class {} → {}) over {} sizes",
                g.design,
                g.metric,
                g.base_exponent.unwrap_or(f64::NAN),
                iv(g.base_interval),
                g.new_exponent.unwrap_or(f64::NAN),
                iv(g.new_interval),
                g.base_class.clone().unwrap_or_else(|| "?".into()),
                g.new_class.clone().unwrap_or_else(|| "?".into()),
                g.sizes.len()
            );
        }
        if let Some(cm) = &w.common_mode {
            if (cm.ratio - 1.0).abs() > w.threshold {
                let _ = writeln!(
                    s,
                    "  the whole workload moved ×{:.2} (median of its points; spread ×{:.2}): the environment, or a change common to every design — reported, not judged; points are judged against it",
                    cm.ratio,
                    cm.spread.exp()
                );
            }
        }
        for m in &w.missing {
            let _ = writeln!(s, "  not compared: {} at {} rows (baseline {}, new {})", m.design, rows_label(m.rows), m.baseline, m.new);
        }
        for d in &w.unmatched_designs {
            let _ = writeln!(s, "  design in one run only: {d}");
        }
    }
    for wname in &r.unmatched_workloads {
        let _ = writeln!(s, "\nworkload in one run only: {wname}");
    }
    let _ = writeln!(
        s,
        "\n{} · ▲ regression, ▼ improvement (△ ▽ at one size only, not confirmed), · within the threshold, ? beyond it but not significant\n{} confirmed regression(s), {} unconfirmed, {} growth regression(s), {} improvement(s), {} point(s) not compared",
        if r.failed() { "RESULT: worse" } else { "RESULT: no regression" },
        r.regressions,
        r.unconfirmed_regressions,
        r.growth_regressions,
        r.improvements,
        r.missing
    );
    s
}
