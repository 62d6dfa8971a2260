//! `manifest.json` of a split folder: the question, the options, the cube
//! list and the digest of every file.

use std::path::Path;

use serde::{Deserialize, Serialize};

use super::layout::{FORMAT_COMPACT, SplitLayout};
use super::{Cube, FORMAT, FileEntry, MANIFEST};
use crate::encode::EncodeOptions;
use crate::error::{Error, Result};
use crate::question::QuestionRecord;

/// A cube as the manifest lists it: the fields of [`Cube`], then `file`
/// and `sha256`, in one JSON object.
#[derive(Clone, Debug, PartialEq, Eq, Deserialize)]
#[serde(from = "EntryRecord")]
pub struct CubeEntry {
    /// The cube.
    pub cube: Cube,
    /// Its standalone CNF (file layout).
    pub file: Option<FileEntry>,
    /// Its digest in the compact layout ([`super::layout::compact_digest`]).
    pub sha256: Option<String>,
}

// The entry's JSON spelled out field by field. `#[serde(flatten)]` gave the
// same text, but serde reads a flattened struct through a buffer of generic
// values: reading the 238 MB manifest of a million cubes took 2.7 s per
// `run-cube` process that way, most of a block of 200 easy cubes.
#[derive(Deserialize)]
struct EntryRecord {
    index: usize,
    prefix: Vec<i64>,
    literals: Vec<i32>,
    #[serde(default)]
    start: Option<Vec<i64>>,
    #[serde(default)]
    file: Option<FileEntry>,
    #[serde(default)]
    sha256: Option<String>,
}

impl From<EntryRecord> for CubeEntry {
    fn from(r: EntryRecord) -> CubeEntry {
        CubeEntry {
            cube: Cube {
                index: r.index,
                prefix: r.prefix,
                literals: r.literals,
                start: r.start,
            },
            file: r.file,
            sha256: r.sha256,
        }
    }
}

#[derive(Serialize)]
struct EntryRef<'a> {
    index: usize,
    prefix: &'a [i64],
    literals: &'a [i32],
    #[serde(skip_serializing_if = "Option::is_none")]
    start: &'a Option<Vec<i64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    file: &'a Option<FileEntry>,
    #[serde(skip_serializing_if = "Option::is_none")]
    sha256: &'a Option<String>,
}

impl Serialize for CubeEntry {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        EntryRef {
            index: self.cube.index,
            prefix: &self.cube.prefix,
            literals: &self.cube.literals,
            start: &self.cube.start,
            file: &self.file,
            sha256: &self.sha256,
        }
        .serialize(s)
    }
}

impl CubeEntry {
    /// The digest that results name: the cube file's SHA-256, or the
    /// compact digest.
    pub fn digest(&self) -> &str {
        match (&self.file, &self.sha256) {
            (Some(f), _) => &f.sha256,
            (None, Some(d)) => d,
            (None, None) => "",
        }
    }
}

/// The coverage check as the manifest records it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct CoverageEntry {
    /// The coverage CNF.
    pub cnf: FileEntry,
    /// Its LRAT refutation, accepted by orbitcnf's checker when written.
    pub proof: FileEntry,
    /// Clauses taken from `formula.cnf`.
    pub formula_clauses: usize,
    /// Steps of the accepted proof.
    pub lrat_steps: u64,
}

/// How the cubes were chosen (informative; soundness rests on the coverage proof).
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct SplitRule {
    /// `profile-prefix`.
    pub rule: String,
    /// `K`, the profile's length: `⌊p/2⌋`, or `p − 1` for topical maps.
    pub offsets: usize,
    /// `L`, the largest profile value.
    pub max_value: i64,
    /// Whether prefixes that no multiplier lex-leader extends were dropped.
    pub multiplier_pruning: bool,
}

/// `manifest.json` of a split folder.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct SplitManifest {
    /// [`FORMAT`].
    pub format: String,
    /// orbitcnf version that wrote the split.
    pub orbitcnf_version: String,
    /// The question.
    pub question: QuestionRecord,
    /// The encoding options as resolved for the question.
    pub options: EncodeOptions,
    /// The number of cubes asked for (`--cubes`); with `auto_cubes`, the
    /// number the rule chose.
    pub requested_cubes: usize,
    /// Whether the cubes were chosen by the rule of `decide`'s automatic
    /// strategy ([`super::auto::choose_cubes`]).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub auto_cubes: bool,
    /// Cube files, or the formula once ([`super::layout`]).
    #[serde(default)]
    pub layout: SplitLayout,
    /// How the cubes were chosen.
    pub split: SplitRule,
    /// `formula.cnf`.
    pub formula: FileEntry,
    /// `cubes.icnf`.
    pub icnf: FileEntry,
    /// The coverage check.
    pub coverage: CoverageEntry,
    /// The cubes, in index order.
    pub cubes: Vec<CubeEntry>,
}

impl SplitManifest {
    /// What `split` wrote to `dir`, and what to do next, for people.
    pub fn summary(&self, dir: &Path, statement: &str) -> String {
        let d = dir.display();
        let n = self.cubes.len();
        let text = format!(
            "question     {statement}\ncubes        {n} ({}), {}\n\
             coverage     checked: LRAT proof of {} steps refutes coverage.cnf, so every model lies in a cube\n\
             written      {d}/manifest.json, formula.cnf, cubes.icnf, coverage.cnf, coverage.lrat{}\n\
             next         orbitcnf run-cube {d} INDEX   for INDEX in 0..{}   (docs/cluster.md: Slurm, GNU parallel)\n\
             \x20            (on this machine: orbitcnf run-cube {d} all --jobs N)\n\
             \x20            orbitcnf merge {d}\n",
            if self.auto_cubes {
                "chosen as decide chooses them".to_string()
            } else {
                format!("asked for {}", self.requested_cubes)
            },
            if self.split.rule == "start-point" {
                "one per start point x_0 (full-map formulation)".to_string()
            } else {
                format!(
                    "prefixes of the distance profile g(1..{})",
                    self.split.offsets
                )
            },
            self.coverage.lrat_steps,
            match self.layout {
                SplitLayout::Files => ", cubes/cube-NNNN.cnf",
                SplitLayout::Compact =>
                    " (compact: no cube files; run-cube builds each cube from formula.cnf)",
            },
            n.saturating_sub(1),
        );
        if n > 0 {
            return text;
        }
        // No cube: the coverage proof alone refutes the formula, and
        // `merge` says so; there is nothing to run.
        let next = text.find("next ").unwrap_or(text.len());
        format!(
            "{}next         orbitcnf merge {d}   (no cube to run: the profile clauses alone, \
             refuted by the coverage proof, rule out every profile)\n",
            &text[..next]
        )
    }

    /// Reads `dir/manifest.json`.
    ///
    /// # Errors
    /// [`Error::Io`] or [`Error::Parse`] (not a split manifest, or another format).
    pub fn read(dir: &Path) -> Result<SplitManifest> {
        let path = dir.join(MANIFEST);
        let name = path.display().to_string();
        let bytes = std::fs::read(&path).map_err(|e| Error::io(&path, e))?;
        let m: SplitManifest = serde_json::from_slice(&bytes)
            .map_err(|e| Error::parse(&name, e.line(), format!("not a split manifest: {e}")))?;
        let expected = match m.layout {
            SplitLayout::Files => FORMAT,
            SplitLayout::Compact => FORMAT_COMPACT,
        };
        if m.format != expected {
            return Err(Error::parse(
                &name,
                0,
                format!(
                    "format {:?}, this orbitcnf reads {FORMAT:?} and {FORMAT_COMPACT:?}",
                    m.format
                ),
            ));
        }
        if m.cubes.iter().enumerate().any(|(i, c)| c.cube.index != i) {
            return Err(Error::parse(
                &name,
                0,
                "the cubes are not listed in index order",
            ));
        }
        Ok(m)
    }

    /// Checks that every file the manifest lists in `dir` (formula, cube
    /// list, coverage CNF and proof, and the cube files of the file layout)
    /// is there with its recorded size and SHA-256: enough to go on solving
    /// the split's cubes without writing it again. Nothing is decided by
    /// it; `merge` checks the whole folder against a fresh encoding.
    ///
    /// # Errors
    /// As [`FileEntry::verify`], for the first file that is missing or differs.
    pub fn check_files(&self, dir: &Path) -> Result<()> {
        let listed = [
            &self.formula,
            &self.icnf,
            &self.coverage.cnf,
            &self.coverage.proof,
        ];
        for f in listed
            .into_iter()
            .chain(self.cubes.iter().filter_map(|c| c.file.as_ref()))
        {
            f.verify(dir, MANIFEST)?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The entry's JSON is the cube's fields, then `file` and `sha256`, as
    /// `#[serde(flatten)]` wrote it before: manifests of earlier splits read
    /// the same, and new ones are byte for byte what they were.
    #[test]
    fn an_entry_is_one_flat_object() {
        let entry = CubeEntry {
            cube: Cube {
                index: 7,
                prefix: vec![1, 2],
                literals: vec![-3, 4],
                start: None,
            },
            file: None,
            sha256: Some("ab".into()),
        };
        let text = serde_json::to_string(&entry).unwrap();
        assert_eq!(
            text,
            r#"{"index":7,"prefix":[1,2],"literals":[-3,4],"sha256":"ab"}"#
        );
        assert_eq!(serde_json::from_str::<CubeEntry>(&text).unwrap(), entry);
        let full = CubeEntry {
            cube: Cube {
                start: Some(vec![0, -1]),
                ..entry.cube.clone()
            },
            file: Some(FileEntry {
                name: "cubes/cube-7.cnf".into(),
                sha256: "cd".into(),
                bytes: 9,
            }),
            sha256: None,
        };
        let text = serde_json::to_string(&full).unwrap();
        assert_eq!(
            text,
            r#"{"index":7,"prefix":[1,2],"literals":[-3,4],"start":[0,-1],"file":{"name":"cubes/cube-7.cnf","sha256":"cd","bytes":9}}"#
        );
        assert_eq!(serde_json::from_str::<CubeEntry>(&text).unwrap(), full);
        // Unknown fields are ignored, as they were.
        let extra = r#"{"index":7,"prefix":[1,2],"literals":[-3,4],"sha256":"ab","note":1}"#;
        assert_eq!(serde_json::from_str::<CubeEntry>(extra).unwrap(), entry);
    }
}
