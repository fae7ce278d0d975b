//! The built-in workloads, embedded in the binary at build time (`build.rs` lists
//! `workloads/*.yaml`), so `catalog` and `sweep --builtin NAME` need no repository.
//! A built-in is named by its file stem (`key-lookups`), which is also its `name:`.

use crate::plan::Plan;
use crate::spec::SpecErrors;

include!(concat!(env!("OUT_DIR"), "/builtin_workloads.rs"));

/// Names of the built-in workloads (file stems), in name order.
pub fn names() -> Vec<&'static str> {
    BUILTIN.iter().map(|(f, _)| f.trim_end_matches(".yaml")).collect()
}

/// The YAML text of a built-in workload.
pub fn text(name: &str) -> Option<&'static str> {
    BUILTIN.iter().find(|(f, _)| f.trim_end_matches(".yaml") == name).map(|(_, t)| *t)
}

/// The label a built-in carries in messages and results, where a file path would be.
pub fn label(name: &str) -> String {
    format!("builtin:{name}")
}

/// Check and resolve a built-in workload; an unknown name says which exist.
pub fn load(name: &str) -> Result<Plan, String> {
    let Some(text) = text(name) else {
        let hint = crate::spec::suggest::closest(name, names()).map(|s| format!(" (did you mean `{s}`?)")).unwrap_or_default();
        return Err(format!("no built-in workload `{name}`{hint}; `framecost catalog` lists them"));
    };
    crate::spec::load_str(&label(name), text).map_err(|e: SpecErrors| e.to_string())
}

#[cfg(test)]
mod tests {
    #[test]
    fn every_file_of_the_folder_is_embedded_and_loads() {
        let mut on_disk: Vec<String> = std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/workloads"))
            .expect("workloads folder")
            .filter_map(|e| e.ok()?.file_name().into_string().ok())
            .filter(|n| n.ends_with(".yaml"))
            .collect();
        on_disk.sort();
        let embedded: Vec<String> = super::BUILTIN.iter().map(|(f, _)| f.to_string()).collect();
        assert_eq!(on_disk, embedded);
        for n in super::names() {
            let plan = super::load(n).unwrap_or_else(|e| panic!("{n}: {e}"));
            assert_eq!(plan.name, n, "a built-in is named by its file stem");
        }
        let err = super::load("key-lookup").err().expect("an unknown name is refused");
        assert!(err.contains("did you mean `key-lookups`?"), "{err}");
    }
}
