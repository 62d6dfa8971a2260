//! Real tools read every output: pdflatex (Debian's TeX Live) compiles the
//! LaTeX, usvg parses and resvg renders the SVG, headless Chromium (Debian's
//! `chromium`) opens the HTML. A missing pdflatex or chromium fails the test
//! under CI and skips it visibly elsewhere (`util::have_tool`).

use std::io::Write as _;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::Instant;

use resvg::tiny_skia::{Pixmap, Transform};
use resvg::usvg;

use orbitcnf::render::{Format, Picture};

use super::{Output, outputs};
use crate::util::{TestDir, have_tool};

fn note(what: String) {
    let _ = writeln!(std::io::stderr(), "{what}");
}

#[test]
fn pdflatex_compiles_every_latex_output() {
    if !have_tool("pdflatex") {
        return;
    }
    let dir = TestDir::new();
    let started = Instant::now();
    let all = outputs(Format::Latex);
    for o in &all {
        let tex = dir.write(&o.file, &o.text);
        let run = pdflatex(&dir, &tex);
        let log = String::from_utf8_lossy(&run.stdout);
        assert!(
            run.status.success(),
            "pdflatex rejected {} (from {}):\n{log}",
            o.file,
            o.input
        );
        // Print quality: nothing sticks out into the margin, no glyph is missing.
        for bad in [
            "Undefined control sequence",
            "Missing character",
            "LaTeX Error",
            "Overfull \\hbox",
        ] {
            assert!(!log.contains(bad), "{}: {bad}\n{log}", o.file);
        }
        let pdf = dir.path(&o.file.replace(".tex", ".pdf"));
        let bytes = std::fs::read(&pdf).unwrap_or_else(|e| panic!("{}: {e}", pdf.display()));
        assert!(bytes.starts_with(b"%PDF"), "{}: not a PDF", pdf.display());
    }
    note(format!(
        "pdflatex: {} documents in {:.1} s",
        all.len(),
        started.elapsed().as_secs_f64()
    ));
}

/// Fraction of pixels that are not (nearly) white.
fn ink(p: &Pixmap) -> f64 {
    let dark = p
        .pixels()
        .iter()
        .filter(|px| px.alpha() > 0 && (px.red() < 200 || px.green() < 200 || px.blue() < 200))
        .count();
    dark as f64 / p.pixels().len().max(1) as f64
}

fn rasterise(o: &Output) -> Pixmap {
    let tree = usvg::Tree::from_str(&o.text, &usvg::Options::default())
        .unwrap_or_else(|e| panic!("{}: usvg rejects it: {e}", o.file));
    let size = tree.size().to_int_size();
    let mut pixmap = Pixmap::new(size.width(), size.height()).expect("a non-empty picture");
    resvg::render(&tree, Transform::default(), &mut pixmap.as_mut());
    pixmap
}

fn count(doc: &roxmltree::Document, class: &str) -> usize {
    doc.descendants()
        .filter(|n| {
            n.attribute("class")
                .is_some_and(|c| c.split(' ').next() == Some(class))
        })
        .count()
}

#[test]
fn every_svg_parses_and_renders_to_a_picture_that_is_not_blank() {
    for o in outputs(Format::Svg) {
        let doc = roxmltree::Document::parse(&o.text)
            .unwrap_or_else(|e| panic!("{}: not XML: {e}", o.file));
        let root = doc.root_element();
        assert_eq!(root.tag_name().name(), "svg", "{}", o.file);
        assert_eq!(
            root.tag_name().namespace(),
            Some("http://www.w3.org/2000/svg"),
            "{}",
            o.file
        );
        let loaded = super::load(o.input);
        let p = match &loaded.input {
            orbitcnf::render::input::Input::Answer(a) => a.orbit.as_ref().map_or(0, Vec::len),
            orbitcnf::render::input::Input::Spectra(s) => s.iter().map(|s| s.rows.len()).sum(),
        };
        match o.picture.expect("an SVG has a picture") {
            Picture::Cycle => {
                assert_eq!(
                    count(&doc, "node"),
                    p,
                    "{}: one node per orbit point",
                    o.file
                );
                assert_eq!(
                    count(&doc, "edge"),
                    p * (p - 1) / 2,
                    "{}: one chord per pair",
                    o.file
                );
            }
            Picture::Distances => assert_eq!(count(&doc, "cell"), p * p, "{}: p² cells", o.file),
            Picture::Orbit => assert_eq!(
                count(&doc, "point"),
                p,
                "{}: one point per orbit point",
                o.file
            ),
            Picture::Spectrum => {
                assert_eq!(
                    count(&doc, "period"),
                    p,
                    "{}: one marker per period",
                    o.file
                );
                assert!(count(&doc, "bound") >= 1, "{}: a bound line", o.file);
            }
        }
        // Every label is text, and the picture has a title for screen readers.
        assert!(
            doc.descendants().any(|n| n.has_tag_name("title")),
            "{}: no title",
            o.file
        );
        assert!(
            doc.descendants().filter(|n| n.has_tag_name("text")).count() >= 3,
            "{}: too few labels",
            o.file
        );
        let pixmap = rasterise(&o);
        let share = ink(&pixmap);
        assert!(
            share > 0.003,
            "{}: blank after rendering ({:.4} of the pixels inked)",
            o.file,
            share
        );
    }
}

/// Runs headless Chromium on `page`: a screenshot into `png`, console
/// messages into the returned log.
fn chromium(dir: &TestDir, page: &Path, png: &Path) -> String {
    let profile = tempfile::tempdir().expect("a fresh profile folder");
    let run = Command::new("chromium")
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--enable-logging=stderr",
            "--v=0",
            "--window-size=1000,1400",
        ])
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .arg(format!("--screenshot={}", png.display()))
        .arg(format!("file://{}", page.display()))
        .current_dir(dir.root())
        .stdin(Stdio::null())
        .output()
        .expect("chromium runs");
    let log = String::from_utf8_lossy(&run.stderr).into_owned();
    assert!(
        run.status.success(),
        "chromium failed on {}:\n{log}",
        page.display()
    );
    log
}

fn console_lines(log: &str) -> Vec<&str> {
    log.lines().filter(|l| l.contains(":CONSOLE")).collect()
}

#[test]
fn chromium_opens_every_page_without_console_errors() {
    if !have_tool("chromium") {
        return;
    }
    let dir = TestDir::new();
    let root = std::fs::canonicalize(dir.root()).expect("absolute path");
    // The check must be able to fail: a page with a script error is caught.
    let bad = root.join("bad.html");
    std::fs::write(
        &bad,
        "<!DOCTYPE html><html><body><p>x</p><script>throw new Error('seen')</script></body></html>",
    )
    .expect("written");
    let log = chromium(&dir, &bad, &root.join("bad.png"));
    assert!(
        console_lines(&log).iter().any(|l| l.contains("seen")),
        "the console check does not see a script error:\n{log}"
    );
    let started = Instant::now();
    let pages: Vec<Output> = outputs(Format::Html)
        .into_iter()
        .filter(|o| {
            [
                "answer-n3-p8.json",
                "answer-pier-p3.json",
                "bundle-n2-p5",
                "store-n2",
            ]
            .contains(&o.input)
        })
        .collect();
    for o in &pages {
        for banned in [
            "<script", "<link", "src=", "@import", "url(http", "<iframe", "<img",
        ] {
            assert!(
                !o.text.contains(banned),
                "{}: {banned:?} on a self-contained page",
                o.file
            );
        }
        let page = root.join(&o.file);
        std::fs::write(&page, &o.text).expect("written");
        let png = root.join(o.file.replace(".html", ".png"));
        let log = chromium(&dir, &page, &png);
        let console = console_lines(&log);
        assert!(
            console.is_empty(),
            "{}: console messages:\n{}",
            o.file,
            console.join("\n")
        );
        let shot = Pixmap::load_png(&png).unwrap_or_else(|e| panic!("{}: {e}", png.display()));
        assert_eq!(
            (shot.width(), shot.height()),
            (1000, 1400),
            "{}: screenshot size",
            o.file
        );
        let share = ink(&shot);
        assert!(
            share > 0.01,
            "{}: the screenshot is blank ({share:.4} inked)",
            o.file
        );
    }
    note(format!(
        "chromium: {} pages in {:.1} s",
        pages.len(),
        started.elapsed().as_secs_f64()
    ));
}

/// Text from an input with every character TeX, XML and HTML treat
/// specially, and characters no font here has.
const HOSTILE: &str = "a_b^c {x} 100% & $5 #1 ~ \\ | < > \" ' → ‖x‖∞ ≤ · – — ℵ 𝔽 \u{7} </script><script>alert(1)</script> ]]> &amp;";

#[test]
fn hostile_text_is_escaped_in_every_format() {
    let dir = TestDir::new();
    let answer = serde_json::json!({
        "verdict": "infeasible",
        "question": {"dim": 2, "grid": "-1..1,-1..1", "period": 5},
        "statement": HOSTILE,
        "certificate": {"kind": "solver-claim", "solver": HOSTILE},
    });
    let file = dir.write("hostile.json", answer.to_string());
    let loaded = orbitcnf::render::input::load(&file).expect("loads");
    let html = orbitcnf::render::render(&loaded, Format::Html, None).expect("a page");
    assert!(!html.contains("<script>"), "unescaped HTML");
    assert!(
        html.contains("&lt;&#x2f;script&gt;") || html.contains("&lt;/script&gt;"),
        "{html}"
    );
    assert!(html.contains("UNCHECKED"), "the solver's claim is marked");
    let tex = orbitcnf::render::render(&loaded, Format::Latex, None).expect("a document");
    assert!(
        tex.contains("unchecked claim"),
        "the solver's claim is marked"
    );
    if have_tool("pdflatex") {
        let path = dir.write("hostile.tex", &tex);
        let run = pdflatex(&dir, &path);
        let log = String::from_utf8_lossy(&run.stdout);
        assert!(
            run.status.success(),
            "pdflatex rejected hostile text:\n{log}"
        );
    }
    // Pictures take no free text from an input (their labels are numbers and
    // the domain's name); an orbit file on a point set, with its map and no
    // verdict, renders as well-formed XML.
    let mut point =
        serde_json::json!({"points": [[0, 0], [0, 3], [2, 0], [2, 1], [2, 3]], "period": 3});
    point["orbit"] = serde_json::json!([[0, 3], [2, 1], [2, 3]]);
    point["map"] = serde_json::json!([
        [[0, 0], [0, 3]],
        [[0, 3], [2, 1]],
        [[2, 0], [2, 3]],
        [[2, 1], [2, 3]],
        [[2, 3], [0, 3]]
    ]);
    let file = dir.write("pier.json", point.to_string());
    let loaded = orbitcnf::render::input::load(&file).expect("loads");
    for pic in [Picture::Cycle, Picture::Distances, Picture::Orbit] {
        let svg = orbitcnf::render::render(&loaded, Format::Svg, Some(pic)).expect("renders");
        roxmltree::Document::parse(&svg).expect("well-formed");
    }
}

/// Runs pdflatex on `tex` (a file in `dir`) without shell escapes, stopping
/// at the first error.
fn pdflatex(dir: &TestDir, tex: &std::path::Path) -> std::process::Output {
    Command::new("pdflatex")
        .args([
            "-interaction=nonstopmode",
            "-halt-on-error",
            "-no-shell-escape",
        ])
        .arg(tex.file_name().expect("a file"))
        .current_dir(dir.root())
        .stdin(Stdio::null())
        .output()
        .expect("pdflatex runs")
}
