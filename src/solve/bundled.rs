//! The bundled pure-Rust solver, varisat 0.2.2.
//!
//! varisat 0.2.2 has no time limit, no conflict counter and no interrupt. It
//! does write a proof while solving, through a buffered writer that we supply,
//! and it aborts `solve` with an error as soon as that writer fails. So the
//! solver is handed a `Meter`: a binary-DRAT sink that counts the clauses
//! added (one learned clause per conflict), reports progress, and
//! fails once the deadline has passed. An aborted solve is reported as
//! [`Outcome::Unknown`]: no answer is ever derived from it, so the limit is
//! sound. Its granularity is one buffer flush of 8 KiB of proof, a few
//! milliseconds on hard formulas.

use std::io::{self, Write};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::time::Instant;

use varisat::solver::SolverError;
use varisat::{ExtendFormula, ProofFormat, Solver};

use super::{Backend, Limits, Outcome, SolveResult, SolveStats};
use crate::cnf::Cnf;
use crate::error::{Error, Result};
use crate::progress::{Progress, duration_words};

/// The bundled solver.
#[derive(Clone, Debug, Default)]
pub struct Bundled;

const NAME: &str = "varisat-0.2.2";

impl Backend for Bundled {
    fn name(&self) -> String {
        NAME.to_string()
    }

    fn solve(&mut self, cnf: &Cnf, limits: &Limits) -> Result<SolveResult> {
        let start = Instant::now();
        let (meter, signals) = Meter::new(start, limits, None);
        let MeterSignals {
            learned,
            timed_out,
            over_budget,
        } = signals;
        let mut solver = Solver::new();
        solver.write_proof(meter, ProofFormat::BinaryDrat);
        load(&mut solver, cnf);
        let answer = solver.solve();
        let outcome = match answer {
            Ok(true) => {
                let mut model = vec![false; cnf.num_vars() as usize];
                for l in solver.model().unwrap_or_default() {
                    if let Some(slot) = model.get_mut(l.var().index()) {
                        *slot = l.is_positive();
                    }
                }
                Outcome::Sat(model)
            }
            Ok(false) => Outcome::Unsat,
            Err(SolverError::ProofIoError { .. }) if over_budget.load(Ordering::Relaxed) => {
                Outcome::Unknown(budget_words(limits))
            }
            Err(SolverError::ProofIoError { .. }) if timed_out.load(Ordering::Relaxed) => {
                Outcome::Unknown(format!(
                    "time limit of {:.1} s reached",
                    limits.time.map(|t| t.as_secs_f64()).unwrap_or(0.0)
                ))
            }
            Err(e) => {
                return Err(Error::Solver {
                    solver: NAME.into(),
                    reason: e.to_string(),
                });
            }
        };
        drop(solver);
        Ok(SolveResult {
            outcome,
            stats: SolveStats {
                solver: NAME.into(),
                seconds: start.elapsed().as_secs_f64(),
                conflicts: Some(learned.load(Ordering::Relaxed)),
            },
            proof: None,
        })
    }
}

/// Why a solve stopped at its conflict budget, in words.
pub(crate) fn budget_words(limits: &Limits) -> String {
    format!(
        "conflict budget of {} reached",
        limits.max_conflicts.unwrap_or(0)
    )
}

/// Adds every clause of `cnf` to `solver`, in order (so clause `i` keeps
/// position `i`, which the LRAT numbering relies on).
pub(crate) fn load(solver: &mut Solver<'_>, cnf: &Cnf) {
    let mut buf: Vec<varisat::Lit> = Vec::new();
    for clause in cnf.clauses() {
        buf.clear();
        buf.extend(
            clause
                .iter()
                .map(|l| varisat::Lit::from_dimacs(l.dimacs() as isize)),
        );
        solver.add_clause(&buf);
    }
}

/// What a [`Meter`] tells its caller after the solve.
pub(crate) struct MeterSignals {
    /// The conflict counter (the caller's, when it gave one).
    pub(crate) learned: Arc<AtomicU64>,
    /// Set when the meter stopped the solve at the deadline.
    pub(crate) timed_out: Arc<AtomicBool>,
    /// Set when the meter stopped the solve at the conflict budget.
    pub(crate) over_budget: Arc<AtomicBool>,
}

#[derive(Clone, Copy, Debug)]
enum DratState {
    RecordStart,
    /// Inside a record; `true` while a multi-byte varint continues.
    InRecord(bool),
}

/// The proof sink: counts added clauses, reports progress, enforces the
/// deadline and the conflict budget, and forwards the binary DRAT to
/// `inner` when there is one.
pub(crate) struct Meter {
    deadline: Option<Instant>,
    start: Instant,
    learned: Arc<AtomicU64>,
    timed_out: Arc<AtomicBool>,
    /// Conflicts of this solve alone (`learned` may be shared by threads).
    own: u64,
    budget: Option<u64>,
    over_budget: Arc<AtomicBool>,
    progress: Progress,
    state: DratState,
    inner: Option<Box<dyn Write>>,
}

impl Meter {
    /// A meter for a solve started at `start` under `limits`; it counts
    /// into `limits.conflicts` when the caller gave a counter. Dropping it
    /// erases its progress line.
    pub(crate) fn new(
        start: Instant,
        limits: &Limits,
        inner: Option<Box<dyn Write>>,
    ) -> (Meter, MeterSignals) {
        let signals = MeterSignals {
            learned: limits.conflicts.clone().unwrap_or_default(),
            timed_out: Arc::new(AtomicBool::new(false)),
            over_budget: Arc::new(AtomicBool::new(false)),
        };
        let meter = Meter {
            deadline: limits.time.map(|t| start + t),
            start,
            learned: signals.learned.clone(),
            timed_out: signals.timed_out.clone(),
            own: 0,
            budget: limits.max_conflicts,
            over_budget: signals.over_budget.clone(),
            progress: Progress::new(limits.progress),
            state: DratState::RecordStart,
            inner,
        };
        (meter, signals)
    }
}

impl Write for Meter {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        // Binary DRAT: records 'a' or 'd', then varint literals, closed by a 0 byte.
        let mut added = 0u64;
        for &b in buf {
            self.state = match self.state {
                DratState::RecordStart => {
                    if b == b'a' {
                        added += 1;
                    }
                    DratState::InRecord(false)
                }
                DratState::InRecord(false) if b == 0 => DratState::RecordStart,
                DratState::InRecord(_) => DratState::InRecord(b & 0x80 != 0),
            };
        }
        let total = self.learned.fetch_add(added, Ordering::Relaxed) + added;
        self.own += added;
        if self.budget.is_some_and(|b| self.own > b) {
            self.over_budget.store(true, Ordering::Relaxed);
            return Err(io::Error::other("orbitcnf conflict budget reached"));
        }
        let now = Instant::now();
        if let Some(d) = self.deadline
            && now >= d
        {
            self.timed_out.store(true, Ordering::Relaxed);
            return Err(io::Error::other("orbitcnf time limit reached"));
        }
        if let Some(w) = self.inner.as_mut() {
            w.write_all(buf)?;
        }
        let start = self.start;
        self.progress.status(|| {
            format!(
                "solving with {NAME}: {}, {total} conflicts",
                duration_words(now.duration_since(start).as_secs_f64())
            )
        });
        Ok(buf.len())
    }

    fn flush(&mut self) -> io::Result<()> {
        match self.inner.as_mut() {
            Some(w) => w.flush(),
            None => Ok(()),
        }
    }
}
