//! `framecost explain RUN` — findings for a saved run: per design how time, allocated bytes
//! and peak memory grow, the prediction at the size that matters, where designs overtake
//! one another, what the evidence says about the cause, and a verdict. From saved results
//! alone; `--json` for machines.

use crate::analyse::AnalyseOptions;
use crate::explain::Analysed;
use crate::spec::units::parse_rows;
use std::path::PathBuf;

/// Schema of the `--json` document (docs/results.md).
pub const SCHEMA: &str = "framecost.explain/1";

/// Explain a saved run: growth, predictions, crossovers, causes and a verdict.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// A run folder (or its points.jsonl).
    pub run: PathBuf,
    /// Predict at this many rows instead of each workload's target, e.g. `10M`.
    #[arg(long, value_name = "ROWS")]
    pub at: Option<String>,
    /// Fit only sizes up to this many rows and check the predictions against the larger
    /// sizes that were measured.
    #[arg(long, value_name = "ROWS")]
    pub fit_up_to: Option<String>,
    /// Fit growth classes on only the largest N measured sizes.
    #[arg(long, value_name = "N")]
    pub top_sizes: Option<usize>,
    /// Also print every step's cost-model note.
    #[arg(long)]
    pub long: bool,
    /// Print the analysis and findings as JSON.
    #[arg(long)]
    pub json: bool,
}

pub fn run(a: Args) -> Result<(), super::Failure> {
    let r = crate::results::reader::RunResults::read(&a.run).map_err(super::failure::usage)?;
    let parse = |v: &Option<String>, flag: &str| -> Result<Option<u64>, String> {
        match v {
            None => Ok(None),
            Some(t) => parse_rows(t).map(Some).map_err(|e| format!("{flag}: expected {e}")),
        }
    };
    let opts = match (parse(&a.at, "--at"), parse(&a.fit_up_to, "--fit-up-to")) {
        (Ok(at), Ok(fit_up_to)) => AnalyseOptions { at, fit_up_to, top_sizes: a.top_sizes },
        (Err(e), _) | (_, Err(e)) => return Err(super::Failure::Usage(e)),
    };
    let analysed = Analysed::new(&r, &opts);
    if a.json {
        let doc = analysed.document(SCHEMA);
        println!("{}", serde_json::to_string_pretty(&doc).unwrap_or_default());
        return Ok(());
    }
    if !r.complete() {
        println!("this run did not finish (interrupted or killed): what follows is drawn from the points measured before it stopped\n");
    }
    if r.damaged_lines > 0 {
        println!("{} damaged line(s) in the results file were left out\n", r.damaged_lines);
    }
    for crate::explain::AnalysedWorkload { w, a: wa, e } in analysed.workloads() {
        println!("▌ {}", w.header.workload);
        for d in &wa.designs {
            let t = d.time.as_ref().map(|t| {
                let c = t.contender();
                format!("time {} ({}, weight {:.2})", t.label(), if c.is_empty() { "no other class fits".into() } else { c }, t.evidence_weight)
            });
            let b = d.bytes.as_ref().map(|b| format!("bytes {}", b.label())).or(d.bytes_exponent.map(|e| format!("bytes exp {e:.2}")));
            let p = d.peak.as_ref().map(|b| format!("peak {}", b.label())).or(d.peak_exponent.map(|e| format!("peak exp {e:.2}")));
            let parts: Vec<String> = [t, b, p].into_iter().flatten().collect();
            println!("  {:<24} {}", d.design, parts.join(" · "));
            if let Some(pr) = &d.prediction {
                println!(
                    "  {:<24} predicted at {}: {} [{}–{}]{}",
                    "",
                    wa.axis().point(pr.rows),
                    crate::units::time_ns(pr.median),
                    crate::units::time_ns(pr.low),
                    crate::units::time_ns(pr.high),
                    match (pr.far, pr.rough) {
                        (_, true) => " (an order of magnitude only: the interval spans more than ×10)",
                        (true, false) => " (far past the measured sizes)",
                        _ => "",
                    }
                );
                if let Some(a) = pr.allowance {
                    println!(
                        "  {:<24} (the interval allows ×{} either way for reaching ×{} past the largest fitted size)",
                        "",
                        crate::units::short(a),
                        crate::units::short(pr.beyond_fitted())
                    );
                }
            }
            for h in &d.holdout {
                println!(
                    "  {:<24} check at {}: predicted {}, measured {} ({:+.1}%{}{}{})",
                    "",
                    wa.axis().point(h.rows),
                    crate::units::time_ns(h.predicted_ns),
                    crate::units::time_ns(h.measured_ns),
                    h.error * 100.0,
                    if h.inside_interval { ", inside the interval" } else { ", outside the interval" },
                    crate::analyse::cores_changed(h).map(|(at, fitted)| format!("; {at:.1} cores busy there against {fitted:.1} at the largest fitted size")).unwrap_or_default(),
                    passed_text(&h.caches_passed)
                );
            }
            for n in &d.notes {
                println!("  {:<24} ({n})", "");
            }
        }
        for c in &wa.crossovers {
            // An interval that runs to the end of the search is no information: say so.
            let range = if c.bounded {
                format!(" [{}–{}]", wa.axis().value_f(c.rows_low), wa.axis().value_f(c.rows_high))
            } else {
                " (its interval is unbounded: the curves are too close to place it)".to_string()
            };
            println!(
                "  crossover of the fitted curves: `{}` is cheaper below about {}{range}, `{}` above{}",
                c.faster_below,
                wa.axis().point_f(c.rows),
                c.faster_above,
                if c.inside_measured { " (inside the measured sizes)" } else { " (predicted beyond them)" }
            );
        }
        print!("{}", crate::explain::render(e, a.long));
        if a.long {
            print!("{}", query_plans(&w.header.designs));
        }
        println!();
    }
    Ok(())
}

/// "; the table grew past the L2 cache after the largest fitted size", or nothing.
fn passed_text(levels: &[u8]) -> String {
    let names: Vec<String> = levels.iter().map(|l| format!("L{l}")).collect();
    match names.len() {
        0 => String::new(),
        1 => format!("; the table grew past the {} cache after the largest fitted size", names[0]),
        _ => format!("; the table grew past the {} caches after the largest fitted size", names.join(" and ")),
    }
}

/// The optimized plan of each `sql` step, as recorded with the run (older runs have none).
pub fn query_plans(designs: &[crate::results::DesignHeader]) -> String {
    let mut s = String::new();
    for d in designs.iter().filter(|d| !d.query_plans.is_empty()) {
        let engine = d.engine.as_deref().unwrap_or("memory");
        for (k, plan) in d.query_plans.iter().enumerate() {
            let which = if d.query_plans.len() > 1 { format!(" (query {})", k + 1) } else { String::new() };
            s.push_str(&format!("  query plan of `{}`{which}, {engine} engine, as polars' optimizer left it:\n", d.name));
            for line in plan.lines() {
                s.push_str(&format!("    │ {line}\n"));
            }
        }
    }
    s
}
