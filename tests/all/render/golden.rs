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

use orbitcnf::render::{self, Format};

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
