//! One LRAT proof of `F` from the refutations of its cubes and the coverage proof.
//!
//! # Lifting a cube's refutation
//!
//! A cube's proof refutes `F ∧ u_1 ∧ … ∧ u_r` (the cube's units have the ids
//! `m+1..=m+r` after the `m` clauses of `F`). Replace every derived clause
//! `C` by `C' = C ∨ ¬u_1 ∨ … ∨ ¬u_r`. Each `C'` follows from `F` alone by
//! reverse unit propagation: falsifying `C'` falsifies `C` and makes every
//! `u_i` true, which is at least what the original check of `C` assumed
//! (there the units were clauses that propagation could use). Walking the
//! original hints under that larger assignment, every hint is either
//! satisfied (its unit literal is already true: it is dropped, and so is
//! every hint to a unit `u_i` or to a lifted clause that contains some `u_i`,
//! which is true under the assignment), or unit (kept), or a conflict (kept,
//! and the walk stops). So [`lift_cube`] recomputes the hint list by
//! propagation; it never needs a search. The empty clause of the cube's proof
//! becomes `¬u_1 ∨ … ∨ ¬u_r`, the cube's negation.
//!
//! [`lift_cube`] streams: it reads the cube's proof step by step and writes
//! the lifted steps as it goes, as a derivation from `F` whose own clauses
//! have the ids `m+1, m+2, …`; it keeps only the clauses that are live in
//! the cube's proof.
//!
//! # Assembling
//!
//! [`assemble`] writes the lifted derivations one after the other, each
//! shifted to fresh ids after the previous one (each derivation deletes its
//! intermediate clauses once its cube's negation is derived, never a clause
//! of `F`, which later cubes use), then the coverage proof, whose input
//! clauses are clauses of `F` and the cube negations just derived,
//! renumbered to their ids. The result refutes `F` and is checked by
//! [`crate::proof::check_lrat_with`] like any other proof: lifting is not
//! trusted.

use std::collections::HashMap;
use std::io::{Read, Write};

use super::lrat::LratFormat;
use super::lrat::read::{LratReader, Step, StepKind};
use super::lrat::write::LratWriter;
use crate::cnf::{Cnf, Lit};
use crate::error::{Error, Result};

/// What [`lift_cube`] wrote: a derivation of the cube's negation from `F`
/// whose added clauses have the ids `m+1..=m+added`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LiftedCube {
    /// Clauses the derivation adds.
    pub added: u64,
    /// The id of the cube's negation (the last clause added).
    pub negation: u64,
    /// The cube has no literals: the derivation already refutes `F`.
    pub complete: bool,
    /// Bytes written.
    pub bytes: u64,
}

enum Entry {
    /// A unit of the cube, or a lifted clause satisfied by the cube: true
    /// under the assignment of every lifted check, never a useful hint.
    True,
    /// A lifted clause: its id in the derivation and its literals.
    Lifted(u64, Vec<Lit>),
}

/// Lifts `proof`, an LRAT refutation (text or binary) of `f` plus the unit
/// clauses `units` (ids `m+1..=m+r`), to a derivation of `¬units` from `f`,
/// written to `out` in `format`.
///
/// # Errors
/// [`Error::Solver`] (named `proof lifting`) when the proof is malformed,
/// has RAT steps, or is not a refutation of that CNF, or `out` fails.
pub fn lift_cube(
    f: &Cnf,
    units: &[Lit],
    proof: impl Read,
    out: impl Write,
    format: LratFormat,
) -> Result<LiftedCube> {
    lift_inner(f, units, proof, out, format).map_err(|reason| Error::Solver {
        solver: "proof lifting".into(),
        reason,
    })
}

fn reader_error(r: &LratReader<'_>, s: &Step, reason: super::lrat::LratReason) -> String {
    let at = match r.format() {
        LratFormat::Text => format!("line {}", s.line),
        LratFormat::Binary => format!("byte {}", s.offset),
    };
    format!("{at}: {reason}")
}

fn lift_inner(
    f: &Cnf,
    units: &[Lit],
    proof: impl Read,
    out: impl Write,
    format: LratFormat,
) -> std::result::Result<LiftedCube, String> {
    let m = f.num_clauses() as u64;
    let r = units.len() as u64;
    let nv = f.num_vars() as usize;
    let io = |e: std::io::Error| format!("writing the lifted proof: {e}");
    // in_cube[v] = +1 / -1 when the cube asserts v / ¬v.
    let mut in_cube = vec![0i8; nv + 1];
    for u in units {
        in_cube[u.var().dimacs() as usize] = if u.is_positive() { 1 } else { -1 };
    }
    let is_cube_lit =
        |l: Lit| in_cube[l.var().dimacs() as usize] == if l.is_positive() { 1 } else { -1 };
    let neg_units: Vec<Lit> = units.iter().map(|&u| !u).collect();
    let mut map: HashMap<u64, Entry> = HashMap::new();
    // val[v]: 0 unassigned, 1 true, -1 false.
    let mut val = vec![0i8; nv + 1];
    let mut trail: Vec<usize> = Vec::new();
    let value = |l: Lit, val: &[i8]| {
        let v = val[l.var().dimacs() as usize];
        if l.is_positive() { v } else { -v }
    };
    let mut reader = LratReader::new(proof, None, f.num_vars()).map_err(|e| e.to_string())?;
    let mut writer = LratWriter::new(out, format);
    let mut s = Step::default();
    let mut next = m + 1;
    let mut hints: Vec<i64> = Vec::new();
    let negation = loop {
        match reader.next_step(&mut s) {
            Ok(true) => {}
            Ok(false) => return Err("the proof does not derive the empty clause".into()),
            Err(e) => return Err(reader_error(&reader, &s, e)),
        }
        if s.kind == StepKind::Delete {
            let mut gone = Vec::new();
            for &id in &s.refs {
                let id = id as u64;
                if id <= m + r {
                    continue;
                }
                match map.remove(&id) {
                    Some(Entry::Lifted(n, _)) => gone.push(n),
                    Some(Entry::True) => {}
                    None => {
                        return Err(format!(
                            "the proof deletes clause {id}, which it never added"
                        ));
                    }
                }
            }
            writer.delete(next - 1, gone).map_err(io)?;
            continue;
        }
        if s.id <= m + r || map.contains_key(&s.id) {
            return Err(format!("the proof reuses clause id {}", s.id));
        }
        if s.rat_hint().is_some() {
            return Err(format!(
                "step {} is a RAT step, which cannot be lifted",
                s.id
            ));
        }
        let mut clause: Vec<Lit> = Vec::with_capacity(s.lits.len() + neg_units.len());
        let mut satisfied = false;
        for &x in &s.lits {
            let l = Lit::from_dimacs(x); // the reader checked 0 < |x| ≤ num_vars
            if is_cube_lit(l) || clause.contains(&!l) {
                satisfied = true;
            }
            if !clause.contains(&l) {
                clause.push(l);
            }
        }
        if satisfied && !s.lits.is_empty() {
            map.insert(s.id, Entry::True);
            continue;
        }
        let empty = s.lits.is_empty();
        for &l in &neg_units {
            if !clause.contains(&l) {
                clause.push(l);
            }
        }
        // Falsify the lifted clause.
        for &l in &clause {
            let v = l.var().dimacs() as usize;
            val[v] = if l.is_positive() { -1 } else { 1 };
            trail.push(v);
        }
        hints.clear();
        let mut conflict = false;
        for &h in &s.refs {
            let h = h as u64;
            let (id, lits): (u64, &[Lit]) = if h <= m {
                (h, f.clause((h - 1) as usize))
            } else if h <= m + r {
                continue;
            } else {
                match map.get(&h) {
                    Some(Entry::True) => continue,
                    Some(Entry::Lifted(n, lits)) => (*n, lits),
                    None => {
                        return Err(format!("step {}: hint {h} refers to no live clause", s.id));
                    }
                }
            };
            let mut open = None;
            let mut opens = 0;
            let mut sat = false;
            for &l in lits {
                match value(l, &val) {
                    1 => {
                        sat = true;
                        break;
                    }
                    0 => {
                        opens += 1;
                        open = Some(l);
                    }
                    _ => {}
                }
            }
            if sat {
                continue;
            }
            hints.push(id as i64);
            match (opens, open) {
                (0, _) => {
                    conflict = true;
                    break;
                }
                (1, Some(l)) => {
                    let v = l.var().dimacs() as usize;
                    val[v] = if l.is_positive() { 1 } else { -1 };
                    trail.push(v);
                }
                _ => {
                    return Err(format!(
                        "step {}: hint {h} is not unit after lifting (the proof is not a refutation of this CNF)",
                        s.id
                    ));
                }
            }
        }
        for v in trail.drain(..) {
            val[v] = 0;
        }
        if !conflict {
            return Err(format!(
                "step {}: the hints reach no conflict (the proof is not a refutation of this CNF)",
                s.id
            ));
        }
        let id = next;
        next += 1;
        writer
            .add(id, clause.iter().map(|l| l.dimacs()), hints.iter().copied())
            .map_err(io)?;
        if empty {
            break id;
        }
        map.insert(s.id, Entry::Lifted(id, clause));
    };
    let mut rest: Vec<u64> = map
        .into_values()
        .filter_map(|e| match e {
            Entry::Lifted(n, _) => Some(n),
            Entry::True => None,
        })
        .collect();
    rest.sort_unstable();
    if !units.is_empty() {
        writer.delete(negation, rest).map_err(io)?;
    }
    let (_, bytes) = writer.finish().map_err(io)?;
    Ok(LiftedCube {
        added: next - m - 1,
        negation,
        complete: units.is_empty(),
        bytes,
    })
}

/// Writes one LRAT proof of `f` to `out` in `format`: the lifted cube
/// derivations (cube `j` of `lifted` derives the negation of cube `j`; each
/// comes with a reader of what [`lift_cube`] wrote), then `coverage_proof`,
/// a refutation of the coverage CNF whose clauses are `f`'s clauses at
/// `sources` (0-based) followed by the cube negations in order. Returns the
/// bytes written.
///
/// # Errors
/// [`Error::Solver`] (named `proof combination`) when a proof is malformed,
/// the coverage proof does not derive the empty clause, or `out` fails.
pub fn assemble<R: Read>(
    f: &Cnf,
    sources: &[usize],
    lifted: impl IntoIterator<Item = (LiftedCube, R)>,
    coverage_proof: impl Read,
    out: impl Write,
    format: LratFormat,
) -> Result<u64> {
    let writer = LratWriter::new(out, format);
    combine(f, sources, lifted, coverage_proof, writer).map_err(|reason| Error::Solver {
        solver: "proof combination".into(),
        reason,
    })
}

fn combine<R: Read, W: Write>(
    f: &Cnf,
    sources: &[usize],
    lifted: impl IntoIterator<Item = (LiftedCube, R)>,
    coverage_proof: impl Read,
    mut writer: LratWriter<W>,
) -> std::result::Result<u64, String> {
    let m = f.num_clauses() as u64;
    let io = |e: std::io::Error| format!("writing the combined proof: {e}");
    let mut next = m + 1;
    // The last id added, the label of text deletions.
    let mut last = m;
    let mut negations = Vec::new();
    let mut s = Step::default();
    for (j, (lc, src)) in lifted.into_iter().enumerate() {
        // The derivation's ids m+1.. move to next..; F's ids stay.
        let shift = next - (m + 1);
        let global = |id: u64| if id > m { id + shift } else { id };
        let mut reader =
            LratReader::new(src, None, f.num_vars()).map_err(|e| format!("cube {j}: {e}"))?;
        loop {
            match reader.next_step(&mut s) {
                Ok(true) => {}
                Ok(false) => break,
                Err(e) => return Err(format!("cube {j}: {}", reader_error(&reader, &s, e))),
            }
            match s.kind {
                StepKind::Add => {
                    last = global(s.id);
                    let hints = s.refs.iter().map(|&h| global(h as u64) as i64);
                    writer.add(last, s.lits.iter().copied(), hints)
                }
                StepKind::Delete => writer.delete(last, s.refs.iter().map(|&d| global(d as u64))),
            }
            .map_err(io)?;
        }
        next += lc.added;
        if lc.complete {
            return writer.finish().map(|(_, n)| n).map_err(io);
        }
        negations.push(global(lc.negation));
    }
    let inputs = (sources.len() + negations.len()) as u64;
    let input = |id: u64| -> u64 {
        let i = (id - 1) as usize;
        if i < sources.len() {
            sources[i] as u64 + 1
        } else {
            negations[i - sources.len()]
        }
    };
    let mut map: HashMap<u64, u64> = HashMap::new();
    let mut reader = LratReader::new(coverage_proof, None, f.num_vars())
        .map_err(|e| format!("coverage proof: {e}"))?;
    loop {
        match reader.next_step(&mut s) {
            Ok(true) => {}
            Ok(false) => return Err("the coverage proof does not derive the empty clause".into()),
            Err(e) => {
                return Err(format!("coverage proof: {}", reader_error(&reader, &s, e)));
            }
        }
        if s.kind == StepKind::Delete {
            let gone: Vec<u64> = s
                .refs
                .iter()
                .filter_map(|&d| map.remove(&(d as u64)))
                .collect();
            writer.delete(last, gone).map_err(io)?;
            continue;
        }
        if let Some(h) = s.rat_hint() {
            return Err(format!(
                "coverage proof: step {} is a RAT step (hint {h})",
                s.id
            ));
        }
        let mut hints = Vec::with_capacity(s.refs.len());
        for &h in &s.refs {
            let h = h as u64;
            let g = if (1..=inputs).contains(&h) {
                input(h)
            } else {
                *map.get(&h)
                    .ok_or_else(|| format!("coverage proof: hint {h} refers to no clause"))?
            };
            hints.push(g as i64);
        }
        let id = next;
        next += 1;
        last = id;
        writer.add(id, s.lits.iter().copied(), hints).map_err(io)?;
        if s.lits.is_empty() {
            return writer.finish().map(|(_, n)| n).map_err(io);
        }
        map.insert(s.id, id);
    }
}
