//! Family `pack-window`: a weighted packing bound for far-apart orbits.
//!
//! A *window of side t* is a sub-box `Π_c [u_c, u_c + t_c]` of the grid with
//! `t_c = min(t, s_c)`; there are `W_t = Π_c (s_c − t_c + 1)` of them, and a
//! grid point `z` lies in `m_t(z) = Π_c #{u_c : a_c ≤ u_c ≤ z_c ≤ u_c + t_c ≤ b_c}`
//! of them. Two points in one window are at distance `≤ t`. So if every
//! distance on the cycle exceeds `t` (all `g(k) ≥ t + 1`), each window holds
//! at most one orbit point, and counting pairs (point, window) twice gives
//!
//! ```text
//!     Σ_i m_t(x_i)  ≤  W_t.
//! ```
//!
//! On `{−1,0,1}^n` with `t = 1` the windows are the `2^n` corner boxes
//! `Π_c {0, v_c}`, `m_1(z) = 2^{#zeros of z}`, and the bound is the subcube
//! packing `Σ_i 2^{−#nonzeros(x_i)} ≤ 1` (docs/math.md §4). It is implied by the
//! other clauses, but a CDCL solver cannot find it: without it "17 points
//! pairwise at distance 2 in `{−1,0,1}^4`" needs a pigeonhole refutation.
//!
//! Grouped form: for `d | p`, `2 ≤ d < p`, if every offset not divisible by
//! `d` is far, the residue classes mod `d` meet disjoint sets of windows, each
//! of at least `max(u(p/d), m_t of its members)` windows, where `u(s)` is the
//! least number of windows `s` distinct points can meet ([`union_lower_bound`]);
//! so the sum of those lower bounds is at most `W_t`. `d = p` is the plain form.
//!
//! Variables, for each `1 ≤ t < L` with `W_t ≤` [`MAX_WINDOWS`]: weight
//! indicators `M[i,w] ⇐ E[i,z]` for `m_t(z) = w`; per grouping `d` a trigger
//! `A ⇐ ⋀_{d∤k} G[k,t+1]`, group indicators `GW[r,w] ⇐ M[i,w]` (`i ≡ r mod d`;
//! for `d = p`, `GW = M`), and a counter `S[r,u]` ("groups `0..=r` weigh at
//! least `u`", `1 ≤ u ≤ B = W_t + 1`) that adds `max(w, u(p/d))` for `GW[r,w]`
//! and `u(p/d)` unconditionally; finally `A → ¬S[d−1,B]`.
//!
//! Counts per `t` (`N = |D|`, `V` weight values): `pV` variables and `pN`
//! clauses, plus per `d`: `1 + [d<p]·dV + dB` variables and
//! `1 + [d<p]·pV + V + 1 + (d−1)(B + BV) + 1` clauses.
//!
//! Soundness: setting every auxiliary to the truth of its reading satisfies
//! all clauses on every isometric cycle (by the packing argument above when
//! `A_t` is true, trivially when it is false); conversely the clauses only
//! ever force a counter upward by an amount that is really there.

use super::{Encoder, Term, points, profile};
use crate::cnf::Size;
use crate::grid::Grid;
use crate::question::Question;

/// The family's label.
pub const FAMILY: &str = "pack-window";

/// Largest window count `W_t` for which the counter is built.
pub const MAX_WINDOWS: u64 = 4096;

/// `(W_t, m_t(z) for every grid point in grid order)`.
pub fn windows(g: &Grid, t: u64) -> (u64, Vec<u64>) {
    let total: u64 = (0..g.dim())
        .map(|c| g.side(c) - t.min(g.side(c)) + 1)
        .product();
    let weights = g
        .points()
        .map(|z| {
            (0..g.dim())
                .map(|c| {
                    let tc = t.min(g.side(c)) as i64;
                    let lo = g.lo(c).max(z[c] - tc);
                    let hi = z[c].min(g.hi(c) - tc);
                    (hi - lo + 1) as u64
                })
                .product()
        })
        .collect();
    (total, weights)
}

fn thresholds(q: &Question) -> Vec<u64> {
    if q.period < 2 {
        return Vec::new();
    }
    (1..q.grid.diameter())
        .filter(|&t| windows(&q.grid, t).0 <= MAX_WINDOWS)
        .collect()
}

fn distinct(weights: &[u64]) -> Vec<u64> {
    let mut w = weights.to_vec();
    w.sort_unstable();
    w.dedup();
    w
}

/// Adds the packing bound for every threshold `t` with few enough windows.
pub fn add(e: &mut Encoder, q: &Question) {
    let pts: Vec<Vec<i64>> = q.grid.points().collect();
    let p = q.period;
    let fresh = |e: &mut Encoder| e.aux(FAMILY);
    for t in thresholds(q) {
        let (total, weights) = windows(&q.grid, t);
        let values = distinct(&weights);
        let b = total as usize + 1;
        let mut m = Vec::with_capacity(p);
        for i in 0..p {
            let row: Vec<Term> = values.iter().map(|_| fresh(e)).collect();
            for (z, w) in pts.iter().zip(&weights) {
                let at = points::at(e, i, z);
                let slot = values.binary_search(w).expect("present");
                e.clause(&[!at, row[slot]]);
            }
            m.push(row);
        }
        let mut sets = None;
        for d in groupings(p) {
            let umin = if d == p {
                1
            } else {
                union_lower_bound(
                    sets.get_or_insert_with(|| window_sets(&q.grid, t)),
                    total,
                    p / d,
                )
            };
            let trigger = fresh(e);
            let mut far = vec![trigger];
            for k in (1..=p / 2).filter(|k| k % d != 0) {
                far.push(!profile::ge(e, q, k, t as i64 + 1));
            }
            e.clause(&far);
            // gw[r][slot]: some member of group r has weight values[slot].
            let gw: Vec<Vec<Term>> = if d == p {
                m.clone()
            } else {
                let rows: Vec<Vec<Term>> = (0..d)
                    .map(|_| values.iter().map(|_| fresh(e)).collect())
                    .collect();
                for (i, row) in m.iter().enumerate() {
                    for (slot, &lit) in row.iter().enumerate() {
                        e.clause(&[!lit, rows[i % d][slot]]);
                    }
                }
                rows
            };
            let step = |w: u64| (w.max(umin) as usize).min(b);
            // s[u] for u = 1..=b: "the groups so far weigh at least u" (index 0 unused).
            let mut prev: Vec<Term> = vec![Term::True; b + 1];
            for (r, row) in gw.iter().enumerate() {
                let mut cur: Vec<Term> = vec![Term::True; b + 1];
                for slot in cur.iter_mut().skip(1) {
                    *slot = fresh(e);
                }
                if r == 0 {
                    for (slot, &w) in values.iter().enumerate() {
                        e.clause(&[!row[slot], cur[step(w)]]);
                    }
                    e.clause(&[cur[step(umin)]]);
                } else {
                    for u in 1..=b {
                        e.clause(&[!prev[u], cur[(u + step(umin)).min(b)]]);
                        for (slot, &w) in values.iter().enumerate() {
                            e.clause(&[!prev[u], !row[slot], cur[(u + step(w)).min(b)]]);
                        }
                    }
                }
                prev = cur;
            }
            e.clause(&[!trigger, !prev[b]]);
        }
    }
}

/// The groupings used: each `d` with `d | p` and `2 ≤ d ≤ p`, largest first.
/// Grouping `d` applies when every offset that `d` does not divide is far; its
/// groups are the residue classes of the positions modulo `d`.
pub fn groupings(p: usize) -> Vec<usize> {
    (2..=p).rev().filter(|&d| p.is_multiple_of(d)).collect()
}

/// For every grid point, the sorted indices of the windows of side `t` containing it.
pub fn window_sets(g: &Grid, t: u64) -> Vec<Vec<u32>> {
    g.points()
        .map(|z| {
            let mut ids: Vec<u32> = vec![0];
            for c in 0..g.dim() {
                let tc = t.min(g.side(c)) as i64;
                let radix = (g.side(c) as i64 - tc + 1) as u32;
                let lo = g.lo(c).max(z[c] - tc);
                let hi = z[c].min(g.hi(c) - tc);
                ids = ids
                    .iter()
                    .flat_map(|&id| (lo..=hi).map(move |u| id * radix + (u - g.lo(c)) as u32))
                    .collect();
            }
            ids.sort_unstable();
            ids
        })
        .collect()
}

/// A lower bound on the number of windows that `s` distinct grid points meet
/// together: the least `u ≤ 3` such that some `u` windows contain `s` points
/// whose windows all lie among them, or 4 when no `u ≤ 3` does (each size is
/// tried only while the number of `u`-sets of windows stays small; a size not
/// tried counts as reachable, which keeps the bound valid).
pub fn union_lower_bound(sets: &[Vec<u32>], windows: u64, s: usize) -> u64 {
    const BUDGET: u64 = 300_000;
    let max_inside = |chosen: &[u32]| {
        sets.iter()
            .filter(|w| w.iter().all(|x| chosen.contains(x)))
            .count()
    };
    for u in 1..=3u64 {
        let combos = (0..u).fold(1u64, |acc, i| {
            acc.saturating_mul(windows - i.min(windows)) / (i + 1)
        });
        if combos > BUDGET / (sets.len() as u64).max(1) || u > windows {
            return u;
        }
        let w = windows as u32;
        let best = match u {
            1 => (0..w).map(|a| max_inside(&[a])).max().unwrap_or(0),
            2 => (0..w)
                .flat_map(|a| (a + 1..w).map(move |b| (a, b)))
                .map(|(a, b)| max_inside(&[a, b]))
                .max()
                .unwrap_or(0),
            _ => (0..w)
                .flat_map(|a| (a + 1..w).flat_map(move |b| (b + 1..w).map(move |c| (a, b, c))))
                .map(|(a, b, c)| max_inside(&[a, b, c]))
                .max()
                .unwrap_or(0),
        };
        if best >= s {
            return u;
        }
    }
    4
}

/// Exact size of this family for `q` (module doc).
pub fn size(q: &Question) -> Size {
    let p = q.period as u64;
    let n = q.grid.num_points() as u64;
    let (mut vars, mut clauses) = (0u64, 0u64);
    for t in thresholds(q) {
        let (total, weights) = windows(&q.grid, t);
        let v = distinct(&weights).len() as u64;
        let b = total + 1;
        vars += p * v;
        clauses += p * n;
        for d in groupings(q.period) {
            let d = d as u64;
            let grouped = d < p;
            vars += 1 + if grouped { d * v } else { 0 } + d * b;
            clauses += 1 + if grouped { p * v } else { 0 } + v + 1 + (d - 1) * (b + b * v) + 1;
        }
    }
    Size::new(vars, clauses)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn windows_of_the_ternary_cube_are_its_corners() {
        let g = Grid::parse("-1..1", Some(4)).unwrap();
        let (total, weights) = windows(&g, 1);
        assert_eq!(total, 16);
        // m_1(z) = 2^(number of zeros): the origin lies in all 16 corner boxes.
        assert_eq!(weights[40], 16);
        assert_eq!(weights[0], 1);
        let g = Grid::parse("0..3", Some(2)).unwrap();
        assert_eq!(windows(&g, 1).0, 9);
        assert_eq!(windows(&g, 2).0, 4);
    }

    #[test]
    fn two_distinct_points_of_the_ternary_cube_meet_two_corner_boxes() {
        let g = Grid::parse("-1..1", Some(4)).unwrap();
        let sets = window_sets(&g, 1);
        assert_eq!(sets[40].len(), 16);
        assert_eq!(union_lower_bound(&sets, 16, 1), 1);
        assert_eq!(union_lower_bound(&sets, 16, 2), 2);
        // Three points fit in an edge {v, w}: v, w and their midpoint. A path
        // u–v–w of corners holds five (three corners, two midpoints); six need four corners.
        assert_eq!(union_lower_bound(&sets, 16, 3), 2);
        assert_eq!(union_lower_bound(&sets, 16, 4), 3);
        assert_eq!(union_lower_bound(&sets, 16, 5), 3);
        assert_eq!(union_lower_bound(&sets, 16, 6), 4);
        assert_eq!(groupings(18), vec![18, 9, 6, 3, 2]);
    }
}
