//! One self-contained HTML page per answer, bundle or store.
//!
//! The page is filled from the template `page.html` (compiled into the
//! binary) by [`minijinja`], whose HTML auto-escaping covers every string
//! taken from an input. The pictures are the SVG documents of
//! [`super::Picture`], inlined; the page loads nothing (no scripts, fonts,
//! images or styles from elsewhere), so it opens offline and prints as it
//! looks.

use minijinja::value::{Serde, Value};
use minijinja::{Environment, context};
use serde::Serialize;

use super::facts::{self, AnswerFacts, Metric};
use super::input::{Loaded, Origin, Spectrum};
use super::{Picture, answer_picture, svg::point_words};
use crate::error::{Error, Result};
use crate::report::Verdict;

const TEMPLATE: &str = include_str!("page.html");

#[derive(Serialize)]
struct PictureView {
    kind: &'static str,
    svg: String,
    caption: String,
}

#[derive(Serialize)]
struct OrbitView {
    check: String,
    points: Vec<String>,
    quantity: &'static str,
    kinds: bool,
    profile: Vec<(usize, i64, &'static str)>,
    map: Vec<(String, String, String)>,
    map_formula: String,
    map_check: String,
}

#[derive(Serialize)]
struct AnswerView {
    statement: String,
    verdict: &'static str,
    verdict_words: String,
    certificate: String,
    unchecked: bool,
    digests: Vec<(String, String)>,
    orbit: Option<OrbitView>,
    pictures: Vec<PictureView>,
    reason: Option<String>,
    recheck: Vec<(String, String)>,
}

#[derive(Serialize)]
struct RowView {
    period: usize,
    verdict: &'static str,
    verdict_words: String,
    how: String,
    certificate: String,
    sha256: Option<String>,
    published: String,
}

#[derive(Serialize)]
struct SpectrumView {
    domain: String,
    statement: String,
    summary: String,
    rows: Vec<RowView>,
    recheck: Vec<(String, String)>,
}

fn verdict_words(v: Verdict, unchecked: bool) -> String {
    match (v, unchecked) {
        (Verdict::Infeasible, true) => "infeasible (an unchecked claim)".into(),
        (v, _) => v.word().into(),
    }
}

/// Drops the XML declaration: inline SVG in HTML has none.
fn inline(svg: String) -> String {
    match svg.strip_prefix("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n") {
        Some(rest) => rest.to_string(),
        None => svg,
    }
}

fn answer_view(f: &AnswerFacts) -> AnswerView {
    let (orbit, pictures) = match &f.orbit {
        Some(o) => {
            let sup = o.metric == Metric::Sup;
            let top = o.diameter();
            let profile = match (&o.metric, &o.topical_profile) {
                (Metric::Topical, Some(t)) => {
                    t.iter().enumerate().map(|(k, &d)| (k + 1, d, "")).collect()
                }
                _ => o
                    .profile
                    .iter()
                    .enumerate()
                    .map(|(k, &d)| (k + 1, d, if d == top { "far" } else { "close" }))
                    .collect(),
            };
            let (map, map_formula, map_check) = match &o.map {
                Some(m) => (
                    m.entries
                        .iter()
                        .map(|(z, fz)| {
                            let mark = o.index_of(z).map(|i| format!("x_{i}")).unwrap_or_default();
                            (point_words(z), point_words(fz), mark)
                        })
                        .collect(),
                    m.formula.clone(),
                    m.check.clone(),
                ),
                None => (Vec::new(), String::new(), String::new()),
            };
            let view = OrbitView {
                check: format!("Orbit check {}.", o.check),
                points: o.orbit.iter().map(|z| point_words(z)).collect(),
                quantity: if sup {
                    "g(k) = ‖x_0 − x_k‖∞"
                } else {
                    "t(x_0, x_k)"
                },
                kinds: sup,
                profile,
                map,
                map_formula,
                map_check,
            };
            let pictures = [Picture::Cycle, Picture::Distances, Picture::Orbit]
                .into_iter()
                .filter_map(|pic| {
                    answer_picture(f, pic).ok().map(|svg| PictureView {
                        kind: pic.name(),
                        svg: inline(svg),
                        caption: pic.caption().into(),
                    })
                })
                .collect();
            (Some(view), pictures)
        }
        None => (None, Vec::new()),
    };
    AnswerView {
        statement: f.statement.clone(),
        verdict: f.answer.verdict.word(),
        verdict_words: verdict_words(f.answer.verdict, f.unchecked),
        certificate: f.certificate.clone(),
        unchecked: f.unchecked,
        digests: f.digests.clone(),
        orbit,
        pictures,
        reason: f.answer.reason.clone(),
        recheck: f.recheck.clone(),
    }
}

fn spectrum_view(s: &Spectrum, origin: &Origin) -> SpectrumView {
    let count = |v: Verdict| s.rows.iter().filter(|r| r.answer.verdict == v).count();
    let statement = s.statement.clone().unwrap_or_else(|| {
        let mut q = s.question.clone();
        q.period = 1;
        facts::statement(&q, None).replace("minimal period 1", "minimal period p")
    });
    SpectrumView {
        domain: s.question.domain_name(),
        statement,
        summary: format!(
            "{} periods: {} feasible, {} infeasible, {} unknown.",
            s.rows.len(),
            count(Verdict::Feasible),
            count(Verdict::Infeasible),
            count(Verdict::Unknown)
        ),
        rows: s
            .rows
            .iter()
            .map(|r| {
                let (certificate, unchecked) = facts::certificate_words(&r.answer);
                RowView {
                    period: r.period,
                    verdict: r.answer.verdict.word(),
                    verdict_words: verdict_words(r.answer.verdict, unchecked),
                    how: r.answer.how.clone().unwrap_or_default(),
                    certificate,
                    sha256: r.answer.evidence.sha256.clone(),
                    published: format!(
                        "{}: {}",
                        r.published.status,
                        r.published.reasons.join("; ")
                    ),
                }
            })
            .collect(),
        recheck: facts::recheck_spectrum(s, origin),
    }
}

/// The page of an answer (`answer`) or of spectra (`spectra`).
///
/// # Errors
/// [`Error::Render`] if the template fails (a bug: the template is fixed).
pub fn page(loaded: &Loaded, answer: Option<&AnswerFacts>, spectra: &[Spectrum]) -> Result<String> {
    let mut env = Environment::new();
    // Exponents as superscripts in prose (`{-1,0,1}^3` as `{-1,0,1}³`); the
    // filter runs before auto-escaping, which still escapes its result.
    env.add_filter("pretty", |s: String| super::svg::pretty(&s));
    env.add_template("page.html", TEMPLATE)
        .map_err(|e| Error::Render {
            what: "the HTML page".into(),
            reason: e.to_string(),
        })?;
    let (source_kind, title) = match (&loaded.origin, answer) {
        (Origin::Bundle(_), Some(f)) => (
            "a certificate bundle",
            format!(
                "orbitcnf: {} for p = {}",
                f.answer.verdict.word(),
                f.answer.question.period
            ),
        ),
        (_, Some(f)) => (
            "an answer",
            format!(
                "orbitcnf: {} for p = {}",
                f.answer.verdict.word(),
                f.answer.question.period
            ),
        ),
        (Origin::Store(_), None) => ("a results store", "orbitcnf: periods".to_string()),
        (_, None) => ("a sweep", "orbitcnf: periods".to_string()),
    };
    let title = match (answer, spectra) {
        (Some(f), _) => format!("{title} on {}", f.answer.question.domain_name()),
        (None, s) => {
            let names: Vec<String> = s.iter().map(|s| s.question.domain_name()).collect();
            format!("{title} on {}", names.join("; "))
        }
    };
    let answers: Vec<AnswerView> = answer.map(answer_view).into_iter().collect();
    let spectra_views: Vec<SpectrumView> = spectra
        .iter()
        .map(|s| spectrum_view(s, &loaded.origin))
        .collect();
    let strip = if spectra.is_empty() {
        String::new()
    } else {
        inline(super::strip::strip(spectra))
    };
    let tmpl = env.get_template("page.html").map_err(|e| Error::Render {
        what: "the HTML page".into(),
        reason: e.to_string(),
    })?;
    tmpl.render(context! {
        version => crate::dimacs::VERSION,
        title => title,
        source => loaded.origin.path().display().to_string(),
        source_kind => source_kind,
        answers => Value::from(Serde(&answers)),
        spectra => Value::from(Serde(&spectra_views)),
        strip => strip,
        strip_caption => Picture::Spectrum.caption(),
    })
    .map(|mut s| {
        if !s.ends_with('\n') {
            s.push('\n');
        }
        s
    })
    .map_err(|e| Error::Render {
        what: "the HTML page".into(),
        reason: e.to_string(),
    })
}
