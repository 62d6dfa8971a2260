//! From a [`Question`] to CNF.
//!
//! A question is encoded in one of the [`Formulation`]s: on a box, the
//! *isometric cycle* (`encodings/isometric-cycle.md`): variables describe `p`
//! points `x_0..x_{p−1}` of the box and a distance profile `g(1..⌊p/2⌋)`, and
//! the clauses say `‖x_i − x_j‖∞ = g(k(i, j))` for every pair, where
//! `k(i, j) = min(|i − j|, p − |i − j|)`. Because `g(k) ≥ 1` the points are
//! distinct, so a model is an orbit of minimal period `p` of the shift, which
//! extends to a nonexpansive map of the whole box. For topical maps
//! ([`MapClass::Topical`]) the *topical cycle*: the same coordinates, the
//! profile over the unfolded offsets `1..p−1` of the one-sided
//! `t(x_i, x_{i+k})`, the families of [`topical`] in place of those of
//! [`distance`], and the symmetry steps adapted as [`symmetry`] describes
//! (`encodings/topical.md`). On a finite set that is not a box, the *full
//! map* ([`fullmap`], `encodings/full-map.md`).
//!
//! # Families and their tables
//!
//! Each constraint family lives in its own module, whose doc says what its
//! variables mean, its exact size and why it is sound, and is written up in
//! `encodings/`. Each formulation lists its families in one table of
//! [`family::Family`] rows — [`cycle::ISOMETRIC_CYCLE`],
//! [`cycle::TOPICAL_CYCLE`], [`fullmap::FULL_MAP`] — each row giving the
//! family's name, when it applies (to the options as
//! [`EncodeOptions::resolve`] left them for the question), its exact size
//! from the question alone, and the function that emits it. [`estimate`] and
//! [`encode`] walk the same rows, so the size refused or accepted before
//! building and the formula built agree on which families come, in which
//! order; that each size is exact is tested row by row on many questions.
//!
//! # How to add a family
//!
//! 1. Write `src/encode/<name>.rs` (or a module of [`fullmap`]) with the
//!    label `FAMILY`, `add(e: &mut Encoder, …)`, which registers variables
//!    with [`Encoder::var`] or [`Encoder::aux`] and adds clauses with
//!    [`Encoder::clause`] (never touching the [`Cnf`] or the [`VarMap`]), and
//!    `size(…) -> Size`, the exact count as a closed formula, derived in the
//!    module doc. Sizes must be cheap: they are all evaluated before anything
//!    is built. If several families need the same costly table, compute it
//!    once in the formulation's context ([`cycle::Cycle`],
//!    [`fullmap::FullMap`]).
//! 2. Add a row to the formulation's table, below the families whose
//!    variables it reads. An optional family gets a field in
//!    [`EncodeOptions`] (serialised: it appears in headers, bundles and store
//!    keys; give it `#[serde(default)]` so old headers still read), switched
//!    off in [`EncodeOptions::resolve`] where it cannot act or would be too
//!    large, and a flag in the binary.
//! 3. Add a question that exercises the family to the exact-size tests
//!    (`encode/tests.rs`: every row of every table is compared with the
//!    encoder on every question listed there; a row no question reaches
//!    fails the test) and pin one small case to literal numbers.
//! 4. Argue soundness in `encodings/`, and add the option to the brute-force
//!    agreement tests (`encode/soundness.rs`, `tests/all/brute.rs`).
//!
//! Encoders write into an [`Encoder`], which owns the [`Cnf`] and the
//! [`VarMap`]; the same formula then feeds the bundled solver or the DIMACS
//! writer, so `encode` writes exactly what `decide` solves.

pub mod bicliques;
pub mod classes;
pub mod cliques;
pub mod coords;
pub mod count;
pub mod cycle;
pub mod distance;
pub mod edges;
pub mod family;
pub mod formulation;
pub mod fullmap;
pub mod gaps;
pub mod options;
pub mod orbits;
pub mod packing;
pub mod points;
pub mod profile;
pub mod subbox;
pub mod symmetry;
pub mod topical;

#[cfg(test)]
mod pinned;
#[cfg(test)]
mod soundness;
#[cfg(test)]
pub(crate) mod tests;

use crate::cnf::{Cnf, FamilyCount, Lit, Var};
use crate::error::{Error, Result};
use crate::question::{MapClass, Question};
use crate::varmap::{Meaning, VarMap};

pub use crate::cnf::Size;
pub use formulation::{Formulation, UnknownFormulation};
pub use options::{EncodeOptions, Symmetry};

/// The number `K` of profile offsets: `⌊p/2⌋` for the symmetric norm,
/// `p − 1` for the one-sided `t` of topical maps.
pub fn profile_len(q: &Question) -> usize {
    match q.class {
        MapClass::Nonexpansive => q.period / 2,
        MapClass::Topical => q.period - 1,
    }
}

/// Default limit on the number of clauses [`encode`] will build.
pub const DEFAULT_MAX_CLAUSES: u64 = 20_000_000;

/// Largest `p·|D|` for which the point-indicator families (`point-eq` and
/// everything built on it) are added.
pub const POINT_EQ_LIMIT: u128 = 2_000_000;

/// A question turned into CNF, with the map needed to read models back.
#[derive(Clone, Debug)]
pub struct Encoding {
    /// The question encoded.
    pub question: Question,
    /// The options used.
    pub options: EncodeOptions,
    /// The formula.
    pub cnf: Cnf,
    /// Meaning of every variable.
    pub map: VarMap,
    /// Variables and clauses per constraint family, in the order added.
    pub families: Vec<FamilyCount>,
}

/// A clause term during construction: a literal, or a constant that the
/// encoder folds away (true drops the clause, false drops the term).
#[derive(Copy, Clone, Debug, PartialEq, Eq)]
pub enum Term {
    /// A literal.
    Lit(Lit),
    /// The constant true.
    True,
    /// The constant false.
    False,
}

impl std::ops::Not for Term {
    type Output = Term;
    fn not(self) -> Term {
        match self {
            Term::Lit(l) => Term::Lit(!l),
            Term::True => Term::False,
            Term::False => Term::True,
        }
    }
}

impl From<Lit> for Term {
    fn from(l: Lit) -> Term {
        Term::Lit(l)
    }
}

/// The sink encoders write into: a CNF under construction and its variable map.
#[derive(Debug, Default)]
pub struct Encoder {
    cnf: Cnf,
    map: VarMap,
    families: Vec<FamilyCount>,
    scratch: Vec<Lit>,
}

impl Encoder {
    /// An empty encoder.
    pub fn new() -> Encoder {
        Encoder::default()
    }

    /// Runs `body` as constraint family `name`, recording what it adds.
    pub fn family(&mut self, name: &str, body: impl FnOnce(&mut Encoder)) {
        let (v0, c0) = (self.map.len(), self.cnf.num_clauses());
        body(self);
        self.families.push(FamilyCount {
            family: name.to_string(),
            vars: (self.map.len() - v0) as u64,
            clauses: (self.cnf.num_clauses() - c0) as u64,
        });
    }

    /// A fresh variable with meaning `m`.
    pub fn var(&mut self, m: Meaning) -> Var {
        let v = self.map.fresh(m);
        self.cnf.reserve_vars(v.dimacs());
        v
    }

    /// A fresh auxiliary variable of `family`, numbered by the map's size so
    /// that its meaning is unique.
    pub fn aux(&mut self, family: &str) -> Term {
        let index = self.map.len() as u64;
        Term::Lit(
            self.var(Meaning::Aux {
                family: family.to_string(),
                index,
            })
            .pos(),
        )
    }

    /// The variable registered with meaning `m`.
    ///
    /// # Panics
    /// When `m` was never registered: families must run in dependency order.
    pub fn get(&self, m: &Meaning) -> Var {
        self.map
            .get(m)
            .unwrap_or_else(|| panic!("encoder bug: no variable for {m}"))
    }

    /// Adds the clause `terms`, folding constants.
    pub fn clause(&mut self, terms: &[Term]) {
        self.scratch.clear();
        for &t in terms {
            match t {
                Term::True => return,
                Term::False => {}
                Term::Lit(l) => self.scratch.push(l),
            }
        }
        self.cnf.add_clause(&self.scratch);
    }

    /// Finishes the encoding.
    pub fn finish(self, question: &Question, options: &EncodeOptions) -> Encoding {
        Encoding {
            question: question.clone(),
            options: options.clone(),
            cnf: self.cnf,
            map: self.map,
            families: self.families,
        }
    }
}

/// The exact variable and clause counts the encoding of `q` will have, per
/// family, with `options` as [`EncodeOptions::resolve`] leaves them.
pub fn estimate(q: &Question, options: &EncodeOptions) -> Vec<FamilyCount> {
    let o = options.resolve(q);
    match o.formulation {
        Formulation::IsometricCycle => {
            family::estimate(cycle::ISOMETRIC_CYCLE, &cycle::Cycle::new(q, &o), &o)
        }
        Formulation::TopicalCycle => {
            family::estimate(cycle::TOPICAL_CYCLE, &cycle::Cycle::new(q, &o), &o)
        }
        Formulation::FullMap => family::estimate(fullmap::FULL_MAP, &fullmap::FullMap::new(q), &o),
    }
}

/// Encodes `q` with `options`, refusing formulas above `max_clauses` clauses.
/// The encoding records the options as resolved for `q` ([`EncodeOptions::resolve`]).
///
/// # Errors
/// [`Error::Options`] for inconsistent options; [`Error::TooLarge`] with the
/// estimated size when the estimate exceeds `max_clauses`.
pub fn encode(q: &Question, options: &EncodeOptions, max_clauses: u64) -> Result<Encoding> {
    options.symmetry.validate()?;
    let full_map = q.points.is_some() || options.formulation == Formulation::FullMap;
    if full_map && q.class != MapClass::Nonexpansive {
        return Err(Error::Options(format!(
            "the full-map formulation (and so --points) encodes nonexpansive maps D → D only, \
             not the {} class",
            q.class
        )));
    }
    // First from the question alone, before a point or a group is listed.
    refuse_base(
        if full_map {
            fullmap::base_size(q)
        } else {
            cycle::base_size(q)
        },
        max_clauses,
    )?;
    let o = options.resolve(q);
    let enc = match o.formulation {
        Formulation::IsometricCycle => run(
            cycle::ISOMETRIC_CYCLE,
            &cycle::Cycle::new(q, &o),
            &o,
            max_clauses,
        ),
        Formulation::TopicalCycle => run(
            cycle::TOPICAL_CYCLE,
            &cycle::Cycle::new(q, &o),
            &o,
            max_clauses,
        ),
        Formulation::FullMap => run(
            fullmap::FULL_MAP,
            &fullmap::FullMap::new(q),
            &o,
            max_clauses,
        ),
    }?;
    Ok(enc.finish(q, &o))
}

/// Sizes every row of `table` that applies, refuses the whole when it is
/// too large, and otherwise builds it.
fn run<X>(
    table: &[family::Family<X>],
    x: &X,
    o: &EncodeOptions,
    max_clauses: u64,
) -> Result<Encoder> {
    let refuse = |total: Size| -> Result<()> {
        if total.clauses > max_clauses || total.vars > i32::MAX as u64 / 2 {
            return Err(Error::TooLarge {
                clauses: total.clauses,
                vars: total.vars,
                limit: max_clauses,
            });
        }
        Ok(())
    };
    // The closed-form rows first: a formula they already make too large is
    // refused before any search runs (a lower bound of the whole).
    let closed: Size = family::active(table, x, o)
        .filter(|f| !f.searched)
        .map(|f| (f.size)(x))
        .sum();
    refuse(closed)?;
    let est = family::estimate(table, x, o);
    refuse(est.iter().map(FamilyCount::size).sum())?;
    Ok(family::build(table, x, o))
}

/// Refuses a formula whose families present in every encoding already
/// exceed `max_clauses` clauses, or are so large that the exact `u64` sizes
/// could overflow. `base` is `(clauses, variables)` of those families in
/// floating point (a lower bound of the whole formula).
///
/// # Errors
/// [`Error::TooLarge`] with `base` as the size.
fn refuse_base(base: (f64, f64), max_clauses: u64) -> Result<()> {
    let (clauses, vars) = base;
    if clauses > max_clauses as f64 || clauses > 1e15 || vars > 1e12 {
        return Err(Error::TooLarge {
            clauses: clauses.min(u64::MAX as f64) as u64,
            vars: vars.min(u64::MAX as f64) as u64,
            limit: max_clauses,
        });
    }
    Ok(())
}

/// The cyclic offset class `min(|i − j|, p − |i − j|)` of positions `i ≠ j`.
pub fn offset_class(i: usize, j: usize, p: usize) -> usize {
    let d = i.abs_diff(j) % p;
    d.min(p - d)
}

/// All unordered pairs `i < j` of cycle positions, with their offset class.
pub fn pairs(p: usize) -> impl Iterator<Item = (usize, usize, usize)> {
    (0..p).flat_map(move |i| (i + 1..p).map(move |j| (i, j, offset_class(i, j, p))))
}
