//! Reports (`orbitcnf::render`): LaTeX, SVG and HTML from real answers.
//!
//! The inputs in `tests/render/` were written by the binary itself
//! (`decide --json`, `decide --bundle`, `spectrum --store`, `spectrum
//! --json`); `tests/render/README.md` lists the commands.
//!
//! - `golden`: every LaTeX and SVG output against `tests/golden/render/`, the
//!   README's pictures against `docs/report/`
//!   (regenerate with `ORBITCNF_BLESS=1 cargo test --release --test all render::`),
//!   and the same input rendered twice gives the same bytes.
//! - `numbers`: the numbers in every output equal those of the JSON it came
//!   from, read here with serde_json alone.
//! - `tools`: pdflatex compiles every LaTeX output; usvg parses every SVG and
//!   resvg renders it (not blank, the expected elements); headless Chromium
//!   opens every page (a screenshot that is not blank, no console error).
//! - `cli`: `orbitcnf report` and `decide --map` through the binary.

mod cli;
mod golden;
mod numbers;
mod tools;

use std::path::{Path, PathBuf};

use orbitcnf::render::input::{self, Loaded};
use orbitcnf::render::{self, Format, Picture};

/// The folder of the inputs, relative to the package root (the tests' working
/// directory), so that paths printed in outputs are the same on every machine.
pub const INPUTS: &str = "tests/render";

/// The answers (one JSON file or one bundle each).
pub const ANSWERS: &[&str] = &[
    "answer-n3-p8.json",
    "answer-n2-p4.json",
    "answer-rect-p4.json",
    "answer-n2-p5.json",
    "answer-n2-p5-claim.json",
    "answer-unknown.json",
    "answer-pier-p3.json",
    "answer-topical-p6.json",
    "bundle-n2-p4",
    "bundle-n2-p5",
];

/// The spectra (a store folder and a sweep's JSON).
pub const SPECTRA: &[&str] = &["store-n2", "sweep-n3.json"];

/// The path of input `name`.
pub fn path(name: &str) -> PathBuf {
    Path::new(INPUTS).join(name)
}

/// Input `name`, loaded.
pub fn load(name: &str) -> Loaded {
    input::load(&path(name)).unwrap_or_else(|e| panic!("{name}: {e}"))
}

/// Whether input `name` has an orbit to draw.
pub fn has_orbit(name: &str) -> bool {
    match &load(name).input {
        input::Input::Answer(a) => a.orbit.is_some(),
        input::Input::Spectra(_) => false,
    }
}

/// One output: its file name (input name, picture, extension) and its text.
pub struct Output {
    /// Where it goes under `tests/golden/render/`.
    pub file: String,
    /// The input's name.
    pub input: &'static str,
    /// The picture, for SVG outputs.
    pub picture: Option<Picture>,
    /// The text.
    pub text: String,
}

fn stem(name: &str) -> &str {
    name.strip_suffix(".json").unwrap_or(name)
}

/// Every output of `format` for every input (SVG: every picture that fits).
pub fn outputs(format: Format) -> Vec<Output> {
    let mut out = Vec::new();
    for &name in ANSWERS.iter().chain(SPECTRA) {
        let loaded = load(name);
        let spectrum = SPECTRA.contains(&name);
        let pictures: Vec<Option<Picture>> = match format {
            Format::Svg if spectrum => vec![Some(Picture::Spectrum)],
            Format::Svg if has_orbit(name) => {
                vec![
                    Some(Picture::Cycle),
                    Some(Picture::Distances),
                    Some(Picture::Orbit),
                ]
            }
            Format::Svg => vec![],
            _ => vec![None],
        };
        for picture in pictures {
            let text = render::render(&loaded, format, picture)
                .unwrap_or_else(|e| panic!("{name} as {format:?} {picture:?}: {e}"));
            let ext = match format {
                Format::Latex => "tex".to_string(),
                Format::Svg => format!("{}.svg", picture.map_or("", |p| p.name())),
                Format::Html => "html".to_string(),
            };
            out.push(Output {
                file: format!("{}.{ext}", stem(name)),
                input: name,
                picture,
                text,
            });
        }
    }
    out
}
