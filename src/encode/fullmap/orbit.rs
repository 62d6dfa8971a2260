//! Families `orbit-place` and `orbit-step`: p distinct points moved along by f.
//!
//! **Variables.** `o(i, z)` for positions `0 ≤ i < p` and z ∈ D: x_i = z
//! (`pN`, registered by `orbit-place` in the order i, then z).
//!
//! **Clauses.**
//! - `orbit-place`: for each i, `∨_z o(i, z)` and `¬o(i, z) ∨ ¬o(i, z')`
//!   for `z < z'` (x_i is one point); for each z, `¬o(i, z) ∨ ¬o(j, z)` for
//!   `i < j` (the points are distinct). Count: `p + p·C(N, 2) + N·C(p, 2)`.
//! - `orbit-step`: for each i, z, w, `¬o(i, z) ∨ ¬m(z, w) ∨ o(i + 1 mod p, w)`:
//!   f(x_i) = x_{i+1}. For p = 1 the clauses with w = z are tautologies and
//!   are left out. Count: `p·N² − [p = 1]·N`.
//!
//! **Soundness.** With `map-choice`, f(x_i) is the unique w with m(x_i, w),
//! so the step clauses say exactly x_{i+1} = f(x_i) (indices mod p). Distinct
//! x_0..x_{p−1} with f(x_{p−1}) = x_0 means x_0 has minimal period p, and
//! every periodic point of minimal period p gives such positions.

use crate::cnf::{Size, Var};
use crate::encode::{Encoder, Term};
use crate::varmap::Meaning;

use super::{Domain, pairs_of};

/// Label of the placement family.
pub const FAMILY_PLACE: &str = "orbit-place";
/// Label of the step family.
pub const FAMILY_STEP: &str = "orbit-step";

/// Registers `o(i, z)`, exactly one point per position, distinct points.
pub fn add_place(e: &mut Encoder, dom: &Domain, p: usize) {
    let n = dom.len();
    let mut o: Vec<Var> = Vec::with_capacity(p * n);
    for i in 0..p {
        for z in dom.set.points() {
            o.push(e.var(Meaning::At { i, z: z.clone() }));
        }
    }
    for i in 0..p {
        let row = &o[i * n..(i + 1) * n];
        let alo: Vec<Term> = row.iter().map(|v| Term::Lit(v.pos())).collect();
        e.clause(&alo);
        for a in 0..n {
            for b in a + 1..n {
                e.clause(&[row[a].neg().into(), row[b].neg().into()]);
            }
        }
    }
    for z in 0..n {
        for i in 0..p {
            for j in i + 1..p {
                e.clause(&[o[i * n + z].neg().into(), o[j * n + z].neg().into()]);
            }
        }
    }
}

/// Size of [`add_place`]: `pN` variables, `p + p·C(N, 2) + N·C(p, 2)` clauses.
pub fn size_place(n: usize, p: usize) -> Size {
    let (n64, p64) = (n as u64, p as u64);
    Size::new(p64 * n64, p64 + p64 * pairs_of(n) + n64 * pairs_of(p))
}

/// `o(i, z) ∧ m(z, w) → o(i + 1, w)`; `m` and `o` are the variable tables.
pub fn add_step(e: &mut Encoder, dom: &Domain, p: usize, m: &[Var], o: &[Var]) {
    let n = dom.len();
    for i in 0..p {
        let next = (i + 1) % p;
        for z in 0..n {
            for w in 0..n {
                if p == 1 && w == z {
                    continue;
                }
                e.clause(&[
                    o[i * n + z].neg().into(),
                    m[z * n + w].neg().into(),
                    o[next * n + w].pos().into(),
                ]);
            }
        }
    }
}

/// Size of [`add_step`]: `pN²` clauses, less the `N` of the form
/// `o ∧ m(z, z) → o` that `p = 1` leaves out.
pub fn size_step(n: usize, p: usize) -> Size {
    let n = n as u64;
    let skipped = if p == 1 { n } else { 0 };
    Size::clauses(p as u64 * n * n - skipped)
}
