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
//! # Assembling
//!
//! [`assemble`] writes the lifted proofs one after the other with fresh ids
//! after `m` (deleting each cube's intermediate clauses once its negation is
//! derived, never a clause of `F`, which later cubes use), then the coverage
//! proof, whose input clauses are clauses of `F` and the cube negations just
//! derived, renumbered to their ids. The result refutes `F` and is checked by
//! [`crate::proof::check_lrat_with`] like any other proof: lifting is not
//! trusted.

use std::collections::HashMap;

use crate::cnf::{Cnf, Lit};
use crate::error::{Error, Result};

/// One step of an LRAT proof as read.
#[derive(Debug, Default)]
struct RawStep {
    /// An addition (else a deletion).
    add: bool,
    /// The added clause's id.
    id: u64,
    /// The added clause's literals.
    lits: Vec<i64>,
    /// Hints (addition) or deleted ids (deletion).
    refs: Vec<i64>,
}

/// Reads LRAT steps, text or binary (detected as by the checker).
struct StepReader<'a> {
    buf: &'a [u8],
    pos: usize,
    binary: bool,
}

impl<'a> StepReader<'a> {
    fn new(buf: &'a [u8]) -> StepReader<'a> {
        let binary = matches!(buf.first(), Some(b'a') | Some(b'd'));
        StepReader {
            buf,
            pos: 0,
            binary,
        }
    }

    fn skip_space(&mut self) {
        while self.pos < self.buf.len() && self.buf[self.pos].is_ascii_whitespace() {
            self.pos += 1;
        }
    }

    fn text_int(&mut self) -> std::result::Result<i64, String> {
        self.skip_space();
        let start = self.pos;
        if self.pos < self.buf.len() && self.buf[self.pos] == b'-' {
            self.pos += 1;
        }
        while self.pos < self.buf.len() && self.buf[self.pos].is_ascii_digit() {
            self.pos += 1;
        }
        std::str::from_utf8(&self.buf[start..self.pos])
            .ok()
            .and_then(|s| s.parse().ok())
            .ok_or_else(|| format!("malformed number at byte {start}"))
    }

    fn leb(&mut self) -> std::result::Result<i64, String> {
        let mut x: u64 = 0;
        let mut shift = 0;
        loop {
            let b = *self.buf.get(self.pos).ok_or("truncated binary proof")?;
            self.pos += 1;
            if shift > 63 {
                return Err("number too large in binary proof".into());
            }
            x |= u64::from(b & 0x7f) << shift;
            shift += 7;
            if b & 0x80 == 0 {
                break;
            }
        }
        let v = (x >> 1) as i64;
        Ok(if x & 1 == 1 { -v } else { v })
    }

    fn until_zero(
        &mut self,
        out: &mut Vec<i64>,
        read: fn(&mut Self) -> std::result::Result<i64, String>,
    ) -> std::result::Result<(), String> {
        out.clear();
        loop {
            let x = read(self)?;
            if x == 0 {
                return Ok(());
            }
            out.push(x);
        }
    }

    /// Reads the next step into `s`; false at the end of the proof.
    fn next(&mut self, s: &mut RawStep) -> std::result::Result<bool, String> {
        if self.binary {
            let Some(&b) = self.buf.get(self.pos) else {
                return Ok(false);
            };
            self.pos += 1;
            match b {
                b'a' => {
                    s.add = true;
                    s.id = self.leb()?.unsigned_abs();
                    self.until_zero(&mut s.lits, Self::leb)?;
                    self.until_zero(&mut s.refs, Self::leb)?;
                }
                b'd' => {
                    s.add = false;
                    self.until_zero(&mut s.refs, Self::leb)?;
                }
                other => return Err(format!("unexpected byte {other:#04x} in binary proof")),
            }
            return Ok(true);
        }
        loop {
            self.skip_space();
            match self.buf.get(self.pos) {
                None => return Ok(false),
                Some(b'c') => {
                    while self.pos < self.buf.len() && self.buf[self.pos] != b'\n' {
                        self.pos += 1;
                    }
                }
                Some(_) => break,
            }
        }
        s.id = self.text_int()?.unsigned_abs();
        self.skip_space();
        if self.buf.get(self.pos) == Some(&b'd') {
            self.pos += 1;
            s.add = false;
            self.until_zero(&mut s.refs, Self::text_int)
        } else {
            s.add = true;
            self.until_zero(&mut s.lits, Self::text_int)?;
            self.until_zero(&mut s.refs, Self::text_int)
        }
        .map(|()| true)
    }
}

/// A reference to a clause in a lifted proof.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Ref {
    /// Clause `id` of `F` (1-based).
    Input(u64),
    /// The `n`-th clause this cube's lifted proof adds.
    Local(u32),
}

#[derive(Clone, Debug)]
enum LStep {
    Add { lits: Vec<Lit>, hints: Vec<Ref> },
    Delete(Vec<u32>),
}

/// A cube's refutation turned into a derivation of the cube's negation from
/// `F`, with ids relative to the cube (placed by [`assemble`]).
#[derive(Clone, Debug)]
pub struct LiftedCube {
    steps: Vec<LStep>,
    added: u32,
    negation: u32,
    /// The cube has no literals: its proof already refutes `F`.
    complete: bool,
}

enum Entry {
    /// A unit of the cube, or a lifted clause satisfied by the cube: true
    /// under the assignment of every lifted check, never a useful hint.
    True,
    Local(u32),
}

/// Lifts `proof`, an LRAT refutation of `f` plus the unit clauses `units`
/// (ids `m+1..=m+r`), to a derivation of `¬units` from `f`.
///
/// # Errors
/// [`Error::Solver`] (named `proof lifting`) when the proof is malformed,
/// has RAT steps, or is not a refutation of that CNF.
pub fn lift_cube(f: &Cnf, units: &[Lit], proof: &[u8]) -> Result<LiftedCube> {
    lift_inner(f, units, proof).map_err(|reason| Error::Solver {
        solver: "proof lifting".into(),
        reason,
    })
}

fn lift_inner(f: &Cnf, units: &[Lit], proof: &[u8]) -> std::result::Result<LiftedCube, String> {
    let m = f.num_clauses() as u64;
    let r = units.len() as u64;
    let nv = f.num_vars() as usize;
    // in_cube[v] = +1 / -1 when the cube asserts v / ¬v.
    let mut in_cube = vec![0i8; nv + 1];
    for u in units {
        in_cube[u.var().dimacs() as usize] = if u.is_positive() { 1 } else { -1 };
    }
    let is_cube_lit = |l: Lit, in_cube: &[i8]| {
        in_cube[l.var().dimacs() as usize] == if l.is_positive() { 1 } else { -1 }
    };
    let neg_units: Vec<Lit> = units.iter().map(|&u| !u).collect();
    let mut map: HashMap<u64, Entry> = HashMap::new();
    let mut local: Vec<Vec<Lit>> = Vec::new();
    let mut live: Vec<bool> = Vec::new();
    let mut steps = Vec::new();
    // val[v]: 0 unassigned, 1 true, -1 false.
    let mut val = vec![0i8; nv + 1];
    let mut trail: Vec<usize> = Vec::new();
    let lit_of = |x: i64| -> std::result::Result<Lit, String> {
        if x == 0 || x.unsigned_abs() > nv as u64 {
            return Err(format!("literal {x} is not a variable of the CNF"));
        }
        Ok(Lit::from_dimacs(x as i32))
    };
    let value = |l: Lit, val: &[i8]| {
        let v = val[l.var().dimacs() as usize];
        if l.is_positive() { v } else { -v }
    };
    let mut reader = StepReader::new(proof);
    let mut s = RawStep::default();
    let mut negation = None;
    while reader.next(&mut s)? {
        if !s.add {
            let mut del = Vec::new();
            for &id in &s.refs {
                let id = id.unsigned_abs();
                if id <= m + r {
                    continue;
                }
                match map.remove(&id) {
                    Some(Entry::Local(n)) => {
                        live[n as usize] = false;
                        local[n as usize] = Vec::new();
                        del.push(n);
                    }
                    Some(Entry::True) => {}
                    None => {
                        return Err(format!(
                            "the proof deletes clause {id}, which it never added"
                        ));
                    }
                }
            }
            if !del.is_empty() {
                steps.push(LStep::Delete(del));
            }
            continue;
        }
        if s.id <= m + r || map.contains_key(&s.id) {
            return Err(format!("the proof reuses clause id {}", s.id));
        }
        if s.refs.iter().any(|&h| h < 0) {
            return Err(format!(
                "step {} is a RAT step, which cannot be lifted",
                s.id
            ));
        }
        let mut clause: Vec<Lit> = Vec::with_capacity(s.lits.len() + neg_units.len());
        let mut satisfied = false;
        for &x in &s.lits {
            let l = lit_of(x)?;
            if is_cube_lit(l, &in_cube) || clause.contains(&!l) {
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
        let mut hints = Vec::new();
        let mut conflict = false;
        for &h in &s.refs {
            let h = h as u64;
            let (re, lits): (Ref, &[Lit]) = if h <= m {
                (Ref::Input(h), f.clause((h - 1) as usize))
            } else if h <= m + r {
                continue;
            } else {
                match map.get(&h) {
                    Some(Entry::True) => continue,
                    Some(Entry::Local(n)) => (Ref::Local(*n), &local[*n as usize]),
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
            hints.push(re);
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
        let n = local.len() as u32;
        map.insert(s.id, Entry::Local(n));
        live.push(true);
        local.push(clause.clone());
        steps.push(LStep::Add {
            lits: clause,
            hints,
        });
        if empty {
            negation = Some(n);
            break;
        }
    }
    let negation = negation.ok_or("the proof does not derive the empty clause")?;
    let rest: Vec<u32> = (0..local.len() as u32)
        .filter(|&n| n != negation && live[n as usize])
        .collect();
    if !rest.is_empty() {
        steps.push(LStep::Delete(rest));
    }
    Ok(LiftedCube {
        steps,
        added: local.len() as u32,
        negation,
        complete: units.is_empty(),
    })
}

fn push_num(out: &mut Vec<u8>, x: i64) {
    out.extend_from_slice(x.to_string().as_bytes());
    out.push(b' ');
}

/// One text LRAT proof of `f`: the lifted cube proofs (cube `j` of
/// `lifted` derives the negation of cube `j`), then `coverage_proof`, a
/// refutation of the coverage CNF whose clauses are `f`'s clauses at
/// `sources` (0-based) followed by the cube negations in order.
///
/// # Errors
/// [`Error::Solver`] (named `proof combination`) when the coverage proof is
/// malformed or does not derive the empty clause.
pub fn assemble(
    f: &Cnf,
    sources: &[usize],
    lifted: &[LiftedCube],
    coverage_proof: &[u8],
) -> Result<Vec<u8>> {
    assemble_inner(f, sources, lifted, coverage_proof).map_err(|reason| Error::Solver {
        solver: "proof combination".into(),
        reason,
    })
}

fn assemble_inner(
    f: &Cnf,
    sources: &[usize],
    lifted: &[LiftedCube],
    coverage_proof: &[u8],
) -> std::result::Result<Vec<u8>, String> {
    let m = f.num_clauses() as u64;
    let mut out = Vec::new();
    let mut next = m + 1;
    let mut negations = Vec::with_capacity(lifted.len());
    for lc in lifted {
        let base = next;
        let global = |r: Ref| match r {
            Ref::Input(id) => id,
            Ref::Local(n) => base + u64::from(n),
        };
        let mut n = 0u64;
        for st in &lc.steps {
            match st {
                LStep::Add { lits, hints } => {
                    push_num(&mut out, (base + n) as i64);
                    for l in lits {
                        push_num(&mut out, i64::from(l.dimacs()));
                    }
                    out.extend_from_slice(b"0 ");
                    for &h in hints {
                        push_num(&mut out, global(h) as i64);
                    }
                    out.extend_from_slice(b"0\n");
                    n += 1;
                }
                LStep::Delete(ids) => {
                    push_num(&mut out, (base + n).saturating_sub(1).max(m) as i64);
                    out.extend_from_slice(b"d ");
                    for &d in ids {
                        push_num(&mut out, (base + u64::from(d)) as i64);
                    }
                    out.extend_from_slice(b"0\n");
                }
            }
        }
        next = base + u64::from(lc.added);
        let neg = base + u64::from(lc.negation);
        if lc.complete {
            return Ok(out);
        }
        negations.push(neg);
    }
    let inputs = (sources.len() + lifted.len()) as u64;
    let input = |id: u64| -> u64 {
        let i = (id - 1) as usize;
        if i < sources.len() {
            sources[i] as u64 + 1
        } else {
            negations[i - sources.len()]
        }
    };
    let mut map: HashMap<u64, u64> = HashMap::new();
    let mut reader = StepReader::new(coverage_proof);
    let mut s = RawStep::default();
    while reader.next(&mut s)? {
        if !s.add {
            let ids: Vec<u64> = s
                .refs
                .iter()
                .filter_map(|&d| map.remove(&d.unsigned_abs()))
                .collect();
            if !ids.is_empty() {
                push_num(&mut out, (next - 1) as i64);
                out.extend_from_slice(b"d ");
                for d in ids {
                    push_num(&mut out, d as i64);
                }
                out.extend_from_slice(b"0\n");
            }
            continue;
        }
        let id = next;
        next += 1;
        push_num(&mut out, id as i64);
        for &l in &s.lits {
            push_num(&mut out, l);
        }
        out.extend_from_slice(b"0 ");
        for &h in &s.refs {
            if h < 0 {
                return Err(format!("coverage proof: step {} is a RAT step", s.id));
            }
            let h = h as u64;
            let g = if h >= 1 && h <= inputs {
                input(h)
            } else {
                *map.get(&h)
                    .ok_or_else(|| format!("coverage proof: hint {h} refers to no clause"))?
            };
            push_num(&mut out, g as i64);
        }
        out.extend_from_slice(b"0\n");
        if s.lits.is_empty() {
            return Ok(out);
        }
        map.insert(s.id, id);
    }
    Err("the coverage proof does not derive the empty clause".into())
}
