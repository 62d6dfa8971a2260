//! From a [`Question`] to CNF.
//!
//! The formulation is the *isometric cycle* (`encodings/isometric-cycle.md`):
//! variables describe `p` points `x_0..x_{p−1}` of the box and a distance
//! profile `g(1..⌊p/2⌋)`, and the clauses say `‖x_i − x_j‖∞ = g(k(i, j))` for
//! every pair, where `k(i, j) = min(|i − j|, p − |i − j|)`. Because `g(k) ≥ 1`
//! the points are distinct, so a model is an orbit of minimal period `p` of the
//! shift, which extends to a nonexpansive map of the whole box.
//!
//! For topical maps ([`MapClass::Topical`]) the formulation is
//! [`Formulation::TopicalCycle`]: the same coordinates, the profile over the
//! unfolded offsets `1..p−1` of the one-sided `t(x_i, x_{i+k})`, the
//! families of [`topical`] in place of those of [`distance`], and the
//! symmetry steps adapted as [`symmetry`] describes; the redundant counting
//! families and `sym-reverse` are not used (`encodings/topical.md`).
//!
//! Each constraint family lives in its own module and is written up in
//! `encodings/`; every family reports its variable and clause counts, and
//! [`estimate`] predicts them exactly from the question alone, before any
//! clause is built.
//!
//! Encoders write into an [`Encoder`], which owns the [`Cnf`] and the
//! [`VarMap`]; the same formula then feeds the bundled solver or the DIMACS
//! writer, so `encode` writes exactly what `decide` solves.

pub mod classes;
pub mod coords;
pub mod count;
pub mod distance;
pub mod edges;
pub mod formulation;
pub mod fullmap;
pub mod packing;
pub mod points;
pub mod profile;
pub mod symmetry;
pub mod topical;

#[cfg(test)]
mod pinned;
#[cfg(test)]
mod soundness;

use serde::{Deserialize, Serialize};

use crate::cnf::{Cnf, FamilyCount, Lit, Var};
use crate::error::{Error, Result};
use crate::question::{MapClass, Question};
use crate::varmap::{Meaning, VarMap};

pub use formulation::{Formulation, UnknownFormulation};

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

/// Which symmetry-breaking families to add (see [`symmetry`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Symmetry {
    /// Step 1: the orbit touches a face in every coordinate.
    pub translate: bool,
    /// Step 2: the profile is lexicographically least under the multipliers.
    pub multiplier: bool,
    /// Step 3: `x_0` has the most central type on the orbit.
    pub rotate: bool,
    /// Step 4: `x_0` is the smallest point of its isometry orbit.
    pub isometry: bool,
    /// Step 5: `x_1` is the smallest point of its orbit under the stabiliser of `x_0`.
    pub stabilizer: bool,
    /// Step 6: `x_1`'s stabiliser class is at most `x_{p−1}`'s.
    pub reverse: bool,
}

impl Symmetry {
    /// Every family on.
    pub const ALL: Symmetry = Symmetry {
        translate: true,
        multiplier: true,
        rotate: true,
        isometry: true,
        stabilizer: true,
        reverse: true,
    };
    /// Every family off.
    pub const NONE: Symmetry = Symmetry {
        translate: false,
        multiplier: false,
        rotate: false,
        isometry: false,
        stabilizer: false,
        reverse: false,
    };
    /// The family names, as accepted by [`Symmetry::parse`].
    pub const NAMES: [&'static str; 6] = [
        "translate",
        "multiplier",
        "rotate",
        "isometry",
        "stabilizer",
        "reverse",
    ];

    /// Parses `all`, `none` or a comma-separated list of [`Symmetry::NAMES`].
    ///
    /// # Errors
    /// [`Error::Options`] naming an unknown family or a missing prerequisite.
    pub fn parse(text: &str) -> Result<Symmetry> {
        let t = text.trim();
        let s = match t {
            "all" => Symmetry::ALL,
            "none" | "" => Symmetry::NONE,
            _ => {
                let mut s = Symmetry::NONE;
                for name in t.split(',').map(str::trim) {
                    match name {
                        "translate" => s.translate = true,
                        "multiplier" => s.multiplier = true,
                        "rotate" => s.rotate = true,
                        "isometry" => s.isometry = true,
                        "stabilizer" => s.stabilizer = true,
                        "reverse" => s.reverse = true,
                        other => {
                            return Err(Error::Options(format!(
                                "unknown symmetry family {other:?}; choose from all, none, {}",
                                Symmetry::NAMES.join(", ")
                            )));
                        }
                    }
                }
                s
            }
        };
        s.validate()?;
        Ok(s)
    }

    /// Checks prerequisites: `stabilizer` needs `isometry`, `reverse` needs `stabilizer`.
    ///
    /// # Errors
    /// [`Error::Options`] saying which family needs which.
    pub fn validate(&self) -> Result<()> {
        if self.stabilizer && !self.isometry {
            return Err(Error::Options(
                "symmetry family 'stabilizer' needs 'isometry'".into(),
            ));
        }
        if self.reverse && !self.stabilizer {
            return Err(Error::Options(
                "symmetry family 'reverse' needs 'stabilizer'".into(),
            ));
        }
        Ok(())
    }

    /// The names of the families switched on, comma-separated (`none` when empty).
    pub fn names(&self) -> String {
        let on = [
            self.translate,
            self.multiplier,
            self.rotate,
            self.isometry,
            self.stabilizer,
            self.reverse,
        ];
        let names: Vec<&str> = Symmetry::NAMES
            .iter()
            .zip(on)
            .filter(|(_, b)| *b)
            .map(|(n, _)| *n)
            .collect();
        if names.is_empty() {
            "none".into()
        } else {
            names.join(",")
        }
    }
}

/// Options of the encoding, recorded in the CNF header so that a file says how it was made.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EncodeOptions {
    /// The formulation: [`Formulation::IsometricCycle`] (isometric cycles on
    /// boxes; asked for, it means "the class's cycle formulation"), or
    /// [`Formulation::TopicalCycle`] once [`EncodeOptions::resolve`] has seen
    /// a topical question, or [`Formulation::FullMap`] (the whole map, any
    /// finite domain). Serialised as its stable name.
    pub formulation: Formulation,
    /// Symmetry-breaking families.
    pub symmetry: Symmetry,
    /// The redundant occupancy count ([`count`]).
    pub count: bool,
    /// The redundant weighted packing bound ([`packing`]).
    pub packing: bool,
    /// The profile exclusions: impossible subgroup profiles ([`classes`])
    /// and the edge count of triangle-free close graphs ([`edges`]). Absent
    /// in headers written before these families existed, which read as off.
    #[serde(default)]
    pub classes: bool,
}

impl Default for EncodeOptions {
    /// The strongest sound combination: every family on.
    fn default() -> EncodeOptions {
        EncodeOptions {
            formulation: Formulation::IsometricCycle,
            symmetry: Symmetry::ALL,
            count: true,
            packing: true,
            classes: true,
        }
    }
}

impl EncodeOptions {
    /// The plain formulation: no symmetry breaking, no redundant constraints.
    pub fn plain() -> EncodeOptions {
        EncodeOptions {
            formulation: Formulation::IsometricCycle,
            symmetry: Symmetry::NONE,
            count: false,
            packing: false,
            classes: false,
        }
    }

    /// Every family on, in the full-map formulation ([`fullmap`]).
    pub fn full_map() -> EncodeOptions {
        EncodeOptions {
            formulation: Formulation::FullMap,
            ..EncodeOptions::default()
        }
    }

    /// The part of [`EncodeOptions::resolve`] that depends on the class
    /// alone: the class's cycle formulation (the full-map formulation, when
    /// asked for, stays), and for topical questions the families argued for
    /// the norm only switched off. A sweep reports its options this way,
    /// since the rest of the resolution varies by period.
    pub fn for_class(&self, class: MapClass) -> EncodeOptions {
        let mut o = self.clone();
        if o.formulation == Formulation::FullMap {
            return o;
        }
        o.formulation = Formulation::of_class(class);
        if class == MapClass::Topical {
            // The counting families, the subgroup-profile clauses (which
            // read the folded, symmetric profile) and step 6 are argued for
            // the norm only.
            o.count = false;
            o.packing = false;
            o.classes = false;
            o.symmetry.reverse = false;
        }
        o
    }

    /// The options as they apply to `q`: families that cannot act on `q`, or
    /// whose tables would be too large, are switched off. A question on a
    /// point set always takes the full-map formulation, the only one that
    /// answers it. The result is what the CNF header records.
    pub fn resolve(&self, q: &Question) -> EncodeOptions {
        if q.points.is_some() || self.formulation == Formulation::FullMap {
            return fullmap::resolve(self, q);
        }
        let mut o = self.for_class(q.class);
        let point_eq_ok = q.period as u128 * q.grid.num_points() <= POINT_EQ_LIMIT;
        if !point_eq_ok {
            o.count = false;
            o.packing = false;
            o.classes = false;
            o.symmetry.rotate = false;
            o.symmetry.isometry = false;
        }
        if !o.symmetry.isometry || q.period < 2 {
            o.symmetry.stabilizer = false;
        }
        if o.symmetry.stabilizer && symmetry::stabilizer_classes(q).is_none() {
            o.symmetry.stabilizer = false;
        }
        if !o.symmetry.stabilizer || q.period < 3 {
            o.symmetry.reverse = false;
        }
        o
    }

    /// Whether the `point-eq` family is needed.
    pub fn needs_points(&self) -> bool {
        let s = &self.symmetry;
        self.count || self.packing || s.rotate || s.isometry || s.stabilizer || s.reverse
    }
}

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
    if o.formulation == Formulation::FullMap {
        return fullmap::estimate(q, &o);
    }
    let s = o.symmetry;
    let topical = q.class == MapClass::Topical;
    let mut out = if topical {
        vec![
            coords::count(q),
            profile::count(q),
            topical::count_upper(q),
            topical::count_lower(q),
        ]
    } else {
        vec![
            coords::count(q),
            profile::count(q),
            distance::count_upper(q),
            distance::count_lower(q),
        ]
    };
    if o.needs_points() {
        out.push(points::count(q));
    }
    if o.count {
        out.push(count::count(q));
    }
    if o.packing {
        out.push(packing::count(q));
    }
    if o.classes {
        out.push(classes::count(q));
        out.push(edges::count(q));
    }
    if s.translate {
        out.push(symmetry::count_translate(q));
    }
    if s.multiplier {
        out.push(symmetry::count_multiplier(q));
    }
    if s.rotate {
        out.push(symmetry::count_rotate(q));
        if topical {
            out.push(symmetry::count_sort(q));
        }
    }
    if s.isometry {
        out.push(symmetry::count_isometry(q));
    }
    if s.stabilizer || s.reverse {
        let classes = symmetry::stabilizer_classes(q).unwrap_or_default();
        if s.stabilizer {
            out.push(symmetry::count_stabilizer(&classes));
        }
        if s.reverse {
            out.push(symmetry::count_reverse(&classes));
        }
    }
    out
}

/// Encodes `q` with `options`, refusing formulas above `max_clauses` clauses.
/// The encoding records the options as resolved for `q` ([`EncodeOptions::resolve`]).
///
/// # Errors
/// [`Error::Options`] for inconsistent options; [`Error::TooLarge`] with the
/// estimated size when the estimate exceeds `max_clauses`.
pub fn encode(q: &Question, options: &EncodeOptions, max_clauses: u64) -> Result<Encoding> {
    options.symmetry.validate()?;
    if q.points.is_some() || options.formulation == Formulation::FullMap {
        if q.class != MapClass::Nonexpansive {
            return Err(Error::Options(format!(
                "the full-map formulation (and so --points) encodes nonexpansive maps D → D only, \
                 not the {} class",
                q.class
            )));
        }
        return fullmap::encode(q, &options.resolve(q), max_clauses);
    }
    refuse_oversized(rough_size(q), max_clauses, || estimate(q, options))?;
    let o = options.resolve(q);
    let s = o.symmetry;
    let mut enc = Encoder::new();
    let topical = q.class == MapClass::Topical;
    enc.family(coords::FAMILY, |e| coords::add(e, q));
    enc.family(profile::FAMILY, |e| profile::add(e, q));
    if topical {
        enc.family(topical::FAMILY_UPPER, |e| topical::add_upper(e, q));
        enc.family(topical::FAMILY_LOWER, |e| topical::add_lower(e, q));
    } else {
        enc.family(distance::FAMILY_UPPER, |e| distance::add_upper(e, q));
        enc.family(distance::FAMILY_LOWER, |e| distance::add_lower(e, q));
    }
    if o.needs_points() {
        enc.family(points::FAMILY, |e| points::add(e, q));
    }
    if o.count {
        enc.family(count::FAMILY, |e| count::add(e, q));
    }
    if o.packing {
        enc.family(packing::FAMILY, |e| packing::add(e, q));
    }
    if o.classes {
        enc.family(classes::FAMILY, |e| classes::add(e, q));
        enc.family(edges::FAMILY, |e| edges::add(e, q));
    }
    if s.translate {
        enc.family(symmetry::TRANSLATE, |e| symmetry::add_translate(e, q));
    }
    if s.multiplier {
        enc.family(symmetry::MULTIPLIER, |e| symmetry::add_multiplier(e, q));
    }
    if s.rotate {
        enc.family(symmetry::ROTATE, |e| symmetry::add_rotate(e, q));
        if topical {
            enc.family(symmetry::SORT, |e| symmetry::add_sort(e, q));
        }
    }
    if s.isometry {
        enc.family(symmetry::ISOMETRY, |e| symmetry::add_isometry(e, q));
    }
    if s.stabilizer || s.reverse {
        let classes = symmetry::stabilizer_classes(q).unwrap_or_default();
        if s.stabilizer {
            enc.family(symmetry::STABILIZER, |e| {
                symmetry::add_stabilizer(e, q, &classes)
            });
        }
        if s.reverse {
            enc.family(symmetry::REVERSE, |e| symmetry::add_reverse(e, q, &classes));
        }
    }
    Ok(enc.finish(q, &o))
}

/// Refuses a formula above `max_clauses` clauses (or too many variables for
/// DIMACS). The exact counts `exact` are u64 sums, so sizes where they could
/// overflow are first ruled out with `rough`, a floating-point estimate
/// `(clauses, variables)` of the dominant families that never exceeds the
/// exact count.
///
/// # Errors
/// [`Error::TooLarge`] with the best size known.
pub(crate) fn refuse_oversized(
    rough: (f64, f64),
    max_clauses: u64,
    exact: impl FnOnce() -> Vec<FamilyCount>,
) -> Result<()> {
    let (rough_clauses, rough_vars) = rough;
    if rough_clauses > max_clauses as f64 || rough_clauses > 1e15 || rough_vars > 1e12 {
        return Err(Error::TooLarge {
            clauses: rough_clauses.min(u64::MAX as f64) as u64,
            vars: rough_vars.min(u64::MAX as f64) as u64,
            limit: max_clauses,
        });
    }
    let est = exact();
    let clauses: u64 = est.iter().map(|f| f.clauses).sum();
    let vars: u64 = est.iter().map(|f| f.vars).sum();
    if clauses > max_clauses || vars > i32::MAX as u64 / 2 {
        return Err(Error::TooLarge {
            clauses,
            vars,
            limit: max_clauses,
        });
    }
    Ok(())
}

/// Clauses and variables of the base families, in floating point (no overflow).
fn rough_size(q: &Question) -> (f64, f64) {
    let p = q.period as f64;
    let pairs = p * (p - 1.0) / 2.0;
    let sides: Vec<f64> = (0..q.dim()).map(|c| q.grid.side(c) as f64).collect();
    let clauses = pairs * sides.iter().map(|s| 2.0 * s * s + 4.0 * s).sum::<f64>();
    let vars = (p + 2.0 * pairs) * sides.iter().sum::<f64>();
    (clauses, vars)
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;

    fn q(spec: &str, dim: usize, p: usize) -> Question {
        Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap()
    }

    #[test]
    fn estimate_is_exact_for_every_family() {
        for (spec, dim, p) in [
            ("-1..1", 3, 8),
            ("-1..1", 4, 17),
            ("0..3", 2, 5),
            ("0..1,-1..1,0..3", 3, 7),
            ("0..0,0..2", 2, 3),
            ("5..5", 2, 1),
            ("0..1", 1, 2),
        ] {
            assert_estimate_is_exact(&q(spec, dim, p), &EncodeOptions::default());
        }
    }

    /// `estimate` predicts every family of `encode`, and the totals add up.
    pub(crate) fn assert_estimate_is_exact(question: &Question, opts: &EncodeOptions) -> Encoding {
        let e = encode(question, opts, u64::MAX).unwrap();
        assert_eq!(e.families, estimate(question, opts), "{question:?}");
        let total: u64 = e.families.iter().map(|f| f.clauses).sum();
        assert_eq!(total as usize, e.cnf.num_clauses());
        assert_eq!(e.map.len() as u32, e.cnf.num_vars());
        e
    }

    #[test]
    fn estimate_is_exact_for_every_topical_family() {
        for (spec, dim, p) in [
            ("0..1", 3, 3),
            ("0..1", 4, 7),
            ("0..2", 3, 5),
            ("0..1,-1..1,0..3", 3, 4),
            ("0..0,0..2", 2, 2),
            ("5..5", 2, 1),
            ("0..1", 1, 1),
            ("0..1", 2, 2),
        ] {
            let question = q(spec, dim, p).with_class(MapClass::Topical);
            for opts in [EncodeOptions::default(), EncodeOptions::plain()] {
                let e = assert_estimate_is_exact(&question, &opts);
                assert_eq!(e.options.formulation, Formulation::TopicalCycle);
            }
        }
    }

    /// `(family, vars, clauses)` in the order added.
    pub(crate) fn family_counts(e: &Encoding) -> Vec<(&str, u64, u64)> {
        e.families
            .iter()
            .map(|f| (f.family.as_str(), f.vars, f.clauses))
            .collect()
    }

    #[test]
    fn clause_counts_of_a_topical_question() {
        // {0,1,2}^2, p = 3: s = (2, 2), L = 2, K = p − 1 = 2, 3 pairs
        // (formulas in encodings/topical.md).
        // coord-order 3·4 / 3·2; profile K·L = 4 / 4; tdist-upper 3·(2 + 2) = 12;
        // tdist-lower 3·2·4 = 24 vars, 3·(2L + 2·(2·5)) = 3·24 = 72 clauses.
        let t = q("0..2", 2, 3).with_class(MapClass::Topical);
        let e = encode(&t, &EncodeOptions::plain(), u64::MAX).unwrap();
        assert_eq!(
            family_counts(&e),
            vec![
                ("coord-order", 12, 6),
                ("profile", 4, 4),
                ("tdist-upper", 0, 12),
                ("tdist-lower", 24, 72),
            ]
        );
        // The default adds: sym-translate one clause per coordinate; sym-sort with
        // N = 9, P = 1: 1 + 1·2 + 2·8 = 19 vars, 1 + 2·2 + 2·17 = 39 clauses.
        let d = encode(&t, &EncodeOptions::default(), u64::MAX).unwrap();
        let sort = d.families.iter().find(|f| f.family == "sym-sort").unwrap();
        assert_eq!((sort.vars, sort.clauses), (19, 39));
        let names: Vec<&str> = d.families.iter().map(|f| f.family.as_str()).collect();
        assert!(!names.contains(&"count-occupancy") && !names.contains(&"sym-reverse"));
    }

    #[test]
    fn clause_counts_of_the_cube_question() {
        // {-1,0,1}^3, p = 8: S = 6, L = 2, K = 4, 28 pairs (formulas in encodings/isometric-cycle.md).
        let e = encode(&q("-1..1", 3, 8), &EncodeOptions::plain(), u64::MAX).unwrap();
        assert_eq!(
            family_counts(&e),
            vec![
                ("coord-order", 48, 24),
                ("profile", 8, 8),
                ("dist-upper", 0, 168),
                ("dist-lower", 336, 896),
            ]
        );
    }

    #[test]
    fn every_formulation_of_this_version_is_accepted_and_others_are_named() {
        // Options read back from a header or a store are already resolved, so
        // each formulation must be accepted again.
        let box_q = q("0..1", 2, 2);
        for class in [MapClass::Nonexpansive, MapClass::Topical] {
            let t = box_q.clone().with_class(class);
            let resolved = EncodeOptions::default().resolve(&t);
            assert_eq!(resolved.formulation, Formulation::of_class(class));
            assert!(encode(&t, &resolved, u64::MAX).is_ok());
        }
        assert!(encode(&box_q, &EncodeOptions::full_map(), u64::MAX).is_ok());
        // Options naming a formulation this version does not know do not read.
        let json = serde_json::to_string(&EncodeOptions::default()).unwrap();
        assert!(
            json.contains("\"formulation\":\"isometric-cycle/1\""),
            "{json}"
        );
        let odd = json.replace("isometric-cycle/1", "sideways/9");
        let e = serde_json::from_str::<EncodeOptions>(&odd)
            .unwrap_err()
            .to_string();
        assert!(e.contains("unknown formulation \"sideways/9\""), "{e}");
    }

    #[test]
    fn oversized_questions_are_refused_with_the_estimate() {
        let err = encode(
            &q("0..40", 6, 300),
            &EncodeOptions::default(),
            DEFAULT_MAX_CLAUSES,
        )
        .unwrap_err()
        .to_string();
        assert!(
            err.contains("too large") && err.contains("clauses"),
            "{err}"
        );
    }

    #[test]
    fn offset_classes_fold_around_the_cycle() {
        assert_eq!(offset_class(0, 7, 8), 1);
        assert_eq!(offset_class(2, 6, 8), 4);
        assert_eq!(pairs(4).count(), 6);
    }
}
