//! The one path from a CNF to a checked refutation, and back from a stored proof.
//!
//! Every "unsatisfiable" that orbitcnf certifies goes through here:
//!
//! * [`solve_bundled`] runs the bundled solver (varisat 0.2.2, proofs through
//!   [`crate::proof::produce`]) with its LRAT proof going to a temporary file
//!   ([`temp_proof_file`]), and on UNSAT checks that file with orbitcnf's own
//!   checker ([`crate::proof::check_lrat_file`], which reads it in pieces)
//!   before answering;
//! * [`accept_proof`] does the same for an LRAT proof that another program
//!   wrote into such a file (an external solver, or `rate` converting DRAT);
//! * [`recheck_file`] checks a proof kept on disk again, for the store,
//!   bundles, split folders and `verify-proof`, with the SHA-256 of the bytes
//!   it read.
//!
//! A checked proof is renamed to its destination only after it was
//! accepted, and the temporary file is deleted otherwise (when the answer is
//! not UNSAT, or the proof is rejected), so a proof file under its final
//! name has always passed the checker. A proof with no destination stays in
//! its temporary file for as long as the caller holds the [`CheckedProof`]
//! (cube proofs are lifted from there), and is then deleted.
//!
//! The proof is on disk, never in memory as a whole: a proof of gigabytes
//! costs disk space, and the memory of checking it follows the clauses it
//! keeps alive.

use std::fs::File;
use std::io::{BufWriter, Read, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Instant;

use serde::Serialize;
use sha2::{Digest, Sha256};
use tempfile::NamedTempFile;

use super::bundled::Meter;
use super::{Limits, Outcome, SolveStats};
use crate::artifact::{persist, temp_beside};
use crate::cnf::Cnf;
use crate::error::{Error, Result};
use crate::proof::lrat::compressed::ProofSource;
use crate::proof::lrat::{LratError, LratFileError, check_lrat_file, check_lrat_read};
use crate::proof::{LratFormat, LratOptions, LratSummary, ProofSinks, solve_with_proof_sinks};

/// The name of the bundled solver with proofs, in reports.
pub const BUNDLED_LRAT: &str = "varisat-0.2.2 (LRAT)";

/// What backs an UNSAT answer: a proof accepted by orbitcnf's checker.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ProofInfo {
    /// What the checker established.
    pub lrat: LratSummary,
    /// Size of the LRAT proof in bytes.
    pub lrat_bytes: u64,
    /// Where the LRAT proof was written, if it was.
    pub lrat_file: Option<PathBuf>,
    /// Where the binary DRAT proof was written, if it was.
    pub drat_file: Option<PathBuf>,
    /// Size of the binary DRAT proof in bytes, when one was written.
    pub drat_bytes: Option<u64>,
    /// Seconds spent checking the LRAT proof.
    pub check_seconds: f64,
}

/// Where the proofs of a refutation go.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct ProofPlan {
    /// Where to keep the checked LRAT proof; `None` keeps it only in a
    /// temporary file while the [`CheckedProof`] lives.
    pub lrat: Option<PathBuf>,
    /// The encoding of the LRAT proof the bundled solver writes.
    pub format: LratFormat,
    /// Where to keep a binary DRAT proof of the same run (bundled solver only).
    pub drat: Option<PathBuf>,
}

/// A proof accepted by orbitcnf's checker.
#[derive(Debug)]
pub struct CheckedProof {
    /// The record that goes into reports.
    pub info: ProofInfo,
    /// The temporary file that holds the proof when it was not kept.
    temp: Option<NamedTempFile>,
}

impl CheckedProof {
    /// The file that holds the proof: its destination, or the temporary file.
    pub fn path(&self) -> &Path {
        match (&self.temp, &self.info.lrat_file) {
            (Some(t), _) => t.path(),
            (None, Some(p)) => p,
            (None, None) => unreachable!("a checked proof is kept or held"),
        }
    }

    /// Opens the proof for reading.
    ///
    /// # Errors
    /// [`Error::Io`] naming the file.
    pub fn open(&self) -> Result<File> {
        File::open(self.path()).map_err(|e| Error::io(self.path(), e))
    }
}

/// The answer of [`solve_bundled`].
#[derive(Debug)]
pub struct Refutation {
    /// The answer; [`Outcome::Unsat`] only with a checked proof.
    pub outcome: Outcome,
    /// How the solve went.
    pub stats: SolveStats,
    /// The checked proof, for [`Outcome::Unsat`].
    pub proof: Option<CheckedProof>,
}

/// The temporary file for a proof headed to `dest` (beside it, so that it
/// can be renamed into place), or in the system's temporary folder. It is
/// deleted when dropped. Every proof file orbitcnf writes starts here.
///
/// # Errors
/// [`Error::Io`] naming the destination.
pub fn temp_proof_file(dest: Option<&Path>) -> Result<NamedTempFile> {
    match dest {
        Some(d) => temp_beside(d),
        None => temp_beside(&std::env::temp_dir().join("orbitcnf-proof")),
    }
}

/// A proof sink that fails once `stop` is set, which aborts varisat's solve.
struct Stoppable<'a, W> {
    inner: W,
    stop: Option<&'a AtomicBool>,
}

impl<W: Write> Write for Stoppable<'_, W> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        if self.stop.is_some_and(|s| s.load(Ordering::Relaxed)) {
            return Err(std::io::Error::other("stopped by orbitcnf"));
        }
        self.inner.write(buf)
    }
    fn flush(&mut self) -> std::io::Result<()> {
        self.inner.flush()
    }
}

/// Solves `cnf` with the bundled solver within `limits`; on UNSAT, checks
/// its LRAT proof (ids following the CNF) and keeps the proofs as `plan`
/// says. When `stop` is set during the solve, the solve is aborted and the
/// answer is [`Outcome::Unknown`].
///
/// # Errors
/// [`Error::Solver`] when the solver fails; [`Error::Proof`] when its proof
/// is rejected; [`Error::Io`] for the proof files.
pub fn solve_bundled(
    cnf: &Cnf,
    limits: &Limits,
    plan: &ProofPlan,
    stop: Option<&AtomicBool>,
) -> Result<Refutation> {
    let start = Instant::now();
    let lrat_tmp = temp_proof_file(plan.lrat.as_deref())?;
    let drat_tmp = plan
        .drat
        .as_deref()
        .map(|d| temp_proof_file(Some(d)))
        .transpose()?;
    let reopen = |t: &NamedTempFile| t.reopen().map_err(|e| Error::io(t.path(), e));
    let inner: Option<Box<dyn Write>> = match &drat_tmp {
        Some(t) => Some(Box::new(BufWriter::new(reopen(t)?))),
        None => None,
    };
    let (meter, signals) = Meter::new(start, limits, inner);
    let mut drat = Stoppable { inner: meter, stop };
    let mut lrat = BufWriter::with_capacity(1 << 20, reopen(&lrat_tmp)?);
    let sinks = ProofSinks {
        lrat: Some(&mut lrat),
        lrat_binary: plan.format == LratFormat::Binary,
        drat: Some(&mut drat),
        drat_binary: true,
    };
    let out = solve_with_proof_sinks(cnf, sinks, limits.time);
    let drat_flushed = drat.flush();
    drop(drat);
    let stopped = stop.is_some_and(|s| s.load(Ordering::Relaxed));
    let over_budget = signals.over_budget.load(Ordering::Relaxed);
    let timed_out = signals.timed_out.load(Ordering::Relaxed);
    let out = match out {
        // The budget stops the solve through a failing proof sink, which
        // varisat reports as an error; it is an unknown answer, not a failure.
        Err(_) if over_budget => Err(super::bundled::budget_words(limits)),
        // So does the meter's deadline, when it passes before the deadline
        // of the proof writers (both count from nearly the same instant).
        Err(_) if timed_out => Err(format!(
            "time limit of {:.1} s reached",
            limits.time.map(|t| t.as_secs_f64()).unwrap_or(0.0)
        )),
        Err(_) if stopped => Err("stopped".to_string()),
        o => Ok(o?),
    };
    let stats = SolveStats {
        solver: BUNDLED_LRAT.into(),
        seconds: start.elapsed().as_secs_f64(),
        conflicts: Some(signals.learned.load(Ordering::Relaxed)),
    };
    let outcome = match out {
        Err(why) => Outcome::Unknown(why),
        Ok(o) => o.outcome,
    };
    if outcome != Outcome::Unsat {
        return Ok(Refutation {
            outcome,
            stats,
            proof: None,
        });
    }
    lrat.flush().map_err(|e| Error::io(lrat_tmp.path(), e))?;
    drop(lrat);
    let options = LratOptions {
        ids_follow_cnf: true,
        ..LratOptions::default()
    };
    let mut proof = accept_proof(cnf, lrat_tmp, plan.lrat.as_deref(), &options)?;
    if let (Some(tmp), Some(path)) = (drat_tmp, &plan.drat) {
        drat_flushed.map_err(|e| Error::io(path, e))?;
        proof.info.drat_bytes = Some(persist(tmp, path)?);
        proof.info.drat_file = Some(path.clone());
    }
    Ok(Refutation {
        outcome,
        stats,
        proof: Some(proof),
    })
}

/// Checks the LRAT proof in `tmp` (a file from [`temp_proof_file`]) against
/// `cnf`; once it is accepted, renames it to `keep`, or holds it in the
/// returned [`CheckedProof`].
///
/// # Errors
/// [`Error::Proof`] when the proof is rejected (the file is deleted);
/// [`Error::Io`].
pub fn accept_proof(
    cnf: &Cnf,
    tmp: NamedTempFile,
    keep: Option<&Path>,
    options: &LratOptions,
) -> Result<CheckedProof> {
    let t = Instant::now();
    let summary = check_lrat_file(cnf, tmp.path(), options).map_err(|e| match e {
        LratFileError::Io { path, source } => Error::io(&path, source),
        LratFileError::Rejected { source, .. } => Error::Proof(source),
    })?;
    let check_seconds = t.elapsed().as_secs_f64();
    let (lrat_bytes, temp) = match keep {
        Some(path) => (persist(tmp, path)?, None),
        None => {
            let len = tmp
                .as_file()
                .metadata()
                .map_err(|e| Error::io(tmp.path(), e))?;
            (len.len(), Some(tmp))
        }
    };
    Ok(CheckedProof {
        info: ProofInfo {
            lrat: summary,
            lrat_bytes,
            lrat_file: keep.map(Path::to_path_buf),
            drat_file: None,
            drat_bytes: None,
            check_seconds,
        },
        temp,
    })
}

/// A stored proof, read once and checked.
#[derive(Debug)]
pub struct StoredProof {
    /// Hex SHA-256 of the file's bytes.
    pub sha256: String,
    /// Its size.
    pub bytes: u64,
    /// The checker's verdict.
    pub check: std::result::Result<LratSummary, LratError>,
}

impl StoredProof {
    /// The summary, after comparing the digest with `sha256` (when given):
    /// `mismatch` makes the error for a file that is not the one recorded.
    ///
    /// # Errors
    /// `mismatch()` for another digest; [`Error::Proof`] for a rejected proof.
    pub fn accepted(
        self,
        sha256: Option<&str>,
        mismatch: impl FnOnce() -> Error,
    ) -> Result<LratSummary> {
        if sha256.is_some_and(|want| want != self.sha256) {
            return Err(mismatch());
        }
        Ok(self.check?)
    }
}

/// Reads the LRAT proof at `path` once, in pieces: its SHA-256 and its
/// check against `cnf` with `options`.
///
/// # Errors
/// [`Error::Io`] when the file cannot be read; a rejected proof is not an
/// error here but [`StoredProof::check`].
pub fn recheck_file(cnf: &Cnf, path: &Path, options: &LratOptions) -> Result<StoredProof> {
    let file = File::open(path).map_err(|e| Error::io(path, e))?;
    // The digest is of the file as stored (compressed or not); the check
    // reads the proof inside.
    let hashing = Hashing {
        inner: file,
        hash: Sha256::new(),
        bytes: 0,
    };
    let mut proof = ProofSource::new(hashing).map_err(|e| Error::io(path, e))?;
    let check = check_lrat_read(cnf, &mut proof, options);
    // The checker stops at a rejected step: the digest needs the rest.
    let mut src = proof.into_inner();
    std::io::copy(&mut src, &mut std::io::sink()).map_err(|e| Error::io(path, e))?;
    Ok(StoredProof {
        sha256: format!("{:x}", src.hash.finalize()),
        bytes: src.bytes,
        check,
    })
}

/// A reader that hashes what passes through it.
struct Hashing<R> {
    inner: R,
    hash: Sha256,
    bytes: u64,
}

impl<R: Read> Read for Hashing<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.hash.update(&buf[..n]);
        self.bytes += n as u64;
        Ok(n)
    }
}

#[cfg(test)]
mod tests {
    use std::time::Duration;

    use super::*;
    use crate::proof::testgen::{php, strict};

    fn files_in(dir: &Path) -> usize {
        std::fs::read_dir(dir).unwrap().count()
    }

    #[test]
    fn proof_files_are_kept_for_unsat_only() {
        let dir = tempfile::tempdir().unwrap();
        let cnf = php(5, 4);
        for format in [LratFormat::Text, LratFormat::Binary] {
            let plan = ProofPlan {
                lrat: Some(dir.path().join(format!("{format:?}.lrat"))),
                format,
                drat: Some(dir.path().join(format!("{format:?}.drat"))),
            };
            let r = solve_bundled(&cnf, &Limits::default(), &plan, None).unwrap();
            assert_eq!(r.outcome, Outcome::Unsat);
            let info = r.proof.unwrap().info;
            let size = |p: &Path| std::fs::metadata(p).unwrap().len();
            let lrat = plan.lrat.as_deref().unwrap();
            assert_eq!(info.lrat_bytes, size(lrat));
            assert_eq!(info.lrat_file.as_deref(), Some(lrat));
            assert_eq!(info.drat_bytes, Some(size(plan.drat.as_deref().unwrap())));
            assert_eq!(info.lrat.format, format);
            assert_eq!(check_lrat_file(&cnf, lrat, &strict()).unwrap(), info.lrat);
        }
        // Only the four proofs are in the folder: no temporary file is left.
        assert_eq!(files_in(dir.path()), 4);

        let other = ProofPlan {
            lrat: Some(dir.path().join("q.lrat")),
            drat: Some(dir.path().join("q.drat")),
            ..ProofPlan::default()
        };
        let r = solve_bundled(&php(3, 3), &Limits::default(), &other, None).unwrap();
        match r.outcome {
            Outcome::Sat(m) => assert_eq!(php(3, 3).first_falsified(&m), None),
            o => panic!("{o:?}"),
        }
        assert!(r.proof.is_none());
        let limits = Limits {
            time: Some(Duration::from_millis(200)),
            ..Limits::default()
        };
        let t = Instant::now();
        let r = solve_bundled(&php(11, 10), &limits, &other, None).unwrap();
        assert!(matches!(r.outcome, Outcome::Unknown(ref w) if w.contains("time limit")));
        assert!(t.elapsed() < Duration::from_secs(5));
        assert_eq!(files_in(dir.path()), 4);
        // A stop request aborts the solve the same way.
        let stop = AtomicBool::new(true);
        let r = solve_bundled(&php(11, 10), &Limits::default(), &other, Some(&stop)).unwrap();
        assert!(matches!(r.outcome, Outcome::Unknown(_)));
        assert_eq!(files_in(dir.path()), 4);

        let nowhere = ProofPlan {
            lrat: Some(dir.path().join("no/such/dir/p")),
            ..ProofPlan::default()
        };
        let err = solve_bundled(&cnf, &Limits::default(), &nowhere, None);
        assert!(matches!(err, Err(Error::Io { .. })));
    }

    #[test]
    fn a_proof_without_destination_lives_as_long_as_its_record() {
        let plan = ProofPlan {
            format: LratFormat::Binary,
            ..ProofPlan::default()
        };
        let r = solve_bundled(&php(6, 5), &Limits::default(), &plan, None).unwrap();
        let proof = r.proof.unwrap();
        assert_eq!(proof.info.lrat.format, LratFormat::Binary);
        assert_eq!(proof.info.lrat.cnf_clauses, php(6, 5).num_clauses());
        assert_eq!(proof.info.lrat_file, None);
        let path = proof.path().to_path_buf();
        let mut bytes = Vec::new();
        proof.open().unwrap().read_to_end(&mut bytes).unwrap();
        assert_eq!(bytes.len() as u64, proof.info.lrat_bytes);
        drop(proof);
        assert!(!path.exists());
    }

    #[test]
    fn text_and_binary_proofs_of_one_run_say_the_same() {
        // varisat is deterministic: the same CNF gives the same steps, so the
        // two encodings must give equal summaries (but for the format).
        let cnf = php(7, 6);
        let summary = |format| {
            let plan = ProofPlan {
                format,
                ..ProofPlan::default()
            };
            let r = solve_bundled(&cnf, &Limits::default(), &plan, None).unwrap();
            let p = r.proof.unwrap();
            (p.info.lrat.clone(), p.info.lrat_bytes)
        };
        let (text, text_bytes) = summary(LratFormat::Text);
        let (binary, binary_bytes) = summary(LratFormat::Binary);
        assert_eq!(
            LratSummary {
                format: LratFormat::Text,
                ..binary
            },
            text
        );
        assert!(binary_bytes < text_bytes, "{binary_bytes} ≥ {text_bytes}");
    }

    #[test]
    fn stored_proofs_are_rechecked_with_their_digest() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("p.lrat");
        let cnf = php(5, 4);
        let plan = ProofPlan {
            lrat: Some(path.clone()),
            ..ProofPlan::default()
        };
        let info = solve_bundled(&cnf, &Limits::default(), &plan, None)
            .unwrap()
            .proof
            .unwrap()
            .info;
        let bytes = std::fs::read(&path).unwrap();
        let stored = recheck_file(&cnf, &path, &strict()).unwrap();
        assert_eq!(stored.sha256, crate::artifact::sha256_hex(&bytes));
        assert_eq!(stored.bytes, bytes.len() as u64);
        assert_eq!(stored.check.as_ref(), Ok(&info.lrat));
        let wrong = || Error::Options("another file".into());
        let digest = stored.sha256.clone();
        assert!(matches!(
            recheck_file(&cnf, &path, &strict())
                .unwrap()
                .accepted(Some("00"), wrong),
            Err(Error::Options(_))
        ));
        let again = recheck_file(&cnf, &path, &strict()).unwrap();
        assert_eq!(again.accepted(Some(&digest), wrong).unwrap(), info.lrat);
        // A proof cut in half: rejected, and the digest still covers every byte.
        std::fs::write(&path, &bytes[..bytes.len() / 2]).unwrap();
        let cut = recheck_file(&cnf, &path, &strict()).unwrap();
        assert!(cut.check.is_err());
        assert_eq!(
            cut.sha256,
            crate::artifact::sha256_hex(&bytes[..bytes.len() / 2])
        );
        assert!(matches!(cut.accepted(None, wrong), Err(Error::Proof(_))));
        let missing = recheck_file(&cnf, &dir.path().join("none"), &strict());
        assert!(matches!(missing, Err(Error::Io { .. })));
    }

    #[test]
    fn a_rejected_proof_is_never_kept() {
        let dir = tempfile::tempdir().unwrap();
        let keep = dir.path().join("kept.lrat");
        let tmp = temp_proof_file(Some(&keep)).unwrap();
        std::fs::write(tmp.path(), "23 0 1 2 0\n").unwrap();
        let err = accept_proof(&php(5, 4), tmp, Some(&keep), &strict()).unwrap_err();
        assert!(matches!(err, Error::Proof(_)), "{err}");
        assert_eq!(files_in(dir.path()), 0);
    }
}
