//! Embeds the built-in workloads (`workloads/*.yaml`) in the binary, so `framecost catalog`
//! and `framecost sweep --builtin NAME` work from any folder after `cargo install`.
//! Writes `$OUT_DIR/builtin_workloads.rs`: one `(file name, text)` pair per file, in name
//! order, each through `include_str!` so cargo rebuilds when a workload changes. It also
//! sets the cfg `framecost_wide` when the compiler is Rust 1.89 or later (AVX-512 target
//! features are stable from there), so the table generator's loops get their AVX-512 copy
//! (`src/table/fill.rs`) while the crate still builds on its declared rust-version.

use std::path::PathBuf;

/// The compiler's minor version (`rustc 1.95.0 …` → 95); a 2.x compiler counts as newer.
fn rustc_minor() -> Option<u32> {
    let rustc = std::env::var_os("RUSTC")?;
    let out = std::process::Command::new(rustc).arg("--version").output().ok()?;
    let text = String::from_utf8(out.stdout).ok()?;
    let mut parts = text.split_whitespace().nth(1)?.split('.');
    let major: u32 = parts.next()?.parse().ok()?;
    let minor: u32 = parts.next()?.parse().ok()?;
    Some(if major > 1 { u32::MAX } else { minor })
}

fn main() {
    println!("cargo:rustc-check-cfg=cfg(framecost_wide)");
    if rustc_minor().is_some_and(|m| m >= 89) {
        println!("cargo:rustc-cfg=framecost_wide");
    }
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
