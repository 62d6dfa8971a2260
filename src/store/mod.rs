//! The results store: one JSON file per answer, written so that a completed
//! answer survives a crash at any moment.
//!
//! # Layout
//!
//! ```text
//! DIR/answers/<key>.json            one [`Answer`] per file
//! DIR/proofs/<key>.<run-id>.lrat    the LRAT proof of an infeasible answer
//! DIR/quarantine/                   files set aside (see below)
//! ```
//!
//! An infeasible answer decided in cubes (`merge --store`) keeps no proof
//! here: it names its split folder and the SHA-256 of the folder's
//! manifest ([`CubesRecord`]), which every reuse compares and a full
//! [`Store::recheck`] follows by merging the folder again
//! ([`crate::evidence::check_split_refutation`]).
//!
//! The key ([`key`]) is the hex SHA-256 of the question record, the encoding
//! options as resolved for the question ([`EncodeOptions::resolve`](crate::encode::EncodeOptions::resolve)) and the
//! formulation version, so two runs that would build the same CNF share a
//! key, and a change of options or formulation gives a new one.
//!
//! # Why a completed answer survives a crash
//!
//! Every file is written by [`crate::artifact::write_atomically`]: the bytes go
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
//!
//! # Bad files are set aside, never deleted
//!
//! A file in `answers/` that is not a valid answer (not JSON, another
//! schema, a key that does not match its name or contents, a stray file
//! ending in `.json`), and an answer whose evidence fails its check when it
//! is reused (a missing or edited proof file, an orbit that fails; see
//! [`Store::set_aside`]), is moved into `quarantine/` under its own name
//! (with `.1`, `.2`, … appended when the name is taken) together with its
//! proof file, and recorded as a [`SetAside`]. Nothing else happens to it:
//! the store reads on without it, so its period is decided again. Only a
//! file that cannot be moved is an error, and only when an answer is to be
//! written under its name ([`Store::put`] never overwrites a file it could
//! not read). Contradictions between readable answers are not "bad files":
//! they stay errors.

mod answer;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Serialize;

pub use crate::artifact::sha256_file;
pub use answer::{
    Answer, AnswerStats, Backing, CubesRecord, DivisorRecord, How, ProofRecord, RunLimits, SCHEMA,
    check_agree, key, key_for, question_words, run_id, utc_timestamp,
};

use crate::artifact::{sha256_hex, sync_dir, write_atomically};
use crate::encode;
use crate::error::{Error, Result};
use crate::proof::{LratOptions, LratSummary, check_lrat_with};
use crate::question::{Question, QuestionRecord};
use crate::report::Verdict;
use crate::verify::OrbitCheck;

/// Sub-folder of the answer files.
pub const ANSWERS_DIR: &str = "answers";
/// Sub-folder of the proof files.
pub const PROOFS_DIR: &str = "proofs";
/// Sub-folder of the split folders that sweeps run inside the store
/// (`splits/<key>`, one per question and options).
pub const SPLITS_DIR: &str = "splits";
/// Sub-folder of the files set aside ([`SetAside`]).
pub const QUARANTINE_DIR: &str = "quarantine";

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
    /// For an infeasible answer decided in cubes: the split folder merged
    /// again.
    pub cubes: Option<crate::evidence::SplitRefutation>,
}

impl Recheck {
    /// Whether an infeasible answer's refutation (a proof, or a split's
    /// cubes) was checked again, not only its file's presence.
    pub fn refutation_checked(&self) -> bool {
        self.proof.is_some() || self.cubes.is_some()
    }
}

/// A file of the store that could not be used, and where it went.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct SetAside {
    /// The file where it was found.
    pub file: PathBuf,
    /// Where it was moved (in `quarantine/`); `None` when it could not be
    /// moved (then `reason` says why, and the file is left alone).
    pub moved_to: Option<PathBuf>,
    /// What was wrong with it.
    pub reason: String,
    /// The period of the answer, when the file could be read that far.
    pub period: Option<usize>,
}

impl SetAside {
    /// One line for people: what, why, where it went.
    pub fn describe(&self) -> String {
        let period = self
            .period
            .map(|p| format!(" (p = {p})"))
            .unwrap_or_default();
        match &self.moved_to {
            Some(to) => format!(
                "{}{period}: {}; moved to {}",
                self.file.display(),
                self.reason,
                to.display()
            ),
            None => format!("{}{period}: {}", self.file.display(), self.reason),
        }
    }
}

/// A results store in a folder (see the module documentation).
#[derive(Debug)]
pub struct Store {
    root: PathBuf,
    answers: BTreeMap<String, Answer>,
    set_aside: Vec<SetAside>,
}

impl Store {
    /// Opens the store in `root`, creating the folders if needed, and reads
    /// every answer file. A file that is not a valid answer (not JSON,
    /// another schema, a key that does not match its name or contents) is
    /// set aside ([`Store::set_aside_files`]), not read.
    ///
    /// # Errors
    /// [`Error::Io`] when a folder cannot be created or listed.
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
            set_aside: Vec::new(),
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
            match read_answer(&path) {
                Ok(Some(a)) => {
                    store.answers.insert(a.key.clone(), a);
                }
                Ok(None) => {}
                Err(e) => {
                    store.move_aside(&path, why(&e), None);
                }
            }
        }
        Ok(store)
    }

    /// The files this store has set aside since it was opened, in order.
    pub fn set_aside_files(&self) -> &[SetAside] {
        &self.set_aside
    }

    /// Sets aside the answer under `key` (and its proof file, when it has
    /// one) because its evidence failed a check (`reason`): both files are
    /// moved into `quarantine/` and the answer is forgotten, so its period
    /// is decided again. Returns what was set aside.
    pub fn set_aside(&mut self, key: &str, reason: &str) -> Vec<SetAside> {
        let first = self.set_aside.len();
        let Some(a) = self.answers.remove(key) else {
            return Vec::new();
        };
        let period = Some(a.question.period);
        self.move_aside(&self.answer_path(key), reason.to_string(), period);
        if let Some(rel) = a.proof.as_ref().and_then(|p| p.file.as_ref()) {
            let proof = self.resolve(rel);
            if proof.exists() {
                let why = format!("the proof of the answer {key}.json, set aside with it");
                self.move_aside(&proof, why, period);
            }
        }
        self.set_aside[first..].to_vec()
    }

    /// Moves `path` into `quarantine/` under a free name and records it;
    /// returns whether it was moved.
    fn move_aside(&mut self, path: &Path, reason: String, period: Option<usize>) -> bool {
        let dir = self.root.join(QUARANTINE_DIR);
        let moved = std::fs::create_dir_all(&dir).and_then(|()| {
            let name = path.file_name().unwrap_or_default().to_string_lossy();
            let mut target = dir.join(&*name);
            let mut n = 0;
            while target.exists() {
                n += 1;
                target = dir.join(format!("{name}.{n}"));
            }
            std::fs::rename(path, &target).map(|()| target)
        });
        let (moved_to, reason) = match moved {
            Ok(to) => (Some(to), reason),
            Err(e) => (None, format!("{reason}; it could not be moved aside: {e}")),
        };
        let ok = moved_to.is_some();
        self.set_aside.push(SetAside {
            file: path.to_path_buf(),
            moved_to,
            reason,
            period,
        });
        ok
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

    /// Where a sweep splits the question stored under `key` when it runs
    /// the cubes inside the store: the absolute path, and the path relative
    /// to the store recorded in the answer.
    pub fn split_path(&self, key: &str) -> (PathBuf, String) {
        let rel = format!("{SPLITS_DIR}/{key}");
        (self.root.join(&rel), rel)
    }

    /// The absolute path of a path recorded relative to the store (an
    /// absolute path stays as it is).
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
    /// A file under the key that is not a valid answer is set aside first
    /// ([`Store::set_aside_files`]); one that cannot be moved aside is an
    /// error, and is not overwritten.
    ///
    /// # Errors
    /// [`Error::Contradiction`] naming the stored answer and the new one;
    /// [`Error::Parse`] when `answer.key` is not the key of its question and
    /// options, or when a bad file under the key cannot be moved aside;
    /// [`Error::Io`].
    pub fn put(&mut self, answer: Answer) -> Result<Put> {
        let path = self.answer_path(&answer.key);
        if answer.key != key(&answer.question, &answer.options) {
            return Err(Error::parse(
                path.display().to_string(),
                0,
                "the answer's key is not the key of its question and options",
            ));
        }
        match read_answer(&path) {
            Ok(Some(on_disk)) => {
                self.answers.insert(on_disk.key.clone(), on_disk);
            }
            Ok(None) => {}
            Err(e) => {
                let period = Some(answer.question.period);
                self.answers.remove(&answer.key);
                if !self.move_aside(&path, why(&e), period) {
                    return Err(Error::parse(
                        path.display().to_string(),
                        0,
                        format!(
                            "not a valid answer ({}), and it could not be moved aside, \
                             so it is not overwritten",
                            why(&e)
                        ),
                    ));
                }
            }
        }
        for stored in self.for_question(&answer.question) {
            check_agree(
                stored,
                &self.describe_file(&stored.key),
                &answer,
                &format!("the new answer of run {}", answer.run_id),
            )?;
        }
        if let Some(stored) = self.answers.get(&answer.key)
            && stored.is_decided()
        {
            return Ok(Put::Kept(Box::new(stored.clone())));
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
            cubes: None,
        };
        match a.verdict {
            Verdict::Feasible => {
                out.orbit = Some(check_stored_orbit(&q, a, &file)?);
            }
            Verdict::Infeasible if a.backing == Backing::Divisor => {
                let source = self.divisor_source(a, &file)?;
                let r = self
                    .recheck(source)
                    .map_err(|e| refused(&file, source, &e))?;
                out.proof = r.proof;
                out.cubes = r.cubes;
            }
            Verdict::Infeasible if a.backing == Backing::CheckedCubes => {
                let c = cubes_record(a, &file)?;
                let r = crate::evidence::check_split_refutation(
                    &q,
                    &a.options,
                    &self.resolve(&c.folder),
                    &c.manifest_sha256,
                    crate::pool::default_jobs(),
                )
                .map_err(|e| Error::parse(&file, 0, format!("its split folder: {}", why(&e))))?;
                out.cubes = Some(r);
            }
            Verdict::Infeasible => {
                let Some(rel) = a.proof.as_ref().and_then(|p| p.file.as_ref()) else {
                    return Ok(out);
                };
                let path = self.resolve(rel);
                let bytes = std::fs::read(&path).map_err(|e| match e.kind() {
                    std::io::ErrorKind::NotFound => Error::parse(
                        &file,
                        0,
                        format!("its proof file {} is missing", path.display()),
                    ),
                    _ => Error::io(&path, e),
                })?;
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
            Verdict::Infeasible if a.backing == Backing::Divisor => {
                let source = self.divisor_source(a, &file)?;
                self.quick_check(source)
                    .map_err(|e| refused(&file, source, &e))?;
            }
            Verdict::Infeasible if a.backing == Backing::CheckedCubes => {
                let c = cubes_record(a, &file)?;
                let digest = crate::evidence::split_manifest_digest(&self.resolve(&c.folder))
                    .map_err(|e| {
                        Error::parse(&file, 0, format!("its split folder: {}", why(&e)))
                    })?;
                if digest != c.manifest_sha256 {
                    return Err(Error::parse(
                        file,
                        0,
                        format!(
                            "the manifest of its split folder {} is not the one recorded \
                             (SHA-256 differs)",
                            c.folder
                        ),
                    ));
                }
            }
            Verdict::Infeasible => {
                if let Some(p) = &a.proof
                    && let Some(rel) = &p.file
                {
                    let path = self.resolve(rel);
                    let size = std::fs::metadata(&path).map(|m| m.len()).ok();
                    if size != Some(p.bytes) {
                        return Err(Error::parse(
                            file,
                            0,
                            format!(
                                "its proof file {} is missing or has changed size",
                                path.display()
                            ),
                        ));
                    }
                }
            }
            Verdict::Unknown => {}
        }
        Ok(())
    }
}

impl Store {
    /// The stored answer an infeasible answer by the divisor rule was read
    /// off (docs/math.md §9), after checking that it can back it: it is
    /// stored under the recorded key, answers the same domain and class at
    /// the recorded period, that period divides `a`'s, and it is infeasible
    /// with a checked proof whose SHA-256 (when kept) is the recorded one.
    /// Its own evidence is checked by the caller.
    ///
    /// # Errors
    /// [`Error::Parse`] about `file` (the file of `a`) saying what is wrong.
    fn divisor_source<'a>(&'a self, a: &Answer, file: &str) -> Result<&'a Answer> {
        let bad = |why: String| Error::parse(file, 0, why);
        let Some(rec) = &a.divisor else {
            return Err(bad(
                "an answer by §9 that does not name the period it follows from".into(),
            ));
        };
        let p = rec.period;
        let Some(source) = self.get(&rec.key) else {
            return Err(bad(format!(
                "it is infeasible because p = {p} is (§9), but the answer to p = {p} \
                 ({}) is not in the store",
                self.answer_path(&rec.key).display()
            )));
        };
        let mut same_domain = source.question.clone();
        same_domain.period = a.question.period;
        if same_domain != a.question || source.question.period != p {
            return Err(bad(format!(
                "the answer it follows from ({}) is not about p = {p} on the same domain and class",
                self.answer_path(&rec.key).display()
            )));
        }
        if p == 0 || !a.question.period.is_multiple_of(p) {
            return Err(bad(format!(
                "§9 derives infeasibility only for multiples, and {p} does not divide {}",
                a.question.period
            )));
        }
        if source.verdict != Verdict::Infeasible
            || !matches!(
                source.backing,
                Backing::CheckedProof | Backing::CheckedCubes
            )
        {
            return Err(bad(format!(
                "it is infeasible because p = {p} is (§9), but the stored answer to p = {p} is {} \
                 and not backed by a checked proof",
                source.verdict.word()
            )));
        }
        if source.evidence_sha256() != rec.proof_sha256 {
            return Err(bad(format!(
                "the proof of p = {p} is not the one this answer was derived from (SHA-256 differs)"
            )));
        }
        Ok(source)
    }
}

/// The split folder record of an answer backed by its cubes.
fn cubes_record<'a>(a: &'a Answer, file: &str) -> Result<&'a CubesRecord> {
    a.cubes.as_ref().ok_or_else(|| {
        Error::parse(
            file,
            0,
            "an answer decided in cubes that does not name its split folder",
        )
    })
}

/// The error refusing an answer by §9 (in `file`) because the answer it
/// follows from (`source`) failed its check with `e`.
fn refused(file: &str, source: &Answer, e: &Error) -> Error {
    Error::parse(
        file,
        0,
        format!(
            "it is infeasible because p = {} is (§9), but that answer fails its check: {}",
            source.question.period,
            why(e)
        ),
    )
}

fn check_stored_orbit(q: &Question, a: &Answer, file: &str) -> Result<OrbitCheck> {
    let Some(orbit) = &a.orbit else {
        return Err(Error::file(file, "a feasible answer without an orbit"));
    };
    let w = crate::evidence::check_witness(q, &a.options, orbit, a.map.as_deref())
        .map_err(|e| Error::file(file, e.to_string()))?;
    Ok(w.orbit)
}

/// What is wrong, for a [`SetAside`] (which names the file itself): the
/// reason of a parse error about a whole file, with its line when it has one.
pub fn why(e: &Error) -> String {
    match e {
        Error::Parse {
            line: 0, reason, ..
        } => reason.clone(),
        Error::Parse { line, reason, .. } => format!("line {line}: {reason}"),
        other => other.to_string(),
    }
}

/// Reads one answer file; `Ok(None)` when it does not exist.
fn read_answer(path: &Path) -> Result<Option<Answer>> {
    let bytes = match std::fs::read(path) {
        Ok(b) => b,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(Error::io(path, e)),
    };
    let name = path.display().to_string();
    // serde's message names the line and column itself.
    let a: Answer = serde_json::from_slice(&bytes)
        .map_err(|e| Error::file(&name, format!("not an orbitcnf answer file: {e}")))?;
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
    use super::answer::tests::answer;
    use super::*;
    use crate::encode::EncodeOptions;

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
    fn store_sets_aside_edited_and_stray_files_and_reads_on() {
        let dir = tempfile::tempdir().unwrap();
        let mut s = Store::open(dir.path()).unwrap();
        let a = answer(3, Verdict::Unknown, EncodeOptions::default(), "r");
        let b = answer(4, Verdict::Unknown, EncodeOptions::default(), "r");
        s.put(a.clone()).unwrap();
        s.put(b.clone()).unwrap();
        let path = s.answer_path(&a.key);
        let text = std::fs::read_to_string(&path).unwrap();
        let edited = text.replace("\"period\": 3", "\"period\": 5");
        std::fs::write(&path, &edited).unwrap();
        let stray = dir.path().join(ANSWERS_DIR).join("notes.json");
        std::fs::write(&stray, "{ not json").unwrap();
        let s = Store::open(dir.path()).unwrap();
        // The good answer is read; the two bad files are moved, not read.
        assert_eq!(s.answers().count(), 1);
        assert_eq!(s.get(&b.key), Some(&b));
        let aside = s.set_aside_files();
        assert_eq!(aside.len(), 2, "{aside:?}");
        let by_name = |n: &str| aside.iter().find(|f| f.file.ends_with(n)).unwrap();
        let key_file = format!("{}.json", a.key);
        assert!(by_name(&key_file).reason.contains("key does not match"));
        assert!(
            by_name("notes.json")
                .reason
                .contains("not an orbitcnf answer file")
        );
        let quarantine = dir.path().join(QUARANTINE_DIR);
        assert_eq!(
            std::fs::read_to_string(quarantine.join(&key_file)).unwrap(),
            edited
        );
        assert!(!path.exists() && !stray.exists());
        // A second bad file of the same name gets a free name beside it.
        std::fs::write(&stray, "[]").unwrap();
        let s = Store::open(dir.path()).unwrap();
        assert_eq!(
            s.set_aside_files()[0].moved_to,
            Some(quarantine.join("notes.json.1"))
        );
        assert_eq!(
            std::fs::read_to_string(quarantine.join("notes.json.1")).unwrap(),
            "[]"
        );
    }

    #[test]
    fn put_sets_aside_a_bad_file_under_its_key_before_writing() {
        let dir = tempfile::tempdir().unwrap();
        let mut s = Store::open(dir.path()).unwrap();
        let a = answer(3, Verdict::Unknown, EncodeOptions::default(), "r");
        let path = s.answer_path(&a.key);
        std::fs::write(&path, "torn").unwrap();
        assert_eq!(s.put(a.clone()).unwrap(), Put::Written);
        assert_eq!(s.set_aside_files().len(), 1);
        let moved = s.set_aside_files()[0].moved_to.clone().unwrap();
        assert_eq!(std::fs::read_to_string(moved).unwrap(), "torn");
        assert_eq!(Store::open(dir.path()).unwrap().get(&a.key), Some(&a));
    }

    #[test]
    fn set_aside_moves_an_answer_with_its_proof_and_forgets_it() {
        let dir = tempfile::tempdir().unwrap();
        let mut s = Store::open(dir.path()).unwrap();
        let mut a = answer(5, Verdict::Infeasible, EncodeOptions::default(), "r");
        let (proof, rel) = s.proof_path(&a.key, "r");
        std::fs::write(&proof, "1 0 0\n").unwrap();
        a.proof = Some(ProofRecord {
            file: Some(rel),
            sha256: None,
            bytes: 6,
            steps: 1,
            check_seconds: 0.0,
        });
        s.put(a.clone()).unwrap();
        let aside = s.set_aside(&a.key, "its proof is bad");
        assert_eq!(aside.len(), 2, "{aside:?}");
        assert!(
            aside
                .iter()
                .all(|f| f.moved_to.as_ref().is_some_and(|m| m.exists()))
        );
        assert!(aside.iter().all(|f| f.period == Some(5)));
        assert!(!proof.exists() && !s.answer_path(&a.key).exists());
        assert!(s.get(&a.key).is_none());
        assert!(Store::open(dir.path()).unwrap().get(&a.key).is_none());
        // Nothing under the key any more: nothing to set aside.
        assert!(s.set_aside(&a.key, "again").is_empty());
    }
}
