//! An LRAT proof checker, independent of any solver's own checker.
//!
//! # The format
//!
//! An LRAT proof refers to clauses by positive integer *ids*. The clauses of
//! the CNF have the ids `1..=m` in the order of the CNF (clause `i` of
//! [`Cnf::clause`] has id `i + 1`); the proof then adds clauses under new ids
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
//! The checker keeps every live clause in one flat literal array, with a
//! per-clause record (start, length, the step that deleted it) found by id:
//! directly by index while ids are consecutive (as in varisat's proofs), by
//! binary search otherwise (ids are strictly increasing, so the id list stays
//! sorted). The assignment is an array indexed by literal.
//!
//! For an addition `C` with hints `h_1..h_k` it assigns every literal of `C`
//! false and walks the hints in order. At its turn each hint must be *unit*
//! (all its literals false except one unassigned literal, which is then
//! assigned true) or a *conflict* (all literals false). A hint with a true
//! literal, or with two or more unassigned literals, is rejected. After the
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

use std::fmt;
use std::io::Read;
use std::path::{Path, PathBuf};

use crate::cnf::Cnf;

/// The encoding of an LRAT proof.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, serde::Serialize)]
pub enum LratFormat {
    /// Text LRAT, one step per line.
    Text,
    /// Binary LRAT: `a`/`d` bytes and LEB128 numbers.
    Binary,
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
    /// A hint's clause has a true literal at its turn.
    #[error("hint {hint} (number {position} of the step) is already satisfied, not unit")]
    HintSatisfied {
        /// The hint.
        hint: u64,
        /// 1-based position in the step's hint list.
        position: usize,
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
            LratReason::HintSatisfied { .. }
                | LratReason::HintNotUnit { .. }
                | LratReason::NoConflict { .. }
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
/// it in pieces: the proof is never held in memory as a whole.
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
    let file = std::fs::File::open(path).map_err(|source| LratFileError::Io {
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
/// the disk, not by memory; only the clauses it keeps alive are stored.
///
/// # Errors
/// [`LratError`] naming the step, the clause id and the reason.
pub fn check_lrat_read(
    cnf: &Cnf,
    source: impl Read,
    options: &LratOptions,
) -> Result<LratSummary, LratError> {
    check_read(cnf, source, options, Reader::LOOKAHEAD)
}

/// [`check_lrat_read`] with the first lookahead given (tests use tiny ones
/// to cut steps at every possible byte).
fn check_read(
    cnf: &Cnf,
    source: impl Read,
    options: &LratOptions,
    lookahead: usize,
) -> Result<LratSummary, LratError> {
    let num_vars = cnf.num_vars();
    let mut reader = Reader {
        format: LratFormat::Text,
        src: Box::new(source),
        eof: false,
        lookahead: lookahead.max(1),
        buf: Vec::new(),
        base: 0,
        pos: 0,
        line: 1,
        num_vars,
    };
    if let Err(e) = reader.fill(1) {
        return Err(LratError {
            step: 1,
            id: None,
            line: 0,
            offset: 0,
            reason: LratReason::Io(e.to_string()),
        });
    }
    let format = options
        .format
        .unwrap_or_else(|| LratFormat::detect(&reader.buf));
    reader.format = format;
    let mut db = Db::new(cnf);
    let mut prop = Propagator::new(num_vars);
    let mut step = RawStep::default();
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
    loop {
        let n = summary.steps + 1;
        step.clear();
        let fail = |step: &RawStep, id: Option<u64>, reason: LratReason| LratError {
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
            Kind::Add => {
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
                if let Some(hint) = step.rat_hint {
                    return Err(err(LratReason::RatNotSupported { hint }));
                }
                prop.check(&db, &step.lits, &step.ids).map_err(err)?;
                summary.hints += step.ids.len() as u64;
                summary.added += 1;
                db.push(id, &step.lits);
                if step.lits.is_empty() {
                    summary.empty_clause_id = id;
                    summary.ignored_tail_bytes = reader.tail_len();
                    return Ok(summary);
                }
            }
            Kind::Delete => {
                for &clause in &step.ids {
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

#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
enum Kind {
    #[default]
    Add,
    Delete,
}

/// One step as read, with reused buffers.
#[derive(Debug, Default)]
struct RawStep {
    kind: Kind,
    /// Addition: the new id. Text deletion: the label. Binary deletion: 0.
    id: u64,
    /// Literal codes of an addition.
    lits: Vec<u32>,
    /// Hints of an addition (positive ones), or the ids of a deletion.
    ids: Vec<u64>,
    /// The first negative hint, if any.
    rat_hint: Option<i64>,
    line: usize,
    offset: usize,
}

impl RawStep {
    fn clear(&mut self) {
        self.kind = Kind::Add;
        self.id = 0;
        self.lits.clear();
        self.ids.clear();
        self.rat_hint = None;
    }
}

/// A tokenizer over either encoding, reading its source in pieces.
///
/// `buf` holds the bytes from absolute offset `base` on; a step is parsed
/// from `buf` as if it were the whole proof. When the piece ends inside the
/// step, parsing fails (every step ends with an explicit `0`, so a cut step
/// can never parse as complete), and [`Reader::next_step`] rereads the step
/// with twice the lookahead until it parses or the source is exhausted.
struct Reader<'a> {
    format: LratFormat,
    src: Box<dyn Read + 'a>,
    /// Whether `src` has been read to its end.
    eof: bool,
    /// Bytes to have in `buf` past the start of a step before parsing it.
    lookahead: usize,
    buf: Vec<u8>,
    /// Absolute offset of `buf[0]` in the proof.
    base: usize,
    pos: usize,
    line: usize,
    num_vars: u32,
}

impl Reader<'_> {
    /// The first lookahead: far more than any step orbitcnf's solver writes.
    const LOOKAHEAD: usize = 1 << 20;

    /// Drops the bytes before `pos` and reads until `need` bytes follow it
    /// or the source ends.
    fn fill(&mut self, need: usize) -> std::io::Result<()> {
        if self.pos > 0 {
            self.buf.drain(..self.pos);
            self.base += self.pos;
            self.pos = 0;
        }
        let mut chunk = [0u8; 64 * 1024];
        while !self.eof && self.buf.len() < need {
            match self.src.read(&mut chunk) {
                Ok(0) => self.eof = true,
                Ok(n) => self.buf.extend_from_slice(&chunk[..n]),
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
                Err(e) => return Err(e),
            }
        }
        Ok(())
    }

    /// Absolute offset of the current position.
    fn at(&self) -> usize {
        self.base + self.pos
    }

    /// Reads the next step into `step`; `Ok(false)` at the end of the proof.
    fn next_step(&mut self, step: &mut RawStep) -> Result<bool, LratReason> {
        // Refill only when less than half the lookahead is left, so that
        // moving the buffer's tail costs O(1) per byte read.
        if !self.eof && self.buf.len() - self.pos < self.lookahead / 2 {
            self.fill(self.lookahead)
                .map_err(|e| LratReason::Io(e.to_string()))?;
        }
        let line = self.line;
        loop {
            let start = self.pos;
            let got = match self.format {
                LratFormat::Text => self.next_text(step),
                LratFormat::Binary => self.next_binary(step),
            };
            if got.is_ok() || self.eof {
                return got;
            }
            // The piece may end inside the step: reread it with more bytes.
            self.pos = start;
            self.line = line;
            step.clear();
            self.lookahead = self.lookahead.saturating_mul(2);
            self.fill(self.lookahead)
                .map_err(|e| LratReason::Io(e.to_string()))?;
        }
    }

    /// Bytes left after the current position, whitespace aside (text).
    fn tail_len(&mut self) -> usize {
        if self.format == LratFormat::Text {
            loop {
                self.skip_ws();
                if self.pos < self.buf.len() || self.eof || self.fill(Self::LOOKAHEAD).is_err() {
                    break;
                }
            }
        }
        let mut total = self.buf.len() - self.pos;
        self.pos = self.buf.len();
        while !self.eof && self.fill(Self::LOOKAHEAD).is_ok() {
            // `fill` dropped what was counted; `buf` holds only new bytes.
            total += self.buf.len();
            self.pos = self.buf.len();
        }
        total
    }

    fn lit_code(&self, lit: i64) -> Result<u32, LratReason> {
        if lit.unsigned_abs() > u64::from(self.num_vars) {
            return Err(LratReason::LiteralOutOfRange {
                lit,
                num_vars: self.num_vars,
            });
        }
        // |lit| ≤ num_vars ≤ i32::MAX, so the cast is exact.
        Ok(code_of(lit as i32))
    }

    // ---- text ----

    fn skip_ws(&mut self) {
        while let Some(&b) = self.buf.get(self.pos) {
            match b {
                b'\n' => self.line += 1,
                b' ' | b'\t' | b'\r' => {}
                _ => break,
            }
            self.pos += 1;
        }
    }

    fn next_text(&mut self, step: &mut RawStep) -> Result<bool, LratReason> {
        loop {
            self.skip_ws();
            match self.buf.get(self.pos) {
                None if !self.eof => return Err(LratReason::Truncated),
                None => {
                    step.line = self.line;
                    step.offset = self.at();
                    return Ok(false);
                }
                Some(b'c') => {
                    while let Some(&b) = self.buf.get(self.pos) {
                        if b == b'\n' {
                            break;
                        }
                        self.pos += 1;
                    }
                }
                Some(_) => break,
            }
        }
        step.line = self.line;
        step.offset = self.at();
        let id = self.int()?;
        if id <= 0 {
            return Err(LratReason::Malformed(format!(
                "a step must start with a positive clause id, not {id}"
            )));
        }
        step.id = id as u64;
        self.skip_ws();
        if self.buf.get(self.pos) == Some(&b'd') {
            self.pos += 1;
            self.end_of_token()?;
            step.kind = Kind::Delete;
            loop {
                let x = self.int()?;
                if x == 0 {
                    break;
                }
                if x < 0 {
                    return Err(LratReason::Malformed(format!(
                        "deletion of a negative id {x}"
                    )));
                }
                step.ids.push(x as u64);
            }
            return Ok(true);
        }
        step.kind = Kind::Add;
        loop {
            let x = self.int()?;
            if x == 0 {
                break;
            }
            step.lits.push(self.lit_code(x)?);
        }
        loop {
            let x = self.int()?;
            if x == 0 {
                break;
            }
            if x < 0 {
                step.rat_hint.get_or_insert(x);
            } else {
                step.ids.push(x as u64);
            }
        }
        Ok(true)
    }

    /// After a token: whitespace or the end must follow.
    fn end_of_token(&self) -> Result<(), LratReason> {
        match self.buf.get(self.pos) {
            // The piece ends here but the proof does not: the token may go on.
            None if !self.eof => Err(LratReason::Truncated),
            None | Some(b' ' | b'\t' | b'\r' | b'\n') => Ok(()),
            Some(_) => Err(self.unexpected()),
        }
    }

    fn unexpected(&self) -> LratReason {
        let end = (self.pos + 12).min(self.buf.len());
        let shown = self.buf[self.pos..end].escape_ascii().to_string();
        LratReason::Malformed(format!(
            "expected a number at byte {}, found \"{shown}\"",
            self.at()
        ))
    }

    /// A signed decimal integer, after whitespace.
    fn int(&mut self) -> Result<i64, LratReason> {
        self.skip_ws();
        let negative = match self.buf.get(self.pos) {
            None => return Err(LratReason::Truncated),
            Some(b'-') => {
                self.pos += 1;
                true
            }
            Some(_) => false,
        };
        let start = self.pos;
        let at = self.at();
        let mut value: i64 = 0;
        while let Some(&b) = self.buf.get(self.pos) {
            if !b.is_ascii_digit() {
                break;
            }
            value = value
                .checked_mul(10)
                .and_then(|v| v.checked_add(i64::from(b - b'0')))
                .ok_or_else(|| LratReason::Malformed(format!("number too large at byte {at}")))?;
            self.pos += 1;
        }
        if self.pos == start {
            if self.pos == self.buf.len() {
                return Err(LratReason::Truncated);
            }
            return Err(self.unexpected());
        }
        self.end_of_token()?;
        Ok(if negative { -value } else { value })
    }

    // ---- binary ----

    fn leb(&mut self) -> Result<u64, LratReason> {
        let start = self.at();
        let mut value: u64 = 0;
        let mut shift = 0u32;
        loop {
            let b = *self.buf.get(self.pos).ok_or(LratReason::Truncated)?;
            self.pos += 1;
            let bits = u64::from(b & 0x7f);
            if shift >= 64 || (shift == 63 && bits > 1) {
                return Err(LratReason::Malformed(format!(
                    "number too large at byte {start}"
                )));
            }
            value |= bits << shift;
            if b & 0x80 == 0 {
                return Ok(value);
            }
            shift += 7;
        }
    }

    /// A positive id in the `2·x` encoding.
    fn leb_id(&mut self, what: &str) -> Result<u64, LratReason> {
        let at = self.at();
        let v = self.leb()?;
        if v & 1 == 1 || v == 0 {
            return Err(LratReason::Malformed(format!(
                "{what} at byte {at} is not a positive id (encoded {v})"
            )));
        }
        Ok(v >> 1)
    }

    fn next_binary(&mut self, step: &mut RawStep) -> Result<bool, LratReason> {
        step.line = 0;
        step.offset = self.at();
        let Some(&b) = self.buf.get(self.pos) else {
            return if self.eof {
                Ok(false)
            } else {
                Err(LratReason::Truncated)
            };
        };
        self.pos += 1;
        match b {
            b'a' => {
                step.kind = Kind::Add;
                step.id = self.leb_id("the clause id")?;
                loop {
                    let at = self.at();
                    let v = self.leb()?;
                    if v == 0 {
                        break;
                    }
                    let var = v >> 1;
                    if var == 0 {
                        return Err(LratReason::Malformed(format!(
                            "literal at byte {at} encodes -0"
                        )));
                    }
                    if var > u64::from(self.num_vars) {
                        let lit = var.min(i64::MAX as u64) as i64;
                        return Err(LratReason::LiteralOutOfRange {
                            lit: if v & 1 == 1 { -lit } else { lit },
                            num_vars: self.num_vars,
                        });
                    }
                    // var ≤ num_vars ≤ i32::MAX, so this is the code of ±var.
                    step.lits.push(v as u32);
                }
                loop {
                    let at = self.at();
                    let v = self.leb()?;
                    if v == 0 {
                        break;
                    }
                    let h = v >> 1;
                    if h == 0 {
                        return Err(LratReason::Malformed(format!(
                            "hint at byte {at} encodes -0"
                        )));
                    }
                    if v & 1 == 1 {
                        step.rat_hint
                            .get_or_insert(-(h.min(i64::MAX as u64) as i64));
                    } else {
                        step.ids.push(h);
                    }
                }
                Ok(true)
            }
            b'd' => {
                step.kind = Kind::Delete;
                loop {
                    if self.buf.get(self.pos) == Some(&0) {
                        self.pos += 1;
                        break;
                    }
                    let id = self.leb_id("a deleted id")?;
                    step.ids.push(id);
                }
                Ok(true)
            }
            other => Err(LratReason::Malformed(format!(
                "expected 'a' or 'd' at byte {}, found 0x{other:02x}",
                self.at() - 1
            ))),
        }
    }
}

/// One stored clause.
#[derive(Clone, Copy, Debug)]
struct Entry {
    start: usize,
    len: u32,
    /// The step that deleted it; 0 while live.
    deleted_in: u64,
}

/// Clause storage by id.
struct Db {
    /// Ids, strictly increasing.
    ids: Vec<u64>,
    entries: Vec<Entry>,
    /// Literal codes of all clauses, back to back.
    lits: Vec<u32>,
    /// Whether `ids[k] == k + 1` for every `k`, so an id is its own index.
    dense: bool,
    max_id: u64,
}

impl Db {
    fn new(cnf: &Cnf) -> Db {
        let mut db = Db {
            ids: Vec::with_capacity(cnf.num_clauses() * 2),
            entries: Vec::with_capacity(cnf.num_clauses() * 2),
            lits: Vec::with_capacity(cnf.num_lits() * 2),
            dense: true,
            max_id: 0,
        };
        let mut buf = Vec::new();
        for (i, clause) in cnf.clauses().enumerate() {
            buf.clear();
            buf.extend(clause.iter().map(|l| code_of(l.dimacs())));
            db.push(i as u64 + 1, &buf);
        }
        db
    }

    /// Stores a clause; `id` must exceed every id so far.
    fn push(&mut self, id: u64, lits: &[u32]) {
        debug_assert!(id > self.max_id);
        if id != self.ids.len() as u64 + 1 {
            self.dense = false;
        }
        self.ids.push(id);
        self.entries.push(Entry {
            start: self.lits.len(),
            len: lits.len() as u32,
            deleted_in: 0,
        });
        self.lits.extend_from_slice(lits);
        self.max_id = id;
    }

    fn index(&self, id: u64) -> Option<usize> {
        if self.dense {
            let i = id.checked_sub(1)? as usize;
            (i < self.ids.len()).then_some(i)
        } else {
            self.ids.binary_search(&id).ok()
        }
    }

    fn delete(&mut self, id: u64, step: u64) -> Result<(), LratReason> {
        let i = self
            .index(id)
            .ok_or(LratReason::DeleteUnknown { clause: id })?;
        let e = &mut self.entries[i];
        if e.deleted_in != 0 {
            return Err(LratReason::DeleteDeleted {
                clause: id,
                deleted_in_step: e.deleted_in,
            });
        }
        e.deleted_in = step;
        Ok(())
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
    fn check(&mut self, db: &Db, lits: &[u32], hints: &[u64]) -> Result<(), LratReason> {
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

    fn propagate(&mut self, db: &Db, lits: &[u32], hints: &[u64]) -> Result<(), LratReason> {
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
            let i = db.index(hint).ok_or(LratReason::UnknownHint { hint })?;
            let e = db.entries[i];
            if e.deleted_in != 0 {
                return Err(LratReason::DeletedHint {
                    hint,
                    deleted_in_step: e.deleted_in,
                });
            }
            if conflict {
                continue;
            }
            let mut unit: Option<u32> = None;
            for &c in &db.lits[e.start..e.start + e.len as usize] {
                if self.val[c as usize] == 1 {
                    return Err(LratReason::HintSatisfied {
                        hint,
                        position: k + 1,
                    });
                }
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
    use crate::proof::testgen::Rng;

    /// (1∨2), (1∨¬2), (¬1∨2), (¬1∨¬2): ids 1..4.
    fn square() -> Cnf {
        let mut cnf = Cnf::new();
        for c in [[1, 2], [1, -2], [-1, 2], [-1, -2]] {
            let c: Vec<Lit> = c.iter().map(|&x| Lit::from_dimacs(x)).collect();
            cnf.add_clause(&c);
        }
        cnf
    }

    const GOOD: &str = "5 1 0 1 2 0\n5 d 1 2 0\n6 0 5 3 4 0\n";

    fn reject(proof: &str) -> LratError {
        check_lrat(&square(), proof).expect_err("the proof should be rejected")
    }

    fn to_binary(text: &str) -> Vec<u8> {
        fn leb(out: &mut Vec<u8>, x: i64) {
            let mut v = (x.unsigned_abs() << 1) | (x < 0) as u64;
            loop {
                let b = (v & 0x7f) as u8;
                v >>= 7;
                if v == 0 {
                    out.push(b);
                    break;
                }
                out.push(b | 0x80);
            }
        }
        let mut out = Vec::new();
        for line in text.lines() {
            let t: Vec<i64> = line
                .split_whitespace()
                .filter(|w| *w != "d")
                .map(|w| w.parse().unwrap())
                .collect();
            if line.contains(" d ") {
                out.push(b'd');
                for &x in &t[1..t.len() - 1] {
                    leb(&mut out, x);
                }
            } else {
                out.push(b'a');
                for &x in &t[..t.len() - 1] {
                    if x == 0 {
                        out.push(0);
                    } else {
                        leb(&mut out, x);
                    }
                }
            }
            out.push(0);
        }
        out
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
                "5 1 0 3 0\n",
                1,
                Some(5),
                LratReason::HintSatisfied {
                    hint: 3,
                    position: 1,
                },
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
            "LRAT step 1 (clause 5), line 1: hint 3 (number 1 of the step) is already \
             satisfied, not unit"
        );
        assert!(reject("5 1 0 3 0\n").reason.is_rup_failure());
        assert!(!reject("5 1 0 9 0\n").reason.is_rup_failure());
    }

    /// A source that hands out at most three bytes per read.
    struct Trickle<'a>(&'a [u8]);

    impl Read for Trickle<'_> {
        fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
            let n = self.0.len().min(out.len()).min(3);
            out[..n].copy_from_slice(&self.0[..n]);
            self.0 = &self.0[n..];
            Ok(n)
        }
    }

    #[test]
    fn reading_in_pieces_gives_the_same_answers() {
        use crate::encode::{EncodeOptions, encode};
        use crate::grid::Grid;
        use crate::proof::{ProofSinks, solve_with_proof_sinks};
        use crate::question::Question;
        let q = Question::new(Grid::parse("-1..1", Some(2)).unwrap(), 5).unwrap();
        let enc = encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
        let options = LratOptions {
            ids_follow_cnf: true,
            ..LratOptions::default()
        };
        for binary in [false, true] {
            let mut proof = Vec::new();
            let sinks = ProofSinks {
                lrat: Some(&mut proof),
                lrat_binary: binary,
                drat: None,
                drat_binary: false,
            };
            solve_with_proof_sinks(&enc.cnf, sinks, None).unwrap();
            let whole = check_lrat_with(&enc.cnf, &proof, &options).unwrap();
            for lookahead in [1, 2, 3, 7, 64, 1000] {
                let pieces = check_read(&enc.cnf, Trickle(&proof), &options, lookahead);
                assert_eq!(
                    pieces.as_ref(),
                    Ok(&whole),
                    "binary {binary}, lookahead {lookahead}"
                );
            }
            // A cut proof is rejected the same way whole and in pieces.
            let cut = &proof[..proof.len() / 2];
            let whole = check_lrat_with(&enc.cnf, cut, &options).unwrap_err();
            let pieces = check_read(&enc.cnf, Trickle(cut), &options, 5).unwrap_err();
            assert_eq!(pieces, whole);
        }
        // Hand-made proofs, good and bad, with comments and tails.
        for p in [
            GOOD,
            "c made by hand\n5 1 0 1 2 0\nc more\n\n9 2 -2 0 0\n20 0 5 3 4 0\n21 0 0\n",
            "5 1 0 1 2 0\n6 0 5 3 4 x\n",
            "5 1 0 1 2 0 junk\n",
            "5 1 0 1 2 0\n5 d 1 2 0\n6 0 5 3 4 0\n  trailing words\n",
        ] {
            let whole = check_lrat(&square(), p);
            for lookahead in 1..12 {
                let pieces = check_read(
                    &square(),
                    Trickle(p.as_bytes()),
                    &LratOptions::default(),
                    lookahead,
                );
                assert_eq!(pieces, whole, "{p:?} lookahead {lookahead}");
            }
        }
    }

    #[test]
    fn malformed_input_is_rejected_without_panics() {
        for p in [
            "5 x 0 0\n",
            "0 1 0 1 2 0\n",
            "-5 1 0 1 2 0\n",
            "5 1 0 1 2 0 junk\n",
            "5 d -1 0\n",
            "5 dd 1 0\n",
            "5 1- 0\n",
            "99999999999999999999 0 0\n",
            "5 - 0\n",
        ] {
            let e = reject(p);
            assert!(matches!(e.reason, LratReason::Malformed(_)), "{p:?}: {e}");
        }
        let e = reject("5 1 0 1 2 0\n6 0 5 3 4 x\n");
        assert_eq!((e.step, e.line), (2, 2));
        // Binary: a bad step byte, an odd id, an overlong number, truncation.
        for b in [
            &b"x"[..],
            b"a\x0b\x02\x00\x02\x04\x00",
            b"a\xff\xff\xff\xff\xff\xff\xff\xff\xff\xff\x01",
            b"a\x0a\x02\x00\x02",
            b"d\x03\x00",
            b"a\x0a\x01\x00\x00",
        ] {
            let e = check_lrat(&square(), b).unwrap_err();
            assert!(
                matches!(e.reason, LratReason::Malformed(_) | LratReason::Truncated),
                "{b:?}: {e}"
            );
        }
    }

    #[test]
    fn every_prefix_of_a_proof_is_rejected() {
        let text = GOOD.as_bytes();
        let bin = to_binary(GOOD);
        for proof in [text, &bin[..]] {
            let format = LratFormat::detect(proof);
            let last_zero = proof.len() - if format == LratFormat::Text { 1 } else { 0 };
            for cut in 0..proof.len() {
                let options = LratOptions {
                    format: Some(format),
                    ..LratOptions::default()
                };
                let r = check_lrat_with(&square(), &proof[..cut], &options);
                assert_eq!(r.is_ok(), cut >= last_zero, "cut at {cut} of {format:?}");
            }
        }
    }

    #[test]
    fn garbled_proofs_never_panic() {
        let mut rng = Rng(0x1234_5678);
        let text = GOOD.as_bytes().to_vec();
        let bin = to_binary(GOOD);
        let alphabet = b"0123456789 -d\nac\x00\x80\xff";
        let mut accepted = 0;
        for round in 0..4000 {
            let mut p = if round % 2 == 0 {
                text.clone()
            } else {
                bin.clone()
            };
            for _ in 0..1 + rng.below(3) {
                let i = rng.below(p.len() as u64) as usize;
                match rng.below(3) {
                    0 => p[i] = alphabet[rng.below(alphabet.len() as u64) as usize],
                    1 => {
                        p.remove(i);
                    }
                    _ => p.insert(i, alphabet[rng.below(alphabet.len() as u64) as usize]),
                }
                if p.is_empty() {
                    break;
                }
            }
            if check_lrat(&square(), &p).is_ok() {
                accepted += 1;
            }
        }
        // Some edits keep the proof valid (whitespace, a deletion dropped); most do not.
        assert!(accepted < 2000, "{accepted} garbled proofs accepted");
    }
}
