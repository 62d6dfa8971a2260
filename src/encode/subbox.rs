//! Family `sub-box`: a cycle whose distances stay below the diameter lives
//! in a smaller box, and inherits that box's profile exclusions.
//!
//! Let the box `D` have sides `s_c` and diameter `L = max_c s_c`, and take
//! `1 ≤ m < L`. If an isometric cycle on `D` has `g(k) ≤ m` for every `k`,
//! then in each coordinate any two of its points differ by at most
//! `min(m, s_c)`; translating coordinate `c` so that its least value is the
//! box's least value `a_c` moves the cycle into the box
//!
//! ```text
//!     D_m = Π_c [a_c, a_c + min(m, s_c)]
//! ```
//!
//! (a sub-box of `D`), and a translation keeps every distance, so the moved
//! cycle is an isometric cycle on `D_m` with the same profile. Hence every
//! clause over the profile that holds on *every* isometric cycle of `D_m`
//! holds, weakened by "some distance exceeds `m`", on every cycle of `D`:
//!
//! ```text
//!     C  ∨  ⋁_{1 ≤ k ≤ K} G[k, m+1]
//! ```
//!
//! The family adds, for each `m`, those clauses `C` of four families
//! computed on `D_m`: `pack-classes` and `pack-nested`
//! ([`super::classes`]) and `pack-gap` ([`super::gaps`]; each clause
//! negates a profile pattern that no cycle of `D_m` has, by window
//! counting) and `biclique-cover`
//! ([`super::bicliques`]; each negates a pattern with a fooling set of far
//! pairs at `D_m`'s diameter `m`, which no cycle of `D_m` has). All four are
//! proved in `encodings/redundant.md` for every cycle of their box, with no
//! symmetry breaking assumed, which is what the argument needs. When `D_m`
//! has fewer than `p` points, `C` is the empty clause: no `p` distinct
//! points fit there, and the family's clause says only that some distance
//! exceeds `m`. Each part follows the switch of its own family
//! ([`Carried`]).
//!
//! Why it helps: the window counts of `D` are weak for cycles that use
//! little of it (on `{0,1,2,3}^4` there are 81 windows of side 1, on
//! `{0,1,2}^4` only 16). On `{0,1,2,3}^4`, `p = 18`, the profile "distance 1
//! exactly at the multiples of 3, else 2" is excluded on `D_2 = {0,1,2}^4`
//! by `pack-classes` (three classes of six points each need eighteen corner
//! boxes of the sixteen); without this family CaDiCaL needed about two
//! minutes for that one profile, with it none.
//!
//! `biclique-cover` on `D_m` walks the top patterns lex-least under the
//! multiplier maps, and adds the images of its exclusions unless `m = 2` and
//! the multiplier break is on, as on a box of diameter `m` (profiles with
//! values in `{1, 2}` are lex-least exactly when their top patterns are).
//! Images only add clauses; leaving them out costs completeness of the
//! exclusion, never soundness.
//!
//! The family applies to nonexpansive questions on boxes of diameter at
//! least 3 (on a box of diameter 2 the only sub-box is `{0,1}^n`-like, with
//! at most `2^n` points, which `count-occupancy` already handles).
//!
//! Variables: none. Clauses: one per clause `C` found over all `m`
//! ([`size`]); each has the `K` guard literals and those of `C`.
//!
//! Soundness: the argument above, and each inherited family's own proof on
//! `D_m`. Tested against every cycle that brute force finds on boxes with a
//! side of four points.

use super::profile::ProfileLit;
use super::{Encoder, bicliques, classes, gaps, profile};
use crate::cnf::Size;
use crate::grid::Grid;
use crate::question::{MapClass, Question};

/// The family's label.
pub const FAMILY: &str = "sub-box";

/// Which families of the sub-boxes the family carries over (each follows
/// its own switch), and whether the multiplier break is on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Carried {
    /// `pack-classes`.
    pub classes: bool,
    /// `pack-nested`.
    pub nested: bool,
    /// `biclique-cover`.
    pub bicliques: bool,
    /// `pack-gap`.
    pub gaps: bool,
    /// Whether `sym-multiplier` is on (see the module docs on images).
    pub multiplier: bool,
}

/// Whether the family can act on `q` (see the module docs).
pub fn applies_to(q: &Question) -> bool {
    q.class == MapClass::Nonexpansive
        && q.points.is_none()
        && q.grid.diameter() >= 3
        && q.period >= 2
}

/// The sub-box `D_m` of `grid`: coordinate `c` keeps its least value and
/// spans `min(m, s_c)`; `None` only if that box cannot be built.
pub fn sub_box(grid: &Grid, m: u64) -> Option<Grid> {
    let ranges: Vec<(i64, i64)> = grid
        .ranges()
        .iter()
        .map(|&(lo, hi)| (lo, lo + (hi - lo).min(m as i64)))
        .collect();
    Grid::new(ranges).ok()
}

/// The family's clauses for `q` (empty where it does not apply), in the
/// order `m = 1, 2, …`; within one `m`, `pack-classes` and `pack-nested` in
/// their order, then `biclique-cover`.
pub fn ruled_out(q: &Question, carried: Carried) -> Vec<Vec<ProfileLit>> {
    if !applies_to(q) {
        return Vec::new();
    }
    let p = q.period;
    let k_max = p / 2;
    let mut out = Vec::new();
    for m in 1..q.grid.diameter() {
        let Some(gm) = sub_box(&q.grid, m) else {
            continue;
        };
        let mut inner: Vec<Vec<ProfileLit>> = Vec::new();
        if (p as u128) > gm.num_points() {
            inner.push(Vec::new());
        } else if let Ok(qm) = Question::new(gm, p) {
            // One window search serves both families that need it.
            let ruled = if carried.classes || carried.nested || carried.gaps {
                classes::ruled_out(&qm)
            } else {
                Vec::new()
            };
            for x in &ruled {
                if (x.u == 0 && carried.classes) || (x.u >= 1 && carried.nested) {
                    inner.push(classes::clause(p, x));
                }
            }
            if carried.gaps {
                for x in gaps::ruled_out(&qm, &ruled) {
                    inner.push(gaps::clause(p, &x));
                }
            }
            if carried.bicliques && bicliques::applies_to(&qm) {
                let images = !(m == 2 && carried.multiplier);
                for x in bicliques::ruled_out(&qm, images, bicliques::WalkTests::FOOLING) {
                    inner.push(bicliques::clause(m as i64, &x));
                }
            }
        }
        for mut c in inner {
            c.extend((1..=k_max).map(|k| ProfileLit::ge(k, m as i64 + 1)));
            out.push(c);
        }
    }
    out
}

/// The family's size: no variables, one clause per entry of [`ruled_out`].
pub fn size(clauses: &[Vec<ProfileLit>]) -> Size {
    Size {
        vars: 0,
        clauses: clauses.len() as u64,
    }
}

/// Adds the clauses of [`ruled_out`].
pub fn add(e: &mut Encoder, q: &Question, clauses: &[Vec<ProfileLit>]) {
    profile::add_clauses(e, q, clauses);
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(spec: &str, dim: usize, p: usize) -> Question {
        Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap()
    }

    const ALL: Carried = Carried {
        classes: true,
        nested: true,
        bicliques: true,
        gaps: true,
        multiplier: true,
    };

    #[test]
    fn the_sub_box_keeps_low_faces_and_caps_sides() {
        let grid = Grid::parse("0..3,-2..2,5..5", None).unwrap();
        let sub = sub_box(&grid, 2).unwrap();
        assert_eq!(sub.ranges(), &[(0, 2), (-2, 0), (5, 5)]);
    }

    #[test]
    fn the_family_acts_from_diameter_three() {
        assert!(ruled_out(&q("-1..1", 4, 18), ALL).is_empty());
        assert!(!ruled_out(&q("0..3", 4, 18), ALL).is_empty());
        // Topical questions are not cycles of a box's sup-norm.
        let mut t = q("0..3", 4, 18);
        t.class = MapClass::Topical;
        assert!(ruled_out(&t, ALL).is_empty());
    }

    #[test]
    fn too_few_points_leaves_only_the_guard() {
        // {0,1}^4 has 16 points: with p = 18 some distance exceeds 1.
        let c = ruled_out(&q("0..3", 4, 18), ALL);
        let guard: Vec<ProfileLit> = (1..=9).map(|k| ProfileLit::ge(k, 2)).collect();
        assert_eq!(c[0], guard);
    }

    #[test]
    fn counts_on_the_four_point_box() {
        // p = 18 on {0,1,2,3}^4: m = 1 gives the guard alone; m = 2 gives
        // {0,1,2}^4's five subgroup patterns (as on {−1,0,1}^4, where
        // `pack-classes` has five clauses) and its 103 biclique exclusions
        // (as `biclique-cover` on {−1,0,1}^4 p = 18 with the break on).
        let c = ruled_out(&q("0..3", 4, 18), ALL);
        assert_eq!(c.len(), 1 + 5 + 103);
        let no_bicliques = Carried {
            bicliques: false,
            ..ALL
        };
        assert_eq!(ruled_out(&q("0..3", 4, 18), no_bicliques).len(), 1 + 5);
    }

    #[test]
    fn the_hard_profile_of_p18_is_excluded() {
        // g = (2, 2, 1) repeated: distance 1 exactly at multiples of 3.
        let g: Vec<i64> = (1..=9).map(|k| if k % 3 == 0 { 1 } else { 2 }).collect();
        let c = ruled_out(&q("0..3", 4, 18), ALL);
        assert!(
            c.iter()
                .any(|cl| cl.iter().all(|l| l.holds(&g) == Some(false)))
        );
    }

    #[test]
    fn brute_force_cycles_satisfy_every_clause() {
        let mut tested = 0;
        let mut clauses = 0;
        for (spec, max_p) in [
            ("0..3,0..1", 8),
            ("0..3,0..2", 8),
            ("0..3,0..1,0..1", 8),
            ("0..3,0..3", 7),
            ("0..4,0..2", 7),
        ] {
            let g = Grid::parse(spec, None).unwrap();
            for p in 2..=max_p {
                let question = Question::new(g.clone(), p).unwrap();
                let ruled = ruled_out(&question, ALL);
                clauses += ruled.len();
                for cycle in crate::brute::all_cycles(g.ranges(), p, 400) {
                    let profile: Vec<i64> = (1..=p / 2)
                        .map(|k| crate::brute::sup_distance(&cycle[0], &cycle[k]))
                        .collect();
                    for c in &ruled {
                        let holds = c.iter().any(|l| l.holds(&profile) == Some(true));
                        assert!(holds, "{spec} p={p} {c:?}: {cycle:?}");
                    }
                    tested += 1;
                }
            }
        }
        assert!(
            tested > 500 && clauses > 20,
            "{tested} cycles, {clauses} clauses"
        );
    }
}
