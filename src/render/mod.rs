//! Reports for papers and talks: LaTeX tables, SVG pictures, an HTML page.
//!
//! # Inputs
//!
//! [`input::load`] reads a `decide --json` answer (or a stored answer, an
//! orbit file, a sweep's JSON), a certificate
//! bundle folder, or a results store folder, through the report's own
//! tolerant model ([`input`]); nothing here deserialises the crate's report,
//! bundle or store types, so those can change without breaking reports.
//!
//! # What is checked
//!
//! Before anything is drawn, [`facts`] re-checks the answer's orbit with the
//! independent verifier, computes its profile and distance matrix from the
//! points (and refuses an answer whose stated profile differs), and builds
//! the explicit map with [`crate::verify::extend`], checked by
//! [`crate::verify::check_map`] (point sets: the answer's map, checked by
//! [`crate::verify::check_self_map`]). Bundle files are hashed and compared
//! with the manifest. A report shows certificates; it does not re-check
//! proofs, and it prints the commands that do.
//!
//! # Outputs
//!
//! - [`Format::Latex`] ([`latex`]): a standalone `article` with booktabs
//!   tables: orbit, profile, map (boxes of at most
//!   [`facts::MAP_TABLE_LIMIT`] points), spectrum; the question stated, the
//!   certificate and its SHA-256 in a footnote.
//! - [`Format::Svg`]: one [`Picture`]: the cycle graph ([`cycle`]), the
//!   distance matrix ([`heatmap`]), the orbit ([`orbit`]), the spectrum
//!   strip ([`strip`]).
//! - [`Format::Html`] ([`html`]): one self-contained page with the pictures
//!   inline, the tables, the certificate and how to re-check it.
//!
//! Every output is a deterministic function of the input: the same input
//! gives the same bytes.

pub mod cycle;
pub mod facts;
pub mod heatmap;
pub mod html;
pub mod input;
pub mod latex;
pub mod orbit;
pub mod strip;
pub mod svg;

use crate::error::{Error, Result};
use facts::AnswerFacts;
use input::{Input, Loaded};

/// Largest period whose cycle graph and distance matrix are drawn: both
/// draw every pair of orbit points, and beyond this the picture is neither
/// readable nor small.
pub const MAX_DRAWN_PERIOD: usize = 256;

/// An output format.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// A LaTeX document with booktabs tables.
    Latex,
    /// One SVG picture.
    Svg,
    /// One self-contained HTML page.
    Html,
}

impl std::str::FromStr for Format {
    type Err = Error;

    fn from_str(s: &str) -> Result<Format> {
        match s {
            "latex" | "tex" => Ok(Format::Latex),
            "svg" => Ok(Format::Svg),
            "html" => Ok(Format::Html),
            other => Err(Error::Render {
                what: "a report".into(),
                reason: format!("unknown format {other:?}; choose latex, svg or html"),
            }),
        }
    }
}

/// A picture kind.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Picture {
    /// The orbit as a cycle graph, chords styled by distance (answers).
    Cycle,
    /// The distance matrix as a heat map (answers).
    Distances,
    /// The orbit in its domain: the plane for n ≤ 2, parallel coordinates
    /// above (answers).
    Orbit,
    /// The spectrum strip (stores and sweeps).
    Spectrum,
}

impl Picture {
    /// Every picture kind.
    pub const ALL: [Picture; 4] = [
        Picture::Cycle,
        Picture::Distances,
        Picture::Orbit,
        Picture::Spectrum,
    ];

    /// Its name: `cycle`, `distances`, `orbit`, `spectrum`.
    pub fn name(self) -> &'static str {
        match self {
            Picture::Cycle => "cycle",
            Picture::Distances => "distances",
            Picture::Orbit => "orbit",
            Picture::Spectrum => "spectrum",
        }
    }

    /// A caption for people.
    pub fn caption(self) -> &'static str {
        match self {
            Picture::Cycle => {
                "The orbit as a cycle graph: chord {x_i, x_(i+k)} drawn by the distance g(k); \
                 solid chords are close offsets, dashed ones far offsets (at the orbit's diameter)."
            }
            Picture::Distances => {
                "The distance matrix: cell (i, j) shaded and labelled by the distance of x_i and x_j; \
                 every diagonal j − i ≡ k (mod p) is constant."
            }
            Picture::Orbit => "The orbit in its domain, with the map's action x_i ↦ x_(i+1).",
            Picture::Spectrum => {
                "Which periods occur: the shape of each marker gives the verdict; the vertical lines \
                 mark 2^n' and the Lemmens–Scheutzow bound."
            }
        }
    }
}

impl std::str::FromStr for Picture {
    type Err = Error;

    fn from_str(s: &str) -> Result<Picture> {
        Picture::ALL
            .into_iter()
            .find(|p| p.name() == s)
            .ok_or_else(|| Error::Render {
                what: "a picture".into(),
                reason: format!(
                    "unknown picture {s:?}; choose cycle, distances, orbit or spectrum"
                ),
            })
    }
}

/// The picture `pic` of one answer.
///
/// # Errors
/// [`Error::Render`] when the answer has no orbit, or `pic` is the spectrum.
pub fn answer_picture(f: &AnswerFacts, pic: Picture) -> Result<String> {
    let what = format!("the {} picture", pic.name());
    let o = f.orbit.as_ref().ok_or_else(|| Error::Render {
        what: what.clone(),
        reason: format!(
            "the answer is {} and has no orbit to draw",
            f.answer.verdict.word()
        ),
    })?;
    let domain = f.answer.question.domain_name();
    let p = o.period();
    if p > MAX_DRAWN_PERIOD && matches!(pic, Picture::Cycle | Picture::Distances) {
        return Err(Error::Render {
            what,
            reason: format!(
                "a {p}-cycle has {} pairs; this picture draws every pair, up to p = {MAX_DRAWN_PERIOD}",
                p * (p - 1) / 2
            ),
        });
    }
    match pic {
        Picture::Cycle => Ok(cycle::cycle(o, &domain)),
        Picture::Distances => Ok(heatmap::heatmap(o, &domain)),
        Picture::Orbit => Ok(orbit::orbit(
            o,
            &domain,
            f.answer.question.points.as_deref(),
        )),
        Picture::Spectrum => Err(Error::Render {
            what,
            reason: "a spectrum is drawn from a results store or a sweep, not from one answer"
                .into(),
        }),
    }
}

/// Renders `loaded` as `format`; `picture` picks the SVG picture (default:
/// the cycle for an answer, the strip for spectra).
///
/// # Errors
/// [`Error::Check`] when the verifier rejects the answer's orbit or map;
/// [`Error::Render`] when the picture does not fit the input.
pub fn render(loaded: &Loaded, format: Format, picture: Option<Picture>) -> Result<String> {
    match &loaded.input {
        Input::Answer(a) => {
            let f = facts::answer_facts(a, &loaded.origin)?;
            match format {
                Format::Latex => Ok(latex::answer(loaded, &f)),
                Format::Svg => answer_picture(&f, picture.unwrap_or(Picture::Cycle)),
                Format::Html => html::page(loaded, Some(&f), &[]),
            }
        }
        Input::Spectra(spectra) => {
            // Every stored orbit is re-checked, as for a single answer.
            for s in spectra {
                for r in &s.answer_rows() {
                    facts::orbit_facts(r)?;
                }
            }
            match format {
                Format::Latex => {
                    let recheck: Vec<_> = spectra.iter().map(|s| facts::recheck_spectrum(s, &loaded.origin)).collect();
                    Ok(latex::spectra(loaded, spectra, &recheck))
                }
                Format::Svg => match picture.unwrap_or(Picture::Spectrum) {
                    Picture::Spectrum => Ok(strip::strip(spectra)),
                    other => Err(Error::Render {
                        what: format!("the {} picture", other.name()),
                        reason: "the input is a spectrum; draw one period's answer from its own JSON or bundle".into(),
                    }),
                },
                Format::Html => html::page(loaded, None, spectra),
            }
        }
    }
}

impl input::Spectrum {
    /// The answers of the rows, in period order.
    pub fn answer_rows(&self) -> Vec<&input::Answer> {
        self.rows.iter().map(|r| &r.answer).collect()
    }
}
