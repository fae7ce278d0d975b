//! Pictures, reports and the terminal summary from a real (tiny) sweep: PNGs decode at the
//! expected size and are not blank; SVGs parse as XML and carry one series per design; the
//! HTML report parses, holds its pictures inline with a text alternative each, links only
//! to its own sections, writes names as code and its sentences cleanly; redrawing from the
//! same results gives the same files byte for byte; the CSV follows RFC 4180's shape; the
//! summary keeps to the width it is given and `recap` prints exactly what `sweep` printed.

use assert_cmd::Command;
use std::collections::HashSet;
use std::path::Path;

/// Sweep the tiny workload with stdout and stderr piped and `COLUMNS=100`; returns (stdout, stderr).
fn sweep(dir: &Path) -> (String, String) {
    let out = Command::cargo_bin("framecost")
        .expect("binary")
        .env("COLUMNS", "100")
        .env_remove("NO_COLOR")
        .args(["sweep", "tests/data/tiny.yaml", "--out"])
        .arg(dir)
        .output()
        .expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    (String::from_utf8_lossy(&out.stdout).into_owned(), String::from_utf8_lossy(&out.stderr).into_owned())
}

fn recap(dir: &Path, columns: &str, long: bool) -> String {
    let mut c = Command::cargo_bin("framecost").expect("binary");
    c.env("COLUMNS", columns).arg("recap").arg(dir);
    if long {
        c.arg("--long");
    }
    let out = c.output().expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// Text of the elements people read as prose (paragraphs, list items, definitions), with
/// `code` and `pre` left out.
fn prose(doc: &roxmltree::Document) -> Vec<String> {
    fn text(n: roxmltree::Node, out: &mut String) {
        for c in n.children() {
            if c.is_text() {
                out.push_str(c.text().unwrap_or(""));
            } else if c.is_element() && !matches!(c.tag_name().name(), "code" | "pre" | "svg" | "ul") {
                text(c, out);
            } else if c.is_element() && c.tag_name().name() == "code" {
                out.push_str("NAME");
            }
        }
    }
    doc.descendants()
        .filter(|n| matches!(n.tag_name().name(), "p" | "li" | "dd"))
        .map(|n| {
            let mut s = String::new();
            text(n, &mut s);
            s
        })
        .collect()
}

#[test]
fn pictures_and_reports_are_sound_and_reproducible() {
    let tmp = tempfile::tempdir().expect("tempdir");
    let run = tmp.path().join("run");
    let (printed, progress) = sweep(&run);
    let pics = run.join("pictures");
    let designs = ["one-at-a-time", "build-once"];
    // framecost's inks for the first two designs (src/present/plot.rs), as plotters writes them.
    let inks = ["#1F6E8C", "#C86B1E"];
    for kind in ["scaling", "memory", "distribution", "ratios"] {
        let svg_path = pics.join(format!("tiny-ledger-{kind}.svg"));
        let svg = std::fs::read_to_string(&svg_path).unwrap_or_else(|e| panic!("{}: {e}", svg_path.display()));
        let doc = roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{kind}.svg is not XML: {e}"));
        assert_eq!(doc.root_element().tag_name().name(), "svg");
        let texts: Vec<String> = doc.descendants().filter(|n| n.has_tag_name("text")).filter_map(|n| n.text().map(|t| t.trim().to_string())).collect();
        for (d, ink) in designs.iter().zip(inks) {
            assert!(texts.iter().any(|t| t == d), "{kind}.svg has no legend entry for {d}");
            assert!(svg.to_uppercase().contains(ink), "{kind}.svg draws nothing in {d}'s colour {ink}");
        }
        let png_path = pics.join(format!("tiny-ledger-{kind}.png"));
        let img = image::open(&png_path).unwrap_or_else(|e| panic!("{}: {e}", png_path.display())).to_rgb8();
        assert_eq!(img.dimensions(), (960, 600));
        let distinct: HashSet<[u8; 3]> = img.pixels().map(|p| p.0).collect();
        assert!(distinct.len() >= 20, "{kind}.png looks blank: {} distinct colours", distinct.len());
    }

    let html = std::fs::read_to_string(run.join("report.html")).expect("html");
    // The page is written as well-formed XML (XHTML syntax), so a strict XML parser must accept it.
    let opts = roxmltree::ParsingOptions { allow_dtd: true, ..Default::default() };
    let doc = roxmltree::Document::parse_with_options(&html, opts).expect("report.html parses (as XML)");
    assert_eq!(doc.root_element().tag_name().name(), "html");
    let lower = html.to_lowercase();
    for bad in ["http:", "https:", "src=", "<script", "<link", "url(", "@import"] {
        assert!(!lower.contains(bad), "report.html refers outside itself: {bad}");
    }
    // Links only to its own sections, and every one of them lands.
    let ids: HashSet<&str> = doc.descendants().filter_map(|n| n.attribute("id")).collect();
    let links: Vec<&str> = doc.descendants().filter_map(|n| n.attribute("href")).collect();
    assert!(!links.is_empty(), "the overview links to the workload's section");
    for l in &links {
        let target = l.strip_prefix('#').unwrap_or_else(|| panic!("report.html links outside itself: {l}"));
        assert!(ids.contains(target), "link {l} lands nowhere");
    }
    // Pictures: inline, each with a text alternative that names every design (WAI-ARIA's
    // role="img" with aria-label, W3C WAI-ARIA 1.2 §5.3) and a caption.
    let svgs: Vec<_> = doc.descendants().filter(|n| n.has_tag_name("svg")).collect();
    assert!(!svgs.is_empty() && svgs.len() <= 2, "one picture open and at most one folded: {}", svgs.len());
    for svg in &svgs {
        assert_eq!(svg.attribute("role"), Some("img"));
        let alt = svg.attribute("aria-label").unwrap_or("");
        for d in designs {
            assert!(alt.contains(d), "the text alternative does not mention {d}: {alt}");
        }
        assert!(svg.parent().is_some_and(|p| p.has_tag_name("figure")), "a picture outside a figure");
    }
    // The decision leads the section: the answer, then the facts behind it.
    let say = doc.descendants().find(|n| n.attribute("class") == Some("say")).expect("an answer");
    let code = say.descendants().find(|n| n.has_tag_name("code")).and_then(|n| n.text());
    assert_eq!(code, Some("build-once"), "the answer names the measured winner");
    assert!(html.find("class=\"say\"").expect("answer") < html.find("class=\"grid\"").expect("grid"), "the answer comes before the grid");
    // Names are code, never raw backticks; sentences start with a capital after a full stop.
    let outside_pre: String = html.split("<pre>").enumerate().map(|(i, part)| if i == 0 { part } else { part.split_once("</pre>").map(|x| x.1).unwrap_or("") }).collect();
    assert!(!outside_pre.contains('`'), "a raw backtick in the HTML");
    for t in prose(&doc) {
        let chars: Vec<char> = t.chars().collect();
        for i in 2..chars.len() {
            if chars[i - 2] == '.' && chars[i - 1] == ' ' {
                assert!(!chars[i].is_lowercase(), "a sentence restarts in lower case: {t}");
            }
        }
        assert!(!t.contains("less than ×") && !t.contains("×1.") && !t.contains("×2."), "ratio wording of the old kind: {t}");
    }
    // A design × size grid, not a long table: one row per design.
    let grid = doc.descendants().find(|n| n.has_tag_name("table") && n.attribute("class") == Some("grid")).expect("grid");
    let body_rows = grid.descendants().filter(|n| n.has_tag_name("tr")).count() - 1;
    assert_eq!(body_rows, designs.len());
    assert!(html.len() < 400_000, "report.html is {} bytes for one workload", html.len());

    let md = std::fs::read_to_string(run.join("report.md")).expect("md");
    assert!(md.contains("](pictures/tiny-ledger-scaling.svg \"Time per run as the rows grow\")"), "{md}");
    assert!(md.contains("**Use `build-once`.** (winner)"));
    assert!(md.contains("| [tiny-ledger](#tiny-ledger) |"));

    // The terminal summary: decision first, within 100 columns piped, within 60 when told;
    // `recap` prints what `sweep` printed.
    let summary = printed.split("\nresults: ").next().unwrap_or("");
    let again = recap(&run, "100", false);
    assert_eq!(summary, again, "recap differs from what sweep printed");
    assert!(again.lines().all(|l| l.chars().count() <= 100), "a line over 100 columns:\n{again}");
    assert!(again.find("decision").expect("decision") < again.find("time per run").expect("grid"));
    let narrow = recap(&run, "60", true);
    let widest = narrow.lines().map(|l| l.chars().count()).max().unwrap_or(0);
    assert!(widest <= 60, "--long at 60 columns has a line of {widest}:\n{narrow}");
    assert!(narrow.len() > again.len(), "--long shows more");
    // Piped progress: a plain line when the workload is done.
    assert!(progress.contains("framecost: tiny-ledger done in"), "no progress line on a piped stderr: {progress}");

    // CSV: CRLF records, one header, every record with the header's number of fields.
    let csv = std::fs::read_to_string(run.join("points.csv")).expect("csv");
    let lines: Vec<&str> = csv.split("\r\n").filter(|l| !l.is_empty()).collect();
    let width = lines[0].split(',').count();
    assert!(lines.len() > 10);
    assert!(lines.iter().all(|l| l.split(',').count() == width));

    // Redraw twice from the saved results: the same bytes as the sweep's own report.
    for k in 0..2 {
        let again = tmp.path().join(format!("again{k}"));
        let out = Command::cargo_bin("framecost").expect("binary").arg("report").arg(&run).arg("--out").arg(&again).output().expect("runs");
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
        for f in ["report.md", "report.html", "points.csv", "pictures/tiny-ledger-scaling.svg", "pictures/tiny-ledger-scaling.png", "pictures/tiny-ledger-memory.png"] {
            let a = std::fs::read(run.join(f)).expect("first");
            let b = std::fs::read(again.join(f)).expect("again");
            assert!(a == b, "{f} differs when redrawn");
        }
    }
}
