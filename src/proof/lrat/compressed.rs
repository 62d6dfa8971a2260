//! Proof files kept compressed with zstd.
//!
//! A campaign of cubes keeps one LRAT proof per cube, and on {−1,0,1}^5
//! those proofs are nearly all of its disk (p = 48 wrote 18 GB of binary
//! LRAT). The ids in a hint list repeat the same high digits step after
//! step, which a general-purpose compressor removes well: zstd at level 3
//! kept 18% of a 21 MB binary proof of a cube of p = 50 (in 0.2 s) and
//! 29% of a 74 MB proof written by CaDiCaL (measured 2026-12-05).
//!
//! So a proof file may be a zstd frame around either LRAT encoding. Readers
//! of proof files open them through [`ProofSource`], which recognises the
//! frame by its magic number and decompresses while it reads, in bounded
//! memory (the decoder's window, a few megabytes). Compression changes
//! nothing about what is checked: the checker sees the very bytes the
//! solver wrote, and a file that is not a valid frame fails the read, so
//! the proof is rejected, never accepted.

use std::io::{BufRead, BufReader, Read, Write};

use super::LratFormat;

/// The first four bytes of a zstd frame (RFC 8878, section 3.1.1). Neither
/// LRAT encoding can start with them: a text proof starts with a digit,
/// white space or `c`, a binary one with `a` or `d`.
pub const ZSTD_MAGIC: [u8; 4] = [0x28, 0xB5, 0x2F, 0xFD];

/// The zstd level [`compress`] uses: the library's default, the measured
/// balance of size and speed (levels 1, 3, 6 and 9 kept 23%, 18%, 16% and
/// 15% of the 21 MB proof above, in 0.13, 0.20, 0.48 and 0.72 s).
pub const LEVEL: i32 = 3;

/// How a proof file is kept: an LRAT encoding, the binary one possibly in
/// a zstd frame.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum FileEncoding {
    /// Text LRAT.
    #[default]
    Text,
    /// Binary LRAT.
    Binary,
    /// Binary LRAT in a zstd frame (or, for a proof an external solver
    /// wrote, its own encoding in a zstd frame).
    Zstd,
}

impl FileEncoding {
    /// The LRAT encoding inside the file.
    pub fn format(self) -> LratFormat {
        match self {
            FileEncoding::Text => LratFormat::Text,
            FileEncoding::Binary | FileEncoding::Zstd => LratFormat::Binary,
        }
    }

    /// Whether the file is a zstd frame.
    pub fn compressed(self) -> bool {
        self == FileEncoding::Zstd
    }
}

impl std::str::FromStr for FileEncoding {
    type Err = String;
    fn from_str(s: &str) -> Result<FileEncoding, String> {
        match s {
            "text" => Ok(FileEncoding::Text),
            "binary" => Ok(FileEncoding::Binary),
            "zstd" => Ok(FileEncoding::Zstd),
            other => Err(format!(
                "unknown proof encoding {other:?}; choose text, binary or zstd"
            )),
        }
    }
}

/// A proof file's bytes, decompressed on the way when the file is a zstd
/// frame.
pub enum ProofSource<R: Read> {
    /// The file is LRAT as it is.
    Plain(BufReader<R>),
    /// The file is a zstd frame around LRAT.
    Zstd(Box<zstd::stream::read::Decoder<'static, BufReader<R>>>),
}

impl<R: Read> ProofSource<R> {
    /// Looks at the first bytes of `inner` (without losing them) and
    /// decompresses from there on when they are [`ZSTD_MAGIC`].
    ///
    /// # Errors
    /// The I/O error of the first read, or of setting up the decoder.
    pub fn new(inner: R) -> std::io::Result<ProofSource<R>> {
        let mut buf = BufReader::with_capacity(1 << 16, inner);
        let framed = buf.fill_buf()?.starts_with(&ZSTD_MAGIC);
        Ok(if framed {
            ProofSource::Zstd(Box::new(zstd::stream::read::Decoder::with_buffer(buf)?))
        } else {
            ProofSource::Plain(buf)
        })
    }

    /// Whether the source is a zstd frame.
    pub fn is_compressed(&self) -> bool {
        matches!(self, ProofSource::Zstd(_))
    }

    /// The reader underneath. Bytes it has already handed over (into this
    /// source's buffers) are not given back: a caller that hashes the raw
    /// file at this level has seen them.
    pub fn into_inner(self) -> R {
        match self {
            ProofSource::Plain(b) => b.into_inner(),
            ProofSource::Zstd(d) => d.finish().into_inner(),
        }
    }
}

impl<R: Read> Read for ProofSource<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        match self {
            ProofSource::Plain(b) => b.read(buf),
            ProofSource::Zstd(d) => d.read(buf),
        }
    }
}

/// Whether the file at `path` starts with [`ZSTD_MAGIC`].
///
/// # Errors
/// The I/O error of opening or reading the file.
pub fn is_compressed(path: &std::path::Path) -> std::io::Result<bool> {
    let mut head = [0u8; 4];
    let mut f = std::fs::File::open(path)?;
    let mut n = 0;
    while n < head.len() {
        match f.read(&mut head[n..])? {
            0 => break,
            k => n += k,
        }
    }
    Ok(n == head.len() && head == ZSTD_MAGIC)
}

/// A writer that compresses into `dst` at [`LEVEL`] and ends the frame
/// when it is dropped. An error at that last write leaves a cut frame,
/// which every reader rejects; callers check the file they wrote.
///
/// # Errors
/// The I/O error of setting up the encoder.
pub fn encoder<W: Write>(
    dst: W,
) -> std::io::Result<zstd::stream::write::AutoFinishEncoder<'static, W>> {
    Ok(zstd::stream::write::Encoder::new(dst, LEVEL)?.auto_finish())
}

/// Copies `src` (a proof in either encoding) into `dst` as one zstd frame
/// at [`LEVEL`]; returns the number of bytes read from `src`.
///
/// # Errors
/// The I/O errors of reading, compressing and writing.
pub fn compress(mut src: impl Read, dst: impl Write) -> std::io::Result<u64> {
    let mut enc = zstd::stream::write::Encoder::new(dst, LEVEL)?;
    let n = std::io::copy(&mut src, &mut enc)?;
    enc.finish()?.flush()?;
    Ok(n)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cnf::{Cnf, Lit};
    use crate::proof::lrat::write::convert;
    use crate::proof::lrat::{LratFormat, check_lrat_read};

    /// (x ∨ y), (x ∨ ¬y), (¬x ∨ y), (¬x ∨ ¬y) and a refutation of it.
    fn small() -> (Cnf, &'static str) {
        let mut cnf = Cnf::new();
        for c in [[1, 2], [1, -2], [-1, 2], [-1, -2]] {
            cnf.add_clause(&c.map(Lit::from_dimacs));
        }
        (cnf, "5 1 0 1 2 0\n6 0 5 3 4 0\n")
    }

    #[test]
    fn a_compressed_proof_reads_as_the_original() {
        let (cnf, text) = small();
        let mut binary = Vec::new();
        convert(text.as_bytes(), &mut binary, LratFormat::Binary).unwrap();
        for plain in [text.as_bytes().to_vec(), binary] {
            let mut packed = Vec::new();
            assert_eq!(
                compress(&plain[..], &mut packed).unwrap(),
                plain.len() as u64
            );
            assert!(packed.starts_with(&ZSTD_MAGIC));
            let mut src = ProofSource::new(&packed[..]).unwrap();
            assert!(src.is_compressed());
            let mut back = Vec::new();
            src.read_to_end(&mut back).unwrap();
            assert_eq!(back, plain);
            // The checker accepts it through the source, and a plain proof
            // passes through untouched.
            let s = check_lrat_read(
                &cnf,
                ProofSource::new(&packed[..]).unwrap(),
                &Default::default(),
            );
            assert_eq!(s.unwrap().steps, 2);
            let src = ProofSource::new(&plain[..]).unwrap();
            assert!(!src.is_compressed());
            assert_eq!(
                check_lrat_read(&cnf, src, &Default::default())
                    .unwrap()
                    .steps,
                2
            );
        }
    }

    #[test]
    fn a_damaged_frame_is_rejected_not_accepted() {
        let (cnf, text) = small();
        let mut packed = Vec::new();
        compress(text.as_bytes(), &mut packed).unwrap();
        // Cut the frame short, and change a byte inside it: either is a read
        // error or a proof the checker rejects, never an acceptance.
        let cut = &packed[..packed.len() - 3];
        let mut flipped = packed.clone();
        let mid = flipped.len() / 2;
        flipped[mid] ^= 0x55;
        for bad in [cut.to_vec(), flipped] {
            let accepted = ProofSource::new(&bad[..])
                .ok()
                .map(|src| check_lrat_read(&cnf, src, &Default::default()));
            assert!(!matches!(accepted, Some(Ok(_))), "{accepted:?}");
        }
    }
}
