//! Splitting a question into cubes, for solving on many cores or machines.
//!
//! # Design
//!
//! The formula `F` of a question (see [`crate::encode`]) has the distance
//! profile `g(1..K)`, `K = ⌊p/2⌋`, as order-encoded variables
//! `G[k,t] ⇔ g(k) ≥ t` (`1 ≤ t ≤ L`, `L` the box's diameter). A *cube* fixes a
//! prefix `g(1..j) = (v_1, …, v_j)` of the profile; as literals, `g(k) = v` is
//! `G[k,v]` (left out when `v = 1`, since `G[k,1]` is a unit of `F`) and
//! `¬G[k,v+1]` (left out when `v = L`). Cubes are made by breadth-first
//! refinement ([`profile_cubes`]): start from the empty prefix and replace the
//! shortest prefix by its one-longer extensions until there are at least the
//! requested number of cubes or every prefix is a whole profile. When `F`
//! contains the multiplier lex-leader family (`sym-multiplier`, on by
//! default), an extension is dropped when the prefix already decides that the
//! profile is not lexicographically least under some multiplier
//! ([`prefix_survives`]): no model of `F` has such a prefix. Likewise an
//! extension that falsifies a clause of one of the profile-exclusion
//! families ([`PROFILE_EXCLUSION_FAMILIES`]) whose offsets it covers is
//! dropped ([`ExclusionIndex`]): those clauses are in `F` too.
//!
//! A split folder ([`write_split`]) holds `formula.cnf` (`F` with the orbitcnf
//! header), `cubes.icnf` (`F` in iCNF with one `a … 0` line per cube),
//! `cubes/cube-NNNN.cnf` (`F` plus the cube's unit clauses, with the orbitcnf
//! header, so `orbitcnf decode` reads any solver's answer on it),
//! `coverage.cnf` and `coverage.lrat` (below), and `manifest.json`
//! ([`SplitManifest`]: question, options, cube list and the SHA-256 of every
//! file), written last. [`run`] solves one cube into `results/` and merges the
//! results; [`jobs`] does the same in threads for `decide --jobs`;
//! [`crate::proof::lift`] turns the per-cube refutations into one LRAT proof of `F`.
//!
//! # Why the cubes cover the search space
//!
//! Let `S` be the clauses of `F` in the families `profile` (the order
//! encoding `G[k,t+1] → G[k,t]` and the units `G[k,1]`) and `sym-multiplier`
//! (when present), and let `coverage.cnf` be `S` together with one clause
//! `¬l_1 ∨ … ∨ ¬l_r` for each cube `{l_1, …, l_r}` ([`coverage_cnf`]).
//! `split` refutes `coverage.cnf` and checks the LRAT proof with orbitcnf's
//! checker; `merge` checks it again. Now take any model `M` of `F`. It
//! satisfies `S ⊆ F`. If it falsified every cube, it would satisfy every
//! negated cube as well, hence `coverage.cnf`, which is unsatisfiable. So `M`
//! satisfies some cube `c`, i.e. `M` is a model of `F ∧ c`. Conversely a model
//! of `F ∧ c` is a model of `F`. Hence `F` is satisfiable iff some cube is,
//! and `F` is unsatisfiable iff every `F ∧ c` is. This argument does not
//! depend on how the cubes were chosen: the coverage proof is the only thing
//! that is trusted about them, and a wrong choice (a missed profile) makes the
//! coverage CNF satisfiable, which `split` reports as an error. The written
//! argument is `encodings/cubes.md`.

pub mod auto;
pub mod campaign;
pub mod jobs;
pub mod layout;
mod manifest;
pub mod range;
pub mod run;
mod verify;

pub use manifest::{CoverageEntry, CubeEntry, SplitManifest, SplitRule};
pub use verify::verify_split;

use std::path::Path;

use serde::{Deserialize, Serialize};

pub use crate::artifact::FileEntry;
use crate::artifact::write_atomically;
use crate::cnf::{Cnf, FamilyCount, Lit};
use crate::dimacs::{VERSION, render_cnf};
use crate::encode::{
    EncodeOptions, Encoding, Formulation, bicliques, classes, cliques, encode, fullmap, gaps,
    orbits, profile, subbox, symmetry,
};
use crate::error::{Error, Result};
use crate::question::Question;
use crate::solve::refute::{CheckedProof, ProofPlan, solve_bundled};
use crate::solve::{Limits, Outcome};
use crate::varmap::Meaning;
use auto::CubeTarget;
use layout::{FORMAT_COMPACT, LayoutChoice, SplitLayout, compact_digest};

/// The manifest's file name.
pub const MANIFEST: &str = "manifest.json";
/// The whole formula, with the orbitcnf header.
pub const FORMULA: &str = "formula.cnf";
/// The formula and the cubes in iCNF.
pub const ICNF: &str = "cubes.icnf";
/// The coverage check.
pub const COVERAGE: &str = "coverage.cnf";
/// The coverage check's LRAT proof.
pub const COVERAGE_PROOF: &str = "coverage.lrat";
/// The folder of per-cube CNF files.
pub const CUBES_DIR: &str = "cubes";
/// The folder of per-cube results.
pub const RESULTS_DIR: &str = "results";
/// The format tag of [`SplitManifest`].
pub const FORMAT: &str = "orbitcnf-split/1";
/// The family label of a cube's unit clauses in its CNF header.
pub const CUBE_FAMILY: &str = "cube";

/// Cube indices for people, consecutive ones as an inclusive range in
/// run-cube's syntax: `3 5..8 12`. A list of 10,000 pending cubes from one
/// campaign is a few ranges, not a screenful of numbers.
pub fn index_ranges(v: &[usize]) -> String {
    crate::report::consecutive_runs(v).join(" ")
}

/// The cubes `first..=last` in blocks of `block` (at least one) cubes,
/// aligned at `first`, the highest block first: the order in which a
/// campaign runs them, since the hard cubes of a whole-profile split gather
/// at its end (the profiles with the most large distances come last) and,
/// started first, they overlap the easy blocks instead of trailing them.
pub fn blocks_highest_first(first: usize, last: usize, block: usize) -> Vec<(usize, usize)> {
    let block = block.max(1);
    let mut blocks: Vec<(usize, usize)> = (first..=last)
        .step_by(block)
        .map(|a| (a, a.saturating_add(block - 1).min(last)))
        .collect();
    blocks.reverse();
    blocks
}

/// One cube: a prefix of the distance profile, as literals over `G[k,t]`;
/// in the full-map formulation, the start point x_0 instead.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Cube {
    /// Position in the cube list, from 0.
    pub index: usize,
    /// `g(1..=prefix.len())` (empty for full-map cubes).
    pub prefix: Vec<i64>,
    /// The assumption literals (DIMACS numbers), in profile order.
    pub literals: Vec<i32>,
    /// Full-map cubes: the point x_0 is fixed to (`encodings/full-map.md` §8).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub start: Option<Vec<i64>>,
}

impl Cube {
    /// The literals as [`Lit`]s.
    pub fn lits(&self) -> Vec<Lit> {
        self.literals.iter().map(|&l| Lit::from_dimacs(l)).collect()
    }

    /// The prefix in words: `g(1..3) = 1 2 2`, or `the whole space`.
    pub fn describe(&self) -> String {
        if let Some(z) = &self.start {
            let c: Vec<String> = z.iter().map(|v| v.to_string()).collect();
            return format!("x_0 = ({})", c.join(", "));
        }
        if self.prefix.is_empty() {
            return "the whole space".into();
        }
        let v: Vec<String> = self.prefix.iter().map(|x| x.to_string()).collect();
        format!("g(1..{}) = {}", self.prefix.len(), v.join(" "))
    }
}

/// Whether some completion of `prefix` (values of `g(1..)`) may be
/// lexicographically least under every multiplier map of `maps` (as
/// [`symmetry::multiplier_maps`] lists them, offsets `1..=k_max`).
///
/// For each map `φ` the comparison `g ≤_lex g∘φ` is walked as far as the
/// prefix determines both sides; the prefix is rejected only when a position
/// with both sides known and all earlier ones equal has `g(k) > g(φ(k))`, so
/// every rejected prefix violates the `sym-multiplier` clauses in every
/// completion.
pub fn prefix_survives(prefix: &[i64], maps: &[Vec<usize>], k_max: usize) -> bool {
    maps.iter().all(|map| {
        for (k, &h) in map.iter().enumerate().take(k_max + 1).skip(1) {
            if h == k {
                continue;
            }
            let (Some(a), Some(b)) = (prefix.get(k - 1), prefix.get(h - 1)) else {
                return true;
            };
            if a != b {
                return a < b;
            }
        }
        true
    })
}

/// The families whose clauses speak of the profile alone, so that a whole
/// profile either satisfies or falsifies each of them.
pub const PROFILE_EXCLUSION_FAMILIES: &[&str] = &[
    classes::FAMILY,
    classes::FAMILY_NESTED,
    gaps::FAMILY,
    bicliques::FAMILY,
    cliques::FAMILY,
    orbits::FAMILY,
    subbox::FAMILY,
];

/// One clause of a profile-exclusion family, as masks per threshold (bit
/// `k − 1` for offset `k`): a whole profile `g` falsifies it when, at every
/// listed threshold `t`, `g(k) ≥ t` for each `k` of `ge` and `g(k) < t` for
/// each `k` of `lt`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ProfileExclusion {
    /// `(t, ge, lt)` for each threshold the clause names.
    pub parts: Vec<(i64, u64, u64)>,
}

/// The clauses of `enc`'s [`PROFILE_EXCLUSION_FAMILIES`] as
/// [`ProfileExclusion`]s, read from the formula itself, so that the cubes
/// drop exactly what its clauses exclude. A clause that names anything but
/// a profile variable of an offset up to 64 is left out (never the case for
/// formulas `encode` writes).
pub fn profile_exclusions(enc: &Encoding) -> Vec<ProfileExclusion> {
    let mut out = Vec::new();
    for family in PROFILE_EXCLUSION_FAMILIES {
        let Some(range) = family_range(enc, family) else {
            continue;
        };
        out.extend(range.filter_map(|i| {
            let mut parts: Vec<(i64, u64, u64)> = Vec::new();
            for lit in enc.cnf.clause(i) {
                let Some(Meaning::Profile { k, value }) = enc.map.meaning(lit.var()) else {
                    return None;
                };
                if !(1..=64).contains(k) {
                    return None;
                }
                let at = match parts.iter().position(|p| p.0 == *value) {
                    Some(at) => at,
                    None => {
                        parts.push((*value, 0, 0));
                        parts.len() - 1
                    }
                };
                // ¬G[k,t] is false when g(k) ≥ t; G[k,t] when g(k) < t.
                if lit.is_positive() {
                    parts[at].2 |= 1 << (k - 1);
                } else {
                    parts[at].1 |= 1 << (k - 1);
                }
            }
            Some(ProfileExclusion { parts })
        }));
    }
    out
}

/// The profile exclusions indexed by their last offset, so that a walk over
/// prefixes of the profile tests each clause once, as soon as the prefix
/// decides it: a prefix `g(1..j)` that falsifies a clause whose offsets all
/// lie in `1..=j` is falsified by every completion, so its whole subtree has
/// no cube.
///
/// The clauses of one last offset sit in one flat list of parts, in the
/// order they were given: a walk tests hundreds of millions of them, and a
/// heap allocation per clause made every test a cache miss (measured on
/// 2026-12-05: {0,1,2,3}^3, p = 50, 44% of `decide`'s time).
#[derive(Clone, Debug, Default)]
pub struct ExclusionIndex {
    by_last: Vec<FlatExclusions>,
    /// The largest threshold any clause names (at least 0).
    top: usize,
}

/// The clauses of one last offset: clause `i` has the parts
/// `parts[ends[i − 1]..ends[i]]` (from 0 for the first).
#[derive(Clone, Debug, Default)]
struct FlatExclusions {
    parts: Vec<FlatPart>,
    ends: Vec<usize>,
}

/// One threshold of a clause: falsified when the offsets of `ge` all have
/// values at least `t` and those of `lt` all below it. A threshold below 0
/// is stored as 0: profile values are positive, so both hold for every
/// value.
#[derive(Clone, Copy, Debug, Default)]
struct FlatPart {
    t: usize,
    ge: u64,
    lt: u64,
}

impl ExclusionIndex {
    /// Indexes `exclusions` ([`profile_exclusions`]); a clause with no
    /// literal (never written) is left out.
    pub fn new(exclusions: Vec<ProfileExclusion>) -> ExclusionIndex {
        let mut by_last: Vec<FlatExclusions> = vec![FlatExclusions::default(); 65];
        let top = exclusions
            .iter()
            .flat_map(|x| x.parts.iter().map(|p| p.0.max(0) as usize))
            .max()
            .unwrap_or(0);
        for x in exclusions {
            let all = x.parts.iter().fold(0u64, |m, &(_, ge, lt)| m | ge | lt);
            if all != 0 {
                let list = &mut by_last[64 - all.leading_zeros() as usize];
                list.parts
                    .extend(x.parts.iter().map(|&(t, ge, lt)| FlatPart {
                        t: t.max(0) as usize,
                        ge,
                        lt,
                    }));
                list.ends.push(list.parts.len());
            }
        }
        ExclusionIndex { by_last, top }
    }

    /// Whether the prefix `values` (`g(1..=j)`, `j ≤ 64`) falsifies one of
    /// the clauses whose last offset is `j`.
    pub fn falsified_at_end(&self, values: &[i64]) -> bool {
        self.test_at_end(values).0
    }

    /// As [`ExclusionIndex::falsified_at_end`], with the number of clauses
    /// tested: all of them for a prefix that survives, up to the first
    /// falsified one otherwise. This is the work a walk over the prefixes
    /// really does.
    pub fn test_at_end(&self, values: &[i64]) -> (bool, u64) {
        let Some(list) = self.by_last.get(values.len()) else {
            return (false, 0);
        };
        if list.ends.is_empty() {
            return (false, 0);
        }
        // masks[t]: the offsets whose value is at least t, for every
        // threshold a clause names (a threshold at or below 0 holds for
        // every value, as the clamp in `new` assumes).
        let masks: Vec<u64> = (0..=self.top)
            .map(|t| {
                values
                    .iter()
                    .enumerate()
                    .filter(|&(_, &v)| v >= t as i64)
                    .fold(0u64, |m, (k0, _)| m | 1 << k0)
            })
            .collect();
        let falsifies = |x: &FlatPart| {
            let m = masks[x.t];
            (m & x.ge) ^ x.ge | (m & x.lt) == 0
        };
        let mut start = 0;
        for (i, &end) in list.ends.iter().enumerate() {
            if list.parts[start..end].iter().all(falsifies) {
                return (true, i as u64 + 1);
            }
            start = end;
        }
        (false, list.ends.len() as u64)
    }
}

/// The literals saying `g(k) = value`, with `1 ≤ value ≤ L`, as the encoding's variables.
///
/// # Errors
/// [`Error::Options`] when the encoding has no profile variable needed (an
/// encoding not made by [`encode`]).
pub fn value_literals(enc: &Encoding, k: usize, value: i64) -> Result<Vec<Lit>> {
    let l = enc.question.grid.diameter() as i64;
    let var = |t: i64| {
        enc.map
            .get(&Meaning::Profile { k, value: t })
            .ok_or_else(|| Error::Options(format!("the encoding has no variable for g({k}) ≥ {t}")))
    };
    let mut out = Vec::new();
    if value >= 2 {
        out.push(var(value)?.pos());
    }
    if value < l {
        out.push(var(value + 1)?.neg());
    }
    Ok(out)
}

/// About `target` cubes over the profile of `enc` (see the module docs).
///
/// # Errors
/// As [`value_literals`].
pub fn profile_cubes(enc: &Encoding, target: usize) -> Result<Vec<Cube>> {
    let q = &enc.question;
    let k_max = crate::encode::profile_len(q);
    let l = q.grid.diameter() as i64;
    let maps = if enc.options.symmetry.multiplier {
        symmetry::multiplier_maps_for(q)
    } else {
        Vec::new()
    };
    let target = target.max(1);
    let excluded = ExclusionIndex::new(profile_exclusions(enc));
    let mut prefixes: Vec<Vec<i64>> = vec![Vec::new()];
    // One pass per level: the shortest prefixes are replaced by their
    // extensions from left to right until the target is reached, as one
    // replacement at a time would, but in time linear in the list.
    while prefixes.len() < target {
        let Some(shortest) = prefixes.iter().map(Vec::len).filter(|&n| n < k_max).min() else {
            break;
        };
        let mut count = prefixes.len();
        let mut next = Vec::with_capacity(prefixes.len() * l as usize);
        for parent in prefixes {
            if parent.len() != shortest || count >= target {
                next.push(parent);
                continue;
            }
            let before = next.len();
            next.extend(
                (1..=l)
                    .map(|v| {
                        let mut c = parent.clone();
                        c.push(v);
                        c
                    })
                    .filter(|c| prefix_survives(c, &maps, k_max))
                    .filter(|c| !excluded.falsified_at_end(c)),
            );
            count = count + (next.len() - before) - 1;
        }
        prefixes = next;
    }
    prefixes
        .into_iter()
        .enumerate()
        .map(|(index, prefix)| {
            let mut literals = Vec::new();
            for (k0, &v) in prefix.iter().enumerate() {
                literals.extend(value_literals(enc, k0 + 1, v)?.iter().map(|l| l.dimacs()));
            }
            Ok(Cube {
                index,
                prefix,
                literals,
                start: None,
            })
        })
        .collect()
}

/// The cubes of `enc`: [`profile_cubes`] in the cycle formulation,
/// [`start_cubes`] in the full-map formulation.
///
/// # Errors
/// As [`profile_cubes`] and [`start_cubes`].
pub fn cubes(enc: &Encoding, target: usize) -> Result<Vec<Cube>> {
    if enc.options.formulation == Formulation::FullMap {
        start_cubes(enc, target)
    } else {
        profile_cubes(enc, target)
    }
}

/// Full-map cubes: for `target ≥ 2`, one cube `o(0, z)` per point z that
/// x_0 may take (every point of D, less those the `fm-isometry` units
/// exclude), however many that is; for `target = 1`, the whole space.
///
/// # Errors
/// [`Error::Options`] when the encoding lacks a variable `o(0, z)`.
pub fn start_cubes(enc: &Encoding, target: usize) -> Result<Vec<Cube>> {
    let d = enc.question.domain();
    if target <= 1 {
        return Ok(vec![Cube {
            index: 0,
            prefix: Vec::new(),
            literals: Vec::new(),
            start: None,
        }]);
    }
    let excluded: Vec<i32> = family_range(enc, fullmap::symmetry::ISOMETRY)
        .into_iter()
        .flatten()
        .filter_map(|i| match enc.cnf.clause(i) {
            [l] => Some(-l.dimacs()),
            _ => None,
        })
        .collect();
    let mut out = Vec::new();
    for z in d.points() {
        let m = Meaning::At { i: 0, z: z.clone() };
        let v = enc
            .map
            .get(&m)
            .ok_or_else(|| Error::Options(format!("the encoding has no variable for {m}")))?;
        if excluded.contains(&v.pos().dimacs()) {
            continue;
        }
        out.push(Cube {
            index: out.len(),
            prefix: Vec::new(),
            literals: vec![v.pos().dimacs()],
            start: Some(z.clone()),
        });
    }
    Ok(out)
}

/// The clause index range of each family of `enc`, by label.
fn family_range(enc: &Encoding, family: &str) -> Option<std::ops::Range<usize>> {
    let mut start = 0usize;
    for f in &enc.families {
        let end = start + f.clauses as usize;
        if f.family == family {
            return Some(start..end);
        }
        start = end;
    }
    None
}

/// The indices (in `enc.cnf`) of the clauses that the coverage check keeps:
/// the `profile` family, then `sym-multiplier` and the
/// [`PROFILE_EXCLUSION_FAMILIES`] when present (whose excluded profiles get
/// no cube); in the full-map
/// formulation `orbit-place` (whose first clause says x_0 is some point),
/// then `fm-isometry` when present.
pub fn coverage_sources(enc: &Encoding) -> Vec<usize> {
    let families: &[&str] = if enc.options.formulation == Formulation::FullMap {
        &[fullmap::orbit::FAMILY_PLACE, fullmap::symmetry::ISOMETRY]
    } else {
        &[
            profile::FAMILY,
            symmetry::MULTIPLIER,
            classes::FAMILY,
            classes::FAMILY_NESTED,
            gaps::FAMILY,
            bicliques::FAMILY,
            cliques::FAMILY,
            orbits::FAMILY,
            subbox::FAMILY,
        ]
    };
    families
        .iter()
        .filter_map(|f| family_range(enc, f))
        .flatten()
        .collect()
}

/// The coverage check: the clauses [`coverage_sources`] names, then the
/// negation of every cube. Variables keep their numbers in `F`.
pub fn coverage_cnf(enc: &Encoding, cubes: &[Cube]) -> Cnf {
    let mut cnf = Cnf::new();
    cnf.reserve_vars(enc.cnf.num_vars());
    for i in coverage_sources(enc) {
        cnf.add_clause(enc.cnf.clause(i));
    }
    for c in cubes {
        let neg: Vec<Lit> = c.lits().into_iter().map(|l| !l).collect();
        cnf.add_clause(&neg);
    }
    cnf
}

/// `F` with the cube's literals as unit clauses (family [`CUBE_FAMILY`]).
pub fn cube_encoding(enc: &Encoding, cube: &Cube) -> Encoding {
    let mut e = enc.clone();
    for l in cube.lits() {
        e.cnf.add_clause(&[l]);
    }
    e.families.push(FamilyCount {
        family: CUBE_FAMILY.into(),
        vars: 0,
        clauses: cube.literals.len() as u64,
    });
    e
}

fn push_clause(out: &mut Vec<u8>, clause: &[Lit]) {
    for l in clause {
        out.extend_from_slice(l.dimacs().to_string().as_bytes());
        out.push(b' ');
    }
    out.extend_from_slice(b"0\n");
}

/// `F` in iCNF: `p inccnf`, the clauses, then `a LITS 0` for each cube in order.
pub fn render_icnf(enc: &Encoding, cubes: &[Cube]) -> Vec<u8> {
    let mut out = Vec::with_capacity(enc.cnf.num_lits() * 6);
    out.extend_from_slice(
        format!(
            "c orbitcnf {VERSION} split of: {}\nc {} cubes over {}; cube i is the i-th 'a' line (from 0)\np inccnf\n",
            enc.question.statement(),
            cubes.len(),
            if enc.options.formulation == Formulation::FullMap {
                "the start point x_0"
            } else {
                "the distance profile"
            }
        )
        .as_bytes(),
    );
    for c in enc.cnf.clauses() {
        push_clause(&mut out, c);
    }
    for c in cubes {
        out.extend_from_slice(b"a ");
        push_clause(&mut out, &c.lits());
    }
    out
}

/// The coverage CNF as plain DIMACS with a comment saying what it is.
pub fn render_coverage(enc: &Encoding, cnf: &Cnf, cubes: &[Cube]) -> Vec<u8> {
    let kept = coverage_sources(enc).len();
    let kept_what = if enc.options.formulation == Formulation::FullMap {
        "the orbit placement and isometry clauses"
    } else {
        "the profile order encoding and the multiplier lex-leader clauses"
    };
    let mut out = format!(
        "c orbitcnf {VERSION} coverage check for the split of: {}\n\
         c clauses 1..{kept}: {kept_what} of formula.cnf\n\
         c clauses {}..{}: the negation of cube 0, 1, ...; unsatisfiable iff every model of formula.cnf lies in a cube\n\
         p cnf {} {}\n",
        enc.question.statement(),
        kept + 1,
        kept + cubes.len(),
        cnf.num_vars(),
        cnf.num_clauses()
    )
    .into_bytes();
    for c in cnf.clauses() {
        push_clause(&mut out, c);
    }
    out
}

/// The file name of cube `index`'s CNF, relative to the split folder.
pub fn cube_file_name(index: usize) -> String {
    format!("{CUBES_DIR}/cube-{index:04}.cnf")
}

/// Solves the coverage CNF with the bundled solver and checks its LRAT
/// proof (text, held in a temporary file by the returned proof).
///
/// # Errors
/// [`Error::Solver`] when the coverage CNF is satisfiable (a profile no cube
/// contains: a bug, reported with the profile); [`Error::Proof`] when the
/// proof is rejected.
pub fn refute_coverage(enc: &Encoding, cnf: &Cnf) -> Result<CheckedProof> {
    let r = solve_bundled(cnf, &Limits::default(), &ProofPlan::default(), None)?;
    match r.outcome {
        Outcome::Unsat => {}
        Outcome::Sat(_) if enc.options.formulation == Formulation::FullMap => {
            return Err(Error::Solver {
                solver: "coverage check".into(),
                reason: "the cubes miss a start point x_0; no split was written".into(),
            });
        }
        Outcome::Sat(model) => {
            let k_max = crate::encode::profile_len(&enc.question);
            let l = enc.question.grid.diameter() as i64;
            let g: Vec<String> = (1..=k_max)
                .map(|k| {
                    (1..=l)
                        .take_while(|&t| {
                            enc.map
                                .get(&Meaning::Profile { k, value: t })
                                .is_some_and(|v| model[v.index()])
                        })
                        .count()
                        .to_string()
                })
                .collect();
            return Err(Error::Solver {
                solver: "coverage check".into(),
                reason: format!(
                    "the cubes miss the profile g = {}; no split was written",
                    g.join(" ")
                ),
            });
        }
        Outcome::Unknown(why) => {
            return Err(Error::Solver {
                solver: "coverage check".into(),
                reason: why,
            });
        }
    }
    Ok(r.proof
        .expect("an UNSAT answer of solve_bundled has a checked proof"))
}

/// A split folder as [`write_split`] left it.
#[derive(Clone, Debug)]
pub struct SplitWritten {
    /// The manifest.
    pub manifest: SplitManifest,
    /// Files of an existing split of the same question that were missing or
    /// damaged and have been written again (empty for a new split).
    pub restored: Vec<String>,
}

/// Splits `q` into about `target` cubes (or as [`auto::choose_cubes`]
/// chooses) and writes the split folder `dir` (created if needed) in the
/// layout `layout` resolves to ([`layout`]). A folder that already holds a
/// split of the same question, options, cube count and layout is repaired:
/// every file that is missing or differs from what this orbitcnf writes is
/// written again (the encoding and the cubes are deterministic), and the
/// results in `results/` are kept.
///
/// # Errors
/// [`Error::Options`] for a target of 0 cubes or a folder that holds a
/// split of another question; encoding errors; [`Error::Io`]; a failed
/// coverage check.
pub fn write_split(
    dir: &Path,
    q: &Question,
    options: &EncodeOptions,
    target: CubeTarget,
    layout: LayoutChoice,
    max_clauses: u64,
) -> Result<SplitWritten> {
    if target == CubeTarget::Count(0) {
        return Err(Error::Options("a split needs at least one cube".into()));
    }
    let enc = encode(q, options, max_clauses)?;
    write_split_encoded(dir, q, &enc, target, layout)
}

/// [`write_split`] with `enc`, the encoding of `q` that the caller has made
/// already (on {−1,0,1}^5 an encoding takes about a minute).
///
/// # Errors
/// As [`write_split`].
pub fn write_split_encoded(
    dir: &Path,
    q: &Question,
    enc: &Encoding,
    target: CubeTarget,
    layout: LayoutChoice,
) -> Result<SplitWritten> {
    if target == CubeTarget::Count(0) {
        return Err(Error::Options("a split needs at least one cube".into()));
    }
    let (cubes, auto_cubes) = match target {
        CubeTarget::Count(n) => (cubes(enc, n)?, false),
        CubeTarget::Auto => (auto::choose_cubes(enc)?.cubes, true),
    };
    let requested = match target {
        CubeTarget::Count(n) => n,
        CubeTarget::Auto => cubes.len(),
    };
    let formula_text = render_cnf(enc);
    let layout = layout.resolve(cubes.len(), formula_text.len() as u64);
    if dir.join(MANIFEST).exists() {
        let old = SplitManifest::read(dir)?;
        if old.question != q.record()
            || old.options != enc.options
            || old.requested_cubes != requested
            || old.auto_cubes != auto_cubes
            || old.layout != layout
        {
            return Err(Error::Options(format!(
                "{} already holds a split of another question, other options, another \
                 cube count or layout ({MANIFEST}); choose another folder or remove it",
                dir.display()
            )));
        }
    }
    let coverage = coverage_cnf(enc, &cubes);
    let checked = refute_coverage(enc, &coverage)?;
    let proof = std::fs::read(checked.path()).map_err(|e| Error::io(checked.path(), e))?;
    let summary = checked.info.lrat;
    let subs: &[&str] = match layout {
        SplitLayout::Files => &[CUBES_DIR, RESULTS_DIR],
        SplitLayout::Compact => &[RESULTS_DIR],
    };
    for sub in subs {
        let d = dir.join(sub);
        std::fs::create_dir_all(&d).map_err(|e| Error::io(&d, e))?;
    }
    let restored = std::cell::RefCell::new(Vec::new());
    let put = |name: &str, bytes: &[u8]| -> Result<FileEntry> {
        let path = dir.join(name);
        match std::fs::read(&path) {
            Ok(old) if old == bytes => {}
            Ok(_) => {
                restored.borrow_mut().push(name.to_string());
                write_atomically(&path, bytes)?;
            }
            Err(_) => {
                if dir.join(MANIFEST).exists() {
                    restored.borrow_mut().push(name.to_string());
                }
                write_atomically(&path, bytes)?;
            }
        }
        Ok(FileEntry::of(name, bytes))
    };
    let formula = put(FORMULA, &formula_text)?;
    let icnf = put(ICNF, &render_icnf(enc, &cubes))?;
    let cov_cnf = put(COVERAGE, &render_coverage(enc, &coverage, &cubes))?;
    let cov_proof = put(COVERAGE_PROOF, &proof)?;
    let mut entries = Vec::with_capacity(cubes.len());
    for c in cubes {
        let entry = match layout {
            SplitLayout::Files => CubeEntry {
                file: Some(put(
                    &cube_file_name(c.index),
                    &render_cnf(&cube_encoding(enc, &c)),
                )?),
                sha256: None,
                cube: c,
            },
            SplitLayout::Compact => CubeEntry {
                sha256: Some(compact_digest(&formula.sha256, &c)),
                file: None,
                cube: c,
            },
        };
        entries.push(entry);
    }
    let manifest = SplitManifest {
        format: match layout {
            SplitLayout::Files => FORMAT,
            SplitLayout::Compact => FORMAT_COMPACT,
        }
        .into(),
        orbitcnf_version: VERSION.into(),
        question: q.record(),
        options: enc.options.clone(),
        requested_cubes: requested,
        auto_cubes,
        layout,
        split: if enc.options.formulation == Formulation::FullMap {
            SplitRule {
                rule: "start-point".into(),
                offsets: 0,
                max_value: 0,
                multiplier_pruning: false,
            }
        } else {
            SplitRule {
                rule: "profile-prefix".into(),
                offsets: crate::encode::profile_len(q),
                max_value: q.grid.diameter() as i64,
                multiplier_pruning: enc.options.symmetry.multiplier,
            }
        },
        formula,
        icnf,
        coverage: CoverageEntry {
            cnf: cov_cnf,
            proof: cov_proof,
            formula_clauses: coverage_sources(enc).len(),
            lrat_steps: summary.steps,
        },
        cubes: entries,
    };
    // Thousands of cubes make a pretty-printed list (a line per literal)
    // many times larger than one line per cube would be; compact splits
    // are the big ones.
    let text = match layout {
        SplitLayout::Files => serde_json::to_string_pretty(&manifest),
        SplitLayout::Compact => serde_json::to_string(&manifest),
    }
    .expect("manifest serialises")
        + "\n";
    write_atomically(&dir.join(MANIFEST), text.as_bytes())?;
    Ok(SplitWritten {
        manifest,
        restored: restored.into_inner(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;

    fn enc(spec: &str, dim: usize, p: usize) -> Encoding {
        let q = Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap();
        encode(&q, &EncodeOptions::default(), u64::MAX).unwrap()
    }

    /// [`enc`] without `window-cliques`, which on these small boxes leaves
    /// no profile at all (p = 5 on {−1,0,1}^2, p = 17 on {−1,0,1}^4), where
    /// a test needs cubes to split.
    fn enc_without_cliques(spec: &str, dim: usize, p: usize) -> Encoding {
        let q = Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap();
        let o = EncodeOptions {
            cliques: false,
            orbits: false,
            ..EncodeOptions::default()
        };
        encode(&q, &o, u64::MAX).unwrap()
    }

    #[test]
    fn blocks_cover_the_range_once_the_highest_first() {
        assert_eq!(
            blocks_highest_first(3, 12, 4),
            vec![(11, 12), (7, 10), (3, 6)]
        );
        assert_eq!(blocks_highest_first(5, 5, 200), vec![(5, 5)]);
        assert_eq!(blocks_highest_first(0, 2, 0), vec![(2, 2), (1, 1), (0, 0)]);
        assert_eq!(
            blocks_highest_first(usize::MAX - 1, usize::MAX, 7),
            vec![(usize::MAX - 1, usize::MAX)]
        );
    }

    #[test]
    fn index_lists_join_consecutive_indices_into_ranges() {
        assert_eq!(index_ranges(&[]), "");
        assert_eq!(index_ranges(&[7]), "7");
        assert_eq!(index_ranges(&[3, 5, 6, 7, 8, 12]), "3 5..8 12");
        assert_eq!(index_ranges(&[0, 1, 3, 4]), "0..1 3..4");
        assert_eq!(index_ranges(&[4, 2]), "4 2");
    }

    #[test]
    fn prefixes_that_no_leader_extends_are_dropped() {
        // p = 5: the multiplier 2 swaps offsets 1 and 2; leaders have g(1) ≤ g(2).
        let maps = symmetry::multiplier_maps(5);
        assert!(prefix_survives(&[1, 2], &maps, 2));
        assert!(prefix_survives(&[2], &maps, 2));
        assert!(!prefix_survives(&[2, 1], &maps, 2));
        let e = enc_without_cliques("-1..1", 2, 5);
        let cubes = profile_cubes(&e, 10).unwrap();
        let prefixes: Vec<Vec<i64>> = cubes.iter().map(|c| c.prefix.clone()).collect();
        // (1, 1), five points pairwise at distance 1, falsifies a
        // `pack-classes` clause (one corner box holds four), so it gets no cube.
        assert_eq!(prefixes, vec![vec![1, 2], vec![2, 2]]);
    }

    #[test]
    fn refinement_stops_at_the_requested_count() {
        let e = enc_without_cliques("-1..1", 4, 17);
        for target in [1, 2, 5, 8, 12, 30] {
            let cubes = profile_cubes(&e, target).unwrap();
            // Only 14 whole profiles survive (below), so 30 is out of reach:
            // the refinement then stops at the whole profiles.
            assert!(cubes.len() >= target.min(14), "{target}: {}", cubes.len());
            assert!(cubes.len() < 2 * target + 2, "{target}: {}", cubes.len());
            refute_coverage(&e, &coverage_cnf(&e, &cubes)).unwrap();
        }
        // 36 binary necklaces of length 8 under the cyclic multiplier group:
        // the leaders; the profile exclusions (`biclique-cover`, and
        // `pack-classes` for "every distance 1") leave 14 of them (each one
        // dropped falsifies one of their clauses, checked here).
        let all = profile_cubes(&e, usize::MAX).unwrap();
        assert!(all.iter().all(|c| c.prefix.len() == 8));
        assert_eq!(all.len(), 14);
        let without = encode(
            &e.question,
            &EncodeOptions {
                classes: false,
                nested: false,
                subbox: false,
                bicliques: false,
                cliques: false,
                orbits: false,
                ..EncodeOptions::default()
            },
            u64::MAX,
        )
        .unwrap();
        let leaders = profile_cubes(&without, usize::MAX).unwrap();
        assert_eq!(leaders.len(), 36);
        dropped_profiles_falsify_a_clause(&e, &without);
        // On {0,1,2,3}^3, p = 9, `sub-box` drops profiles too.
        let e = enc("0..3", 3, 9);
        let without = encode(
            &e.question,
            &EncodeOptions {
                subbox: false,
                ..EncodeOptions::default()
            },
            u64::MAX,
        )
        .unwrap();
        let (with, all) = (
            profile_cubes(&e, usize::MAX).unwrap(),
            profile_cubes(&without, usize::MAX).unwrap(),
        );
        assert!(with.len() < all.len(), "{} {}", with.len(), all.len());
        dropped_profiles_falsify_a_clause(&e, &without);
    }

    /// Every whole profile that has a cube under `without` but none under
    /// `e` falsifies a clause of one of `e`'s profile-exclusion families.
    fn dropped_profiles_falsify_a_clause(e: &Encoding, without: &Encoding) {
        let kept = profile_cubes(e, usize::MAX).unwrap();
        let ranges: Vec<_> = PROFILE_EXCLUSION_FAMILIES
            .iter()
            .filter_map(|f| family_range(e, f))
            .collect();
        for c in profile_cubes(without, usize::MAX)
            .unwrap()
            .iter()
            .filter(|c| !kept.iter().any(|a| a.prefix == c.prefix))
        {
            // Each literal read through the variable map, on the whole profile.
            let false_on_profile = |l: &Lit| match e.map.meaning(l.var()) {
                Some(Meaning::Profile { k, value }) => {
                    (c.prefix[k - 1] >= *value) != l.is_positive()
                }
                _ => false,
            };
            let falsified = ranges.iter().any(|r| {
                r.clone()
                    .any(|i| e.cnf.clause(i).iter().all(false_on_profile))
            });
            assert!(falsified, "{:?} dropped but no clause falsified", c.prefix);
        }
    }

    #[test]
    fn a_missed_profile_makes_the_coverage_satisfiable() {
        let e = enc("-1..1", 3, 8);
        let mut cubes = profile_cubes(&e, 4).unwrap();
        cubes.pop();
        let err = refute_coverage(&e, &coverage_cnf(&e, &cubes)).unwrap_err();
        assert!(
            err.to_string().contains("the cubes miss the profile"),
            "{err}"
        );
    }

    #[test]
    fn cube_proofs_lift_to_one_proof_of_the_formula() {
        use crate::proof::lift::{assemble, lift_cube};
        use crate::proof::{LratFormat, LratOptions, check_lrat_with};
        let e = enc_without_cliques("-1..1", 2, 5);
        let cubes = profile_cubes(&e, 3).unwrap();
        let cov = coverage_cnf(&e, &cubes);
        let cov_proof = refute_coverage(&e, &cov).unwrap();
        let cov_bytes = std::fs::read(cov_proof.path()).unwrap();
        let options = LratOptions {
            ids_follow_cnf: true,
            ..LratOptions::default()
        };
        // Every mix of encodings: cube proofs, lifted derivations, the result.
        for (k, format) in [LratFormat::Text, LratFormat::Binary]
            .into_iter()
            .enumerate()
        {
            let mut lifted = Vec::new();
            for c in &cubes {
                let cnf = run::cube_cnf(&e.cnf, c);
                let plan = ProofPlan {
                    format: if (c.index + k) % 2 == 0 {
                        LratFormat::Binary
                    } else {
                        LratFormat::Text
                    },
                    ..ProofPlan::default()
                };
                let r = solve_bundled(&cnf, &Limits::default(), &plan, None).unwrap();
                assert_eq!(r.outcome, Outcome::Unsat);
                let proof = std::fs::read(r.proof.unwrap().path()).unwrap();
                // Without the cube's units the proof refers to clauses that do not exist.
                if !c.literals.is_empty() {
                    assert!(lift_cube(&e.cnf, &[], &proof[..], Vec::new(), format).is_err());
                }
                let mut out = Vec::new();
                let lc = lift_cube(&e.cnf, &c.lits(), &proof[..], &mut out, format).unwrap();
                assert_eq!(lc.bytes, out.len() as u64);
                lifted.push((lc, out));
            }
            let pieces = || lifted.iter().map(|(lc, out)| (*lc, &out[..]));
            let mut all = Vec::new();
            let sources = coverage_sources(&e);
            assemble(&e.cnf, &sources, pieces(), &cov_bytes[..], &mut all, format).unwrap();
            let s = check_lrat_with(&e.cnf, &all, &options).unwrap();
            assert_eq!(s.format, format);
            // Leaving out one cube's derivation breaks the chain: the checker rejects it.
            let mut partial = Vec::new();
            let cut = assemble(
                &e.cnf,
                &sources,
                pieces().skip(1),
                &cov_bytes[..],
                &mut partial,
                format,
            );
            assert!(cut.is_err() || check_lrat_with(&e.cnf, &partial, &options).is_err());
        }
    }

    #[test]
    fn one_cube_is_the_whole_space() {
        let e = enc("0..1", 2, 3); // L = 1: the profile is fixed
        let cubes = profile_cubes(&e, 8).unwrap();
        assert_eq!(cubes.len(), 1);
        assert!(cubes[0].literals.is_empty());
        refute_coverage(&e, &coverage_cnf(&e, &cubes)).unwrap();
    }
}
