//! A small CDCL(T) solver: the skeleton's clauses plus the arithmetic of [`Theory`].
//!
//! The propositional core follows the MiniSat design (N. Eén and
//! N. Sörensson, An extensible SAT-solver, SAT 2003): two watched literals
//! with blockers, first-UIP learning with recursive minimisation, VSIDS with
//! a binary heap, phase saving, Luby restarts (M. Luby, A. Sinclair and
//! D. Zuckerman, Optimal speedup of Las Vegas algorithms, 1993), and deletion
//! of learned clauses by LBD (G. Audemard and L. Simon, Predicting learnt
//! clauses quality in modern SAT solvers, IJCAI 2009). The theory is called
//! after every complete unit propagation, as in DPLL(T) (R. Nieuwenhuis,
//! A. Oliveras and C. Tinelli, JACM 53 (2006)); a theory conflict becomes a
//! *lemma* clause that the search then learns from like any other conflict.
//! All these citations are \[recalled\].
//!
//! # Proof
//!
//! Every learned clause is logged with LRAT hints ([`ProofLog`]): the unit
//! clauses of level-0 literals met during analysis, then the reasons of all
//! resolved or minimised-away literals in trail order, then the conflict
//! clause. Literals fixed at level 0 by a longer clause get their own unit
//! clause in the log, so that hints can name them. Lemma clauses enter the
//! log as input clauses of the final check; their Farkas certificates are
//! kept beside them ([`Solver::lemmas`]).

use std::time::Instant;

mod heap;
mod theory_glue;

use super::prooflog::ProofLog;
use super::theory::{Item, Lemma, Theory};
use crate::cnf::{Cnf, Lit};
use crate::error::Result;

const NONE: u32 = u32::MAX;

#[derive(Clone, Debug)]
struct ClauseData {
    start: u32,
    len: u32,
    id: u64,
    learnt: bool,
    lbd: u32,
    act: f32,
    deleted: bool,
}

/// How a search ended.
#[derive(Debug)]
pub enum SatOutcome {
    /// All variables assigned, every clause true, the theory consistent.
    Sat,
    /// The empty clause was derived (its LRAT steps are in the log).
    Unsat,
    /// Stopped without an answer, with the reason.
    Unknown(String),
}

/// Counters of one search.
#[derive(Clone, Debug, Default, serde::Serialize)]
pub struct SatStats {
    /// Decisions made.
    pub decisions: u64,
    /// Conflicts (propositional and theory).
    pub conflicts: u64,
    /// Conflicts found by the theory.
    pub theory_conflicts: u64,
    /// Literals propagated.
    pub propagations: u64,
    /// Restarts.
    pub restarts: u64,
    /// Learned clauses deleted.
    pub deleted: u64,
    /// Literals over all learned clauses.
    pub learned_literals: u64,
}

/// A progress report, given to the callback about once a second.
#[derive(Clone, Debug)]
pub struct Progress {
    /// Seconds since the start.
    pub seconds: f64,
    /// Counters so far.
    pub stats: SatStats,
    /// Lemmas so far.
    pub lemmas: usize,
}

/// The solver.
pub struct Solver {
    nvars: usize,
    /// Every clause as `[index, length, literals…]`; `ClauseData::start`
    /// is the position of its first literal.
    arena: Vec<u32>,
    cls: Vec<ClauseData>,
    /// Per literal: (arena position of a clause's first literal, a blocker
    /// literal) for the clauses that watch it.
    watches: Vec<Vec<(u32, u32)>>,
    val: Vec<i8>,
    level: Vec<u32>,
    reason: Vec<u32>,
    tpos: Vec<u32>,
    trail: Vec<u32>,
    lim: Vec<usize>,
    qhead: usize,
    act: Vec<f64>,
    inc: f64,
    heap: Vec<u32>,
    hpos: Vec<u32>,
    phase: Vec<bool>,
    seen: Vec<u8>,
    unit_id: Vec<u64>,
    log: ProofLog,
    theory: Option<Theory>,
    atom: Vec<Option<Item>>,
    atom_var: std::collections::HashMap<Item, u32>,
    fact_var: Vec<u32>,
    th_count: usize,
    lemmas: Vec<Lemma>,
    garbage: usize,
    cla_inc: f32,
    /// Add the two-atom cycle lemmas of [`Theory::pattern_lemmas`] before searching.
    pub patterns: bool,
    /// Add the order and equilateral lemmas of [`Theory::order_lemmas`] before searching.
    pub order: bool,
    /// Ends the search (unknown) once set, checked with the deadline.
    pub stop: Option<std::sync::Arc<std::sync::atomic::AtomicBool>>,
    /// Counters.
    pub stats: SatStats,
}

#[inline]
fn var(l: u32) -> usize {
    (l >> 1) as usize
}

#[inline]
fn to_internal(l: Lit) -> u32 {
    ((l.var().dimacs() - 1) << 1) | u32::from(!l.is_positive())
}

#[inline]
fn to_dimacs(l: u32) -> i32 {
    let v = (l >> 1) as i32 + 1;
    if l & 1 == 1 { -v } else { v }
}

fn luby(mut i: u64) -> u64 {
    // the i-th element (0-based) of 1 1 2 1 1 2 4 …
    let mut size = 1u64;
    let mut seq = 0u32;
    while size < i + 1 {
        seq += 1;
        size = 2 * size + 1;
    }
    while size - 1 != i {
        size = (size - 1) >> 1;
        seq -= 1;
        i %= size;
    }
    1 << seq
}

impl Solver {
    /// A solver for `cnf` (clause `i` has proof id `i + 1`), with the theory
    /// reading the atoms `atom[v]` (`Some(Item::Tight(i, j, c))` for `T(i, j, c)`, by
    /// 0-based variable). Profile facts get fresh variables as the theory finds them.
    ///
    /// # Errors
    /// [`crate::Error::Io`] when the proof log cannot be created.
    pub fn new(
        cnf: &Cnf,
        theory: Option<Theory>,
        atom: Vec<Option<Item>>,
        proof: bool,
    ) -> Result<Solver> {
        let nvars = cnf.num_vars() as usize;
        let mut s = Solver {
            nvars,
            arena: Vec::with_capacity(cnf.num_lits()),
            cls: Vec::with_capacity(cnf.num_clauses()),
            watches: vec![Vec::new(); 2 * nvars],
            val: vec![0; 2 * nvars],
            level: vec![0; nvars],
            reason: vec![NONE; nvars],
            tpos: vec![0; nvars],
            trail: Vec::with_capacity(nvars),
            lim: Vec::new(),
            qhead: 0,
            act: vec![0.0; nvars],
            inc: 1.0,
            heap: Vec::with_capacity(nvars),
            hpos: vec![NONE; nvars],
            phase: vec![std::env::var_os("PHASE1").is_some(); nvars],
            seen: vec![0; nvars],
            unit_id: vec![0; nvars],
            log: ProofLog::new(cnf.num_clauses() as u64, proof)?,
            theory,
            atom_var: atom
                .iter()
                .enumerate()
                .filter_map(|(v, a)| a.map(|a| (a, v as u32)))
                .collect(),
            atom,
            fact_var: Vec::new(),
            th_count: 0,
            lemmas: Vec::new(),
            garbage: 0,
            cla_inc: 1.0,
            patterns: true,
            order: true,
            stop: None,
            stats: SatStats::default(),
        };
        s.atom.resize(nvars, None);
        for v in 0..nvars {
            s.heap_insert(v as u32);
        }
        Ok(s)
    }

    /// The theory lemmas found so far, in the order of their ids.
    pub fn lemmas(&self) -> &[Lemma] {
        &self.lemmas
    }

    /// The variable (0-based) of each profile fact, by the fact's index.
    pub fn fact_vars(&self) -> &[u32] {
        &self.fact_var
    }

    /// The variable of fact `f`, created (with those of all earlier facts) if new.
    fn fact_variable(&mut self, f: usize) -> u32 {
        while self.fact_var.len() <= f {
            let idx = self.fact_var.len();
            let v = self.new_var();
            self.atom[v as usize] = Some(Item::Fact(idx));
            self.atom_var.insert(Item::Fact(idx), v);
            self.fact_var.push(v);
        }
        self.fact_var[f]
    }

    /// A fresh variable, unassigned, eligible for decisions; returns its 0-based index.
    fn new_var(&mut self) -> u32 {
        let v = self.nvars;
        self.nvars += 1;
        self.watches.push(Vec::new());
        self.watches.push(Vec::new());
        self.val.push(0);
        self.val.push(0);
        self.level.push(0);
        self.reason.push(NONE);
        self.tpos.push(0);
        self.act.push(0.0);
        self.hpos.push(NONE);
        self.phase.push(false);
        self.seen.push(0);
        self.unit_id.push(0);
        self.atom.push(None);
        self.heap_insert(v as u32);
        v as u32
    }

    /// The theory (for reading the profile and potentials after `Sat`).
    pub fn theory(&self) -> Option<&Theory> {
        self.theory.as_ref()
    }

    /// The value of 0-based variable `v` (`true` only when assigned true).
    pub fn value(&self, v: usize) -> bool {
        self.val[2 * v] == 1
    }

    /// Splits off the proof log (after `Unsat`) and the lemmas.
    pub fn into_parts(self) -> (ProofLog, Vec<Lemma>) {
        (self.log, self.lemmas)
    }

    #[inline]
    fn lval(&self, l: u32) -> i8 {
        self.val[l as usize]
    }

    fn lits(&self, c: u32) -> &[u32] {
        let d = &self.cls[c as usize];
        &self.arena[d.start as usize..(d.start + d.len) as usize]
    }

    fn bump(&mut self, v: usize) {
        self.act[v] += self.inc;
        if self.act[v] > 1e100 {
            for a in &mut self.act {
                *a *= 1e-100;
            }
            self.inc *= 1e-100;
        }
        let p = self.hpos[v];
        if p != NONE {
            self.heap_up(p as usize);
        }
    }

    // ---- assignment

    fn enqueue(&mut self, l: u32, reason: u32) {
        let v = var(l);
        self.val[l as usize] = 1;
        self.val[(l ^ 1) as usize] = -1;
        self.level[v] = self.lim.len() as u32;
        self.reason[v] = reason;
        self.tpos[v] = self.trail.len() as u32;
        self.trail.push(l);
        if l & 1 == 0
            && let (Some(item), Some(th)) = (self.atom[v], self.theory.as_mut())
        {
            th.assert_item(item);
            self.th_count += 1;
        }
        if self.lim.is_empty() && reason != NONE {
            // a literal fixed at level 0 by a longer clause gets its own unit clause
            let mut hints = Vec::new();
            for &q in self.lits(reason) {
                if q != l {
                    hints.push(self.unit_id[var(q)]);
                }
            }
            hints.push(self.cls[reason as usize].id);
            self.unit_id[v] = self.log.derive(&[to_dimacs(l)], &hints);
        }
    }

    fn backtrack(&mut self, lvl: usize) {
        if self.lim.len() <= lvl {
            return;
        }
        let to = self.lim[lvl];
        for k in (to..self.trail.len()).rev() {
            let l = self.trail[k];
            let v = var(l);
            if l & 1 == 0 && self.atom[v].is_some() && self.theory.is_some() {
                self.th_count -= 1;
            }
            self.val[l as usize] = 0;
            self.val[(l ^ 1) as usize] = 0;
            self.reason[v] = NONE;
            self.phase[v] = l & 1 == 0;
            self.heap_insert(v as u32);
        }
        self.trail.truncate(to);
        self.lim.truncate(lvl);
        self.qhead = self.qhead.min(to);
        let n = self.th_count;
        if let Some(th) = self.theory.as_mut() {
            th.backtrack(n);
        }
    }

    // ---- clauses

    /// Stores a clause and watches its first two literals; returns its index.
    fn attach(&mut self, lits: &[u32], id: u64, learnt: bool, lbd: u32) -> u32 {
        let ci = self.cls.len() as u32;
        // The index and length sit just before the literals, so that
        // propagation, which finds a clause by its arena position, reads one
        // stretch of memory instead of the metadata and then the literals.
        self.arena.push(ci);
        self.arena.push(lits.len() as u32);
        let start = self.arena.len() as u32;
        self.arena.extend_from_slice(lits);
        self.cls.push(ClauseData {
            start,
            len: lits.len() as u32,
            id,
            learnt,
            lbd,
            act: 0.0,
            deleted: false,
        });
        if lits.len() >= 2 {
            self.watches[lits[0] as usize].push((start, lits[1]));
            self.watches[lits[1] as usize].push((start, lits[0]));
        }
        ci
    }

    fn propagate(&mut self) -> Option<u32> {
        while self.qhead < self.trail.len() {
            let p = self.trail[self.qhead];
            self.qhead += 1;
            self.stats.propagations += 1;
            let fl = p ^ 1;
            let mut ws = std::mem::take(&mut self.watches[fl as usize]);
            let mut i = 0;
            let mut j = 0;
            let mut confl = None;
            while i < ws.len() {
                let (start, blocker) = ws[i];
                i += 1;
                if self.lval(blocker) == 1 {
                    ws[j] = (start, blocker);
                    j += 1;
                    continue;
                }
                // Watch lists hold no deleted clause: `reduce` purges them.
                let st = start as usize;
                debug_assert!(!self.cls[self.arena[st - 2] as usize].deleted);
                let len = self.arena[st - 1] as usize;
                if self.arena[st] == fl {
                    self.arena.swap(st, st + 1);
                }
                let first = self.arena[st];
                if first != blocker && self.lval(first) == 1 {
                    ws[j] = (start, first);
                    j += 1;
                    continue;
                }
                let mut moved = false;
                for k in 2..len {
                    let q = self.arena[st + k];
                    if self.lval(q) != -1 {
                        self.arena.swap(st + 1, st + k);
                        self.watches[q as usize].push((start, first));
                        moved = true;
                        break;
                    }
                }
                if moved {
                    continue;
                }
                ws[j] = (start, first);
                j += 1;
                let ci = self.arena[st - 2];
                if self.lval(first) == -1 {
                    confl = Some(ci);
                    while i < ws.len() {
                        ws[j] = ws[i];
                        j += 1;
                        i += 1;
                    }
                } else {
                    self.enqueue(first, ci);
                }
            }
            ws.truncate(j);
            self.watches[fl as usize] = ws;
            if confl.is_some() {
                return confl;
            }
        }
        None
    }

    // ---- conflict analysis

    /// A level-0 variable met in analysis: marked seen (2), to be cleared,
    /// and its unit clause's id added to the hints. Returns whether `v` was one.
    fn note_unit(&mut self, v: usize, clear: &mut Vec<usize>, units: &mut Vec<u64>) -> bool {
        if self.level[v] != 0 {
            return false;
        }
        self.seen[v] = 2;
        clear.push(v);
        units.push(self.unit_id[v]);
        true
    }

    fn lit_redundant(
        &mut self,
        l: u32,
        levels: u64,
        stack: &mut Vec<u32>,
        clear: &mut Vec<usize>,
        units: &mut Vec<u64>,
    ) -> bool {
        stack.clear();
        stack.push(l);
        let top = clear.len();
        while let Some(x) = stack.pop() {
            let r = self.reason[var(x)];
            let lits: Vec<u32> = self.lits(r).to_vec();
            for q in lits {
                let v = var(q);
                if v == var(x) || self.seen[v] != 0 {
                    continue;
                }
                if self.note_unit(v, clear, units) {
                    continue;
                }
                if self.reason[v] != NONE && (1u64 << (self.level[v] & 63)) & levels != 0 {
                    self.seen[v] = 3;
                    clear.push(v);
                    stack.push(q);
                } else {
                    // undo this attempt's marks; level-0 marks stay (an extra unit hint is harmless)
                    for &w in &clear[top..] {
                        if self.seen[w] == 3 {
                            self.seen[w] = 0;
                        }
                    }
                    let mut k = top;
                    for r in top..clear.len() {
                        if self.seen[clear[r]] == 2 {
                            clear[k] = clear[r];
                            k += 1;
                        }
                    }
                    clear.truncate(k);
                    return false;
                }
            }
        }
        true
    }

    /// First-UIP analysis of the conflict clause `confl` (all literals false,
    /// at least two at the current level). Returns the learned clause (asserting
    /// literal first), the backjump level, and the LRAT hints.
    fn analyze(&mut self, confl: u32) -> (Vec<u32>, usize, Vec<u64>) {
        let cur = self.lim.len() as u32;
        let mut learnt = vec![0u32];
        let mut clear: Vec<usize> = Vec::new();
        let mut units: Vec<u64> = Vec::new();
        let mut resolved: Vec<usize> = Vec::new();
        let mut path = 0;
        let mut p = NONE;
        let mut idx = self.trail.len();
        let mut cl = confl;
        loop {
            if self.cls[cl as usize].learnt {
                self.cls[cl as usize].act += self.cla_inc;
            }
            let lits: Vec<u32> = self.lits(cl).to_vec();
            for q in lits {
                let v = var(q);
                if p != NONE && v == var(p) {
                    continue;
                }
                if self.seen[v] != 0 {
                    continue;
                }
                if self.note_unit(v, &mut clear, &mut units) {
                    continue;
                }
                self.seen[v] = 1;
                clear.push(v);
                self.bump(v);
                if self.level[v] == cur {
                    path += 1;
                } else {
                    learnt.push(q);
                }
            }
            loop {
                idx -= 1;
                if self.seen[var(self.trail[idx])] == 1 {
                    break;
                }
            }
            p = self.trail[idx];
            path -= 1;
            if path == 0 {
                break;
            }
            resolved.push(var(p));
            cl = self.reason[var(p)];
        }
        learnt[0] = p ^ 1;
        // recursive minimisation
        let mut levels = 0u64;
        for &q in &learnt[1..] {
            levels |= 1u64 << (self.level[var(q)] & 63);
        }
        let mut stack = Vec::new();
        let mut kept = vec![learnt[0]];
        let mut removed = Vec::new();
        for k in 1..learnt.len() {
            let q = learnt[k];
            if self.reason[var(q)] != NONE
                && self.lit_redundant(q, levels, &mut stack, &mut clear, &mut units)
            {
                removed.push(var(q));
            } else {
                kept.push(q);
            }
        }
        // hints: units, then reasons in trail order, then the conflict clause
        let mut chain: Vec<usize> = resolved;
        chain.extend(removed);
        chain.extend(clear.iter().copied().filter(|&v| self.seen[v] == 3));
        chain.sort_by_key(|&v| self.tpos[v]);
        chain.dedup();
        let mut hints = units;
        hints.extend(chain.iter().map(|&v| self.cls[self.reason[v] as usize].id));
        hints.push(self.cls[confl as usize].id);
        for v in clear {
            self.seen[v] = 0;
        }
        // backjump level: highest level among the rest, placed second
        let mut bt = 0usize;
        if kept.len() > 1 {
            let mut best = 1;
            for k in 1..kept.len() {
                if self.level[var(kept[k])] > self.level[var(kept[best])] {
                    best = k;
                }
            }
            kept.swap(1, best);
            bt = self.level[var(kept[1])] as usize;
        }
        (kept, bt, hints)
    }

    fn lbd(&mut self, lits: &[u32]) -> u32 {
        let mut ls: Vec<u32> = lits.iter().map(|&l| self.level[var(l)]).collect();
        ls.sort_unstable();
        ls.dedup();
        ls.len() as u32
    }

    /// Learns from conflict clause `confl`; `Err(())` means the empty clause was derived.
    fn learn(&mut self, confl: u32) -> std::result::Result<(), ()> {
        self.stats.conflicts += 1;
        // the conflict may sit below the current level (theory conflicts)
        let lits = self.lits(confl).to_vec();
        let maxl = lits.iter().map(|&l| self.level[var(l)]).max().unwrap_or(0) as usize;
        if maxl == 0 {
            let mut hints: Vec<u64> = lits.iter().map(|&l| self.unit_id[var(l)]).collect();
            hints.push(self.cls[confl as usize].id);
            self.log.derive(&[], &hints);
            return Err(());
        }
        self.backtrack(maxl);
        let at_max = lits
            .iter()
            .filter(|&&l| self.level[var(l)] as usize == maxl)
            .count();
        if at_max == 1 {
            // the clause itself is asserting
            let l = *lits
                .iter()
                .find(|&&l| self.level[var(l)] as usize == maxl)
                .unwrap_or(&lits[0]);
            let second = lits
                .iter()
                .filter(|&&x| x != l)
                .map(|&x| self.level[var(x)] as usize)
                .max()
                .unwrap_or(0);
            self.backtrack(second);
            self.rewatch(confl, l, second);
            self.enqueue(l, confl);
            return Ok(());
        }
        let (learnt, bt, hints) = self.analyze(confl);
        self.inc /= 0.95;
        self.cla_inc /= 0.999;
        self.stats.learned_literals += learnt.len() as u64;
        let dl: Vec<i32> = learnt.iter().map(|&l| to_dimacs(l)).collect();
        let id = self.log.derive(&dl, &hints);
        self.backtrack(bt);
        if learnt.len() == 1 {
            self.unit_id[var(learnt[0])] = id;
            self.enqueue(learnt[0], NONE);
        } else {
            let lbd = self.lbd(&learnt);
            let ci = self.attach(&learnt, id, true, lbd);
            self.enqueue(learnt[0], ci);
        }
        Ok(())
    }

    /// Makes `l` the first literal of clause `ci` and a literal of level
    /// `second` its second, and watches those two.
    fn rewatch(&mut self, ci: u32, l: u32, second: usize) {
        let d = self.cls[ci as usize].clone();
        let (st, len) = (d.start as usize, d.len as usize);
        if len < 2 {
            return;
        }
        let old = (self.arena[st], self.arena[st + 1]);
        if let Some(k) = (0..len).find(|&k| self.arena[st + k] == l) {
            self.arena.swap(st, st + k);
        }
        if let Some(k) = (1..len).find(|&k| self.level[var(self.arena[st + k])] as usize == second)
        {
            self.arena.swap(st + 1, st + k);
        }
        let new = (self.arena[st], self.arena[st + 1]);
        if old == new || (old.0 == new.1 && old.1 == new.0) {
            return;
        }
        let start = d.start;
        for w in [old.0, old.1] {
            self.watches[w as usize].retain(|&(s, _)| s != start);
        }
        self.watches[new.0 as usize].push((start, new.1));
        self.watches[new.1 as usize].push((start, new.0));
    }

    fn reduce(&mut self) {
        let mut cand: Vec<u32> = (0..self.cls.len() as u32)
            .filter(|&c| {
                let d = &self.cls[c as usize];
                d.learnt && !d.deleted && d.lbd > 2 && d.len > 2
            })
            .collect();
        cand.sort_by(|&a, &b| {
            let (x, y) = (&self.cls[a as usize], &self.cls[b as usize]);
            y.lbd.cmp(&x.lbd).then(x.act.total_cmp(&y.act))
        });
        let half = cand.len() / 2;
        for &c in &cand[..half] {
            let first = self.arena[self.cls[c as usize].start as usize];
            let locked = self.lval(first) == 1 && self.reason[var(first)] == c;
            if !locked {
                self.cls[c as usize].deleted = true;
                self.garbage += self.cls[c as usize].len as usize + 2;
                self.log.delete(self.cls[c as usize].id);
                self.stats.deleted += 1;
            }
        }
        let arena = &self.arena;
        let cls = &self.cls;
        for w in &mut self.watches {
            w.retain(|&(s, _)| !cls[arena[s as usize - 2] as usize].deleted);
        }
        if self.garbage > self.arena.len() / 2 {
            let mut arena = Vec::with_capacity(self.arena.len() - self.garbage);
            for d in &mut self.cls {
                if d.deleted {
                    d.len = 0;
                    d.start = 0;
                    continue;
                }
                // Index and length move with the literals (see `attach`).
                let (s, e) = (d.start as usize - 2, (d.start + d.len) as usize);
                arena.extend_from_slice(&self.arena[s..e]);
                d.start = arena.len() as u32 - d.len;
            }
            self.arena = arena;
            self.garbage = 0;
            // Positions changed: watch again the first two literals of every
            // live clause, which are its watched ones (propagation and
            // `rewatch` keep them there).
            for w in &mut self.watches {
                w.clear();
            }
            for d in &self.cls {
                if d.deleted || d.len < 2 {
                    continue;
                }
                let st = d.start as usize;
                let (a, b) = (self.arena[st], self.arena[st + 1]);
                self.watches[a as usize].push((d.start, b));
                self.watches[b as usize].push((d.start, a));
            }
        }
    }

    /// Runs the search until an answer, `deadline`, or `stop()` returns true.
    /// `progress` is called about once a second.
    pub fn solve(
        &mut self,
        cnf: &Cnf,
        deadline: Option<Instant>,
        progress: &mut dyn FnMut(&Progress),
    ) -> SatOutcome {
        let t0 = Instant::now();
        // load
        for (k, c) in cnf.clauses().enumerate() {
            let id = k as u64 + 1;
            let mut lits: Vec<u32> = c.iter().map(|&l| to_internal(l)).collect();
            lits.sort_unstable();
            lits.dedup();
            if lits.windows(2).any(|w| w[0] ^ 1 == w[1]) {
                continue;
            }
            match lits.len() {
                0 => {
                    self.log.derive(&[], &[id]);
                    return SatOutcome::Unsat;
                }
                1 => {
                    let l = lits[0];
                    match self.lval(l) {
                        1 => {}
                        -1 => {
                            self.log.derive(&[], &[self.unit_id[var(l)], id]);
                            return SatOutcome::Unsat;
                        }
                        _ => {
                            self.unit_id[var(l)] = id;
                            self.enqueue(l, NONE);
                        }
                    }
                }
                _ => {
                    self.attach(&lits, id, false, 0);
                }
            }
        }
        if self.patterns {
            // before the first propagation every watch is still to be visited,
            // so these clauses may be attached whatever their literals' values
            let pats = self
                .theory
                .as_mut()
                .map(|t| t.pattern_lemmas())
                .unwrap_or_default();
            for (fact, lemma) in pats {
                let fv = self.fact_variable(fact);
                let mut lits = vec![fv << 1];
                for &((i, j, c), _) in &lemma.atoms {
                    if let Some(&v) = self.atom_var.get(&Item::Tight(i, j, c)) {
                        lits.push((v << 1) | 1);
                    }
                }
                let id = self.log.lemma();
                self.lemmas.push(lemma);
                self.attach(&lits, id, false, 0);
            }
        }
        if self.order {
            let order = self
                .theory
                .as_mut()
                .map(Theory::order_lemmas)
                .unwrap_or_default();
            for lemma in order {
                let mut lits: Vec<u32> = Vec::with_capacity(lemma.facts.len() + 2);
                for &(f, _) in &lemma.conclusions {
                    lits.push(self.fact_variable(f) << 1);
                }
                for &(f, _) in &lemma.facts {
                    lits.push((self.fact_variable(f) << 1) | 1);
                }
                for &((i, j, c), _) in &lemma.atoms {
                    if let Some(&v) = self.atom_var.get(&Item::Tight(i, j, c)) {
                        lits.push((v << 1) | 1);
                    }
                }
                let id = self.log.lemma();
                self.lemmas.push(lemma);
                self.attach(&lits, id, false, 0);
            }
        }
        let mut restart_no = 0u64;
        let mut next_restart = 100 * luby(0);
        let mut conflicts_here = 0u64;
        let mut next_reduce = 4000u64;
        let mut last_report = t0;
        loop {
            let mut confl = self.propagate();
            if confl.is_none() {
                match self.theory_check() {
                    Ok(c) => confl = c,
                    Err(None) => continue,
                    Err(Some(e)) => return SatOutcome::Unknown(format!("theory: {e}")),
                }
            }
            if let Some(c) = confl {
                conflicts_here += 1;
                if self.learn(c).is_err() {
                    return SatOutcome::Unsat;
                }
                if self.stats.conflicts >= next_reduce {
                    next_reduce += 4000 + 300 * (self.stats.conflicts / 4000);
                    self.reduce();
                }
                if self.stats.conflicts.is_multiple_of(64) {
                    let now = Instant::now();
                    if deadline.is_some_and(|d| now >= d) {
                        return SatOutcome::Unknown("time limit reached".into());
                    }
                    if self
                        .stop
                        .as_ref()
                        .is_some_and(|s| s.load(std::sync::atomic::Ordering::Relaxed))
                    {
                        return SatOutcome::Unknown("stopped: another cube answered".into());
                    }
                    if now.duration_since(last_report).as_secs_f64() >= 1.0 {
                        last_report = now;
                        progress(&Progress {
                            seconds: now.duration_since(t0).as_secs_f64(),
                            stats: self.stats.clone(),
                            lemmas: self.lemmas.len(),
                        });
                    }
                }
                continue;
            }
            if conflicts_here >= next_restart {
                restart_no += 1;
                conflicts_here = 0;
                next_restart = 100 * luby(restart_no);
                self.stats.restarts += 1;
                self.backtrack(0);
                continue;
            }
            // decide
            let mut next = None;
            while let Some(v) = self.heap_pop() {
                if self.val[2 * v as usize] == 0 {
                    next = Some(v as usize);
                    break;
                }
            }
            let Some(v) = next else {
                return SatOutcome::Sat;
            };
            self.stats.decisions += 1;
            self.lim.push(self.trail.len());
            let l = ((v as u32) << 1) | u32::from(!self.phase[v]);
            self.enqueue(l, NONE);
        }
    }

    /// Number of variables.
    pub fn num_vars(&self) -> usize {
        self.nvars
    }
}

#[cfg(test)]
mod tests;
