//! LRAT proofs: one reader, one writer, and a checker independent of any
//! solver's own checker.
//!
//! * [`read::LratReader`] reads either encoding in pieces (bounded memory,
//!   whatever the proof's size) and hands out one [`read::Step`] at a time.
//! * [`write::LratWriter`] writes either encoding, step by step.
//! * [`trim::trim`] keeps only the steps the empty clause depends on
//!   (measured on {−1,0,1}^5, p = 33: 68% of the additions and 70% of the
//!   bytes stay, for about four times the cost of a check, so nothing trims
//!   by default).
//! * [`compressed::ProofSource`] reads a proof file that is a zstd frame
//!   around either encoding (cube proofs of large campaigns are kept so);
//!   every reader of proof files goes through it.
//! * [`check_lrat_read`] and its wrappers check a proof against a
//!   [`Cnf`](crate::cnf::Cnf).
//!
//! Everything here depends only on [`crate::cnf`]: no solver code, no
//! varisat checker (DEVELOPERS.md, dependency rules).
//!
//! # The format
//!
//! An LRAT proof refers to clauses by positive integer *ids*. The clauses of
//! the CNF have the ids `1..=m` in the order of the CNF (clause `i` of
//! [`Cnf::clause`](crate::cnf::Cnf::clause) has id `i + 1`); the proof then adds clauses under new ids
//! and deletes clauses by id. Two encodings are read:
//!
//! * **Text.** One step per line (line breaks are not required between steps;
//!   all whitespace separates tokens). An addition is
//!   `ID LIT… 0 HINT… 0`: the clause `LIT…` (DIMACS literals) gets the id
//!   `ID`, and the hints are the ids of the clauses that unit propagation
//!   should use, in order. A deletion is `ID d ID… 0`; its leading id is a
//!   label (writers put the id of the last added clause there) and is not
//!   checked. A line that starts with `c` where a step would start is a comment.
//! * **Binary** (sometimes called compressed LRAT). An addition is the byte
//!   `a`, then unsigned LEB128 numbers: the id, the literals, `0`, the hints,
//!   `0`. A deletion is the byte `d`, the ids, `0`. Every number `x` is stored
//!   as `2·|x| + (1 if x < 0)`. The encoding is detected from the first byte
//!   (`a` or `d`), or chosen with [`LratOptions::format`].
//!
//! A negative hint starts the RAT part of a step in LRAT. RAT steps are **not
//! supported**: such a step is rejected with [`LratReason::RatNotSupported`].
//! Proofs written by varisat 0.2.2 through `varisat-lrat` contain only RUP
//! steps (its writer has no code path that emits a negative hint; the tests
//! check this on real proofs).
//!
//! # The algorithm
//!
//! The clauses of the CNF (ids `1..=m`) are read where the CNF holds them,
//! never copied, so that checking a short proof against a large formula
//! costs the proof, not the formula (a range of cubes checks one proof per
//! cube against the same formula; copying it per cube was most of the time
//! of 1,000 small cubes, measured on 2026-12-04). Their deletions are one
//! step number per clause, allocated at the first one. The clauses the proof
//! adds are kept in one flat literal array, with a per-clause record
//! (start, length, or the step that deleted it) found by id: directly by
//! index while ids are consecutive (as in varisat's proofs), by binary
//! search otherwise (ids are strictly increasing, so the id list stays
//! sorted). The literals of deleted clauses are dropped by compacting the
//! array once they make up half of it, so the memory of a check follows the
//! clauses the proof keeps alive (plus 16 bytes per id), not the size of
//! the proof. The assignment is an array indexed by literal.
//!
//! For an addition `C` with hints `h_1..h_k` it assigns every literal of `C`
//! false and walks the hints in order. At its turn each hint must be *unit*
//! (all its literals false except one unassigned literal, which is then
//! assigned true) or a *conflict* (all literals false). A hint with a true
//! literal is skipped: it forces nothing, so the other hints must still
//! reach the conflict (CaDiCaL 2.2 writes such redundant hints; refusing
//! them rejected valid proofs). A hint with two or more unassigned literals
//! is rejected. After the
//! conflict the remaining hints are only checked to exist. If the hints run
//! out without a conflict the step is rejected. A clause that contains a
//! literal and its negation is a tautology and needs no hints. Each clause is
//! scanned once per use, so checking is linear in the size of the proof.
//!
//! # Why it is sound
//!
//! Invariant: every clause in the store is implied by the CNF `F`. It holds
//! for the CNF's own clauses, and deletion only removes clauses. For an
//! accepted addition `C`, every assignment made while walking the hints is
//! forced in `F ∧ ¬C`: the literals of `C` are false by assumption, and a unit
//! hint (a stored clause, so implied by `F`) forces its last literal. A
//! conflict hint is then falsified by forced assignments, so `F ∧ ¬C` is
//! unsatisfiable, i.e. `F ⊨ C`. Hints are looked up among *live* clauses only,
//! so a proof cannot use a clause that was never derived. Ids must increase, so
//! a step cannot overwrite a stored clause. When the empty clause is added,
//! `F ⊨ ⊥`: the CNF is unsatisfiable. Checking stops there; anything after it
//! is counted in [`LratSummary::ignored_tail_bytes`] and not read.
//!
//! The CNF's clause order matters: a proof made for the same clauses in
//! another order, or for another CNF, refers to the wrong clauses and fails at
//! its first hint that no longer propagates. [`LratOptions::ids_follow_cnf`]
//! also demands that the first added id is `m + 1`, which catches a proof for
//! a CNF with a different clause count at step 1.

mod check;
pub mod compressed;
pub mod read;
pub mod trim;
pub mod write;

use std::fmt;
use std::path::PathBuf;

pub use check::{check_lrat, check_lrat_file, check_lrat_read, check_lrat_with};

/// The encoding of an LRAT proof.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, serde::Serialize)]
pub enum LratFormat {
    /// Text LRAT, one step per line.
    #[default]
    Text,
    /// Binary LRAT: `a`/`d` bytes and LEB128 numbers.
    Binary,
}

impl std::str::FromStr for LratFormat {
    type Err = String;
    fn from_str(s: &str) -> Result<LratFormat, String> {
        match s {
            "text" => Ok(LratFormat::Text),
            "binary" => Ok(LratFormat::Binary),
            other => Err(format!(
                "unknown LRAT encoding {other:?}; choose text or binary"
            )),
        }
    }
}

impl LratFormat {
    /// The encoding of `proof`, judged by its first byte: `a` or `d` mean binary.
    pub fn detect(proof: &[u8]) -> LratFormat {
        match proof.first() {
            Some(b'a') | Some(b'd') => LratFormat::Binary,
            _ => LratFormat::Text,
        }
    }
}

/// Options of [`check_lrat_with`].
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct LratOptions {
    /// Demand that the first added clause has id `m + 1`, where `m` is the
    /// CNF's clause count. Without it any first id above `m` is accepted.
    pub ids_follow_cnf: bool,
    /// The encoding; `None` detects it with [`LratFormat::detect`].
    pub format: Option<LratFormat>,
}

/// What an accepted proof contained.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct LratSummary {
    /// The encoding that was read.
    pub format: LratFormat,
    /// Clauses of the CNF (they have the ids `1..=cnf_clauses`).
    pub cnf_clauses: usize,
    /// Steps checked (additions and deletion lines), up to and including the
    /// step that added the empty clause.
    pub steps: u64,
    /// Clauses added, the empty clause included.
    pub added: u64,
    /// Clauses deleted (a deletion line may delete several).
    pub deleted: u64,
    /// Hints followed, over all additions.
    pub hints: u64,
    /// The id of the empty clause.
    pub empty_clause_id: u64,
    /// Bytes after the step that added the empty clause, other than
    /// whitespace; they were not read.
    pub ignored_tail_bytes: usize,
}

/// A rejected proof: where, and why.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub struct LratError {
    /// 1-based index of the step (additions and deletion lines, comments not
    /// counted). For [`LratReason::NoEmptyClause`] it is one past the last step.
    pub step: u64,
    /// For an addition, the id of the clause being added (when it was read);
    /// for a deletion, the id whose deletion failed.
    pub id: Option<u64>,
    /// 1-based line where the step starts (text proofs; 0 for binary ones).
    pub line: usize,
    /// Byte offset where the step starts.
    pub offset: usize,
    /// Why the proof was rejected.
    pub reason: LratReason,
}

impl fmt::Display for LratError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "LRAT step {}", self.step)?;
        if let Some(id) = self.id {
            write!(f, " (clause {id})")?;
        }
        if self.line > 0 {
            write!(f, ", line {}", self.line)?;
        } else {
            write!(f, ", byte {}", self.offset)?;
        }
        write!(f, ": {}", self.reason)
    }
}

/// Why a proof was rejected.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum LratReason {
    /// The bytes do not form a step.
    #[error("malformed step: {0}")]
    Malformed(String),
    /// The proof ends in the middle of a step.
    #[error("the proof ends in the middle of a step")]
    Truncated,
    /// The proof could not be read.
    #[error("reading the proof failed: {0}")]
    Io(String),
    /// An added clause's id is not above every id used before (the CNF's
    /// clauses have `1..=m`), so it would reuse or go back.
    #[error("clause id {id} is not above the previous id {previous}")]
    IdNotIncreasing {
        /// The id of the step.
        id: u64,
        /// The largest id so far.
        previous: u64,
    },
    /// With [`LratOptions::ids_follow_cnf`]: the first added id is not `m + 1`.
    #[error(
        "the first added clause has id {id}, expected {expected} (right after the CNF's clauses)"
    )]
    IdNotAfterCnf {
        /// The id of the step.
        id: u64,
        /// `m + 1`.
        expected: u64,
    },
    /// A literal names a variable the CNF does not have.
    #[error("literal {lit} is beyond the CNF's {num_vars} variables")]
    LiteralOutOfRange {
        /// The literal, as in DIMACS.
        lit: i64,
        /// The CNF's variable count.
        num_vars: u32,
    },
    /// A hint is not the id of any clause, past or present.
    #[error("hint {hint} refers to no clause")]
    UnknownHint {
        /// The hint.
        hint: u64,
    },
    /// A hint refers to a clause that was deleted.
    #[error("hint {hint} refers to a clause deleted in step {deleted_in_step}")]
    DeletedHint {
        /// The hint.
        hint: u64,
        /// The step that deleted it.
        deleted_in_step: u64,
    },
    /// A hint's clause has two or more unassigned literals at its turn.
    #[error(
        "hint {hint} (number {position} of the step) has two or more unassigned literals, so it is not unit"
    )]
    HintNotUnit {
        /// The hint.
        hint: u64,
        /// 1-based position in the step's hint list.
        position: usize,
    },
    /// Every hint propagated, but none gave a conflict: the clause is not RUP
    /// with these hints.
    #[error("the {hints} hints propagate without a conflict: the clause is not implied by them")]
    NoConflict {
        /// Number of hints of the step.
        hints: usize,
    },
    /// A negative hint: the step is a RAT step, which this checker does not support.
    #[error("RAT steps are not supported (negative hint {hint})")]
    RatNotSupported {
        /// The first negative hint.
        hint: i64,
    },
    /// A deletion names an id that was never used.
    #[error("deletion of clause {clause}, which does not exist")]
    DeleteUnknown {
        /// The id.
        clause: u64,
    },
    /// A deletion names a clause that is already deleted.
    #[error("deletion of clause {clause}, already deleted in step {deleted_in_step}")]
    DeleteDeleted {
        /// The id.
        clause: u64,
        /// The step that deleted it first.
        deleted_in_step: u64,
    },
    /// The proof ended without adding the empty clause.
    #[error("the proof ends after {steps} steps without deriving the empty clause")]
    NoEmptyClause {
        /// Steps read.
        steps: u64,
    },
}

impl LratReason {
    /// Whether this is a failed propagation: a hint that is neither unit nor
    /// conflict, or hints that give no conflict.
    pub fn is_rup_failure(&self) -> bool {
        matches!(
            self,
            LratReason::HintNotUnit { .. } | LratReason::NoConflict { .. }
        )
    }
}

/// Errors of [`check_lrat_file`].
#[derive(Debug, thiserror::Error)]
pub enum LratFileError {
    /// The proof file could not be read.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// The proof was rejected.
    #[error("{}: {source}", path.display())]
    Rejected {
        /// The file.
        path: PathBuf,
        /// Where and why.
        #[source]
        source: LratError,
    },
}
