//! `framecost manual [--out DIR]` — the manual page in roff (clap_mangen), from the same
//! definitions as `--help`: `framecost.1` on stdout, or with `--out` one page per command
//! (`framecost.1`, `framecost-sweep.1`, …) written into a folder. Each page ends with an
//! EXIT STATUS section listing [`crate::exit::ALL`].

use std::io::Write;
use std::path::{Path, PathBuf};

/// Print the manual page, or write one page per command into a folder.
#[derive(Debug, clap::Args)]
#[command(after_long_help = "Read it with `framecost manual | man -l -`, or install the pages with\n`framecost manual --out ~/.local/share/man/man1`.")]
pub struct Args {
    /// Write framecost.1 and one page per command into this folder instead of printing.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

/// One page in roff: clap_mangen's sections, then EXIT STATUS, then the version.
pub fn page(cmd: &clap::Command) -> std::io::Result<Vec<u8>> {
    // The exit codes get a section of their own instead of the help's closing note.
    let cmd = cmd.clone().after_help(None::<&str>).after_long_help(None::<&str>);
    let man = clap_mangen::Man::new(cmd.clone());
    let mut out = Vec::new();
    man.render_title(&mut out)?;
    man.render_name_section(&mut out)?;
    man.render_synopsis_section(&mut out)?;
    man.render_description_section(&mut out)?;
    if cmd.get_arguments().any(|a| !a.is_hide_set()) {
        man.render_options_section(&mut out)?;
    }
    if cmd.has_subcommands() {
        man.render_subcommands_section(&mut out)?;
    }
    let mut roff = String::from(".SH \"EXIT STATUS\"\n");
    for (code, what) in crate::exit::ALL {
        roff.push_str(&format!(".TP\n\\fB{code}\\fR\n{}\n", escape(what)));
    }
    out.extend_from_slice(roff.as_bytes());
    if cmd.get_version().is_some() {
        man.render_version_section(&mut out)?;
    }
    Ok(once_preamble(&out))
}

/// clap_mangen starts every section it renders with the same two-line string definition
/// (`.ie \n(.g .ds Aq …`); rendered section by section, the page needs it only once.
fn once_preamble(page: &[u8]) -> Vec<u8> {
    let text = String::from_utf8_lossy(page);
    let mut seen = std::collections::HashSet::new();
    let mut out = String::new();
    for line in text.lines() {
        let preamble = line.starts_with(".ie \\n(.g .ds Aq") || line.starts_with(".el .ds Aq");
        if preamble && !seen.insert(line.to_string()) {
            continue;
        }
        out.push_str(line);
        out.push('\n');
    }
    out.into_bytes()
}

/// Text safe in a roff body: backslashes doubled, a leading `.` or `'` guarded.
fn escape(s: &str) -> String {
    let s = s.replace('\\', "\\\\").replace('-', "\\-");
    if s.starts_with(['.', '\'']) {
        format!("\\&{s}")
    } else {
        s
    }
}

/// Every page: `framecost` and each command below it (named `framecost-sweep` and so on).
pub fn pages() -> std::io::Result<Vec<(String, Vec<u8>)>> {
    let mut cmd = super::command().disable_help_subcommand(true);
    cmd.build();
    let mut out = Vec::new();
    fn walk(cmd: &clap::Command, out: &mut Vec<(String, Vec<u8>)>) -> std::io::Result<()> {
        let name = cmd.get_display_name().unwrap_or_else(|| cmd.get_name()).to_string();
        out.push((format!("{name}.1"), page(cmd)?));
        for s in cmd.get_subcommands().filter(|s| !s.is_hide_set()) {
            walk(s, out)?;
        }
        Ok(())
    }
    walk(&cmd, &mut out)?;
    Ok(out)
}

fn write_pages(dir: &Path) -> Result<usize, String> {
    let pages = pages().map_err(|e| e.to_string())?;
    std::fs::create_dir_all(dir).map_err(|e| format!("{}: cannot create the folder: {e}", dir.display()))?;
    for (name, bytes) in &pages {
        crate::results::writer::replace_with(&dir.join(name), |tmp| std::fs::write(tmp, bytes)).map_err(|e| e.to_string())?;
    }
    Ok(pages.len())
}

pub fn run(a: Args) -> Result<(), super::Failure> {
    use super::Failure;
    match &a.out {
        Some(dir) => {
            let n = write_pages(dir).map_err(|e| Failure::Write(format!("could not write the pages: {e}")))?;
            println!("{n} manual pages in {}", dir.display());
            Ok(())
        }
        None => {
            let page = pages().map(|mut p| p.swap_remove(0).1);
            page.and_then(|p| std::io::stdout().lock().write_all(&p)).map_err(|e| Failure::Write(format!("could not write: {e}")))
        }
    }
}
