//! Text laid out to a width: words wrapped with hanging indents, and grids whose value
//! columns are split into even blocks of sizes when they do not fit (never cut mid-value).

use std::fmt::Write;

/// Printed width of a string (every character one column; framecost prints no wide ones).
pub(super) fn cols(s: &str) -> usize {
    s.chars().count()
}

/// Words of `text` in lines of at most `width` columns: the first line after `first`, the
/// others after `rest` (a hanging indent). A word longer than a line stays whole.
pub fn wrap(text: &str, width: usize, first: &str, rest: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut line = first.to_string();
    let mut empty = true;
    for word in text.split_whitespace() {
        let indent = if out.is_empty() { cols(first) } else { cols(rest) };
        if !empty && cols(&line) + 1 + cols(word) > width.max(indent + 10) {
            out.push(std::mem::replace(&mut line, rest.to_string()));
            empty = true;
        }
        if !empty {
            line.push(' ');
        }
        line.push_str(word);
        empty = false;
    }
    if !empty || out.is_empty() {
        out.push(line.trim_end().to_string());
    }
    out
}

pub(super) fn push_wrapped(s: &mut String, text: &str, width: usize, first: &str, rest: &str) {
    for l in wrap(text, width, first, rest) {
        let _ = writeln!(s, "{l}");
    }
}

/// A grid: a label column and value columns (right-aligned), each cell one or more lines.
/// Too wide for `width`, its value columns are split into blocks, each with the labels.
pub(super) fn grid(head: &[String], rows: &[(String, Vec<Vec<String>>)], width: usize, indent: &str) -> Vec<String> {
    let label_w = rows.iter().map(|r| cols(&r.0)).chain(std::iter::once(cols(&head[0]))).max().unwrap_or(0);
    let ncols = head.len() - 1;
    let col_w: Vec<usize> = (0..ncols)
        .map(|j| rows.iter().flat_map(|r| r.1.get(j).into_iter().flatten()).map(|l| cols(l)).chain(std::iter::once(cols(&head[j + 1]))).max().unwrap_or(0))
        .collect();
    let gap = 2;
    let mut blocks: Vec<(usize, usize)> = Vec::new();
    let mut start = 0;
    while start < ncols {
        let mut used = cols(indent) + label_w;
        let mut end = start;
        while end < ncols && (end == start || used + gap + col_w[end] <= width) {
            used += gap + col_w[end];
            end += 1;
        }
        blocks.push((start, end));
        start = end;
    }
    // Spread the columns evenly over the blocks (10 sizes as 5 + 5, not 9 + 1) when that
    // still fits.
    if blocks.len() > 1 {
        let per = ncols.div_ceil(blocks.len());
        let even: Vec<(usize, usize)> = (0..ncols).step_by(per).map(|s| (s, (s + per).min(ncols))).collect();
        let fits = |&(s, e): &(usize, usize)| cols(indent) + label_w + (s..e).map(|j| gap + col_w[j]).sum::<usize>() <= width;
        if even.len() == blocks.len() && even.iter().all(fits) {
            blocks = even;
        }
    }
    let mut out = Vec::new();
    for (b, &(s, e)) in blocks.iter().enumerate() {
        if b > 0 {
            out.push(String::new());
        }
        let mut line = format!("{indent}{:<label_w$}", head[0]);
        for j in s..e {
            let _ = write!(line, "{:gap$}{:>w$}", "", head[j + 1], w = col_w[j]);
        }
        out.push(line.trim_end().to_string());
        for (label, cells) in rows {
            let height = cells[s..e.min(cells.len())].iter().map(|c| c.len()).max().unwrap_or(1).max(1);
            for k in 0..height {
                let mut line = format!("{indent}{:<label_w$}", if k == 0 { label.as_str() } else { "" });
                for j in s..e {
                    let cell = cells.get(j).and_then(|c| c.get(k)).map(String::as_str).unwrap_or("");
                    let _ = write!(line, "{:gap$}{:>w$}", "", cell, w = col_w[j]);
                }
                out.push(line.trim_end().to_string());
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrapping_keeps_to_the_width() {
        let text = "the prediction at 2M rows is 1.5 decades past the largest measured size, so read it as an order of magnitude";
        let lines = wrap(text, 40, "  · ", "    ");
        assert!(lines.len() > 2);
        assert!(lines.iter().all(|l| cols(l) <= 40), "{lines:?}");
        assert!(lines[0].starts_with("  · the") && lines[1].starts_with("    "));
        assert_eq!(lines.join(" ").split_whitespace().filter(|w| *w != "·").collect::<Vec<_>>(), text.split_whitespace().collect::<Vec<_>>());
    }

    #[test]
    fn a_wide_grid_is_split_into_blocks_that_fit() {
        let head: Vec<String> = std::iter::once("time per run".to_string()).chain((1..=10).map(|k| format!("{k}k"))).collect();
        let rows = vec![("one-at-a-time".to_string(), (1..=10).map(|_| vec!["887 ms".to_string(), "506×".to_string()]).collect())];
        let lines = grid(&head, &rows, 60, "  ");
        assert!(lines.iter().all(|l| cols(l) <= 60), "{lines:?}");
        // Every size heading appears once, the label is repeated per block, and the blocks
        // are even.
        assert!(lines.iter().filter(|l| l.contains("one-at-a-time")).count() >= 2);
        let heads: Vec<usize> = lines.iter().filter(|l| l.trim_start().starts_with("time per run")).map(|l| l.split_whitespace().count() - 3).collect();
        assert!(heads.iter().max().unwrap_or(&0) - heads.iter().min().unwrap_or(&0) <= 1, "{heads:?}");
        for k in 1..=10 {
            assert_eq!(lines.iter().filter(|l| l.split_whitespace().any(|w| w == format!("{k}k"))).count(), 1);
        }
    }
}
