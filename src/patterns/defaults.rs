//! A step's parameters at their declared defaults, typed from the default strings: what
//! the tests build steps from (the lib's registry check and the family tests' bare steps).
//! The spec checker reads the same default strings as YAML and types them with its own
//! rules, which also check the bounds.

use super::{ColumnRef, ParamKind, ParamValue, Params, StepDef};

impl Params {
    /// Every parameter of `def` at its declared default. Panics on a default that does not
    /// parse as its kind: a registry defect, found by the lib's tests.
    pub fn defaults(def: &StepDef) -> Params {
        let mut p = Params::default();
        for pd in def.params {
            let d = pd.default;
            let v = match pd.kind {
                ParamKind::Count { .. } => ParamValue::Count(d.parse().expect("a whole-number default")),
                ParamKind::Column { .. } => ParamValue::Column(ColumnRef::At(d.parse().expect("a position default"))),
                ParamKind::Number { .. } => ParamValue::Number(d.parse().expect("a number default")),
                ParamKind::Flag => ParamValue::Flag(d == "true"),
                ParamKind::Choice(_) => ParamValue::Choice(d.to_string()),
                ParamKind::Text => ParamValue::Text(d.to_string()),
            };
            p.0.insert(pd.name.to_string(), v);
        }
        p
    }
}
