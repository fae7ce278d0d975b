//! framecost's look, shared by every picture: the palette, a marker shape and a dash pattern
//! per design, text drawn with a known box, a label placer that never lets two labels
//! overlap, and the legend band beside the plot.
//!
//! Every position here is in the root area's pixels (the root's origin is the picture's).

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Design colours (framecost's own), apart in lightness as well as hue. Hue alone never
/// carries identity: each design also has its own [`Mark`] and dash pattern ([`DASHES`]).
/// Inks 3–8 were tuned (the first two kept) so that the closest pair stays ΔE*ab ≥ 18 under
/// simulated protanopia, deuteranopia and tritanopia (tests/plots.rs names the model), and
/// every ink stays between L* 29 and 68 on the paper.
pub const INKS: [RGBColor; 8] = [
    RGBColor(0x1f, 0x6e, 0x8c), // harbour blue
    RGBColor(0xc8, 0x6b, 0x1e), // apricot
    RGBColor(0x70, 0x8e, 0x4e), // orchard green
    RGBColor(0x7e, 0x18, 0x5b), // plum
    RGBColor(0x6e, 0x56, 0x4f), // walnut
    RGBColor(0xda, 0x99, 0x00), // straw
    RGBColor(0x94, 0x1a, 0x13), // rosehip
    RGBColor(0x6f, 0xa8, 0xcf), // morning sky
];
pub const PAPER: RGBColor = RGBColor(0xfb, 0xf9, 0xf4);
pub const RULE: RGBColor = RGBColor(0xe4, 0xdf, 0xd3);
pub const TEXT: RGBColor = RGBColor(0x26, 0x26, 0x26);
pub const MUTED: RGBColor = RGBColor(0x8a, 0x84, 0x78);
pub const FONT: &str = "sans-serif";

/// Marker shapes, one per design (eight, so eight designs never share one).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mark {
    Circle,
    TriangleUp,
    Square,
    Diamond,
    Cross,
    TriangleDown,
    Plus,
    Star,
}
pub const MARKS: [Mark; 8] = [Mark::Circle, Mark::TriangleUp, Mark::Square, Mark::Diamond, Mark::Cross, Mark::TriangleDown, Mark::Plus, Mark::Star];

/// Dash patterns per design: lengths in pixels, on and off in turn; empty is solid. Each
/// differs from the others in rhythm, not only in scale, so they stay apart at a glance.
pub const DASHES: [&[f64]; 8] = [
    &[],                            // solid
    &[11.0, 5.0],                   // long dash
    &[2.0, 4.0],                    // dots
    &[14.0, 4.0, 3.0, 4.0],         // dash dot
    &[5.0, 3.0, 5.0, 9.0],          // paired dashes
    &[20.0, 7.0],                   // very long dash
    &[10.0, 3.0, 2.0, 3.0, 2.0, 3.0], // dash dot dot
    &[3.0, 9.0],                    // sparse dots
];

/// Design `i`'s ink, mark and dashes. Past eight designs the marks shift by one per round,
/// so no two of the first 64 designs share all three.
pub fn ink(i: usize) -> RGBColor {
    INKS[i % INKS.len()]
}
pub fn mark_of(i: usize) -> Mark {
    MARKS[(i + i / MARKS.len()) % MARKS.len()]
}
pub fn dashes_of(i: usize) -> &'static [f64] {
    DASHES[i % DASHES.len()]
}
/// Plain names of design `i`'s look, for the picture's description.
pub fn look_words(i: usize) -> String {
    const INK_NAMES: [&str; 8] = ["harbour blue", "apricot", "orchard green", "plum", "walnut", "straw", "rosehip", "morning sky"];
    const MARK_NAMES: [&str; 8] = ["circles", "triangles", "squares", "diamonds", "crosses", "downward triangles", "plus signs", "stars"];
    const DASH_NAMES: [&str; 8] = ["solid", "long-dashed", "dotted", "dash-dotted", "pair-dashed", "very long-dashed", "dash-dot-dotted", "sparsely dotted"];
    let m = MARKS.iter().position(|x| *x == mark_of(i)).unwrap_or(0);
    format!("{} {}, {} line", INK_NAMES[i % 8], MARK_NAMES[m], DASH_NAMES[i % 8])
}

/// `c` mixed towards the paper: `keep` 1.0 is `c`, 0.0 is the paper.
pub fn tint(c: RGBColor, keep: f64) -> RGBColor {
    let m = |a: u8, p: u8| (p as f64 + (a as f64 - p as f64) * keep).round() as u8;
    RGBColor(m(c.0, PAPER.0), m(c.1, PAPER.1), m(c.2, PAPER.2))
}

pub type Res<T> = Result<T, crate::present::DrawError>;
pub use crate::present::error::drawing as err;
pub type Area<DB> = DrawingArea<DB, Shift>;

/// A marker's outline as a polygon around `(x, y)` (the circle is drawn as a circle).
fn outline(m: Mark, (x, y): (i32, i32)) -> Vec<(i32, i32)> {
    let p = |pts: &[(f64, f64)]| pts.iter().map(|(dx, dy)| (x + dx.round() as i32, y + dy.round() as i32)).collect();
    // A plus of arms 6 long and 3.4 wide; the cross is the same turned by 45°.
    let plus: Vec<(f64, f64)> = vec![(-1.7, -6.0), (1.7, -6.0), (1.7, -1.7), (6.0, -1.7), (6.0, 1.7), (1.7, 1.7), (1.7, 6.0), (-1.7, 6.0), (-1.7, 1.7), (-6.0, 1.7), (-6.0, -1.7), (-1.7, -1.7)];
    match m {
        Mark::Circle => vec![],
        Mark::TriangleUp => p(&[(0.0, -6.5), (6.0, 4.5), (-6.0, 4.5)]),
        Mark::TriangleDown => p(&[(0.0, 6.5), (6.0, -4.5), (-6.0, -4.5)]),
        Mark::Square => p(&[(-4.7, -4.7), (4.7, -4.7), (4.7, 4.7), (-4.7, 4.7)]),
        Mark::Diamond => p(&[(0.0, -6.5), (5.5, 0.0), (0.0, 6.5), (-5.5, 0.0)]),
        Mark::Plus => p(&plus),
        Mark::Cross => {
            let r = std::f64::consts::FRAC_1_SQRT_2;
            p(&plus.iter().map(|(a, b)| ((a - b) * r * 1.1, (a + b) * r * 1.1)).collect::<Vec<_>>())
        }
        Mark::Star => {
            let pts: Vec<(f64, f64)> = (0..10)
                .map(|k| {
                    let r = if k % 2 == 0 { 7.0 } else { 3.0 };
                    let a = std::f64::consts::PI * (k as f64 / 5.0 - 0.5);
                    (r * a.cos(), r * a.sin())
                })
                .collect();
            p(&pts)
        }
    }
}

/// Draw mark `m` in `c`: filled (measured) or hollow (predicted, not measured: paper inside,
/// outline in `c`) — the same for every shape, crosses and plus signs included.
pub fn draw_mark<DB: DrawingBackend>(area: &Area<DB>, at: (i32, i32), m: Mark, c: RGBColor, filled: bool) -> Res<()> {
    if m == Mark::Circle {
        if filled {
            return area.draw(&Circle::new(at, 5, c.filled())).map_err(err);
        }
        area.draw(&Circle::new(at, 5, PAPER.filled())).map_err(err)?;
        return area.draw(&Circle::new(at, 5, c.stroke_width(2))).map_err(err);
    }
    let pts = outline(m, at);
    area.draw(&Polygon::new(pts.clone(), if filled { c.filled() } else { PAPER.filled() })).map_err(err)?;
    if !filled {
        let mut ring = pts;
        ring.push(ring[0]);
        area.draw(&PathElement::new(ring, c.stroke_width(2))).map_err(err)?;
    }
    Ok(())
}

/// Design `i`'s mark.
pub fn mark<DB: DrawingBackend>(area: &Area<DB>, at: (i32, i32), i: usize, filled: bool) -> Res<()> {
    draw_mark(area, at, mark_of(i), ink(i), filled)
}

/// Cut a polyline into the dashes of `pattern`, carrying the pattern's phase across
/// vertices: a curve of many short segments is dashed like a straight line of the same
/// length (a dash may turn a corner). Returns each dash as its own polyline.
pub fn dash_runs(pts: &[(f64, f64)], pattern: &[f64]) -> Vec<Vec<(f64, f64)>> {
    let pts: Vec<(f64, f64)> = pts.iter().copied().filter(|(x, y)| x.is_finite() && y.is_finite()).collect();
    if pts.len() < 2 {
        return vec![];
    }
    if pattern.is_empty() || pattern.iter().sum::<f64>() <= 0.0 {
        return vec![pts];
    }
    let mut out = Vec::new();
    let mut k = 0; // index into the pattern; even entries are "on"
    let mut left = pattern[0]; // what remains of the current entry
    let mut current: Vec<(f64, f64)> = vec![pts[0]];
    for w in pts.windows(2) {
        let (a, b) = (w[0], w[1]);
        let len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        let mut done = 0.0;
        while len - done > 1e-9 {
            let step = left.min(len - done);
            done += step;
            left -= step;
            let at = (a.0 + (b.0 - a.0) * done / len, a.1 + (b.1 - a.1) * done / len);
            if k % 2 == 0 {
                current.push(at);
            }
            if left <= 1e-9 {
                if k % 2 == 0 {
                    out.push(std::mem::take(&mut current));
                } else {
                    current = vec![at];
                }
                k = (k + 1) % pattern.len();
                left = pattern[k];
            }
        }
    }
    if k % 2 == 0 && current.len() >= 2 {
        out.push(current);
    }
    out.into_iter().filter(|d| d.len() >= 2).collect()
}

/// A polyline (pixel coordinates) in `c`, dashed by `pattern` with its phase carried across
/// vertices. Each dash is one path, so a dashed curve shows as separate pieces.
pub fn pattern_line<DB: DrawingBackend>(area: &Area<DB>, pts: &[(i32, i32)], pattern: &[f64], c: RGBColor, width: u32) -> Res<()> {
    let f: Vec<(f64, f64)> = pts.iter().map(|&(x, y)| (x as f64, y as f64)).collect();
    for run in dash_runs(&f, pattern) {
        let mut px: Vec<(i32, i32)> = run.iter().map(|&(x, y)| (x.round() as i32, y.round() as i32)).collect();
        px.dedup();
        if px.len() == 1 {
            px.push(px[0]);
        }
        area.draw(&PathElement::new(px, c.stroke_width(width))).map_err(err)?;
    }
    Ok(())
}

/// Design `i`'s line.
pub fn design_line<DB: DrawingBackend>(area: &Area<DB>, pts: &[(i32, i32)], i: usize, width: u32, keep: f64) -> Res<()> {
    pattern_line(area, pts, dashes_of(i), tint(ink(i), keep), width)
}

/// A box in pixels: left, top, right, bottom.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Zone {
    pub x0: i32,
    pub y0: i32,
    pub x1: i32,
    pub y1: i32,
}
impl Zone {
    pub fn overlaps(&self, o: &Zone) -> bool {
        self.x0 < o.x1 && o.x0 < self.x1 && self.y0 < o.y1 && o.y0 < self.y1
    }
    pub fn inside(&self, o: &Zone) -> bool {
        self.x0 >= o.x0 && self.x1 <= o.x1 && self.y0 >= o.y0 && self.y1 <= o.y1
    }
}

pub fn font(size: f64, c: RGBColor) -> TextStyle<'static> {
    (FONT, size).into_font().color(&c).pos(Pos::new(HPos::Left, VPos::Top))
}

/// The box `text` takes at `size` when its top left corner is at the origin (measured with
/// the embedded font; a line's height is the font size).
pub fn text_size<DB: DrawingBackend>(area: &Area<DB>, text: &str, size: f64) -> (i32, i32) {
    let (w, _) = area.estimate_text_size(text, &font(size, TEXT)).unwrap_or(((text.chars().count() as f64 * size * 0.6) as u32, 0));
    (w as i32, size.ceil() as i32)
}

/// Draw `text` with its top left corner at `at`; returns the box it takes.
pub fn text<DB: DrawingBackend>(area: &Area<DB>, s: &str, at: (i32, i32), size: f64, c: RGBColor) -> Res<Zone> {
    let (w, h) = text_size(area, s, size);
    area.draw_text(s, &font(size, c), at).map_err(err)?;
    Ok(Zone { x0: at.0, y0: at.1, x1: at.0 + w, y1: at.1 + h })
}

/// `s` shortened with "…" until it fits in `width` pixels.
pub fn fit_text<DB: DrawingBackend>(area: &Area<DB>, s: &str, size: f64, width: i32) -> String {
    if text_size(area, s, size).0 <= width {
        return s.to_string();
    }
    let mut chars: Vec<char> = s.chars().collect();
    while !chars.is_empty() {
        chars.pop();
        let t: String = chars.iter().collect::<String>() + "…";
        if text_size(area, &t, size).0 <= width {
            return t;
        }
    }
    "…".into()
}

/// Places labels inside a frame so that no two overlap and none covers a reserved spot
/// (markers). Each label tries spots around its anchor, nearest first; a label with no free
/// spot is not drawn (`place` says so, and the caller keeps what it means elsewhere).
pub struct Placer {
    pub frame: Zone,
    pub taken: Vec<Zone>,
}
impl Placer {
    pub fn new(frame: Zone) -> Self {
        Placer { frame, taken: Vec::new() }
    }
    /// Keep `r` free of labels.
    pub fn reserve(&mut self, r: Zone) {
        self.taken.push(r);
    }
    pub fn reserve_point(&mut self, (x, y): (i32, i32), radius: i32) {
        self.reserve(Zone { x0: x - radius, y0: y - radius, x1: x + radius, y1: y + radius });
    }
    /// Draw `s` near `anchor` (on a paper backing so lines under it do not cut it); returns
    /// the box used, or None when nothing was free.
    pub fn place<DB: DrawingBackend>(&mut self, area: &Area<DB>, s: &str, anchor: (i32, i32), size: f64, c: RGBColor) -> Res<Option<Zone>> {
        let (w, h) = text_size(area, s, size);
        let (ax, ay) = anchor;
        let gap = 8;
        let mut spots = Vec::new();
        for ring in 0..4 {
            let d = gap + ring * (h + 2);
            spots.extend([
                (ax + d, ay - h - d / 2),
                (ax + d, ay + d / 2),
                (ax - w - d, ay - h - d / 2),
                (ax - w - d, ay + d / 2),
                (ax - w / 2, ay - h - d),
                (ax - w / 2, ay + d),
                (ax + d, ay - h / 2),
                (ax - w - d, ay - h / 2),
            ]);
        }
        for (x, y) in spots {
            let r = Zone { x0: x - 2, y0: y - 1, x1: x + w + 2, y1: y + h + 1 };
            if r.inside(&self.frame) && !self.taken.iter().any(|t| t.overlaps(&r)) {
                area.draw(&Rectangle::new([(r.x0, r.y0), (r.x1, r.y1)], PAPER.mix(0.85).filled())).map_err(err)?;
                text(area, s, (x, y), size, c)?;
                self.taken.push(r);
                return Ok(Some(r));
            }
        }
        Ok(None)
    }
}

/// One row of a legend: how to draw its sample, and its words.
pub enum Sample {
    /// Design `i`'s line and filled mark.
    Design(usize),
    /// A neutral line in this pattern, width and ink, with an optional mark (filled?).
    Line { pattern: &'static [f64], width: u32, ink: RGBColor, mark: Option<bool> },
    /// A neutral mark alone (filled?).
    Mark(bool),
    /// A vertical interval bar.
    Interval,
    /// A numbered ring (crossover).
    Ring,
}

/// The legend band: a column of samples and words in `band` (beside or below the plot, never
/// on the data). Samples are drawn by the same functions as the data, so they agree.
pub fn legend<DB: DrawingBackend>(area: &Area<DB>, band: Zone, rows: &[(Sample, String)]) -> Res<()> {
    let x = band.x0 + 8;
    let mut y = band.y0 + 10;
    let words_x = x + 50;
    let room = band.x1 - words_x - 4;
    let mut first_note = true;
    for (sample, words) in rows {
        if y + 16 > band.y1 {
            break;
        }
        if !matches!(sample, Sample::Design(_)) && first_note {
            first_note = false;
            y += 8;
            area.draw(&PathElement::new(vec![(x, y - 6), (band.x1 - 8, y - 6)], RULE.stroke_width(1))).map_err(err)?;
        }
        let mid = y + 8;
        let seg = [(x, mid), (x + 40, mid)];
        match sample {
            Sample::Design(i) => {
                design_line(area, &seg, *i, 2, 1.0)?;
                mark(area, (x + 20, mid), *i, true)?;
            }
            Sample::Line { pattern, width, ink, mark: m } => {
                pattern_line(area, &seg, pattern, *ink, *width)?;
                if let Some(filled) = m {
                    draw_mark(area, (x + 20, mid), Mark::Circle, *ink, *filled)?;
                }
            }
            Sample::Mark(filled) => draw_mark(area, (x + 20, mid), Mark::Circle, TEXT, *filled)?,
            Sample::Interval => {
                area.draw(&PathElement::new(vec![(x + 20, mid - 7), (x + 20, mid + 7)], TEXT.stroke_width(2))).map_err(err)?;
                for yy in [mid - 7, mid + 7] {
                    area.draw(&PathElement::new(vec![(x + 16, yy), (x + 24, yy)], TEXT.stroke_width(1))).map_err(err)?;
                }
            }
            Sample::Ring => ring(area, (x + 20, mid))?,
        }
        let size = if matches!(sample, Sample::Design(_)) { 14.0 } else { 12.0 };
        let colour = if matches!(sample, Sample::Design(_)) { TEXT } else { MUTED };
        text(area, &fit_text(area, words, size, room), (words_x, mid - size as i32 / 2 - 1), size, colour)?;
        y += 22;
    }
    Ok(())
}

/// The crossover mark: a sight (a thin ring with four ticks), unlike any design's mark.
pub fn ring<DB: DrawingBackend>(area: &Area<DB>, (x, y): (i32, i32)) -> Res<()> {
    area.draw(&Circle::new((x, y), 7, TEXT.stroke_width(1))).map_err(err)?;
    for (dx, dy) in [(1, 0), (-1, 0), (0, 1), (0, -1)] {
        area.draw(&PathElement::new(vec![(x + 4 * dx, y + 4 * dy), (x + 11 * dx, y + 11 * dy)], TEXT.stroke_width(2))).map_err(err)?;
    }
    Ok(())
}

/// The widest words of a legend, so the band can be sized to them (within limits).
pub fn legend_width<DB: DrawingBackend>(area: &Area<DB>, rows: &[(Sample, String)]) -> i32 {
    let w = rows.iter().map(|(s, t)| text_size(area, t, if matches!(s, Sample::Design(_)) { 14.0 } else { 12.0 }).0).max().unwrap_or(80);
    (w + 50 + 8 + 12).clamp(170, 290)
}

/// Escape text for XML.
pub fn xml_escape(s: &str) -> String {
    s.chars()
        .map(|c| match c {
            '&' => "&amp;".into(),
            '<' => "&lt;".into(),
            '>' => "&gt;".into(),
            '"' => "&quot;".into(),
            c if crate::units::unprintable(c) => c.escape_default().to_string(),
            c => c.to_string(),
        })
        .collect()
}

/// Give an SVG a `<title>` and a `<desc>` (read by screen readers and shown as a tooltip)
/// and mark it as one image.
pub fn titled_svg(svg: &str, title: &str, desc: &str) -> String {
    let Some(start) = svg.find("<svg") else { return svg.to_string() };
    let Some(end) = svg[start..].find('>').map(|e| start + e) else { return svg.to_string() };
    let (head, rest) = svg.split_at(end);
    let head = head.trim_end_matches('/');
    format!("{head} role=\"img\"><title>{}</title><desc>{}</desc>{}", xml_escape(title), xml_escape(desc), &rest[1..])
}
