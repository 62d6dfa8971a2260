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
//! * the `r`-th lemma (0-based) gets `m + 1 + r`;
//! * the `s`-th derived clause gets `m + L + 1 + s`, where `L` is the number of lemmas.
//!
//! Both maps are increasing, so every derived clause still has a larger id
//! than every clause its hints name, as LRAT demands.

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

    fn final_id(&self, id: u64) -> u64 {
        if id <= self.m {
            return id;
        }
        let l = self.lemma_ids.len() as u64;
        match self.lemma_ids.binary_search(&id) {
            Ok(r) => self.m + 1 + r as u64,
            Err(before) => {
                // derived: its rank among derived ids
                let rank = id - self.m - 1 - before as u64;
                self.m + l + 1 + rank
            }
        }
    }

    /// Writes the text LRAT proof with the final numbering to `sink`.
    ///
    /// # Errors
    /// [`Error::Io`] when the log or the sink fails, or when nothing was logged.
    pub fn finish(mut self, sink: &mut dyn Write) -> Result<()> {
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
                    let id = self.final_id(get(&mut r).map_err(err)?);
                    use std::fmt::Write as _;
                    let _ = writeln!(line, "{last} d {id} 0");
                }
                ADD => {
                    use std::fmt::Write as _;
                    let id = self.final_id(get(&mut r).map_err(err)?);
                    last = id;
                    let _ = write!(line, "{id}");
                    let nl = get(&mut r).map_err(err)?;
                    for _ in 0..nl {
                        let _ = write!(line, " {}", unzig(get(&mut r).map_err(err)?));
                    }
                    line.push_str(" 0");
                    let nh = get(&mut r).map_err(err)?;
                    for _ in 0..nh {
                        let _ = write!(line, " {}", self.final_id(get(&mut r).map_err(err)?));
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
        Ok(())
    }
}
