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

use crate::artifact::{FileEntry, sha256_hex, write_atomically};
use crate::dimacs::{self, VERSION, render_cnf};
use crate::encode::{EncodeOptions, encode};
use crate::error::{Error, Result};
use crate::orbit_file;
use crate::proof::{LratOptions, LratSummary, check_lrat_with};
use crate::question::{Question, QuestionRecord};
use crate::report::Verdict;
use crate::verify::{self, OrbitCheck, SelfMapCheck};

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

/// Writes a bundle for `q` into `dir` (created if needed). `evidence` is the
/// LRAT proof's path (infeasible) or the orbit (feasible); the manifest is
/// written last, so a bundle without one is incomplete.
///
/// # Errors
/// [`Error::Io`] for the files; encoding errors.
pub fn write_bundle(
    dir: &Path,
    q: &Question,
    options: &EncodeOptions,
    evidence: Evidence<'_>,
) -> Result<Manifest> {
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
    let enc = encode(q, options, u64::MAX)?;
    let cnf = render_cnf(&enc);
    write_atomically(&dir.join(FORMULA), &cnf)?;
    let mut files = vec![FileEntry::of(FORMULA, &cnf)];
    let verdict = match evidence {
        Evidence::Proof(path) => {
            let bytes = read(path)?;
            if path != dir.join(PROOF) {
                write_atomically(&dir.join(PROOF), &bytes)?;
            }
            files.push(FileEntry::of(PROOF, &bytes));
            Verdict::Infeasible
        }
        Evidence::Map { orbit, map } => {
            let doc = MapFile {
                orbit: orbit.to_vec(),
                map: map.to_vec(),
            };
            let text = serde_json::to_string(&doc).expect("map file serialises") + "\n";
            write_atomically(&dir.join(MAP), text.as_bytes())?;
            files.push(FileEntry::of(MAP, text.as_bytes()));
            Verdict::Feasible
        }
        Evidence::Orbit(orbit) => {
            let text = orbit_file::to_json(&q.grid, q.class, orbit) + "\n";
            write_atomically(&dir.join(ORBIT), text.as_bytes())?;
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
    write_atomically(&dir.join(MANIFEST), text.as_bytes())?;
    Ok(manifest)
}

/// What a bundle carries besides the CNF.
#[derive(Clone, Copy, Debug)]
pub enum Evidence<'a> {
    /// The LRAT proof of an infeasible answer, at this path.
    Proof(&'a Path),
    /// The orbit of a feasible answer.
    Orbit(&'a [Vec<i64>]),
    /// The orbit and the whole map of a feasible full-map answer.
    Map {
        /// `x_0..x_{p−1}`.
        orbit: &'a [Vec<i64>],
        /// `(z, f(z))` for every z ∈ D.
        map: &'a [(Vec<i64>, Vec<i64>)],
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

/// Re-checks a bundle end to end.
///
/// # Errors
/// [`Error::Parse`] for a missing or malformed manifest, a digest that does
/// not match, or a CNF that differs from a fresh encoding of the question;
/// [`Error::Proof`] for a rejected proof; [`Error::Check`] for a bad orbit.
pub fn check_bundle(dir: &Path) -> Result<BundleCheck> {
    let mpath = dir.join(MANIFEST);
    let mname = mpath.display().to_string();
    let manifest: Manifest = serde_json::from_slice(&read(&mpath)?)
        .map_err(|e| Error::parse(&mname, e.line(), format!("not a bundle manifest: {e}")))?;
    for f in &manifest.files {
        let bytes = read(&dir.join(&f.name))?;
        if sha256_hex(&bytes) != f.sha256 {
            return Err(Error::parse(
                &mname,
                0,
                format!("{} does not match its SHA-256 in the manifest", f.name),
            ));
        }
    }
    let listed = |name: &str| manifest.files.iter().any(|f| f.name == name);
    if !listed(FORMULA) {
        return Err(Error::parse(
            &mname,
            0,
            format!("the manifest lists no {FORMULA}"),
        ));
    }
    let q = Question::from_record(&manifest.question)?;
    let fresh = render_cnf(&encode(&q, &manifest.options, u64::MAX)?);
    let cnf_path = dir.join(FORMULA);
    let stored = read(&cnf_path)?;
    if fresh != stored {
        return Err(Error::parse(
            cnf_path.display().to_string(),
            0,
            format!(
                "differs from a fresh encoding of the question (bundle written by orbitcnf {}, this is {VERSION})",
                manifest.orbitcnf_version
            ),
        ));
    }
    let file = dimacs::read_cnf_file(&cnf_path)?;
    let mut out = BundleCheck {
        dir: dir.to_path_buf(),
        manifest: manifest.clone(),
        proof: None,
        orbit: None,
        map: None,
    };
    match manifest.verdict.as_str() {
        "infeasible" => {
            if !listed(PROOF) {
                return Err(Error::parse(
                    &mname,
                    0,
                    format!("an infeasible bundle needs {PROOF}"),
                ));
            }
            let proof = read(&dir.join(PROOF))?;
            let options = LratOptions {
                ids_follow_cnf: true,
                ..LratOptions::default()
            };
            out.proof = Some(check_lrat_with(&file.cnf, &proof, &options)?);
        }
        "feasible" if manifest.options.formulation.encodes_map() => {
            if !listed(MAP) {
                return Err(Error::parse(
                    &mname,
                    0,
                    format!("a feasible full-map bundle needs {MAP}"),
                ));
            }
            let mpath = dir.join(MAP);
            let shown = mpath.display().to_string();
            let f: MapFile = serde_json::from_slice(&read(&mpath)?)
                .map_err(|e| Error::parse(&shown, e.line(), format!("not a map file: {e}")))?;
            if f.orbit.len() != q.period {
                return Err(Error::parse(
                    shown,
                    0,
                    "the orbit is not for the bundle's question",
                ));
            }
            let domain = q.domain().points().to_vec();
            out.map = Some(verify::check_self_map(&domain, &f.map, &f.orbit)?);
            out.orbit = Some(verify::check_orbit(q.grid.ranges(), &f.orbit)?);
        }
        "feasible" => {
            if !listed(ORBIT) {
                return Err(Error::parse(
                    &mname,
                    0,
                    format!("a feasible bundle needs {ORBIT}"),
                ));
            }
            let opath = dir.join(ORBIT);
            let text = String::from_utf8_lossy(&read(&opath)?).into_owned();
            let f = orbit_file::parse(&text, &opath.display().to_string())?;
            if f.grid != q.grid || f.orbit.len() != q.period {
                return Err(Error::parse(
                    opath.display().to_string(),
                    0,
                    "the orbit is not for the bundle's question",
                ));
            }
            out.orbit = Some(q.check_orbit(&f.orbit)?);
        }
        other => {
            return Err(Error::parse(
                &mname,
                0,
                format!("unknown verdict {other:?}"),
            ));
        }
    }
    Ok(out)
}
