//! Symmetry breaking: families `sym-translate`, `sym-multiplier`,
//! `sym-rotate`, `sym-isometry`, `sym-stabilizer`, `sym-reverse`,
//! `sym-twins`.
//!
//! The isometric-cycle condition is invariant under translations of the orbit
//! that keep it in the box, the box's isometries ([`crate::isometry`]),
//! rotations `i ↦ i + r`, and the multipliers `i ↦ a·i` with `gcd(a, p) = 1`
//! (which include the reversal `a = −1`). Each family adds constraints that
//! some image of every solution satisfies; the argument that *all* of them
//! hold together for one image is a normalisation in steps, each keeping
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
//! 7. `sym-twins` ([`add_twins`]): on even periods whose profile has
//!    `g(s) = g(p/2 − s)`, positions `k` and `k + p/2` can be swapped
//!    without changing a distance; for `2 ≤ k ≤ p/2 − 2` (away from the
//!    positions 0, 1 and `p − 1` that steps 3–6 look at) the smaller point
//!    in grid order comes first.
//!
//! Steps 5 and 6 enumerate the box's isometries and are switched off
//! (recorded in the header's options) when that group is large
//! ([`stabilizer_group_fits`]).
//!
//! **Sizes.** Every family's exact number of variables and clauses is a
//! closed formula in the sides, the period and number-theoretic functions of
//! `p` (`sym-reverse`: a sum over the stabiliser orbits), derived in
//! [`sizes`] and restated in `encodings/symmetry.md`.
//!
//! **Topical class** (`encodings/topical.md`). The one-sided condition is
//! invariant under *all* translations, the coordinate permutations of the
//! box (no reflections: `t(−y, −z) = t(z, y)`), rotations, and every
//! multiplier `a ∈ (Z/p)^*` acting on the unfolded profile `T(1..p−1)` by
//! `k ↦ a·k mod p`. The steps change accordingly: step 1 asks for a point on
//! the *lower* face of every coordinate; step 2 ranges over all units
//! `a ≠ 1`; step 3 is unchanged (types are invariant under permutations) and
//! is joined by `sym-sort` ([`add_sort`]): when the profile is constant,
//! every re-indexing keeps the condition, so the points are sorted; step 4
//! uses the orbits of the permutations ([`representatives_for`]); step 5
//! the stabiliser within the permutations; step 6 is never used.

pub mod sizes;

use super::{Encoder, Term, coords, points, profile};
use crate::grid::{Grid, Point};
use crate::isometry::{self, index_of, type_key};
use crate::question::{MapClass, Question};

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
/// Label of the topical sorting step, added with step 3.
pub const SORT: &str = "sym-sort";
/// Label of step 7.
pub const TWINS: &str = "sym-twins";

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

/// The representatives of step 4 for `q`'s class: [`representatives`] for
/// the norm; for topical maps the smallest point of each orbit of the
/// coordinate permutations, which are the points whose offsets `z_c − a_c`
/// do not decrease along each class of coordinates of equal side (sorting
/// the offsets of a class into its positions gives the smallest index).
pub fn representatives_for(q: &Question) -> Vec<usize> {
    let g = &q.grid;
    if q.class == MapClass::Nonexpansive {
        return representatives(g);
    }
    let live: Vec<usize> = (0..g.dim()).filter(|&c| g.side(c) > 0).collect();
    g.points()
        .enumerate()
        .filter(|(_, z)| {
            live.iter().enumerate().all(|(n, &c)| {
                live[n + 1..]
                    .iter()
                    .filter(|&&d| g.side(d) == g.side(c))
                    .all(|&d| z[c] - g.lo(c) <= z[d] - g.lo(d))
            })
        })
        .map(|(i, _)| i)
        .collect()
}

/// Whether steps 5 and 6 can list the group: `|G|·N ≤` [`STABILIZER_WORK_LIMIT`],
/// the condition under which [`stabilizer_classes`] is `Some`, decided from
/// the group's order without listing it.
pub fn stabilizer_group_fits(q: &Question) -> bool {
    isometry::group_order(&q.grid) <= STABILIZER_WORK_LIMIT / q.grid.num_points().max(1)
}

/// For each representative `r` ([`representatives_for`]), the smallest point
/// of every grid point's orbit under the stabiliser of `r` in the class's
/// group (all isometries, or the unreflected ones for topical maps); `None`
/// when the group is too large to list.
pub fn stabilizer_classes(q: &Question) -> Option<Vec<(usize, Vec<usize>)>> {
    let g = &q.grid;
    let pts: Vec<Point> = g.points().collect();
    let limit = STABILIZER_WORK_LIMIT / (pts.len() as u128).max(1);
    let mut group = isometry::elements(g, limit)?;
    if q.class == MapClass::Topical {
        group.retain(|s| s.flip.iter().all(|f| !f));
    }
    Some(
        representatives_for(q)
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

/// The multipliers of step 2 for `q`'s class, as maps of the offsets
/// `1..=K` ([`super::profile_len`]): [`multiplier_maps`] for the norm; for
/// topical maps every unit `a ≠ 1` of `Z/p` as `k ↦ a·k mod p`.
pub fn multiplier_maps_for(q: &Question) -> Vec<Vec<usize>> {
    let p = q.period;
    if q.class == MapClass::Nonexpansive {
        return multiplier_maps(p);
    }
    (2..p)
        .filter(|&a| gcd(a, p) == 1)
        .map(|a| (0..p).map(|k| a * k % p).collect())
        .collect()
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 { a } else { gcd(b, a % b) }
}

/// Step 1. For topical maps only the lower face: every translation is a
/// symmetry there and no reflection has to be accommodated later.
pub fn add_translate(e: &mut Encoder, q: &Question) {
    let g = &q.grid;
    let upper = q.class == MapClass::Nonexpansive;
    for c in (0..g.dim()).filter(|&c| g.side(c) > 0) {
        let mut lits = Vec::with_capacity(2 * q.period);
        for i in 0..q.period {
            lits.push(!coords::ge(e, q, i, c, g.lo(c) + 1));
            if upper {
                lits.push(coords::ge(e, q, i, c, g.hi(c)));
            }
        }
        e.clause(&lits);
    }
}

/// Step 2.
pub fn add_multiplier(e: &mut Encoder, q: &Question) {
    let k_max = crate::encode::profile_len(q);
    let l = q.grid.diameter() as i64;
    for map in multiplier_maps_for(q) {
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

/// Step 4.
pub fn add_isometry(e: &mut Encoder, q: &Question) {
    let pts: Vec<Point> = q.grid.points().collect();
    let lits: Vec<Term> = representatives_for(q)
        .iter()
        .map(|&r| points::at(e, 0, &pts[r]))
        .collect();
    e.clause(&lits);
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

/// Step 6 with auxiliary variables (the *ladder*, option `reverse_ladder`),
/// given [`stabilizer_classes`]: the same constraint as [`add_reverse`] in
/// `O(|R|·N)` clauses instead of `O(|R|·k·N)`.
///
/// For each `r ∈ R`, let `z_1 < … < z_k` be the least points of the
/// `Stab(r)`-orbits and `o(w)` the position of `w`'s orbit in that list.
/// Variables `Q[j]`, `2 ≤ j ≤ k`, read "`x_{p−1}`'s orbit precedes `z_j`"
/// (`o(x_{p−1}) < j`). Clauses: `[x_{p−1} = w] → Q[o(w)+1]` for every `w`
/// outside the last orbit, `Q[j] → Q[j+1]`, and
/// `¬[x_0 = r] ∨ ¬[x_1 = z_j] ∨ ¬Q[j]` for `z_j ≠ r`. Counts
/// ([`sizes::reverse_ladder`]): per `r` with `k ≥ 2`, `k − 1` variables and
/// `(N − c_k) + (k − 2) + (k − 1 − [o(r) ≥ 2])` clauses, `c_k` the size of
/// the last orbit.
///
/// Same models, projected on the point indicators, as the ternary clauses
/// (`encodings/symmetry.md`, step 6): a model of those extends by giving
/// each `Q[j]` its reading; in a model of these, `x_0 = r`, `x_1 = z_j` and
/// `o(x_{p−1}) < j` would make `Q[o(x_{p−1})+1]` true, the chain `Q[j]`,
/// and the last clause false. Unit propagation is as strong: from `x_0 = r`
/// and `x_1 = z_j` it falsifies `Q[j]`, then every `Q[j′]` with `j′ < j`
/// down the chain, then every `[x_{p−1} = w]` with `o(w) < j`.
pub fn add_reverse_ladder(e: &mut Encoder, q: &Question, classes: &[(usize, Vec<usize>)]) {
    let pts: Vec<Point> = q.grid.points().collect();
    let last = q.period - 1;
    for (r, min) in classes {
        let least: Vec<usize> = (0..pts.len()).filter(|&z| min[z] == z).collect();
        let k = least.len();
        if k < 2 {
            continue;
        }
        let mut pos = vec![0usize; pts.len()];
        for (j, &z) in least.iter().enumerate() {
            pos[z] = j;
        }
        // ladder[j − 1] is Q[j + 1] in 1-based orbit positions: "x_{p−1}'s
        // orbit is one of the first j".
        let ladder: Vec<Term> = (1..k).map(|_| e.aux(REVERSE)).collect();
        for (w, pt) in pts.iter().enumerate() {
            let o = pos[min[w]];
            if o + 1 < k {
                let xl = points::at(e, last, pt);
                e.clause(&[!xl, ladder[o]]);
            }
        }
        for j in 1..k - 1 {
            e.clause(&[!ladder[j - 1], ladder[j]]);
        }
        let x0 = points::at(e, 0, &pts[*r]);
        for j in 1..k {
            let z = least[j];
            if z != *r {
                let x1 = points::at(e, 1, &pts[z]);
                e.clause(&[!x0, !x1, !ladder[j - 1]]);
            }
        }
    }
}

/// The order `≺` of the topical sorting step: higher type rank first, then
/// smaller index. `ord[z]` is the position of grid point `z` (by index) in it.
pub fn sort_order(g: &Grid) -> Vec<usize> {
    let (ranks, _) = type_ranks(g);
    let mut order: Vec<usize> = (0..ranks.len()).collect();
    order.sort_by_key(|&z| (std::cmp::Reverse(ranks[z]), z));
    let mut ord = vec![0; order.len()];
    for (r, &z) in order.iter().enumerate() {
        ord[z] = r;
    }
    ord
}

/// The topical sorting step (`sym-sort`, with step 3): if the profile is
/// constant, `x_0 ≺ x_1 ≺ … ≺ x_{p−1}` in the order of [`sort_order`].
///
/// Variables: `s` ("sorted"); `d[k,t]` for `2 ≤ k ≤ p−1`, `1 ≤ t ≤ L`, with
/// `d → (T(1) ≥ t) ≠ (T(k) ≥ t)`; `W[j,r]` for `1 ≤ j ≤ p−1`, `1 ≤ r < N`,
/// with `W[j,r] → W[j,r+1] ∨ [x_j = z_r]` (`z_r` the point at position `r`
/// of `≺`; `W[j,N]` is false), so `W[j,r]` implies `ord(x_j) ≥ r`.
/// Clauses: `s ∨ ⋁ d` (a constant profile forces `s`), the `d` and `W`
/// definitions, and `s ∧ [x_i = z] → W[i+1, ord(z)+1]` (just `¬s ∨ ¬[x_i = z]`
/// for the last point of `≺`), for `0 ≤ i < p−1`.
/// Counts, `P = max(p−2, 0)`: `1 + P·L + (p−1)(N−1)` variables and
/// `1 + 2P·L + (p−1)(2N−1)` clauses.
pub fn add_sort(e: &mut Encoder, q: &Question) {
    let g = &q.grid;
    let p = q.period;
    let l = g.diameter() as i64;
    let pts: Vec<Point> = g.points().collect();
    let ord = sort_order(g);
    let mut by_rank = vec![0; ord.len()];
    for (z, &r) in ord.iter().enumerate() {
        by_rank[r] = z;
    }
    let s = e.aux(SORT);
    let mut any = vec![s];
    for k in 2..p {
        for t in 1..=l {
            let d = e.aux(SORT);
            let (a, b) = (profile::ge(e, q, 1, t), profile::ge(e, q, k, t));
            e.clause(&[!d, a, b]);
            e.clause(&[!d, !a, !b]);
            any.push(d);
        }
    }
    e.clause(&any);
    let n = pts.len();
    // w[j][r] for j = 1..p-1 (index j-1), r = 1..n-1 (index r; 0 unused).
    let mut w: Vec<Vec<Term>> = Vec::with_capacity(p.saturating_sub(1));
    for _ in 1..p {
        let mut row = vec![Term::True; n + 1];
        for slot in row.iter_mut().take(n).skip(1) {
            *slot = e.aux(SORT);
        }
        row[n] = Term::False;
        w.push(row);
    }
    for (j, row) in w.iter().enumerate() {
        for r in 1..n {
            let at = points::at(e, j + 1, &pts[by_rank[r]]);
            e.clause(&[!row[r], row[r + 1], at]);
        }
    }
    for i in 0..p.saturating_sub(1) {
        for (z, point) in pts.iter().enumerate() {
            let at = points::at(e, i, point);
            e.clause(&[!s, !at, w[i][ord[z] + 1]]);
        }
    }
}

/// Step 7 (`sym-twins`): for even `p = 2h ≥ 8`, if the profile has
/// `g(s) = g(h − s)` for `1 ≤ s ≤ h − 1`, then `x_k` precedes `x_{k+h}` in
/// grid order for `2 ≤ k ≤ h − 2`.
///
/// Under that profile condition `x_k` and `x_{k+h}` are *twins*: every
/// other point of the orbit is as far from one as from the other, so
/// swapping them keeps every distance, and the swapped sequence is again an
/// isometric cycle with the same profile and the same set of points. The
/// swaps leave `x_0`, `x_1` and `x_{p−1}` where they are (the pairs with
/// `k = 0, 1, h − 1` are left out), so whatever steps 1–6 achieved
/// survives them (`encodings/symmetry.md`, step 7).
///
/// Variables: `E` ("the profile is twin-symmetric"); `d[s,t]` for
/// `1 ≤ s ≤ M = ⌊(h−1)/2⌋`, `1 ≤ t ≤ L`, with `d → (g(s) ≥ t) ≠ (g(h−s) ≥ t)`;
/// `U[k,z]` for the pairs `k` and `0 ≤ z ≤ N − 2` (`z` in grid order, `N`
/// points), meaning `x_k ≤ z` exactly. Clauses: `E ∨ ⋁ d`, and
/// `E → (g(s) ≥ t ↔ g(h−s) ≥ t)` (so `E` is true exactly on twin-symmetric
/// profiles), two per `d` and two per `(s, t)` for `E`; per pair,
/// `[x_k = z] → U[k,z]`, `U[k,z−1] → U[k,z]`, `U[k,z] → U[k,z−1] ∨ [x_k = z]`,
/// `U[k,0] → [x_k = 0]`, and `E ∧ [x_{k+h} = z] → U[k,z−1]` (for `z = 0`,
/// `¬E ∨ ¬[x_{k+h} = 0]`). Counts ([`sizes::twins`]), with
/// `P = h − 3` pairs: `1 + M·L + P·(N − 1)` variables and
/// `1 + 4·M·L + P·(4N − 4)` clauses.
pub fn add_twins(e: &mut Encoder, q: &Question) {
    let p = q.period;
    if !p.is_multiple_of(2) || p < 8 {
        return;
    }
    let h = p / 2;
    let l = q.grid.diameter() as i64;
    let pts: Vec<Point> = q.grid.points().collect();
    let n = pts.len();
    let twin = e.aux(TWINS);
    let mut mismatch = vec![twin];
    for s in 1..=(h - 1) / 2 {
        for t in 1..=l {
            let (a, b) = (profile::ge(e, q, s, t), profile::ge(e, q, h - s, t));
            let d = e.aux(TWINS);
            e.clause(&[!d, a, b]);
            e.clause(&[!d, !a, !b]);
            e.clause(&[!twin, !a, b]);
            e.clause(&[!twin, a, !b]);
            mismatch.push(d);
        }
    }
    e.clause(&mismatch);
    for k in 2..=h - 2 {
        // below[z] reads "x_k ≤ point z" for z = 0..n-2; "≤ the last point"
        // is always true and needs no variable.
        let below: Vec<Term> = (0..n - 1).map(|_| e.aux(TWINS)).collect();
        for z in 0..n - 1 {
            let at = points::at(e, k, &pts[z]);
            e.clause(&[!at, below[z]]);
            if z == 0 {
                e.clause(&[!below[0], at]);
            } else {
                e.clause(&[!below[z - 1], below[z]]);
                e.clause(&[!below[z], below[z - 1], at]);
            }
        }
        for (z, pt) in pts.iter().enumerate() {
            let partner = points::at(e, k + h, pt);
            if z == 0 {
                e.clause(&[!twin, !partner]);
            } else {
                e.clause(&[!twin, !partner, below[z - 1]]);
            }
        }
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
