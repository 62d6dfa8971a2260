//! The LRAT checker: reverse unit propagation over the hints of each step.
//! Format, algorithm and soundness are described in [`super`].

use std::io::Read;
use std::path::Path;

use super::read::{LratReader, Step, StepKind};
use super::{LratError, LratFileError, LratFormat, LratOptions, LratReason, LratSummary};
use crate::cnf::{Cnf, Lit};

/// Checks an LRAT proof (text or binary, detected) that `cnf` is unsatisfiable.
///
/// The CNF's clause `i` has id `i + 1`.
///
/// # Errors
/// [`LratError`] naming the step, the clause id and the reason.
pub fn check_lrat(cnf: &Cnf, proof: impl AsRef<[u8]>) -> Result<LratSummary, LratError> {
    check_lrat_with(cnf, proof, &LratOptions::default())
}

/// Checks the proof in the file at `path` with [`check_lrat_read`], reading
/// it in pieces: the proof is never held in memory as a whole. A file that
/// is a zstd frame is decompressed as it is read
/// ([`super::compressed::ProofSource`]).
///
/// # Errors
/// [`LratFileError::Io`] when the file cannot be opened,
/// [`LratFileError::Rejected`] when the proof is rejected (a read error
/// midway is [`LratReason::Io`]).
pub fn check_lrat_file(
    cnf: &Cnf,
    path: &Path,
    options: &LratOptions,
) -> Result<LratSummary, LratFileError> {
    let file = std::fs::File::open(path)
        .and_then(super::compressed::ProofSource::new)
        .map_err(|source| LratFileError::Io {
            path: path.to_path_buf(),
            source,
        })?;
    check_lrat_read(cnf, file, options).map_err(|source| LratFileError::Rejected {
        path: path.to_path_buf(),
        source,
    })
}

/// Checks an LRAT proof that `cnf` is unsatisfiable, with `options`.
///
/// # Errors
/// [`LratError`] naming the step, the clause id and the reason.
pub fn check_lrat_with(
    cnf: &Cnf,
    proof: impl AsRef<[u8]>,
    options: &LratOptions,
) -> Result<LratSummary, LratError> {
    check_lrat_read(cnf, proof.as_ref(), options)
}

/// Checks an LRAT proof read from `source` that `cnf` is unsatisfiable,
/// with `options`. The proof is read in pieces, so its size is bounded by
/// the disk, not by memory; the literals of deleted clauses are dropped
/// (see the module documentation of [`super`]).
///
/// # Errors
/// [`LratError`] naming the step, the clause id and the reason.
pub fn check_lrat_read(
    cnf: &Cnf,
    source: impl Read,
    options: &LratOptions,
) -> Result<LratSummary, LratError> {
    check_read(cnf, source, options, LratReader::LOOKAHEAD)
}

/// [`check_lrat_read`] with the first lookahead given (tests use tiny ones
/// to cut steps at every possible byte).
pub(super) fn check_read(
    cnf: &Cnf,
    source: impl Read,
    options: &LratOptions,
    lookahead: usize,
) -> Result<LratSummary, LratError> {
    let mut reader = LratReader::with_lookahead(source, options.format, cnf.num_vars(), lookahead)
        .map_err(|reason| LratError {
            step: 1,
            id: None,
            line: 0,
            offset: 0,
            reason,
        })?;
    let format = reader.format();
    let mut db = Db::new(cnf);
    let mut prop = Propagator::new(cnf.num_vars());
    let mut step = Step::default();
    let mut summary = LratSummary {
        format,
        cnf_clauses: cnf.num_clauses(),
        steps: 0,
        added: 0,
        deleted: 0,
        hints: 0,
        empty_clause_id: 0,
        ignored_tail_bytes: 0,
    };
    let mut first_add = true;
    let mut codes: Vec<u32> = Vec::new();
    loop {
        let n = summary.steps + 1;
        let fail = |step: &Step, id: Option<u64>, reason: LratReason| LratError {
            step: n,
            id,
            line: if format == LratFormat::Text {
                step.line
            } else {
                0
            },
            offset: step.offset,
            reason,
        };
        match reader.next_step(&mut step) {
            Ok(true) => {}
            Ok(false) => {
                return Err(fail(
                    &step,
                    None,
                    LratReason::NoEmptyClause {
                        steps: summary.steps,
                    },
                ));
            }
            Err(reason) => {
                let id = (step.id != 0).then_some(step.id);
                return Err(fail(&step, id, reason));
            }
        }
        summary.steps = n;
        match step.kind {
            StepKind::Add => {
                let id = step.id;
                let err = |reason| fail(&step, Some(id), reason);
                if first_add && options.ids_follow_cnf {
                    let expected = cnf.num_clauses() as u64 + 1;
                    if id != expected {
                        return Err(err(LratReason::IdNotAfterCnf { id, expected }));
                    }
                }
                first_add = false;
                if id <= db.max_id {
                    return Err(err(LratReason::IdNotIncreasing {
                        id,
                        previous: db.max_id,
                    }));
                }
                if let Some(hint) = step.rat_hint() {
                    return Err(err(LratReason::RatNotSupported { hint }));
                }
                codes.clear();
                codes.extend(step.lits.iter().map(|&l| code_of(l)));
                prop.check(&db, &codes, &step.refs).map_err(err)?;
                summary.hints += step.refs.len() as u64;
                summary.added += 1;
                db.push(id, &codes);
                if codes.is_empty() {
                    summary.empty_clause_id = id;
                    summary.ignored_tail_bytes = reader.tail_len();
                    return Ok(summary);
                }
            }
            StepKind::Delete => {
                for &clause in &step.refs {
                    // The reader gives positive ids only.
                    let clause = clause as u64;
                    db.delete(clause, n)
                        .map_err(|reason| fail(&step, Some(clause), reason))?;
                    summary.deleted += 1;
                }
            }
        }
    }
}

/// The code of a DIMACS literal: `2·var + (1 if negative)`; its negation is `code ^ 1`.
fn code_of(lit: i32) -> u32 {
    (lit.unsigned_abs() << 1) | (lit < 0) as u32
}

/// One stored clause: its literals `lits[start..start + len]` while live;
/// once deleted, `len` is [`Entry::DELETED`] and `start` the deleting step.
#[derive(Clone, Copy, Debug)]
struct Entry {
    start: u64,
    len: u32,
}

impl Entry {
    const DELETED: u32 = u32::MAX;

    fn deleted_in(self) -> Option<u64> {
        (self.len == Entry::DELETED).then_some(self.start)
    }
}

/// The literals of one live clause: a clause of the CNF, read in place, or
/// one the proof added, stored as codes.
#[derive(Clone, Copy, Debug)]
enum Lits<'a> {
    Cnf(&'a [Lit]),
    Added(&'a [u32]),
}

impl<'a> Lits<'a> {
    /// The literal codes (see [`code_of`]).
    fn codes(self) -> impl Iterator<Item = u32> + Clone + 'a {
        let (cnf, added): (&[Lit], &[u32]) = match self {
            Lits::Cnf(l) => (l, &[]),
            Lits::Added(c) => (&[], c),
        };
        cnf.iter()
            .map(|l| code_of(l.dimacs()))
            .chain(added.iter().copied())
    }
}

/// Where a clause id lives.
#[derive(Clone, Copy)]
enum Slot {
    /// Clause `i` of the CNF (id `i + 1`).
    Cnf(usize),
    /// Entry `i` of the added clauses.
    Added(usize),
}

/// Clause storage by id: the CNF's clauses (ids `1..=m`) are read where
/// they are, so a check costs nothing per clause of the CNF that the proof
/// never names (a cube's proof of a few hundred steps against a formula of
/// a million clauses, checked once per cube); only the clauses the proof
/// adds are stored.
struct Db<'a> {
    cnf: &'a Cnf,
    /// For each clause of the CNF, the step that deleted it, or 0 while it
    /// is live (steps count from 1). Empty until the first deletion of a
    /// CNF clause.
    cnf_deleted: Vec<u64>,
    /// Ids of the added clauses, strictly increasing; empty while they are
    /// `m + 1, m + 2, …` (dense), so that an id gives its index directly.
    ids: Vec<u64>,
    entries: Vec<Entry>,
    /// Literal codes of the live added clauses, back to back (with the gaps
    /// of deleted ones until the next compaction).
    lits: Vec<u32>,
    /// Literals in `lits` that belong to deleted clauses.
    dead: usize,
    dense: bool,
    max_id: u64,
}

impl<'a> Db<'a> {
    /// Below this many stored literals the array is never compacted.
    const COMPACT_MIN: usize = 1 << 16;

    fn new(cnf: &'a Cnf) -> Db<'a> {
        Db {
            cnf,
            cnf_deleted: Vec::new(),
            ids: Vec::new(),
            entries: Vec::new(),
            lits: Vec::new(),
            dead: 0,
            dense: true,
            max_id: cnf.num_clauses() as u64,
        }
    }

    /// The number of clauses of the CNF, `m`.
    fn m(&self) -> u64 {
        self.cnf.num_clauses() as u64
    }

    /// Stores an added clause; `id` must exceed every id so far (and so `m`).
    fn push(&mut self, id: u64, lits: &[u32]) {
        debug_assert!(id > self.max_id);
        if self.dense && id != self.m() + self.entries.len() as u64 + 1 {
            self.dense = false;
            let m = self.m();
            self.ids = (1..=self.entries.len() as u64).map(|k| m + k).collect();
        }
        if !self.dense {
            self.ids.push(id);
        }
        // A clause of 2^32 − 1 literals or more cannot be read into memory
        // in the first place; the cap only keeps `DELETED` unambiguous.
        let len = lits.len().min(Entry::DELETED as usize - 1);
        self.entries.push(Entry {
            start: self.lits.len() as u64,
            len: len as u32,
        });
        self.lits.extend_from_slice(&lits[..len]);
        self.max_id = id;
    }

    fn index(&self, id: u64) -> Option<Slot> {
        let i = id.checked_sub(1)?;
        if i < self.m() {
            return Some(Slot::Cnf(i as usize));
        }
        if self.dense {
            let k = (i - self.m()) as usize;
            (k < self.entries.len()).then_some(Slot::Added(k))
        } else {
            self.ids.binary_search(&id).ok().map(Slot::Added)
        }
    }

    /// The literals of the live clause at `slot`, or the step that deleted it.
    fn clause(&self, slot: Slot) -> Result<Lits<'_>, u64> {
        match slot {
            Slot::Cnf(i) => match self.cnf_deleted.get(i) {
                Some(&step) if step != 0 => Err(step),
                _ => Ok(Lits::Cnf(self.cnf.clause(i))),
            },
            Slot::Added(k) => {
                let e = self.entries[k];
                match e.deleted_in() {
                    Some(step) => Err(step),
                    None => Ok(Lits::Added(
                        &self.lits[e.start as usize..e.start as usize + e.len as usize],
                    )),
                }
            }
        }
    }

    fn delete(&mut self, id: u64, step: u64) -> Result<(), LratReason> {
        let already = |first| LratReason::DeleteDeleted {
            clause: id,
            deleted_in_step: first,
        };
        match self
            .index(id)
            .ok_or(LratReason::DeleteUnknown { clause: id })?
        {
            Slot::Cnf(i) => {
                if self.cnf_deleted.is_empty() {
                    self.cnf_deleted = vec![0; self.cnf.num_clauses()];
                }
                let d = &mut self.cnf_deleted[i];
                if *d != 0 {
                    return Err(already(*d));
                }
                *d = step;
            }
            Slot::Added(k) => {
                let e = &mut self.entries[k];
                if let Some(first) = e.deleted_in() {
                    return Err(already(first));
                }
                self.dead += e.len as usize;
                *e = Entry {
                    start: step,
                    len: Entry::DELETED,
                };
                if self.dead > Self::COMPACT_MIN && 2 * self.dead > self.lits.len() {
                    self.compact();
                }
            }
        }
        Ok(())
    }

    /// Moves the live clauses' literals to the front, in order, dropping the
    /// deleted ones'. Linear in the array; it runs once the dead half has
    /// built up, so its cost is at most one move per literal ever stored.
    fn compact(&mut self) {
        let mut to = 0usize;
        for e in self.entries.iter_mut() {
            if e.deleted_in().is_some() {
                continue;
            }
            let from = e.start as usize;
            let len = e.len as usize;
            self.lits.copy_within(from..from + len, to);
            e.start = to as u64;
            to += len;
        }
        self.lits.truncate(to);
        self.dead = 0;
    }
}

/// The assignment and trail used by one RUP check.
struct Propagator {
    /// `1` where the literal (by code) is true.
    val: Vec<u8>,
    trail: Vec<u32>,
}

impl Propagator {
    fn new(num_vars: u32) -> Propagator {
        Propagator {
            val: vec![0; 2 * (num_vars as usize + 1)],
            trail: Vec::new(),
        }
    }

    /// Checks that `hints` refute the negation of `lits`; leaves the assignment empty.
    fn check(&mut self, db: &Db, lits: &[u32], hints: &[i64]) -> Result<(), LratReason> {
        let result = self.propagate(db, lits, hints);
        for &c in &self.trail {
            self.val[c as usize] = 0;
        }
        self.trail.clear();
        result
    }

    fn assign(&mut self, code: u32) {
        self.val[code as usize] = 1;
        self.trail.push(code);
    }

    fn propagate(&mut self, db: &Db, lits: &[u32], hints: &[i64]) -> Result<(), LratReason> {
        let mut conflict = false;
        for &l in lits {
            let neg = l ^ 1;
            if self.val[neg as usize] == 1 {
                continue; // a repeated literal
            }
            if self.val[l as usize] == 1 {
                conflict = true; // the clause holds l and ¬l: a tautology
                break;
            }
            self.assign(neg);
        }
        for (k, &hint) in hints.iter().enumerate() {
            // Callers pass positive hints only (a negative one is a RAT step).
            let hint = hint as u64;
            let i = db.index(hint).ok_or(LratReason::UnknownHint { hint })?;
            let clause = db
                .clause(i)
                .map_err(|deleted_in_step| LratReason::DeletedHint {
                    hint,
                    deleted_in_step,
                })?;
            if conflict {
                continue;
            }
            // A hint clause that is already satisfied propagates nothing and
            // is skipped: the rest of the hints must still reach the
            // conflict, so accepting it adds no trust. CaDiCaL 2.2's LRAT
            // proofs hold such redundant hints.
            if clause.codes().any(|c| self.val[c as usize] == 1) {
                continue;
            }
            let mut unit: Option<u32> = None;
            for c in clause.codes() {
                if self.val[(c ^ 1) as usize] == 1 {
                    continue;
                }
                match unit {
                    None => unit = Some(c),
                    Some(u) if u == c => {}
                    Some(_) => {
                        return Err(LratReason::HintNotUnit {
                            hint,
                            position: k + 1,
                        });
                    }
                }
            }
            match unit {
                None => conflict = true,
                Some(u) => self.assign(u),
            }
        }
        if conflict {
            Ok(())
        } else {
            Err(LratReason::NoConflict { hints: hints.len() })
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cnf::Lit;
    use crate::proof::testgen::{GOOD, square, to_binary};

    fn reject(proof: &str) -> LratError {
        check_lrat(&square(), proof).expect_err("the proof should be rejected")
    }

    #[test]
    fn accepts_a_small_proof_in_both_encodings() {
        let s = check_lrat(&square(), GOOD).unwrap();
        assert_eq!(
            s,
            LratSummary {
                format: LratFormat::Text,
                cnf_clauses: 4,
                steps: 3,
                added: 2,
                deleted: 2,
                hints: 5,
                empty_clause_id: 6,
                ignored_tail_bytes: 0,
            }
        );
        let bin = to_binary(GOOD);
        let b = check_lrat(&square(), &bin).unwrap();
        assert_eq!(b.format, LratFormat::Binary);
        assert_eq!((b.steps, b.added, b.deleted, b.hints), (3, 2, 2, 5));
        let strict = LratOptions {
            ids_follow_cnf: true,
            ..LratOptions::default()
        };
        check_lrat_with(&square(), GOOD, &strict).unwrap();
    }

    #[test]
    fn comments_gaps_tautologies_and_tails() {
        let p = "c made by hand\n5 1 0 1 2 0\nc more\n\n9 2 -2 0 0\n20 0 5 3 4 0\n21 0 0\n";
        let s = check_lrat(&square(), p).unwrap();
        assert_eq!(s.empty_clause_id, 20);
        assert_eq!(s.ignored_tail_bytes, "21 0 0\n".len());
        // Ids with gaps are looked up by binary search; deletion still works there.
        let e = reject("10 1 0 1 2 0\n10 d 10 0\n20 0 10 3 4 0\n");
        assert_eq!(e.step, 3);
        assert_eq!(
            e.reason,
            LratReason::DeletedHint {
                hint: 10,
                deleted_in_step: 2
            }
        );
        // A repeated literal in a hint clause still makes it unit.
        let mut cnf = Cnf::new();
        cnf.add_clause(&[Lit::from_dimacs(1), Lit::from_dimacs(1)]);
        cnf.add_clause(&[Lit::from_dimacs(-1)]);
        check_lrat(&cnf, "3 0 1 2 0\n").unwrap();
        // A repeated literal in the added clause is harmless.
        check_lrat(&square(), "5 1 1 0 1 2 0\n6 0 5 3 4 0\n").unwrap();
    }

    #[test]
    fn each_reason_with_its_step_and_id() {
        let cases: Vec<(&str, u64, Option<u64>, LratReason)> = vec![
            (
                // Hint 3 holds 1, already true: it is skipped, so no conflict.
                "5 1 0 3 0\n",
                1,
                Some(5),
                LratReason::NoConflict { hints: 1 },
            ),
            (
                "5 0 1 0\n",
                1,
                Some(5),
                LratReason::HintNotUnit {
                    hint: 1,
                    position: 1,
                },
            ),
            (
                "5 1 0 1 0\n",
                1,
                Some(5),
                LratReason::NoConflict { hints: 1 },
            ),
            (
                "5 1 0 1 2 0\n6 0 5 3 0\n",
                2,
                Some(6),
                LratReason::NoConflict { hints: 2 },
            ),
            (
                "5 1 0 9 0\n",
                1,
                Some(5),
                LratReason::UnknownHint { hint: 9 },
            ),
            (
                "5 1 0 0 0\n",
                1,
                Some(5),
                LratReason::NoConflict { hints: 0 },
            ),
            (
                "4 d 1 0\n5 1 0 1 2 0\n",
                2,
                Some(5),
                LratReason::DeletedHint {
                    hint: 1,
                    deleted_in_step: 1,
                },
            ),
            (
                "4 d 7 0\n",
                1,
                Some(7),
                LratReason::DeleteUnknown { clause: 7 },
            ),
            (
                "4 d 1 0\n4 d 2 1 0\n",
                2,
                Some(1),
                LratReason::DeleteDeleted {
                    clause: 1,
                    deleted_in_step: 1,
                },
            ),
            (
                "4 1 0 1 2 0\n",
                1,
                Some(4),
                LratReason::IdNotIncreasing { id: 4, previous: 4 },
            ),
            (
                "5 1 0 1 2 0\n5 0 5 3 4 0\n",
                2,
                Some(5),
                LratReason::IdNotIncreasing { id: 5, previous: 5 },
            ),
            (
                "5 1 0 1 -2 0\n",
                1,
                Some(5),
                LratReason::RatNotSupported { hint: -2 },
            ),
            (
                "5 3 0 1 0\n",
                1,
                Some(5),
                LratReason::LiteralOutOfRange {
                    lit: 3,
                    num_vars: 2,
                },
            ),
            (
                "5 1 0 1 2 0\n",
                2,
                None,
                LratReason::NoEmptyClause { steps: 1 },
            ),
            ("", 1, None, LratReason::NoEmptyClause { steps: 0 }),
            ("5 1 0 1 2", 1, Some(5), LratReason::Truncated),
            ("5 1 0 1 2 0\n6 0", 2, Some(6), LratReason::Truncated),
        ];
        for (proof, step, id, reason) in cases {
            let e = reject(proof);
            assert_eq!((e.step, e.id, &e.reason), (step, id, &reason), "{proof:?}");
            if !proof.is_empty() && reason != LratReason::Truncated {
                // The binary encoding gives the same verdict (deletions carry no label).
                let b = check_lrat(&square(), to_binary(proof)).unwrap_err();
                assert_eq!((b.step, &b.reason), (step, &reason), "binary {proof:?}");
            }
        }
        let strict = LratOptions {
            ids_follow_cnf: true,
            ..LratOptions::default()
        };
        let late = "7 1 0 1 2 0\n8 0 7 3 4 0\n";
        check_lrat(&square(), late).unwrap();
        let e = check_lrat_with(&square(), late, &strict).unwrap_err();
        assert_eq!(e.step, 1);
        assert_eq!(e.reason, LratReason::IdNotAfterCnf { id: 7, expected: 5 });
        let shown = reject("5 1 0 3 0\n").to_string();
        assert_eq!(
            shown,
            "LRAT step 1 (clause 5), line 1: the 1 hints propagate without a conflict: the \
             clause is not implied by them"
        );
        // A satisfied hint is skipped where the others still conflict.
        check_lrat(&square(), "5 1 0 3 1 2 0\n6 0 5 3 4 0\n").unwrap();
        assert!(reject("5 1 0 3 0\n").reason.is_rup_failure());
        assert!(!reject("5 1 0 9 0\n").reason.is_rup_failure());
    }

    #[test]
    fn deleted_clauses_give_their_memory_back() {
        // The unit (1) derived again and again from its previous copy, which
        // is then deleted: the store keeps only the live copy.
        let mut cnf = Cnf::new();
        cnf.add_clause(&[Lit::from_dimacs(1), Lit::from_dimacs(2)]);
        cnf.add_clause(&[Lit::from_dimacs(1), Lit::from_dimacs(-2)]);
        cnf.add_clause(&[Lit::from_dimacs(-1)]);
        let mut proof = String::from("4 1 0 1 2 0\n");
        let rounds = 3 * Db::COMPACT_MIN as u64;
        for k in 0..rounds {
            let id = 5 + k;
            proof.push_str(&format!("{id} 1 0 {} 0\n{id} d {} 0\n", id - 1, id - 1));
        }
        let last = 4 + rounds;
        proof.push_str(&format!("{} 0 {last} 3 0\n", last + 1));
        let s = check_lrat(&cnf, &proof).unwrap();
        assert_eq!((s.added, s.deleted), (rounds + 2, rounds));
        // The same checks, with the store inspected at the end.
        let mut db = Db::new(&cnf);
        for k in 0..rounds {
            db.push(4 + k, &[2, 3, 4, 2]);
            if k > 0 {
                db.delete(3 + k, k).unwrap();
            }
        }
        assert!(
            db.lits.len() <= 2 * (Db::COMPACT_MIN + 4 + 5),
            "{}",
            db.lits.len()
        );
        let codes = |db: &Db, id| {
            db.clause(db.index(id).unwrap())
                .map(|l| l.codes().collect::<Vec<_>>())
        };
        assert_eq!(codes(&db, 3 + rounds), Ok(vec![2, 3, 4, 2]));
        assert_eq!(codes(&db, 1), Ok(vec![2, 4]));
        assert_eq!(codes(&db, 5), Err(2));
        assert!(db.ids.is_empty(), "ids 1, 2, … are found without a list");
        assert!(
            db.cnf_deleted.is_empty(),
            "no clause of the CNF was deleted"
        );
    }
}
