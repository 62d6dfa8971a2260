//! Many cubes of one formula, one solver: a standalone LRAT proof per cube.
//!
//! A split folder holds thousands of cubes of one formula `F`. Solving each
//! cube `F ∧ c` with a fresh solver pays, per cube, for loading `F` into
//! varisat and into its self-checker (which hashes every clause and produces
//! the LRAT hints), and forgets everything learned on the cube before. Here
//! one solver holds `F` and solves the cubes one after another *under
//! assumptions*: the cube's literals are assumed, not added. What the solver
//! learns is implied by `F` alone, so it stays valid for the next cube; on
//! neighbouring cubes of a profile split a short learned clause over a few
//! profile literals often refutes a whole run of cubes at once.
//!
//! # The proof of one cube
//!
//! varisat's checker reports every clause it learns (`AtClause`, with the
//! ids of the clauses that unit propagation used, in order) and, when a
//! solve under assumptions fails, the *failed core* `K ⊆ c` with the
//! propagation hints that make `¬K` a RUP clause of the current clause set
//! (`FailedAssumptions`). The recorder below keeps every learned clause with
//! its hints. For a refuted cube it writes an LRAT proof of the cube's own
//! CNF, `F` followed by one unit clause per cube literal in the cube's order
//! (as [`crate::split::run::cube_cnf`] builds it):
//!
//! 1. the learned clauses that the failed core's hints depend on,
//!    transitively (the *cone*), in the order they were learned, renumbered
//!    from `|F| + |c| + 1` on; each keeps its hints, which name clauses of
//!    `F` (id `i + 1` for varisat's input clause `i`) or earlier clauses of
//!    the cone, so each is a RUP step of `F` alone;
//! 2. the empty clause, with the hints "the units of `K`'s literals" first
//!    and then the core's propagation hints. Under the units `K` holds, and
//!    the propagation hints are exactly the check that `¬K` is RUP, so the
//!    last of them is falsified: a RUP step of the empty clause.
//!
//! Nothing here is trusted: the proof is an ordinary LRAT proof of the cube's
//! CNF, and the callers check it with orbitcnf's own checker
//! ([`crate::solve::refute::accept_proof`]) before they believe it, as they
//! check a fresh solver's proof. A mistake in the recording or the cone makes
//! a proof that the checker rejects, never a wrong verdict.
//!
//! # Limits
//!
//! The time limit is per cube: the recorder fails once the cube's deadline
//! has passed, which aborts varisat's solve (as the proof writers of
//! [`super::produce`] do). The answer is then unknown and the solver, whose
//! state after an aborted solve is not relied on, is replaced by a fresh one
//! for the next cube. The recorder's memory grows with the clauses learned
//! since the solver was made; past [`RECORD_LIMIT`] numbers the solver is
//! replaced between two cubes as well.
//!
//! A cube whose proof is longer than [`CONE_LIMIT`] steps also ends the
//! solver's life. After a hard cube the solver holds thousands of clauses
//! learned on it, and an easy cube that follows is often refuted through one
//! of them: its own proof then carries that clause's whole cone, written and
//! checked again for every such cube. Measured on the 103 cubes of
//! `{0,1,2,3}^4`, `p = 17` (2026-12-04): after cube 31 (51,352 conflicts)
//! each of the next 70 cubes had a proof of about 53,000 steps and took
//! 2.3 s, against 0.02–0.2 s from a fresh solver, which loads that formula
//! in about 0.1 s.
//!
//! The steps of an inherited cone are also large: their hints are long
//! resolution chains. On the million prefix cubes of `{−2,…,2}^4`,
//! `p = 30` (2026-12-05), 2.4% of the cubes had proofs of more than 1,000
//! steps (mostly one cone, repeated by cube after cube with no conflict of
//! its own, at about 1.5 KB a step) and held 90% of the 49 GB written for
//! the first 463,000 cubes. So a cube whose proof has more than
//! [`CONE_BYTES`] bytes also ends the solver's life. On cubes
//! 400000..401999 of that split (one range, binary proofs) that took the
//! proofs from 3.5 GB to 172 MB and the range from 41 s to 11 s wall; on
//! ranges without such cones (cubes 100000..101999 of it, 2000..2999 of
//! `p = 29`) nothing changed (16 MB and 7.9 MB; 5–6 s and 1.4–1.6 s).

use std::cell::RefCell;
use std::rc::Rc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use varisat::Solver;
use varisat::checker::{CheckedProofStep, CheckerData, ProofProcessor};

use super::lrat::LratFormat;
use super::lrat::write::LratWriter;
use crate::cnf::{Cnf, Lit};
use crate::error::{Error, Result};

const NAME: &str = "varisat-0.2.2";

/// Literals plus hints the recorder may hold before the solver is replaced
/// between two cubes (about 1 GB of memory at 8 bytes a number).
pub const RECORD_LIMIT: usize = 128 << 20;

/// The proof length (steps) past which the solver is replaced before the
/// next cube: writing and checking a step costs about 40 µs, so a cone this
/// long costs about what loading a formula of 100,000 clauses afresh does.
pub const CONE_LIMIT: u64 = 10_000;

/// The proof size (bytes) past which the solver is replaced before the
/// next cube (see the module docs).
pub const CONE_BYTES: u64 = 1_000_000;

/// How [`solve_in_sequence`] runs.
#[derive(Clone, Debug)]
pub struct SequenceOptions<'s> {
    /// Time limit for each cube, counted from the start of its solve.
    pub per_cube: Option<Duration>,
    /// A deadline for the whole sequence: a cube still open then is
    /// unknown, and so is every later cube (each is tried once the deadline
    /// has passed, and stops at its first step).
    pub deadline: Option<Instant>,
    /// The encoding of the proofs handed out.
    pub format: LratFormat,
    /// Set by another thread to abandon the cube being solved (it is then
    /// unknown) and every cube after it.
    pub stop: Option<&'s AtomicBool>,
    /// Replace the solver after a cube whose proof has more steps than this
    /// ([`CONE_LIMIT`] unless a test wants every path exercised).
    pub cone_limit: u64,
    /// Replace the solver after a cube whose proof has more bytes than
    /// this ([`CONE_BYTES`] by default; see the module docs).
    pub cone_bytes: u64,
}

/// The answer for one cube.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum CubeAnswer {
    /// A model of `F ∧ c`, indexed by [`crate::cnf::Var::index`], covering
    /// every variable of `F`. Not yet checked.
    Sat(Vec<bool>),
    /// An LRAT proof (in the chosen encoding) of the cube's CNF: `F` and then
    /// one unit clause per cube literal, in the cube's order. Not yet
    /// checked.
    Unsat {
        /// The proof's bytes.
        proof: Vec<u8>,
        /// Its addition steps.
        steps: u64,
        /// The literals of the failed core (a subset of the cube), in
        /// DIMACS form.
        core: Vec<i32>,
    },
    /// No answer, and why.
    Unknown(String),
}

/// One cube's answer with what it cost.
#[derive(Clone, Debug)]
pub struct CubeSolved {
    /// The answer.
    pub answer: CubeAnswer,
    /// Wall-clock seconds of this cube's solve and proof extraction.
    pub seconds: f64,
    /// Clauses the solver learned on this cube (one per conflict).
    pub conflicts: u64,
}

/// Solves `cubes` (each a caller's key and the cube's literals) one after
/// another with one varisat solver holding `cnf`, and calls `each` with every
/// cube's answer as soon as it is known. `each` returns whether to go on.
///
/// # Errors
/// [`Error::Solver`] when varisat fails other than by the time limit or the
/// stop flag, or its proof cannot be turned into a cube's proof; the errors
/// of `each`.
pub fn solve_in_sequence<K>(
    cnf: &Cnf,
    cubes: impl IntoIterator<Item = (K, Vec<Lit>)>,
    opts: &SequenceOptions<'_>,
    mut each: impl FnMut(K, CubeSolved) -> Result<bool>,
) -> Result<()> {
    let mut cubes = cubes.into_iter().peekable();
    let m = cnf.num_clauses() as u64;
    if let Some((_, hints)) = super::produce::refuted_while_loading(cnf) {
        // varisat stops numbering at such a clause (`produce`); every cube
        // is refuted by the one step that `F` alone allows.
        for (key, cube) in cubes {
            let start = Instant::now();
            let mut w = LratWriter::new(Vec::new(), opts.format);
            let id = m + cube.len() as u64 + 1;
            w.add(id, [], hints.iter().map(|&h| h as i64))
                .map_err(|e| solver_error(e.to_string()))?;
            let (proof, _) = w.finish().map_err(|e| solver_error(e.to_string()))?;
            let solved = CubeSolved {
                answer: CubeAnswer::Unsat {
                    proof,
                    steps: 1,
                    core: Vec::new(),
                },
                seconds: start.elapsed().as_secs_f64(),
                conflicts: 0,
            };
            if !each(key, solved)? {
                break;
            }
        }
        return Ok(());
    }
    let mut buf: Vec<varisat::Lit> = Vec::new();
    // One pass of this loop per solver: a solve aborted at its deadline, or
    // a full recorder, ends the solver's life.
    while cubes.peek().is_some() {
        let record = Rc::new(RefCell::new(Record {
            stop: opts.stop,
            ..Record::default()
        }));
        let mut recorder = Recorder {
            record: record.clone(),
        };
        let mut solver = Solver::new();
        solver.add_proof_processor(&mut recorder);
        crate::solve::bundled::load(&mut solver, cnf);
        if record.borrow().inputs != m {
            return Err(solver_error(format!(
                "the self-checker numbered {} input clauses, the formula has {m}",
                record.borrow().inputs
            )));
        }
        for (key, cube) in cubes.by_ref() {
            if opts.stop.is_some_and(|s| s.load(Ordering::Relaxed)) {
                return Ok(());
            }
            let start = Instant::now();
            {
                let mut r = record.borrow_mut();
                r.deadline = match (opts.per_cube.map(|t| start + t), opts.deadline) {
                    (Some(a), Some(b)) => Some(a.min(b)),
                    (a, b) => a.or(b),
                };
                r.failed = None;
                r.expired = false;
                r.learned_before = r.ids.len();
            }
            buf.clear();
            buf.extend(
                cube.iter()
                    .map(|l| varisat::Lit::from_dimacs(l.dimacs() as isize)),
            );
            solver.assume(&buf);
            let answer = solver.solve();
            let (answer, replace) = {
                let r = record.borrow();
                match answer {
                    Ok(true) => {
                        let mut model = vec![false; cnf.num_vars() as usize];
                        for l in solver.model().unwrap_or_default() {
                            if let Some(slot) = model.get_mut(l.var().index()) {
                                *slot = l.is_positive();
                            }
                        }
                        (CubeAnswer::Sat(model), false)
                    }
                    Ok(false) => {
                        let proof = r.cube_proof(m, &cube, opts.format)?;
                        let heavy = matches!(&proof, CubeAnswer::Unsat { steps, proof, .. }
                            if *steps > opts.cone_limit
                                || proof.len() as u64 > opts.cone_bytes);
                        (proof, heavy)
                    }
                    Err(_) if r.expired => {
                        let stopped = opts.stop.is_some_and(|s| s.load(Ordering::Relaxed));
                        let why = match opts.per_cube {
                            _ if stopped => "stopped".to_string(),
                            Some(t) if opts.deadline.is_none_or(|d| start + t <= d) => {
                                format!("time limit of {:.1} s reached", t.as_secs_f64())
                            }
                            _ => "time limit reached".to_string(),
                        };
                        (CubeAnswer::Unknown(why), true)
                    }
                    Err(e) => return Err(solver_error(e.to_string())),
                }
            };
            let (conflicts, full) = {
                let r = record.borrow();
                (
                    (r.ids.len() - r.learned_before) as u64,
                    r.lits.len() + r.hints.len() > RECORD_LIMIT,
                )
            };
            let solved = CubeSolved {
                answer,
                seconds: start.elapsed().as_secs_f64(),
                conflicts,
            };
            if !each(key, solved)? {
                return Ok(());
            }
            if replace || full {
                break;
            }
        }
    }
    Ok(())
}

fn solver_error(reason: String) -> Error {
    Error::Solver {
        solver: NAME.into(),
        reason,
    }
}

/// What the recorder keeps: every learned clause with its hints (varisat's
/// 0-based checker ids), and the last failed core.
#[derive(Default)]
struct Record<'s> {
    /// Input clauses numbered by the checker.
    inputs: u64,
    /// Checker id of each learned clause, increasing.
    ids: Vec<u64>,
    /// Where each learned clause's literals start in `lits` (one more entry
    /// at the end than `ids` has, once anything is learned).
    lit_start: Vec<usize>,
    /// Where each learned clause's hints start in `hints`.
    hint_start: Vec<usize>,
    lits: Vec<i32>,
    hints: Vec<u64>,
    /// The failed core of the last solve and its propagation hints.
    failed: Option<(Vec<i32>, Vec<u64>)>,
    /// Learned clauses before the current cube's solve.
    learned_before: usize,
    deadline: Option<Instant>,
    /// The caller's stop flag.
    stop: Option<&'s AtomicBool>,
    /// Set when the recorder aborted the solve.
    expired: bool,
}

impl Record<'_> {
    fn push(&mut self, id: u64, clause: &[varisat::Lit], hints: &[u64]) -> Result<()> {
        if self.ids.last().is_some_and(|&last| last >= id) || id < self.inputs {
            return Err(solver_error(format!(
                "the self-checker's clause ids are not increasing at {id}"
            )));
        }
        if self.ids.is_empty() {
            self.lit_start.push(0);
            self.hint_start.push(0);
        }
        self.ids.push(id);
        self.lits
            .extend(clause.iter().map(|l| l.to_dimacs() as i32));
        self.hints.extend_from_slice(hints);
        self.lit_start.push(self.lits.len());
        self.hint_start.push(self.hints.len());
        Ok(())
    }

    /// The position of learned clause `id`.
    fn find(&self, id: u64) -> Result<usize> {
        self.ids
            .binary_search(&id)
            .map_err(|_| solver_error(format!("a hint names clause {id}, which was not recorded")))
    }

    fn hints_of(&self, pos: usize) -> &[u64] {
        &self.hints[self.hint_start[pos]..self.hint_start[pos + 1]]
    }

    fn lits_of(&self, pos: usize) -> &[i32] {
        &self.lits[self.lit_start[pos]..self.lit_start[pos + 1]]
    }

    /// The LRAT proof of `F ∧ cube` (module documentation) from the last
    /// failed core, or from a learned empty clause when `F` itself was refuted.
    fn cube_proof(&self, m: u64, cube: &[Lit], format: LratFormat) -> Result<CubeAnswer> {
        let (core, props): (Vec<i32>, Vec<u64>) = match &self.failed {
            Some((core, props)) => (core.clone(), props.clone()),
            None => {
                // No core: the solver derived the empty clause from F.
                let empty = (0..self.ids.len())
                    .rev()
                    .find(|&p| self.lits_of(p).is_empty())
                    .ok_or_else(|| {
                        solver_error(
                            "unsatisfiable without a failed core or an empty clause".into(),
                        )
                    })?;
                (Vec::new(), vec![self.ids[empty]])
            }
        };
        // The cone of the hints, as positions in the record.
        let mut need: Vec<usize> = Vec::new();
        let mut seen = std::collections::HashSet::new();
        let mut stack: Vec<usize> = Vec::new();
        for &h in &props {
            if h >= m {
                let p = self.find(h)?;
                if seen.insert(p) {
                    stack.push(p);
                }
            }
        }
        while let Some(p) = stack.pop() {
            need.push(p);
            for &h in self.hints_of(p) {
                if h >= m {
                    let q = self.find(h)?;
                    if seen.insert(q) {
                        stack.push(q);
                    }
                }
            }
        }
        need.sort_unstable();
        let k = cube.len() as u64;
        let mut new_id = std::collections::HashMap::with_capacity(need.len());
        let mut next = m + k + 1;
        let mut w = LratWriter::new(Vec::new(), format);
        let io = |e: std::io::Error| solver_error(e.to_string());
        let map = |h: u64, new_id: &std::collections::HashMap<u64, u64>| -> Result<i64> {
            if h < m {
                Ok(h as i64 + 1)
            } else {
                new_id
                    .get(&h)
                    .map(|&x| x as i64)
                    .ok_or_else(|| solver_error(format!("clause {h} is used before it is learned")))
            }
        };
        for &p in &need {
            let hints = self
                .hints_of(p)
                .iter()
                .map(|&h| map(h, &new_id))
                .collect::<Result<Vec<i64>>>()?;
            w.add(next, self.lits_of(p).iter().copied(), hints)
                .map_err(io)?;
            new_id.insert(self.ids[p], next);
            next += 1;
        }
        let mut hints = Vec::with_capacity(core.len() + props.len());
        for &l in &core {
            let j = cube.iter().position(|c| c.dimacs() == l).ok_or_else(|| {
                solver_error(format!("the failed core has {l}, which the cube does not"))
            })?;
            hints.push((m + j as u64 + 1) as i64);
        }
        for &h in &props {
            hints.push(map(h, &new_id)?);
        }
        w.add(next, [], hints).map_err(io)?;
        let (proof, _) = w.finish().map_err(io)?;
        Ok(CubeAnswer::Unsat {
            proof,
            steps: need.len() as u64 + 1,
            core,
        })
    }
}

/// The proof processor varisat borrows; the record is shared with the loop
/// that reads it between solves.
struct Recorder<'s> {
    record: Rc<RefCell<Record<'s>>>,
}

impl ProofProcessor for Recorder<'_> {
    fn process_step(
        &mut self,
        step: &CheckedProofStep,
        _data: CheckerData,
    ) -> std::result::Result<(), anyhow::Error> {
        let mut r = self.record.borrow_mut();
        let stopped = r.stop.is_some_and(|s| s.load(Ordering::Relaxed));
        if stopped || r.deadline.is_some_and(|d| Instant::now() >= d) {
            r.expired = true;
            return Err(anyhow::anyhow!("orbitcnf: the cube's time is up"));
        }
        match step {
            CheckedProofStep::AddClause { .. }
            | CheckedProofStep::DuplicatedClause { .. }
            | CheckedProofStep::TautologicalClause { .. } => r.inputs += 1,
            CheckedProofStep::AtClause {
                id,
                clause,
                propagations,
                ..
            } => r
                .push(*id, clause, propagations)
                .map_err(|e| anyhow::anyhow!(e.to_string()))?,
            CheckedProofStep::FailedAssumptions {
                failed_core,
                propagations,
            } => {
                r.failed = Some((
                    failed_core.iter().map(|l| l.to_dimacs() as i32).collect(),
                    propagations.to_vec(),
                ));
            }
            _ => {}
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests;
