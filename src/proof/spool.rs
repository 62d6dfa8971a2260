//! Lifted cube proofs kept in one temporary file until they are assembled.
//!
//! [`super::lift::assemble`] reads the lifted derivation of every cube once,
//! in cube order. Kept as one temporary file per cube, they held two file
//! descriptors per cube until the end (the locked temporary file and its
//! reader), so a question of a few thousand cubes passed the usual limit of
//! open files (1024 on many systems) and failed at the last step. A
//! [`Spool`] appends them all to one locked temporary file and records
//! where each begins and ends; a [`Section`] opens the file only when it is
//! first read and closes it when dropped. Assembling then holds three
//! descriptors (the spool's file, its writer and the section being read),
//! whatever the number of cubes.

use std::fs::File;
use std::io::{BufReader, BufWriter, Read, Seek, SeekFrom, Take, Write};
use std::path::{Path, PathBuf};

use tempfile::NamedTempFile;

use super::lift::{LiftedCube, lift_cube};
use super::lrat::LratFormat;
use crate::cnf::{Cnf, Lit};
use crate::error::{Error, Result};
use crate::solve::refute::temp_proof_file;

/// Lifted cube derivations (binary LRAT), one after another in one
/// temporary file that is deleted when the spool is dropped.
pub struct Spool {
    tmp: NamedTempFile,
    out: Counting<BufWriter<File>>,
    pieces: Vec<Piece>,
}

/// Where one lifted derivation lies in the spool.
#[derive(Clone, Copy, Debug)]
struct Piece {
    lifted: LiftedCube,
    offset: u64,
    len: u64,
}

/// A writer that counts the bytes it passes on.
struct Counting<W> {
    inner: W,
    bytes: u64,
}

impl<W: Write> Write for Counting<W> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        let n = self.inner.write(buf)?;
        self.bytes += n as u64;
        Ok(n)
    }
    fn flush(&mut self) -> std::io::Result<()> {
        self.inner.flush()
    }
}

impl Spool {
    /// An empty spool in a temporary file beside `dest` (the system's
    /// temporary folder without one), as [`temp_proof_file`] places it.
    ///
    /// # Errors
    /// [`Error::Io`] when the file cannot be made.
    pub fn new(dest: Option<&Path>) -> Result<Spool> {
        let tmp = temp_proof_file(dest)?;
        let file = tmp.reopen().map_err(|e| Error::io(tmp.path(), e))?;
        Ok(Spool {
            tmp,
            out: Counting {
                inner: BufWriter::new(file),
                bytes: 0,
            },
            pieces: Vec::new(),
        })
    }

    /// The number of derivations in the spool.
    pub fn len(&self) -> usize {
        self.pieces.len()
    }

    /// Whether the spool holds no derivation.
    pub fn is_empty(&self) -> bool {
        self.pieces.is_empty()
    }

    /// Lifts `proof`, a refutation of `f` plus the unit clauses `units`
    /// ([`lift_cube`]), into the spool; returns its slot.
    ///
    /// # Errors
    /// As [`lift_cube`].
    pub fn lift(&mut self, f: &Cnf, units: &[Lit], proof: impl Read) -> Result<usize> {
        let offset = self.out.bytes;
        let lifted = lift_cube(f, units, proof, &mut self.out, LratFormat::Binary)?;
        Ok(self.record(lifted, offset))
    }

    /// Copies `src`, a derivation that [`lift_cube`] wrote in binary LRAT
    /// and described as `lifted`, into the spool; returns its slot.
    ///
    /// # Errors
    /// [`Error::Io`] when reading `src` or writing the spool fails.
    pub fn append(&mut self, lifted: LiftedCube, mut src: impl Read) -> Result<usize> {
        let offset = self.out.bytes;
        std::io::copy(&mut src, &mut self.out).map_err(|e| Error::io(self.tmp.path(), e))?;
        Ok(self.record(lifted, offset))
    }

    fn record(&mut self, lifted: LiftedCube, offset: u64) -> usize {
        self.pieces.push(Piece {
            lifted,
            offset,
            len: self.out.bytes - offset,
        });
        self.pieces.len() - 1
    }

    /// The derivations in `slots`, in that order, each as a reader that
    /// opens the spool when it is first read. Slots out of range are left
    /// out (every slot [`Spool::lift`] and [`Spool::append`] returned is in
    /// range).
    ///
    /// # Errors
    /// [`Error::Io`] when the spool cannot be written out.
    pub fn sections(
        &mut self,
        slots: impl IntoIterator<Item = usize>,
    ) -> Result<Vec<(LiftedCube, Section)>> {
        self.out
            .flush()
            .map_err(|e| Error::io(self.tmp.path(), e))?;
        let path = self.tmp.path().to_path_buf();
        Ok(slots
            .into_iter()
            .filter_map(|s| self.pieces.get(s))
            .map(|p| {
                (
                    p.lifted,
                    Section {
                        path: path.clone(),
                        offset: p.offset,
                        len: p.len,
                        reader: None,
                    },
                )
            })
            .collect())
    }
}

/// One derivation of a [`Spool`], read from its own descriptor, opened on
/// the first read and closed when the section is dropped.
pub struct Section {
    path: PathBuf,
    offset: u64,
    len: u64,
    reader: Option<Take<BufReader<File>>>,
}

impl Read for Section {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        if self.reader.is_none() {
            let mut file = File::open(&self.path)?;
            file.seek(SeekFrom::Start(self.offset))?;
            self.reader = Some(BufReader::new(file).take(self.len));
        }
        self.reader.as_mut().map_or(Ok(0), |r| r.read(buf))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sections_read_back_what_was_appended_in_any_order() {
        let mut spool = Spool::new(None).unwrap();
        let lc = |added| LiftedCube {
            added,
            negation: added,
            complete: false,
            bytes: 0,
        };
        let texts: [&[u8]; 4] = [b"first piece", b"", b"third", b"the fourth and last"];
        for (i, t) in texts.iter().enumerate() {
            assert_eq!(spool.append(lc(i as u64), *t).unwrap(), i);
        }
        assert_eq!(spool.len(), 4);
        let order = [3, 0, 2, 1, 9];
        let sections = spool.sections(order).unwrap();
        assert_eq!(sections.len(), 4, "slot 9 is out of range");
        for ((lifted, mut section), &slot) in sections.into_iter().zip(&order) {
            assert_eq!(lifted.added, slot as u64);
            let mut back = Vec::new();
            section.read_to_end(&mut back).unwrap();
            assert_eq!(back, texts[slot]);
        }
    }
}
