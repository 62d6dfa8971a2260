//! Families `dist-upper` and `dist-lower`: every pair's distance equals the profile.
//!
//! For positions `i < j` with offset class `k = min(j − i, p − j + i)` the
//! constraint is `‖x_i − x_j‖∞ = g(k)`, split into two implications. Write
//! `s_c = b_c − a_c`, `L = max_c s_c` and `[·]` for the coordinate terms of
//! [`super::coords`] (constants folded).
//!
//! `dist-upper` (`g(k) ≤ t ⇒ |x_{i,c} − x_{j,c}| ≤ t` for all `c`): for
//! `1 ≤ t < s_c` and `a_c < v ≤ b_c − t`, the clauses
//! `G[k,t+1] ∨ ¬[x_{i,c} ≥ v+t] ∨ [x_{j,c} ≥ v]` and the same with `i, j`
//! swapped. `t = 0` needs nothing because `G[k,1]` is a unit, and `t ≥ s_c`
//! nothing because no difference in coordinate `c` exceeds `s_c`.
//! No variables; `Σ_c s_c(s_c − 1)` clauses per pair.
//!
//! `dist-lower` (`g(k) ≥ t ⇒ some coordinate differs by ≥ t`): witness
//! variables `D[i,j,c,t] → x_{i,c} − x_{j,c} ≥ t` for both orders of the pair,
//! every `c` and `1 ≤ t ≤ s_c`, defined by `¬D ∨ [x_{i,c} ≥ a_c + t]`,
//! `¬D ∨ ¬[x_{j,c} ≥ v] ∨ [x_{i,c} ≥ v + t]` for `a_c < v ≤ b_c − t`, and
//! `¬D ∨ ¬[x_{j,c} ≥ b_c − t + 1]`; then for `1 ≤ t ≤ L` the clause
//! `¬G[k,t] ∨ ⋁ D[·,·,c,t]` over both orders and all `c` with `s_c ≥ t`.
//! `2·Σ_c s_c` variables and `L + Σ_c s_c(s_c + 3)` clauses per pair.
//!
//! Soundness: the witness clauses say, for each integer `v`, `x_j ≥ v ⇒
//! x_i ≥ v + t`, which over the box is `x_i − x_j ≥ t`; only this direction is
//! needed, since a witness can always be set false. Together the families say
//! `g(k) ≤ d(x_i, x_j) ≤ g(k)` for every pair, and with the `profile` family
//! (`g ≥ 1`) the points are pairwise distinct.

use super::{Encoder, Term, coords, offset_class, pairs, profile};
use crate::cnf::Size;
use crate::question::Question;
use crate::varmap::Meaning;

/// Label of the upper-bound family.
pub const FAMILY_UPPER: &str = "dist-upper";
/// Label of the lower-bound family.
pub const FAMILY_LOWER: &str = "dist-lower";

/// Adds `‖x_i − x_j‖∞ ≤ g(k)` for every pair.
pub fn add_upper(e: &mut Encoder, q: &Question) {
    upper(e, q, false);
}

/// Adds `‖x_i − x_j‖∞ ≥ g(k)` for every pair, with witness variables.
pub fn add_lower(e: &mut Encoder, q: &Question) {
    lower(e, q, false);
}

/// The profile offsets of the ordered pairs `(i, j)` and `(j, i)`, `i < j`:
/// both `offset_class(i, j)` for the norm, `j − i` and `p − j + i` for the
/// one-sided `t` of [`super::topical`].
fn offsets(i: usize, j: usize, p: usize, one_sided: bool) -> (usize, usize) {
    if one_sided {
        (j - i, p - (j - i))
    } else {
        let k = offset_class(i, j, p);
        (k, k)
    }
}

/// The upper-bound clauses, in the one loop order both classes share:
/// `P(u,w) ≤ t ⇒ x_{u,c} − x_{w,c} ≤ t` for both orders of every pair, where
/// `P` is `g` (norm) or `T` (`one_sided`) at the pair's offset.
pub(super) fn upper(e: &mut Encoder, q: &Question, one_sided: bool) {
    let g = &q.grid;
    for (i, j, _) in pairs(q.period) {
        let (kij, kji) = offsets(i, j, q.period, one_sided);
        for c in 0..g.dim() {
            let s = g.side(c) as i64;
            for t in 1..s {
                let above = [profile::ge(e, q, kij, t + 1), profile::ge(e, q, kji, t + 1)];
                for v in g.lo(c) + 1..=g.hi(c) - t {
                    for (u, w, a) in [(i, j, above[0]), (j, i, above[1])] {
                        let far = coords::ge(e, q, u, c, v + t);
                        let near = coords::ge(e, q, w, c, v);
                        e.clause(&[a, !far, near]);
                    }
                }
            }
        }
    }
}

/// The witness variables and lower-bound clauses: `P(u,w) ≥ t ⇒` some
/// `D[u,w,c,t]`. For the norm one clause covers both orders of a pair (the
/// distance is symmetric); for `one_sided` each order has its own clause.
pub(super) fn lower(e: &mut Encoder, q: &Question, one_sided: bool) {
    let g = &q.grid;
    let l = g.diameter() as i64;
    let mut witnesses: Vec<Term> = Vec::new();
    for (i, j, _) in pairs(q.period) {
        let (kij, kji) = offsets(i, j, q.period, one_sided);
        for (u, w) in [(i, j), (j, i)] {
            for c in 0..g.dim() {
                for t in 1..=g.side(c) as i64 {
                    let d = Term::Lit(
                        e.var(Meaning::Diff {
                            i: u,
                            j: w,
                            c,
                            value: t,
                        })
                        .pos(),
                    );
                    let first = coords::ge(e, q, u, c, g.lo(c) + t);
                    e.clause(&[!d, first]);
                    for v in g.lo(c) + 1..=g.hi(c) - t {
                        let (wv, uv) = (coords::ge(e, q, w, c, v), coords::ge(e, q, u, c, v + t));
                        e.clause(&[!d, !wv, uv]);
                    }
                    let last = coords::ge(e, q, w, c, g.hi(c) - t + 1);
                    e.clause(&[!d, !last]);
                }
            }
        }
        let groups: &[&[(usize, usize, usize)]] = if one_sided {
            &[&[(i, j, kij)], &[(j, i, kji)]]
        } else {
            &[&[(i, j, kij), (j, i, kji)]]
        };
        for t in 1..=l {
            for group in groups {
                witnesses.clear();
                witnesses.push(!profile::ge(e, q, group[0].2, t));
                for &(u, w, _) in *group {
                    for c in (0..g.dim()).filter(|&c| g.side(c) as i64 >= t) {
                        let m = Meaning::Diff {
                            i: u,
                            j: w,
                            c,
                            value: t,
                        };
                        witnesses.push(Term::Lit(e.get(&m).pos()));
                    }
                }
                e.clause(&witnesses);
            }
        }
    }
}

pub(super) fn num_pairs(q: &Question) -> u64 {
    let p = q.period as u64;
    p * p.saturating_sub(1) / 2
}

/// Exact size of `dist-upper` for `q` (module doc).
pub fn size_upper(q: &Question) -> Size {
    let per_pair: u64 = (0..q.dim())
        .map(|c| q.grid.side(c))
        .map(|s| s * s.saturating_sub(1))
        .sum();
    Size::clauses(num_pairs(q) * per_pair)
}

/// Exact size of `dist-lower` for `q` (module doc).
pub fn size_lower(q: &Question) -> Size {
    let sides: Vec<u64> = (0..q.dim()).map(|c| q.grid.side(c)).collect();
    let vars = 2 * sides.iter().sum::<u64>();
    let clauses = q.grid.diameter() + sides.iter().map(|&s| s * (s + 3)).sum::<u64>();
    Size::new(num_pairs(q) * vars, num_pairs(q) * clauses)
}
