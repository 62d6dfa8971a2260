//! Reading LRAT proofs, text or binary, one step at a time.
//!
//! [`LratReader`] reads its source in pieces: it holds the current step and
//! at most a lookahead of bytes past it (1 MiB at first), so a proof of any
//! size is read in bounded memory. A step is parsed from the bytes at hand as
//! if they were the whole proof; every step ends with an explicit `0`, so a
//! step cut by the end of a piece can never parse as complete. When parsing
//! fails before the source is exhausted, the reader rereads the step with
//! twice the lookahead, until it parses or the source ends, and only then
//! reports the failure. The bytes before the current step are dropped when
//! the buffer is refilled, which happens only once less than half the
//! lookahead is left, so moving the buffer's tail costs O(1) per byte.
//!
//! The reader checks the syntax of each encoding and that every literal
//! names a variable up to a bound; what the steps mean is for its users (the
//! checker in [`super::check_lrat_read`], lifting in [`crate::proof::lift`]).

use std::io::Read;

use super::{LratFormat, LratReason};

/// What a step does.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum StepKind {
    /// Adds a clause.
    #[default]
    Add,
    /// Deletes clauses.
    Delete,
}

/// One step as read. The buffers are reused from step to step.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Step {
    /// Addition or deletion.
    pub kind: StepKind,
    /// Addition: the new clause's id. Text deletion: its label (not an id
    /// the step acts on). Binary deletion: 0.
    pub id: u64,
    /// Addition: the clause's literals (DIMACS, none 0).
    pub lits: Vec<i32>,
    /// Addition: the hints in order, negative (RAT) ones included.
    /// Deletion: the deleted ids (all positive).
    pub refs: Vec<i64>,
    /// 1-based line where the step starts (text; 0 for binary proofs).
    pub line: usize,
    /// Byte offset where the step starts.
    pub offset: usize,
}

impl Step {
    fn clear(&mut self) {
        self.kind = StepKind::Add;
        self.id = 0;
        self.lits.clear();
        self.refs.clear();
    }

    /// The first negative hint of an addition: the start of a RAT part.
    pub fn rat_hint(&self) -> Option<i64> {
        match self.kind {
            StepKind::Add => self.refs.iter().copied().find(|&h| h < 0),
            StepKind::Delete => None,
        }
    }
}

/// A streaming reader of LRAT steps in either encoding.
pub struct LratReader<'a> {
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
    max_var: u32,
}

impl<'a> LratReader<'a> {
    /// The first lookahead: far more than any step orbitcnf's solver writes.
    pub const LOOKAHEAD: usize = 1 << 20;

    /// A reader of `source`, whose literals must name variables `1..=max_var`
    /// (a larger one is [`LratReason::LiteralOutOfRange`]). The encoding is
    /// `format`, or detected from the first byte ([`LratFormat::detect`]).
    ///
    /// # Errors
    /// [`LratReason::Io`] when the first bytes cannot be read.
    pub fn new(
        source: impl Read + 'a,
        format: Option<LratFormat>,
        max_var: u32,
    ) -> Result<LratReader<'a>, LratReason> {
        LratReader::with_lookahead(source, format, max_var, Self::LOOKAHEAD)
    }

    /// [`LratReader::new`] with the first lookahead given (the tests use tiny
    /// ones to cut steps at every possible byte).
    ///
    /// # Errors
    /// As [`LratReader::new`].
    pub fn with_lookahead(
        source: impl Read + 'a,
        format: Option<LratFormat>,
        max_var: u32,
        lookahead: usize,
    ) -> Result<LratReader<'a>, LratReason> {
        let mut reader = LratReader {
            format: LratFormat::Text,
            src: Box::new(source),
            eof: false,
            lookahead: lookahead.max(1),
            buf: Vec::new(),
            base: 0,
            pos: 0,
            line: 1,
            max_var: max_var.min(i32::MAX as u32),
        };
        reader.fill(1).map_err(|e| LratReason::Io(e.to_string()))?;
        reader.format = format.unwrap_or_else(|| LratFormat::detect(&reader.buf));
        Ok(reader)
    }

    /// The encoding being read.
    pub fn format(&self) -> LratFormat {
        self.format
    }

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
    /// After an error, `step.line`, `step.offset` and (when it was read)
    /// `step.id` say where the failed step starts.
    ///
    /// # Errors
    /// [`LratReason::Malformed`], [`LratReason::Truncated`],
    /// [`LratReason::LiteralOutOfRange`] or [`LratReason::Io`].
    pub fn next_step(&mut self, step: &mut Step) -> Result<bool, LratReason> {
        step.clear();
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

    /// Reads the rest of the source and returns how many bytes it had,
    /// whitespace before the first of them aside (text).
    pub fn tail_len(&mut self) -> usize {
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

    fn literal(&self, lit: i64) -> Result<i32, LratReason> {
        if lit.unsigned_abs() > u64::from(self.max_var) {
            return Err(LratReason::LiteralOutOfRange {
                lit,
                num_vars: self.max_var,
            });
        }
        // |lit| ≤ max_var ≤ i32::MAX, so the cast is exact.
        Ok(lit as i32)
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

    fn next_text(&mut self, step: &mut Step) -> Result<bool, LratReason> {
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
            step.kind = StepKind::Delete;
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
                step.refs.push(x);
            }
            return Ok(true);
        }
        step.kind = StepKind::Add;
        loop {
            let x = self.int()?;
            if x == 0 {
                break;
            }
            step.lits.push(self.literal(x)?);
        }
        loop {
            let x = self.int()?;
            if x == 0 {
                break;
            }
            step.refs.push(x);
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

    /// A nonzero signed number in the `2·|x| + (1 if x < 0)` encoding; `None` for 0.
    fn leb_signed(&mut self, what: &str) -> Result<Option<i64>, LratReason> {
        let at = self.at();
        let v = self.leb()?;
        if v == 0 {
            return Ok(None);
        }
        let magnitude = (v >> 1) as i64; // v < 2^64, so v >> 1 < 2^63
        if magnitude == 0 {
            return Err(LratReason::Malformed(format!(
                "{what} at byte {at} encodes -0"
            )));
        }
        Ok(Some(if v & 1 == 1 { -magnitude } else { magnitude }))
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

    fn next_binary(&mut self, step: &mut Step) -> Result<bool, LratReason> {
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
                step.kind = StepKind::Add;
                step.id = self.leb_id("the clause id")?;
                while let Some(lit) = self.leb_signed("literal")? {
                    step.lits.push(self.literal(lit)?);
                }
                while let Some(hint) = self.leb_signed("hint")? {
                    step.refs.push(hint);
                }
                Ok(true)
            }
            b'd' => {
                step.kind = StepKind::Delete;
                loop {
                    if self.buf.get(self.pos) == Some(&0) {
                        self.pos += 1;
                        break;
                    }
                    // v >> 1 < 2^63, so the id fits an i64.
                    step.refs.push(self.leb_id("a deleted id")? as i64);
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

#[cfg(test)]
mod tests {
    use super::super::check::check_read;
    use super::super::{LratOptions, check_lrat, check_lrat_with};
    use super::*;
    use crate::proof::testgen::{GOOD, Rng, square, to_binary};

    fn reject(proof: &str) -> super::super::LratError {
        check_lrat(&square(), proof).expect_err("the proof should be rejected")
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
