//! Family `point-eq`: which grid point each position of the cycle occupies.
//!
//! Variables: `V[i,c,v] ⇔ x_{i,c} = v` for every coordinate with more than one
//! value and every `v ∈ [a_c, b_c]`, and `E[i,z] ⇔ x_i = z` for every grid
//! point `z`. Written with the terms `[x_{i,c} ≥ v]` of [`super::coords`]:
//! `V → [x ≥ v]`, `V → ¬[x ≥ v+1]`, `[x ≥ v] ∧ ¬[x ≥ v+1] → V`; then
//! `E[i,z] → V[i,c,z_c]` for each such `c`, `⋀_c V[i,c,z_c] → E[i,z]`, and the
//! redundant `⋁_z E[i,z]`.
//!
//! Counts, with `n'` the coordinates of side `s_c > 0` and `N = |D|`:
//! `p·(Σ_{c∈n'} (s_c + 1) + N)` variables and
//! `p·(Σ_{c∈n'} (3 s_c + 1) + N·(n' + 1) + 1)` clauses.
//!
//! Soundness: the clauses define `V` and `E` as the stated equivalences; the
//! last clause holds in every model because each `x_i` is some grid point.
//! The family only names facts about the points, for the symmetry-breaking
//! and counting families to use.

use super::{Encoder, Term, coords};
use crate::cnf::Size;
use crate::question::Question;
use crate::varmap::Meaning;

/// The family's label.
pub const FAMILY: &str = "point-eq";

/// Adds the `V` and `E` variables and their definitions.
pub fn add(e: &mut Encoder, q: &Question) {
    let g = &q.grid;
    let live: Vec<usize> = (0..g.dim()).filter(|&c| g.side(c) > 0).collect();
    let points: Vec<Vec<i64>> = g.points().collect();
    let mut buf: Vec<Term> = Vec::new();
    for i in 0..q.period {
        for &c in &live {
            for value in g.lo(c)..=g.hi(c) {
                let v = Term::Lit(e.var(Meaning::Value { i, c, value }).pos());
                let (ge, next) = (
                    coords::ge(e, q, i, c, value),
                    coords::ge(e, q, i, c, value + 1),
                );
                if value > g.lo(c) {
                    e.clause(&[!v, ge]);
                }
                if value < g.hi(c) {
                    e.clause(&[!v, !next]);
                }
                e.clause(&[!ge, next, v]);
            }
        }
        buf.clear();
        for z in &points {
            let at = Term::Lit(e.var(Meaning::At { i, z: z.clone() }).pos());
            let mut all = vec![at];
            for &c in &live {
                let v = Term::Lit(e.get(&Meaning::Value { i, c, value: z[c] }).pos());
                e.clause(&[!at, v]);
                all.push(!v);
            }
            e.clause(&all);
            buf.push(at);
        }
        e.clause(&buf);
    }
}

/// The literal `x_i = z`.
pub fn at(e: &Encoder, i: usize, z: &[i64]) -> Term {
    Term::Lit(e.get(&Meaning::At { i, z: z.to_vec() }).pos())
}

/// Exact size of this family for `q` (module doc).
pub fn size(q: &Question) -> Size {
    let g = &q.grid;
    let p = q.period as u64;
    let n = g.num_points() as u64;
    let live: Vec<u64> = (0..g.dim()).map(|c| g.side(c)).filter(|&s| s > 0).collect();
    Size::new(
        p * (live.iter().map(|s| s + 1).sum::<u64>() + n),
        p * (live.iter().map(|s| 3 * s + 1).sum::<u64>() + n * (live.len() as u64 + 1) + 1),
    )
}
