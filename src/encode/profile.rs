//! Family `profile`: the distance profile `g(k)`, `1 ≤ k ≤ K`.
//!
//! On an isometric cycle `‖x_i − x_{i+k}‖∞ = g(k)` for all `i`, and
//! `g(k) = g(p − k)`, so offsets `k ≤ K = ⌊p/2⌋` suffice. Under the topical
//! formulation the same variables hold the one-sided profile
//! `T(k) = t(x_i, x_{i+k}) = max_c (x_{i,c} − x_{i+k,c})`, which is not
//! symmetric, so `K = p − 1` ([`super::profile_len`]); `T(k) ≥ 1` for
//! `k ≢ 0` on every such orbit (`encodings/topical.md`), so the unit below
//! is sound there too.
//!
//! Variables: `G[k,t] ⇔ g(k) ≥ t` for `1 ≤ t ≤ L`, where `L` is the box's
//! diameter `max_c (b_c − a_c)`; no two points of the box are farther apart.
//!
//! Clauses: the unit `G[k,1]` (points at nonzero offset are distinct, which
//! makes the period minimal) and `G[k,t+1] → G[k,t]` for `1 ≤ t < L`.
//!
//! Counts: `K·L` variables and `K·L` clauses.
//!
//! Soundness: the models are exactly the order encodings of values
//! `g(k) ∈ [1, L]`, the only values a distance between distinct points of the
//! box can take (for `T`: `t(y, z) ≤ max_c s_c` on the box, and `T ≥ 1`).

use super::{Encoder, Term};
use crate::cnf::Size;
use crate::question::Question;
use crate::varmap::Meaning;

/// The family's label.
pub const FAMILY: &str = "profile";

/// Adds the profile variables and their clauses.
pub fn add(e: &mut Encoder, q: &Question) {
    let l = q.grid.diameter() as i64;
    for k in 1..=super::profile_len(q) {
        for value in 1..=l {
            e.var(Meaning::Profile { k, value });
        }
        let first = ge(e, q, k, 1);
        e.clause(&[first]);
        for t in 1..l {
            let (hi, lo) = (ge(e, q, k, t + 1), ge(e, q, k, t));
            e.clause(&[!hi, lo]);
        }
    }
}

/// A literal about the profile alone: `g(k) ≥ t` when `positive`, else
/// `g(k) < t`. The profile-exclusion families (`pack-classes`,
/// `pack-nested`, `biclique-cover`, `sub-box`) state their clauses in these
/// terms, so that a clause can be moved between boxes ([`super::subbox`])
/// and evaluated on a whole profile ([`ProfileLit::holds`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct ProfileLit {
    /// The offset, `1 ≤ k ≤ K`.
    pub k: usize,
    /// The threshold, `1 ≤ t ≤ L`.
    pub t: i64,
    /// `g(k) ≥ t` (`true`) or `g(k) < t` (`false`).
    pub positive: bool,
}

impl ProfileLit {
    /// `g(k) ≥ t`.
    pub fn ge(k: usize, t: i64) -> ProfileLit {
        ProfileLit {
            k,
            t,
            positive: true,
        }
    }

    /// `g(k) < t`.
    pub fn lt(k: usize, t: i64) -> ProfileLit {
        ProfileLit {
            k,
            t,
            positive: false,
        }
    }

    /// The literal as the encoding's term.
    pub fn term(self, e: &Encoder, q: &Question) -> Term {
        let t = ge(e, q, self.k, self.t);
        if self.positive { t } else { !t }
    }

    /// Whether the literal holds on the whole profile `g` (`g[k − 1] = g(k)`);
    /// `None` when `g` has no entry for the offset.
    pub fn holds(self, g: &[i64]) -> Option<bool> {
        let v = *g.get(self.k.checked_sub(1)?)?;
        Some((v >= self.t) == self.positive)
    }
}

/// Adds each clause of profile literals.
pub fn add_clauses(e: &mut Encoder, q: &Question, clauses: &[Vec<ProfileLit>]) {
    let mut terms = Vec::new();
    for c in clauses {
        terms.clear();
        terms.extend(c.iter().map(|l| l.term(e, q)));
        e.clause(&terms);
    }
}

/// The term `g(k) ≥ t`, folded to a constant outside `[1, L]`.
pub fn ge(e: &Encoder, q: &Question, k: usize, t: i64) -> Term {
    if t <= 0 {
        Term::True
    } else if t > q.grid.diameter() as i64 {
        Term::False
    } else {
        Term::Lit(e.get(&Meaning::Profile { k, value: t }).pos())
    }
}

/// Exact size of this family for `q` (module doc).
pub fn size(q: &Question) -> Size {
    let kl = super::profile_len(q) as u64 * q.grid.diameter();
    Size::new(kl, kl)
}
