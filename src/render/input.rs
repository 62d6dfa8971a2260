//! The report's own, tolerant model of its inputs.
//!
//! A report reads three kinds of input: one answer (`decide --json`, a
//! stored answer file, or an orbit file such as `decide --map-out` writes), a certificate
//! bundle folder (`decide --bundle`), and a results store folder (`spectrum
//! --store`), or the JSON of a whole sweep. It does not deserialise the
//! crate's own report, bundle or store types: those change as the evidence
//! model grows, and a report of an older or newer answer should still come
//! out. Every input goes through [`serde_json::Value`] and the small types
//! below instead; unknown fields are ignored and missing optional ones are
//! allowed.
//!
//! **Every field name the report reads is in this file**, in the `from_*`
//! functions, so adapting to a changed answer format is a change here only.
//! What a loaded answer claims is re-checked before it is drawn (see
//! [`super::facts`]); nothing read here is trusted for a verdict.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde_json::Value;

use crate::artifact::sha256_file;
use crate::error::{Error, Result};
use crate::grid::Grid;
use crate::question::MapClass;
use crate::report::Verdict;
use crate::theory::{self, Status};

/// Answer files larger than this are refused before they are read (a stored
/// answer with its whole map on a large box is far smaller).
pub const MAX_INPUT_BYTES: u64 = 256 << 20;

/// A map as `(z, f(z))` pairs.
pub type MapPairs = Vec<(Vec<i64>, Vec<i64>)>;

/// Where an input came from: decides the re-check commands a report shows.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Origin {
    /// One JSON file: a `decide --json` answer, a stored answer, an orbit
    /// file or a sweep's JSON.
    File(PathBuf),
    /// A certificate bundle folder.
    Bundle(PathBuf),
    /// A results store folder.
    Store(PathBuf),
}

impl Origin {
    /// The path as given.
    pub fn path(&self) -> &Path {
        match self {
            Origin::File(p) | Origin::Bundle(p) | Origin::Store(p) => p,
        }
    }
}

/// A loaded input: one answer, or the spectra of a sweep or a store.
#[derive(Clone, Debug, PartialEq)]
pub enum Input {
    /// One answer (from an answer file or a bundle).
    Answer(Box<Answer>),
    /// One spectrum per domain (a store may hold several).
    Spectra(Vec<Spectrum>),
}

/// A loaded input with its origin.
#[derive(Clone, Debug, PartialEq)]
pub struct Loaded {
    /// Where it came from.
    pub origin: Origin,
    /// What it holds.
    pub input: Input,
}

/// The question an answer is about.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct QuestionFacts {
    /// The dimension n.
    pub dim: usize,
    /// The box in the command-line form (`-1..1,-1..1`); for a point set its
    /// bounding box; `None` when the input names none (a question over R^n).
    pub grid: Option<String>,
    /// The box's ranges, parsed from `grid`.
    pub bounds: Option<Vec<(i64, i64)>>,
    /// The period p (0 for a whole sweep).
    pub period: usize,
    /// The map class; unknown class names are kept as given in `class_name`.
    pub class: Option<MapClass>,
    /// The class as the input wrote it (`nonexpansive` when absent).
    pub class_name: String,
    /// The points of D when D is a point set.
    pub points: Option<Vec<Vec<i64>>>,
}

impl QuestionFacts {
    /// The domain for people: `{-1,0,1}^3`, `D (5 points)`, or `R^n`.
    pub fn domain_name(&self) -> String {
        match (&self.points, &self.bounds) {
            (Some(pts), _) => format!("D ({} points)", pts.len()),
            (None, Some(b)) => Grid::new(b.clone())
                .map(|g| g.to_string())
                .unwrap_or_else(|_| self.grid.clone().unwrap_or_default()),
            (None, None) => format!("R^{}", self.dim),
        }
    }

    /// Whether the class is the topical one.
    pub fn is_topical(&self) -> bool {
        self.class == Some(MapClass::Topical)
    }

    /// Coordinates with more than one value (all n when there is no box).
    pub fn effective_dim(&self) -> usize {
        match &self.bounds {
            Some(b) => b.iter().filter(|(a, z)| z > a).count(),
            None => self.dim,
        }
    }
}

/// What backs a verdict, as the input states it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum EvidenceKind {
    /// The orbit (and, on a point set, the map) itself.
    Witness,
    /// An LRAT proof, accepted by orbitcnf's checker when it was made.
    CheckedProof,
    /// A proof file whose check the input does not record (bundles: re-check
    /// with `check-bundle`).
    Proof,
    /// A solver's claim of unsatisfiability, no proof checked.
    SolverClaim,
    /// Infeasible by the divisor rule (docs/math.md §9): the answer names a
    /// refuted divisor of the period, whose LRAT proof orbitcnf's checker
    /// accepted (the evidence's file and digest are that proof's).
    Divisor {
        /// The refuted divisor, as the input names it.
        period: Option<u64>,
    },
    /// Every cube of a split folder refuted with an LRAT proof, and the
    /// cubes' coverage proof, re-checked by `merge` when it recorded the
    /// answer (the evidence's file is the folder, its digest the
    /// manifest's).
    CheckedCubes {
        /// Cubes in the split, as the input states it.
        cubes: Option<u64>,
    },
    /// Nothing (unknown answers).
    None,
    /// A kind this version does not know, as the input named it.
    Other(String),
}

/// The certificate of an answer.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Evidence {
    /// Its kind.
    pub kind: EvidenceKind,
    /// The proof or witness file, as the input names it.
    pub file: Option<String>,
    /// Hex SHA-256 of that file, when the input records it (or, for an
    /// answer file, when the named proof file was found and hashed).
    pub sha256: Option<String>,
    /// Steps of the checked proof.
    pub steps: Option<u64>,
    /// Size of the proof in bytes.
    pub bytes: Option<u64>,
    /// The solver whose claim or proof it is.
    pub solver: Option<String>,
}

impl Evidence {
    fn of_kind(kind: EvidenceKind) -> Evidence {
        Evidence {
            kind,
            file: None,
            sha256: None,
            steps: None,
            bytes: None,
            solver: None,
        }
    }
}

/// One file of a bundle with its recorded digest.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FileDigest {
    /// Its name in the bundle.
    pub name: String,
    /// Hex SHA-256 as the manifest records it.
    pub sha256: String,
    /// Its size as the manifest records it.
    pub bytes: u64,
}

/// One answer, as the report reads it.
#[derive(Clone, Debug, PartialEq)]
pub struct Answer {
    /// The question.
    pub question: QuestionFacts,
    /// The question in words, when the input has it.
    pub statement: Option<String>,
    /// The verdict as the input states it (re-checked before it is shown).
    pub verdict: Verdict,
    /// The orbit `x_0..x_{p−1}`.
    pub orbit: Option<Vec<Vec<i64>>>,
    /// The profile the input states (compared with the orbit's own).
    pub profile: Option<Vec<i64>>,
    /// The map `(z, f(z))` the input carries (point sets).
    pub map: Option<MapPairs>,
    /// The certificate.
    pub evidence: Evidence,
    /// `construction` or `solver`, when the input says.
    pub how: Option<String>,
    /// Why the answer is unknown.
    pub reason: Option<String>,
    /// The formulation (`isometric-cycle/1`, `full-map/1`, …).
    pub formulation: Option<String>,
    /// The encoding options as the input records them (for re-check commands).
    pub options: Option<Value>,
    /// The files of a bundle with their digests.
    pub files: Vec<FileDigest>,
    /// The orbitcnf version that made the answer.
    pub tool_version: Option<String>,
    /// Variables and clauses of the CNF solved.
    pub size: Option<(u64, u64)>,
}

/// What the published theorems say about one period.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PublishedFacts {
    /// `exists`, `excluded` or `open`.
    pub status: String,
    /// The theorems, in words with their sources.
    pub reasons: Vec<String>,
}

/// One period of a spectrum.
#[derive(Clone, Debug, PartialEq)]
pub struct SpectrumRow {
    /// The period p.
    pub period: usize,
    /// The answer for it.
    pub answer: Answer,
    /// What the published theorems say.
    pub published: PublishedFacts,
}

/// The periods of one domain and class.
#[derive(Clone, Debug, PartialEq)]
pub struct Spectrum {
    /// The question with `period` 0.
    pub question: QuestionFacts,
    /// The question in words with the period written `p`, when known.
    pub statement: Option<String>,
    /// `2^n'` (nonexpansive) or `C(n', ⌊n'/2⌋)` (topical): the construction's reach.
    pub construction_limit: u128,
    /// The class's Lemmens–Scheutzow bound.
    pub bound: u128,
    /// One row per period, increasing.
    pub rows: Vec<SpectrumRow>,
}

fn bad(origin: &str, reason: impl Into<String>) -> Error {
    Error::parse(origin, 0, reason)
}

fn read_json(path: &Path) -> Result<Value> {
    let meta = std::fs::metadata(path).map_err(|e| Error::io(path, e))?;
    if meta.len() > MAX_INPUT_BYTES {
        return Err(bad(
            &path.display().to_string(),
            format!(
                "{} bytes; a report reads at most {MAX_INPUT_BYTES}",
                meta.len()
            ),
        ));
    }
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
    serde_json::from_str(&text).map_err(|e| {
        Error::parse(
            path.display().to_string(),
            e.line(),
            format!("not JSON: {e}"),
        )
    })
}

/// Reads an answer file, a bundle folder or a store folder.
///
/// # Errors
/// [`Error::Io`] for unreadable files; [`Error::Parse`] (with the file) for
/// JSON that is not an answer, a bundle without its manifest or orbit, a
/// store without answers, a bundle file whose digest differs from its
/// manifest.
pub fn load(path: &Path) -> Result<Loaded> {
    let meta = std::fs::metadata(path).map_err(|e| Error::io(path, e))?;
    if meta.is_dir() {
        if path.join("manifest.json").is_file() {
            let answer = load_bundle(path)?;
            return Ok(Loaded {
                origin: Origin::Bundle(path.to_path_buf()),
                input: Input::Answer(Box::new(answer)),
            });
        }
        if path.join("answers").is_dir() {
            return Ok(Loaded {
                origin: Origin::Store(path.to_path_buf()),
                input: Input::Spectra(load_store(path)?),
            });
        }
        return Err(bad(
            &path.display().to_string(),
            "a folder that is neither a certificate bundle (manifest.json) nor a results store (answers/)",
        ));
    }
    let value = read_json(path)?;
    let input = from_value(&value, &path.display().to_string())?;
    let input = match input {
        Input::Answer(mut a) => {
            hash_named_proof(&mut a.evidence, path);
            Input::Answer(a)
        }
        other => other,
    };
    Ok(Loaded {
        origin: Origin::File(path.to_path_buf()),
        input,
    })
}

/// Reads one JSON document: an answer of any kind, or a sweep's JSON.
///
/// # Errors
/// [`Error::Parse`] naming `origin` when the document is neither.
pub fn from_value(v: &Value, origin: &str) -> Result<Input> {
    if !v.is_object() {
        return Err(bad(origin, "expected a JSON object"));
    }
    if v.get("rows").is_some_and(Value::is_array) {
        return Ok(Input::Spectra(vec![spectrum_from_sweep(v, origin)?]));
    }
    Ok(Input::Answer(Box::new(answer_from_value(v, origin)?)))
}

fn as_usize(v: Option<&Value>) -> Option<usize> {
    v.and_then(Value::as_u64)
        .and_then(|n| usize::try_from(n).ok())
}

fn as_string(v: Option<&Value>) -> Option<String> {
    v.and_then(Value::as_str).map(str::to_string)
}

fn points_of(v: Option<&Value>, origin: &str, what: &str) -> Result<Option<Vec<Vec<i64>>>> {
    let Some(v) = v.filter(|v| !v.is_null()) else {
        return Ok(None);
    };
    let rows = v
        .as_array()
        .ok_or_else(|| bad(origin, format!("{what}: expected a list of points")))?;
    rows.iter()
        .enumerate()
        .map(|(i, row)| {
            point_of(row)
                .ok_or_else(|| bad(origin, format!("{what}[{i}] is not a list of integers")))
        })
        .collect::<Result<Vec<_>>>()
        .map(Some)
}

fn point_of(v: &Value) -> Option<Vec<i64>> {
    v.as_array()?.iter().map(Value::as_i64).collect()
}

/// A map as `[[z, f(z)], …]` (answers, bundles) or `[{"x": z, "f": f(z)}, …]` (`check --map --json`).
fn map_of(v: Option<&Value>, origin: &str) -> Result<Option<MapPairs>> {
    let Some(v) = v.filter(|v| !v.is_null()) else {
        return Ok(None);
    };
    let rows = v
        .as_array()
        .ok_or_else(|| bad(origin, "map: expected a list of [z, f(z)] pairs"))?;
    rows.iter()
        .enumerate()
        .map(|(i, row)| {
            let pair = match row {
                Value::Array(a) if a.len() == 2 => point_of(&a[0]).zip(point_of(&a[1])),
                Value::Object(o) => o
                    .get("x")
                    .and_then(point_of)
                    .zip(o.get("f").and_then(point_of)),
                _ => None,
            };
            pair.ok_or_else(|| bad(origin, format!("map[{i}] is not a pair of points")))
        })
        .collect::<Result<Vec<_>>>()
        .map(Some)
}

fn question_of(v: &Value, origin: &str) -> Result<QuestionFacts> {
    // An answer nests its question; orbit files and check results carry the
    // fields at the top.
    let q = v.get("question").filter(|q| q.is_object()).unwrap_or(v);
    let points = points_of(q.get("points"), origin, "points")?;
    if let Some(p) = &points {
        // The library's own checks: one dimension, coordinates within range, no repeats.
        crate::points::PointSet::new(p.clone()).map_err(|e| bad(origin, format!("points: {e}")))?;
    }
    let grid = as_string(q.get("grid"));
    let dim_field = as_usize(q.get("dim"));
    let bounds = match &grid {
        Some(spec) => Some(
            Grid::parse(spec, dim_field)
                .map_err(|e| bad(origin, format!("question: {e}")))?
                .ranges()
                .to_vec(),
        ),
        None => points.as_ref().and_then(|p| bounding_box(p)),
    };
    let dim = dim_field
        .or_else(|| bounds.as_ref().map(Vec::len))
        .or_else(|| points.as_ref().and_then(|p| p.first()).map(Vec::len))
        .ok_or_else(|| bad(origin, "the question gives no dimension, grid or points"))?;
    let class_name = as_string(q.get("class")).unwrap_or_else(|| "nonexpansive".into());
    Ok(QuestionFacts {
        dim,
        grid: grid.or_else(|| bounds.as_ref().map(|b| spec_of(b))),
        bounds,
        period: as_usize(q.get("period")).unwrap_or(0),
        class: class_name.parse().ok(),
        class_name,
        points,
    })
}

fn bounding_box(points: &[Vec<i64>]) -> Option<Vec<(i64, i64)>> {
    let n = points.first()?.len();
    (0..n)
        .map(|c| {
            let vals = points.iter().filter_map(|z| z.get(c).copied());
            Some((vals.clone().min()?, vals.max()?))
        })
        .collect()
}

fn spec_of(bounds: &[(i64, i64)]) -> String {
    let parts: Vec<String> = bounds.iter().map(|(a, b)| format!("{a}..{b}")).collect();
    parts.join(",")
}

fn verdict_of(v: Option<&Value>, origin: &str) -> Result<Option<Verdict>> {
    match v.and_then(Value::as_str) {
        None => Ok(None),
        Some("feasible") => Ok(Some(Verdict::Feasible)),
        Some("infeasible") => Ok(Some(Verdict::Infeasible)),
        Some("unknown") => Ok(Some(Verdict::Unknown)),
        Some(other) => Err(bad(origin, format!("unknown verdict {other:?}"))),
    }
}

/// The certificate of a `decide --json` report (`certificate: {kind, …}`)
/// or of a stored answer (`backing` and `proof`).
fn evidence_of(v: &Value) -> Evidence {
    if let Some(c) = v.get("certificate").filter(|c| c.is_object()) {
        let kind = match c.get("kind").and_then(Value::as_str) {
            Some("witness") => EvidenceKind::Witness,
            Some("checked-proof") => EvidenceKind::CheckedProof,
            Some("solver-claim") => EvidenceKind::SolverClaim,
            Some("none") | None => EvidenceKind::None,
            Some(other) => EvidenceKind::Other(other.to_string()),
        };
        return Evidence {
            kind,
            file: as_string(c.get("lrat_file")),
            sha256: as_string(c.get("sha256")),
            steps: c.pointer("/lrat/steps").and_then(Value::as_u64),
            bytes: c.get("lrat_bytes").and_then(Value::as_u64),
            solver: as_string(c.get("solver")).or_else(|| as_string(v.pointer("/stats/solver"))),
        };
    }
    let kind = match v.get("backing").and_then(Value::as_str) {
        Some("checked-orbit") => EvidenceKind::Witness,
        Some("checked-proof") => EvidenceKind::CheckedProof,
        Some("solver-claim") => EvidenceKind::SolverClaim,
        Some(other) if other != "none" => EvidenceKind::Other(other.to_string()),
        // Orbit files and check results: the orbit is the evidence.
        _ if v.get("orbit").is_some_and(Value::is_array) => EvidenceKind::Witness,
        _ => EvidenceKind::None,
    };
    let divisor = v.get("divisor").filter(|d| d.is_object());
    if let Some(d) = divisor.filter(|_| v.get("backing").and_then(Value::as_str) == Some("divisor"))
    {
        return Evidence {
            kind: EvidenceKind::Divisor {
                period: d.get("period").and_then(Value::as_u64),
            },
            file: as_string(d.get("proof_file")),
            sha256: as_string(d.get("proof_sha256")),
            ..Evidence::of_kind(EvidenceKind::None)
        };
    }
    if v.get("backing").and_then(Value::as_str) == Some("checked-cubes") {
        let c = v.get("cubes").filter(|c| c.is_object());
        return Evidence {
            kind: EvidenceKind::CheckedCubes {
                cubes: c.and_then(|c| c.get("cubes")).and_then(Value::as_u64),
            },
            file: c.and_then(|c| as_string(c.get("folder"))),
            sha256: c.and_then(|c| as_string(c.get("manifest_sha256"))),
            steps: c
                .and_then(|c| c.get("coverage_steps"))
                .and_then(Value::as_u64),
            ..Evidence::of_kind(EvidenceKind::None)
        };
    }
    let proof = v.get("proof").filter(|p| p.is_object());
    Evidence {
        kind,
        file: proof.and_then(|p| as_string(p.get("file"))),
        sha256: proof.and_then(|p| as_string(p.get("sha256"))),
        steps: proof.and_then(|p| p.get("steps")).and_then(Value::as_u64),
        bytes: proof.and_then(|p| p.get("bytes")).and_then(Value::as_u64),
        solver: as_string(v.get("solver")),
    }
}

fn answer_from_value(v: &Value, origin: &str) -> Result<Answer> {
    let question = question_of(v, origin)?;
    let orbit = points_of(v.get("orbit"), origin, "orbit")?;
    let profile = v
        .get("profile")
        .or_else(|| v.pointer("/check/profile"))
        .and_then(Value::as_array)
        .map(|a| a.iter().filter_map(Value::as_i64).collect());
    let verdict = match verdict_of(v.get("verdict"), origin)? {
        Some(verdict) => verdict,
        // An orbit file states no verdict: its orbit is re-checked before
        // anything is drawn, so "feasible" is earned there.
        None if orbit.is_some() => Verdict::Feasible,
        None if v.get("orbit_check").is_some() => {
            return Err(bad(
                origin,
                "a check result carries no orbit; report the orbit file or the answer that was checked",
            ));
        }
        None => {
            return Err(bad(
                origin,
                "neither a verdict nor an orbit: not an orbitcnf answer",
            ));
        }
    };
    let stats = v.get("stats");
    let size = stats.and_then(|s| {
        s.get("variables")
            .and_then(Value::as_u64)
            .zip(s.get("clauses").and_then(Value::as_u64))
    });
    let mut question = question;
    if question.period == 0 {
        question.period = orbit.as_ref().map_or(0, Vec::len);
    }
    Ok(Answer {
        statement: as_string(v.get("statement")),
        verdict,
        orbit,
        profile,
        map: map_of(v.get("map"), origin)?,
        evidence: evidence_of(v),
        how: as_string(v.get("how")),
        reason: as_string(v.get("reason")),
        formulation: as_string(v.get("formulation"))
            .or_else(|| as_string(v.pointer("/options/formulation"))),
        options: v.get("options").cloned(),
        files: Vec::new(),
        tool_version: as_string(v.get("tool_version"))
            .or_else(|| as_string(v.get("orbitcnf_version"))),
        size,
        question,
    })
}

/// A `decide --json` answer names its proof file relative to where decide
/// ran; when that file (or one of that name beside the answer) exists, its
/// digest goes into the certificate.
fn hash_named_proof(e: &mut Evidence, answer_path: &Path) {
    if e.sha256.is_some() {
        return;
    }
    let Some(file) = &e.file else { return };
    let beside = answer_path.parent().map(|d| d.join(file));
    for candidate in [Some(PathBuf::from(file)), beside].into_iter().flatten() {
        if let Ok((digest, _)) = sha256_file(&candidate) {
            e.sha256 = Some(digest);
            return;
        }
    }
}

fn load_bundle(dir: &Path) -> Result<Answer> {
    let manifest_path = dir.join("manifest.json");
    let origin = manifest_path.display().to_string();
    let m = read_json(&manifest_path)?;
    let mut files = Vec::new();
    for f in m
        .get("files")
        .and_then(Value::as_array)
        .into_iter()
        .flatten()
    {
        let (Some(name), Some(sha256)) = (as_string(f.get("name")), as_string(f.get("sha256")))
        else {
            return Err(bad(&origin, "files: an entry without name or sha256"));
        };
        // A report prints these digests as the certificate's: they must be
        // the digests of the files that are there.
        let path = dir.join(&name);
        let (digest, bytes) = sha256_file(&path)?;
        if digest != sha256 {
            return Err(bad(
                &path.display().to_string(),
                format!("its SHA-256 differs from the manifest's {sha256}"),
            ));
        }
        files.push(FileDigest {
            name,
            sha256,
            bytes,
        });
    }
    let verdict = verdict_of(m.get("verdict"), &origin)?
        .ok_or_else(|| bad(&origin, "the manifest has no verdict"))?;
    let question = question_of(&m, &origin)?;
    let witness = ["map.json", "orbit.json"]
        .into_iter()
        .find(|n| files.iter().any(|f| f.name == *n));
    let (orbit, map, kind, file) = match (verdict, witness) {
        (Verdict::Feasible, Some(name)) => {
            let doc_path = dir.join(name);
            let doc = read_json(&doc_path)?;
            let o = doc_path.display().to_string();
            (
                points_of(doc.get("orbit"), &o, "orbit")?,
                map_of(doc.get("map"), &o)?,
                EvidenceKind::Witness,
                name,
            )
        }
        (Verdict::Feasible, None) => {
            return Err(bad(&origin, "a feasible bundle without its orbit"));
        }
        _ => (None, None, EvidenceKind::Proof, "proof.lrat"),
    };
    let digest = files.iter().find(|f| f.name == file);
    let evidence = Evidence {
        kind,
        file: digest.map(|d| d.name.clone()),
        sha256: digest.map(|d| d.sha256.clone()),
        bytes: digest.map(|d| d.bytes),
        ..Evidence::of_kind(EvidenceKind::None)
    };
    Ok(Answer {
        question,
        statement: None,
        verdict,
        orbit,
        profile: None,
        map,
        evidence,
        how: None,
        reason: None,
        formulation: as_string(m.pointer("/options/formulation")),
        options: m.get("options").cloned(),
        files,
        tool_version: as_string(m.get("orbitcnf_version")),
        size: None,
    })
}

/// Domains are told apart by everything in the question but the period.
fn domain_key(q: &QuestionFacts) -> String {
    format!("{}|{:?}|{}|{:?}", q.dim, q.grid, q.class_name, q.points)
}

fn load_store(root: &Path) -> Result<Vec<Spectrum>> {
    let dir = root.join("answers");
    let mut names: Vec<PathBuf> = std::fs::read_dir(&dir)
        .map_err(|e| Error::io(&dir, e))?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "json"))
        .collect();
    // read_dir has no order; the report must not depend on it.
    names.sort();
    let mut domains: BTreeMap<String, BTreeMap<usize, Answer>> = BTreeMap::new();
    for path in &names {
        let origin = path.display().to_string();
        let answer = answer_from_value(&read_json(path)?, &origin)?;
        let per_period = domains.entry(domain_key(&answer.question)).or_default();
        let p = answer.question.period;
        match per_period.get(&p) {
            Some(old) if old.verdict != Verdict::Unknown && answer.verdict != Verdict::Unknown => {
                if old.verdict != answer.verdict {
                    return Err(Error::Contradiction {
                        question: format!("{}, p = {p}", answer.question.domain_name()),
                        first: format!("one stored answer says {}", old.verdict.word()),
                        second: format!("{origin} says {}", answer.verdict.word()),
                    });
                }
            }
            Some(old) if old.verdict != Verdict::Unknown => {}
            _ => {
                per_period.insert(p, answer);
            }
        }
    }
    if domains.is_empty() {
        return Err(bad(
            &dir.display().to_string(),
            "the store holds no answers",
        ));
    }
    Ok(domains
        .into_values()
        .map(|per_period| {
            let first = per_period.values().next().expect("a domain has an answer");
            let mut question = first.question.clone();
            question.period = 0;
            let rows = per_period
                .into_iter()
                .map(|(period, answer)| SpectrumRow {
                    period,
                    published: published_of(&answer.question),
                    answer,
                })
                .collect();
            spectrum_of(question, None, rows)
        })
        .collect())
}

/// What the published theorems say about `q`, from [`theory::published`];
/// on a point set the unit-cube construction does not apply, as in
/// [`theory::published_for`].
fn published_of(q: &QuestionFacts) -> PublishedFacts {
    let (Some(bounds), Some(class)) = (&q.bounds, q.class) else {
        return PublishedFacts {
            status: Status::Open.word().into(),
            reasons: vec!["no published bound is known to this report for this question".into()],
        };
    };
    let Ok(grid) = Grid::new(bounds.clone()) else {
        return PublishedFacts {
            status: Status::Open.word().into(),
            reasons: vec![],
        };
    };
    let p = theory::published(&grid, class, q.period);
    if q.points.is_some() && p.status == Status::Exists {
        return PublishedFacts {
            status: Status::Open.word().into(),
            reasons: vec!["the unit-cube construction needs a box; D is a point set".into()],
        };
    }
    PublishedFacts {
        status: p.status.word().into(),
        reasons: p.reasons,
    }
}

fn spectrum_of(
    question: QuestionFacts,
    statement: Option<String>,
    rows: Vec<SpectrumRow>,
) -> Spectrum {
    let n = question.effective_dim();
    let (construction_limit, bound) = if question.is_topical() {
        let t = theory::topical_bound(n);
        (t, t)
    } else {
        let two_n = if n < 127 { 1u128 << n } else { u128::MAX };
        (two_n, theory::lemmens_scheutzow_bound(n))
    };
    Spectrum {
        question,
        statement,
        construction_limit,
        bound,
        rows,
    }
}

/// A sweep's JSON (`spectrum --json`): its rows carry their answers and the
/// published facts.
fn spectrum_from_sweep(v: &Value, origin: &str) -> Result<Spectrum> {
    let mut rows = Vec::new();
    for (i, row) in v
        .get("rows")
        .and_then(Value::as_array)
        .into_iter()
        .flatten()
        .enumerate()
    {
        let a = row
            .get("answer")
            .ok_or_else(|| bad(origin, format!("rows[{i}] has no answer")))?;
        let answer = answer_from_value(a, &format!("{origin}: rows[{i}].answer"))?;
        let published = match row.get("published") {
            Some(p) => PublishedFacts {
                status: as_string(p.get("status")).unwrap_or_else(|| "open".into()),
                reasons: p
                    .get("reasons")
                    .and_then(Value::as_array)
                    .map(|r| r.iter().filter_map(|s| as_string(Some(s))).collect())
                    .unwrap_or_default(),
            },
            None => published_of(&answer.question),
        };
        rows.push(SpectrumRow {
            period: answer.question.period,
            answer,
            published,
        });
    }
    rows.sort_by_key(|r| r.period);
    let mut question = match rows.first() {
        Some(r) => r.answer.question.clone(),
        None => question_of(v, origin)?,
    };
    question.period = 0;
    Ok(spectrum_of(question, as_string(v.get("question")), rows))
}
