//! The search's proof log, and its conversion into an LRAT file.
//!
//! During the search, theory lemmas and derived clauses get ids from one
//! counter, interleaved in time. The certificate needs the lemmas numbered
//! right after the skeleton's `m` clauses (they are *input* clauses of the
//! LRAT check: skeleton, then lemmas), and derived clauses after them. So the
//! log records steps with internal ids in a compact binary form (a temporary
//! file, so a long run's proof is not held in memory), and [`ProofLog::finish`]
//! rewrites it with the final numbering:
//!
//! * skeleton clause `id ≤ m` keeps its id;
//! * the `r`-th lemma that some derived clause names as a hint gets
//!   `m + 1 + r` (0-based among those: a lemma no hint names is left out of
//!   the certificate, its deletions too);
//! * the `s`-th derived clause gets `m + L + 1 + s`, where `L` is the number
//!   of lemmas kept.
//!
//! Both maps are increasing, so every derived clause still has a larger id
//! than every clause its hints name, as LRAT demands. Leaving out the
//! unnamed lemmas cannot break the proof: an LRAT step is checked by unit
//! propagation over the clauses its hints name and nothing else, so a
//! clause no hint names never takes part in a check. It matters for size:
//! a cube of R^4, p = 18 is refuted with 2 to 17 of the 441,404 lemmas
//! written before the search (`encodings/real-space.md` §7).

use std::io::{BufRead, BufReader, BufWriter, Read, Seek, Write};

use crate::error::{Error, Result};

const ADD: u8 = b'a';
const DEL: u8 = b'd';
const LEMMA: u8 = b'l';

/// The log of one search.
pub struct ProofLog {
    m: u64,
    next: u64,
    lemma_ids: Vec<u64>,
    /// Bit `id − m − 1` is set when some derived clause names internal id
    /// `id` as a hint (kept during the search, so that finishing needs no
    /// extra pass over the log).
    hinted: Vec<u64>,
    out: Option<BufWriter<std::fs::File>>,
    failed: Option<std::io::Error>,
    steps: u64,
}

fn put(buf: &mut Vec<u8>, mut x: u64) {
    loop {
        let b = (x & 0x7f) as u8;
        x >>= 7;
        if x == 0 {
            buf.push(b);
            return;
        }
        buf.push(b | 0x80);
    }
}

fn get(r: &mut impl Read) -> std::io::Result<u64> {
    let mut x = 0u64;
    let mut shift = 0;
    loop {
        let mut b = [0u8];
        r.read_exact(&mut b)?;
        if shift > 63 {
            return Err(std::io::Error::other("varint too long"));
        }
        x |= u64::from(b[0] & 0x7f) << shift;
        if b[0] & 0x80 == 0 {
            return Ok(x);
        }
        shift += 7;
    }
}

fn zig(l: i32) -> u64 {
    (u64::from(l.unsigned_abs()) << 1) | u64::from(l < 0)
}

fn unzig(x: u64) -> i64 {
    let v = (x >> 1) as i64;
    if x & 1 == 1 { -v } else { v }
}

impl ProofLog {
    /// A log for a formula of `m` input clauses; `enabled = false` records nothing.
    ///
    /// # Errors
    /// [`Error::Io`] when the temporary file cannot be created.
    pub fn new(m: u64, enabled: bool) -> Result<ProofLog> {
        let out = if enabled {
            let f = tempfile::tempfile().map_err(|e| Error::io("<proof log>", e))?;
            Some(BufWriter::with_capacity(1 << 20, f))
        } else {
            None
        };
        Ok(ProofLog {
            m,
            next: m + 1,
            lemma_ids: Vec::new(),
            hinted: Vec::new(),
            out,
            failed: None,
            steps: 0,
        })
    }

    /// Whether steps are recorded.
    pub fn enabled(&self) -> bool {
        self.out.is_some()
    }

    fn write(&mut self, bytes: &[u8]) {
        if let Some(w) = self.out.as_mut()
            && let Err(e) = w.write_all(bytes)
        {
            self.failed.get_or_insert(e);
        }
    }

    /// Registers a lemma clause; returns its internal id.
    pub fn lemma(&mut self) -> u64 {
        let id = self.next;
        self.next += 1;
        self.lemma_ids.push(id);
        let mut b = vec![LEMMA];
        put(&mut b, id);
        self.write(&b);
        id
    }

    /// Records a derived clause with its hints (internal ids, in order); returns its id.
    pub fn derive(&mut self, lits: &[i32], hints: &[u64]) -> u64 {
        let id = self.next;
        self.next += 1;
        self.steps += 1;
        if self.out.is_some() {
            let mut b = Vec::with_capacity(4 + 3 * (lits.len() + hints.len()));
            b.push(ADD);
            put(&mut b, id);
            put(&mut b, lits.len() as u64);
            for &l in lits {
                put(&mut b, zig(l));
            }
            put(&mut b, hints.len() as u64);
            for &h in hints {
                put(&mut b, h);
                if h > self.m {
                    let bit = (h - self.m - 1) as usize;
                    if bit / 64 >= self.hinted.len() {
                        self.hinted.resize(bit / 64 + 1, 0);
                    }
                    self.hinted[bit / 64] |= 1 << (bit % 64);
                }
            }
            self.write(&b);
        }
        id
    }

    /// Records the deletion of a clause (internal id).
    pub fn delete(&mut self, id: u64) {
        if self.out.is_some() {
            let mut b = vec![DEL];
            put(&mut b, id);
            self.write(&b);
        }
    }

    /// Number of lemmas registered.
    pub fn num_lemmas(&self) -> usize {
        self.lemma_ids.len()
    }

    /// Number of derived clauses.
    pub fn num_derived(&self) -> u64 {
        self.steps
    }

    /// The final id of internal id `id`, or `None` for a lemma left out.
    /// `kept_before[r]` is the number of kept lemmas of rank below `r`
    /// (one entry more than there are lemmas), `kept[r]` whether lemma `r`
    /// is kept.
    fn final_id(&self, id: u64, kept: &[bool], kept_before: &[u64]) -> Option<u64> {
        if id <= self.m {
            return Some(id);
        }
        match self.lemma_ids.binary_search(&id) {
            Ok(r) => kept[r].then(|| self.m + 1 + kept_before[r]),
            Err(before) => {
                // derived: its rank among derived ids
                let rank = id - self.m - 1 - before as u64;
                Some(self.m + kept_before[self.lemma_ids.len()] + 1 + rank)
            }
        }
    }

    /// Which lemmas (by rank) some derived clause names as a hint.
    fn hinted_lemmas(&self) -> Vec<bool> {
        self.lemma_ids
            .iter()
            .map(|&id| {
                let bit = (id - self.m - 1) as usize;
                self.hinted
                    .get(bit / 64)
                    .is_some_and(|w| (w >> (bit % 64)) & 1 == 1)
            })
            .collect()
    }

    /// Writes the text LRAT proof with the final numbering to `sink`, and
    /// returns which lemmas (by rank) it keeps: the certificate's lemma file
    /// must list exactly those, in order.
    ///
    /// # Errors
    /// [`Error::Io`] when the log or the sink fails, or when nothing was logged.
    pub fn finish(mut self, sink: &mut dyn Write) -> Result<Vec<bool>> {
        let err = |e: std::io::Error| Error::io("<proof log>", e);
        if let Some(e) = self.failed.take() {
            return Err(err(e));
        }
        let Some(w) = self.out.take() else {
            return Err(Error::Solver {
                solver: "real".into(),
                reason: "no proof was recorded".into(),
            });
        };
        let mut f = w.into_inner().map_err(|e| err(e.into_error()))?;
        let kept = self.hinted_lemmas();
        let mut kept_before = Vec::with_capacity(kept.len() + 1);
        kept_before.push(0u64);
        for &k in &kept {
            kept_before.push(kept_before[kept_before.len() - 1] + u64::from(k));
        }
        let dropped = || {
            err(std::io::Error::other(
                "proof log: a hint names a lemma left out",
            ))
        };
        f.rewind().map_err(err)?;
        let mut r = BufReader::with_capacity(1 << 20, f);
        let mut out = BufWriter::with_capacity(1 << 20, sink);
        let mut last = self.m;
        let mut line = String::new();
        loop {
            if r.fill_buf().map_err(err)?.is_empty() {
                break;
            }
            let mut tag = [0u8];
            r.read_exact(&mut tag).map_err(err)?;
            line.clear();
            match tag[0] {
                LEMMA => {
                    get(&mut r).map_err(err)?;
                }
                DEL => {
                    let id = get(&mut r).map_err(err)?;
                    if let Some(id) = self.final_id(id, &kept, &kept_before) {
                        use std::fmt::Write as _;
                        let _ = writeln!(line, "{last} d {id} 0");
                    }
                }
                ADD => {
                    use std::fmt::Write as _;
                    let id = get(&mut r).map_err(err)?;
                    let id = self.final_id(id, &kept, &kept_before).ok_or_else(dropped)?;
                    last = id;
                    let _ = write!(line, "{id}");
                    let nl = get(&mut r).map_err(err)?;
                    for _ in 0..nl {
                        let _ = write!(line, " {}", unzig(get(&mut r).map_err(err)?));
                    }
                    line.push_str(" 0");
                    let nh = get(&mut r).map_err(err)?;
                    for _ in 0..nh {
                        let h = get(&mut r).map_err(err)?;
                        let h = self.final_id(h, &kept, &kept_before).ok_or_else(dropped)?;
                        let _ = write!(line, " {h}");
                    }
                    line.push_str(" 0\n");
                }
                t => {
                    return Err(err(std::io::Error::other(format!(
                        "proof log: unknown record {t}"
                    ))));
                }
            }
            out.write_all(line.as_bytes()).map_err(err)?;
        }
        out.flush().map_err(err)?;
        Ok(kept)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Skeleton of two clauses `x1`, `¬x1 ∨ x2`; three lemmas of which the
    /// proof names the first and the third; the second is deleted.
    #[test]
    fn lemmas_no_hint_names_are_left_out_and_ids_close_up() {
        let mut log = ProofLog::new(2, true).unwrap();
        let a = log.lemma(); // ¬x2 ∨ x3
        let b = log.lemma(); // unused
        let d = log.derive(&[2], &[1, 2]);
        log.delete(b);
        let c = log.lemma(); // ¬x3
        log.derive(&[], &[d, a, c]);
        let mut buf = Vec::new();
        let kept = log.finish(&mut buf).unwrap();
        assert_eq!(kept, vec![true, false, true]);
        // lemmas a, c become ids 3, 4; derived clauses 5, 6; b's deletion is gone
        assert_eq!(
            String::from_utf8(buf).unwrap(),
            "5 2 0 1 2 0\n6 0 5 3 4 0\n"
        );
    }

    #[test]
    fn a_log_without_lemmas_keeps_its_numbering() {
        let mut log = ProofLog::new(3, true).unwrap();
        let d = log.derive(&[1], &[1, 2]);
        log.delete(2);
        log.derive(&[], &[d, 3]);
        let mut buf = Vec::new();
        assert!(log.finish(&mut buf).unwrap().is_empty());
        assert_eq!(
            String::from_utf8(buf).unwrap(),
            "4 1 0 1 2 0\n4 d 2 0\n5 0 4 3 0\n"
        );
    }
}
