//! The bundled solver with checked proofs, as a [`Backend`]: every
//! "unsatisfiable" it reports comes with an LRAT proof that orbitcnf's own
//! checker has accepted, by way of [`super::refute::solve_bundled`].
//!
//! The LRAT proof is written to a temporary file and checked from there in
//! pieces against the very CNF that was solved (clause `i` is LRAT clause
//! `i + 1`, derived clauses must start at `m + 1`); it is then renamed into
//! place when asked for and deleted otherwise, so memory does not grow with
//! the proof. A binary DRAT proof of the same run passes through the same
//! metering sink as [`super::bundled`] (conflict count, progress line,
//! deadline) and can be kept for external checkers such as `rate`. A
//! rejected proof is an error, never a verdict.

use std::path::PathBuf;

use super::refute::{BUNDLED_LRAT, ProofPlan, solve_bundled};
use super::{Backend, Limits, SolveResult};
use crate::cnf::Cnf;
use crate::error::Result;
use crate::proof::LratFormat;

pub use super::refute::ProofInfo;

/// The bundled solver, certifying its UNSAT answers.
#[derive(Clone, Debug, Default)]
pub struct Certified {
    /// Where to write the LRAT proof of an UNSAT answer.
    pub lrat: Option<PathBuf>,
    /// Where to write the binary DRAT proof of an UNSAT answer.
    pub drat: Option<PathBuf>,
    /// The encoding of the LRAT proof written to `lrat` (text unless asked
    /// otherwise). A proof that is only checked, not kept, is always binary:
    /// about half the bytes of text, and a little faster to write and read.
    pub format: LratFormat,
}

impl Certified {
    /// The bundled solver as a run in cubes asks for it: certifying, with
    /// the LRAT proof kept at `lrat` in `format`, or (`certify` false)
    /// taking its own word.
    pub fn or_bundled(
        certify: bool,
        lrat: Option<PathBuf>,
        format: LratFormat,
    ) -> Box<dyn Backend> {
        if certify {
            Box::new(Certified {
                lrat,
                drat: None,
                format,
            })
        } else {
            Box::new(super::bundled::Bundled)
        }
    }
}

impl Backend for Certified {
    fn name(&self) -> String {
        BUNDLED_LRAT.into()
    }

    fn solve(&mut self, cnf: &Cnf, limits: &Limits) -> Result<SolveResult> {
        let plan = ProofPlan {
            lrat: self.lrat.clone(),
            format: match self.lrat {
                Some(_) => self.format,
                None => LratFormat::Binary,
            },
            drat: self.drat.clone(),
        };
        let r = solve_bundled(cnf, limits, &plan, None)?;
        Ok(SolveResult {
            outcome: r.outcome,
            stats: r.stats,
            proof: r.proof.map(|p| p.info),
        })
    }
}
