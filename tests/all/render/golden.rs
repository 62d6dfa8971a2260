//! Golden files: the LaTeX and SVG outputs of the inputs in `tests/render/`
//! must equal `tests/golden/render/*`, byte for byte.
//!
//! After a deliberate change of an output, regenerate them with
//!
//! ```console
//! $ ORBITCNF_BLESS=1 cargo test --release --test all render::
//! ```
//!
//! and review the diff (`git diff tests/golden/`) before committing.

use std::io::Write as _;
use std::path::Path;

use orbitcnf::render::{self, Format, Picture};

use super::{ANSWERS, SPECTRA, load, outputs};

const GOLDEN: &str = "tests/golden/render";

fn bless() -> bool {
    std::env::var_os("ORBITCNF_BLESS").is_some_and(|v| v != "0")
}

fn compare(format: Format) {
    let dir = Path::new(GOLDEN);
    let mut differ = Vec::new();
    for o in outputs(format) {
        let file = dir.join(&o.file);
        if bless() {
            std::fs::create_dir_all(dir).expect("golden folder");
            std::fs::write(&file, &o.text).expect("golden file written");
            continue;
        }
        match std::fs::read_to_string(&file) {
            Ok(want) if want == o.text => {}
            Ok(want) => {
                let line = want
                    .lines()
                    .zip(o.text.lines())
                    .position(|(a, b)| a != b)
                    .unwrap_or_else(|| want.lines().count().min(o.text.lines().count()));
                differ.push(format!(
                    "{}: differs from line {}:\n  golden: {:?}\n  now:    {:?}",
                    file.display(),
                    line + 1,
                    want.lines().nth(line).unwrap_or("<end>"),
                    o.text.lines().nth(line).unwrap_or("<end>")
                ));
            }
            Err(e) => differ.push(format!("{}: {e}", file.display())),
        }
    }
    if bless() {
        let _ = writeln!(
            std::io::stderr(),
            "note: golden files of {format:?} written to {GOLDEN}"
        );
    }
    assert!(
        differ.is_empty(),
        "{} golden file(s) differ; after a deliberate change run \
         `ORBITCNF_BLESS=1 cargo test --release --test all render::` and review the diff:\n{}",
        differ.len(),
        differ.join("\n")
    );
}

#[test]
fn latex_outputs_equal_their_golden_files() {
    compare(Format::Latex);
}

#[test]
fn svg_outputs_equal_their_golden_files() {
    compare(Format::Svg);
}

#[test]
fn the_same_input_gives_the_same_bytes() {
    for &name in ANSWERS.iter().chain(SPECTRA) {
        for format in [Format::Latex, Format::Svg, Format::Html] {
            let (a, b) = (load(name), load(name));
            let once = render::render(&a, format, None);
            let twice = render::render(&b, format, None);
            match (once, twice) {
                (Ok(x), Ok(y)) => assert!(x == y, "{name} as {format:?}: two renderings differ"),
                (Err(x), Err(y)) => assert_eq!(x.to_string(), y.to_string()),
                (x, y) => panic!("{name} as {format:?}: {x:?} then {y:?}"),
            }
        }
    }
}

/// The README's pictures (`docs/report/`) are the outputs of the README's
/// commands; those inputs are `answer-n3-p8.json` and, for the strip, the
/// same periods as a sweep (`sweep-n3.json`), so the pictures are regenerated
/// and checked with the golden files.
#[test]
fn the_readme_pictures_are_current() {
    let dir = Path::new("docs/report");
    let mut stale = Vec::new();
    for (input, picture) in [
        ("answer-n3-p8.json", Picture::Cycle),
        ("answer-n3-p8.json", Picture::Distances),
        ("answer-n3-p8.json", Picture::Orbit),
        ("sweep-n3.json", Picture::Spectrum),
    ] {
        let svg = render::render(&load(input), Format::Svg, Some(picture)).expect("renders");
        let file = dir.join(format!("{}.svg", picture.name()));
        if bless() {
            std::fs::write(&file, &svg).expect("README picture written");
        } else if std::fs::read_to_string(&file).ok().as_deref() != Some(svg.as_str()) {
            stale.push(file.display().to_string());
        }
    }
    assert!(
        stale.is_empty(),
        "README pictures differ from the outputs of their inputs: {stale:?}; run \
         `ORBITCNF_BLESS=1 cargo test --release --test all render::`"
    );
}
