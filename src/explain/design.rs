//! The findings about one design: how its time grows and whether that meets the
//! workload's expectation, repeated copying and peak memory against the table, fragmented
//! output, parallelism, unstable samples and stalls, dtype drift, sizes it was not measured
//! at, and predictions far past the measured sizes. Each finding carries its numbers.

use super::Finding;
use crate::analyse::{class_of, DesignAnalysis, Meets};
use crate::fit::growth::GrowthClass;
use crate::units::{bytes, time_ns};
use crate::results::reader::WorkloadResults;
use crate::results::{Axis, DesignHeader, Measured};
use crate::spec::model::ColumnKind;

/// What every finding about one design needs.
#[derive(Clone, Copy)]
struct Design<'a> {
    w: &'a WorkloadResults,
    dh: &'a DesignHeader,
    da: &'a DesignAnalysis,
    /// The design the verdict chose, if any.
    better: Option<&'a str>,
    /// What was swept: rows, or another axis ("groups", "columns") with the rows fixed.
    ax: Axis<'a>,
}

impl Design<'_> {
    fn finding(&self, kind: &str, measured: String, implies: String, action: String) -> Finding {
        Finding { design: Some(self.dh.name.clone()), kind: kind.into(), measured, implies, action }
    }

    /// "use `b` instead (why)" when the verdict chose another design.
    fn switch(&self, why: &str) -> String {
        match self.better {
            Some(b) if b != self.dh.name => format!("use `{b}` instead ({why})"),
            _ => String::new(),
        }
    }

    /// The estimated size of the table at `rows`.
    fn table_bytes(&self, rows: u64) -> Option<f64> {
        self.w.table_bytes(rows)
    }
}

/// Every finding about one design, in the order the report reads them.
pub(super) fn findings(w: &WorkloadResults, dh: &DesignHeader, da: &DesignAnalysis, better: Option<&str>) -> Vec<Finding> {
    let d = Design { w, dh, da, better, ax: w.header.axis() };
    let mut findings = Vec::new();
    growth(&d, &mut findings);
    if let (Some(first), Some(last)) = (first_measured(w, &dh.name), last_measured(w, &dh.name)) {
        memory(&d, first, last, &mut findings);
        runs(&d, first, last, &mut findings);
        dtypes(&d, last.1, &mut findings);
    }
    coverage(&d, &mut findings);
    findings
}

fn last_measured<'a>(w: &'a WorkloadResults, design: &str) -> Option<(u64, &'a Measured)> {
    w.design_points(design).into_iter().rev().find_map(|p| p.measured.as_ref().map(|m| (p.rows, m)))
}

fn first_measured<'a>(w: &'a WorkloadResults, design: &str) -> Option<(u64, &'a Measured)> {
    w.design_points(design).into_iter().find_map(|p| p.measured.as_ref().map(|m| (p.rows, m)))
}

fn rank(c: GrowthClass) -> usize {
    GrowthClass::ALL.iter().position(|x| *x == c).unwrap_or(0)
}

/// Growth of time, and the teaching expectations (time and bytes).
fn growth(d: &Design, findings: &mut Vec<Finding>) {
    let Design { dh, da, ax, .. } = *d;
    let axis = ax.name();
    let f = |kind: &str, measured: String, implies: String, action: String| d.finding(kind, measured, implies, action);
    if let Some(t) = &da.time {
        let exp = da
            .time_exponent
            .as_ref()
            .map(|e| format!(", log-log slope {:.2} [{:.2}–{:.2}] over the top {} sizes", e.slope, e.low, e.high, e.sizes_used))
            .unwrap_or_default();
        let runner = Some(t.contender()).filter(|c| !c.is_empty()).map(|c| format!("; {c}")).unwrap_or_default();
        findings.push(f(
            "growth",
            format!("time grows as {} over {} sizes{runner}{exp}", t.label(), t.sizes),
            match class_of(&t.class) {
                Some(GrowthClass::Quadratic) => format!("once the n² term dominates, doubling the {axis} multiplies the time by about 4: fine on a sample, hours on the full data"),
                Some(GrowthClass::Cubic) => format!("once the n³ term dominates, doubling the {axis} multiplies the time by about 8"),
                Some(GrowthClass::Linear) | Some(GrowthClass::Linearithmic) => if ax.is_rows() { "the cost scales with the data (roughly proportional)".into() } else { format!("the cost scales with the {axis} (roughly proportional)") },
                Some(GrowthClass::Constant) | Some(GrowthClass::Log) => format!("the cost barely depends on the number of {axis}"),
                None => "no growth class agrees with the measured slope: measure more sizes, or larger ones, before predicting".into(),
            },
            String::new(),
        ));
        if let Some(e) = &dh.expect_time {
            let meets = t.meets(e);
            let (ok, near) = (meets == Meets::Yes, meets == Meets::Near);
            findings.push(f(
                "expectation",
                format!("the workload expects time to grow as {e}; measured {}", t.label()),
                if ok {
                    "the measurement confirms the rule".into()
                } else if near {
                    "close to the rule: over a few decades these neighbouring classes differ by a slowly growing factor, so costs that creep up with size (data outgrowing the caches) tip the choice".into()
                } else {
                    "the measurement does not match the expectation".into()
                },
                if ok || near { String::new() } else { "fixed costs can hide growth at small sizes: extend the sizes if the decision depends on it".into() },
            ));
        }
    }
    if let (Some(e), Some(b)) = (&dh.expect_bytes, &da.bytes) {
        let want = class_of(e);
        let ok = want.is_some_and(|c| b.admits(c));
        findings.push(f(
            "expectation",
            format!("the workload expects allocated bytes to grow as {e}; measured {}", b.label()),
            if ok { "the measurement confirms the rule".into() } else { "the measurement does not match the expectation".into() },
            String::new(),
        ));
    }
}

/// Repeated copying (bytes per unit that grow with the unit) and peak memory against the table.
fn memory(d: &Design, (n0, m0): (u64, &Measured), (n1, m1): (u64, &Measured), findings: &mut Vec<Finding>) {
    let Design { da, ax, .. } = *d;
    let at = |x: u64| ax.point(x);
    let f = |kind: &str, measured: String, implies: String, action: String| d.finding(kind, measured, implies, action);
    let per0 = m0.alloc.bytes as f64 / n0 as f64;
    let per1 = m1.alloc.bytes as f64 / n1 as f64;
    let superlinear = da.bytes.as_ref().and_then(|b| class_of(&b.class)).map(|c| rank(c) >= rank(GrowthClass::Quadratic));
    let slope = da.bytes_exponent.unwrap_or(1.0);
    // A program has no allocation counts: no copying is claimed from zeros.
    // Per unit of the axis: only for counts (rows, groups, columns), not for shares.
    let unit = ax.unit();
    if let Some(u) = unit.filter(|_| m1.alloc_counted && n1 >= 4 * n0 && per1 > 2.0 * per0 && (superlinear == Some(true) || (superlinear.is_none() && slope >= 1.5))) {
        let tb = d.table_bytes(n1).map(|t| format!(", {:.0}× the table's own {}", m1.alloc.bytes as f64 / t.max(1.0), bytes(t))).unwrap_or_default();
        findings.push(f(
            "copying",
            format!(
                "allocates {} per run at {}: {} per {u}, up from {} per {u} at {}{tb}; bytes grow as {}",
                bytes(m1.alloc.bytes as f64),
                at(n1),
                bytes(per1),
                bytes(per0),
                at(n0),
                da.bytes.as_ref().map(|b| b.class.clone()).unwrap_or_else(|| format!("n^{slope:.2}"))
            ),
            format!("each new {u} costs more than the one before: the data built so far is copied again and again (repeated copying of the growing table)"),
            d.switch("it copies each value a bounded number of times"),
        ));
    }
    // Peak live memory against the table.
    // A whole process's peak includes its own start-up (an interpreter, a library),
    // which is not the design holding tables: no multiple of the table is claimed.
    let whole_process = m1.program.is_some_and(|p| p.resident_before_bytes.is_none());
    if let Some(t) = d.table_bytes(n1).filter(|_| !whole_process) {
        let peak = m1.peak_bytes() as f64;
        let copies = peak / t.max(1.0);
        // Only the part of the peak that grew with the table is tables held: a fixed buffer
        // (a join's hash table over a small side, the engine's own set-up) is not, and on
        // small tables it alone makes the peak many times the table (sample-trap's scan at
        // 1k rows: a 124 KiB peak over a 24 KiB table, 118 KiB of it already at 32 rows).
        let grown = d
            .table_bytes(n0)
            .filter(|t0| t > 1.5 * t0)
            .map(|t0| (peak - m0.peak_bytes() as f64).max(0.0) / (t - t0));
        let held = grown.map_or(copies, |g| g.min(copies));
        // For a program: what its runs added to its resident size, as its process showed it.
        let what = if m1.alloc_counted { "peak live memory" } else { "peak resident memory added by the runs" };
        if held >= 2.0 {
            // Said only where a fixed part of the peak makes the two multiples differ.
            let rise = grown.filter(|g| *g < 0.8 * copies).map(|g| format!("; from {} it grew {g:.1}× as much as the table did", at(n0))).unwrap_or_default();
            findings.push(f(
                "peak",
                format!("{what} {} at {}, {:.1}× the table's size ({}){rise}", bytes(peak), at(n1), copies, bytes(t)),
                format!("at its peak the design holds the equivalent of about {:.0} tables: memory, not time, may be the limit on the full data", held.floor()),
                String::new(),
            ));
        }
    }
}

/// Most cores a step may keep busy while it still counts as running on one.
const ONE_CORE: f64 = 1.2;

/// A step that ran on about one core at one measured size and on clearly more at the next
/// (polars splits a sort, a join or a query's work across threads above sizes of its own):
/// its time over that step rose less than its work, a one-off gain that no class continues
/// and that a busier machine or one with fewer cores does not give. Only clean points of
/// 100 µs or more count (the CPU clock's resolution).
fn went_parallel(d: &Design) -> Option<Finding> {
    use crate::analyse::{cores, CORES_CHANGE};
    let pts: Vec<(u64, &Measured, f64)> = d
        .w
        .design_points(&d.dh.name)
        .into_iter()
        .filter_map(|p| {
            let m = p.measured.as_ref().filter(|m| !m.is_contaminated() && m.median_ns > 1e5)?;
            Some((p.rows, m, cores(m)?))
        })
        .collect();
    let last = pts.last()?;
    if last.2 < ONE_CORE * CORES_CHANGE {
        return None;
    }
    // The last size on one core; every larger size on more.
    let k = pts.iter().rposition(|p| p.2 <= ONE_CORE)?;
    let (a, b) = (&pts[k], pts.get(k + 1)?);
    if b.2 < a.2 * CORES_CHANGE {
        return None;
    }
    let cpu = |m: &Measured, c: f64| c * m.median_ns;
    let (wall_rise, cpu_rise) = (b.1.median_ns / a.1.median_ns, cpu(b.1, b.2) / cpu(a.1, a.2));
    let at = |x: u64| d.ax.point(x);
    let program = if d.dh.program.is_some() { "the program's CPU time" } else { "CPU time" };
    Some(d.finding(
        "parallel",
        format!(
            "{program} is {:.1}× wall time at {} and {:.1}× at {}{}: the work went from one core to several between them",
            a.2,
            at(a.0),
            b.2,
            at(b.0),
            if last.0 != b.0 { format!(" ({:.1}× at {})", last.2, at(last.0)) } else { String::new() }
        ),
        format!(
            "over that step its time rose ×{wall_rise:.2} while its CPU time rose ×{cpu_rise:.2}: a one-off gain from the cores, which the fitted class averages in and which past the largest size only the cores still idle can add to; on a busier machine or one with fewer cores its time at the larger sizes is higher"
        ),
        "read how its work grows from the CPU time, and measure past the switch before acting on a prediction".into(),
    ))
}

/// Fragmented output, parallelism, unstable samples and stalls at the largest size.
fn runs(d: &Design, (n0, m0): (u64, &Measured), (n1, m1): (u64, &Measured), findings: &mut Vec<Finding>) {
    let Design { dh, ax, .. } = *d;
    let at = |x: u64| ax.point(x);
    let f = |kind: &str, measured: String, implies: String, action: String| d.finding(kind, measured, implies, action);
    // Fragmented output.
    let c0 = m0.output.as_ref().map(|o| o.chunks).unwrap_or(1);
    let c1 = m1.output.as_ref().map(|o| o.chunks).unwrap_or(1);
    if c1 > 1 && c1 > c0 {
        findings.push(f(
            "chunks",
            format!("leaves its output in {c1} chunks at {} ({c0} at {})", at(n1), at(n0)),
            "storage is fragmented in proportion to the work done; every later operation that needs contiguous storage pays to consolidate it".into(),
            "consolidate once at the end (or build once) instead of leaving the chunks".into(),
        ));
    }
    // Parallelism and stalls at the largest size (nothing to say without a CPU time).
    if let Some(finding) = went_parallel(d) {
        findings.push(finding);
    } else if let Some(par) = crate::analyse::cores(m1).filter(|_| m1.median_ns > 1e5) {
        if par >= 1.4 {
            findings.push(f(
                "parallel",
                format!("{} is {par:.1}× wall time at {}", if dh.program.is_some() { "the program's CPU time" } else { "CPU time" }, at(n1)),
                "the work ran on several cores; on a busier or smaller machine it will be slower".into(),
                String::new(),
            ));
        } else if par <= 0.5 && !m1.is_contaminated() {
            findings.push(f(
                "parallel",
                format!("CPU time is only {par:.2}× wall time at {}", at(n1)),
                "the design spends time waiting (I/O or the system), not computing".into(),
                String::new(),
            ));
        }
    }
    if m1.bimodal {
        let mut v = m1.samples_ns.clone();
        v.sort_by(f64::total_cmp);
        findings.push(f(
            "unstable",
            format!(
                "its samples at {} fall into two clusters (fastest {}, median {}, slowest {})",
                at(n1),
                time_ns(v[0]),
                time_ns(m1.median_ns),
                time_ns(v[v.len() - 1])
            ),
            if m1.is_contaminated() {
                "the machine was busy while it was measured: the slow cluster may be other work taking the cores".into()
            } else {
                "the design switches between a fast and a slow regime (a lazily built structure, a thread pool waking, memory being returned to the system); the median hides it".into()
            },
            "compare the fastest samples too, and measure again before acting on a small difference".into(),
        ));
    }
    if m1.samples_ns.len() >= 20 && m1.p50_ns > 0.0 && m1.p99_ns / m1.p50_ns >= 2.0 {
        findings.push(f(
            "tail",
            format!("p99 is {:.1}× the median at {} ({} vs {})", m1.p99_ns / m1.p50_ns, at(n1), time_ns(m1.p99_ns), time_ns(m1.p50_ns)),
            "some runs stall (allocation, page faults or another process); the median is the fairer comparison".into(),
            String::new(),
        ));
    }
}

/// Dtype drift: the output against the dtypes the design declares it is meant to
/// end with, else against the table's declared column kinds.
/// (Not for a program: the file format it writes decides its dtypes.)
fn dtypes(d: &Design, m1: &Measured, findings: &mut Vec<Finding>) {
    let Design { w, dh, .. } = *d;
    let f = |kind: &str, measured: String, implies: String, action: String| d.finding(kind, measured, implies, action);
    if let Some(o) = m1.output.as_ref().filter(|_| dh.program.is_none()) {
        let drift: Vec<String> = o
            .dtypes
            .iter()
            .filter_map(|(col, dt)| {
                if let Some((_, want)) = dh.expect_dtypes.iter().find(|(c, _)| c == col) {
                    return (dt != want).then(|| format!("{col}: meant to be {want}, ends {dt}"));
                }
                let declared = w.header.columns.iter().find(|c| &c.name == col)?;
                let want = declared.kind.dtype_label();
                // Records hold categorical values as text: not a drift of the design.
                let by_records = declared.kind == ColumnKind::Category && dt == "str" && dh.feed == "records";
                (dt != want && !by_records).then(|| format!("{col}: declared {want}, ends {dt}"))
            })
            .collect();
        if !drift.is_empty() {
            findings.push(f(
                "dtype",
                format!("output dtypes differ from what was intended: {}", drift.join(", ")),
                "values were cast on the way: wider types cost memory and speed, text loses meaning".into(),
                "create the column typed from the start, or cast explicitly where intended (and say so in `expect: {dtypes: …}`)".into(),
            ));
        }
    }
}

/// How far the recent trend must raise a prediction above its class's for a finding.
const TREND_FINDING_RAISE: f64 = 1.25;

/// Sizes the design was not measured at, and a prediction far past the measured sizes.
fn coverage(d: &Design, findings: &mut Vec<Finding>) {
    let Design { w, dh, da, ax, .. } = *d;
    let (name, axis) = (&dh.name, ax.name());
    let at = |x: u64| ax.point(x);
    let f = |kind: &str, measured: String, implies: String, action: String| d.finding(kind, measured, implies, action);
    // Skipped points.
    let skipped: Vec<_> = w.design_points(name).into_iter().filter(|p| p.skipped.is_some()).collect();
    if let Some(first) = skipped.first() {
        let sk = first.skipped.as_ref().expect("filtered");
        let pred = sk.predicted_ns.map(|p| format!("; one run was predicted at {}", time_ns(p))).unwrap_or_default();
        findings.push(f(
            "skipped",
            format!("not measured at {} of {} sizes, from {}: {}{pred}", skipped.len(), w.header.sizes.len(), at(first.rows), sk.reason.label()),
            if ax.is_rows() { "its cost outgrew the budget before the data did".into() } else { format!("its cost outgrew the budget before the {axis} did") },
            String::new(),
        ));
    }
    if let Some(p) = &da.prediction {
        if let Some(c) = &p.copying {
            // The largest fitted size (with `--fit-up-to`, not the largest measured).
            let largest = match c.largest_rows {
                0 => da.measured_sizes.iter().copied().filter(|r| *r <= p.rows).max().unwrap_or(0),
                n => n,
            };
            findings.push(f(
                "copying",
                format!(
                    "allocated bytes grow as {} and account for {:.0}% of the time at {} ({:.3} ns per byte), {:.0}% of the time predicted at {}",
                    c.bytes_class,
                    100.0 * c.share_at_largest,
                    at(largest),
                    c.ns_per_byte,
                    100.0 * c.share_predicted,
                    at(p.rows)
                ),
                format!(
                    "the copies grow faster than the rest of the work, so the prediction ({}) counts them; the time's own class ({}) says {}",
                    time_ns(p.median),
                    crate::analyse::pair_of(&p.class, p.alternative.as_deref()),
                    time_ns(c.time_class_ns)
                ),
                String::new(),
            ));
        }
        // Said when it moves the prediction by more than a hold-out check tolerates (25%).
        if let Some(t) = p.trend.as_ref().filter(|t| p.median > TREND_FINDING_RAISE * t.class_ns) {
            findings.push(f(
                "trend",
                format!(
                    "time rose with log-log slope {:.2} over the three largest fitted sizes, up to {} at {}",
                    t.slope,
                    time_ns(t.from_ns),
                    at(t.from_rows)
                ),
                format!(
                    "it was rising there faster than its class ({}) continues it, so the prediction follows that rise: {} at {}, where the class says {}",
                    crate::analyse::pair_of(&p.class, p.alternative.as_deref()),
                    time_ns(p.median),
                    at(p.rows),
                    time_ns(t.class_ns)
                ),
                String::new(),
            ));
        }
        if let Some(c) = crate::analyse::caches::crossing(w, da) {
            findings.push(f(
                "caches",
                format!(
                    "the table is about {} at {}, the largest fitted size, within {}; at {} it is about {}, past it from about {}",
                    crate::units::bytes(c.fitted_bytes),
                    at(c.fitted_rows),
                    crate::analyse::caches::levels_text(&c.levels),
                    at(c.target_rows),
                    crate::units::bytes(c.target_bytes),
                    ax.point_f(c.past_rows as f64)
                ),
                "data that leaves a cache is read from the next level out, so the cost per row usually steps up there (common practice), and no curve of the sizes inside the cache shows that step: the prediction is more likely too low than too high".into(),
                format!("measure a size past {} before acting on the prediction", ax.point_f(c.past_rows as f64)),
            ));
        }
        if p.far {
            findings.push(f(
                "extrapolation",
                format!("the prediction at {} is {:.1} decades past the largest measured size", at(p.rows), p.extrapolation_decades),
                "a class fitted on small sizes can change at large ones: read it as an order of magnitude".into(),
                "measure a size closer to the target if the decision depends on it".into(),
            ));
        }
    }
}
