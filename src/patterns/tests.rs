//! Checks of the step registry as a whole: every step builds from its declared defaults,
//! and its constructor reads only parameters it declares (a name it does not declare would
//! otherwise fall back silently to zero or an empty choice).

use super::*;

/// A step's parameters at their declared defaults, as the checker would fill them in.
fn defaults(def: &StepDef) -> Params {
    let mut p = Params::default();
    for pd in def.params {
        let d = pd.default;
        let v = match pd.kind {
            ParamKind::Count { .. } => ParamValue::Count(d.parse().expect("a whole-number default")),
            ParamKind::Column { .. } => ParamValue::Column(ColumnRef::At(d.parse().expect("a position default"))),
            ParamKind::Number { .. } => ParamValue::Number(d.parse().expect("a number default")),
            ParamKind::Flag => ParamValue::Flag(d == "true"),
            ParamKind::Choice(c) => {
                assert!(c.contains(&d), "{}: default `{d}` of `{}` is not one of its choices", def.name, pd.name);
                ParamValue::Choice(d.to_string())
            }
            ParamKind::Text => ParamValue::Text(d.to_string()),
        };
        p.0.insert(pd.name.to_string(), v);
    }
    p
}

#[test]
fn every_step_builds_from_its_declared_parameters() {
    let mut built = 0;
    for (_, def) in all_steps() {
        // Accessors assert (under test) that every name read is declared.
        let step = std::panic::catch_unwind(|| (def.build)(&defaults(def)));
        match step {
            Ok(Ok(_)) => built += 1,
            Ok(Err(e)) => panic!("{} refuses its own defaults: {e}", def.name),
            Err(_) => panic!("{}: its constructor reads a parameter it does not declare", def.name),
        }
    }
    assert!(built >= 40, "{built} steps");
}
