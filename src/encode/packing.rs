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
//! packing `Σ_i 2^{−#nonzeros(x_i)} ≤ 1` (MATH.md §4). It is implied by the
//! other clauses, but a CDCL solver cannot find it: without it "17 points
//! pairwise at distance 2 in `{−1,0,1}^4`" needs a pigeonhole refutation.
//!
//! Variables, for each `1 ≤ t < L` (`L` the diameter): a trigger `A_t`, weight
//! indicators `M[i,w] ⇔ m_t(x_i) = w` for each weight value `w` that occurs,
//! and a counter `S[i,u]` for `1 ≤ u ≤ W_t + 1` read "`Σ_{j ≤ i} m_t(x_j) ≥ u`"
//! (`u = W_t + 1` standing for "more than `W_t`").
//!
//! Clauses: `⋀_k G[k,t+1] → A_t`; `E[i,z] → M[i,m_t(z)]`;
//! `M[0,w] → S[0,w]`; for `i ≥ 1`: `S[i−1,u] → S[i,u]` and
//! `S[i−1,u] ∧ M[i,w] → S[i,min(u+w, W_t+1)]`, `M[i,w] → S[i,w]`;
//! and `A_t → ¬S[p−1,W_t+1]`.
//!
//! Counts per `t`, with `N = |D|`, `V` distinct weights and `B = W_t + 1`:
//! `1 + p·V + p·B` variables and `1 + p·N + V + (p−1)·(B + B·V + V) + 1` clauses.
//!
//! Soundness: setting every auxiliary to the truth of its reading satisfies
//! all clauses on every isometric cycle (by the packing argument above when
//! `A_t` is true, trivially when it is false); conversely the clauses only
//! ever force a counter upward by an amount that is really there.

use super::{Encoder, Term, points, profile};
use crate::cnf::FamilyCount;
use crate::grid::Grid;
use crate::question::Question;
use crate::varmap::Meaning;

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
    let mut index = 0u64;
    let mut fresh = |e: &mut Encoder| {
        index += 1;
        Term::Lit(
            e.var(Meaning::Aux {
                family: FAMILY.into(),
                index,
            })
            .pos(),
        )
    };
    for t in thresholds(q) {
        let (total, weights) = windows(&q.grid, t);
        let values = distinct(&weights);
        let b = total as usize + 1;
        let trigger = fresh(e);
        let mut all_far = vec![trigger];
        for k in 1..=p / 2 {
            all_far.push(!profile::ge(e, q, k, t as i64 + 1));
        }
        e.clause(&all_far);
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
        // s[u] for u = 1..=b (index 0 unused, standing for "≥ 0", true).
        let mut prev: Vec<Term> = vec![Term::True; b + 1];
        for (i, row) in m.iter().enumerate() {
            let mut cur: Vec<Term> = vec![Term::True; b + 1];
            for slot in cur.iter_mut().skip(1) {
                *slot = fresh(e);
            }
            for (slot, &w) in values.iter().enumerate() {
                let w = (w as usize).min(b);
                e.clause(&[!row[slot], cur[w]]);
            }
            if i > 0 {
                for u in 1..=b {
                    e.clause(&[!prev[u], cur[u]]);
                    for (slot, &w) in values.iter().enumerate() {
                        let to = (u + w as usize).min(b);
                        e.clause(&[!prev[u], !row[slot], cur[to]]);
                    }
                }
            }
            prev = cur;
        }
        e.clause(&[!trigger, !prev[b]]);
    }
}

/// Exact counts of this family for `q`.
pub fn count(q: &Question) -> FamilyCount {
    let p = q.period as u64;
    let n = q.grid.num_points() as u64;
    let (mut vars, mut clauses) = (0u64, 0u64);
    for t in thresholds(q) {
        let (total, weights) = windows(&q.grid, t);
        let v = distinct(&weights).len() as u64;
        let b = total + 1;
        vars += 1 + p * v + p * b;
        clauses += 1 + p * n + p * v + (p - 1) * (b + b * v) + 1;
    }
    FamilyCount {
        family: FAMILY.into(),
        vars,
        clauses,
    }
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
}
