//! How a split folder holds its cubes: one standalone CNF per cube, or the
//! formula once and the cubes as literals.
//!
//! A standalone cube file repeats the whole formula, so a folder of `N`
//! cubes costs `N` times the formula: `{−1,0,1}^5, p = 34` with 100,000
//! cubes would take about 390 GB (3.9 MB per cube file). The *compact*
//! layout ([`SplitLayout::Compact`]) writes no cube files: `formula.cnf`,
//! `cubes.icnf` (the formula once, one `a … 0` line per cube) and the
//! manifest's cube list, where each cube has the digest
//! [`compact_digest`], the SHA-256 of the formula's SHA-256 and the cube's
//! `a` line. `run-cube` then checks `formula.cnf` against its digest and
//! builds `F ∧ cube` in memory ([`cube_problem`]); results name the cube's
//! digest, so a result of another formula or another cube is refused as
//! before. `merge` re-encodes the question, compares `formula.cnf` and
//! every cube digest with fresh ones, and checks each cube proof against
//! `F ∧ cube` built in memory, as in the file layout.
//!
//! [`LayoutChoice::Auto`] (the default) writes cube files while all of them
//! together stay under [`FILES_BUDGET`] bytes, so small splits keep their
//! files (handy for running any solver on one cube by hand), and switches
//! to the compact layout above.

use std::path::Path;

use serde::{Deserialize, Serialize};

use super::{Cube, CubeEntry, FORMULA, MANIFEST, SplitManifest};
use crate::artifact::sha256_hex;
use crate::dimacs::{self, CnfFile};
use crate::error::{Error, Result};

/// The most bytes of cube files that [`LayoutChoice::Auto`] writes: 1 GiB.
pub const FILES_BUDGET: u64 = 1 << 30;

/// The format tag of a compact split's manifest (`orbitcnf-split/1` is the
/// file layout, which older orbitcnf versions read).
pub const FORMAT_COMPACT: &str = "orbitcnf-split/2";

/// The layout of a split folder.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum SplitLayout {
    /// `cubes/cube-NNNN.cnf` for every cube.
    #[default]
    Files,
    /// No cube files; cubes are built from `formula.cnf` in memory.
    Compact,
}

/// The layout asked for.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum LayoutChoice {
    /// Files when they fit in [`FILES_BUDGET`], compact otherwise.
    #[default]
    Auto,
    /// Always this layout.
    Fixed(SplitLayout),
}

impl LayoutChoice {
    /// The layout for `cubes` cubes of a formula of `formula_bytes` bytes.
    pub fn resolve(self, cubes: usize, formula_bytes: u64) -> SplitLayout {
        match self {
            LayoutChoice::Fixed(l) => l,
            LayoutChoice::Auto if (cubes as u64).saturating_mul(formula_bytes) > FILES_BUDGET => {
                SplitLayout::Compact
            }
            LayoutChoice::Auto => SplitLayout::Files,
        }
    }
}

/// The digest of a cube in the compact layout: the SHA-256 of
/// `"{formula_sha256}\na LITS 0\n"`, so it changes with the formula and
/// with the cube.
pub fn compact_digest(formula_sha256: &str, cube: &Cube) -> String {
    cube_digest(formula_sha256, &cube.literals)
}

/// The SHA-256 of `"{base_sha256}\na LITS 0\n"`: the digest of a cube
/// given by its literals over a formula given by its digest (the compact
/// layout's [`compact_digest`], and the cubes of a real-space split).
pub fn cube_digest(base_sha256: &str, literals: &[i32]) -> String {
    let formula_sha256 = base_sha256;
    let lits: Vec<String> = literals.iter().map(|l| l.to_string()).collect();
    let line = if lits.is_empty() {
        "a 0".to_string()
    } else {
        format!("a {} 0", lits.join(" "))
    };
    sha256_hex(format!("{formula_sha256}\n{line}\n").as_bytes())
}

/// The CNF of cube `entry` of the split in `dir`: its standalone file
/// (checked against its digest), or in the compact layout `formula.cnf`
/// (checked against the manifest's digest) with the cube's literals added
/// as unit clauses after the formula's, as a cube file has them. Returns the
/// parsed file and the name to show in messages.
///
/// # Errors
/// [`Error::Parse`] for a file that does not match its digest or is not an
/// orbitcnf CNF; [`Error::Io`].
pub fn cube_problem(dir: &Path, m: &SplitManifest, entry: &CubeEntry) -> Result<(CnfFile, String)> {
    match &entry.file {
        Some(f) => parse_checked(f.read_checked(dir, MANIFEST)?, dir.join(&f.name)),
        None => with_cube(dir, &formula_problem(dir, m)?, entry),
    }
}

/// `formula.cnf` of the split in `dir`, checked against the manifest's
/// digest and parsed, with its name for messages.
///
/// # Errors
/// As [`cube_problem`].
pub fn formula_problem(dir: &Path, m: &SplitManifest) -> Result<(CnfFile, String)> {
    parse_checked(m.formula.read_checked(dir, MANIFEST)?, dir.join(FORMULA))
}

fn parse_checked(bytes: Vec<u8>, name: std::path::PathBuf) -> Result<(CnfFile, String)> {
    let name = name.display().to_string();
    let text =
        String::from_utf8(bytes).map_err(|_| Error::parse(&name, 0, "the file is not UTF-8"))?;
    let file = dimacs::parse_cnf_file(&text, &name)?;
    Ok((file, name))
}

/// The formula `base` ([`formula_problem`]) with the literals of cube
/// `entry` added as unit clauses, as a cube file has them.
///
/// # Errors
/// As [`cube_units`].
pub fn with_cube(
    dir: &Path,
    base: &(CnfFile, String),
    entry: &CubeEntry,
) -> Result<(CnfFile, String)> {
    let (cnf, name) = cube_units(dir, base, entry)?;
    let mut file = base.0.clone();
    file.cnf = cnf;
    Ok((file, name))
}

/// The clauses of [`with_cube`] and its name, without copying the rest of
/// the file (its variable map is as large as the clauses).
///
/// # Errors
/// [`Error::Parse`] naming the manifest when a literal is not a variable
/// of the formula.
pub fn cube_units(
    dir: &Path,
    base: &(CnfFile, String),
    entry: &CubeEntry,
) -> Result<(crate::cnf::Cnf, String)> {
    let mut scratch = CubeScratch::new(base);
    let name = scratch.with_units(dir, entry)?.1;
    Ok((scratch.cnf.into_cnf(), name))
}

/// The clauses of [`cube_units`] for one cube after another of a range,
/// in one buffer ([`crate::cnf::WithUnits`]): the formula's clauses are
/// copied once, and each cube replaces the units of the one before.
pub struct CubeScratch {
    cnf: crate::cnf::WithUnits,
    name: String,
}

impl CubeScratch {
    /// A buffer holding the clauses of `base` ([`formula_problem`]).
    pub fn new(base: &(CnfFile, String)) -> CubeScratch {
        CubeScratch {
            cnf: crate::cnf::WithUnits::new(&base.0.cnf),
            name: base.1.clone(),
        }
    }

    /// The formula with the literals of cube `entry` as unit clauses after
    /// its own, and the name to show in messages.
    ///
    /// # Errors
    /// [`Error::Parse`] naming the manifest when a literal is not a variable
    /// of the formula.
    pub fn with_units(
        &mut self,
        dir: &Path,
        entry: &CubeEntry,
    ) -> Result<(&crate::cnf::Cnf, String)> {
        let name = format!("{} with cube {}", self.name, entry.cube.index);
        match self.cnf.set(entry.cube.lits()) {
            Ok(cnf) => Ok((cnf, name)),
            Err(l) => Err(Error::parse(
                dir.join(MANIFEST).display().to_string(),
                0,
                format!(
                    "cube {} has the literal {}, not a variable of the formula",
                    entry.cube.index,
                    l.dimacs()
                ),
            )),
        }
    }
}
