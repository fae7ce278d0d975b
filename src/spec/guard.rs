//! Input hygiene for workload files, before any YAML parser sees them.
//!
//! A workload file is read only when it is a regular file of at most [`MAX_SPEC_BYTES`]
//! (a FIFO, a device or `/dev/zero` is refused at once: the file is opened without blocking
//! and checked with `fstat`), and its nesting is capped by a linear pre-scan
//! ([`nesting_problem`]). The cap matters because serde_yaml's scanner (libyaml's, ported)
//! keeps one entry per open bracket and revisits them at every token: measured here, 5k,
//! 10k and 20k nested `[` took 0.16, 0.60 and 1.8 s in `serde_yaml::from_str` alone (×4 per
//! doubling), while yaml-rust2's parser, used by the locator, stopped at once; a 200 KB file
//! of `[` took over a minute. Real workloads nest 6 levels.

use std::io::Read;
use std::path::Path;

/// Largest workload file read (1 MiB; the catalog's largest is under 10 KB).
pub const MAX_SPEC_BYTES: u64 = 1 << 20;
/// Most brackets (`[`, `{`) open at once in a workload file.
pub const MAX_FLOW_DEPTH: usize = 64;
/// Deepest indentation (leading spaces plus compact `- ` markers) of a line, in columns.
pub const MAX_INDENT: usize = 256;

/// Read a workload file as text, refusing anything but a regular file of bounded size.
pub fn read_spec(path: &Path) -> Result<String, String> {
    use std::os::unix::fs::{FileTypeExt, OpenOptionsExt};
    // O_NONBLOCK: opening a FIFO with no writer would otherwise wait forever.
    let file = std::fs::OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NONBLOCK | libc::O_NOCTTY)
        .open(path)
        .map_err(|e| format!("cannot read the workload file: {e}"))?;
    let meta = file.metadata().map_err(|e| format!("cannot read the workload file: {e}"))?;
    let ft = meta.file_type();
    if !ft.is_file() {
        let what = if ft.is_dir() {
            "a folder"
        } else if ft.is_fifo() {
            "a named pipe (FIFO)"
        } else if ft.is_char_device() || ft.is_block_device() {
            "a device"
        } else if ft.is_socket() {
            "a socket"
        } else {
            "not a regular file"
        };
        return Err(format!("refusing to read the workload file: it is {what}; workload files must be regular files"));
    }
    if meta.len() > MAX_SPEC_BYTES {
        return Err(format!("the workload file is {} bytes; workload files may be at most {MAX_SPEC_BYTES} bytes", meta.len()));
    }
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    // The size may change between fstat and read (a file still being written): read at most
    // one byte past the cap to tell.
    file.take(MAX_SPEC_BYTES + 1).read_to_end(&mut bytes).map_err(|e| format!("cannot read the workload file: {e}"))?;
    if bytes.len() as u64 > MAX_SPEC_BYTES {
        return Err(format!("the workload file grew past {MAX_SPEC_BYTES} bytes while it was read"));
    }
    String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        format!("the workload file is not UTF-8 text (bad byte at offset {at})")
    })
}

/// Where the text nests deeper than the caps allow, as (line, column, message), in one pass
/// (linear in the text).
/// Brackets inside quoted scalars and comments are not counted.
pub fn nesting_problem(text: &str) -> Option<(usize, usize, String)> {
    let mut depth = 0usize;
    let mut quote: Option<char> = None;
    for (ln, line) in text.lines().enumerate() {
        let line_no = ln + 1;
        if quote.is_none() && depth == 0 {
            let indent = block_indent(line);
            if indent > MAX_INDENT {
                return Some((line_no, 1, format!("the file nests deeper than {MAX_INDENT} columns of indentation")));
            }
        }
        let mut prev = ' ';
        let mut chars = line.chars().enumerate().peekable();
        while let Some((col, ch)) = chars.next() {
            match quote {
                Some('\'') if ch == '\'' => {
                    if chars.peek().map(|p| p.1) == Some('\'') {
                        chars.next(); // '' is an escaped quote
                    } else {
                        quote = None;
                    }
                }
                Some('"') if ch == '\\' => {
                    chars.next();
                }
                Some('"') if ch == '"' => quote = None,
                Some(_) => {}
                None => match ch {
                    '#' if prev.is_whitespace() || col == 0 => break,
                    '\'' | '"' if matches!(prev, ' ' | '\t' | '[' | '{' | ',' | ':' | '-' | '?') || col == 0 => quote = Some(ch),
                    '[' | '{' => {
                        depth += 1;
                        if depth > MAX_FLOW_DEPTH {
                            return Some((line_no, col + 1, format!("more than {MAX_FLOW_DEPTH} brackets are open here")));
                        }
                    }
                    ']' | '}' => depth = depth.saturating_sub(1),
                    _ => {}
                },
            }
            prev = ch;
        }
    }
    None
}

/// Leading spaces plus compact sequence markers (`- - - x` nests three levels on one line).
fn block_indent(line: &str) -> usize {
    let b = line.as_bytes();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b' ' => i += 1,
            b'-' | b'?' if b.get(i + 1).is_none_or(|c| *c == b' ') => i += 1,
            _ => break,
        }
    }
    i
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nesting_caps_brackets_but_not_quoted_ones() {
        assert!(nesting_problem("a: [[1, 2], {b: [3]}]\n").is_none());
        let deep = format!("a: {}{}\n", "[".repeat(65), "]".repeat(65));
        assert_eq!(nesting_problem(&deep).map(|p| (p.0, p.1)), Some((1, 68)));
        let quoted = format!("a: '{}'\nb: \"{}\" # {}\n", "[".repeat(100), "{".repeat(100), "[".repeat(100));
        assert!(nesting_problem(&quoted).is_none());
        let compact = format!("{}x\n", "- ".repeat(200));
        assert!(nesting_problem(&compact).is_some());
    }

    #[test]
    fn special_files_are_refused_at_once() {
        let e = read_spec(Path::new("/dev/zero")).unwrap_err();
        assert!(e.contains("a device"), "{e}");
        let e = read_spec(Path::new("/")).unwrap_err();
        assert!(e.contains("folder"), "{e}");
    }
}
