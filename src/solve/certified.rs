//! The bundled solver with checked proofs: every "unsatisfiable" it reports
//! comes with an LRAT proof that orbitcnf's own checker has accepted.
//!
//! varisat writes the LRAT proof through `varisat-lrat` (see
//! [`crate::proof::produce`]) into a temporary file, which
//! [`crate::proof::lrat`] reads back in pieces and checks against the very
//! CNF that was solved (clause `i` is LRAT clause `i + 1`, derived clauses
//! must start at `m + 1`); the file is then renamed into place when asked
//! for and deleted otherwise, so memory does not grow with the proof. A binary DRAT proof of the same run passes through the
//! same metering sink as [`super::bundled`] (conflict count, progress line,
//! deadline) and can be kept for external checkers such as `rate`.
//! A rejected proof is an error, never a verdict.

use std::io::{BufWriter, Write};
use std::path::PathBuf;
use std::sync::atomic::Ordering;
use std::time::Instant;

use serde::Serialize;

use super::bundled::Meter;
use super::{Backend, Limits, Outcome, SolveResult, SolveStats};
use crate::artifact::{persist, temp_beside};
use crate::cnf::Cnf;
use crate::error::{Error, Result};
use crate::proof::lrat::{LratFileError, check_lrat_file};
use crate::proof::{LratOptions, LratSummary, ProofSinks, solve_with_proof_sinks};

/// The bundled solver, certifying its UNSAT answers.
#[derive(Clone, Debug, Default)]
pub struct Certified {
    /// Where to write the text LRAT proof of an UNSAT answer.
    pub lrat: Option<PathBuf>,
    /// Where to write the binary DRAT proof of an UNSAT answer.
    pub drat: Option<PathBuf>,
}

/// What backs an UNSAT answer of [`Certified`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ProofInfo {
    /// What the checker established.
    pub lrat: LratSummary,
    /// Size of the text LRAT proof in bytes.
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

const NAME: &str = "varisat-0.2.2 (LRAT)";

impl Backend for Certified {
    fn name(&self) -> String {
        NAME.into()
    }

    fn solve(&mut self, cnf: &Cnf, limits: &Limits) -> Result<SolveResult> {
        let start = Instant::now();
        // The LRAT proof goes to a file, beside its destination when there
        // is one, and is checked from there in pieces: a proof of gigabytes
        // then costs disk, not memory.
        let lrat_path = self
            .lrat
            .clone()
            .unwrap_or_else(|| std::env::temp_dir().join("orbitcnf-proof.lrat"));
        let lrat_tmp = temp_beside(&lrat_path)?;
        let drat_tmp = self.drat.as_deref().map(temp_beside).transpose()?;
        let inner: Option<Box<dyn Write>> = match (&drat_tmp, &self.drat) {
            (Some(t), Some(path)) => Some(Box::new(BufWriter::new(
                t.reopen().map_err(|e| Error::io(path, e))?,
            ))),
            _ => None,
        };
        let (mut meter, learned, _) = Meter::new(start, limits, inner);
        let mut lrat = BufWriter::with_capacity(
            1 << 20,
            lrat_tmp.reopen().map_err(|e| Error::io(&lrat_path, e))?,
        );
        let sinks = ProofSinks {
            lrat: Some(&mut lrat),
            lrat_binary: false,
            drat: Some(&mut meter),
            drat_binary: true,
        };
        let out = solve_with_proof_sinks(cnf, sinks, limits.time);
        let flushed = meter.flush();
        drop(meter);
        let out = out?;
        let stats = SolveStats {
            solver: NAME.into(),
            seconds: start.elapsed().as_secs_f64(),
            conflicts: Some(learned.load(Ordering::Relaxed)),
        };
        if out.outcome != Outcome::Unsat {
            return Ok(SolveResult {
                outcome: out.outcome,
                stats,
                proof: None,
            });
        }
        lrat.flush().map_err(|e| Error::io(&lrat_path, e))?;
        drop(lrat);
        let t = Instant::now();
        let options = LratOptions {
            ids_follow_cnf: true,
            ..LratOptions::default()
        };
        let summary = check_lrat_file(cnf, lrat_tmp.path(), &options).map_err(|e| match e {
            LratFileError::Io { path, source } => Error::io(&path, source),
            LratFileError::Rejected { source, .. } => Error::from(source),
        })?;
        let check_seconds = t.elapsed().as_secs_f64();
        let lrat_bytes = match &self.lrat {
            Some(path) => persist(lrat_tmp, path)?,
            None => lrat_tmp
                .as_file()
                .metadata()
                .map_err(|e| Error::io(&lrat_path, e))?
                .len(),
        };
        let mut drat_bytes = None;
        if let (Some(tmp), Some(path)) = (drat_tmp, &self.drat) {
            flushed.map_err(|e| Error::io(path, e))?;
            drat_bytes = Some(persist(tmp, path)?);
        }
        Ok(SolveResult {
            outcome: Outcome::Unsat,
            stats,
            proof: Some(ProofInfo {
                lrat: summary,
                lrat_bytes,
                lrat_file: self.lrat.clone(),
                drat_file: self.drat.clone(),
                drat_bytes,
                check_seconds,
            }),
        })
    }
}
