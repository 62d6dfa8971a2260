//! Writing LRAT proofs, text or binary, one step at a time.
//!
//! The two encodings are described in [`super`]. Text steps are one line
//! each: `ID LIT… 0 HINT… 0` and `LABEL d ID… 0`. Binary steps are the byte
//! `a` or `d` followed by numbers in unsigned LEB128 (seven bits a byte, low
//! bits first, the high bit set on every byte but the last), every number
//! `x` stored as `2·|x| + (1 if x < 0)`; a binary deletion has no label.
//! This is the one place orbitcnf writes LRAT (the bundled solver's own
//! proofs are written by `varisat-lrat`, in the same encodings).

use std::io::{self, Write};

use super::LratFormat;
use super::read::{Step, StepKind};

/// Appends `v` to `out` in unsigned LEB128.
pub fn push_leb128(out: &mut Vec<u8>, mut v: u64) {
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

/// Appends the signed number `x` in the binary encoding: `2·|x| + (1 if x < 0)`.
fn push_signed(out: &mut Vec<u8>, x: i64) {
    push_leb128(out, (x.unsigned_abs() << 1) | u64::from(x < 0));
}

/// A writer of LRAT steps into `out`, in one encoding, buffered.
pub struct LratWriter<W: Write> {
    out: W,
    format: LratFormat,
    buf: Vec<u8>,
    bytes: u64,
}

impl<W: Write> LratWriter<W> {
    /// Bytes gathered before they are passed on to `out`.
    const CHUNK: usize = 1 << 16;

    /// A writer of `format` into `out`.
    pub fn new(out: W, format: LratFormat) -> LratWriter<W> {
        LratWriter {
            out,
            format,
            buf: Vec::with_capacity(Self::CHUNK + 256),
            bytes: 0,
        }
    }

    /// The encoding written.
    pub fn format(&self) -> LratFormat {
        self.format
    }

    /// Bytes written so far (buffered ones included).
    pub fn bytes(&self) -> u64 {
        self.bytes + self.buf.len() as u64
    }

    fn number(&mut self, x: i64) {
        match self.format {
            LratFormat::Text => {
                // itoa by hand: this is the hot loop of writing a proof.
                let mut digits = [0u8; 20];
                let mut n = x.unsigned_abs();
                let mut i = digits.len();
                loop {
                    i -= 1;
                    digits[i] = b'0' + (n % 10) as u8;
                    n /= 10;
                    if n == 0 {
                        break;
                    }
                }
                if x < 0 {
                    self.buf.push(b'-');
                }
                self.buf.extend_from_slice(&digits[i..]);
                self.buf.push(b' ');
            }
            LratFormat::Binary => push_signed(&mut self.buf, x),
        }
    }

    fn zero(&mut self) {
        match self.format {
            LratFormat::Text => self.buf.extend_from_slice(b"0 "),
            LratFormat::Binary => self.buf.push(0),
        }
    }

    fn end(&mut self) -> io::Result<()> {
        if self.format == LratFormat::Text {
            // The last `0 ` becomes `0\n`.
            if let Some(last) = self.buf.last_mut() {
                *last = b'\n';
            }
        }
        if self.buf.len() >= Self::CHUNK {
            self.pass_on()?;
        }
        Ok(())
    }

    fn pass_on(&mut self) -> io::Result<()> {
        self.out.write_all(&self.buf)?;
        self.bytes += self.buf.len() as u64;
        self.buf.clear();
        Ok(())
    }

    /// Writes the addition of clause `id` (DIMACS literals `lits`) with `hints`.
    ///
    /// # Errors
    /// The error of `out`.
    pub fn add(
        &mut self,
        id: u64,
        lits: impl IntoIterator<Item = i32>,
        hints: impl IntoIterator<Item = i64>,
    ) -> io::Result<()> {
        if self.format == LratFormat::Binary {
            self.buf.push(b'a');
        }
        self.number(id as i64);
        for l in lits {
            self.number(i64::from(l));
        }
        self.zero();
        for h in hints {
            self.number(h);
        }
        self.zero();
        self.end()
    }

    /// Writes the deletion of `ids`; `label` is the text form's leading
    /// number (by convention the last id added; binary deletions have none).
    /// Nothing is written for an empty list.
    ///
    /// # Errors
    /// The error of `out`.
    pub fn delete(&mut self, label: u64, ids: impl IntoIterator<Item = u64>) -> io::Result<()> {
        let mark = self.buf.len();
        match self.format {
            LratFormat::Text => {
                self.number(label as i64);
                self.buf.extend_from_slice(b"d ");
            }
            LratFormat::Binary => self.buf.push(b'd'),
        }
        let head = self.buf.len();
        for id in ids {
            self.number(id as i64);
        }
        if self.buf.len() == head {
            self.buf.truncate(mark);
            return Ok(());
        }
        self.zero();
        self.end()
    }

    /// Writes a step as [`super::read::LratReader`] read it.
    ///
    /// # Errors
    /// The error of `out`.
    pub fn step(&mut self, s: &Step) -> io::Result<()> {
        match s.kind {
            StepKind::Add => self.add(s.id, s.lits.iter().copied(), s.refs.iter().copied()),
            StepKind::Delete => self.delete(s.id, s.refs.iter().map(|&d| d as u64)),
        }
    }

    /// Passes every buffered byte on and flushes `out`; returns `out` and
    /// the bytes written in all.
    ///
    /// # Errors
    /// The error of `out`.
    pub fn finish(mut self) -> io::Result<(W, u64)> {
        self.pass_on()?;
        self.out.flush()?;
        Ok((self.out, self.bytes))
    }
}

/// Rewrites the LRAT proof read from `src` into `dst` in `format`, step by
/// step and in bounded memory (comments are dropped, text deletions get
/// their labels back as the last id added). Returns the bytes written.
///
/// # Errors
/// [`super::LratReason`] for a malformed proof (with no step location) or
/// an I/O error of `dst` (as [`super::LratReason::Io`]).
pub fn convert(
    src: impl io::Read,
    dst: impl Write,
    format: LratFormat,
) -> Result<u64, super::LratReason> {
    let io = |e: io::Error| super::LratReason::Io(e.to_string());
    let mut reader = super::read::LratReader::new(src, None, i32::MAX as u32)?;
    let mut writer = LratWriter::new(dst, format);
    let mut step = Step::default();
    let mut last = 0;
    while reader.next_step(&mut step)? {
        if step.kind == StepKind::Add {
            last = step.id;
        } else if step.id == 0 {
            step.id = last;
        }
        writer.step(&step).map_err(io)?;
    }
    writer.finish().map(|(_, n)| n).map_err(io)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::proof::lrat::read::LratReader;

    const GOOD: &str = "5 1 0 1 2 0\n5 d 1 2 0\n6 0 5 3 4 0\n";

    fn to(format: LratFormat, proof: &[u8]) -> Vec<u8> {
        let mut out = Vec::new();
        convert(proof, &mut out, format).unwrap();
        out
    }

    #[test]
    fn leb128_by_hand() {
        let enc = |v| {
            let mut out = Vec::new();
            push_leb128(&mut out, v);
            out
        };
        assert_eq!(enc(0), [0]);
        assert_eq!(enc(127), [0x7f]);
        assert_eq!(enc(128), [0x80, 0x01]);
        assert_eq!(enc(300), [0xac, 0x02]);
        assert_eq!(enc(u64::MAX).len(), 10);
        let mut out = Vec::new();
        push_signed(&mut out, -3);
        push_signed(&mut out, 3);
        assert_eq!(out, [7, 6]);
    }

    #[test]
    fn both_encodings_round_trip() {
        let bin = to(LratFormat::Binary, GOOD.as_bytes());
        assert_eq!(
            bin,
            b"a\x0a\x02\x00\x02\x04\x00d\x02\x04\x00a\x0c\x00\x0a\x06\x08\x00"
        );
        assert_eq!(to(LratFormat::Text, &bin), GOOD.as_bytes());
        assert_eq!(to(LratFormat::Text, GOOD.as_bytes()), GOOD.as_bytes());
        // Negative literals and hints, large numbers, comments.
        let text = "c x\n9 -1 2 0 3 -4 0\n300 d 9 0\n4294967296 -2147483647 0 9 0\n";
        let bin = to(LratFormat::Binary, text.as_bytes());
        let back = String::from_utf8(to(LratFormat::Text, &bin)).unwrap();
        assert_eq!(
            back,
            text.trim_start_matches("c x\n").replace("300 d", "9 d")
        );
        let mut r = LratReader::new(&bin[..], None, u32::MAX).unwrap();
        let mut s = Step::default();
        assert!(r.next_step(&mut s).unwrap());
        assert_eq!(
            (s.id, &s.lits[..], &s.refs[..]),
            (9, &[-1, 2][..], &[3, -4][..])
        );
        assert_eq!(s.rat_hint(), Some(-4));
    }

    #[test]
    fn empty_deletions_are_not_written() {
        for format in [LratFormat::Text, LratFormat::Binary] {
            let mut w = LratWriter::new(Vec::new(), format);
            w.delete(5, []).unwrap();
            assert_eq!(w.bytes(), 0);
            w.add(6, [], [1, 2]).unwrap();
            let (out, n) = w.finish().unwrap();
            assert_eq!(n, out.len() as u64);
            assert!(n > 0);
        }
    }
}
