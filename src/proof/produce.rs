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
use varisat::{ProofFormat, Solver};
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
    let lrat_tmp = lrat.map(crate::artifact::temp_beside).transpose()?;
    let drat_tmp = drat.map(crate::artifact::temp_beside).transpose()?;
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
            crate::artifact::persist(tmp, path)?;
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cnf::Lit;
    use crate::proof::lrat::{LratError, LratFormat, LratReason, check_lrat};
    use crate::proof::testgen::{dimacs, php, random_3sat};
    use varisat::ExtendFormula;

    fn strict() -> LratOptions {
        LratOptions {
            ids_follow_cnf: true,
            ..LratOptions::default()
        }
    }

    /// Solves and returns the outcome with the LRAT proof (text or binary).
    fn lrat_of(cnf: &Cnf, binary: bool) -> (ProofOutcome, Vec<u8>) {
        let mut proof = Vec::new();
        let sinks = ProofSinks {
            lrat: Some(&mut proof),
            lrat_binary: binary,
            ..ProofSinks::default()
        };
        let out = solve_with_proof_sinks(cnf, sinks, None).unwrap();
        (out, proof)
    }

    fn text_lrat(cnf: &Cnf) -> String {
        let (out, proof) = lrat_of(cnf, false);
        assert_eq!(out.outcome, Outcome::Unsat);
        assert_eq!(out.route, ProofRoute::Solver);
        String::from_utf8(proof).unwrap()
    }

    /// One line of a text LRAT proof, for tampering.
    #[derive(Clone, Debug)]
    enum Line {
        Add {
            id: u64,
            lits: Vec<i64>,
            hints: Vec<i64>,
        },
        Del {
            label: u64,
            ids: Vec<u64>,
        },
    }

    fn parse(p: &str) -> Vec<Line> {
        p.lines()
            .map(|l| {
                let t: Vec<&str> = l.split_whitespace().collect();
                let id: u64 = t[0].parse().unwrap();
                if t[1] == "d" {
                    let ids = t[2..t.len() - 1].iter().map(|x| x.parse().unwrap());
                    return Line::Del {
                        label: id,
                        ids: ids.collect(),
                    };
                }
                let nums: Vec<i64> = t[1..].iter().map(|x| x.parse().unwrap()).collect();
                let z = nums.iter().position(|&x| x == 0).unwrap();
                Line::Add {
                    id,
                    lits: nums[..z].to_vec(),
                    hints: nums[z + 1..nums.len() - 1].to_vec(),
                }
            })
            .collect()
    }

    fn render(lines: &[Line]) -> String {
        let mut s = String::new();
        for l in lines {
            match l {
                Line::Add { id, lits, hints } => {
                    s.push_str(&id.to_string());
                    for x in lits.iter().chain([&0]).chain(hints) {
                        s.push_str(&format!(" {x}"));
                    }
                    s.push_str(" 0\n");
                }
                Line::Del { label, ids } => {
                    s.push_str(&format!("{label} d"));
                    for x in ids {
                        s.push_str(&format!(" {x}"));
                    }
                    s.push_str(" 0\n");
                }
            }
        }
        s
    }

    /// UNSAT random 3-CNFs at the threshold ratio 4.26, found by trying seeds.
    fn random_unsat(vars: u32, count: usize) -> Vec<Cnf> {
        let clauses = (f64::from(vars) * 4.26).round() as usize;
        let mut found = Vec::new();
        let mut sat = 0usize;
        for seed in 1.. {
            let cnf = random_3sat(vars, clauses, seed);
            match certify(&cnf, None).unwrap().outcome.outcome {
                Outcome::Unsat => found.push(cnf),
                Outcome::Sat(m) => {
                    assert_eq!(cnf.first_falsified(&m), None);
                    sat += 1;
                }
                Outcome::Unknown(r) => panic!("{r}"),
            }
            if found.len() == count {
                break;
            }
        }
        let _ = sat;
        found
    }

    #[test]
    fn varisat_proofs_are_accepted() {
        let mut cnfs = vec![php(4, 3), php(5, 4), php(6, 5)];
        cnfs.extend(random_unsat(60, 6));
        cnfs.extend(random_unsat(100, 2));
        for cnf in &cnfs {
            for binary in [false, true] {
                let (out, proof) = lrat_of(cnf, binary);
                assert_eq!(out.outcome, Outcome::Unsat);
                assert_eq!(out.lrat_bytes, Some(proof.len() as u64));
                // Accepting means no step was RAT: the checker rejects negative hints.
                let s = check_lrat_with(cnf, &proof, &strict()).unwrap();
                assert_eq!(s.cnf_clauses, cnf.num_clauses());
                assert_eq!(s.ignored_tail_bytes, 0);
                let want = if binary {
                    LratFormat::Binary
                } else {
                    LratFormat::Text
                };
                assert_eq!(s.format, want);
                assert!(s.added >= 1 && s.hints >= 1);
            }
        }
        let text = text_lrat(&php(5, 4));
        assert!(
            parse(&text).iter().all(|l| match l {
                Line::Add { hints, .. } => hints.iter().all(|&h| h > 0),
                Line::Del { .. } => true,
            }),
            "varisat wrote a negative (RAT) hint"
        );
    }

    /// Applies `edit` to a copy of `lines` and checks the result against `cnf`.
    fn tampered(cnf: &Cnf, lines: &[Line], edit: impl FnOnce(&mut Vec<Line>)) -> LratError {
        let mut t = lines.to_vec();
        edit(&mut t);
        check_lrat_with(cnf, render(&t), &strict()).expect_err("a tampered proof was accepted")
    }

    fn tamper_every_step(cnf: &Cnf) {
        let text = text_lrat(cnf);
        let lines = parse(&text);
        check_lrat_with(cnf, render(&lines), &strict()).unwrap();
        let n = lines.len() as u64;
        let mut prev_add: Option<u64> = None;
        for (k, line) in lines.iter().enumerate() {
            let step = k as u64 + 1;
            let Line::Add { id, lits, hints } = line else {
                continue;
            };
            // Change a literal: negate the first one.
            if let Some(&l) = lits.first() {
                if !lits.contains(&-l) {
                    let e = tampered(cnf, &lines, |t| {
                        if let Line::Add { lits, .. } = &mut t[k] {
                            lits[0] = -l;
                        }
                    });
                    assert_eq!((e.step, e.id), (step, Some(*id)), "{e}");
                    assert!(e.reason.is_rup_failure(), "{e}");
                }
            }
            // Drop the last hint, the conflict: the others still propagate.
            let e = tampered(cnf, &lines, |t| {
                if let Line::Add { hints, .. } = &mut t[k] {
                    hints.pop();
                }
            });
            assert_eq!(e.step, step);
            assert_eq!(
                e.reason,
                LratReason::NoConflict {
                    hints: hints.len() - 1
                }
            );
            // Drop the first hint.
            if hints.len() >= 2 {
                let e = tampered(cnf, &lines, |t| {
                    if let Line::Add { hints, .. } = &mut t[k] {
                        hints.remove(0);
                    }
                });
                assert_eq!(e.step, step);
                assert!(e.reason.is_rup_failure(), "{e}");
            }
            // A negative hint makes it a RAT step.
            let e = tampered(cnf, &lines, |t| {
                if let Line::Add { hints, .. } = &mut t[k] {
                    hints[0] = -hints[0];
                }
            });
            assert_eq!(e.step, step);
            assert_eq!(e.reason, LratReason::RatNotSupported { hint: -hints[0] });
            // A hint to a clause that never existed.
            let e = tampered(cnf, &lines, |t| {
                if let Line::Add { hints, .. } = &mut t[k] {
                    hints[0] = 1_000_000_000;
                }
            });
            assert_eq!(e.step, step);
            assert_eq!(
                e.reason,
                LratReason::UnknownHint {
                    hint: 1_000_000_000
                }
            );
            // Delete the first hint's clause just before, then use it.
            let h = hints[0] as u64;
            let e = tampered(cnf, &lines, |t| {
                t.insert(
                    k,
                    Line::Del {
                        label: id - 1,
                        ids: vec![h],
                    },
                )
            });
            assert_eq!((e.step, e.id), (step + 1, Some(*id)));
            assert_eq!(
                e.reason,
                LratReason::DeletedHint {
                    hint: h,
                    deleted_in_step: step
                }
            );
            // Reuse the previous addition's id.
            if let Some(p) = prev_add {
                let e = tampered(cnf, &lines, |t| {
                    if let Line::Add { id, .. } = &mut t[k] {
                        *id = p;
                    }
                });
                assert_eq!((e.step, e.id), (step, Some(p)));
                assert!(
                    matches!(e.reason, LratReason::IdNotIncreasing { id, .. } if id == p),
                    "{e}"
                );
            }
            prev_add = Some(*id);
        }
        // Truncation: without the last line the empty clause is missing; cut
        // inside the last line, the step is incomplete.
        let e = tampered(cnf, &lines, |t| {
            t.pop();
        });
        assert_eq!(e.step, n);
        assert_eq!(e.reason, LratReason::NoEmptyClause { steps: n - 1 });
        let cut = &text[..text.len() - 3];
        let e = check_lrat(cnf, cut).unwrap_err();
        assert_eq!((e.step, e.reason), (n, LratReason::Truncated));
    }

    #[test]
    fn tampered_proofs_are_rejected_at_the_tampered_step() {
        tamper_every_step(&php(5, 4));
        for cnf in random_unsat(60, 2) {
            tamper_every_step(&cnf);
        }
    }

    #[test]
    fn a_proof_for_another_cnf_is_rejected() {
        let cnf = php(5, 4);
        let proof = text_lrat(&cnf);
        // The same clauses, two of them swapped.
        let mut swapped = Cnf::new();
        let order: Vec<usize> = (0..cnf.num_clauses())
            .map(|i| match i {
                0 => 1,
                1 => 0,
                i => i,
            })
            .collect();
        for &i in &order {
            swapped.add_clause(cnf.clause(i));
        }
        let e = check_lrat_with(&swapped, &proof, &strict()).unwrap_err();
        assert!(e.reason.is_rup_failure(), "{e}");
        // Fewer clauses: caught at step 1 with the option; later without it.
        let small = php(4, 3);
        let e = check_lrat_with(&small, &proof, &strict()).unwrap_err();
        assert_eq!(e.step, 1);
        assert_eq!(
            e.reason,
            LratReason::IdNotAfterCnf {
                id: 46,
                expected: 23
            }
        );
        let e = check_lrat(&small, &proof).unwrap_err();
        assert!(
            e.reason.is_rup_failure()
                || matches!(
                    e.reason,
                    LratReason::LiteralOutOfRange { .. } | LratReason::UnknownHint { .. }
                ),
            "{e}"
        );
        // More clauses: the proof's first id collides with the CNF's.
        let e = check_lrat(&php(6, 5), &proof).unwrap_err();
        assert_eq!(e.step, 1);
        assert_eq!(
            e.reason,
            LratReason::IdNotIncreasing {
                id: 46,
                previous: 81
            }
        );
        // A random CNF of the same shape (45 clauses over 20 variables).
        let mut other = random_3sat(20, 44, 7);
        other.add_clause(cnf.clause(44));
        let e = check_lrat_with(&other, &proof, &strict()).unwrap_err();
        assert!(e.reason.is_rup_failure(), "{e}");
    }
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

    fn cnf_of(clauses: &[&[i32]]) -> Cnf {
        let mut cnf = Cnf::new();
        for c in clauses {
            let c: Vec<Lit> = c.iter().map(|&x| Lit::from_dimacs(x)).collect();
            cnf.add_clause(&c);
        }
        cnf
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
        let first_add = parse(&text).into_iter().find_map(|l| match l {
            Line::Add { id, .. } => Some(id),
            Line::Del { .. } => None,
        });
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

    #[test]
    fn proof_files_are_kept_for_unsat_only() {
        let dir = tempfile::tempdir().unwrap();
        let lrat = dir.path().join("p.lrat");
        let drat = dir.path().join("p.drat");
        let cnf = php(5, 4);
        let out = solve_with_proofs(&cnf, Some(&lrat), Some(&drat), None).unwrap();
        assert_eq!(out.outcome, Outcome::Unsat);
        let size = |p: &Path| std::fs::metadata(p).unwrap().len();
        assert_eq!(out.lrat_bytes, Some(size(&lrat)));
        assert_eq!(out.drat_bytes, Some(size(&drat)));
        let s = super::super::lrat::check_lrat_file(&cnf, &lrat, &strict()).unwrap();
        assert!(s.added > 0);
        // Only the two proofs are in the folder: no temporary file is left.
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 2);

        let other = dir.path().join("q.lrat");
        let out = solve_with_proofs(&php(3, 3), Some(&other), None, None).unwrap();
        match out.outcome {
            Outcome::Sat(m) => assert_eq!(php(3, 3).first_falsified(&m), None),
            o => panic!("{o:?}"),
        }
        assert_eq!(out.lrat_bytes, None);
        assert!(!other.exists());

        let t = Instant::now();
        let out = solve_with_proofs(
            &php(11, 10),
            Some(&other),
            Some(&drat.with_extension("x")),
            Some(Duration::from_millis(200)),
        )
        .unwrap();
        assert!(matches!(out.outcome, Outcome::Unknown(ref r) if r.contains("time limit")));
        assert!(t.elapsed() < Duration::from_secs(5));
        assert!(!other.exists());
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 2);
        // The limit also holds with no proof asked for, and with LRAT alone.
        let none = solve_with_proof_sinks(
            &php(11, 10),
            ProofSinks::default(),
            Some(Duration::from_millis(200)),
        )
        .unwrap();
        assert!(matches!(none.outcome, Outcome::Unknown(_)));
        let mut sink = Vec::new();
        let lrat_only = ProofSinks {
            lrat: Some(&mut sink),
            ..ProofSinks::default()
        };
        let out = solve_with_proof_sinks(&php(11, 10), lrat_only, Some(Duration::from_millis(200)))
            .unwrap();
        assert!(matches!(out.outcome, Outcome::Unknown(_)));

        let err = solve_with_proofs(&cnf, Some(&dir.path().join("no/such/dir/p")), None, None);
        assert!(matches!(err, Err(Error::Io { .. })));
    }

    #[test]
    fn certify_checks_unsat_answers() {
        let c = certify(&php(6, 5), None).unwrap();
        assert_eq!(c.outcome.outcome, Outcome::Unsat);
        let s = c.lrat.unwrap();
        assert_eq!(s.format, LratFormat::Binary);
        assert_eq!(s.cnf_clauses, php(6, 5).num_clauses());
        let sat = certify(&php(4, 4), None).unwrap();
        assert!(matches!(sat.outcome.outcome, Outcome::Sat(_)));
        assert!(sat.lrat.is_none());
    }

    /// The `rate` binary, or `None` (with a note) when it is not installed.
    /// Under CI (env `CI` set) a missing `rate` is a failure.
    fn rate() -> Option<std::process::Command> {
        let found = std::process::Command::new("rate")
            .arg("--version")
            .output()
            .is_ok_and(|o| o.status.success());
        if found {
            return Some(std::process::Command::new("rate"));
        }
        let hint = "install it with: cargo install rate --version 0.3.0 --locked";
        if std::env::var_os("CI").is_some() {
            panic!("the DRAT checker `rate` is not on PATH; {hint}");
        }
        eprintln!("note: skipping the DRAT second opinion: `rate` is not on PATH; {hint}");
        None
    }

    #[test]
    fn rate_verifies_the_drat_proofs() {
        let Some(_) = rate() else { return };
        let dir = tempfile::tempdir().unwrap();
        let mut cnfs = vec![php(5, 4), php(6, 5), cnf_of(&[&[1], &[2, 3], &[-1]])];
        cnfs.extend(random_unsat(60, 2));
        for (i, cnf) in cnfs.iter().enumerate() {
            for binary in [false, true] {
                let cnf_path = dir.path().join(format!("f{i}.cnf"));
                std::fs::write(&cnf_path, dimacs(cnf)).unwrap();
                let mut drat = Vec::new();
                let mut lrat = Vec::new();
                let sinks = ProofSinks {
                    lrat: Some(&mut lrat),
                    drat: Some(&mut drat),
                    drat_binary: binary,
                    ..ProofSinks::default()
                };
                let out = solve_with_proof_sinks(cnf, sinks, None).unwrap();
                assert_eq!(out.outcome, Outcome::Unsat);
                check_lrat_with(cnf, &lrat, &strict()).unwrap();
                let drat_path = dir.path().join(format!("f{i}-{binary}.drat"));
                std::fs::write(&drat_path, &drat).unwrap();
                let rate_lrat = dir.path().join(format!("f{i}-{binary}.rate.lrat"));
                let o = rate()
                    .unwrap()
                    .arg(&cnf_path)
                    .arg(&drat_path)
                    .arg("--lrat")
                    .arg(&rate_lrat)
                    .output()
                    .unwrap();
                let stdout = String::from_utf8_lossy(&o.stdout);
                assert!(
                    o.status.success() && stdout.lines().any(|l| l == "s VERIFIED"),
                    "rate rejected the DRAT proof of formula {i} (binary {binary}):\n{stdout}\n{}",
                    String::from_utf8_lossy(&o.stderr)
                );
                // rate's own LRAT certificate, from the same DRAT proof, passes our checker too.
                let theirs = std::fs::read(&rate_lrat).unwrap();
                check_lrat(cnf, &theirs).unwrap();
            }
        }
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
