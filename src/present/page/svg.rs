//! Pictures made inline for the HTML page: the prologue and namespace dropped, plotters'
//! one-polyline-per-dash runs merged into one path (the same drawing in about a third of
//! the bytes), and the description written from the numbers set as the accessible name.

use super::html::esc;
use super::Picture;
use std::fmt::Write;

/// The same drawing in fewer bytes: runs of one-line `<polyline>` elements that differ only
/// in their points (plotters writes every dash as one) become one `<path>` of move-and-line
/// commands. Only fully opaque, unfilled runs are merged, so what is drawn is unchanged.
pub fn compact_svg(svg: &str) -> String {
    fn split(line: &str) -> Option<(&str, &str)> {
        let rest = line.trim().strip_prefix("<polyline ")?.strip_suffix("/>")?;
        let (attrs, pts) = rest.split_once(" points=\"")?;
        let pts = pts.trim_end().strip_suffix('"')?;
        (attrs.contains("fill=\"none\"") && attrs.contains("opacity=\"1\"") && !attrs.contains('<')).then_some((attrs, pts))
    }
    let mut out = String::with_capacity(svg.len() / 2);
    let mut run: Option<(String, String)> = None;
    let flush = |run: &mut Option<(String, String)>, out: &mut String| {
        if let Some((attrs, d)) = run.take() {
            let _ = writeln!(out, "<path {attrs} d=\"{d}\"/>");
        }
    };
    for line in svg.lines() {
        match split(line) {
            Some((attrs, pts)) => {
                let mut d = String::new();
                for (i, p) in pts.split_whitespace().enumerate() {
                    d.push(if i == 0 { 'M' } else { 'L' });
                    d.push_str(p);
                }
                match &mut run {
                    Some((a, acc)) if a == attrs => acc.push_str(&d),
                    _ => {
                        flush(&mut run, &mut out);
                        run = Some((attrs.to_string(), d));
                    }
                }
            }
            None => {
                flush(&mut run, &mut out);
                out.push_str(line);
                out.push('\n');
            }
        }
    }
    flush(&mut run, &mut out);
    out
}

use crate::present::DrawError;

pub(super) fn svg_inline(p: &Picture) -> Result<String, DrawError> {
    let svg = std::fs::read_to_string(&p.svg).map_err(|error| DrawError::Read { path: p.svg.clone(), error })?;
    // Inline SVG needs no namespace declaration in HTML; leaving it out keeps the page free
    // of any URL at all. The XML prologue goes too.
    let svg = match svg.find("<svg") {
        Some(i) => &svg[i..],
        None => svg.as_str(),
    }
    .replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1);
    // The picture carries its own `role="img"`, `<title>` and `<desc>`; the page adds the
    // description written from the numbers as its accessible name.
    let svg = compact_svg(&svg);
    let open_end = svg.find('>').unwrap_or(0);
    let role = if svg[..open_end].contains(" role=") { "" } else { " role=\"img\"" };
    Ok(svg.replacen("<svg", &format!("<svg{role} aria-label=\"{}\"", esc(&p.alt)), 1))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dashes_are_merged_without_changing_the_drawing() {
        let svg = "<svg>\n<polyline fill=\"none\" opacity=\"1\" stroke=\"#1F6E8C\" stroke-width=\"2\" points=\"1,2 3,4 \"/>\n<polyline fill=\"none\" opacity=\"1\" stroke=\"#1F6E8C\" stroke-width=\"2\" points=\"5,6 7,8 \"/>\n<polyline fill=\"none\" opacity=\"0.5\" stroke=\"#1F6E8C\" stroke-width=\"2\" points=\"9,9 9,10 \"/>\n</svg>";
        let c = compact_svg(svg);
        assert!(c.contains("<path fill=\"none\" opacity=\"1\" stroke=\"#1F6E8C\" stroke-width=\"2\" d=\"M1,2L3,4M5,6L7,8\"/>"), "{c}");
        // A translucent one is left alone (overlaps would darken differently).
        assert!(c.contains("opacity=\"0.5\"") && c.contains("points=\"9,9 9,10 \""), "{c}");
        assert!(roxmltree::Document::parse(&c).is_ok());
    }
}
