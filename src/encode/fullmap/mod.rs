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
//! **Families** (in this order; counts in `encodings/full-map.md`):
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

use crate::cnf::{FamilyCount, Var};
use crate::encode::{EncodeOptions, Encoder, Encoding, Formulation, Symmetry, refuse_oversized};
use crate::error::Result;
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

/// The options as they apply to the full-map formulation of `q`: `count`
/// switches the redundant `orbit-profile` (which needs `p ≥ 2`); the
/// cycle-only families (packing, classes and the symmetry steps other than
/// `rotate` and `isometry`) are off; `rotate` needs `p ≥ 2`, `isometry` a
/// nontrivial, computable isometry group.
pub fn resolve(options: &EncodeOptions, q: &Question) -> EncodeOptions {
    let s = options.symmetry;
    let isometry = s.isometry
        && q.domain()
            .isometries(ISOMETRY_LIMIT)
            .is_some_and(|g| g.len() > 1);
    EncodeOptions {
        formulation: Formulation::FullMap,
        symmetry: Symmetry {
            rotate: s.rotate && q.period >= 2,
            isometry,
            ..Symmetry::NONE
        },
        count: options.count && q.period >= 2,
        packing: false,
        classes: false,
    }
}

/// Exact per-family counts for `q` with `o` (already resolved).
pub fn estimate(q: &Question, o: &EncodeOptions) -> Vec<FamilyCount> {
    let dom = Domain::of(q);
    let mut out = vec![
        map::count_choice(&dom),
        map::count_nonexp(&dom),
        orbit::count_place(&dom, q.period),
        orbit::count_step(&dom, q.period),
    ];
    if o.count {
        out.push(profile::count(&dom, q.period));
    }
    if o.symmetry.rotate {
        out.push(symmetry::count_rotate(&dom, q.period));
    }
    if o.symmetry.isometry {
        out.push(symmetry::count_isometry(&dom));
    }
    out
}

/// Encodes `q` in the full-map formulation with `o` (already resolved).
///
/// # Errors
/// [`crate::Error::TooLarge`] when the formula would exceed `max_clauses`.
pub fn encode(q: &Question, o: &EncodeOptions, max_clauses: u64) -> Result<Encoding> {
    // map-choice alone has N·C(N, 2) ≈ N³/2 clauses: a lower bound that rules
    // out overflow of the exact u64 counts before the N² distance table is built.
    let n = q.num_points() as f64;
    let rough = (n * n * (n - 1.0) / 2.0, n * n + q.period as f64 * n);
    refuse_oversized(rough, max_clauses, || estimate(q, o))?;
    let dom = Domain::of(q);
    let p = q.period;
    let mut enc = Encoder::new();
    enc.family(map::FAMILY_CHOICE, |e| map::add_choice(e, &dom));
    let m = map_vars(&enc, &dom);
    enc.family(map::FAMILY_NONEXP, |e| map::add_nonexp(e, &dom, &m));
    enc.family(orbit::FAMILY_PLACE, |e| orbit::add_place(e, &dom, p));
    let o_vars = orbit_vars(&enc, &dom, p);
    enc.family(orbit::FAMILY_STEP, |e| {
        orbit::add_step(e, &dom, p, &m, &o_vars)
    });
    if o.count {
        enc.family(profile::FAMILY, |e| profile::add(e, &dom, p, &o_vars));
    }
    if o.symmetry.rotate {
        enc.family(symmetry::ROTATE, |e| {
            symmetry::add_rotate(e, &dom, p, &o_vars)
        });
    }
    if o.symmetry.isometry {
        enc.family(symmetry::ISOMETRY, |e| {
            symmetry::add_isometry(e, &dom, &o_vars)
        });
    }
    Ok(enc.finish(q, o))
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
    use crate::grid::Grid;

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
        assert_eq!(e.families, estimate(&q, &e.options));
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

    #[test]
    fn estimate_is_exact_on_boxes_and_sets() {
        let mut qs = vec![corners_plus_one()];
        for (spec, dim, p) in [
            ("0..2", 2, 4),
            ("0..1", 1, 1),
            ("0..3,0..1", 2, 3),
            ("5", 1, 1),
        ] {
            qs.push(Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap());
        }
        let lshape = PointSet::parse("0 0\n0 1\n1 0\n", "l").unwrap();
        qs.push(Question::on_points(lshape, 2).unwrap());
        for q in qs {
            let o = EncodeOptions::full_map();
            crate::encode::tests::assert_estimate_is_exact(&q, &o);
        }
    }
}
