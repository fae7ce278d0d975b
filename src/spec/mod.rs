//! Workload specs: read a YAML file, report every problem with `file:line:column`, and
//! resolve it into a [`Plan`](crate::plan::Plan).
//!
//! Two stages, as in the data flow: serde turns text into [`model::WorkloadSpec`] (syntax
//! and type errors come with serde_yaml's own positions); [`validate`] then checks meaning
//! (ranges, unknown steps, steps that do not fit together) and builds the plan, locating each
//! problem through [`locate::Locator`]. Nothing here panics on any input.

pub mod axis;
mod columns;
mod designs;
pub mod guard;
pub mod limits;
pub mod locate;
pub mod model;
pub mod programs;
pub mod queries;
pub mod sql_rules;
mod step_columns;
mod steps;
pub mod suggest;
pub mod tables;
pub mod units;
pub mod validate;

use crate::plan::Plan;
use std::fmt;
use std::path::Path;

/// One problem in a spec, with its place.
#[derive(Debug, Clone, PartialEq)]
pub struct SpecIssue {
    pub file: String,
    pub line: usize,
    pub column: usize,
    pub message: String,
    pub hint: Option<String>,
}

impl fmt::Display for SpecIssue {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // Messages quote what the file says: control characters in it are shown escaped.
        let esc = crate::units::escaped;
        write!(f, "{}:{}:{}: {}", self.file, self.line, self.column, esc(&self.message))?;
        if let Some(h) = &self.hint {
            write!(f, " ({})", esc(h))?;
        }
        Ok(())
    }
}

/// Every problem found in one spec file.
#[derive(Debug, Clone)]
pub struct SpecErrors(pub Vec<SpecIssue>);

impl fmt::Display for SpecErrors {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, e) in self.0.iter().enumerate() {
            if i > 0 {
                writeln!(f)?;
            }
            write!(f, "{e}")?;
        }
        Ok(())
    }
}

impl std::error::Error for SpecErrors {}

/// Read, check and resolve one workload file.
pub fn load(path: &Path) -> Result<Plan, SpecErrors> {
    let file = crate::units::escaped(&path.display().to_string()).into_owned();
    let text = guard::read_spec(path)
        .map_err(|message| SpecErrors(vec![SpecIssue { file: file.clone(), line: 1, column: 1, message, hint: None }]))?;
    load_str(&file, &text)
}

/// Check and resolve a workload given as text (`file` is used in messages).
pub fn load_str(file: &str, text: &str) -> Result<Plan, SpecErrors> {
    let blank = text.lines().all(|l| l.trim().is_empty() || l.trim_start().starts_with('#'));
    if blank {
        return Err(SpecErrors(vec![SpecIssue {
            file: file.to_string(),
            line: 1,
            column: 1,
            message: "the file is empty: expected a workload (a mapping with name, table, sizes and designs)".into(),
            hint: None,
        }]));
    }
    if let Some((line, column, message)) = guard::nesting_problem(text) {
        return Err(SpecErrors(vec![SpecIssue { file: file.to_string(), line, column, message, hint: None }]));
    }
    let spec: model::WorkloadSpec = serde_yaml::from_str(text).map_err(|e| SpecErrors(vec![from_serde(file, &e)]))?;
    let loc = locate::Locator::new(text);
    validate::check(file, text, &spec, &loc).map_err(SpecErrors)
}

/// Turn a serde_yaml error into a located issue with a did-you-mean where one applies.
fn from_serde(file: &str, e: &serde_yaml::Error) -> SpecIssue {
    let (line, column) = e.location().map(|l| (l.line(), l.column())).unwrap_or((1, 1));
    let mut message = e.to_string();
    // serde_yaml appends " at line L column C"; we print the place in front instead.
    if let Some(i) = message.find(" at line ") {
        message.truncate(i);
    }
    const WORKLOAD: &str = "a workload (a mapping with name, table, sizes and designs)";
    if message.starts_with("EOF while parsing") {
        message = format!("the file is empty: expected {WORKLOAD}");
    }
    message = message.replace("struct WorkloadSpec", WORKLOAD).replace("expected u64", "expected a whole number of 0 or more");
    let hint = unknown_name_hint(&message);
    SpecIssue { file: file.to_string(), line, column, message, hint }
}

/// serde words its unknown-key errors as "unknown field `x`, expected one of `a`, `b`" (and
/// "unknown variant" for a word out of a fixed set); suggest the closest expected name.
fn unknown_name_hint(message: &str) -> Option<String> {
    let rest = message
        .find("unknown field `")
        .map(|i| &message[i + "unknown field `".len()..])
        .or_else(|| message.find("unknown variant `").map(|i| &message[i + "unknown variant `".len()..]))?;
    let end = rest.find('`')?;
    let word = &rest[..end];
    let expected: Vec<&str> = rest[end + 1..].split('`').skip(1).step_by(2).collect();
    suggest::closest(word, expected.iter().copied()).map(|s| format!("did you mean `{s}`?"))
}
