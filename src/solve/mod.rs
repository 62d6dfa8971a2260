//! Solver back-ends behind one trait.
//!
//! A [`Backend`] takes a [`Cnf`] and [`Limits`] and returns an [`Outcome`]
//! with [`SolveStats`]. This is the only module that knows any solver. Callers
//! never trust a back-end's word: a model is checked against every clause
//! ([`check_model`]) and then decoded and verified independently.

pub mod bundled;
pub mod certified;
pub mod external;
pub mod refute;

use std::sync::Arc;
use std::sync::atomic::AtomicU64;
use std::time::Duration;

use serde::Serialize;

use crate::cnf::{Cnf, clause_text};
use crate::error::{Error, Result};
use crate::progress::ProgressMode;

/// Bounds on the effort of one solve.
#[derive(Clone, Debug, Default)]
pub struct Limits {
    /// Wall-clock limit; `None` for no limit.
    pub time: Option<Duration>,
    /// How the solve shows its progress on stderr ([`crate::progress`]).
    pub progress: ProgressMode,
    /// A counter the solver adds its conflicts to while it runs, so that a
    /// caller can report on a solve it does not draw itself (the bundled
    /// solvers count one learned clause per conflict; others leave it).
    pub conflicts: Option<Arc<AtomicU64>>,
    /// A conflict budget: the bundled solvers give up (answer unknown) once
    /// this solve has more conflicts. It is checked when the solver flushes
    /// its proof buffer (as the time limit is), so a solve may run a few
    /// hundred conflicts over, but the same formula always stops at the same
    /// point, which makes the budget reproducible where a time limit is not.
    /// External solvers ignore it.
    pub max_conflicts: Option<u64>,
}

/// What a back-end answered.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Outcome {
    /// A model, indexed by [`crate::cnf::Var::index`], covering every variable of the CNF.
    Sat(Vec<bool>),
    /// The back-end claims the CNF is unsatisfiable.
    Unsat,
    /// No answer, with the reason (time limit, solver gave up, …).
    Unknown(String),
}

/// Statistics of one solve.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct SolveStats {
    /// The back-end's name.
    pub solver: String,
    /// Wall-clock seconds spent solving (not encoding).
    pub seconds: f64,
    /// Conflicts, where the back-end reports them. For the bundled solver this
    /// counts the clauses it learned, one per conflict.
    pub conflicts: Option<u64>,
}

/// The result of one solve.
#[derive(Clone, Debug)]
pub struct SolveResult {
    /// The answer.
    pub outcome: Outcome,
    /// How it went.
    pub stats: SolveStats,
    /// The checked proof behind an UNSAT answer, for back-ends that certify.
    pub proof: Option<refute::ProofInfo>,
}

/// A SAT solver that orbitcnf can drive.
pub trait Backend {
    /// A short name for reports, e.g. `varisat-0.2.2`.
    fn name(&self) -> String;

    /// Solves `cnf` within `limits`.
    ///
    /// # Errors
    /// [`Error::Solver`] when the back-end fails; running out of the limits is
    /// not an error but [`Outcome::Unknown`].
    fn solve(&mut self, cnf: &Cnf, limits: &Limits) -> Result<SolveResult>;
}

/// Checks that `model` satisfies every clause of `cnf`.
///
/// # Errors
/// [`Error::ModelViolates`] naming the first falsified clause, and `path` and
/// `first_line` (the file line of clause 0, or 0 for an in-memory CNF) to
/// locate it.
pub fn check_model(
    cnf: &Cnf,
    model: &[bool],
    path: &str,
    first_line: Option<&[usize]>,
) -> Result<()> {
    if model.len() < cnf.num_vars() as usize {
        return Err(Error::Decode(format!(
            "the model covers {} variables, the CNF has {}",
            model.len(),
            cnf.num_vars()
        )));
    }
    match cnf.first_falsified(model) {
        None => Ok(()),
        Some(index) => Err(Error::ModelViolates {
            path: path.to_string(),
            line: first_line.and_then(|l| l.get(index).copied()).unwrap_or(0),
            index,
            clause: clause_text(cnf.clause(index)),
        }),
    }
}
