//! Family `count-occupancy`: the orbit occupies exactly p grid points.
//!
//! Variables: `O[z] ⇔ some x_i = z` for every grid point `z`, and a
//! sequential counter `R[j,m]` for `1 ≤ j ≤ N`, `1 ≤ m ≤ min(j, p)` over the
//! points `z_1..z_N` in grid order, read "at least `m` of `O[z_1..z_j]` hold".
//!
//! Clauses: `E[i,z] → O[z]`, `O[z] → ⋁_i E[i,z]`; for the counter
//! `R[j,m] → R[j−1,m] ∨ O[z_j]` and, for `m ≥ 2`, `R[j,m] → R[j−1,m−1]`
//! (with `R[j−1,m]` false when `m > j−1`); and the unit `R[N,p]`.
//!
//! Counts: `N + W` variables and `N·(p+1) + 2W − N + 1` clauses, where
//! `W = Σ_{j=1..N} min(j, p)`.
//!
//! Soundness: by induction on `j`, `R[j,m]` forces at least `m` of the first
//! `j` indicators, so the unit says at least `p` grid points are occupied;
//! setting `R[j,m]` to the true count statement satisfies every clause, and a
//! cycle of `p` distinct points occupies exactly `p` points. The constraint is
//! implied by the others; it is there because it lets the solver *count*:
//! when the other constraints confine the orbit to fewer than `p` places the
//! counter refutes that by propagation, where resolution on the bare
//! distinctness clauses needs a pigeonhole proof of exponential length
//! (A. Haken, The intractability of resolution, Theoret. Comput. Sci. 39, 1985).

use super::{Encoder, Term, points};
use crate::cnf::Size;
use crate::question::Question;

/// The family's label.
pub const FAMILY: &str = "count-occupancy";

/// Adds the occupancy indicators and the counter.
pub fn add(e: &mut Encoder, q: &Question) {
    let p = q.period;
    let pts: Vec<Vec<i64>> = q.grid.points().collect();
    let aux = |e: &mut Encoder| e.aux(FAMILY);
    let mut occ = Vec::with_capacity(pts.len());
    for z in &pts {
        let o = aux(e);
        let mut any = vec![!o];
        for i in 0..p {
            let at = points::at(e, i, z);
            e.clause(&[!at, o]);
            any.push(at);
        }
        e.clause(&any);
        occ.push(o);
    }
    // prev[m] = R[j-1, m] for m = 0..=p, with R[·,0] true and R[j-1,m] false for m > j-1.
    let mut prev: Vec<Term> = vec![Term::False; p + 1];
    prev[0] = Term::True;
    for (j, &o) in occ.iter().enumerate() {
        let j = j + 1;
        let mut cur: Vec<Term> = vec![Term::False; p + 1];
        cur[0] = Term::True;
        for m in 1..=j.min(p) {
            let r = aux(e);
            e.clause(&[!r, prev[m], o]);
            if m >= 2 {
                e.clause(&[!r, prev[m - 1]]);
            }
            cur[m] = r;
        }
        prev = cur;
    }
    e.clause(&[prev[p]]);
}

/// Exact size of this family for `q` (module doc).
pub fn size(q: &Question) -> Size {
    let n = q.grid.num_points() as u64;
    let p = q.period as u64;
    // W = Σ_{j=1..N} min(j, p) = p(p+1)/2 + (N − p)·p, as p ≤ N.
    let w = p * (p + 1) / 2 + (n - p) * p;
    Size::new(n + w, n * (p + 1) + 2 * w - n + 1)
}
