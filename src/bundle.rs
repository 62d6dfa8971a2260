//! Certificate bundles: everything needed to re-check an answer, in one folder.
//!
//! A bundle holds `manifest.json` (question, resolved encoding options, tool
//! version, verdict, the chain of trust in words, and the SHA-256 of every
//! other file), `formula.cnf` (the exact CNF that was solved, with its
//! orbitcnf header), and either `proof.lrat` (infeasible) or `orbit.json`
//! (feasible; in the full-map formulation `map.json`, the orbit with the
//! whole map f: D → D, since there the orbit alone proves nothing). [`check_bundle`] re-encodes the question, compares the CNF
//! byte for byte, checks the hashes, and checks the proof with orbitcnf's
//! LRAT checker or the orbit with the independent verifier.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::artifact::{FileEntry, write_atomically};
use crate::dimacs::{VERSION, render_cnf};
use crate::encode::{EncodeOptions, encode};
use crate::error::{Error, Result};
use crate::evidence;
use crate::orbit_file;
use crate::proof::LratSummary;
use crate::question::{Question, QuestionRecord};
use crate::report::Verdict;
use crate::verify::{OrbitCheck, SelfMapCheck};

/// The manifest's file name.
pub const MANIFEST: &str = "manifest.json";
/// The CNF's file name.
pub const FORMULA: &str = "formula.cnf";
/// The LRAT proof's file name (infeasible answers).
pub const PROOF: &str = "proof.lrat";
/// The orbit's file name (feasible answers).
pub const ORBIT: &str = "orbit.json";
/// The orbit and map file of feasible full-map answers: `{"orbit": […], "map": [[z, f(z)], …]}`.
pub const MAP: &str = "map.json";

/// The contents of [`MAP`].
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MapFile {
    /// `x_0..x_{p−1}`.
    pub orbit: Vec<Vec<i64>>,
    /// `(z, f(z))` for every z ∈ D.
    pub map: Vec<(Vec<i64>, Vec<i64>)>,
}

const TRUST: &str = "Chain of trust (encodings/trust.md): (1) formula.cnf encodes the question: \
the isometric-cycle reduction and its clauses are argued in encodings/isometric-cycle.md and tested \
against brute force and external solvers; (2) its symmetry-breaking and redundant clauses keep every \
verdict: encodings/symmetry.md and encodings/redundant.md, tested against brute force; (3) for an \
infeasible answer, proof.lrat is an LRAT refutation of formula.cnf exactly, checked by orbitcnf's own \
checker (and checkable by any LRAT checker); for a feasible answer, orbit.json is checked directly, \
with no trust in the CNF at all.";

const TRUST_FULL_MAP: &str = "Chain of trust (encodings/trust.md, encodings/full-map.md): (1) formula.cnf \
encodes the question on the point set D of the manifest: the full-map clauses (every point's image, \
nonexpansiveness on every pair, the orbit moved along by f) are argued in encodings/full-map.md and \
tested against brute force over all maps; (2) its symmetry-breaking clauses keep every verdict: \
encodings/full-map.md §5, tested the same way; (3) for an infeasible answer, proof.lrat is an LRAT \
refutation of formula.cnf exactly, checked by orbitcnf's own checker; for a feasible answer, map.json \
(the orbit and the whole map D → D) is checked directly, with no trust in the CNF at all.";

/// The manifest of a bundle.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Manifest {
    /// orbitcnf version that wrote the bundle.
    pub orbitcnf_version: String,
    /// The question.
    pub question: QuestionRecord,
    /// The encoding options as resolved for the question.
    pub options: EncodeOptions,
    /// `feasible` or `infeasible`.
    pub verdict: String,
    /// The files and their digests.
    pub files: Vec<FileEntry>,
    /// What each file establishes.
    pub trust: String,
}

fn read(path: &Path) -> Result<Vec<u8>> {
    std::fs::read(path).map_err(|e| Error::io(path, e))
}

/// Whether `dir` holds a bundle (so that writing a new one may replace it).
fn is_bundle(dir: &Path) -> bool {
    dir.join(MANIFEST).is_file()
}

/// Whether a bundle may be written to `dir` (see [`write_bundle`]); checked
/// before solving, so that no work is lost to a wrong folder.
///
/// # Errors
/// [`Error::Options`] for a folder that is neither empty nor a bundle.
pub fn check_target(dir: &Path) -> Result<()> {
    crate::artifact::may_replace(dir, &is_bundle)
}

/// Writes a bundle for `q` into `dir`. The folder is built beside `dir` and
/// then put in its place ([`crate::artifact::replace_dir`]), so a reader
/// sees the old bundle or the whole new one, and no file of an old bundle
/// survives beside new ones; an existing `dir` that is neither empty nor a
/// bundle is refused. Which file carries a witness follows from the
/// formulation: `map.json` (orbit and map) on point sets, `orbit.json`
/// otherwise.
///
/// # Errors
/// [`Error::Io`] for the files; [`Error::Options`] for a `dir` that is not a
/// bundle; [`Error::Decode`] for a full-map witness without its map;
/// encoding errors.
pub fn write_bundle(
    dir: &Path,
    q: &Question,
    options: &EncodeOptions,
    evidence: Evidence<'_>,
) -> Result<Manifest> {
    let enc = encode(q, options, u64::MAX)?;
    let cnf = render_cnf(&enc);
    crate::artifact::replace_dir(dir, is_bundle, |tmp| {
        write_atomically(&tmp.join(FORMULA), &cnf)?;
        let mut files = vec![FileEntry::of(FORMULA, &cnf)];
        let verdict = match evidence {
            Evidence::Proof(path) => {
                let to = tmp.join(PROOF);
                // A hard link costs nothing for a proof of gigabytes; across
                // file systems the proof is copied.
                if std::fs::hard_link(path, &to).is_err() {
                    std::fs::copy(path, &to).map_err(|e| Error::io(path, e))?;
                }
                files.push(FileEntry::of_file(tmp, PROOF)?);
                Verdict::Infeasible
            }
            Evidence::Witness { orbit, map } if enc.options.formulation.encodes_map() => {
                let map = map.ok_or_else(|| {
                    Error::Decode("a feasible answer on a point set needs its map D → D".into())
                })?;
                let doc = MapFile {
                    orbit: orbit.to_vec(),
                    map: map.to_vec(),
                };
                let text = serde_json::to_string(&doc).expect("map file serialises") + "\n";
                write_atomically(&tmp.join(MAP), text.as_bytes())?;
                files.push(FileEntry::of(MAP, text.as_bytes()));
                Verdict::Feasible
            }
            Evidence::Witness { orbit, .. } => {
                let text = orbit_file::to_json(&q.grid, q.class, orbit) + "\n";
                write_atomically(&tmp.join(ORBIT), text.as_bytes())?;
                files.push(FileEntry::of(ORBIT, text.as_bytes()));
                Verdict::Feasible
            }
        };
        let manifest = Manifest {
            orbitcnf_version: VERSION.into(),
            question: q.record(),
            options: enc.options.clone(),
            verdict: verdict.word().into(),
            files,
            trust: if enc.options.formulation.encodes_map() {
                TRUST_FULL_MAP
            } else {
                TRUST
            }
            .into(),
        };
        let text = serde_json::to_string_pretty(&manifest).expect("manifest serialises") + "\n";
        write_atomically(&tmp.join(MANIFEST), text.as_bytes())?;
        Ok(manifest)
    })
}

/// What a bundle carries besides the CNF.
#[derive(Clone, Copy, Debug)]
pub enum Evidence<'a> {
    /// The checked LRAT proof of an infeasible answer, at this path.
    Proof(&'a Path),
    /// The checked witness of a feasible answer: the orbit, and on a point
    /// set the whole map.
    Witness {
        /// `x_0..x_{p−1}`.
        orbit: &'a [Vec<i64>],
        /// `(z, f(z))` for every z ∈ D (full-map formulation).
        map: Option<&'a [(Vec<i64>, Vec<i64>)]>,
    },
}

/// What [`check_bundle`] established.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BundleCheck {
    /// The bundle's folder.
    pub dir: PathBuf,
    /// The manifest.
    pub manifest: Manifest,
    /// For infeasible bundles: the accepted proof.
    pub proof: Option<LratSummary>,
    /// For feasible bundles: the checked orbit.
    pub orbit: Option<OrbitCheck>,
    /// For feasible full-map bundles: the checked map.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub map: Option<SelfMapCheck>,
}

impl BundleCheck {
    /// The findings for people, one line per fact.
    pub fn to_text(&self) -> String {
        let q = &self.manifest.question;
        let mut text = format!(
            "bundle       {}\nquestion     grid {} (n = {}), period {}\n\
             formula      identical to a fresh encoding; all hashes match\n",
            self.dir.display(),
            q.grid,
            q.dim,
            q.period
        );
        match (&self.proof, &self.orbit) {
            (Some(p), _) => text.push_str(&format!(
                "verdict      INFEASIBLE, certified: LRAT proof of {} steps accepted (empty clause at id {})\n",
                p.steps, p.empty_clause_id
            )),
            (None, Some(o)) => text.push_str(&format!("verdict      FEASIBLE, certified: {o}\n")),
            _ => {}
        }
        if let Some(pts) = &q.points {
            text.push_str(&format!(
                "domain       the {} points of the manifest (the grid above is their bounding box)\n",
                pts.len()
            ));
        }
        if let Some(m) = &self.map {
            text.push_str(&format!("map          certified: {m}\n"));
        }
        text
    }
}

/// Re-checks a bundle end to end: every file against its digest, the CNF
/// against a fresh encoding of the question, and the evidence through
/// [`crate::evidence`].
///
/// # Errors
/// [`Error::Parse`] for a missing or malformed manifest, a digest that does
/// not match, or a CNF that differs from a fresh encoding of the question;
/// [`Error::Proof`] for a rejected proof; [`Error::Check`] for a bad orbit
/// or map.
pub fn check_bundle(dir: &Path) -> Result<BundleCheck> {
    let mpath = dir.join(MANIFEST);
    let mname = mpath.display().to_string();
    let manifest: Manifest = serde_json::from_slice(&read(&mpath)?)
        .map_err(|e| Error::parse(&mname, e.line(), format!("not a bundle manifest: {e}")))?;
    for f in &manifest.files {
        f.verify(dir, MANIFEST)?;
    }
    let listed = |name: &str| -> Result<PathBuf> {
        if manifest.files.iter().any(|f| f.name == name) {
            Ok(dir.join(name))
        } else {
            Err(Error::file(
                &mname,
                format!(
                    "a {} bundle needs {name}, and the manifest lists none",
                    manifest.verdict
                ),
            ))
        }
    };
    let cnf_path = listed(FORMULA)?;
    let q = Question::from_record(&manifest.question)?;
    let enc = encode(&q, &manifest.options, u64::MAX)?;
    if render_cnf(&enc) != read(&cnf_path)? {
        return Err(Error::file(
            cnf_path.display().to_string(),
            format!(
                "differs from a fresh encoding of the question (bundle written by orbitcnf {}, this is {VERSION})",
                manifest.orbitcnf_version
            ),
        ));
    }
    let mut out = BundleCheck {
        dir: dir.to_path_buf(),
        manifest: manifest.clone(),
        proof: None,
        orbit: None,
        map: None,
    };
    let options = &manifest.options;
    match manifest.verdict.as_str() {
        "infeasible" => {
            let check = evidence::check_proof_file(&enc.cnf, &listed(PROOF)?)?;
            out.proof = Some(check.summary);
        }
        "feasible" if options.formulation.encodes_map() => {
            let mpath = listed(MAP)?;
            let shown = mpath.display().to_string();
            let f: MapFile = serde_json::from_slice(&read(&mpath)?)
                .map_err(|e| Error::parse(&shown, e.line(), format!("not a map file: {e}")))?;
            let w = evidence::check_witness(&q, options, &f.orbit, Some(&f.map))?;
            out.orbit = Some(w.orbit);
            out.map = w.map;
        }
        "feasible" => {
            let opath = listed(ORBIT)?;
            let text = String::from_utf8_lossy(&read(&opath)?).into_owned();
            let f = orbit_file::parse(&text, &opath.display().to_string())?;
            if f.grid != q.grid || f.class != q.class {
                return Err(Error::file(
                    opath.display().to_string(),
                    "the orbit is not for the bundle's question",
                ));
            }
            out.orbit = Some(evidence::check_witness(&q, options, &f.orbit, None)?.orbit);
        }
        other => {
            return Err(Error::file(&mname, format!("unknown verdict {other:?}")));
        }
    }
    Ok(out)
}
