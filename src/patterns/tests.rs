//! Checks of the step registry as a whole: every step builds from its declared defaults,
//! and its constructor reads only parameters it declares (a name it does not declare would
//! otherwise fall back silently to zero or an empty choice).

use super::*;

/// A step's parameters at their declared defaults; every choice default is one of its choices.
fn defaults(def: &StepDef) -> Params {
    for pd in def.params {
        if let ParamKind::Choice(c) = pd.kind {
            assert!(c.contains(&pd.default), "{}: default `{}` of `{}` is not one of its choices", def.name, pd.default, pd.name);
        }
    }
    Params::defaults(def)
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
