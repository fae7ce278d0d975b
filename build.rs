//! Embeds the built-in workloads (`workloads/*.yaml`) in the binary, so `framecost catalog`
//! and `framecost sweep --builtin NAME` work from any folder after `cargo install`.
//! Writes `$OUT_DIR/builtin_workloads.rs`: one `(file name, text)` pair per file, in name
//! order, each through `include_str!` so cargo rebuilds when a workload changes.

use std::path::PathBuf;

fn main() {
    let root = PathBuf::from(std::env::var_os("CARGO_MANIFEST_DIR").expect("cargo sets CARGO_MANIFEST_DIR"));
    let dir = root.join("workloads");
    println!("cargo:rerun-if-changed={}", dir.display());
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .map(|rd| rd.filter_map(|e| e.ok().map(|e| e.path())).filter(|p| p.extension().is_some_and(|x| x == "yaml")).collect())
        .unwrap_or_default();
    files.sort();
    let mut out = String::from("/// The built-in workloads: (file name, YAML text), in name order.\npub const BUILTIN: &[(&str, &str)] = &[\n");
    for f in &files {
        let name = f.file_name().and_then(|n| n.to_str()).expect("workload file names are UTF-8");
        out.push_str(&format!("    ({name:?}, include_str!({:?})),\n", f.display().to_string()));
    }
    out.push_str("];\n");
    let dest = PathBuf::from(std::env::var_os("OUT_DIR").expect("cargo sets OUT_DIR")).join("builtin_workloads.rs");
    std::fs::write(dest, out).expect("write the list of built-in workloads");
}
