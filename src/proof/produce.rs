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
use std::rc::Rc;
use std::time::{Duration, Instant};

use varisat::solver::SolverError;
use varisat::{ProofFormat, Solver};
use varisat_lrat::WriteLrat;

use super::lrat::LratFormat;
use super::lrat::write::LratWriter;
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
    /// Bytes of LRAT written; `None` when none was asked for.
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
        crate::solve::bundled::load(&mut solver, cnf);
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

/// The first point where reading the clauses in order refutes the CNF, with
/// the LRAT hints (1-based ids) that refute it.
pub(super) fn refuted_while_loading(cnf: &Cnf) -> Option<(ProofRoute, Vec<u64>)> {
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
    let format = if sinks.lrat_binary {
        LratFormat::Binary
    } else {
        LratFormat::Text
    };
    let mut step = LratWriter::new(Vec::new(), format);
    step.add(id, [], hints.iter().map(|&h| h as i64))
        .expect("writing to memory cannot fail");
    let (lrat_bytes, _) = step.finish().expect("writing to memory cannot fail");
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

/// A proof target that counts bytes and fails once the deadline has passed.
struct Guard<W> {
    inner: W,
    deadline: Option<Instant>,
    timed_out: Rc<Cell<bool>>,
    bytes: Rc<Cell<u64>>,
}

impl<W: Write> Write for Guard<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if let Some(d) = self.deadline
            && Instant::now() >= d
        {
            self.timed_out.set(true);
            return Err(io::Error::other("orbitcnf time limit reached"));
        }
        let n = self.inner.write(buf)?;
        self.bytes.set(self.bytes.get() + n as u64);
        Ok(n)
    }

    fn flush(&mut self) -> io::Result<()> {
        self.inner.flush()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cnf::Lit;
    use crate::proof::check_lrat_with;
    use crate::proof::lrat::read::StepKind;
    use crate::proof::lrat::{LratReason, check_lrat};
    use crate::proof::testgen::{cnf_of, lrat_of, php, random_unsat, steps_of, strict, text_lrat};
    use varisat::ExtendFormula;

    /// Records the ids varisat's checker gives the input clauses.
    #[derive(Default)]
    struct RecordInputIds(Vec<(u64, Vec<isize>)>);

    impl varisat::checker::ProofProcessor for RecordInputIds {
        fn process_step(
            &mut self,
            step: &varisat::checker::CheckedProofStep,
            _data: varisat::checker::CheckerData,
        ) -> std::result::Result<(), anyhow::Error> {
            use varisat::checker::CheckedProofStep as S;
            match step {
                S::AddClause { id, clause }
                | S::DuplicatedClause { id, clause, .. }
                | S::TautologicalClause { id, clause } => {
                    let c = clause.iter().map(|l| l.to_dimacs()).collect();
                    self.0.push((*id, c));
                }
                _ => {}
            }
            Ok(())
        }
    }

    /// Runs varisat with `WriteLrat` directly (no handling of load-time
    /// refutations) and records the input ids; returns the text LRAT.
    fn varisat_direct(cnf: &Cnf) -> (Option<bool>, String, RecordInputIds) {
        let mut record = RecordInputIds::default();
        let mut proof = Vec::new();
        let mut lrat = WriteLrat::new(&mut proof, false);
        let answer;
        {
            let mut solver = Solver::new();
            solver.add_proof_processor(&mut record);
            solver.add_proof_processor(&mut lrat);
            for c in cnf.clauses() {
                let c: Vec<_> = c
                    .iter()
                    .map(|l| varisat::Lit::from_dimacs(l.dimacs() as isize))
                    .collect();
                solver.add_clause(&c);
            }
            answer = solver.solve().ok();
        }
        lrat.flush().unwrap();
        drop(lrat);
        (answer, String::from_utf8(proof).unwrap(), record)
    }

    #[test]
    fn varisat_numbers_the_input_clauses_in_order() {
        // PHP(4,3) (variables 1..12) with units, duplicates, a tautology and
        // repeated literals mixed in.
        let base = php(4, 3);
        let extras: [&[i32]; 7] = [
            &[13],
            &[13],
            &[14, -14, 1],
            &[1, 1, 2, 3],
            &[3, 2, 1],
            &[-13, 15, 16],
            &[-2, -5],
        ];
        let mut cnf = Cnf::new();
        for (i, c) in base.clauses().enumerate() {
            if i % 3 == 0 && i / 3 < extras.len() {
                let c: Vec<Lit> = extras[i / 3].iter().map(|&x| Lit::from_dimacs(x)).collect();
                cnf.add_clause(&c);
            }
            cnf.add_clause(c);
        }
        let (answer, text, record) = varisat_direct(&cnf);
        assert_eq!(answer, Some(false));
        let ids: Vec<u64> = record.0.iter().map(|(id, _)| *id).collect();
        assert_eq!(ids, (0..cnf.num_clauses() as u64).collect::<Vec<_>>());
        for ((_, got), want) in record.0.iter().zip(cnf.clauses()) {
            let mut want: Vec<isize> = want.iter().map(|l| l.dimacs() as isize).collect();
            want.sort_unstable();
            want.dedup();
            let mut got = got.clone();
            got.sort_unstable();
            assert_eq!(got, want);
        }
        // So the LRAT proof refers to the CNF's clause i as id i + 1 and
        // starts right after the last one.
        check_lrat_with(&cnf, &text, &strict()).unwrap();
        let first_add = steps_of(&text)
            .into_iter()
            .find_map(|s| (s.kind == StepKind::Add).then_some(s.id));
        assert_eq!(first_add, Some(cnf.num_clauses() as u64 + 1));
        // The duplicates (ids 5, 13, 17, 25) and the tautology (9) keep their
        // ids and are deleted before the first derived clause.
        assert!(text.starts_with("8 d 5 9 13 17 25 0\n"), "{}", &text[..40]);
        check_lrat_with(&cnf, text_lrat(&cnf), &strict()).unwrap();
    }

    #[test]
    fn cnfs_refuted_while_loading_get_their_own_proof() {
        let units = cnf_of(&[&[1], &[2, 3], &[-1], &[4]]);
        // varisat stops numbering at the conflict: its empty clause reuses id 4.
        let (answer, text, _) = varisat_direct(&units);
        assert_eq!(answer, Some(false));
        assert_eq!(text, "4 0 1 3 0\n");
        let e = check_lrat(&units, &text).unwrap_err();
        assert_eq!(e.reason, LratReason::IdNotIncreasing { id: 4, previous: 4 });
        let (out, proof) = lrat_of(&units, false);
        assert_eq!(out.outcome, Outcome::Unsat);
        assert_eq!(
            out.route,
            ProofRoute::ComplementaryUnits {
                first: 0,
                second: 2
            }
        );
        assert_eq!(proof, b"5 0 1 3 0\n");
        check_lrat_with(&units, &proof, &strict()).unwrap();
        let (_, bin) = lrat_of(&units, true);
        check_lrat_with(&units, &bin, &strict()).unwrap();

        // An empty input clause: varisat writes no step at all.
        let empty = cnf_of(&[&[1, 2], &[], &[3]]);
        let (_, text, _) = varisat_direct(&empty);
        assert_eq!(text, "");
        let (out, proof) = lrat_of(&empty, false);
        assert_eq!(out.route, ProofRoute::EmptyClause { clause: 1 });
        assert_eq!(proof, b"4 0 2 0\n");
        check_lrat_with(&empty, &proof, &strict()).unwrap();

        // Repeated literals make a unit; complementary units found late still count.
        let late = cnf_of(&[&[1, 2], &[-3, -3], &[1, -2], &[3]]);
        let (out, proof) = lrat_of(&late, false);
        assert_eq!(
            out.route,
            ProofRoute::ComplementaryUnits {
                first: 1,
                second: 3
            }
        );
        check_lrat_with(&late, &proof, &strict()).unwrap();
        // Units that agree are not a conflict.
        let fine = cnf_of(&[&[1], &[1, 1], &[-1, 2]]);
        assert!(matches!(lrat_of(&fine, false).0.outcome, Outcome::Sat(_)));
    }

    /// Solving time with and without proofs, proof sizes, checking time.
    #[test]
    #[ignore = "a measurement: cargo test --release --lib measure_proof_costs -- --ignored --nocapture"]
    fn measure_proof_costs() {
        use crate::solve::{Backend, Limits, bundled::Bundled};
        let mut cases: Vec<(String, Cnf)> = vec![
            ("PHP(7,6)".into(), php(7, 6)),
            ("PHP(8,7)".into(), php(8, 7)),
            ("PHP(9,8)".into(), php(9, 8)),
        ];
        for (i, cnf) in random_unsat(250, 1).into_iter().enumerate() {
            cases.push((format!("random 3-SAT n=250 m=1065 #{i}"), cnf));
        }
        // More formulas (e.g. written by `orbitcnf encode`): ORBITCNF_MEASURE_CNF=a.cnf:b.cnf
        if let Some(paths) = std::env::var_os("ORBITCNF_MEASURE_CNF") {
            for path in std::env::split_paths(&paths) {
                let text = std::fs::read_to_string(&path).unwrap();
                let name = path.display().to_string();
                let (cnf, _) = crate::dimacs::parse_dimacs(&text, &name).unwrap();
                cases.push((name, cnf));
            }
        }
        for (name, cnf) in &cases {
            let t = Instant::now();
            let plain = Bundled.solve(cnf, &Limits::default()).unwrap();
            let plain_s = t.elapsed().as_secs_f64();
            assert_eq!(plain.outcome, Outcome::Unsat);
            let mut drat = Vec::new();
            let t = Instant::now();
            let sinks = ProofSinks {
                drat: Some(&mut drat),
                ..ProofSinks::default()
            };
            solve_with_proof_sinks(cnf, sinks, None).unwrap();
            let drat_s = t.elapsed().as_secs_f64();
            println!(
                "{name}: {} vars, {} clauses, {} conflicts; bundled solve {plain_s:.2} s; \
                 with text DRAT {drat_s:.2} s, {} bytes",
                cnf.num_vars(),
                cnf.num_clauses(),
                plain.stats.conflicts.unwrap_or(0),
                drat.len()
            );
            for binary in [false, true] {
                let t = Instant::now();
                let (_, proof) = lrat_of(cnf, binary);
                let solve_s = t.elapsed().as_secs_f64();
                let t = Instant::now();
                let s = check_lrat_with(cnf, &proof, &strict()).unwrap();
                let check_s = t.elapsed().as_secs_f64();
                println!(
                    "  {} LRAT: solve {solve_s:.2} s, {} bytes, {} steps ({} added, {} deleted, \
                     {} hints); our check {check_s:.3} s",
                    if binary { "binary" } else { "text" },
                    proof.len(),
                    s.steps,
                    s.added,
                    s.deleted,
                    s.hints
                );
            }
        }
    }
}
