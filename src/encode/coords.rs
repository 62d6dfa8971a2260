//! Family `coord-order`: the order encoding of the points' coordinates.
//!
//! Variables: for every position `i < p`, coordinate `c` and threshold
//! `v ∈ (a_c, b_c]`, the variable `X[i,c,v] ⇔ x_{i,c} ≥ v`. Thresholds
//! `v ≤ a_c` are the constant true and `v > b_c` the constant false; the
//! encoder folds them (see [`ge`]), so a side of one point has no variables.
//!
//! Clauses: `X[i,c,v+1] → X[i,c,v]` for `a_c < v < b_c`.
//!
//! Counts: `p·Σ_c s_c` variables and `p·Σ_c max(s_c − 1, 0)` clauses, with
//! `s_c = b_c − a_c`.
//!
//! Soundness: the assignments satisfying these clauses are exactly the
//! threshold vectors of integers `x_{i,c} ∈ [a_c, b_c]`, via
//! `x_{i,c} = a_c + #{v : X[i,c,v]}`.

use super::{Encoder, Term};
use crate::cnf::Size;
use crate::question::Question;
use crate::varmap::Meaning;

/// The family's label.
pub const FAMILY: &str = "coord-order";

/// Adds the coordinate variables and their order clauses.
pub fn add(e: &mut Encoder, q: &Question) {
    let g = &q.grid;
    for i in 0..q.period {
        for c in 0..g.dim() {
            for value in g.lo(c) + 1..=g.hi(c) {
                e.var(Meaning::Coord { i, c, value });
            }
            for v in g.lo(c) + 1..g.hi(c) {
                let (hi, lo) = (ge(e, q, i, c, v + 1), ge(e, q, i, c, v));
                e.clause(&[!hi, lo]);
            }
        }
    }
}

/// The term `x_{i,c} ≥ v`, folded to a constant outside `(a_c, b_c]`.
pub fn ge(e: &Encoder, q: &Question, i: usize, c: usize, v: i64) -> Term {
    if v <= q.grid.lo(c) {
        Term::True
    } else if v > q.grid.hi(c) {
        Term::False
    } else {
        Term::Lit(e.get(&Meaning::Coord { i, c, value: v }).pos())
    }
}

/// Exact size of this family for `q` (module doc).
pub fn size(q: &Question) -> Size {
    let p = q.period as u64;
    let sides: Vec<u64> = (0..q.dim()).map(|c| q.grid.side(c)).collect();
    Size::new(
        p * sides.iter().sum::<u64>(),
        p * sides.iter().map(|&s| s.saturating_sub(1)).sum::<u64>(),
    )
}
