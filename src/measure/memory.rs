//! Memory estimates made before a size runs, so a sweep refuses what will not fit instead
//! of taking the machine down.
//!
//! Before anything is measured, a size needs the table, the records made from it (for
//! `feed: records`), and each design's working memory as its steps' memory factor times the
//! table. Once a design has been measured at two or more sizes, its peak live bytes are
//! extrapolated along their own log-log slope instead. Steps that write files (the storage
//! family) also declare a disk factor, checked against the temp folder's free space.
//!
//! Designs on the streaming engine keep their tables on disk (Parquet chunks, counted as
//! disk) and hold a few chunks at a time: before they are measured, their working memory is
//! their memory factor times two chunks of every table, or — when a query groups or removes
//! duplicates — the state its groups keep, whichever is larger: the hashing factor times the
//! tables, in the share of the largest table's rows that the groups can reach
//! ([`super::query_sizes`]: a unique key's groups are every row, a variety's a handful).
//!
//! An SQL join whose keys repeat makes more rows than its tables (a self-join on 14
//! varieties makes about n²/11): before it is measured, a design is allowed at least the
//! joined rows bounded from the table plan times their row bytes, on either engine. On the
//! streaming engine a join also holds what its hash table is built from, whatever the
//! chunks: the hashing factor times the smaller input of each join is added to the chunks.
//! Measured here (polars 0.55, 2 threads), deliveries joined to growers and summed: growers a
//! quarter of the deliveries, 261, 503 and 762 MiB at 8M, 16M and 32M deliveries (about
//! 84–100 bytes per grower row above a floor of about 90 MiB); a sixteenth, 84 and 292 MiB at
//! 4M and 16M; 1000 or 50 000 growers, 72–107 MiB (bounded), as the catalog's 14 prices
//! (77 MiB at 8M and at 32M deliveries).

use crate::measure::stats::loglog_slope;
use crate::plan::Plan;
use crate::spec::model::{EngineChoice, Feed};

/// Bytes a record's value takes: the value itself (an `AnyValue`, 32 bytes here) plus the
/// record's share of its vector.
pub const RECORD_VALUE_BYTES: f64 = 40.0;

/// Bytes per value of the Zipf (alias) table a skewed column is drawn with: the weights,
/// probabilities and aliases, and the two work lists used while building it.
pub const ZIPF_BYTES_PER_VALUE: f64 = 36.0;
/// Bytes per word of a text or category column's word pool besides its letters (a `String`).
pub const WORD_OVERHEAD_BYTES: f64 = 24.0;

/// Estimated memory for one size.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Estimate {
    pub table: f64,
    pub records: f64,
    /// What the table generator builds besides the table: Zipf tables and word pools.
    pub generator: f64,
    pub working: f64,
    /// Bytes the largest-writing design puts in the temp folder.
    pub disk: f64,
    /// The rows of an SQL join whose bound set the working memory (before measuring).
    pub joined_rows: Option<f64>,
    /// The groups of a streaming query whose bound set the working memory (before measuring).
    pub groups: Option<f64>,
}

impl Estimate {
    pub fn total(&self) -> f64 {
        self.table + self.records + self.generator + self.working
    }
    /// The memory part, as results record it (worded by `present::causes::memory_need`).
    pub fn need(&self) -> crate::results::MemoryNeed {
        crate::results::MemoryNeed {
            table: self.table,
            records: self.records,
            generator: self.generator,
            working: self.working,
            joined_rows: self.joined_rows,
            groups: self.groups,
        }
    }
}

/// Estimate memory at `rows` for the whole size, given measured peaks `(rows,
/// peak_live_bytes)` per design: the in-memory designs' tables and largest working memory,
/// or — when every design streams — the largest streaming design's.
pub fn estimate(plan: &Plan, rows: u64, measured_peaks: &[Vec<(u64, f64)>]) -> Estimate {
    let streaming: Vec<usize> = (0..plan.designs.len()).filter(|&i| plan.designs[i].engine == EngineChoice::Streaming).collect();
    let disk_streaming = if streaming.is_empty() { 0.0 } else { plan.table_bytes_at(rows) };
    if streaming.len() == plan.designs.len() && !streaming.is_empty() {
        let mut largest = Estimate { table: 0.0, records: 0.0, generator: 0.0, working: 0.0, disk: 0.0, joined_rows: None, groups: None };
        for &i in &streaming {
            let e = estimate_design(plan, i, rows, measured_peaks);
            if e.total() > largest.total() {
                largest = e;
            }
        }
        largest.disk = disk_streaming;
        return largest;
    }
    let mut e = estimate_memory_designs(plan, rows, measured_peaks);
    e.disk = e.disk.max(disk_streaming);
    e
}

/// Estimate memory at swept value `x` (a row count, or a value of the plan's axis) for one
/// design, on its own engine.
pub fn estimate_design(plan: &Plan, design: usize, x: u64, measured_peaks: &[Vec<(u64, f64)>]) -> Estimate {
    let d = &plan.designs[design];
    let peaks = measured_peaks.get(design).map(Vec::as_slice).unwrap_or(&[]);
    let rows = plan.rows_at(x);
    let table = plan.table_bytes_at(x);
    match d.engine {
        EngineChoice::Memory => {
            let width = plan.columns_at(x).len() as f64;
            let records = if d.feed == Feed::Records { rows as f64 * width * RECORD_VALUE_BYTES } else { 0.0 };
            // What its parameters make it build (new columns, probe lists, pieces) comes on top
            // of the table-sized working memory, measured or not.
            let measured = extrapolate(peaks, x);
            let at = Shaped::at(plan, x);
            let factor = memory_factor_at(&at, d);
            let join = joined(&at, d, false).filter(|j| measured.is_none() && j.bytes > factor * table);
            let working = measured.unwrap_or_else(|| join.map_or(factor * table, |j| j.bytes)).max(params_bytes(d, rows) + table);
            let joined_rows = join.filter(|j| j.bytes >= working).map(|j| j.rows);
            Estimate { table, records, generator: generator_bytes_at(plan, x), working, disk: d.disk_factor() * table, joined_rows, groups: None }
        }
        EngineChoice::Streaming => {
            let chunk = match plan.axis {
                None => plan.table_bytes(super::inputs::CHUNK_ROWS),
                Some(_) => table / rows.max(1) as f64 * super::inputs::CHUNK_ROWS as f64,
            };
            let chunks = (2.0 * chunk).min(table);
            let at = Shaped::at(plan, x);
            let join = joined(&at, d, true);
            // A hash join holds what it builds, whatever the chunks.
            // (The chunks keep the full hashing factor: a streaming query's fixed buffers
            // weigh more at small sizes, 2.9× the table at 250k rows for 14 groups; its
            // groups are counted by `group_state`.)
            let base = d.memory_factor() * chunks + join.map_or(0.0, |j| crate::patterns::sql::HASHING_MEMORY_FACTOR * j.build_bytes);
            let (mut working, mut joined_rows, mut groups) = (base, None, None);
            match extrapolate(peaks, x) {
                Some(m) => working = m,
                None => {
                    if let Some((g, bytes)) = group_state(&at, d, plan.table_bytes_at(x)).filter(|s| s.1 > working) {
                        (working, groups) = (bytes, Some(g));
                    }
                    if let Some(j) = join.filter(|j| j.bytes > working) {
                        (working, joined_rows, groups) = (j.bytes, Some(j.rows), None);
                    }
                }
            }
            Estimate { table: chunks, records: 0.0, generator: generator_bytes_at(plan, x), working, disk: table, joined_rows, groups }
        }
    }
}

/// A design's memory factor on the in-memory engine over the tables `at`: its steps'
/// factors, where a query that hashes (GROUP BY, DISTINCT) counts the hashing factor in the
/// share of the largest table's rows its groups can reach, and at least what any query
/// counts. Measured here on the in-memory engine, 1M and 4M rows of five integer columns
/// (peak live bytes over the table's): GROUP BY 100 values 0.17×, 100k groups (GROUP BY or
/// DISTINCT of two columns) 1.46–1.61×, 1M groups 0.79–1.46×, a unique key 2.4–2.6×,
/// DISTINCT of a unique key and another column 5.1×: a per-row cost whatever the groups, so
/// the floor stays the plain query's 3.
fn memory_factor_at(at: &Shaped, d: &crate::plan::DesignPlan) -> f64 {
    if d.program.is_some() {
        return d.memory_factor();
    }
    d.setup
        .iter()
        .chain(&d.steps)
        .map(|s| match crate::patterns::sql::is_sql(s.def).then(|| at.group_share(s.params.text("query"))).flatten() {
            Some((_, share)) => (crate::patterns::sql::HASHING_MEMORY_FACTOR * share).max(s.def.memory_factor),
            None => s.memory_factor(),
        })
        .fold(1.0, f64::max)
}

/// The groups a streaming design's grouping keeps at a swept value before it is measured,
/// and their bytes: the hashing factor times the tables (`table_bytes`), in the share of the
/// largest table's rows its groups can reach (None when no query groups). Measured here: a
/// unique-key GROUP BY on the streaming engine kept 4.3× the table (see
/// [`super::query_sizes`]); the factor of 10 is the in-memory engine's for hashing, so the
/// bound errs on the side of refusing.
fn group_state(at: &Shaped, d: &crate::plan::DesignPlan, table_bytes: f64) -> Option<(f64, f64)> {
    let (groups, share) = queries(d).filter_map(|q| at.group_share(q)).max_by(|a, b| a.0.total_cmp(&b.0))?;
    Some((groups, crate::patterns::sql::HASHING_MEMORY_FACTOR * table_bytes * share))
}

/// Bytes the largest join of a design's queries makes at a swept value before it is measured
/// (None without joins): its rows bounded from the table plan times the joined tables' row
/// bytes ([`super::query_sizes::joined_bytes`]). A self-join on 14 varieties peaked at 40–41
/// bytes a joined row, the bound counts 64. `streaming`: only the joins of SELECTs that do
/// not group (the engine feeds the others into their groups).
fn joined(at: &Shaped, d: &crate::plan::DesignPlan, streaming: bool) -> Option<super::query_sizes::Joins> {
    queries(d).filter_map(|q| super::query_sizes::joined_bytes(q, &at.tables, at.rows, streaming)).max_by(|a, b| a.bytes.total_cmp(&b.bytes))
}

/// The tables at one swept value, shaped once for the query bounds of a design's estimate.
struct Shaped {
    tables: Vec<crate::plan::TablePlan>,
    rows: u64,
    /// Rows of the largest table: what a query's groups are a share of.
    largest: f64,
}

impl Shaped {
    fn at(plan: &Plan, x: u64) -> Shaped {
        let (tables, rows) = (plan.tables_at(x), plan.rows_at(x));
        let largest = tables.iter().map(|t| t.rows.at(rows)).max().unwrap_or(rows).max(1) as f64;
        Shaped { tables, rows, largest }
    }
    /// The groups `query` keeps and their share of the largest table's rows (None when it
    /// does not hash).
    fn group_share(&self, query: &str) -> Option<(f64, f64)> {
        let g = super::query_sizes::groups_bound(query, &self.tables, self.rows)?;
        Some((g, (g / self.largest).min(1.0)))
    }
}

/// The queries of a design's `sql` steps, set-up included.
fn queries(d: &crate::plan::DesignPlan) -> impl Iterator<Item = &str> {
    d.setup.iter().chain(&d.steps).filter(|s| crate::patterns::sql::is_sql(s.def)).map(|s| s.params.text("query"))
}

fn estimate_memory_designs(plan: &Plan, rows: u64, measured_peaks: &[Vec<(u64, f64)>]) -> Estimate {
    // The tables are shared; records, working memory and files are the largest of any design.
    let per: Vec<Estimate> = (0..plan.designs.len())
        .filter(|&i| plan.designs[i].engine == EngineChoice::Memory)
        .map(|i| estimate_design(plan, i, rows, measured_peaks))
        .collect();
    let largest = |f: fn(&Estimate) -> f64| per.iter().map(f).fold(0.0, f64::max);
    let widest = per.iter().max_by(|a, b| a.working.total_cmp(&b.working));
    Estimate {
        table: plan.table_bytes_at(rows),
        records: largest(|e| e.records),
        generator: generator_bytes_at(plan, rows),
        working: largest(|e| e.working),
        disk: largest(|e| e.disk),
        joined_rows: widest.and_then(|e| e.joined_rows),
        groups: widest.and_then(|e| e.groups),
    }
}

/// [`generator_bytes`] at swept value `x` of any sweep (the axis may set distinct counts,
/// skews or the number of columns).
pub fn generator_bytes_at(plan: &Plan, x: u64) -> f64 {
    if plan.axis.is_none() {
        return generator_bytes(plan, x);
    }
    generator_bytes_of(&plan.columns_at(x), plan.rows_at(x))
}

/// Bytes the generator holds besides the table at `rows`: each skewed column's Zipf table
/// (over all its distinct values, whatever the rows) and each text column's word pool.
pub fn generator_bytes(plan: &Plan, rows: u64) -> f64 {
    generator_bytes_of(&plan.columns, rows)
}

fn generator_bytes_of(columns: &[crate::plan::ColumnPlan], rows: u64) -> f64 {
    use crate::spec::model::ColumnKind;
    columns
        .iter()
        .map(|c| {
            let d = c.distinct.unwrap_or(0) as f64;
            let zipf = if c.skew > 0.0 { d * ZIPF_BYTES_PER_VALUE } else { 0.0 };
            let pool = match c.kind {
                ColumnKind::Text | ColumnKind::Category => d.min(rows as f64) * (WORD_OVERHEAD_BYTES + c.length.1 as f64),
                _ => 0.0,
            };
            zipf + pool
        })
        .sum()
}

/// Bytes a design's steps build from their whole-number parameters at `rows` rows (each
/// parameter's declared cost per unit), summed over its steps.
pub fn params_bytes(d: &crate::plan::DesignPlan, rows: u64) -> f64 {
    use crate::patterns::{ParamKind, ParamValue};
    d.setup
        .iter()
        .chain(&d.steps)
        .flat_map(|s| s.def.params.iter().map(move |pd| (pd, s.params.0.get(pd.name))))
        .map(|(pd, v)| match (pd.kind, v) {
            (ParamKind::Count { cost, .. }, Some(ParamValue::Count(n))) => cost.at(*n, rows),
            _ => 0.0,
        })
        .sum()
}

/// Bytes free for an unprivileged writer in the folder's file system (statvfs), if known.
pub fn available_disk(dir: &std::path::Path) -> Option<u64> {
    use std::os::unix::ffi::OsStrExt;
    let path = std::ffi::CString::new(dir.as_os_str().as_bytes()).ok()?;
    // SAFETY: statvfs writes into the struct we own; the path is a valid C string.
    let mut st: libc::statvfs = unsafe { std::mem::zeroed() };
    let rc = unsafe { libc::statvfs(path.as_ptr(), &mut st) };
    (rc == 0).then(|| st.f_bavail as u64 * st.f_frsize as u64)
}

/// Peak at `rows` along the log-log slope of the last three measured peaks.
pub fn extrapolate(peaks: &[(u64, f64)], rows: u64) -> Option<f64> {
    let pts: Vec<(u64, f64)> = peaks.iter().copied().filter(|p| p.1 > 0.0).collect();
    if pts.len() < 2 {
        return None;
    }
    let tail = &pts[pts.len().saturating_sub(3)..];
    let x: Vec<f64> = tail.iter().map(|p| p.0 as f64).collect();
    let y: Vec<f64> = tail.iter().map(|p| p.1).collect();
    let slope = loglog_slope(&x, &y)?.clamp(0.0, 4.0);
    let (n0, p0) = tail[tail.len() - 1];
    Some(p0 * (rows as f64 / n0 as f64).powf(slope))
}

/// How much memory a size may count on, and which limit set it.
#[derive(Debug, Clone, PartialEq)]
pub struct MemoryLimit {
    pub bytes: u64,
    /// "available memory", "the address-space limit (ulimit -v)", "the data-segment limit",
    /// "the cgroup memory limit".
    pub source: String,
    /// A hard limit (a resource limit or a cgroup): allocations past it fail or the process
    /// is killed, so `--force` cannot lift it. Available memory is soft (the kernel may
    /// reclaim caches or swap).
    pub hard: bool,
}

/// The smallest of: the machine's available memory; what `RLIMIT_AS` and `RLIMIT_DATA`
/// leave above the process's current address space and data segment; and what the
/// cgroup's limit leaves above its current use (v2 `memory.max`, v1 `memory.limit_in_bytes`).
pub fn memory_limit() -> MemoryLimit {
    let mut best = MemoryLimit { bytes: super::machine::available_memory(), source: "available memory".into(), hard: false };
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    let status_kib = |key: &str| status_bytes(&status, key);
    let mut consider = |bytes: Option<u64>, source: &str| {
        if let Some(b) = bytes {
            if b < best.bytes {
                best = MemoryLimit { bytes: b, source: source.to_string(), hard: true };
            }
        }
    };
    consider(rlimit_room(libc::RLIMIT_AS, status_kib("VmSize:")), "the address-space limit (ulimit -v)");
    let data = rlimit_room(libc::RLIMIT_DATA, status_kib("VmData:"));
    let ours = ALLOWANCE.load(std::sync::atomic::Ordering::Relaxed) > 0 && current_rlimit(libc::RLIMIT_DATA) == Some(ALLOWANCE.load(std::sync::atomic::Ordering::Relaxed));
    if !ours {
        consider(data, "the data-segment limit (ulimit -d)");
    }
    consider(cgroup_room(), "the cgroup memory limit");
    if ours {
        // The parent's allowance, not the user's limit: what was available when this
        // measuring process started. --force may try past it: the allocation then fails
        // and the point fails, not the sweep.
        if let Some(b) = data.filter(|&b| b < best.bytes) {
            best = MemoryLimit { bytes: b, source: "the measuring process's allowance (memory available when it started)".into(), hard: false };
        }
    }
    best
}

/// A `kB` field of `/proc/self/status` text (`VmSize:`, `VmData:`…), in bytes.
pub fn status_bytes(status: &str, key: &str) -> Option<u64> {
    let line = status.lines().find(|l| l.starts_with(key))?;
    line[key.len()..].trim().trim_end_matches("kB").trim().parse::<u64>().ok().map(|k| k * 1024)
}

/// The allowance a supervising parent set as this process's `RLIMIT_DATA` (0: none).
static ALLOWANCE: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);

/// Note the allowance the parent set (see [`super::supervise`]).
pub fn set_allowance(bytes: u64) {
    ALLOWANCE.store(bytes, std::sync::atomic::Ordering::Relaxed);
}

/// A resource limit's current (soft) value, if set.
fn current_rlimit(resource: libc::__rlimit_resource_t) -> Option<u64> {
    // SAFETY: getrlimit writes into the struct we own.
    let mut rl: libc::rlimit = unsafe { std::mem::zeroed() };
    (unsafe { libc::getrlimit(resource, &mut rl) } == 0 && rl.rlim_cur != libc::RLIM_INFINITY).then_some(rl.rlim_cur as u64)
}

/// What a resource limit leaves above the current use, if the limit is set.
fn rlimit_room(resource: libc::__rlimit_resource_t, used: Option<u64>) -> Option<u64> {
    // SAFETY: getrlimit writes into the struct we own.
    let mut rl: libc::rlimit = unsafe { std::mem::zeroed() };
    if unsafe { libc::getrlimit(resource, &mut rl) } != 0 || rl.rlim_cur == libc::RLIM_INFINITY {
        return None;
    }
    Some((rl.rlim_cur as u64).saturating_sub(used.unwrap_or(0)))
}

/// What the process's memory cgroups leave, if any has a limit: the smallest room over the
/// v2 (unified) entry and the v1 memory controller's entry of `/proc/self/cgroup`.
fn cgroup_room() -> Option<u64> {
    let own = std::fs::read_to_string("/proc/self/cgroup").ok()?;
    let num = |p: std::path::PathBuf| std::fs::read_to_string(p).ok().and_then(|t| t.trim().parse::<u64>().ok());
    let mut room: Option<u64> = None;
    for line in own.lines() {
        let mut parts = line.splitn(3, ':');
        let (Some(_), Some(controllers), Some(path)) = (parts.next(), parts.next(), parts.next()) else { continue };
        let rel = path.trim_start_matches('/');
        let found = if controllers.is_empty() {
            // cgroup v2, mounted at /sys/fs/cgroup or (hybrid) /sys/fs/cgroup/unified;
            // `max` (no limit) does not parse as a number.
            ["/sys/fs/cgroup", "/sys/fs/cgroup/unified"].iter().map(|m| std::path::Path::new(m).join(rel)).find_map(|dir| {
                let max = num(dir.join("memory.max"))?;
                Some(max.saturating_sub(num(dir.join("memory.current")).unwrap_or(0)))
            })
        } else if controllers.split(',').any(|c| c == "memory") {
            let dir = std::path::Path::new("/sys/fs/cgroup/memory").join(rel);
            // v1 reports "no limit" as a number near i64::MAX.
            num(dir.join("memory.limit_in_bytes"))
                .filter(|&max| max < 1 << 60)
                .map(|max| max.saturating_sub(num(dir.join("memory.usage_in_bytes")).unwrap_or(0)))
        } else {
            None
        };
        if let Some(r) = found {
            room = Some(room.map_or(r, |x| x.min(r)));
        }
    }
    room
}
