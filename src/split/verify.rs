//! Re-checking a split folder against a fresh encoding, in either layout.

use std::path::Path;

use super::layout::{SplitLayout, compact_digest};
use super::{
    COVERAGE, Cube, FORMULA, MANIFEST, SplitManifest, coverage_cnf, cube_encoding, render_coverage,
};
use crate::artifact::sha256_hex;
use crate::cnf::Cnf;
use crate::dimacs::{VERSION, render_cnf};
use crate::encode::{Encoding, encode};
use crate::error::{Error, Result};
use crate::proof::{LratOptions, LratSummary};
use crate::question::Question;
use crate::solve::refute::recheck_file;

/// Re-checks a split against a fresh encoding: `formula.cnf`, every cube
/// file and `coverage.cnf` must be exactly what this orbitcnf writes for the
/// manifest's question, options and cube literals (the manifest's digests
/// are compared with fresh renderings, and the cube files on disk with the
/// digests; in the compact layout every cube's digest with one computed
/// from the fresh formula's digest and the cube's literals), and
/// `coverage.lrat` must refute the coverage CNF. Returns the fresh encoding and the coverage CNF
/// and proof summary.
///
/// # Errors
/// [`Error::Parse`] naming the first file that differs; [`Error::Proof`]
/// for a rejected coverage proof.
pub fn verify_split(dir: &Path, m: &SplitManifest) -> Result<(Encoding, Cnf, LratSummary)> {
    let q = Question::from_record(&m.question)?;
    let enc = encode(&q, &m.options, u64::MAX)?;
    let differs = |name: &str| {
        Error::parse(
            dir.join(name).display().to_string(),
            0,
            format!(
                "differs from what this orbitcnf ({VERSION}) writes for the manifest \
                 (the split was written by orbitcnf {})",
                m.orbitcnf_version
            ),
        )
    };
    let formula_sha256 = sha256_hex(&render_cnf(&enc));
    if formula_sha256 != m.formula.sha256 {
        return Err(differs(FORMULA));
    }
    let cubes: Vec<Cube> = m.cubes.iter().map(|c| c.cube.clone()).collect();
    for c in &m.cubes {
        if let Some(&bad) = c
            .cube
            .literals
            .iter()
            .find(|l| **l == 0 || l.unsigned_abs() > enc.cnf.num_vars())
        {
            return Err(Error::parse(
                dir.join(MANIFEST).display().to_string(),
                0,
                format!(
                    "cube {} has the literal {bad}, not a variable of the formula",
                    c.cube.index
                ),
            ));
        }
        match (&c.file, m.layout) {
            (Some(f), SplitLayout::Files) => {
                if sha256_hex(&render_cnf(&cube_encoding(&enc, &c.cube))) != f.sha256 {
                    return Err(differs(&f.name));
                }
                f.read_checked(dir, MANIFEST)?;
            }
            (None, SplitLayout::Compact)
                if c.sha256.as_deref() == Some(&compact_digest(&formula_sha256, &c.cube)) => {}
            _ => {
                return Err(Error::parse(
                    dir.join(MANIFEST).display().to_string(),
                    0,
                    format!(
                        "cube {}: its digest does not match the formula and its literals \
                         (or the entry does not fit the {:?} layout)",
                        c.cube.index, m.layout
                    ),
                ));
            }
        }
    }
    let coverage = coverage_cnf(&enc, &cubes);
    if sha256_hex(&render_coverage(&enc, &coverage, &cubes)) != m.coverage.cnf.sha256 {
        return Err(differs(COVERAGE));
    }
    let options = LratOptions {
        ids_follow_cnf: true,
        ..LratOptions::default()
    };
    let entry = &m.coverage.proof;
    entry.verify(dir, MANIFEST)?;
    let summary = recheck_file(&coverage, &dir.join(&entry.name), &options)?.check?;
    Ok((enc, coverage, summary))
}
