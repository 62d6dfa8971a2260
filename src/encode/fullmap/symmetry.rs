//! Families `fm-rotate` and `fm-isometry`: symmetry breaking for full maps.
//!
//! **fm-rotate** (option `rotate`, p ≥ 2): x_0 is the smallest point of the
//! orbit in the numbering of D. Auxiliaries `a(w)` for `1 ≤ w < N` mean "the
//! number of x_0 is at least w" in one direction: `o(0, w) → a(w)` and
//! `a(w + 1) → a(w)`, so x_0 = z forces a(w) for all w ≤ z; `a(0)` is the
//! constant true. Then `¬o(i, w) ∨ ¬a(w)` for `1 ≤ i < p`, `0 ≤ w < N`
//! forbids x_i ≤ x_0. Count: `N − 1` variables,
//! `(N − 1) + (N − 2) + (p − 1)·N` clauses (the `w = 0` ones are units).
//!
//! **fm-isometry** (option `isometry`): x_0 is the smallest point of its
//! class under the ambient isometries G of D (signed coordinate permutations
//! with a translation, mapping D onto D). Units `¬o(0, z)` for every z that
//! is not the least of its G-orbit. Count: `N − (number of G-orbits)`.
//!
//! **Soundness.** If f is nonexpansive on D with orbit x_0..x_{p−1} and σ is
//! an isometry of D, then σ∘f∘σ⁻¹ is nonexpansive on D with orbit σ(x_i),
//! and rotating the indices gives another orbit of f. Take any solution; let
//! z* be the least point among all σ(x_i), σ ∈ G, and pick σ, i with
//! σ(x_i) = z*. The conjugated map with the orbit started at σ(x_i) has
//! x_0 = z*, the least point of its orbit (fm-rotate) and the least of its
//! G-class, since a smaller image τ(z*) = τσ(x_i) would contradict the choice
//! of z* (fm-isometry). Each break alone is sound by the same argument with
//! G trivial or with no rotation.

use crate::cnf::{Size, Var};
use crate::encode::{Encoder, Term};

use super::{Domain, ISOMETRY_LIMIT};

/// Label of the rotation break.
pub const ROTATE: &str = "fm-rotate";
/// Label of the isometry break.
pub const ISOMETRY: &str = "fm-isometry";

/// Adds the rotation break; `o` is the `p × N` table of orbit variables.
pub fn add_rotate(e: &mut Encoder, dom: &Domain, p: usize, o: &[Var]) {
    let n = dom.len();
    let mut a: Vec<Term> = vec![Term::True];
    for _ in 1..n {
        a.push(e.aux(ROTATE));
    }
    for w in 1..n {
        e.clause(&[o[w].neg().into(), a[w]]);
    }
    for w in 1..n.saturating_sub(1) {
        e.clause(&[!a[w + 1], a[w]]);
    }
    for i in 1..p {
        for w in 0..n {
            e.clause(&[o[i * n + w].neg().into(), !a[w]]);
        }
    }
}

/// Size of [`add_rotate`]: `N − 1` variables, `(N − 1) + (N − 2)⁺ + (p − 1)·N` clauses.
pub fn size_rotate(n: usize, p: usize) -> Size {
    let n = n as u64;
    Size::new(n - 1, (n - 1) + n.saturating_sub(2) + (p as u64 - 1) * n)
}

/// For each point number, the least number in its class under the ambient
/// isometries (every point its own class when the group is not computed).
pub fn class_minima(dom: &Domain) -> Vec<usize> {
    let group = dom.set.isometries(ISOMETRY_LIMIT).unwrap_or_default();
    (0..dom.len())
        .map(|z| group.iter().map(|s| s[z]).min().unwrap_or(z))
        .collect()
}

/// Adds the isometry break, given [`class_minima`].
pub fn add_isometry(e: &mut Encoder, minima: &[usize], o: &[Var]) {
    for (z, &min) in minima.iter().enumerate() {
        if min != z {
            e.clause(&[o[z].neg().into()]);
        }
    }
}

/// Size of [`add_isometry`]: one unit per point that is not the least of
/// its class, `N` less the number of classes, given the class minima.
pub fn size_isometry(minima: &[usize]) -> Size {
    let classes = minima.iter().enumerate().filter(|&(z, &m)| m == z).count();
    Size::clauses((minima.len() - classes) as u64)
}
