//! The findings grouped so that no sentence is said twice (one wording, three layouts).

use super::words::number_first;
use crate::explain::Finding;

/// Findings sharing what they imply and what to do, with the designs they were measured on.
#[derive(Debug, Clone)]
pub struct Group {
    pub kind: String,
    pub implies: String,
    pub action: String,
    /// (design or None for the workload, what was measured).
    pub measured: Vec<(Option<String>, String)>,
}

/// Groups under one heading: the designs they concern (empty: the workload as a whole).
#[derive(Debug, Clone)]
pub struct Section {
    pub designs: Vec<String>,
    pub groups: Vec<Group>,
}

/// Kinds of finding the summaries show elsewhere (the growth table, the warnings).
pub const SHOWN_ELSEWHERE: &[&str] = &["growth", "extrapolation", "machine", "mismatch", "skipped"];

/// The findings grouped so that no sentence is said twice: findings with the same kind,
/// implication and action are one group listing each design's measurement, and groups
/// concerning the same designs share a heading. Unless `all`, findings shown elsewhere and
/// expectations the measurement confirms are left out.
pub fn sections(findings: &[Finding], all: bool) -> Vec<Section> {
    let mut groups: Vec<Group> = Vec::new();
    for f in findings {
        if !all && (SHOWN_ELSEWHERE.contains(&f.kind.as_str()) || (f.kind == "expectation" && f.implies == "the measurement confirms the rule")) {
            continue;
        }
        let (measured, implies, action) = (number_first(&f.measured), number_first(&f.implies), number_first(&f.action));
        match groups.iter_mut().find(|g| g.kind == f.kind && g.implies == implies && g.action == action) {
            Some(g) => g.measured.push((f.design.clone(), measured)),
            None => groups.push(Group { kind: f.kind.clone(), implies, action, measured: vec![(f.design.clone(), measured)] }),
        }
    }
    let mut out: Vec<Section> = Vec::new();
    for g in groups {
        let mut who: Vec<String> = Vec::new();
        for (d, _) in &g.measured {
            if let Some(d) = d {
                if !who.contains(d) {
                    who.push(d.clone());
                }
            }
        }
        match out.iter_mut().find(|s| s.designs == who) {
            Some(s) => s.groups.push(g),
            None => out.push(Section { designs: who, groups: vec![g] }),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn f(design: &str, kind: &str, measured: &str, implies: &str) -> Finding {
        Finding { design: Some(design.into()), kind: kind.into(), measured: measured.into(), implies: implies.into(), action: String::new() }
    }

    #[test]
    fn a_shared_implication_is_said_once() {
        let same = "read it as an order of magnitude";
        let fs = vec![
            f("a", "tail", "p99 is 3× the median", same),
            f("b", "tail", "p99 is 4× the median", same),
            f("a", "chunks", "leaves 64 chunks", "storage is fragmented"),
        ];
        let s = sections(&fs, false);
        let text: Vec<&str> = s.iter().flat_map(|s| s.groups.iter().map(|g| g.implies.as_str())).collect();
        assert_eq!(text.iter().filter(|t| **t == same).count(), 1);
        assert_eq!(s[0].designs, vec!["a".to_string(), "b".to_string()]);
        assert_eq!(s[0].groups[0].measured.len(), 2);
        assert_eq!(s[1].designs, vec!["a".to_string()]);
    }
}
