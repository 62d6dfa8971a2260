//! Certificates of infeasibility over R^n: writing them and checking them.
//!
//! A certificate is a directory with three files:
//!
//! * `skeleton.cnf`: the skeleton ([`super::skeleton::render`]), whose header
//!   names `(n, p)` and the options; the checker re-builds it and compares it
//!   byte for byte;
//! * `lemmas.txt`: the theory lemmas with their Farkas certificates
//!   ([`super::farkas_check`] documents the format);
//! * `proof.lrat`: an LRAT refutation of the skeleton's clauses followed by
//!   the lemma clauses (lemma `r`, 0-based, has id `m + 1 + r`, where `m` is
//!   the skeleton's clause count), checked by [`crate::proof::check_lrat_file`].
//!
//! [`check_dir`] runs the three checks; nothing of the search is involved.

use std::io::Write;
use std::path::Path;

use serde::Serialize;

use super::farkas_check::{self, FarkasSummary};
use super::skeleton;
use super::theory::Lemma;
use crate::cnf::{Cnf, Lit};
use crate::error::{Error, Result};
use crate::proof::lrat::check_lrat_file;
use crate::proof::{LratOptions, LratSummary};

/// File names inside a certificate directory.
pub const SKELETON: &str = "skeleton.cnf";
/// The lemma file.
pub const LEMMAS: &str = "lemmas.txt";
/// The LRAT proof.
pub const PROOF: &str = "proof.lrat";

/// What a successful check established.
#[derive(Clone, Debug, Serialize)]
pub struct CertificateCheck {
    /// Dimension.
    pub n: usize,
    /// Period.
    pub p: usize,
    /// Clauses of the skeleton.
    pub skeleton_clauses: usize,
    /// The lemma check.
    pub farkas: FarkasSummary,
    /// The LRAT check.
    pub lrat: LratSummary,
    /// Seconds spent checking.
    pub seconds: f64,
}

/// Renders the fact declarations and the lemmas in the lemma-file format.
/// `facts[f]` is fact `f`'s DIMACS variable and coefficients.
pub fn render_lemmas<'a>(
    n: usize,
    p: usize,
    facts: &[(u32, Vec<i64>)],
    lemmas: impl IntoIterator<Item = &'a Lemma>,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    use std::fmt::Write as _;
    writeln!(out, "{}", farkas_check::header(n, p))?;
    for (v, a) in facts {
        let mut s = format!("f {v}");
        for x in a {
            let _ = write!(s, " {x}");
        }
        writeln!(out, "{s}")?;
    }
    for l in lemmas {
        let mut s = String::new();
        let mut ys = String::new();
        for lit in lemma_lits(n, p, facts, l) {
            let _ = write!(s, "{lit} ");
        }
        if let Some(pairs) = &l.fooling {
            let _ = write!(s, "0 t");
            for (a, b) in pairs {
                let _ = write!(s, " {a} {b}");
            }
            writeln!(out, "{s}")?;
            continue;
        }
        if let Some(set) = &l.equilateral {
            let _ = write!(s, "0 e");
            for i in set {
                let _ = write!(s, " {i}");
            }
            writeln!(out, "{s}")?;
            continue;
        }
        let ms = l
            .conclusions
            .iter()
            .map(|x| &x.1)
            .chain(l.facts.iter().map(|x| &x.1))
            .chain(l.atoms.iter().map(|x| &x.1));
        for y in ms {
            let _ = write!(ys, " {y}");
        }
        let _ = write!(s, "0 y{ys}");
        for ((u, v, c), y) in &l.background {
            let _ = write!(s, " b {u} {v} {c} {y}");
        }
        for (k, y) in &l.norm {
            let _ = write!(s, " g {k} {y}");
        }
        for (q, y) in &l.unit {
            let _ = write!(s, " u {q} {y}");
        }
        writeln!(out, "{s}")?;
    }
    Ok(())
}

/// The clause of a lemma as DIMACS literals, in the lemma file's order: the
/// conclusions, the negated facts, the negated atoms. `facts[f].0` is fact `f`'s variable.
pub fn lemma_lits(n: usize, p: usize, facts: &[(u32, Vec<i64>)], l: &Lemma) -> Vec<i32> {
    let fvar = |f: usize| facts.get(f).map_or(0, |x| x.0 as i32);
    let mut out = Vec::with_capacity(l.conclusions.len() + l.facts.len() + l.atoms.len());
    out.extend(l.conclusions.iter().map(|(f, _)| fvar(*f)));
    out.extend(l.facts.iter().map(|(f, _)| -fvar(*f)));
    out.extend(
        l.atoms
            .iter()
            .map(|((i, j, c), _)| -(skeleton::tight_var(n, p, *i, *j, *c).dimacs() as i32)),
    );
    out
}

/// Checks the certificate in `dir` for the question `(n, p)`.
///
/// # Errors
/// [`Error::Certificate`] when the skeleton differs from the re-built one or
/// the question differs; [`Error::Farkas`] for a rejected lemma;
/// [`Error::Proof`] for a rejected LRAT proof; [`Error::Io`] for missing files.
pub fn check_dir(n: usize, p: usize, dir: &Path) -> Result<CertificateCheck> {
    check_parts(
        n,
        p,
        &CertificateFiles {
            skeleton: &dir.join(SKELETON),
            lemmas: &dir.join(LEMMAS),
            proof: &dir.join(PROOF),
        },
        &[],
    )
}

/// Where the three files of a certificate are (a cube's certificate in a
/// split folder shares the folder's `skeleton.cnf`).
#[derive(Clone, Copy, Debug)]
pub struct CertificateFiles<'a> {
    /// The rendered skeleton.
    pub skeleton: &'a Path,
    /// The lemma file.
    pub lemmas: &'a Path,
    /// The LRAT proof.
    pub proof: &'a Path,
}

/// Checks a certificate of the question `(n, p)` restricted to a cube: the
/// proof must refute the skeleton's clauses, then one unit clause per
/// literal of `cube` (DIMACS numbers of skeleton variables; ids `m + 1` to
/// `m + k`), then the lemma clauses (lemma `r` has id `m + k + 1 + r`).
/// With an empty cube this is the check of a whole certificate.
///
/// # Errors
/// As [`check_dir`]; [`Error::Certificate`] for a cube literal that is not
/// a skeleton variable.
pub fn check_parts(
    n: usize,
    p: usize,
    files: &CertificateFiles<'_>,
    cube: &[i32],
) -> Result<CertificateCheck> {
    let t0 = std::time::Instant::now();
    let sk_path = files.skeleton;
    let text = std::fs::read(sk_path).map_err(|e| Error::io(sk_path, e))?;
    let text_str = String::from_utf8_lossy(&text);
    let (hn, hp, options) = skeleton::read_header(&text_str, &sk_path.display().to_string())?;
    if (hn, hp) != (n, p) {
        return Err(Error::Certificate(format!(
            "{}: the skeleton is for n = {hn}, p = {hp}, not n = {n}, p = {p}",
            sk_path.display()
        )));
    }
    let sk = skeleton::build(n, p, &options)?;
    if skeleton::render(&sk) != text {
        return Err(Error::Certificate(format!(
            "{}: the skeleton differs from the one re-built from n = {n}, p = {p} and its options",
            sk_path.display()
        )));
    }
    let mut cnf: Cnf = sk.cnf.clone();
    for &l in cube {
        if l == 0 || l.unsigned_abs() > sk.cnf.num_vars() {
            return Err(Error::Certificate(format!(
                "the cube literal {l} is not a variable of the skeleton (1..={})",
                sk.cnf.num_vars()
            )));
        }
        cnf.add_clause(&[Lit::from_dimacs(l)]);
    }
    let lem_path = files.lemmas;
    let lem = std::fs::read_to_string(lem_path).map_err(|e| Error::io(lem_path, e))?;
    let first_fact = sk.cnf.num_vars() as usize + 1;
    let (clauses, farkas) =
        farkas_check::check_lemmas(n, p, first_fact, &lem).map_err(|mut e| {
            e.file = lem_path.display().to_string();
            e
        })?;
    for c in &clauses {
        let lits: Vec<Lit> = c.iter().map(|&l| Lit::from_dimacs(l)).collect();
        cnf.add_clause(&lits);
    }
    let opts = LratOptions {
        ids_follow_cnf: true,
        format: None,
    };
    let lrat = check_lrat_file(&cnf, files.proof, &opts).map_err(|e| match e {
        crate::proof::lrat::LratFileError::Io { path, source } => Error::io(path, source),
        crate::proof::lrat::LratFileError::Rejected { source, .. } => Error::Proof(source),
    })?;
    Ok(CertificateCheck {
        n,
        p,
        skeleton_clauses: sk.cnf.num_clauses(),
        farkas,
        lrat,
        seconds: t0.elapsed().as_secs_f64(),
    })
}
