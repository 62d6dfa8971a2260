//! Symmetry breaking: families `sym-translate`, `sym-multiplier`,
//! `sym-rotate`, `sym-isometry`, `sym-stabilizer`, `sym-reverse`.
//!
//! The isometric-cycle condition is invariant under translations of the orbit
//! that keep it in the box, the box's isometries ([`crate::isometry`]),
//! rotations `i ↦ i + r`, and the multipliers `i ↦ a·i` with `gcd(a, p) = 1`
//! (which include the reversal `a = −1`). Each family adds constraints that
//! some image of every solution satisfies; the argument that *all* of them
//! hold together for one image is a normalisation in five steps, each keeping
//! what the earlier steps achieved (full write-up: `encodings/symmetry.md`):
//!
//! 1. `sym-translate`: shift the orbit towards the lower faces until, in every
//!    coordinate, some point lies on a face: `⋁_i [x_{i,c} = a_c] ∨ ⋁_i [x_{i,c} = b_c]`.
//!    One clause per coordinate of side `> 0`.
//! 2. `sym-multiplier`: re-index by the multiplier that makes the profile
//!    `(g(1), …, g(K))` lexicographically smallest among its images
//!    `k ↦ g(fold(a·k))`; encoded as `g ≤_lex g∘φ_a` for each `a`, with
//!    chain variables `e_k` ("equal so far"). Re-indexing keeps the set of
//!    points, so step 1 survives.
//! 3. `sym-rotate`: rotate so that `x_0` is a point of the highest type rank
//!    (types rank by centrality, [`type_ranks`]): `rank(x_i) ≤ rank(x_0)`.
//!    Rotation keeps the profile and the set of points.
//! 4. `sym-isometry`: apply an isometry taking `x_0` to the smallest point of
//!    its orbit: `x_0 ∈ R`. Isometries keep distances, types, the set of
//!    face-touching coordinates (up to permutation), and the profile.
//! 5. `sym-stabilizer`: apply an isometry fixing `x_0` that takes `x_1` to the
//!    smallest point of its orbit under the stabiliser of `x_0`.
//! 6. `sym-reverse` (before 5): of the cycle and its reversal `i ↦ −i`, which
//!    keeps `x_0`, the profile and the types, take the one whose `x_1` has the
//!    smaller stabiliser class (class = smallest point of the orbit); step 5
//!    keeps classes, so the order survives it.
//!
//! Steps 5 and 6 enumerate the box's isometries and are switched off
//! (recorded in the header's options) when that group is large.

use super::{Encoder, Term, coords, points, profile};
use crate::cnf::FamilyCount;
use crate::grid::{Grid, Point};
use crate::isometry::{self, index_of, type_key};
use crate::question::Question;

/// Label of step 1.
pub const TRANSLATE: &str = "sym-translate";
/// Label of step 2.
pub const MULTIPLIER: &str = "sym-multiplier";
/// Label of step 3.
pub const ROTATE: &str = "sym-rotate";
/// Label of step 4.
pub const ISOMETRY: &str = "sym-isometry";
/// Label of step 5.
pub const STABILIZER: &str = "sym-stabilizer";
/// Label of step 6.
pub const REVERSE: &str = "sym-reverse";

/// Largest `|group|·|D|` for which steps 5 and 6 enumerate the group.
pub const STABILIZER_WORK_LIMIT: u128 = 20_000_000;

/// The rank of every grid point's type, in grid order, and the number of ranks.
/// Types are ordered by centrality: total distance to the nearer faces, then the
/// sorted type itself; higher rank is more central.
pub fn type_ranks(g: &Grid) -> (Vec<usize>, usize) {
    let keys: Vec<(u64, Vec<(u64, u64)>)> = g
        .points()
        .map(|z| {
            let k = type_key(g, &z);
            (k.iter().map(|t| t.1).sum(), k)
        })
        .collect();
    let mut distinct = keys.clone();
    distinct.sort();
    distinct.dedup();
    let ranks = keys
        .iter()
        .map(|k| distinct.binary_search(k).expect("present"))
        .collect();
    (ranks, distinct.len())
}

/// Smallest point (by index) of each type: the orbit representatives `R` of step 4.
pub fn representatives(g: &Grid) -> Vec<usize> {
    let (ranks, n) = type_ranks(g);
    let mut rep = vec![usize::MAX; n];
    for (idx, &r) in ranks.iter().enumerate() {
        rep[r] = rep[r].min(idx);
    }
    rep.sort_unstable();
    rep
}

/// For each representative `r`, the smallest point of every grid point's orbit
/// under the stabiliser of `r`; `None` when the group is too large to list.
pub fn stabilizer_classes(g: &Grid) -> Option<Vec<(usize, Vec<usize>)>> {
    let pts: Vec<Point> = g.points().collect();
    let limit = STABILIZER_WORK_LIMIT / (pts.len() as u128).max(1);
    let group = isometry::elements(g, limit)?;
    Some(
        representatives(g)
            .into_iter()
            .map(|r| {
                let stab: Vec<_> = group
                    .iter()
                    .filter(|s| s.apply(g, &pts[r]) == pts[r])
                    .cloned()
                    .collect();
                (r, isometry::orbit_min(g, &pts, &stab))
            })
            .collect(),
    )
}

/// The multipliers used by step 2, one per pair `{a, −a}` with `a ≠ ±1`, each
/// as the permutation of offsets `k ↦ fold(a·k)` for `k = 1..=K` (index 0 unused).
pub fn multiplier_maps(p: usize) -> Vec<Vec<usize>> {
    let k_max = p / 2;
    let mut out: Vec<Vec<usize>> = Vec::new();
    for a in 2..p {
        if gcd(a, p) != 1 || a > p - a {
            continue;
        }
        let map: Vec<usize> = (0..=k_max)
            .map(|k| {
                let r = a * k % p;
                r.min(p - r) % p
            })
            .collect();
        if (1..=k_max).any(|k| map[k] != k) && !out.contains(&map) {
            out.push(map);
        }
    }
    out
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 { a } else { gcd(b, a % b) }
}

/// Step 1.
pub fn add_translate(e: &mut Encoder, q: &Question) {
    let g = &q.grid;
    for c in (0..g.dim()).filter(|&c| g.side(c) > 0) {
        let mut lits = Vec::with_capacity(2 * q.period);
        for i in 0..q.period {
            lits.push(!coords::ge(e, q, i, c, g.lo(c) + 1));
            lits.push(coords::ge(e, q, i, c, g.hi(c)));
        }
        e.clause(&lits);
    }
}

/// Exact counts of step 1.
pub fn count_translate(q: &Question) -> FamilyCount {
    let live = (0..q.dim()).filter(|&c| q.grid.side(c) > 0).count() as u64;
    FamilyCount {
        family: TRANSLATE.into(),
        vars: 0,
        clauses: live,
    }
}

/// Step 2.
pub fn add_multiplier(e: &mut Encoder, q: &Question) {
    let k_max = q.period / 2;
    let l = q.grid.diameter() as i64;
    for map in multiplier_maps(q.period) {
        let mut eq_prev = Term::True;
        for k in 1..=k_max {
            let h = map[k];
            let last = k == k_max;
            if h == k {
                if !last {
                    let eq = e.aux(MULTIPLIER);
                    e.clause(&[!eq_prev, eq]);
                    eq_prev = eq;
                }
                continue;
            }
            for t in 2..=l {
                let (gk, hk) = (profile::ge(e, q, k, t), profile::ge(e, q, h, t));
                e.clause(&[!eq_prev, !gk, hk]);
            }
            if !last {
                let eq = e.aux(MULTIPLIER);
                for v in 1..=l {
                    let (g0, g1) = (profile::ge(e, q, k, v), profile::ge(e, q, k, v + 1));
                    let (h0, h1) = (profile::ge(e, q, h, v), profile::ge(e, q, h, v + 1));
                    e.clause(&[!eq_prev, !g0, g1, !h0, h1, eq]);
                }
                eq_prev = eq;
            }
        }
    }
}

/// Exact counts of step 2.
pub fn count_multiplier(q: &Question) -> FamilyCount {
    let k_max = q.period / 2;
    let l = q.grid.diameter();
    let (mut vars, mut clauses) = (0u64, 0u64);
    for map in multiplier_maps(q.period) {
        for k in 1..=k_max {
            let last = k == k_max;
            if map[k] == k {
                if !last {
                    vars += 1;
                    clauses += 1;
                }
                continue;
            }
            clauses += l.saturating_sub(1);
            if !last {
                vars += 1;
                clauses += l;
            }
        }
    }
    FamilyCount {
        family: MULTIPLIER.into(),
        vars,
        clauses,
    }
}

/// Step 3.
pub fn add_rotate(e: &mut Encoder, q: &Question) {
    let (ranks, n) = type_ranks(&q.grid);
    let pts: Vec<Point> = q.grid.points().collect();
    let fresh = |e: &mut Encoder| e.aux(ROTATE);
    // b[t]: x_0 has rank ≥ t, for t = 1..n-1 (index 0 unused).
    let mut b = vec![Term::True; n];
    for slot in b.iter_mut().skip(1) {
        *slot = fresh(e);
    }
    for i in 1..q.period {
        let mut a = vec![Term::True; n];
        for slot in a.iter_mut().skip(1) {
            *slot = fresh(e);
        }
        for (z, &r) in pts.iter().zip(&ranks) {
            if r >= 1 {
                let at = points::at(e, i, z);
                e.clause(&[!at, a[r]]);
            }
        }
        for t in 2..n {
            e.clause(&[!a[t], a[t - 1]]);
        }
        for t in 1..n {
            e.clause(&[!a[t], b[t]]);
        }
    }
    for t in 1..n {
        let mut lits = vec![!b[t]];
        for (z, &r) in pts.iter().zip(&ranks) {
            if r >= t {
                lits.push(points::at(e, 0, z));
            }
        }
        e.clause(&lits);
    }
}

/// Exact counts of step 3.
pub fn count_rotate(q: &Question) -> FamilyCount {
    let (ranks, n) = type_ranks(&q.grid);
    let n = n as u64;
    let p1 = q.period as u64 - 1;
    let above0 = ranks.iter().filter(|&&r| r >= 1).count() as u64;
    FamilyCount {
        family: ROTATE.into(),
        vars: (p1 + 1) * (n - 1),
        clauses: p1 * (above0 + n.saturating_sub(2) + (n - 1)) + (n - 1),
    }
}

/// Step 4.
pub fn add_isometry(e: &mut Encoder, q: &Question) {
    let pts: Vec<Point> = q.grid.points().collect();
    let lits: Vec<Term> = representatives(&q.grid)
        .iter()
        .map(|&r| points::at(e, 0, &pts[r]))
        .collect();
    e.clause(&lits);
}

/// Exact counts of step 4.
pub fn count_isometry(_q: &Question) -> FamilyCount {
    FamilyCount {
        family: ISOMETRY.into(),
        vars: 0,
        clauses: 1,
    }
}

/// Step 5, given [`stabilizer_classes`].
pub fn add_stabilizer(e: &mut Encoder, q: &Question, classes: &[(usize, Vec<usize>)]) {
    let pts: Vec<Point> = q.grid.points().collect();
    for (r, min) in classes {
        let x0 = points::at(e, 0, &pts[*r]);
        for (z, &m) in min.iter().enumerate() {
            if m != z {
                let x1 = points::at(e, 1, &pts[z]);
                e.clause(&[!x0, !x1]);
            }
        }
    }
}

/// Exact counts of step 5.
pub fn count_stabilizer(classes: &[(usize, Vec<usize>)]) -> FamilyCount {
    let clauses = classes
        .iter()
        .map(|(_, min)| min.iter().enumerate().filter(|(z, m)| *z != **m).count() as u64)
        .sum();
    FamilyCount {
        family: STABILIZER.into(),
        vars: 0,
        clauses,
    }
}

/// Step 6, given [`stabilizer_classes`].
pub fn add_reverse(e: &mut Encoder, q: &Question, classes: &[(usize, Vec<usize>)]) {
    let pts: Vec<Point> = q.grid.points().collect();
    let last = q.period - 1;
    for (r, min) in classes {
        let x0 = points::at(e, 0, &pts[*r]);
        for z in (0..pts.len()).filter(|&z| min[z] == z && z != *r) {
            let x1 = points::at(e, 1, &pts[z]);
            for w in (0..pts.len()).filter(|&w| min[w] < z) {
                let xl = points::at(e, last, &pts[w]);
                e.clause(&[!x0, !x1, !xl]);
            }
        }
    }
}

/// Exact counts of step 6.
pub fn count_reverse(classes: &[(usize, Vec<usize>)]) -> FamilyCount {
    let mut clauses = 0u64;
    for (r, min) in classes {
        for z in (0..min.len()).filter(|&z| min[z] == z && z != *r) {
            clauses += min.iter().filter(|&&m| m < z).count() as u64;
        }
    }
    FamilyCount {
        family: REVERSE.into(),
        vars: 0,
        clauses,
    }
}

/// The index of a point, re-exported for tests that build images of cycles.
pub fn point_index(g: &Grid, z: &[i64]) -> usize {
    index_of(g, z)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn multipliers_of_small_periods() {
        // p = 5: (Z/5)^* / ±1 = {1, 2}; 2 swaps offsets 1 and 2.
        assert_eq!(multiplier_maps(5), vec![vec![0, 2, 1]]);
        // p = 8: units 1,3,5,7; 3 ~ 5: maps k -> fold(3k): 1->3, 2->2, 3->1, 4->4.
        assert_eq!(multiplier_maps(8), vec![vec![0, 3, 2, 1, 4]]);
        assert!(multiplier_maps(4).is_empty());
        // p = 17: 8 classes ±a, 7 of them nontrivial.
        assert_eq!(multiplier_maps(17).len(), 7);
    }

    #[test]
    fn ranks_put_the_centre_highest() {
        let g = Grid::parse("-1..1", Some(2)).unwrap();
        let (ranks, n) = type_ranks(&g);
        assert_eq!(n, 3);
        assert_eq!(ranks[4], 2); // (0,0)
        assert_eq!(ranks[0], 0); // (-1,-1)
        assert_eq!(representatives(&g), vec![0, 1, 4]);
    }
}
