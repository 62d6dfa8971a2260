//! Families `map-choice` and `map-nonexp`: a nonexpansive function D → D.
//!
//! **Variables.** `m(z, w)` for z, w ∈ D: f(z) = w (`N²`, registered by
//! `map-choice` in the order z, then w, both lexicographic).
//!
//! **Clauses.**
//! - `map-choice`: for each z, `∨_w m(z, w)` (f(z) exists) and
//!   `¬m(z, w) ∨ ¬m(z, w')` for `w < w'` (it is unique).
//!   Count: `N + N·C(N, 2)`.
//! - `map-nonexp`: for each unordered pair `z < z'` and each ordered pair
//!   `(w, w')` with `d(w, w') > d(z, z')`, the clause `¬m(z, w) ∨ ¬m(z', w')`.
//!   Count: `Σ_{z<z'} #{(w, w') ∈ D² : d(w, w') > d(z, z')}`, computed from
//!   the sorted list of the `N²` ordered distances. At most `N²·(N² − N)/2`;
//!   pairs at the diameter of D contribute nothing.
//!
//! **Soundness.** These are the definitions: a model's `m` is the graph of a
//! function with ‖f(z) − f(z')‖∞ ≤ ‖z − z'‖∞ for every pair, and every such
//! function satisfies them. Pairs with z = z' need nothing beyond uniqueness.

use crate::cnf::{Size, Var};
use crate::encode::{Encoder, Term};
use crate::varmap::Meaning;

use super::{Domain, pairs_of};

/// Label of the exactly-one-image family.
pub const FAMILY_CHOICE: &str = "map-choice";
/// Label of the nonexpansiveness family.
pub const FAMILY_NONEXP: &str = "map-nonexp";

/// Registers `m(z, w)` and adds exactly-one per z.
pub fn add_choice(e: &mut Encoder, dom: &Domain) {
    let pts = dom.set.points();
    let n = pts.len();
    let mut row: Vec<Var> = Vec::with_capacity(n);
    for z in pts {
        row.clear();
        for w in pts {
            row.push(e.var(Meaning::Map {
                z: z.clone(),
                w: w.clone(),
            }));
        }
        let alo: Vec<Term> = row.iter().map(|v| Term::Lit(v.pos())).collect();
        e.clause(&alo);
        for a in 0..n {
            for b in a + 1..n {
                e.clause(&[row[a].neg().into(), row[b].neg().into()]);
            }
        }
    }
}

/// Size of [`add_choice`]: `N²` variables, `N + N·C(N, 2)` clauses.
pub fn size_choice(n: usize) -> Size {
    let n64 = n as u64;
    Size::new(n64 * n64, n64 + n64 * pairs_of(n))
}

/// Forbids every pair of images farther apart than their arguments; `m` is
/// the `N × N` table of map variables.
pub fn add_nonexp(e: &mut Encoder, dom: &Domain, m: &[Var]) {
    let n = dom.len();
    for z in 0..n {
        for z2 in z + 1..n {
            let r = dom.d(z, z2);
            for w in 0..n {
                for w2 in 0..n {
                    if dom.d(w, w2) > r {
                        e.clause(&[m[z * n + w].neg().into(), m[z2 * n + w2].neg().into()]);
                    }
                }
            }
        }
    }
}

/// Size of [`add_nonexp`]: for each unordered pair `{z, z'}`, the ordered
/// pairs `(w, w')` with `d(w, w') > d(z, z')`, counted on the sorted table
/// of all `N²` distances.
pub fn size_nonexp(dom: &Domain) -> Size {
    let n = dom.len();
    let mut all = dom.dist.clone();
    all.sort_unstable();
    let mut clauses = 0u64;
    for z in 0..n {
        for z2 in z + 1..n {
            let r = dom.d(z, z2);
            let at_most = all.partition_point(|&d| d <= r);
            clauses += (all.len() - at_most) as u64;
        }
    }
    Size::clauses(clauses)
}
