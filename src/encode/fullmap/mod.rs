//! The full-map formulation `full-map/1`: the whole map f: D → D as CNF.
//!
//! On a box a period is the same as an isometric cycle (the cycle extends to
//! the box), but on a finite set D that is not a box a nonexpansive map of
//! the cycle need not extend to D → D. This formulation therefore encodes the
//! map itself, for any finite D ⊂ Z^n (a [`crate::points::PointSet`], or every
//! point of a box). Points of D are numbered `0..N` in lexicographic order,
//! `N = |D|`; `d(z, z') = ‖z − z'‖∞`.
//!
//! **Variables.** `m(z, w)` (`Meaning::Map`): f(z) = w, for z, w ∈ D, `N²`
//! of them. `o(i, z)` (`Meaning::At`): x_i = z, for positions `0 ≤ i < p`,
//! `pN` of them. Symmetry breaking adds `N − 1` auxiliaries.
//!
//! **Families** (in this order, the rows of [`FULL_MAP`]; counts in
//! `encodings/full-map.md` and beside each size function):
//! - `map-choice` ([`map`]): exactly one image per point;
//! - `map-nonexp` ([`map`]): ¬m(z,w) ∨ ¬m(z',w') whenever d(w,w') > d(z,z');
//! - `orbit-place` ([`orbit`]): exactly one point per position, at most one
//!   position per point;
//! - `orbit-step` ([`orbit`]): o(i,z) ∧ m(z,w) → o(i+1 mod p, w);
//! - `orbit-profile` ([`profile`]): optional, redundant: the orbit is an
//!   isometric cycle (on with the option `count`);
//! - `fm-rotate`, `fm-isometry` ([`symmetry`]): optional breaks.
//!
//! **Why exact.** A model gives a function f (map-choice) that expands no
//! pair (map-nonexp), and p distinct points (orbit-place) with
//! f(x_i) = x_{i+1 mod p} (orbit-step, since f(x_i) is the unique w with
//! m(x_i, w)). So f^p(x_0) = x_0 while f^d(x_0) = x_d ≠ x_0 for 0 < d < p:
//! the minimal period is p. Conversely a nonexpansive f with a periodic point
//! x_0 of minimal period p gives a model with x_i = f^i(x_0); the breaks keep
//! some image of every such solution (`encodings/full-map.md`).

pub mod map;
pub mod orbit;
pub mod profile;
pub mod symmetry;

use std::cell::OnceCell;

use crate::cnf::Var;
use crate::encode::family::{Family, always};
use crate::encode::{EncodeOptions, Encoder, Formulation, Symmetry};
use crate::points::PointSet;
use crate::question::Question;
use crate::varmap::Meaning;

/// Largest `n!·2^n·N` for which the ambient isometries of D are computed.
pub const ISOMETRY_LIMIT: u128 = 20_000_000;

/// The domain with its distance table, shared by the families.
#[derive(Clone, Debug)]
pub struct Domain {
    /// The points of D in lexicographic order.
    pub set: PointSet,
    /// `d(z, z')` for point numbers `z, z'`, row-major `N × N`.
    pub dist: Vec<i64>,
}

impl Domain {
    /// The domain of `q` (its point set, or every point of its box).
    pub fn of(q: &Question) -> Domain {
        let set = q.domain();
        let pts = set.points();
        let n = pts.len();
        let mut dist = vec![0; n * n];
        for a in 0..n {
            for b in 0..n {
                dist[a * n + b] = crate::grid::sup_dist(&pts[a], &pts[b]);
            }
        }
        Domain { set, dist }
    }

    /// `N = |D|`.
    pub fn len(&self) -> usize {
        self.set.len()
    }

    /// Always false: D has a point.
    pub fn is_empty(&self) -> bool {
        self.set.is_empty()
    }

    /// `d(z, z')` by point numbers.
    pub fn d(&self, z: usize, w: usize) -> i64 {
        self.dist[z * self.len() + w]
    }
}

/// The options of the full-map formulation, whatever the question: the
/// cycle-only families (packing, classes and the symmetry steps other than
/// `rotate` and `isometry`) are off.
pub fn for_domain(options: &EncodeOptions) -> EncodeOptions {
    let s = options.symmetry;
    EncodeOptions {
        formulation: Formulation::FullMap,
        symmetry: Symmetry {
            rotate: s.rotate,
            isometry: s.isometry,
            ..Symmetry::NONE
        },
        count: options.count,
        packing: false,
        classes: false,
        nested: false,
        bicliques: false,
        cliques: false,
        orbits: false,
        subbox: false,
        gaps: false,
        reverse_ladder: false,
        twins: false,
    }
}

/// The options as they apply to the full-map formulation of `q`: those of
/// [`for_domain`], where `count` switches the redundant `orbit-profile`
/// (which needs `p ≥ 2`), `rotate` needs `p ≥ 2` and `isometry` a
/// nontrivial, computable isometry group.
pub fn resolve(options: &EncodeOptions, q: &Question) -> EncodeOptions {
    let mut o = for_domain(options);
    o.symmetry.rotate &= q.period >= 2;
    o.symmetry.isometry = o.symmetry.isometry
        && q.domain()
            .isometries(ISOMETRY_LIMIT)
            .is_some_and(|g| g.len() > 1);
    o.count &= q.period >= 2;
    o
}

/// The context the full-map families share: the domain with its distances,
/// the period, and the variable tables that later families read (filled
/// from the encoder by the first family that needs them).
#[derive(Debug)]
pub struct FullMap {
    /// The domain.
    pub dom: Domain,
    /// The period.
    pub p: usize,
    map_vars: OnceCell<Vec<Var>>,
    orbit_vars: OnceCell<Vec<Var>>,
    minima: OnceCell<Vec<usize>>,
}

impl FullMap {
    /// The context of `q` (its distance table is built here).
    pub fn new(q: &Question) -> FullMap {
        FullMap {
            dom: Domain::of(q),
            p: q.period,
            map_vars: OnceCell::new(),
            orbit_vars: OnceCell::new(),
            minima: OnceCell::new(),
        }
    }

    /// `m(z, w)` as registered by `map-choice` in `e`.
    fn m(&self, e: &Encoder) -> &[Var] {
        self.map_vars.get_or_init(|| map_vars(e, &self.dom))
    }

    /// `o(i, z)` as registered by `orbit-place` in `e`.
    fn o(&self, e: &Encoder) -> &[Var] {
        self.orbit_vars
            .get_or_init(|| orbit_vars(e, &self.dom, self.p))
    }

    /// The class minima of `fm-isometry` ([`symmetry::class_minima`]).
    fn minima(&self) -> &[usize] {
        self.minima
            .get_or_init(|| symmetry::class_minima(&self.dom))
    }
}

/// The families of `full-map/1`, in the order they are added.
pub static FULL_MAP: &[Family<FullMap>] = &[
    Family {
        name: map::FAMILY_CHOICE,
        applies: always,
        searched: false,
        size: |x| map::size_choice(x.dom.len()),
        add: |e, x| map::add_choice(e, &x.dom),
    },
    Family {
        name: map::FAMILY_NONEXP,
        applies: always,
        searched: false,
        size: |x| map::size_nonexp(&x.dom),
        add: |e, x| {
            let m = x.m(e);
            map::add_nonexp(e, &x.dom, m)
        },
    },
    Family {
        name: orbit::FAMILY_PLACE,
        applies: always,
        searched: false,
        size: |x| orbit::size_place(x.dom.len(), x.p),
        add: |e, x| orbit::add_place(e, &x.dom, x.p),
    },
    Family {
        name: orbit::FAMILY_STEP,
        applies: always,
        searched: false,
        size: |x| orbit::size_step(x.dom.len(), x.p),
        add: |e, x| {
            let (m, o) = (x.m(e), x.o(e));
            orbit::add_step(e, &x.dom, x.p, m, o)
        },
    },
    Family {
        name: profile::FAMILY,
        applies: |_, o| o.count,
        searched: false,
        size: |x| profile::size(&x.dom, x.p),
        add: |e, x| {
            let o = x.o(e);
            profile::add(e, &x.dom, x.p, o)
        },
    },
    Family {
        name: symmetry::ROTATE,
        applies: |_, o| o.symmetry.rotate,
        searched: false,
        size: |x| symmetry::size_rotate(x.dom.len(), x.p),
        add: |e, x| {
            let o = x.o(e);
            symmetry::add_rotate(e, &x.dom, x.p, o)
        },
    },
    Family {
        name: symmetry::ISOMETRY,
        applies: |_, o| o.symmetry.isometry,
        searched: false,
        size: |x| symmetry::size_isometry(x.minima()),
        add: |e, x| {
            let o = x.o(e);
            symmetry::add_isometry(e, x.minima(), o)
        },
    },
];

/// The sizes of `map-choice`, `orbit-place` and `orbit-step`, which every
/// encoding has, in floating point and from `N` and `p` alone, before the
/// `N²` distance table exists: a lower bound of the whole, `(clauses, variables)`.
pub fn base_size(q: &Question) -> (f64, f64) {
    let n = q.num_points() as f64;
    let p = q.period as f64;
    let pairs = |k: f64| k * (k - 1.0) / 2.0;
    let step = p * n * n - if q.period == 1 { n } else { 0.0 };
    let clauses = (n + n * pairs(n)) + (p + p * pairs(n) + n * pairs(p)) + step;
    (clauses, n * n + p * n)
}

/// `m(z, w)` for point numbers, row-major `N × N`.
fn map_vars(e: &Encoder, dom: &Domain) -> Vec<Var> {
    let pts = dom.set.points();
    let mut out = Vec::with_capacity(pts.len() * pts.len());
    for z in pts {
        for w in pts {
            out.push(e.get(&Meaning::Map {
                z: z.clone(),
                w: w.clone(),
            }));
        }
    }
    out
}

/// `o(i, z)` for positions and point numbers, row-major `p × N`.
fn orbit_vars(e: &Encoder, dom: &Domain, p: usize) -> Vec<Var> {
    let mut out = Vec::with_capacity(p * dom.len());
    for i in 0..p {
        for z in dom.set.points() {
            out.push(e.get(&Meaning::At { i, z: z.clone() }));
        }
    }
    out
}

/// `C(k, 2)` in `u64`.
pub(crate) fn pairs_of(k: usize) -> u64 {
    let k = k as u64;
    k * k.saturating_sub(1) / 2
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::encode::Encoding;

    fn corners_plus_one() -> Question {
        let d = PointSet::parse("-2 -2\n-2 2\n2 -2\n2 2\n0 1\n", "t").unwrap();
        Question::on_points(d, 4).unwrap()
    }

    #[test]
    fn counts_of_the_five_point_set_are_pinned() {
        // N = 5, p = 4. Distances: corners pairwise 4; (0,1) is at 2 from the
        // top corners and 3 from the bottom ones. Ordered pairs (w,w') by
        // distance: 0: 5, 2: 4, 3: 4, 4: 12. map-nonexp sums, over the 10
        // unordered pairs {z,z'}, the ordered pairs farther apart than d(z,z'):
        // 6 corner pairs (d = 4) give 0, 2 pairs at d = 2 give 16 each, 2 pairs
        // at d = 3 give 12 each: 56.
        let q = corners_plus_one();
        let e = crate::encode::encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
        assert_eq!(
            crate::encode::tests::family_counts(&e),
            vec![
                // N² vars; N + N·C(N,2) = 5 + 50 clauses.
                ("map-choice", 25, 55),
                ("map-nonexp", 0, 56),
                // pN vars; p + p·C(N,2) + N·C(p,2) = 4 + 40 + 30.
                ("orbit-place", 20, 74),
                // p·N² = 100.
                ("orbit-step", 0, 100),
                // K = 2, L = 4: K·(L − 1) vars; K·(L − 2) + C(p,2)·Σ_{z≠z'}([d ≥ 2] + [d < L])
                // = 4 + 6·(4·2 + 4·2 + 12·1) = 4 + 168.
                ("orbit-profile", 6, 172),
                // N − 1 vars; (N − 1) + (N − 2) + (p − 1)·N = 4 + 3 + 15.
                ("fm-rotate", 4, 22),
                // The reflection x ↦ −x pairs the corners: 5 − 3 classes.
                ("fm-isometry", 0, 2),
            ]
        );
        assert_eq!(e.options.formulation, Formulation::FullMap);
        assert_eq!(e.families, crate::encode::estimate(&q, &e.options));
    }

    /// The model of `enc` that describes the map `f` (image indices) with the
    /// orbit `orbit` (point indices), the orbit's profile and `fm-rotate`'s
    /// chain filled in.
    fn model_of(enc: &Encoding, f: &[usize], orbit: &[usize]) -> Vec<bool> {
        let pts = enc.question.domain().points().to_vec();
        let at = |z: &[i64]| pts.iter().position(|w| w.as_slice() == z).unwrap();
        let mut rotate_index = 0usize;
        enc.map
            .iter()
            .map(|(_, m)| match m {
                Meaning::Map { z, w } => f[at(z)] == at(w),
                Meaning::At { i, z } => orbit[*i] == at(z),
                // g(k) ≥ t for the orbit's profile g(k) = d(x_0, x_k).
                Meaning::Profile { k, value } => {
                    crate::grid::sup_dist(&pts[orbit[0]], &pts[orbit[*k]]) >= *value
                }
                Meaning::Aux { family, .. } if family == symmetry::ROTATE => {
                    // Registered for w = 1..N−1 in order: a(w) ⇔ index of x_0 ≥ w.
                    rotate_index += 1;
                    orbit[0] >= rotate_index
                }
                other => panic!("unexpected variable {other}"),
            })
            .collect()
    }

    #[test]
    fn every_brute_force_solution_has_an_image_that_satisfies_every_break() {
        // The soundness argument of encodings/full-map.md §5, checked by
        // exhaustion: for every nonexpansive self-map f and every periodic
        // orbit of f, some isometry σ of D and some rotation give a model of
        // the CNF with all breaks (σ∘f∘σ⁻¹ with the orbit σ(x_r), σ(x_{r+1}), …).
        for text in [
            "-2 -2\n-2 2\n2 -2\n2 2\n0 1\n",
            "0 0\n1 0\n-1 0\n0 1\n0 -1\n",
            "0 0\n0 1\n1 0\n1 1\n",
        ] {
            let d = PointSet::parse(text, "t").unwrap();
            let group = d.isometries(u128::MAX).unwrap();
            assert!(group.len() > 1, "{d}");
            let n = d.len();
            let mut encodings = Vec::new();
            for p in 1..=n {
                let q = Question::on_points(d.clone(), p).unwrap();
                let e = crate::encode::encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
                assert!(e.options.symmetry.isometry && e.options.symmetry.rotate == (p >= 2));
                encodings.push(e);
            }
            let mut checked = 0;
            crate::brute::each_nonexpansive_map(d.points(), |f| {
                'starts: for start in 0..n {
                    let mut orbit = vec![start];
                    while f[*orbit.last().unwrap()] != start {
                        orbit.push(f[*orbit.last().unwrap()]);
                        if orbit.len() > n {
                            continue 'starts; // start is not periodic
                        }
                    }
                    let enc = &encodings[orbit.len() - 1];
                    let satisfied = group.iter().any(|s| {
                        // σ as a permutation of indices, and its inverse.
                        let mut inv = vec![0; n];
                        for (a, &b) in s.iter().enumerate() {
                            inv[b] = a;
                        }
                        let g: Vec<usize> = (0..n).map(|z| s[f[inv[z]]]).collect();
                        (0..orbit.len()).any(|r| {
                            let o: Vec<usize> = (0..orbit.len())
                                .map(|i| s[orbit[(r + i) % orbit.len()]])
                                .collect();
                            let model = model_of(enc, &g, &o);
                            enc.cnf.clauses().all(|c| c.iter().any(|l| l.holds(&model)))
                        })
                    });
                    assert!(
                        satisfied,
                        "{d}: f = {f:?}, orbit {orbit:?} has no surviving image"
                    );
                    checked += 1;
                }
                false
            });
            assert!(checked > n, "{d}: {checked} solutions checked");
        }
    }
}
