//! A prediction whose table outgrows a cache level that held it at every fitted size.
//!
//! Why: a step that holds its data in a cache pays less per row than the same step once the
//! data has to come from the next level out, and that step lies past the fitted sizes, where
//! no curve of them can show it. On this project's 2-core Xeon (2 MiB of L2 per core),
//! type-drift's vectorised cast cost 1.4 ns a row at 64k rows and 3.1 ns from 256k on; fitted
//! on sizes up to 64k, its prediction at 256k was 64–66% low in three sweeps of three, and
//! cell-reads' four cheap designs, whose table leaves the L2 between 16k and 64k rows, were
//! 26–62% low the same way. The tool cannot know how large the step is, but it can say
//! where it lies: the run records the caches (`RunHeader::caches`) and every size's table
//! estimate, so a prediction that carries the table past a level is marked, with the size to
//! measure. Only for a rows sweep (a groups or columns sweep keeps the rows fixed) and where
//! the run recorded its caches.
//!
//! The rule lives with the analysis because two stages read it: `explain`'s `caches` finding
//! (on the prediction at the target) and the hold-out check of `explain --fit-up-to`
//! (`HoldoutCheck::caches_passed`, between the largest fitted size and each checked one),
//! which the accuracy bench counts; `lint` asks it too, before anything runs.
//!
//! Only the levels a core has to itself from L2 on count ([`counted`]). A table within the
//! L1 is a few thousand rows, where fixed costs dominate every step measured here. A level
//! shared by several cores is shared with whatever else runs, and on a virtual machine its
//! reported size need not be what the guest gets: this project's 2-core VM reports a 480 MiB
//! L3, and no step of the catalog measured a change of pace near that size (sql-filter-join
//! grew ×3.9 from 4M to 16M rows, tables of 111 and 443 MiB).

use crate::analyse::DesignAnalysis;
use crate::results::reader::WorkloadResults;
use crate::results::CacheLevel;

/// Where a prediction's table passes cache levels the fitted sizes stayed within.
#[derive(Debug, Clone, PartialEq)]
pub struct Crossing {
    /// The largest fitted size and its table's estimated bytes.
    pub fitted_rows: u64,
    pub fitted_bytes: f64,
    /// The predicted size and its table's bytes, scaled from the fitted size by rows.
    pub target_rows: u64,
    pub target_bytes: f64,
    /// The levels passed, smallest first.
    pub levels: Vec<CacheLevel>,
    /// About where the table passes the first of them.
    pub past_rows: u64,
}

/// The crossing of `da`'s time prediction, if its table passes a cache level between the
/// largest fitted size and the predicted one.
pub fn crossing(w: &WorkloadResults, da: &DesignAnalysis) -> Option<Crossing> {
    if !w.header.axis().is_rows() || w.caches.is_empty() {
        return None;
    }
    let p = da.prediction.as_ref()?;
    // The largest fitted size: the prediction says how far past it the target lies.
    let reach = p.rows as f64 / p.beyond_fitted();
    let fitted_rows = da.measured_sizes.iter().copied().filter(|r| (*r as f64) <= reach * 1.01).max()?;
    let fitted_bytes = w.table_bytes(fitted_rows).filter(|b| *b > 0.0)?;
    levels_passed(fitted_rows, fitted_bytes, p.rows, &w.caches)
}

/// Whether a cache level counts: L2 or further out, private to one core.
pub fn counted(c: &CacheLevel) -> bool {
    c.level >= 2 && c.shared_by == 1
}

/// The rule on plain numbers: [`counted`] levels with the fitted table within them and the
/// target's table (scaled by rows) past them.
pub fn levels_passed(fitted_rows: u64, fitted_bytes: f64, target_rows: u64, caches: &[CacheLevel]) -> Option<Crossing> {
    if target_rows <= fitted_rows || fitted_rows == 0 {
        return None;
    }
    let target_bytes = fitted_bytes * target_rows as f64 / fitted_rows as f64;
    let levels: Vec<CacheLevel> =
        caches.iter().copied().filter(|c| counted(c) && fitted_bytes <= c.bytes as f64 && (c.bytes as f64) < target_bytes).collect();
    let first = levels.first()?;
    let past_rows = (fitted_rows as f64 * first.bytes as f64 / fitted_bytes).ceil() as u64;
    Some(Crossing { fitted_rows, fitted_bytes, target_rows, target_bytes, levels, past_rows })
}

/// "the L2 cache (2.00 MiB)", "the L2 and L3 caches (2.00 MiB, 480 MiB)".
pub fn levels_text(levels: &[CacheLevel]) -> String {
    let names: Vec<String> = levels.iter().map(|c| format!("L{}", c.level)).collect();
    let sizes: Vec<String> = levels.iter().map(|c| crate::units::bytes(c.bytes as f64)).collect();
    match names.split_last() {
        Some((last, [])) => format!("the {last} cache ({})", sizes[0]),
        Some((last, rest)) => format!("the {} and {last} caches ({})", rest.join(", "), sizes.join(", ")),
        None => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn xeon() -> Vec<CacheLevel> {
        // This project's machine as sysfs lists it: 48 KiB L1d and 2 MiB L2 per core, a 480 MiB
        // L3 shared by both.
        vec![
            CacheLevel { level: 1, bytes: 48 << 10, shared_by: 1 },
            CacheLevel { level: 2, bytes: 2 << 20, shared_by: 1 },
            CacheLevel { level: 3, bytes: 480 << 20, shared_by: 2 },
        ]
    }

    #[test]
    fn a_target_past_the_l2_is_marked_with_the_size_to_measure() {
        // A 1 MiB table at 64k rows (16 bytes a row), predicted at 1M rows (16 MiB): past the
        // 2 MiB L2 from 128k rows on; the L3 still holds it.
        let c = levels_passed(65_536, 1_048_576.0, 1_048_576, &xeon()).expect("a crossing");
        assert_eq!(c.levels.iter().map(|l| l.level).collect::<Vec<_>>(), vec![2]);
        assert_eq!(c.past_rows, 131_072);
        assert_eq!(c.target_bytes, 16.0 * 1_048_576.0);
        assert_eq!(levels_text(&c.levels), "the L2 cache (2.00 MiB)");
    }

    #[test]
    fn a_table_already_past_a_level_or_a_target_within_it_is_not_marked() {
        // Past the L2 at the largest fitted size already (4 MiB), within the L3 at the target.
        assert!(levels_passed(262_144, 4.0 * 1_048_576.0, 4_194_304, &xeon()).is_none());
        // Past the L1 already and within the L2 at both (100 kB, then 400 kB).
        assert!(levels_passed(1_000, 100_000.0, 4_000, &xeon()).is_none());
        // No caches recorded, or a target inside the fitted sizes.
        assert!(levels_passed(65_536, 1_048_576.0, 1_048_576, &[]).is_none());
        assert!(levels_passed(65_536, 1_048_576.0, 65_536, &xeon()).is_none());
    }

    #[test]
    fn only_the_private_levels_from_l2_on_count() {
        // 40 kB to 4 GB: past the L1, the L2 and the shared L3; only the L2 is named.
        let c = levels_passed(1_000, 40_000.0, 100_000_000, &xeon()).expect("a crossing");
        assert_eq!(c.levels.iter().map(|l| l.level).collect::<Vec<_>>(), vec![2]);
        assert_eq!(c.past_rows, 52_429);
        // Past the shared L3 alone: nothing.
        assert!(levels_passed(1_000_000, 100e6, 100_000_000, &xeon()).is_none());
        // A processor with a private L3 too (two levels passed at once are both named).
        let private = [CacheLevel { level: 2, bytes: 1 << 20, shared_by: 1 }, CacheLevel { level: 3, bytes: 8 << 20, shared_by: 1 }];
        let c = levels_passed(1_000, 500_000.0, 100_000, &private).expect("a crossing");
        assert_eq!(levels_text(&c.levels), "the L2 and L3 caches (1.00 MiB, 8.00 MiB)");
        assert_eq!(c.past_rows, 2_098);
    }
}
