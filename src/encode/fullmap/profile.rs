//! Family `orbit-profile` (redundant): the orbit is an isometric cycle.
//!
//! An orbit of a nonexpansive map is an isometric cycle (`encodings/full-map.md`
//! §1): `d(x_i, x_j)` depends only on the offset class
//! `k = min(|i − j|, p − |i − j|)`. This family states that with an
//! order-encoded profile, so that a solver can refute "no isometric p-cycle
//! fits in D" without going through the map.
//!
//! **Variables.** `G[k, t]` (`Meaning::Profile`): g(k) ≥ t, for
//! `1 ≤ k ≤ K = ⌊p/2⌋` and `2 ≤ t ≤ L`, L the diameter of D; `g(k) ≥ 1`
//! holds for distinct points and is the constant true, `g(k) ≥ L + 1` the
//! constant false. `K·(L − 1)` variables (none when L ≤ 1).
//!
//! **Clauses.** `G[k, t+1] → G[k, t]` for `2 ≤ t < L`: `K·(L − 2)`. For each
//! unordered pair of positions `i < j` with class k and each ordered pair of
//! distinct points `z ≠ z'` at distance d: `o(i, z) ∧ o(j, z') → G[k, d]`
//! (dropped when d = 1) and `o(i, z) ∧ o(j, z') → ¬G[k, d + 1]` (dropped
//! when d = L). Count: `C(p, 2)·Σ_{z≠z'} ([d ≥ 2] + [d < L])`.
//!
//! **Soundness.** Every solution extends: put `G[k, t] = [g(k) ≥ t]` with g
//! the orbit's profile, and every clause holds. The breaks keep some image of
//! every solution (`symmetry`); that image's orbit is isometric too, so it
//! extends in the same way. The family is on with the option `count` (the
//! formulation's redundant family; `--no-count` leaves it out).

use crate::cnf::{Size, Var};
use crate::encode::{Encoder, Term, pairs};
use crate::varmap::Meaning;

use super::{Domain, pairs_of};

/// Label of the family.
pub const FAMILY: &str = "orbit-profile";

/// The diameter L of D.
fn diameter(dom: &Domain) -> i64 {
    dom.dist.iter().copied().max().unwrap_or(0)
}

/// Adds the family; `o` is the `p × N` table of orbit variables.
pub fn add(e: &mut Encoder, dom: &Domain, p: usize, o: &[Var]) {
    let n = dom.len();
    let l = diameter(dom);
    let k_max = p / 2;
    // g[k][t] for t = 0..=L+1 as terms, index k from 1.
    let mut g: Vec<Vec<Term>> = vec![Vec::new(); k_max + 1];
    for (k, row) in g.iter_mut().enumerate().skip(1) {
        for t in 0..=l + 1 {
            row.push(if t <= 1 {
                Term::True
            } else if t > l {
                Term::False
            } else {
                Term::Lit(e.var(Meaning::Profile { k, value: t }).pos())
            });
        }
    }
    for row in g.iter().skip(1) {
        for t in 2..l {
            e.clause(&[!row[t as usize + 1], row[t as usize]]);
        }
    }
    for (i, j, k) in pairs(p) {
        for z in 0..n {
            for z2 in 0..n {
                if z == z2 {
                    continue;
                }
                let d = dom.d(z, z2) as usize;
                let (a, b) = (o[i * n + z].neg().into(), o[j * n + z2].neg().into());
                e.clause(&[a, b, g[k][d]]);
                e.clause(&[a, b, !g[k][d + 1]]);
            }
        }
    }
}

/// Size of [`add`]: `K·(L − 1)` variables and `K·(L − 2) + C(p, 2)·Σ_{z ≠ z'}
/// ([d(z, z') ≥ 2] + [d(z, z') < L])` clauses (the terms that fold to constants
/// drop out).
pub fn size(dom: &Domain, p: usize) -> Size {
    let n = dom.len();
    let l = diameter(dom);
    let k = (p / 2) as u64;
    let mut per_pair = 0u64;
    for z in 0..n {
        for z2 in 0..n {
            if z != z2 {
                let d = dom.d(z, z2);
                per_pair += u64::from(d >= 2) + u64::from(d < l);
            }
        }
    }
    Size::new(
        k * (l.max(1) - 1) as u64,
        k * (l.max(2) - 2) as u64 + pairs_of(p) * per_pair,
    )
}
