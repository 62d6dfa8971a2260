//! Certificate bundles of real-space answers: one folder that a referee can
//! re-check with no search and no trust in it.
//!
//! A bundle holds `manifest.json` (the question `{"space": "real", "dim":
//! n, "period": p}`, the verdict, the chain of trust in words, and the
//! SHA-256 of every other file) and either the certificate of
//! [`super::certificate`] (`skeleton.cnf`, `lemmas.txt`, `proof.lrat`) or
//! `orbit.json`: an integer orbit in the orbit-file format, its grid the
//! orbit's bounding box `{0..M}^n`, so that `check` (and `check --map`) reads it
//! like any grid orbit. [`check_bundle`] checks every digest, then the
//! certificate with [`super::certificate::check_dir`] (skeleton rebuilt and
//! compared byte for byte, every Farkas lemma, the LRAT proof) or the orbit
//! with [`crate::verify::check_orbit`].

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::certificate::{self, CertificateCheck};
use super::{RealAnswer, RealReport};
use crate::artifact::{FileEntry, write_atomically};
use crate::dimacs::VERSION;
use crate::error::{Error, Result};
use crate::grid::Grid;
use crate::orbit_file;
use crate::question::MapClass;
use crate::verify::{OrbitCheck, check_orbit};

/// The manifest's file name (the same as a grid bundle's; the question's
/// `"space": "real"` tells them apart).
pub const MANIFEST: &str = "manifest.json";
/// The orbit's file name (feasible answers).
pub const ORBIT: &str = "orbit.json";

const TRUST: &str = "Chain of trust (encodings/real-space.md §7): (1) skeleton.cnf is the propositional \
skeleton of the question, each family sound for every isometric cycle in R^n and the normalisation \
keeping some image of every cycle (encodings/real-space.md §3-§4); check-bundle rebuilds it and compares \
it byte for byte; (2) every clause of lemmas.txt is implied by linear arithmetic over the rationals, \
shown by its Farkas multipliers, checked with exact integers by a checker that shares nothing with the \
search; (3) proof.lrat is an LRAT refutation of the skeleton plus those lemma clauses, checked by \
orbitcnf's own LRAT checker. For a feasible answer, orbit.json is an integer isometric cycle checked \
directly, with no trust in any of the above.";

/// The question of a real-space bundle.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RealQuestion {
    /// Always `real`.
    pub space: String,
    /// The dimension n.
    pub dim: usize,
    /// The period p.
    pub period: usize,
}

/// The manifest of a real-space bundle.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RealManifest {
    /// orbitcnf version that wrote the bundle.
    pub orbitcnf_version: String,
    /// The question.
    pub question: RealQuestion,
    /// `feasible` or `infeasible`.
    pub verdict: String,
    /// The files and their digests.
    pub files: Vec<FileEntry>,
    /// What each file establishes.
    pub trust: String,
}

/// What [`check_bundle`] established.
#[derive(Clone, Debug, Serialize)]
pub struct RealBundleCheck {
    /// The bundle's folder.
    pub dir: PathBuf,
    /// The manifest.
    pub manifest: RealManifest,
    /// For infeasible bundles: the accepted certificate.
    pub certificate: Option<CertificateCheck>,
    /// For feasible bundles: the checked orbit.
    pub orbit: Option<OrbitCheck>,
}

impl RealBundleCheck {
    /// The findings for people, one line per fact.
    pub fn to_text(&self) -> String {
        let q = &self.manifest.question;
        let mut s = format!(
            "bundle       {}\nquestion     real space R^{} (n = {}), period {}\nfiles        all hashes match\n",
            self.dir.display(),
            q.dim,
            q.dim,
            q.period
        );
        if let Some(c) = &self.certificate {
            s.push_str(&format!(
                "skeleton     identical to a fresh build ({} clauses)\n\
                 lemmas       {} Farkas certificates accepted ({} rows, exact arithmetic){}\n\
                 verdict      INFEASIBLE, certified: LRAT proof of {} steps accepted (empty clause at id {})\n",
                c.skeleton_clauses,
                c.farkas.lemmas - c.farkas.equilateral - c.farkas.top,
                c.farkas.rows,
                special_words(&c.farkas),
                c.lrat.steps,
                c.lrat.empty_clause_id
            ));
        }
        if let Some(o) = &self.orbit {
            s.push_str(&format!("verdict      FEASIBLE, certified: {o}\n"));
        }
        s
    }
}

/// `", and N equilateral lemma(s) … and M top-pattern lemma(s) …"` for the
/// lemmas checked by their own rules instead of Farkas multipliers; empty
/// when there are none.
pub fn special_words(f: &crate::real::farkas_check::FarkasSummary) -> String {
    let mut s = String::new();
    match f.equilateral {
        0 => {}
        1 => s.push_str(", and 1 equilateral lemma (its index set checked)"),
        k => s.push_str(&format!(
            ", and {k} equilateral lemmas (their index sets checked)"
        )),
    }
    match f.top {
        0 => {}
        1 => s.push_str(", and 1 top-pattern lemma (its pairs checked)"),
        k => s.push_str(&format!(
            ", and {k} top-pattern lemmas (their pairs checked)"
        )),
    }
    s
}

/// Whether `dir` holds a real-space bundle: a manifest whose question is in
/// real space. Anything else (no manifest, a grid bundle, unreadable JSON)
/// is not one.
pub fn is_real_bundle(dir: &Path) -> bool {
    std::fs::read(dir.join(MANIFEST))
        .ok()
        .and_then(|b| serde_json::from_slice::<serde_json::Value>(&b).ok())
        .is_some_and(|v| v["question"]["space"] == "real")
}

/// Writes the bundle of `report` into `dir` (built beside it, then put in
/// its place). `certificate` is the folder [`super::decide`] kept the
/// certificate in, for an infeasible answer. Returns `None`, writing
/// nothing, for an unknown or unchecked answer.
///
/// # Errors
/// [`Error::Io`]; [`Error::Options`] for a `dir` that is not a bundle;
/// [`Error::Question`] for an infeasible answer without its certificate.
pub fn write_bundle(
    dir: &Path,
    report: &RealReport,
    certificate: Option<&Path>,
) -> Result<Option<RealManifest>> {
    let verdict = match &report.answer {
        RealAnswer::Feasible { .. } => "feasible",
        RealAnswer::Infeasible { check: Some(_), .. } => "infeasible",
        _ => return Ok(None),
    };
    // The same rule as for grid bundles ([`crate::bundle::check_target`]):
    // only an empty folder or one holding a manifest may be replaced.
    let is_bundle = |d: &Path| d.join(MANIFEST).is_file();
    let m = crate::artifact::replace_dir(dir, is_bundle, |tmp| {
        let mut files = Vec::new();
        match &report.answer {
            RealAnswer::Feasible { orbit, .. } => {
                let hi = orbit.iter().flatten().copied().max().unwrap_or(0);
                let grid = Grid::new(vec![(0, hi); report.n])?;
                let text = orbit_file::to_json(&grid, MapClass::Nonexpansive, orbit) + "\n";
                write_atomically(&tmp.join(ORBIT), text.as_bytes())?;
                files.push(FileEntry::of(ORBIT, text.as_bytes()));
            }
            _ => {
                let from = certificate.ok_or_else(|| {
                    Error::Question("an infeasible bundle needs its certificate folder".into())
                })?;
                for name in [
                    certificate::SKELETON,
                    certificate::LEMMAS,
                    certificate::PROOF,
                ] {
                    let (a, b) = (from.join(name), tmp.join(name));
                    // A hard link costs nothing for a proof of gigabytes.
                    if std::fs::hard_link(&a, &b).is_err() {
                        std::fs::copy(&a, &b).map_err(|e| Error::io(&a, e))?;
                    }
                    files.push(FileEntry::of_file(tmp, name)?);
                }
            }
        }
        let manifest = RealManifest {
            orbitcnf_version: VERSION.into(),
            question: RealQuestion {
                space: "real".into(),
                dim: report.n,
                period: report.p,
            },
            verdict: verdict.into(),
            files,
            trust: TRUST.into(),
        };
        let text = serde_json::to_string_pretty(&manifest).expect("manifest serialises") + "\n";
        write_atomically(&tmp.join(MANIFEST), text.as_bytes())?;
        Ok(manifest)
    })?;
    Ok(Some(m))
}

/// Re-checks a real-space bundle end to end.
///
/// # Errors
/// [`Error::Io`] for a missing file; [`Error::Parse`] for a malformed
/// manifest, a digest that does not match or an orbit of another
/// question; the errors of [`certificate::check_dir`] for a
/// rejected certificate; [`Error::Check`] for a bad orbit.
pub fn check_bundle(dir: &Path) -> Result<RealBundleCheck> {
    let mpath = dir.join(MANIFEST);
    let mname = mpath.display().to_string();
    let bytes = std::fs::read(&mpath).map_err(|e| Error::io(&mpath, e))?;
    let manifest: RealManifest = serde_json::from_slice(&bytes).map_err(|e| {
        Error::parse(
            &mname,
            e.line(),
            format!("not a real-space bundle manifest: {e}"),
        )
    })?;
    let q = &manifest.question;
    if q.space != "real" {
        return Err(Error::file(
            &mname,
            format!("the question's space is {:?}, not \"real\"", q.space),
        ));
    }
    for f in &manifest.files {
        f.verify(dir, MANIFEST)?;
    }
    let required: &[&str] = match manifest.verdict.as_str() {
        "infeasible" => &[
            certificate::SKELETON,
            certificate::LEMMAS,
            certificate::PROOF,
        ],
        "feasible" => &[ORBIT],
        v => {
            return Err(Error::file(
                &mname,
                format!("verdict {v:?} is neither \"feasible\" nor \"infeasible\""),
            ));
        }
    };
    let listed: Vec<&str> = manifest.files.iter().map(|f| f.name.as_str()).collect();
    if let Some(name) = required.iter().find(|r| !listed.contains(r)) {
        return Err(Error::file(
            &mname,
            format!(
                "a real-space {} bundle needs {name}, and the manifest lists none",
                manifest.verdict
            ),
        ));
    }
    let mut out = RealBundleCheck {
        dir: dir.to_path_buf(),
        manifest: manifest.clone(),
        certificate: None,
        orbit: None,
    };
    if required == [ORBIT] {
        let opath = dir.join(ORBIT);
        let shown = opath.display().to_string();
        let text = std::fs::read_to_string(&opath).map_err(|e| Error::io(&opath, e))?;
        let f = orbit_file::parse(&text, &shown)?;
        if f.grid.dim() != q.dim || f.orbit.len() != q.period {
            return Err(Error::file(
                &shown,
                format!(
                    "holds {} points in dimension {}, but the question is period {} in R^{}",
                    f.orbit.len(),
                    f.grid.dim(),
                    q.period,
                    q.dim
                ),
            ));
        }
        out.orbit = Some(check_orbit(f.grid.ranges(), &f.orbit)?);
    } else {
        out.certificate = Some(certificate::check_dir(q.dim, q.period, dir)?);
    }
    Ok(out)
}
