//! One step of a design read from YAML: its name found in the step registry (with a
//! did-you-mean), its parameters typed against the step's `ParamDef`s — counts with their
//! bounds, numbers and shares, choices, flags, text, columns by name or position (resolved
//! against the table the step sees in `step_columns.rs`) — and the step built from them (a
//! refusal of the constructor is located at the parameter it names).

use super::locate::YamlPath;
use super::limits::count_problem;
use super::step_columns::{check_columns, SeenTable};
use super::suggest::closest;
use super::validate::Checker;
use crate::patterns::{self, ColumnRef, ParamDef, ParamKind, ParamValue, Params, MAX_POSITION};
use crate::plan::StepPlan;
use serde_yaml::Value as Y;
use std::collections::BTreeMap;

pub(super) fn yaml_kind_of(v: &Y) -> &'static str {
    yaml_kind(v)
}

fn yaml_kind(v: &Y) -> &'static str {
    match v {
        Y::Null => "nothing",
        Y::Bool(_) => "true/false",
        Y::Number(_) => "a number",
        Y::String(_) => "text",
        Y::Sequence(_) => "a list",
        Y::Mapping(_) => "a mapping",
        Y::Tagged(_) => "a tagged value",
    }
}

/// Check one step; `seen` is the table it receives when the checker can know it.
pub(super) fn check_step(c: &mut Checker, raw: &Y, path: &YamlPath, largest: u64, seen: Option<&SeenTable>) -> Option<StepPlan> {
    let (name, params_raw): (String, Option<&Y>) = match raw {
        Y::String(s) => (s.clone(), None),
        Y::Mapping(m) if m.len() == 1 => {
            let (k, v) = m.iter().next()?;
            match k {
                Y::String(s) => (s.clone(), Some(v)),
                _ => {
                    c.at(path, "expected a step name as the key", None);
                    return None;
                }
            }
        }
        Y::Mapping(m) => {
            c.at(path, format!("expected one step per list item, `name: {{params}}`, found a mapping with {} keys", m.len()), None);
            return None;
        }
        other => {
            c.at(path, format!("expected a step (`name` or `name: {{params}}`), found {}", yaml_kind(other)), None);
            return None;
        }
    };
    let Some(def) = patterns::find_step(&name) else {
        let hint = closest(&name, patterns::all_steps().map(|(_, s)| s.name)).map(|s| format!("did you mean `{s}`?"));
        c.at_key(&path.key(&name), format!("unknown step `{name}` (see `framecost catalog --long` for the steps)"), hint);
        return None;
    };
    let pp = path.key(&name);
    let mut given: BTreeMap<String, &Y> = BTreeMap::new();
    match params_raw {
        None | Some(Y::Null) => {}
        Some(Y::Mapping(m)) => {
            for (k, v) in m {
                match k {
                    Y::String(s) => {
                        given.insert(s.clone(), v);
                    }
                    _ => c.at(&pp, "expected parameter names as keys", None),
                }
            }
        }
        Some(other) => {
            c.at(&pp, format!("expected the step's parameters as a mapping, found {}", yaml_kind(other)), None);
            return None;
        }
    }
    let mut params = Params::default();
    let before = c.issues.len();
    for k in given.keys() {
        if !def.params.iter().any(|p| p.name == k.as_str()) {
            let hint = closest(k, def.params.iter().map(|p| p.name)).map(|s| format!("did you mean `{s}`?"));
            let known: Vec<&str> = def.params.iter().map(|p| p.name).collect();
            let known = if known.is_empty() { "it takes none".to_string() } else { format!("it takes {}", known.join(", ")) };
            c.at_key(&pp.key(k), format!("step `{name}` has no parameter `{k}` ({known})"), hint);
        }
    }
    for pd in def.params {
        let raw = given.get(pd.name).copied();
        let default_y: Y = serde_yaml::from_str(pd.default).unwrap_or(Y::Null);
        let v = raw.unwrap_or(&default_y);
        let vp = pp.key(pd.name);
        let Some(got) = typed(c, pd, v, &vp, largest) else { continue };
        params.0.insert(pd.name.to_string(), got);
    }
    if c.issues.len() != before {
        return None;
    }
    if let Some(seen) = seen {
        // A wrong column does not stop the design's chain from being checked.
        check_columns(c, def, &params, &|p| given.contains_key(p), &pp, seen);
    }
    let runner = match (def.build)(&params) {
        Ok(b) => std::sync::Arc::<dyn crate::patterns::Step>::from(b),
        Err(e) => {
            let at = e.param.map_or_else(|| pp.clone(), |p| pp.key(p));
            c.at(&at, format!("step `{name}` cannot be built: {e}"), None);
            return None;
        }
    };
    Some(StepPlan { def, label: params.describe(def.name), params, runner })
}

/// One parameter's value typed against its kind; a problem is recorded at `vp` (and gives None).
fn typed(c: &mut Checker, pd: &ParamDef, v: &Y, vp: &YamlPath, largest: u64) -> Option<ParamValue> {
    let got = match (pd.kind, v) {
        (ParamKind::Count { .. }, Y::Number(n)) => match n.as_u64() {
            Some(x) => match count_problem(&pd.kind, x, largest) {
                None => Some(ParamValue::Count(x)),
                Some(m) => {
                    c.at(vp, format!("`{}`: {m}", pd.name), None);
                    return None;
                }
            },
            _ => None,
        },
        (ParamKind::Number { min, max }, Y::Number(n)) => match n.as_f64() {
            Some(x) if x >= min && x <= max => Some(ParamValue::Number(x)),
            _ => None,
        },
        // A share written with a percent sign: `15%` is 0.15.
        (ParamKind::Number { min, max }, Y::String(t)) if t.trim_end().ends_with('%') => {
            match crate::spec::units::parse_share(t) {
                Ok(x) if x >= min && x <= max => Some(ParamValue::Number(x)),
                _ => None,
            }
        }
        (ParamKind::Choice(opts), Y::String(s)) => {
            if opts.contains(&s.as_str()) {
                Some(ParamValue::Choice(s.clone()))
            } else {
                let hint = closest(s, opts.iter().copied()).map(|h| format!("did you mean `{h}`?"));
                c.at(vp, format!("expected {}, found `{s}`", pd.kind.describe()), hint);
                return None;
            }
        }
        (ParamKind::Flag, Y::Bool(b)) => Some(ParamValue::Flag(*b)),
        // A column by position (the older form) or by name.
        (ParamKind::Column { .. }, Y::Number(n)) => n.as_u64().filter(|&x| x <= MAX_POSITION).map(|x| ParamValue::Column(ColumnRef::At(x as usize))),
        // A name follows the rule of column names (it reaches labels and terminals).
        (ParamKind::Column { .. }, Y::String(t)) if !t.trim().is_empty() => match super::limits::name_problem(t) {
            None => Some(ParamValue::Column(ColumnRef::Named(t.clone()))),
            Some(m) => {
                c.at(vp, format!("`{}`: {m}", pd.name), None);
                return None;
            }
        },
        (ParamKind::Text, Y::String(t)) if !t.trim().is_empty() => Some(ParamValue::Text(t.clone())),
        _ => None,
    };
    if got.is_none() {
        let found = match v {
            Y::Number(n) => n.to_string(),
            Y::String(s) => format!("`{s}`"),
            other => yaml_kind(other).to_string(),
        };
        c.at(vp, format!("expected {} for `{}`, found {found}", pd.kind.describe(), pd.name), None);
    }
    got
}
