//! Pictures and reports from a real (tiny) sweep: PNGs decode at the expected size and are
//! not blank; SVGs parse as XML and carry one series per design; the HTML report parses,
//! holds its pictures inline and refers to nothing outside itself; redrawing from the same
//! results gives the same files byte for byte; the CSV follows RFC 4180's shape.

use assert_cmd::Command;
use std::collections::HashSet;
use std::path::Path;

fn sweep(dir: &Path) {
    let out = Command::cargo_bin("framecost")
        .expect("binary")
        .args(["sweep", "tests/data/tiny.yaml", "--quiet", "--out"])
        .arg(dir)
        .output()
        .expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
}

#[test]
fn pictures_and_reports_are_sound_and_reproducible() {
    let tmp = tempfile::tempdir().expect("tempdir");
    let run = tmp.path().join("run");
    sweep(&run);
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
    for bad in ["http:", "https:", "src=", "href=", "<script", "<link", "url(", "@import"] {
        assert!(!lower.contains(bad), "report.html refers outside itself: {bad}");
    }
    assert_eq!(doc.descendants().filter(|n| n.has_tag_name("svg")).count(), 4, "four inline pictures");
    assert!(html.contains("Verdict (winner):") && html.contains("use `build-once`"), "the verdict leads the section");
    let md = std::fs::read_to_string(run.join("report.md")).expect("md");
    assert!(md.contains("![Time per run as the rows grow](pictures/tiny-ledger-scaling.svg)"));
    assert!(md.contains("**Verdict (winner):** use `build-once`"));

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
