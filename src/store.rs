//! The results store: one JSON file per answer, written so that a completed
//! answer survives a crash at any moment.
//!
//! # Layout
//!
//! ```text
//! DIR/answers/<key>.json            one [`Answer`] per file
//! DIR/proofs/<key>.<run-id>.lrat    the LRAT proof of an infeasible answer
//! ```
//!
//! The key ([`key`]) is the hex SHA-256 of the question record, the encoding
//! options as resolved for the question ([`EncodeOptions::resolve`]) and the
//! formulation version, so two runs that would build the same CNF share a
//! key, and a change of options or formulation gives a new one.
//!
//! # Why a completed answer survives a crash
//!
//! Every file is written by [`crate::dimacs::write_atomically`]: the bytes go
//! to a temporary file in the same folder, are flushed to disk with `fsync`,
//! and the temporary file is renamed over the final name. A rename within
//! one file system is atomic, so a reader (the next run) sees either no
//! answer file or a complete one, never a torn one; after the rename the
//! folder itself is `fsync`ed, so the new name also survives a power cut.
//! The proof of an infeasible answer is written (the same way) *before* its
//! answer file, so an answer never refers to a proof that is not there. A
//! process killed between the two leaves only an unreferenced proof (and at
//! worst a temporary file whose name starts with `.tmp`); neither is read as
//! an answer. Nothing else is kept in memory between answers: killing a
//! sweep loses at most the periods that were being solved at that moment.
//!
//! # What is never overwritten
//!
//! A decided answer (feasible or infeasible) is final. [`Store::put`]
//! re-reads the file of its key from disk just before writing (another run
//! may have finished it meanwhile), keeps a decided answer that is already
//! there, and refuses with [`Error::Contradiction`] an answer whose verdict
//! differs from any decided answer stored for the same question, under any
//! options: the verdict is a fact about the question, not about the
//! encoding. Only unknown answers are replaced.
//!
//! Several sweeps may share one store: answer files are written atomically
//! and checked against the disk before each write, and each run writes its
//! proofs under its own run id, so one run never replaces another's proof.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

use serde::{Deserialize, Serialize};

pub use crate::artifact::sha256_file;
use crate::artifact::{sha256_hex, sync_dir, write_atomically};
use crate::encode::{self, EncodeOptions, Formulation};
use crate::error::{Error, Result};
use crate::grid::Point;
use crate::proof::{LratOptions, LratSummary, check_lrat_with};
use crate::question::{Question, QuestionRecord};
use crate::report::Verdict;
use crate::verify::{self, OrbitCheck};

/// Sub-folder of the answer files.
pub const ANSWERS_DIR: &str = "answers";
/// Sub-folder of the proof files.
pub const PROOFS_DIR: &str = "proofs";
/// The `schema` of every answer file written by this version.
pub const SCHEMA: &str = "orbitcnf-answer/1";
/// Domain separator hashed in front of every key's input.
const KEY_DOMAIN: &[u8] = b"orbitcnf-store-key/1\n";

/// How an answer was obtained.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum How {
    /// Built without solving: `p ≤ 2^n'` points of a unit cube, pairwise at
    /// distance 1, or for topical questions `p ≤ C(n', ⌊n'/2⌋)` points of its
    /// middle layer (see [`crate::spectrum::construct`]).
    Construction,
    /// Decided by [`crate::decide::decide`] with the certified solver.
    Solver,
}

impl How {
    /// The word used in reports: `construction` or `solver`.
    pub fn word(self) -> &'static str {
        match self {
            How::Construction => "construction",
            How::Solver => "solver",
        }
    }
}

/// What backs a stored verdict.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Backing {
    /// The orbit, checked by [`crate::verify::check_orbit`] (feasible answers).
    CheckedOrbit,
    /// An LRAT proof accepted by orbitcnf's own checker (infeasible answers).
    CheckedProof,
    /// A solver's word with no proof checked (never written by `spectrum`,
    /// which always certifies; accepted when read).
    SolverClaim,
    /// Nothing (unknown answers).
    None,
}

/// The proof of an infeasible answer.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ProofRecord {
    /// The proof file, relative to the store's folder (`proofs/<key>.<run>.lrat`);
    /// `None` when the proof was checked in memory and not kept (no store).
    pub file: Option<String>,
    /// Hex SHA-256 of the proof file's bytes, when it was kept.
    pub sha256: Option<String>,
    /// Size of the text LRAT proof in bytes.
    pub bytes: u64,
    /// Steps the checker verified.
    pub steps: u64,
    /// Seconds the checker took.
    pub check_seconds: f64,
}

/// The limits an answer was computed under; an unknown answer is retried by
/// a later run only with larger limits (see [`RunLimits::exceeds`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct RunLimits {
    /// The per-period time limit in seconds, `None` for none.
    pub time_seconds: Option<f64>,
    /// The clause limit of the encoder.
    pub max_clauses: u64,
}

impl RunLimits {
    /// Whether `self` allows strictly more than `old` in some respect: a
    /// longer (or no) time limit, or a larger clause limit.
    pub fn exceeds(&self, old: &RunLimits) -> bool {
        let longer = match (self.time_seconds, old.time_seconds) {
            (None, Some(_)) => true,
            (Some(new), Some(old)) => new > old,
            _ => false,
        };
        longer || self.max_clauses > old.max_clauses
    }
}

/// Sizes and times of one answer.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct AnswerStats {
    /// Wall-clock seconds for the whole answer (encode, solve, check).
    pub seconds: f64,
    /// Seconds spent encoding (0 for a construction).
    pub encode_seconds: f64,
    /// Seconds spent solving (0 for a construction).
    pub solve_seconds: f64,
    /// Conflicts of the solver, when it ran.
    pub conflicts: Option<u64>,
    /// Variables of the CNF (0 for a construction).
    pub variables: u64,
    /// Clauses of the CNF (0 for a construction).
    pub clauses: u64,
}

/// One answer, as stored in `answers/<key>.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Answer {
    /// Always [`SCHEMA`].
    pub schema: String,
    /// [`key`] of `question` and `options`; also the file's name.
    pub key: String,
    /// The question.
    pub question: QuestionRecord,
    /// The encoding options as resolved for the question.
    pub options: EncodeOptions,
    /// The formulation (the one in `options`), by its stable name.
    pub formulation: Formulation,
    /// `feasible`, `infeasible` or `unknown`.
    #[serde(with = "verdict_word")]
    pub verdict: Verdict,
    /// How the answer was obtained.
    pub how: How,
    /// What backs the verdict.
    pub backing: Backing,
    /// The orbit `x_0..x_{p−1}` of a feasible answer.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub orbit: Option<Vec<Point>>,
    /// `‖x_0 − x_k‖∞` for `k = 1..=⌊p/2⌋`, for a feasible answer.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub profile: Option<Vec<i64>>,
    /// The whole map `(z, f(z))` on D of a feasible full-map answer, so that
    /// the stored evidence is self-contained (the orbit alone proves nothing
    /// on a point set).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub map: Option<Vec<(Point, Point)>>,
    /// Points of the box on which the extension of the orbit's shift to a
    /// nonexpansive map was built and checked by exhaustion, when it was.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub map_checked_points: Option<u64>,
    /// The proof of an infeasible answer.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub proof: Option<ProofRecord>,
    /// Why the answer is unknown.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
    /// The limits in force.
    pub limits: RunLimits,
    /// Sizes and times.
    pub stats: AnswerStats,
    /// The solver, when one ran.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub solver: Option<String>,
    /// The orbitcnf version that computed the answer.
    pub tool_version: String,
    /// The run that computed it ([`run_id`]).
    pub run_id: String,
    /// When its computation started (UTC, RFC 3339).
    pub started_at: String,
    /// When it finished (UTC, RFC 3339).
    pub finished_at: String,
}

impl Answer {
    /// Whether the verdict is feasible or infeasible.
    pub fn is_decided(&self) -> bool {
        self.verdict != Verdict::Unknown
    }

    /// The answer in words for messages: verdict, how, run, time, version.
    pub fn describe(&self) -> String {
        format!(
            "{} by {} (run {}, finished {}, orbitcnf {}, symmetry {}, count {}, packing {}, classes {})",
            self.verdict.word(),
            self.how.word(),
            self.run_id,
            self.finished_at,
            self.tool_version,
            self.options.symmetry.names(),
            on_off(self.options.count),
            on_off(self.options.packing),
            on_off(self.options.classes)
        )
    }
}

fn on_off(b: bool) -> &'static str {
    if b { "on" } else { "off" }
}

/// Serde for [`Verdict`] as its word (the report type only serialises).
mod verdict_word {
    use serde::{Deserialize, Deserializer, Serializer};

    use crate::report::Verdict;

    pub fn serialize<S: Serializer>(v: &Verdict, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(v.word())
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Verdict, D::Error> {
        let w = String::deserialize(d)?;
        match w.as_str() {
            "feasible" => Ok(Verdict::Feasible),
            "infeasible" => Ok(Verdict::Infeasible),
            "unknown" => Ok(Verdict::Unknown),
            other => Err(serde::de::Error::custom(format!(
                "unknown verdict {other:?} (expected feasible, infeasible or unknown)"
            ))),
        }
    }
}

#[derive(Serialize)]
struct KeyInput<'a> {
    question: &'a QuestionRecord,
    options: &'a EncodeOptions,
    formulation: Formulation,
}

/// The store key of a question under `resolved` options: the hex SHA-256 of
/// a domain tag and the JSON of question record, options and the options'
/// formulation version. Stable: field order is fixed by the types.
pub fn key(question: &QuestionRecord, resolved: &EncodeOptions) -> String {
    let input = KeyInput {
        question,
        options: resolved,
        formulation: resolved.formulation,
    };
    let mut bytes = KEY_DOMAIN.to_vec();
    bytes.extend(serde_json::to_vec(&input).expect("key input serialises"));
    sha256_hex(&bytes)
}

/// The key of `q` under `options` as they resolve for `q`.
pub fn key_for(q: &Question, options: &EncodeOptions) -> String {
    key(&q.record(), &options.resolve(q))
}

/// `t` as UTC in RFC 3339 with milliseconds: `2025-01-31T23:59:59.123Z`.
pub fn utc_timestamp(t: SystemTime) -> String {
    let d = t.duration_since(UNIX_EPOCH).unwrap_or_default();
    let secs = d.as_secs();
    let (y, m, day) = civil_from_days((secs / 86_400) as i64);
    let s = secs % 86_400;
    format!(
        "{y:04}-{m:02}-{day:02}T{:02}:{:02}:{:02}.{:03}Z",
        s / 3600,
        s / 60 % 60,
        s % 60,
        d.subsec_millis()
    )
}

/// Year, month, day of the proleptic Gregorian calendar for days since 1970-01-01.
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

/// A fresh run id: the UTC start time (to the millisecond) and the process
/// id, e.g. `20250131T235959.123Z-4242`. Unique per run and sortable by time.
pub fn run_id() -> String {
    let t = utc_timestamp(SystemTime::now()).replace(['-', ':'], "");
    format!("{t}-{}", std::process::id())
}

/// Fails with [`Error::Contradiction`] when `a` and `b` are answers to the
/// same question with different decided verdicts; `a` is named first.
///
/// # Errors
/// [`Error::Contradiction`] naming both answers.
pub fn check_agree(a: &Answer, a_where: &str, b: &Answer, b_where: &str) -> Result<()> {
    if a.question == b.question && a.is_decided() && b.is_decided() && a.verdict != b.verdict {
        return Err(Error::Contradiction {
            question: question_words(&a.question),
            first: format!("{a_where} says {}", a.describe()),
            second: format!("{b_where} says {}", b.describe()),
        });
    }
    Ok(())
}

/// `grid G (n = N), p = P`, for messages, with `, topical maps` after it
/// for a topical question.
pub fn question_words(q: &QuestionRecord) -> String {
    let class = if q.class.is_default() {
        String::new()
    } else {
        format!(", {} maps", q.class)
    };
    format!("grid {} (n = {}), p = {}{class}", q.grid, q.dim, q.period)
}

/// What [`Store::put`] did.
#[derive(Clone, Debug, PartialEq)]
pub enum Put {
    /// The answer was written.
    Written,
    /// A decided answer with the same verdict was already stored under the
    /// key (written by another run meanwhile); it was kept, and is returned.
    Kept(Box<Answer>),
}

/// What [`Store::recheck`] established about a stored answer.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Recheck {
    /// For a feasible answer: the orbit check.
    pub orbit: Option<OrbitCheck>,
    /// For an infeasible answer with a kept proof: the accepted proof.
    pub proof: Option<LratSummary>,
}

/// A results store in a folder (see the module documentation).
#[derive(Debug)]
pub struct Store {
    root: PathBuf,
    answers: BTreeMap<String, Answer>,
}

impl Store {
    /// Opens the store in `root`, creating the folders if needed, and reads
    /// every answer file.
    ///
    /// # Errors
    /// [`Error::Io`]; [`Error::Parse`] for an answer file that is not valid,
    /// has another schema, or whose key does not match its name or contents.
    pub fn open(root: &Path) -> Result<Store> {
        for sub in [ANSWERS_DIR, PROOFS_DIR] {
            let d = root.join(sub);
            std::fs::create_dir_all(&d).map_err(|e| Error::io(&d, e))?;
            // Killed runs leave temporary answer and proof files behind.
            crate::artifact::sweep_stale(&d, true);
        }
        let mut store = Store {
            root: root.to_path_buf(),
            answers: BTreeMap::new(),
        };
        let dir = root.join(ANSWERS_DIR);
        let mut names: Vec<PathBuf> = Vec::new();
        for entry in std::fs::read_dir(&dir).map_err(|e| Error::io(&dir, e))? {
            let entry = entry.map_err(|e| Error::io(&dir, e))?;
            let path = entry.path();
            let is_answer = path.extension().is_some_and(|x| x == "json")
                && !entry.file_name().to_string_lossy().starts_with('.');
            if is_answer {
                names.push(path);
            }
        }
        names.sort();
        for path in names {
            if let Some(a) = read_answer(&path)? {
                store.answers.insert(a.key.clone(), a);
            }
        }
        Ok(store)
    }

    /// The store's folder.
    pub fn root(&self) -> &Path {
        &self.root
    }

    /// The answer stored under `key`, as read when opened or last written.
    pub fn get(&self, key: &str) -> Option<&Answer> {
        self.answers.get(key)
    }

    /// Every stored answer, by key.
    pub fn answers(&self) -> impl Iterator<Item = &Answer> + '_ {
        self.answers.values()
    }

    /// The stored answers to `q`, under any options.
    pub fn for_question<'a>(&'a self, q: &'a QuestionRecord) -> impl Iterator<Item = &'a Answer> {
        self.answers.values().filter(move |a| &a.question == q)
    }

    /// The file of the answer under `key`.
    pub fn answer_path(&self, key: &str) -> PathBuf {
        self.root.join(ANSWERS_DIR).join(format!("{key}.json"))
    }

    /// Where run `run_id` writes the proof for `key`: the absolute path, and
    /// the path relative to the store recorded in the answer.
    pub fn proof_path(&self, key: &str, run_id: &str) -> (PathBuf, String) {
        let rel = format!("{PROOFS_DIR}/{key}.{run_id}.lrat");
        (self.root.join(&rel), rel)
    }

    /// The absolute path of a path recorded relative to the store.
    pub fn resolve(&self, relative: &str) -> PathBuf {
        self.root.join(relative)
    }

    /// A short description of where an answer is stored, for messages.
    pub fn describe_file(&self, key: &str) -> String {
        format!("the stored answer {}", self.answer_path(key).display())
    }

    /// Stores `answer` unless a decided answer is already under its key.
    ///
    /// The file of the key is re-read from disk first. Every decided answer
    /// to the same question (under any options, in memory or just read)
    /// must agree with `answer`'s verdict when `answer` is decided.
    ///
    /// # Errors
    /// [`Error::Contradiction`] naming the stored answer and the new one;
    /// [`Error::Parse`] when `answer.key` is not the key of its question and
    /// options; [`Error::Io`].
    pub fn put(&mut self, answer: Answer) -> Result<Put> {
        let path = self.answer_path(&answer.key);
        if answer.key != key(&answer.question, &answer.options) {
            return Err(Error::parse(
                path.display().to_string(),
                0,
                "the answer's key is not the key of its question and options",
            ));
        }
        if let Some(on_disk) = read_answer(&path)? {
            self.answers.insert(on_disk.key.clone(), on_disk);
        }
        for stored in self.for_question(&answer.question) {
            check_agree(
                stored,
                &self.describe_file(&stored.key),
                &answer,
                &format!("the new answer of run {}", answer.run_id),
            )?;
        }
        if let Some(stored) = self.answers.get(&answer.key) {
            if stored.is_decided() {
                return Ok(Put::Kept(Box::new(stored.clone())));
            }
        }
        let text = serde_json::to_string_pretty(&answer).expect("answers serialise") + "\n";
        write_atomically(&path, text.as_bytes())?;
        sync_dir(&self.root.join(ANSWERS_DIR));
        self.answers.insert(answer.key.clone(), answer);
        Ok(Put::Written)
    }

    /// Checks a stored answer again from its evidence alone: a feasible
    /// answer's orbit with [`crate::verify::check_orbit`]; an infeasible answer's
    /// proof file against its recorded SHA-256 and then with orbitcnf's LRAT
    /// checker against a fresh encoding of the question under the recorded
    /// options.
    ///
    /// # Errors
    /// [`Error::Check`] for a bad orbit; [`Error::Parse`] for a missing orbit,
    /// a digest mismatch, or a recorded proof the answer does not have;
    /// [`Error::Proof`] for a rejected proof; [`Error::Io`].
    pub fn recheck(&self, a: &Answer) -> Result<Recheck> {
        let q = Question::from_record(&a.question)?;
        let file = self.answer_path(&a.key).display().to_string();
        let mut out = Recheck {
            orbit: None,
            proof: None,
        };
        match a.verdict {
            Verdict::Feasible => {
                out.orbit = Some(check_stored_orbit(&q, a, &file)?);
            }
            Verdict::Infeasible => {
                let Some(rel) = a.proof.as_ref().and_then(|p| p.file.as_ref()) else {
                    return Ok(out);
                };
                let path = self.resolve(rel);
                let bytes = std::fs::read(&path).map_err(|e| Error::io(&path, e))?;
                let want = a.proof.as_ref().and_then(|p| p.sha256.as_deref());
                if want != Some(sha256_hex(&bytes).as_str()) {
                    return Err(Error::parse(
                        file,
                        0,
                        format!(
                            "the proof file {} does not match the SHA-256 recorded in the answer",
                            path.display()
                        ),
                    ));
                }
                let enc = encode::encode(&q, &a.options, u64::MAX)?;
                let options = LratOptions {
                    ids_follow_cnf: true,
                    ..LratOptions::default()
                };
                out.proof = Some(check_lrat_with(&enc.cnf, &bytes, &options)?);
            }
            Verdict::Unknown => {}
        }
        Ok(out)
    }

    /// The cheap check made on every stored answer a sweep reuses: a
    /// feasible answer's orbit is checked with [`crate::verify::check_orbit`]; an
    /// infeasible answer's kept proof must exist with its recorded size.
    ///
    /// # Errors
    /// As [`Store::recheck`], with [`Error::Parse`] for a missing proof file.
    pub fn quick_check(&self, a: &Answer) -> Result<()> {
        let q = Question::from_record(&a.question)?;
        let file = self.answer_path(&a.key).display().to_string();
        match a.verdict {
            Verdict::Feasible => {
                check_stored_orbit(&q, a, &file)?;
            }
            Verdict::Infeasible => {
                if let Some(p) = &a.proof {
                    if let Some(rel) = &p.file {
                        let path = self.resolve(rel);
                        let size = std::fs::metadata(&path).map(|m| m.len()).ok();
                        if size != Some(p.bytes) {
                            return Err(Error::parse(
                                file,
                                0,
                                format!(
                                    "its proof file {} is missing or has changed size; \
                                     delete the answer file to decide the period again",
                                    path.display()
                                ),
                            ));
                        }
                    }
                }
            }
            Verdict::Unknown => {}
        }
        Ok(())
    }
}

fn check_stored_orbit(q: &Question, a: &Answer, file: &str) -> Result<OrbitCheck> {
    let Some(orbit) = &a.orbit else {
        return Err(Error::parse(file, 0, "a feasible answer without an orbit"));
    };
    if orbit.len() != q.period {
        return Err(Error::parse(
            file,
            0,
            format!(
                "the orbit has {} points but the period is {}",
                orbit.len(),
                q.period
            ),
        ));
    }
    if a.options.formulation.encodes_map() {
        let Some(map) = &a.map else {
            return Err(Error::parse(
                file,
                0,
                "a feasible full-map answer without its map",
            ));
        };
        verify::check_self_map(q.domain().points(), map, orbit)?;
    }
    Ok(q.check_orbit(orbit)?)
}

/// Reads one answer file; `Ok(None)` when it does not exist.
fn read_answer(path: &Path) -> Result<Option<Answer>> {
    let bytes = match std::fs::read(path) {
        Ok(b) => b,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(Error::io(path, e)),
    };
    let name = path.display().to_string();
    let a: Answer = serde_json::from_slice(&bytes)
        .map_err(|e| Error::parse(&name, e.line(), format!("not an orbitcnf answer file: {e}")))?;
    if a.schema != SCHEMA {
        return Err(Error::parse(
            &name,
            0,
            format!("schema {:?}; this orbitcnf reads {SCHEMA:?}", a.schema),
        ));
    }
    let stem = path.file_stem().map(|s| s.to_string_lossy().into_owned());
    if stem.as_deref() != Some(a.key.as_str()) || a.key != key(&a.question, &a.options) {
        return Err(Error::parse(
            &name,
            0,
            "the key does not match the file name or the question and options inside; \
             the file was edited or moved",
        ));
    }
    Ok(Some(a))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;
    use crate::question::MapClass;

    fn answer(period: usize, verdict: Verdict, options: EncodeOptions, run: &str) -> Answer {
        let q = Question::new(Grid::parse("-1..1", Some(2)).unwrap(), period).unwrap();
        let resolved = options.resolve(&q);
        let formulation = resolved.formulation;
        Answer {
            schema: SCHEMA.into(),
            key: key(&q.record(), &resolved),
            question: q.record(),
            options: resolved,
            formulation,
            verdict,
            how: How::Solver,
            backing: Backing::None,
            orbit: None,
            profile: None,
            map: None,
            map_checked_points: None,
            proof: None,
            reason: None,
            limits: RunLimits {
                time_seconds: Some(1.0),
                max_clauses: 10,
            },
            stats: AnswerStats::default(),
            solver: None,
            tool_version: "test".into(),
            run_id: run.into(),
            started_at: "2025-01-01T00:00:00.000Z".into(),
            finished_at: "2025-01-01T00:00:01.000Z".into(),
        }
    }

    #[test]
    fn keys_are_stable_and_depend_on_question_and_options() {
        let a = answer(5, Verdict::Infeasible, EncodeOptions::default(), "r");
        let b = answer(5, Verdict::Infeasible, EncodeOptions::plain(), "r");
        let c = answer(6, Verdict::Infeasible, EncodeOptions::default(), "r");
        assert_eq!(a.key.len(), 64);
        assert_ne!(a.key, b.key);
        assert_ne!(a.key, c.key);
        assert_eq!(a.key, key(&a.question, &a.options));
    }

    #[test]
    fn nonexpansive_keys_are_unchanged_by_classes_and_topical_keys_differ() {
        // The literal is sha256sum of the key input written out by hand (the
        // domain line, then the JSON of question, options and formulation as
        // stores made before map classes existed spell it), so stores
        // written by older versions are still found.
        let record = |class| QuestionRecord {
            dim: 2,
            grid: "-1..1,-1..1".into(),
            period: 5,
            class,
            points: None,
        };
        let options = EncodeOptions::default();
        assert_eq!(
            key(&record(MapClass::Nonexpansive), &options),
            "919a13f12f7ea9ba7fad8be039643be110cc2be1c86f0584daa814ef61caafc5"
        );
        let topical = record(MapClass::Topical);
        assert_ne!(
            key(&topical, &options),
            key(&record(MapClass::Nonexpansive), &options)
        );
        let q = Question::from_record(&topical).unwrap();
        let plain = q.clone().with_class(MapClass::Nonexpansive);
        assert_ne!(key_for(&q, &options), key_for(&plain, &options));
        assert_eq!(
            question_words(&topical),
            "grid -1..1,-1..1 (n = 2), p = 5, topical maps"
        );
    }

    #[test]
    fn store_keeps_decided_answers_and_refuses_contradictions() {
        let dir = tempfile::tempdir().unwrap();
        let mut s = Store::open(dir.path()).unwrap();
        let first = answer(5, Verdict::Unknown, EncodeOptions::default(), "run-1");
        assert_eq!(s.put(first).unwrap(), Put::Written);
        // An unknown is replaced by a decided answer.
        let second = answer(5, Verdict::Infeasible, EncodeOptions::default(), "run-2");
        assert_eq!(s.put(second.clone()).unwrap(), Put::Written);
        // A decided answer is kept.
        let third = answer(5, Verdict::Infeasible, EncodeOptions::default(), "run-3");
        assert!(matches!(s.put(third).unwrap(), Put::Kept(a) if a.run_id == "run-2"));
        // A different verdict, even under other options, is a contradiction naming both runs.
        let other = answer(5, Verdict::Feasible, EncodeOptions::plain(), "run-4");
        let e = s.put(other).unwrap_err();
        let text = e.to_string();
        assert!(matches!(e, Error::Contradiction { .. }), "{text}");
        assert!(
            text.contains("run-2") && text.contains("run-4") && text.contains("p = 5"),
            "{text}"
        );
        // Reopening reads back exactly what was written.
        let again = Store::open(dir.path()).unwrap();
        assert_eq!(again.get(&second.key), Some(&second));
        assert_eq!(again.answers().count(), 1);
    }

    #[test]
    fn store_rejects_edited_files() {
        let dir = tempfile::tempdir().unwrap();
        let mut s = Store::open(dir.path()).unwrap();
        let a = answer(3, Verdict::Unknown, EncodeOptions::default(), "r");
        s.put(a.clone()).unwrap();
        let path = s.answer_path(&a.key);
        let text = std::fs::read_to_string(&path).unwrap();
        std::fs::write(&path, text.replace("\"period\": 3", "\"period\": 4")).unwrap();
        let e = Store::open(dir.path()).unwrap_err().to_string();
        assert!(e.contains("key does not match"), "{e}");
        std::fs::write(&path, "{ not json").unwrap();
        let e = Store::open(dir.path()).unwrap_err().to_string();
        assert!(e.contains("not an orbitcnf answer file"), "{e}");
    }

    #[test]
    fn retry_needs_larger_limits() {
        let old = RunLimits {
            time_seconds: Some(10.0),
            max_clauses: 100,
        };
        let same = old;
        let longer = RunLimits {
            time_seconds: Some(20.0),
            ..old
        };
        let unlimited = RunLimits {
            time_seconds: None,
            ..old
        };
        let bigger = RunLimits {
            max_clauses: 200,
            ..old
        };
        assert!(!same.exceeds(&old));
        assert!(longer.exceeds(&old) && unlimited.exceeds(&old) && bigger.exceeds(&old));
        assert!(!old.exceeds(&longer));
    }

    #[test]
    fn timestamps_are_rfc3339_utc() {
        let t = UNIX_EPOCH + std::time::Duration::from_millis(1_700_000_000_123);
        assert_eq!(utc_timestamp(t), "2023-11-14T22:13:20.123Z");
        assert_eq!(utc_timestamp(UNIX_EPOCH), "1970-01-01T00:00:00.000Z");
        let t = UNIX_EPOCH + std::time::Duration::from_secs(951_782_400); // leap day 2000
        assert_eq!(utc_timestamp(t), "2000-02-29T00:00:00.000Z");
    }
}
