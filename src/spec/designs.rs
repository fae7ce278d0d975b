//! The designs of a workload checked and resolved into [`DesignPlan`]s: names, the chain of
//! set-up and timed steps (each step must take what the one before gives, and the last must
//! give a table), what `engine: streaming` allows, and the growth classes and dtypes a
//! design is expected to show. Each step itself is read by `steps.rs`; the table each step
//! receives is followed down the chain as far as it can be known (the workload's first
//! table, kept by steps that keep its columns), so column parameters are checked there.

use super::locate::YamlPath;
use super::model::*;
use super::step_columns::SeenTable;
use super::steps::check_step;
use super::suggest::closest;
use super::validate::Checker;
use crate::patterns::ValueKind;
use crate::plan::{ColumnPlan, DesignPlan, StepPlan};
use std::collections::HashSet;

/// The largest `slowdown:` a design may ask for (ten times its own time).
pub const MAX_SLOWDOWN: f64 = 10.0;

/// Check the designs; `first` is the table a design's first step receives (the workload's
/// first table, at its widest point).
pub(super) fn check_designs(c: &mut Checker, designs: &[DesignSpec], path: &YamlPath, columns: &[ColumnPlan], first: &SeenTable, largest: u64) -> Vec<DesignPlan> {
    if designs.is_empty() {
        c.at(path, "expected at least one design (one is tracked on its own growth; two or more are compared)", None);
    }
    let mut seen = HashSet::new();
    let mut out = Vec::new();
    for (i, d) in designs.iter().enumerate() {
        let p = path.index(i);
        c.name(&p.key("name"), &d.name, "design", &mut seen);
        if d.steps.is_empty() && d.program.is_none() {
            c.at(&p.key("steps"), "expected at least one step (or a `program:`)", None);
        }
        let mut flowing = match d.feed {
            Feed::Table => ValueKind::Frame,
            Feed::Records => ValueKind::Records,
        };
        let mut broken = false;
        // What the next step receives, while it is known.
        let mut seen = Some(first.fed(d.feed == Feed::Records));
        let mut lists: [Vec<StepPlan>; 2] = [Vec::new(), Vec::new()];
        for (li, (key, raws)) in [("setup", &d.setup), ("steps", &d.steps)].into_iter().enumerate() {
            for (j, raw) in raws.iter().enumerate() {
                if broken {
                    break;
                }
                let sp = p.key(key).index(j);
                let Some(step) = check_step(c, raw, &sp, largest, seen.as_ref()) else {
                    // The chain cannot be judged past a step we could not read.
                    broken = true;
                    break;
                };
                if step.def.takes != flowing {
                    let first = li == 0 && j == 0 || (li == 1 && j == 0 && d.setup.is_empty());
                    let fix = if first && step.def.takes == ValueKind::Records {
                        Some("set `feed: records` on this design".to_string())
                    } else {
                        None
                    };
                    c.at(
                        &sp,
                        format!("step `{}` needs {} but receives {}", step.def.name, step.def.takes.label(), flowing.label()),
                        fix,
                    );
                }
                flowing = step.def.gives;
                if !step.def.keeps_columns {
                    seen = None;
                }
                lists[li].push(step);
            }
        }
        let [setup, steps] = lists;
        if d.engine == EngineChoice::Streaming {
            if let Some(j) = steps.iter().position(|s| s.def.name != "sql") {
                c.at(&p.key("steps").index(j), "a design with `engine: streaming` runs only `sql` steps (its tables stay on disk)", None);
            }
            if !d.setup.is_empty() {
                c.at_key(&p.key("setup"), "a design with `engine: streaming` takes no `setup:` steps", None);
            }
        }
        if !broken && !d.steps.is_empty() && flowing != ValueKind::Frame {
            c.at(&p.key("steps"), format!("the last step must give a table (so designs can be compared), but it gives {}", flowing.label()), None);
        }
        let mut growth = |key: &str, v: &Option<String>| -> Option<&'static str> {
            let v = v.as_ref()?;
            let canon = canonical_growth(v);
            if canon.is_none() {
                let all = GROWTH_LABELS.iter().flat_map(|(_, s)| s.iter().copied());
                let hint = closest(v, all).map(|s| format!("did you mean `{s}`?"));
                let names: Vec<&str> = GROWTH_LABELS.iter().map(|(c, _)| *c).collect();
                c.at(&p.key("expect").key(key), format!("expected a growth class ({}), found `{v}`", names.join(", ")), hint);
            }
            canon
        };
        let (expect_time, expect_bytes) = match &d.expect {
            Some(e) => (growth("time", &e.time), growth("bytes", &e.bytes)),
            None => (None, None),
        };
        let mut expect_dtypes = Vec::new();
        for (col, kind) in d.expect.iter().flat_map(|e| &e.dtypes) {
            if columns.iter().any(|k| &k.name == col) {
                expect_dtypes.push((col.clone(), kind.dtype_label()));
            } else {
                let hint = closest(col, columns.iter().map(|k| k.name.as_str())).map(|s| format!("did you mean `{s}`?"));
                c.at(&p.key("expect").key("dtypes").key(col), format!("no column `{col}` in the table"), hint);
            }
        }
        let slowdown = d.slowdown.map_or(0.0, |s| s.0);
        if !(0.0..=MAX_SLOWDOWN).contains(&slowdown) {
            c.at(&p.key("slowdown"), format!("expected a slowdown from 0% to {:.0}%, found {}%", MAX_SLOWDOWN * 100.0, slowdown * 100.0), None);
        } else if slowdown > 0.0 && d.program.is_some() {
            c.at(&p.key("slowdown"), "`slowdown:` slows a design's steps; a program is slowed in the program itself", None);
        }
        out.push(DesignPlan {
            name: d.name.clone(),
            about: d.about.clone(),
            feed: d.feed,
            engine: d.engine,
            setup,
            steps,
            expect_time,
            expect_bytes,
            expect_dtypes,
            query_plans: Vec::new(),
            program: None,
            slowdown: slowdown.clamp(0.0, MAX_SLOWDOWN),
        });
    }
    out
}
