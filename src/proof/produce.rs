//! Producing unsatisfiability proofs with the bundled solver, varisat 0.2.2.
//!
//! * **LRAT** comes from `varisat-lrat`'s `WriteLrat`, a *proof processor*:
//!   varisat checks its own proof while solving (self-checking) and hands
//!   every checked step, with the clause ids its checker assigned and the
//!   propagation hints it found, to the processor. Processors must be added
//!   before the first clause; the processor is borrowed by the solver, so the
//!   solver is dropped before the processor is flushed.
//! * **DRAT** is varisat's own proof writer (`Solver::write_proof`), text or
//!   binary. It costs little; LRAT costs the self-check (see the crate's
//!   measurements in the tests of this module).
//!
//! # Clause ids
//!
//! varisat's checker numbers the input clauses `0, 1, 2, …` in the order they
//! are added, and `WriteLrat` writes `id + 1`; so the CNF's clause `i` is LRAT
//! clause `i + 1`, as [`super::lrat`] expects. Duplicated and tautological
//! input clauses keep their place: each still gets its id (the writer then
//! deletes it), and an input clause with repeated literals is the same
//! clause. The first derived clause has id `m + 1`. The tests check this on
//! CNFs with duplicates, tautologies, repeated literals and unit clauses.
//!
//! There is one exception, which this module handles itself: when the input is
//! refuted *while loading* — an empty clause, or a unit clause whose negation
//! is an earlier unit clause — varisat stops numbering (and reading) the
//! clauses that follow, and its empty clause reuses an id of the CNF, or, for
//! an empty input clause, is never written. Such a CNF is refuted here without
//! the solver ([`ProofRoute::EmptyClause`], [`ProofRoute::ComplementaryUnits`]):
//! the LRAT proof is the single step `m+1 0 HINTS 0` and the DRAT proof the
//! empty clause.
//!
//! # Time limit
//!
//! As in [`crate::solve::bundled`], the limit is enforced by the proof
//! writers: every write checks the deadline and fails once it has passed,
//! which aborts the solve; the answer is then [`Outcome::Unknown`], never a
//! verdict, and no proof file is kept.

use std::cell::Cell;
use std::io::{self, Write};
use std::path::Path;
use std::rc::Rc;
use std::time::{Duration, Instant};

use varisat::solver::SolverError;
use varisat::{ExtendFormula, ProofFormat, Solver};
use varisat_lrat::WriteLrat;

use super::lrat::{LratOptions, LratSummary, check_lrat_with};
use crate::cnf::{Cnf, Lit};
use crate::error::{Error, Result};
use crate::solve::Outcome;

const NAME: &str = "varisat-0.2.2";

/// Where [`solve_with_proof_sinks`] writes proofs.
#[derive(Default)]
pub struct ProofSinks<'w> {
    /// The LRAT proof's target.
    pub lrat: Option<&'w mut dyn Write>,
    /// Binary LRAT instead of text.
    pub lrat_binary: bool,
    /// The DRAT proof's target.
    pub drat: Option<&'w mut dyn Write>,
    /// Binary DRAT instead of text.
    pub drat_binary: bool,
}

/// How the answer was reached.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub enum ProofRoute {
    /// The solver ran.
    Solver,
    /// The CNF contains the empty clause (0-based index `clause`); no solver ran.
    EmptyClause {
        /// Index of the first empty clause.
        clause: usize,
    },
    /// Clauses `first` and `second` (0-based) are complementary unit clauses; no solver ran.
    ComplementaryUnits {
        /// Index of the earlier unit clause.
        first: usize,
        /// Index of the later one, its negation.
        second: usize,
    },
}

/// The result of a solve that writes proofs.
#[derive(Clone, Debug)]
pub struct ProofOutcome {
    /// The answer. A time-out gives [`Outcome::Unknown`].
    pub outcome: Outcome,
    /// Solver, or refuted while reading the clauses.
    pub route: ProofRoute,
    /// Wall-clock seconds, proof writing included.
    pub seconds: f64,
    /// Bytes of LRAT written; `None` when none was asked for (or, for
    /// [`solve_with_proofs`], when no file was kept because the answer is not UNSAT).
    pub lrat_bytes: Option<u64>,
    /// Bytes of DRAT written, as for `lrat_bytes`.
    pub drat_bytes: Option<u64>,
}

/// Solves `cnf` with varisat 0.2.2 and writes proofs into `sinks`.
///
/// The sinks receive the proof as it is found; what they hold is a proof of
/// unsatisfiability only when the outcome is [`Outcome::Unsat`]. With
/// `time_limit`, the solve is aborted once the limit has passed (see the
/// module documentation) and the outcome is [`Outcome::Unknown`].
///
/// # Errors
/// [`Error::Solver`] when a proof cannot be written (other than for the time
/// limit) or the solver fails.
pub fn solve_with_proof_sinks(
    cnf: &Cnf,
    sinks: ProofSinks<'_>,
    time_limit: Option<Duration>,
) -> Result<ProofOutcome> {
    let start = Instant::now();
    if let Some((route, hints)) = refuted_while_loading(cnf) {
        return write_trivial(cnf, sinks, route, &hints, start);
    }
    let deadline = time_limit.map(|t| start + t);
    let timed_out = Rc::new(Cell::new(false));
    let lrat_count = Rc::new(Cell::new(0u64));
    let drat_count = Rc::new(Cell::new(0u64));
    let guard = |inner, count: &Rc<Cell<u64>>| Guard {
        inner,
        deadline,
        timed_out: timed_out.clone(),
        bytes: count.clone(),
    };
    let want_lrat = sinks.lrat.is_some();
    let want_drat = sinks.drat.is_some();
    let mut write_lrat = sinks
        .lrat
        .map(|w| WriteLrat::new(guard(w, &lrat_count), sinks.lrat_binary));

    let answer;
    let close;
    let mut model = None;
    {
        let mut solver = Solver::new();
        if let Some(w) = write_lrat.as_mut() {
            solver.add_proof_processor(w);
        }
        if let Some(w) = sinks.drat {
            let format = if sinks.drat_binary {
                ProofFormat::BinaryDrat
            } else {
                ProofFormat::Drat
            };
            solver.write_proof(guard(w, &drat_count), format);
        } else if deadline.is_some() && !want_lrat {
            // Nothing to write, but the deadline needs a writer to watch it.
            solver.write_proof(
                Guard {
                    inner: io::sink(),
                    deadline,
                    timed_out: timed_out.clone(),
                    bytes: Rc::new(Cell::new(0)),
                },
                ProofFormat::BinaryDrat,
            );
        }
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
        answer = solver.solve();
        if let Ok(true) = answer {
            model = solver.model();
        }
        close = solver.close_proof();
    }
    let flushed = match write_lrat.as_mut() {
        Some(w) => w.flush().map_err(|e| e.to_string()),
        None => Ok(()),
    };
    drop(write_lrat);

    let solver_error = |reason: String| Error::Solver {
        solver: NAME.into(),
        reason,
    };
    let outcome = match answer {
        Ok(true) => {
            let mut m = vec![false; cnf.num_vars() as usize];
            for l in model.unwrap_or_default() {
                if let Some(slot) = m.get_mut(l.var().index()) {
                    *slot = l.is_positive();
                }
            }
            Outcome::Sat(m)
        }
        _ if timed_out.get() => Outcome::Unknown(format!(
            "time limit of {:.1} s reached",
            time_limit.map(|t| t.as_secs_f64()).unwrap_or(0.0)
        )),
        Ok(false) => {
            if let Err(e) = close {
                return Err(solver_error(format!("writing the DRAT proof: {e}")));
            }
            if let Err(e) = flushed {
                return Err(solver_error(format!("writing the LRAT proof: {e}")));
            }
            Outcome::Unsat
        }
        Err(SolverError::ProofProcessorError { cause }) => {
            return Err(solver_error(format!("writing the LRAT proof: {cause}")));
        }
        Err(e) => return Err(solver_error(e.to_string())),
    };
    Ok(ProofOutcome {
        outcome,
        route: ProofRoute::Solver,
        seconds: start.elapsed().as_secs_f64(),
        lrat_bytes: want_lrat.then(|| lrat_count.get()),
        drat_bytes: want_drat.then(|| drat_count.get()),
    })
}

/// Solves `cnf` and, when it is UNSAT, writes a text LRAT proof to `lrat`
/// and/or a text DRAT proof to `drat`.
///
/// Each proof is written to a temporary file beside its path and renamed into
/// place only for an UNSAT answer; for SAT or UNKNOWN no file is created
/// (and an existing file at the path is left as it was).
///
/// # Errors
/// [`Error::Io`] when a file cannot be created or renamed; otherwise as
/// [`solve_with_proof_sinks`].
pub fn solve_with_proofs(
    cnf: &Cnf,
    lrat: Option<&Path>,
    drat: Option<&Path>,
    time_limit: Option<Duration>,
) -> Result<ProofOutcome> {
    let lrat_tmp = lrat.map(temp_beside).transpose()?;
    let drat_tmp = drat.map(temp_beside).transpose()?;
    let mut lrat_file = lrat_tmp.as_ref().map(|t| t.as_file());
    let mut drat_file = drat_tmp.as_ref().map(|t| t.as_file());
    let sinks = ProofSinks {
        lrat: lrat_file.as_mut().map(|f| f as &mut dyn Write),
        lrat_binary: false,
        drat: drat_file.as_mut().map(|f| f as &mut dyn Write),
        drat_binary: false,
    };
    let mut out = solve_with_proof_sinks(cnf, sinks, time_limit)?;
    if out.outcome != Outcome::Unsat {
        out.lrat_bytes = None;
        out.drat_bytes = None;
        return Ok(out);
    }
    for (tmp, path) in [(lrat_tmp, lrat), (drat_tmp, drat)] {
        if let (Some(tmp), Some(path)) = (tmp, path) {
            tmp.as_file().sync_all().map_err(|e| Error::io(path, e))?;
            tmp.persist(path).map_err(|e| Error::io(path, e.error))?;
        }
    }
    Ok(out)
}

/// An answer whose UNSAT verdict has been checked by [`super::lrat`].
#[derive(Clone, Debug)]
pub struct Certification {
    /// The solve.
    pub outcome: ProofOutcome,
    /// For UNSAT: what the accepted LRAT proof contained.
    pub lrat: Option<LratSummary>,
    /// Seconds spent checking the proof.
    pub check_seconds: f64,
}

/// Solves `cnf`; on UNSAT, checks the (binary, in-memory) LRAT proof with
/// [`check_lrat_with`] before answering.
///
/// # Errors
/// [`Error::Solver`] when the solver fails, or when its proof is rejected
/// (the reason names the step).
pub fn certify(cnf: &Cnf, time_limit: Option<Duration>) -> Result<Certification> {
    let mut proof = Vec::new();
    let sinks = ProofSinks {
        lrat: Some(&mut proof),
        lrat_binary: true,
        ..ProofSinks::default()
    };
    let outcome = solve_with_proof_sinks(cnf, sinks, time_limit)?;
    if outcome.outcome != Outcome::Unsat {
        return Ok(Certification {
            outcome,
            lrat: None,
            check_seconds: 0.0,
        });
    }
    let t = Instant::now();
    let options = LratOptions {
        ids_follow_cnf: true,
        ..LratOptions::default()
    };
    let summary = check_lrat_with(cnf, &proof, &options).map_err(|e| Error::Solver {
        solver: NAME.into(),
        reason: format!("its UNSAT answer came with an LRAT proof that was rejected: {e}"),
    })?;
    Ok(Certification {
        outcome,
        lrat: Some(summary),
        check_seconds: t.elapsed().as_secs_f64(),
    })
}

fn temp_beside(path: &Path) -> Result<tempfile::NamedTempFile> {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    tempfile::NamedTempFile::new_in(dir).map_err(|e| Error::io(path, e))
}

/// The first point where reading the clauses in order refutes the CNF, with
/// the LRAT hints (1-based ids) that refute it.
fn refuted_while_loading(cnf: &Cnf) -> Option<(ProofRoute, Vec<u64>)> {
    let code = |l: Lit| ((l.var().dimacs() as usize) << 1) | (!l.is_positive()) as usize;
    let mut unit_at: Vec<Option<usize>> = vec![None; 2 * (cnf.num_vars() as usize + 1)];
    for (i, clause) in cnf.clauses().enumerate() {
        let Some(&first) = clause.first() else {
            return Some((ProofRoute::EmptyClause { clause: i }, vec![i as u64 + 1]));
        };
        if clause.iter().all(|&l| l == first) {
            if let Some(j) = unit_at[code(!first)] {
                let route = ProofRoute::ComplementaryUnits {
                    first: j,
                    second: i,
                };
                return Some((route, vec![j as u64 + 1, i as u64 + 1]));
            }
            unit_at[code(first)].get_or_insert(i);
        }
    }
    None
}

fn write_trivial(
    cnf: &Cnf,
    sinks: ProofSinks<'_>,
    route: ProofRoute,
    hints: &[u64],
    start: Instant,
) -> Result<ProofOutcome> {
    let id = cnf.num_clauses() as u64 + 1;
    let lrat = sinks.lrat_binary;
    let lrat_bytes = if lrat {
        let mut b = vec![b'a'];
        leb128(&mut b, 2 * id);
        b.push(0);
        for &h in hints {
            leb128(&mut b, 2 * h);
        }
        b.push(0);
        b
    } else {
        let mut s = format!("{id} 0");
        for h in hints {
            s.push_str(&format!(" {h}"));
        }
        s.push_str(" 0\n");
        s.into_bytes()
    };
    let drat_bytes: &[u8] = if sinks.drat_binary { b"a\0" } else { b"0\n" };
    let write = |w: &mut dyn Write, bytes: &[u8], what: &str| -> Result<u64> {
        w.write_all(bytes)
            .and_then(|()| w.flush())
            .map_err(|e| Error::Solver {
                solver: NAME.into(),
                reason: format!("writing the {what} proof: {e}"),
            })?;
        Ok(bytes.len() as u64)
    };
    let lrat_written = match sinks.lrat {
        Some(w) => Some(write(w, &lrat_bytes, "LRAT")?),
        None => None,
    };
    let drat_written = match sinks.drat {
        Some(w) => Some(write(w, drat_bytes, "DRAT")?),
        None => None,
    };
    Ok(ProofOutcome {
        outcome: Outcome::Unsat,
        route,
        seconds: start.elapsed().as_secs_f64(),
        lrat_bytes: lrat_written,
        drat_bytes: drat_written,
    })
}

fn leb128(out: &mut Vec<u8>, mut v: u64) {
    loop {
        let b = (v & 0x7f) as u8;
        v >>= 7;
        if v == 0 {
            out.push(b);
            return;
        }
        out.push(b | 0x80);
    }
}

/// A proof target that counts bytes and fails once the deadline has passed.
struct Guard<W> {
    inner: W,
    deadline: Option<Instant>,
    timed_out: Rc<Cell<bool>>,
    bytes: Rc<Cell<u64>>,
}

impl<W: Write> Write for Guard<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if let Some(d) = self.deadline {
            if Instant::now() >= d {
                self.timed_out.set(true);
                return Err(io::Error::other("orbitcnf time limit reached"));
            }
        }
        let n = self.inner.write(buf)?;
        self.bytes.set(self.bytes.get() + n as u64);
        Ok(n)
    }

    fn flush(&mut self) -> io::Result<()> {
        self.inner.flush()
    }
}
