//! The real question cut into cubes, for many cores or machines
//! (`encodings/real-space.md` §9).
//!
//! # Cubes
//!
//! A cube is a conjunction of literals over the skeleton's `T(i, j, c)`
//! variables ([`super::skeleton`]): which coordinate and sign attain some
//! pairs' distances. [`make_cubes`] grows a binary tree: each node is a set
//! of literals closed under the skeleton's unit propagation; a node is split
//! on the first variable of [`split_order`] that propagation leaves free
//! (pairs `(0,1), (0,2), …, (0,p−1)`, then the other pairs in
//! lexicographic order; in each pair, for `c = 0, 1, …`, `T(i,j,c)` then
//! `T(j,i,c)`), and a child whose propagation meets a conflict is dropped.
//! The node with the fewest literals (the first among equals) is split
//! until there are at least the requested number of leaves or no node has
//! a free variable left. The leaves, in tree order, are the cubes; a cube's
//! literals are the decisions on its path (implied literals are left out).
//!
//! # Why the cubes cover every model
//!
//! How the cubes were chosen is not trusted. `coverage.cnf` is the
//! skeleton's clauses followed by one clause `¬l_1 ∨ … ∨ ¬l_r` per cube
//! ([`coverage_cnf`]); the bundled solver refutes it and orbitcnf's checker
//! accepts the LRAT proof, when the split is written and again in every
//! merge (against a coverage CNF rebuilt from the manifest's cube list). A
//! model of the skeleton that satisfied no cube would satisfy
//! `coverage.cnf`; so every model of the skeleton, in particular the truth
//! assignment of every normalised cycle, satisfies some cube. A cube's
//! certificate refutes the skeleton, its lemmas (true for every normalised
//! cycle by the Farkas rule) and its literals as unit clauses. So if every
//! cube is refuted, no normalised cycle exists, hence no cycle at all.
//!
//! # The folder
//!
//! `manifest.json` ([`RealSplitManifest`], format [`FORMAT`]: question,
//! skeleton options, cube list with digests, the SHA-256 of every file),
//! `skeleton.cnf`, `coverage.cnf`, `coverage.lrat`, and `results/` filled by
//! [`run::run_cube`]. [`run::merge`] checks all of it; [`jobs`] runs the
//! cubes on threads for `decide`.

pub mod jobs;
pub mod run;

use std::path::Path;

use serde::{Deserialize, Serialize};

use super::bundle::RealQuestion;
use super::skeleton::{self, Skeleton, SkeletonOptions};
use crate::artifact::{FileEntry, sha256_hex, write_atomically};
use crate::cnf::{Cnf, Lit, Var};
use crate::dimacs::VERSION;
use crate::error::{Error, Result};
use crate::proof::{LratOptions, LratSummary};
use crate::solve::refute::{CheckedProof, ProofPlan, recheck_file, solve_bundled};
use crate::solve::{Limits, Outcome};
use crate::split::layout::cube_digest;

/// The manifest's file name.
pub const MANIFEST: &str = "manifest.json";
/// The skeleton, once for every cube.
pub const SKELETON: &str = "skeleton.cnf";
/// The coverage check.
pub const COVERAGE: &str = "coverage.cnf";
/// The coverage check's LRAT proof.
pub const COVERAGE_PROOF: &str = "coverage.lrat";
/// The folder of per-cube results.
pub const RESULTS_DIR: &str = "results";
/// The format tag of [`RealSplitManifest`] (a grid split's is `orbitcnf-split/…`).
pub const FORMAT: &str = "orbitcnf-real-split/1";
/// The format tag of a split some of whose cubes were cut into smaller
/// ones by [`refine_split`]: an orbitcnf that knows only [`FORMAT`] would
/// ask for results of the cut cubes, so it is told apart.
pub const FORMAT_REFINED: &str = "orbitcnf-real-split/2";
/// The most cubes a split makes (each costs a search and a certificate).
pub const MAX_CUBES: usize = 1 << 20;
/// The rule [`make_cubes`] follows, as the manifest names it.
pub const RULE: &str = "witness-tree";

/// A cube as the manifest lists it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RealCube {
    /// Position in the cube list, from 0.
    pub index: usize,
    /// The literals (DIMACS numbers of `T(i, j, c)` variables), in tree order.
    pub literals: Vec<i32>,
    /// [`cube_digest`] of the skeleton's SHA-256 and the literals: what
    /// results name, so that a result of another cube or skeleton is refused.
    pub sha256: String,
    /// Set when [`refine_split`] cut this cube into smaller ones: their
    /// indices (empty when unit propagation alone refutes the cube). Such
    /// a cube needs no result; the coverage check lists its pieces instead.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub refined_into: Option<Vec<usize>>,
}

impl RealCube {
    /// Whether the cube is one to solve: not cut into smaller cubes.
    pub fn is_leaf(&self) -> bool {
        self.refined_into.is_none()
    }
}

/// The coverage check as the manifest records it.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RealCoverage {
    /// The coverage CNF.
    pub cnf: FileEntry,
    /// Its LRAT refutation, accepted by orbitcnf's checker when written.
    pub proof: FileEntry,
    /// Clauses taken from the skeleton (the rest are negated cubes).
    pub skeleton_clauses: usize,
    /// Steps of the accepted proof.
    pub lrat_steps: u64,
}

/// How the cubes were chosen (informative; soundness rests on the coverage proof).
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RealSplitRule {
    /// [`RULE`].
    pub rule: String,
    /// The variable order, in words.
    pub order: String,
}

/// `manifest.json` of a real-space split folder.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RealSplitManifest {
    /// [`FORMAT`].
    pub format: String,
    /// orbitcnf version that wrote the split.
    pub orbitcnf_version: String,
    /// The question, `{"space": "real", "dim": n, "period": p}`.
    pub question: RealQuestion,
    /// The skeleton's options.
    pub options: SkeletonOptions,
    /// The number of cubes asked for.
    pub requested_cubes: usize,
    /// How the cubes were chosen.
    pub split: RealSplitRule,
    /// `skeleton.cnf`.
    pub skeleton: FileEntry,
    /// The coverage check.
    pub coverage: RealCoverage,
    /// The cubes, in index order: the first split's, then the pieces of
    /// every refinement, appended.
    pub cubes: Vec<RealCube>,
    /// How many times [`refine_split`] changed the split (0 for none).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub refinements: usize,
}

fn is_zero(k: &usize) -> bool {
    *k == 0
}

/// The `T(i, j, c)` of a skeleton variable (DIMACS number), if it is one.
pub fn tight_of(n: usize, p: usize, v: u32) -> Option<(usize, usize, usize)> {
    if p < 2 {
        return None;
    }
    let per = p * (p - 1);
    let k = (v as usize).checked_sub(1)?;
    if k >= n.checked_mul(per)? {
        return None;
    }
    let (c, r) = (k / per, k % per);
    let (i, col) = (r / (p - 1), r % (p - 1));
    let j = if col < i { col } else { col + 1 };
    Some((i, j, c))
}

/// A cube's literals in words: `T(0,2,1) ¬T(2,0,0)`, or `the whole question`.
pub fn describe(n: usize, p: usize, literals: &[i32]) -> String {
    if literals.is_empty() {
        return "the whole question".into();
    }
    let words: Vec<String> = literals
        .iter()
        .map(|&l| {
            let sign = if l < 0 { "¬" } else { "" };
            match tight_of(n, p, l.unsigned_abs()) {
                Some((i, j, c)) => format!("{sign}T({i},{j},{c})"),
                None => format!("{l}"),
            }
        })
        .collect();
    words.join(" ")
}

/// The variables cubes branch on, in order (see the module documentation).
pub fn split_order(n: usize, p: usize) -> Vec<Var> {
    let first = (1..p).map(|k| (0, k));
    let rest = skeleton::pairs(p).filter(|&(i, _)| i > 0);
    first
        .chain(rest)
        .flat_map(|(i, j)| {
            (0..n).flat_map(move |c| {
                [
                    skeleton::tight_var(n, p, i, j, c),
                    skeleton::tight_var(n, p, j, i, c),
                ]
            })
        })
        .collect()
}

/// Unit propagation over a CNF with occurrence lists.
struct Propagator<'a> {
    cnf: &'a Cnf,
    /// `occ[2v + s]`: the clauses holding the literal of `v` with sign `s`
    /// (0 positive, 1 negative).
    occ: Vec<Vec<u32>>,
}

fn slot(l: Lit) -> usize {
    2 * l.var().index() + usize::from(!l.is_positive())
}

fn value(val: &[i8], l: Lit) -> i8 {
    let v = val[l.var().index()];
    if l.is_positive() { v } else { -v }
}

impl<'a> Propagator<'a> {
    fn new(cnf: &'a Cnf) -> Self {
        let mut occ = vec![Vec::new(); 2 * cnf.num_vars() as usize];
        for (k, c) in cnf.clauses().enumerate() {
            for &l in c {
                occ[slot(l)].push(k as u32);
            }
        }
        Propagator { cnf, occ }
    }

    /// Makes each literal of `queue` true and propagates; `false` on a conflict.
    fn assign(&self, val: &mut [i8], mut queue: Vec<Lit>) -> bool {
        while let Some(l) = queue.pop() {
            match value(val, l) {
                1 => continue,
                -1 => return false,
                _ => val[l.var().index()] = if l.is_positive() { 1 } else { -1 },
            }
            for &k in &self.occ[slot(!l)] {
                let mut free = None;
                let mut open = 0;
                let mut sat = false;
                for &m in self.cnf.clause(k as usize) {
                    match value(val, m) {
                        1 => {
                            sat = true;
                            break;
                        }
                        0 => {
                            open += 1;
                            free = Some(m);
                        }
                        _ => {}
                    }
                }
                match (sat, open, free) {
                    (true, _, _) => {}
                    (false, 0, _) => return false,
                    (false, 1, Some(m)) => queue.push(m),
                    _ => {}
                }
            }
        }
        true
    }
}

#[derive(Clone)]
struct Node {
    val: Vec<i8>,
    lits: Vec<i32>,
    /// No free variable is left: the node is a cube for good.
    done: bool,
}

/// Free variables a node's look-ahead tries: the first ones in
/// [`split_order`], so that choosing costs the same on every size.
pub const LOOKAHEAD: usize = 64;

/// How many variables are assigned in `val`.
fn assigned(val: &[i8]) -> usize {
    val.iter().filter(|&&v| v != 0).count()
}

/// The variable to split `node` on, by look-ahead: among the first
/// [`LOOKAHEAD`] free variables of `order`, the one whose two values
/// propagate the most (largest product of the two counts, the first among
/// equals). A value that propagates to a conflict makes the other one
/// implied: it is added to the node (not to its literals) and the choice
/// starts again. `None` when the node is refuted so, or has no free
/// variable (then `node.done`).
fn choose(prop: &Propagator<'_>, node: &mut Node, order: &[Var]) -> Option<Option<Var>> {
    'again: loop {
        let base = assigned(&node.val);
        let mut best: Option<(usize, Var)> = None;
        for &v in order
            .iter()
            .filter(|v| node.val[v.index()] == 0)
            .take(LOOKAHEAD)
        {
            let mut counts = [0usize; 2];
            for (k, l) in [v.pos(), v.neg()].into_iter().enumerate() {
                let mut val = node.val.clone();
                if !prop.assign(&mut val, vec![l]) {
                    if !prop.assign(&mut node.val, vec![!l]) {
                        return None;
                    }
                    continue 'again;
                }
                counts[k] = assigned(&val) - base;
            }
            let score = counts[0] * counts[1];
            if best.is_none_or(|(b, _)| score > b) {
                best = Some((score, v));
            }
        }
        if best.is_none() {
            node.done = true;
        }
        return Some(best.map(|(_, v)| v));
    }
}

/// The cubes for at least `target` cubes (fewer when the variables run
/// out), as literal lists in tree order (see the module documentation).
/// `target` 1 (or 0) gives one empty cube: the whole question.
pub fn make_cubes(sk: &Skeleton, target: usize) -> Vec<Vec<i32>> {
    make_cubes_under(sk, &[], target).unwrap_or_else(|| vec![Vec::new()])
}

/// The cubes that cut the cube `prefix` into at least `target` pieces
/// (fewer when the variables run out), each extending `prefix`, in tree
/// order. `None` when the skeleton's unit propagation refutes `prefix`,
/// and no piece when the look-ahead refutes every branch: either way the
/// cube needs no piece. `Some(vec![prefix])` when no variable is free.
pub fn make_cubes_under(sk: &Skeleton, prefix: &[i32], target: usize) -> Option<Vec<Vec<i32>>> {
    let prop = Propagator::new(&sk.cnf);
    let order = split_order(sk.n, sk.p);
    let mut root = Node {
        val: vec![0; sk.cnf.num_vars() as usize],
        lits: prefix.to_vec(),
        done: false,
    };
    let units: Vec<Lit> = sk
        .cnf
        .clauses()
        .filter(|c| c.len() == 1)
        .map(|c| c[0])
        .chain(prefix.iter().map(|&l| Lit::from_dimacs(l)))
        .collect();
    if !prop.assign(&mut root.val, units) {
        return None;
    }
    let mut nodes = vec![root];
    while nodes.len() < target {
        let Some(k) = (0..nodes.len())
            .filter(|&k| !nodes[k].done)
            .min_by_key(|&k| nodes[k].lits.len())
        else {
            break;
        };
        let mut node = nodes.remove(k);
        let v = match choose(&prop, &mut node, &order) {
            None => continue,
            Some(None) => {
                nodes.insert(k, node);
                continue;
            }
            Some(Some(v)) => v,
        };
        let mut children = Vec::with_capacity(2);
        for l in [v.pos(), v.neg()] {
            let mut c = node.clone();
            c.lits.push(l.dimacs());
            if prop.assign(&mut c.val, vec![l]) {
                children.push(c);
            }
        }
        nodes.splice(k..k, children);
    }
    Some(nodes.into_iter().map(|n| n.lits).collect())
}

/// The coverage check: the skeleton's clauses, then the negation of every
/// cube. Variables keep their numbers.
pub fn coverage_cnf(sk: &Skeleton, cubes: &[Vec<i32>]) -> Cnf {
    let mut cnf = sk.cnf.clone();
    for c in cubes {
        let neg: Vec<Lit> = c.iter().map(|&l| Lit::from_dimacs(-l)).collect();
        cnf.add_clause(&neg);
    }
    cnf
}

/// The coverage CNF as plain DIMACS with comments saying what it is.
pub fn render_coverage(sk: &Skeleton, cnf: &Cnf, cubes: usize) -> Vec<u8> {
    use std::fmt::Write as _;
    let m = sk.cnf.num_clauses();
    let mut s = format!(
        "c orbitcnf {VERSION} coverage check for the real-space split of R^{}, period {}\n\
         c clauses 1..{m}: the clauses of skeleton.cnf\n\
         c clauses {}..{}: the negation of cube 0, 1, ...; unsatisfiable iff every model of the skeleton lies in a cube\n\
         p cnf {} {}\n",
        sk.n,
        sk.p,
        m + 1,
        m + cubes,
        cnf.num_vars(),
        cnf.num_clauses()
    );
    for c in cnf.clauses() {
        for l in c {
            let _ = write!(s, "{} ", l.dimacs());
        }
        s.push_str("0\n");
    }
    s.into_bytes()
}

/// Refutes the coverage CNF with the bundled solver and checks the proof.
///
/// # Errors
/// [`Error::Solver`] when the CNF is satisfiable (a model of the skeleton
/// in no cube: a bug in the cube generation) or the solver gives up;
/// [`Error::Proof`] when the proof is rejected.
pub fn refute_coverage(cnf: &Cnf) -> Result<CheckedProof> {
    let r = solve_bundled(cnf, &Limits::default(), &ProofPlan::default(), None)?;
    match r.outcome {
        Outcome::Unsat => r.proof.ok_or_else(|| Error::Solver {
            solver: "coverage check".into(),
            reason: "no checked proof".into(),
        }),
        Outcome::Sat(_) => Err(Error::Solver {
            solver: "coverage check".into(),
            reason: "a model of the skeleton lies in no cube; no split was written".into(),
        }),
        Outcome::Unknown(why) => Err(Error::Solver {
            solver: "coverage check".into(),
            reason: why,
        }),
    }
}

/// Whether `dir` holds a real-space split: a manifest of format [`FORMAT`].
pub fn is_real_split(dir: &Path) -> bool {
    manifest_format(&dir.join(MANIFEST)).is_some_and(|f| f == FORMAT || f == FORMAT_REFINED)
}

/// The `format` field of the JSON object in `path`, when it has one.
///
/// Manifests are written with `format` as their first field, and then only
/// that field is read: a grid split of a million cubes has a 238 MB manifest,
/// and scanning it here cost every `run-cube` process a third of a second
/// before the manifest proper was read. Otherwise the whole file is parsed,
/// skipping everything but `format`.
fn manifest_format(path: &Path) -> Option<String> {
    use serde::Deserialize;
    use std::io::Read;
    let mut head = Vec::new();
    std::fs::File::open(path)
        .ok()?
        .take(4096)
        .read_to_end(&mut head)
        .ok()?;
    let text = head.trim_ascii_start().strip_prefix(b"{")?;
    if let Some(rest) = text
        .trim_ascii_start()
        .strip_prefix(b"\"format\"")
        .and_then(|r| r.trim_ascii_start().strip_prefix(b":"))
    {
        // One JSON string, read alone: the deserializer stops after it.
        let mut de = serde_json::Deserializer::from_slice(rest);
        if let Ok(format) = String::deserialize(&mut de) {
            return Some(format);
        }
    }
    #[derive(serde::Deserialize)]
    struct FormatOnly {
        format: String,
    }
    let bytes = std::fs::read(path).ok()?;
    serde_json::from_slice::<FormatOnly>(&bytes)
        .ok()
        .map(|v| v.format)
}

impl RealSplitManifest {
    /// Reads `dir/manifest.json`.
    ///
    /// # Errors
    /// [`Error::Io`]; [`Error::Parse`] for another format, a question not
    /// in real space, or cubes out of index order.
    pub fn read(dir: &Path) -> Result<RealSplitManifest> {
        let path = dir.join(MANIFEST);
        let name = path.display().to_string();
        let bytes = std::fs::read(&path).map_err(|e| Error::io(&path, e))?;
        let m: RealSplitManifest = serde_json::from_slice(&bytes).map_err(|e| {
            Error::parse(
                &name,
                e.line(),
                format!("not a real-space split manifest: {e}"),
            )
        })?;
        let refined = m.cubes.iter().any(|c| !c.is_leaf());
        let expected = if refined { FORMAT_REFINED } else { FORMAT };
        if m.format != expected || m.question.space != "real" {
            return Err(Error::file(
                &name,
                format!(
                    "format {:?} for space {:?}; this orbitcnf reads {FORMAT:?} (or, for a \
                     refined split, {FORMAT_REFINED:?}) for \"real\"",
                    m.format, m.question.space
                ),
            ));
        }
        if m.cubes.iter().enumerate().any(|(i, c)| c.index != i) {
            return Err(Error::file(
                &name,
                "the cubes are not listed in index order",
            ));
        }
        if let Some(c) = m.cubes.iter().find(|c| {
            c.refined_into
                .iter()
                .flatten()
                .any(|&k| k <= c.index || k >= m.cubes.len())
        }) {
            return Err(Error::file(
                &name,
                format!("cube {} lists pieces that are not later cubes", c.index),
            ));
        }
        Ok(m)
    }

    /// The cubes to solve: those not cut into smaller cubes, in index order.
    pub fn leaves(&self) -> impl Iterator<Item = &RealCube> {
        self.cubes.iter().filter(|c| c.is_leaf())
    }

    /// What `split` wrote to `dir`, and what to do next, for people.
    pub fn summary(&self, dir: &Path) -> String {
        let d = dir.display();
        let q = &self.question;
        let longest = self.leaves().map(|c| c.literals.len()).max();
        format!(
            "question     an isometric {}-cycle in (R^{}, sup-norm)\n\
             cubes        {} (asked for {}), literals of the skeleton's witness variables T(i,j,c), at most {} per cube\n\
             coverage     checked: LRAT proof of {} steps refutes coverage.cnf, so every model of the skeleton lies in a cube\n\
             written      {d}/manifest.json, skeleton.cnf, coverage.cnf, coverage.lrat\n\
             next         orbitcnf run-cube {d} INDEX   for INDEX in 0..{}   (docs/cluster.md)\n\
             \x20            orbitcnf merge {d}\n",
            q.period,
            q.dim,
            self.cubes.len(),
            self.requested_cubes,
            longest.unwrap_or(0),
            self.coverage.lrat_steps,
            self.cubes.len().saturating_sub(1),
        )
    }
}

/// Splits the real question `(n, p)` into at least `target` cubes (fewer
/// when the variables run out) and writes the split folder `dir` (created
/// if needed). A folder that already holds the same split keeps its
/// results; its other files are written again (they are deterministic).
///
/// # Errors
/// [`Error::Options`] for a target of 0 cubes or above [`MAX_CUBES`], or
/// a folder that holds another split; [`Error::Question`] for sizes out of range; a failed
/// coverage check; [`Error::Io`].
pub fn write_split(
    dir: &Path,
    n: usize,
    p: usize,
    options: &SkeletonOptions,
    target: usize,
) -> Result<RealSplitManifest> {
    if target == 0 || target > MAX_CUBES {
        return Err(Error::Options(format!(
            "a split needs at least one cube and at most {MAX_CUBES}, not {target}"
        )));
    }
    let sk = skeleton::build(n, p, options)?;
    let question = RealQuestion {
        space: "real".into(),
        dim: n,
        period: p,
    };
    if dir.join(MANIFEST).exists() {
        let old = RealSplitManifest::read(dir)?;
        if old.refinements > 0 {
            return Err(Error::Options(format!(
                "{} already holds this split with cubes cut into smaller ones by refine, \
                 which writing it again would lose; go on with it, or choose another folder",
                dir.display()
            )));
        }
        if old.question != question || &old.options != options || old.requested_cubes != target {
            return Err(Error::Options(format!(
                "{} already holds another split ({MANIFEST}); choose another folder or remove it",
                dir.display()
            )));
        }
    }
    let cubes = make_cubes(&sk, target);
    let coverage = coverage_cnf(&sk, &cubes);
    let checked = refute_coverage(&coverage)?;
    let proof = std::fs::read(checked.path()).map_err(|e| Error::io(checked.path(), e))?;
    let results = dir.join(RESULTS_DIR);
    std::fs::create_dir_all(&results).map_err(|e| Error::io(&results, e))?;
    let put = |name: &str, bytes: &[u8]| -> Result<FileEntry> {
        write_atomically(&dir.join(name), bytes)?;
        Ok(FileEntry::of(name, bytes))
    };
    let skeleton_text = skeleton::render(&sk);
    let skeleton_entry = put(SKELETON, &skeleton_text)?;
    let cov = put(COVERAGE, &render_coverage(&sk, &coverage, cubes.len()))?;
    let cov_proof = put(COVERAGE_PROOF, &proof)?;
    let m = RealSplitManifest {
        format: FORMAT.into(),
        orbitcnf_version: VERSION.into(),
        question,
        options: options.clone(),
        requested_cubes: target,
        split: RealSplitRule {
            rule: RULE.into(),
            order: "T(i,j,c) then T(j,i,c) for c = 0..n-1, over the pairs (0,1)..(0,p-1), then \
                    the other pairs i < j in lexicographic order; split the node with fewest \
                    literals; propagate the skeleton's units; drop refuted children"
                .into(),
        },
        coverage: RealCoverage {
            cnf: cov,
            proof: cov_proof,
            skeleton_clauses: sk.cnf.num_clauses(),
            lrat_steps: checked.info.lrat.steps,
        },
        cubes: cubes
            .into_iter()
            .enumerate()
            .map(|(index, literals)| RealCube {
                index,
                sha256: cube_digest(&skeleton_entry.sha256, &literals),
                literals,
                refined_into: None,
            })
            .collect(),
        skeleton: skeleton_entry,
        refinements: 0,
    };
    let text = serde_json::to_string_pretty(&m).map_err(|e| Error::Options(e.to_string()))? + "\n";
    write_atomically(&dir.join(MANIFEST), text.as_bytes())?;
    Ok(m)
}

/// Re-checks a split against a fresh build: `skeleton.cnf` must be exactly
/// the skeleton of the manifest's question and options, every cube's
/// digest must match the skeleton's and its literals, every literal must
/// be a `T` variable, and `coverage.lrat` must refute the coverage CNF
/// rebuilt from the manifest's cube list. Returns the skeleton and the
/// coverage proof's summary.
///
/// # Errors
/// [`Error::Parse`] naming the file or cube that differs; [`Error::Proof`]
/// for a rejected coverage proof (for instance, a cube left out of the
/// manifest).
pub fn verify_split(dir: &Path, m: &RealSplitManifest) -> Result<(Skeleton, LratSummary)> {
    let q = &m.question;
    let sk = skeleton::build(q.dim, q.period, &m.options)?;
    let mpath = dir.join(MANIFEST).display().to_string();
    let fresh = skeleton::render(&sk);
    let on_disk = m.skeleton.read_checked(dir, MANIFEST)?;
    if on_disk != fresh || m.skeleton.name != SKELETON {
        return Err(Error::file(
            dir.join(SKELETON).display().to_string(),
            format!(
                "differs from the skeleton this orbitcnf ({VERSION}) builds for the manifest's question and options"
            ),
        ));
    }
    let sha = sha256_hex(&fresh);
    let tight_vars = (q.dim * q.period * (q.period - 1)) as u32;
    for c in &m.cubes {
        if let Some(&bad) = c
            .literals
            .iter()
            .find(|l| **l == 0 || l.unsigned_abs() > tight_vars)
        {
            return Err(Error::file(
                &mpath,
                format!(
                    "cube {} has the literal {bad}, not a T(i,j,c) variable",
                    c.index
                ),
            ));
        }
        if c.sha256 != cube_digest(&sha, &c.literals) {
            return Err(Error::file(
                &mpath,
                format!(
                    "cube {}: its digest does not match the skeleton and its literals",
                    c.index
                ),
            ));
        }
    }
    let cubes: Vec<Vec<i32>> = m.leaves().map(|c| c.literals.clone()).collect();
    let coverage = coverage_cnf(&sk, &cubes);
    let options = LratOptions {
        ids_follow_cnf: true,
        ..LratOptions::default()
    };
    if m.coverage.proof.name.contains(['/', '\\']) {
        return Err(Error::file(
            &mpath,
            "names a coverage proof outside the split folder",
        ));
    }
    let path = dir.join(&m.coverage.proof.name);
    let stored = recheck_file(&coverage, &path, &options)?;
    let summary = stored.check.map_err(|e| {
        Error::file(
            path.display().to_string(),
            format!(
                "does not refute the coverage CNF rebuilt from the manifest's {} cubes, so the \
                 cubes are not known to cover the question: {e}",
                cubes.len()
            ),
        )
    })?;
    Ok((sk, summary))
}

pub(crate) use crate::split::index_ranges as list;

/// The pieces of a cut cube for people (they are always consecutive
/// indices, since [`refine_split`] appends them): `cube 8`, `cubes 8..11`,
/// or that propagation refuted the cube and it has none.
pub fn pieces_words(pieces: &[usize]) -> String {
    match (pieces.first(), pieces.last()) {
        (Some(a), Some(b)) if a == b => format!("cube {a}"),
        (Some(a), Some(b)) => format!("cubes {a}..{b}"),
        _ => "no cube: unit propagation refutes it".into(),
    }
}

/// What [`refine_split`] did.
#[derive(Clone, Debug, Serialize)]
pub struct RefineReport {
    /// The cubes cut, each with the indices of its pieces (none when unit
    /// propagation refutes it).
    pub refined: Vec<(usize, Vec<usize>)>,
    /// Cubes asked for that could not be cut: no witness variable is free.
    pub uncut: Vec<usize>,
    /// The manifest as written.
    pub manifest: RealSplitManifest,
}

impl RefineReport {
    /// What was done, and what to do next, for people.
    pub fn to_text(&self, dir: &Path) -> String {
        use std::fmt::Write as _;
        let d = dir.display();
        let m = &self.manifest;
        let pieces: usize = self.refined.iter().map(|(_, v)| v.len()).sum();
        let cubes = match self.refined.len() {
            1 => "1 cube".to_string(),
            k => format!("{k} cubes"),
        };
        let mut s = format!(
            "refined      {cubes} into {pieces} smaller ones (refinement {})\n",
            m.refinements
        );
        for (k, (i, v)) in self.refined.iter().enumerate() {
            if k == 20 {
                let _ = writeln!(s, "             … and {} more", self.refined.len() - 20);
                break;
            }
            let _ = writeln!(s, "             cube {i} -> {}", pieces_words(v));
        }
        if !self.uncut.is_empty() {
            let _ = writeln!(
                s,
                "not cut      {} (every witness variable is fixed)",
                list(&self.uncut)
            );
        }
        let leaves = m.leaves().count();
        let _ = writeln!(
            s,
            "cubes        {} listed, {leaves} to solve (the others are cut into pieces)",
            m.cubes.len()
        );
        let _ = writeln!(
            s,
            "coverage     checked: LRAT proof of {} steps refutes {}, so every model of the skeleton lies in a cube to solve",
            m.coverage.lrat_steps, m.coverage.cnf.name
        );
        match (
            self.refined.iter().flat_map(|(_, v)| v).min(),
            self.refined.iter().flat_map(|(_, v)| v).max(),
        ) {
            (Some(a), Some(b)) => {
                let _ = writeln!(
                    s,
                    "next         orbitcnf run-cube {d} {a}..{b}   (or every index of merge {d} --pending)\n\
                     \x20            orbitcnf merge {d}"
                );
            }
            _ => {
                let _ = writeln!(s, "next         orbitcnf merge {d}");
            }
        }
        s
    }
}

/// Cuts cubes of the split in `dir` into at least `per_cube` smaller
/// cubes each, in place (`encodings/real-space.md` §9): the pieces extend
/// the cube's literals and are chosen like the first split's cubes
/// ([`make_cubes_under`]); they are appended to the cube list, the cut
/// cube records their indices, and a new coverage check over the cubes
/// left to solve is refuted and its proof checked before the manifest is
/// replaced (one atomic write; results of other cubes stay valid, since
/// their indices and digests do not change). `which` names the cubes to
/// cut; `None` takes every cube whose result says unknown or error.
///
/// # Errors
/// [`Error::Options`] for `per_cube` below 2, no cube to cut, a cube that
/// is out of range, already cut or already answered, or a split that
/// would exceed [`MAX_CUBES`]; a split that fails [`verify_split`]; a
/// failed coverage check; [`Error::Io`].
pub fn refine_split(dir: &Path, which: Option<&[usize]>, per_cube: usize) -> Result<RefineReport> {
    if !(2..=MAX_CUBES).contains(&per_cube) {
        return Err(Error::Options(format!(
            "a cube is cut into at least 2 and at most {MAX_CUBES} pieces, not {per_cube}"
        )));
    }
    let mut m = RealSplitManifest::read(dir)?;
    let (sk, _) = verify_split(dir, &m)?;
    let result_of = |i: usize| {
        run::read_result(dir, i)
            .ok()
            .flatten()
            .filter(|r| r.cube_sha256 == m.cubes[i].sha256)
    };
    let chosen: Vec<usize> = match which {
        Some(list) => {
            let mut v = list.to_vec();
            v.sort_unstable();
            v.dedup();
            for &i in &v {
                let Some(c) = m.cubes.get(i) else {
                    return Err(crate::split::run::out_of_range(dir, i, m.cubes.len()));
                };
                if let Some(into) = &c.refined_into {
                    return Err(Error::Options(format!(
                        "cube {i} is already cut into {} pieces",
                        into.len()
                    )));
                }
                if let Some(r) = result_of(i).filter(|r| r.status.is_final()) {
                    return Err(Error::Options(format!(
                        "cube {i} is already answered ({}); only cubes without an answer are cut",
                        if r.status == crate::split::run::CubeStatus::Feasible {
                            "feasible"
                        } else {
                            "infeasible"
                        }
                    )));
                }
            }
            v
        }
        None => m
            .leaves()
            .filter(|c| result_of(c.index).is_some_and(|r| !r.status.is_final()))
            .map(|c| c.index)
            .collect(),
    };
    if chosen.is_empty() {
        return Err(Error::Options(format!(
            "no cube of {} has an unknown or failed result, so there is nothing to cut; name \
             the cubes to cut",
            dir.display()
        )));
    }
    let mut refined = Vec::new();
    let mut uncut = Vec::new();
    for &i in &chosen {
        let parent = m.cubes[i].literals.clone();
        let pieces = make_cubes_under(&sk, &parent, per_cube).unwrap_or_default();
        if pieces.len() == 1 && pieces[0] == parent {
            uncut.push(i);
            continue;
        }
        let first = m.cubes.len();
        if first + pieces.len() > MAX_CUBES {
            return Err(Error::Options(format!(
                "cutting cube {i} would make more than {MAX_CUBES} cubes"
            )));
        }
        let indices: Vec<usize> = (first..first + pieces.len()).collect();
        for (index, literals) in indices.iter().copied().zip(pieces) {
            m.cubes.push(RealCube {
                index,
                sha256: cube_digest(&m.skeleton.sha256, &literals),
                literals,
                refined_into: None,
            });
        }
        m.cubes[i].refined_into = Some(indices.clone());
        refined.push((i, indices));
    }
    if refined.is_empty() {
        return Err(Error::Options(format!(
            "none of the cubes {} can be cut: every witness variable is fixed in each",
            list(&chosen)
        )));
    }
    let leaves: Vec<Vec<i32>> = m.leaves().map(|c| c.literals.clone()).collect();
    let coverage = coverage_cnf(&sk, &leaves);
    let checked = refute_coverage(&coverage)?;
    let proof = std::fs::read(checked.path()).map_err(|e| Error::io(checked.path(), e))?;
    m.refinements += 1;
    let stem = format!("coverage-{}", m.refinements);
    let old = [m.coverage.cnf.name.clone(), m.coverage.proof.name.clone()];
    let put = |name: String, bytes: &[u8]| -> Result<FileEntry> {
        write_atomically(&dir.join(&name), bytes)?;
        Ok(FileEntry::of(&name, bytes))
    };
    m.coverage = RealCoverage {
        cnf: put(
            format!("{stem}.cnf"),
            &render_coverage(&sk, &coverage, leaves.len()),
        )?,
        proof: put(format!("{stem}.lrat"), &proof)?,
        skeleton_clauses: sk.cnf.num_clauses(),
        lrat_steps: checked.info.lrat.steps,
    };
    m.format = FORMAT_REFINED.into();
    let text = serde_json::to_string_pretty(&m).map_err(|e| Error::Options(e.to_string()))? + "\n";
    write_atomically(&dir.join(MANIFEST), text.as_bytes())?;
    // The manifest names the new coverage files now; the old ones are stale.
    for name in old {
        if name != m.coverage.cnf.name && name != m.coverage.proof.name {
            let _ = std::fs::remove_file(dir.join(name));
        }
    }
    Ok(RefineReport {
        refined,
        uncut,
        manifest: m,
    })
}

#[cfg(test)]
mod tests;
