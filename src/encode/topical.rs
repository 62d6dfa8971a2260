//! Families `tdist-upper` and `tdist-lower`: the one-sided cycle condition of
//! topical maps (formulation `topical-cycle/1`, `encodings/topical.md`).
//!
//! A cycle of distinct points is the orbit of a topical map on R^n iff
//! `T(k) = t(x_i, x_{i+k})`, with `t(y, z) = max_c (y_c − z_c)`, does not
//! depend on `i`, for every `k = 1..p−1`. The variables `G[k,t]` of
//! [`super::profile`] hold `T(k) ≥ t` for `1 ≤ k ≤ p − 1`, `1 ≤ t ≤ L`.
//!
//! For positions `i < j` the ordered pair `(i, j)` has offset `j − i` and the
//! pair `(j, i)` offset `p − j + i`; each gets `t(x_u, x_w) = T(k(u, w))`:
//!
//! `tdist-upper` (`T(k) ≤ t ⇒ x_{u,c} − x_{w,c} ≤ t` for all `c`): for
//! `1 ≤ t < s_c` and `a_c < v ≤ b_c − t` the clause
//! `G[k(u,w), t+1] ∨ ¬[x_{u,c} ≥ v+t] ∨ [x_{w,c} ≥ v]`, for both orders.
//! `t = 0` needs nothing because `G[k,1]` is a unit. No variables and
//! `Σ_c s_c(s_c − 1)` clauses per unordered pair, as `dist-upper`.
//!
//! `tdist-lower` (`T(k) ≥ t ⇒ some x_{u,c} − x_{w,c} ≥ t`): the witnesses
//! `D[u,w,c,t]` and their defining clauses exactly as in `dist-lower`, then
//! for each order and `1 ≤ t ≤ L` its own clause `¬G[k(u,w),t] ∨ ⋁_c D[u,w,c,t]`
//! (over `c` with `s_c ≥ t`). `2·Σ_c s_c` variables and
//! `2L + Σ_c s_c(s_c + 3)` clauses per unordered pair.
//!
//! Soundness: as for the norm, the witness clauses give only
//! `D ⇒ x_{u,c} − x_{w,c} ≥ t`, which is all the lower bound needs; together
//! the families say `t(x_u, x_w) = T(k(u, w))` for every ordered pair, which
//! is the cycle condition. With `T ≥ 1` the points are distinct. The
//! clause loops are shared with [`super::distance`] (`one_sided = true`).

use super::{Encoder, distance};
use crate::cnf::Size;
use crate::question::Question;

/// Label of the upper-bound family.
pub const FAMILY_UPPER: &str = "tdist-upper";
/// Label of the lower-bound family.
pub const FAMILY_LOWER: &str = "tdist-lower";

/// Adds `t(x_u, x_w) ≤ T(k(u, w))` for every ordered pair.
pub fn add_upper(e: &mut Encoder, q: &Question) {
    distance::upper(e, q, true);
}

/// Adds `t(x_u, x_w) ≥ T(k(u, w))` for every ordered pair, with witnesses.
pub fn add_lower(e: &mut Encoder, q: &Question) {
    distance::lower(e, q, true);
}

/// Exact size of `tdist-upper` for `q`: that of `dist-upper`.
pub fn size_upper(q: &Question) -> Size {
    distance::size_upper(q)
}

/// Exact size of `tdist-lower` for `q`: that of `dist-lower` plus one
/// covering clause per order, pair and threshold (`L` more per pair).
pub fn size_lower(q: &Question) -> Size {
    distance::size_lower(q) + Size::clauses(distance::num_pairs(q) * q.grid.diameter())
}
