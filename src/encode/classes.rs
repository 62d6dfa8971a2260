//! Family `pack-classes`: profiles whose close offsets form a subgroup.
//!
//! Fix a threshold `t` and call an offset `k` *close* when `g(k) ≤ t` and
//! *far* otherwise. Suppose that for some `d | p`, `1 ≤ d < p`, the close
//! offsets are exactly the nonzero multiples of `d`. Then the positions fall
//! into `d` residue classes of `s = p/d` points each, with every pair inside a
//! class close and every pair across classes far. Inside a class the points
//! are pairwise within `t`, so (coordinate by coordinate, since a set of
//! values of spread at most `t` fits one interval of length `t`) they lie in
//! one window of side `t` (see [`super::packing`]); across classes no window
//! holds two points. So the sets of windows the classes meet are disjoint, and
//! if `c_t(s)` is the least number of windows that `s` distinct points of one
//! window can meet together,
//!
//! ```text
//!     d · c_t(p/d)  ≤  W_t.
//! ```
//!
//! When this fails the profile is impossible and one clause says so:
//! `⋁_{d∤k} ¬G[k,t+1] ∨ ⋁_{d|k} G[k,t+1]` over `1 ≤ k ≤ ⌊p/2⌋`.
//!
//! On `{−1,0,1}^n` with `t = 1` the windows are the corner boxes, a point `z`
//! lies in the windows of the corners `v` that agree with `z` where `z ≠ 0`,
//! and the points of the window of `v` correspond to subsets of coordinates
//! (their zero sets). `s` distinct points of that window meet the windows of
//! the down-closure of their zero sets, which has at least `s` members, so
//! `c_1(s) = s` and every subgroup profile with `p > 2^n` is impossible: for
//! `d = 1` (all distances 1) this is the pigeonhole principle, for `p = 18`,
//! `n = 4` it also rules out "distance 1 exactly at even offsets" (two classes
//! of 9), "at multiples of 3" and "at multiples of 6". Resolution needs
//! exponentially long refutations of such pigeonhole cores; one clause per
//! profile spares the solver from finding them.
//!
//! `c_t(s)` is not computed as a number: [`classes_meet_at_least`] decides
//! `c_t(s) ≥ ⌊W_t/d⌋ + 1` window by window. When the points of a window can
//! each be given a distinct window containing them (a saturating matching),
//! any `s` of them meet at least `s` windows, which settles the case
//! `s ≥ ⌊W_t/d⌋ + 1` at once (on `{−1,0,1}^n` this is every `p > 2^n`).
//! Otherwise a search, over the unions of
//! window sets smaller than that bound, asking whether one of them holds `s`
//! points. The search has a budget of unions visited; when it runs out the
//! bound is taken as unproven and no clause is added, which keeps the family
//! sound.
//!
//! Variables: none. Clauses: one per pair `(t, d)`, `1 ≤ t < L` with
//! `W_t ≤` [`packing::MAX_WINDOWS`], `d | p`, `d < p`, for which the search
//! proves the bound ([`ruled_out`]; the encoding's context runs the search
//! once, for [`size`] and [`add`] alike).
//!
//! Soundness: each clause is the negation of a profile that the inequality
//! above rules out on every isometric cycle, so no solution is lost.

use super::{Encoder, packing, profile};
use crate::cnf::Size;
use crate::question::Question;

/// The family's label.
pub const FAMILY: &str = "pack-classes";

/// Unions the window search may visit for one `(t, d)` before giving up,
/// divided by the words (64 windows each) that one union takes.
const SEARCH_BUDGET: u64 = 2_000_000;

/// The pairs `(t, d)` for which the family adds a clause.
pub fn ruled_out(q: &Question) -> Vec<(u64, usize)> {
    let p = q.period;
    if p < 2 {
        return Vec::new();
    }
    let mut out = Vec::new();
    for t in 1..q.grid.diameter() {
        let (total, _) = packing::windows(&q.grid, t);
        if total > packing::MAX_WINDOWS {
            continue;
        }
        let sets = packing::window_sets(&q.grid, t);
        for d in (1..p).filter(|&d| p.is_multiple_of(d)) {
            let need = total / d as u64 + 1;
            if classes_meet_at_least(&sets, total, p / d, need) {
                out.push((t, d));
            }
        }
    }
    out
}

/// Adds one clause per profile ruled out by [`ruled_out`], given as `ruled`.
pub fn add(e: &mut Encoder, q: &Question, ruled: &[(u64, usize)]) {
    for &(t, d) in ruled {
        let clause: Vec<_> = (1..=q.period / 2)
            .map(|k| {
                let far = profile::ge(e, q, k, t as i64 + 1);
                if k % d == 0 { far } else { !far }
            })
            .collect();
        e.clause(&clause);
    }
}

/// Whether every `s` distinct grid points lying in one common window meet at
/// least `need` windows together. `sets[z]` lists the windows containing
/// grid point `z`; `windows` is their number. `false` when some `s` points of
/// a window meet fewer, when no window holds `s` points is `true`, and
/// `false` as well when the search exceeds its budget (unproven).
pub fn classes_meet_at_least(sets: &[Vec<u32>], windows: u64, s: usize, need: u64) -> bool {
    if need <= 1 || s == 0 {
        return need <= 1;
    }
    let words = (windows as usize).div_ceil(64);
    let masks: Vec<Vec<u64>> = sets
        .iter()
        .map(|ids| {
            let mut m = vec![0u64; words];
            for &w in ids {
                m[w as usize / 64] |= 1 << (w % 64);
            }
            m
        })
        .collect();
    // The budget counts words of stored unions, so memory stays bounded
    // (about 100 MB at most) however many windows the grid has.
    let mut budget = SEARCH_BUDGET / words.max(1) as u64;
    for w0 in 0..windows as u32 {
        let inside: Vec<usize> = (0..sets.len())
            .filter(|&z| sets[z].binary_search(&w0).is_ok())
            .collect();
        if inside.len() < s {
            continue;
        }
        if need > windows {
            // Every union is smaller than `need`: s points here are too few windows.
            return false;
        }
        if s as u64 >= need && saturating_matching(sets, &inside) {
            // Each point has a window of its own, so any s of them meet at
            // least s ≥ need windows (Hall's condition, read backwards).
            continue;
        }
        match fewer_exist(&masks, &inside, s, need, &mut budget) {
            Some(false) => {}
            Some(true) | None => return false,
        }
    }
    true
}

/// Whether the points `inside` can each be given a distinct window that
/// contains them (a matching saturating them in the point–window incidence
/// graph; Kuhn's augmenting paths). If so, any set of them meets at least as
/// many windows as it has points. On `{−1,0,1}^n` with `t = 1` the point
/// with zero set `Z` in the corner box of `v` gets the box of `v` flipped on
/// `Z`, so this always succeeds there.
fn saturating_matching(sets: &[Vec<u32>], inside: &[usize]) -> bool {
    fn augment(
        z: usize,
        sets: &[Vec<u32>],
        owner: &mut std::collections::HashMap<u32, usize>,
        seen: &mut std::collections::HashSet<u32>,
    ) -> bool {
        for &w in &sets[z] {
            if seen.insert(w) {
                let free = match owner.get(&w) {
                    None => true,
                    Some(&other) => augment(other, sets, owner, seen),
                };
                if free {
                    owner.insert(w, z);
                    return true;
                }
            }
        }
        false
    }
    let mut owner = std::collections::HashMap::new();
    inside.iter().all(|&z| {
        let mut seen = std::collections::HashSet::new();
        augment(z, sets, &mut owner, &mut seen)
    })
}

/// Is there a union `U` of fewer than `need` windows that contains the
/// window sets of at least `s` of the points `inside`? The search runs over
/// the unions themselves (a union is reached by adding the window set of one
/// point not yet inside it) and visits each union once; many sets of points
/// share a union, which is what keeps it small. Every set of points is
/// found through its own union, whose partial unions are no larger, so the
/// search is complete. `None` when it visits more than `budget` unions.
fn fewer_exist(
    masks: &[Vec<u64>],
    inside: &[usize],
    s: usize,
    need: u64,
    budget: &mut u64,
) -> Option<bool> {
    let size = |u: &[u64]| -> u64 { u.iter().map(|w| u64::from(w.count_ones())).sum() };
    let within = |m: &[u64], u: &[u64]| m.iter().zip(u).all(|(a, b)| a & !b == 0);
    let start = vec![0u64; masks.first().map_or(0, Vec::len)];
    let mut seen: std::collections::HashSet<Vec<u64>> = std::collections::HashSet::new();
    let mut stack = vec![start.clone()];
    seen.insert(start);
    while let Some(u) = stack.pop() {
        *budget = budget.checked_sub(1)?;
        let covered = inside.iter().filter(|&&z| within(&masks[z], &u)).count();
        if covered >= s {
            return Some(true);
        }
        for &z in inside {
            if within(&masks[z], &u) {
                continue;
            }
            let next: Vec<u64> = u.iter().zip(&masks[z]).map(|(a, b)| a | b).collect();
            if size(&next) < need && seen.insert(next.clone()) {
                stack.push(next);
            }
        }
    }
    Some(false)
}

/// Exact size of this family, given [`ruled_out`] as `ruled`: one clause each.
pub fn size(ruled: &[(u64, usize)]) -> Size {
    Size::clauses(ruled.len() as u64)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;

    fn q(spec: &str, dim: usize, p: usize) -> Question {
        Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap()
    }

    #[test]
    fn distinct_points_of_a_corner_box_meet_as_many_corner_boxes() {
        // c_1(s) = s on {−1,0,1}^n: s points meet at least s windows, and
        // some s points (a down-set of zero sets) meet exactly s.
        let g = Grid::parse("-1..1", Some(3)).unwrap();
        let sets = packing::window_sets(&g, 1);
        for s in 1..=8 {
            assert!(classes_meet_at_least(&sets, 8, s, s as u64), "s = {s}");
            assert!(!classes_meet_at_least(&sets, 8, s, s as u64 + 1), "s = {s}");
        }
    }

    #[test]
    fn subgroup_profiles_above_two_to_the_n_are_ruled_out() {
        // p = 18 on {−1,0,1}^4: d = 1, 2, 3, 6 give 18 > 16; d = 9 gives
        // nine classes of two, 9 · 2 = 18 > 16 as well.
        assert_eq!(
            ruled_out(&q("-1..1", 4, 18)),
            vec![(1, 1), (1, 2), (1, 3), (1, 6), (1, 9)]
        );
        // p = 16 = 2^4 is realised, so no subgroup profile may be excluded.
        assert_eq!(ruled_out(&q("-1..1", 4, 16)), vec![]);
        // p = 9 on {−1,0,1}^3: d = 1 and d = 3 (3 · 3 > 8).
        assert_eq!(ruled_out(&q("-1..1", 3, 9)), vec![(1, 1), (1, 3)]);
        assert_eq!(size(&ruled_out(&q("-1..1", 4, 18))).clauses, 5);
        // p = 33 on {−1,0,1}^5: d = 3 needs eleven points of a 32-point
        // corner box meeting at most ten boxes; a plain walk over point sets
        // ran out of budget here.
        assert_eq!(ruled_out(&q("-1..1", 5, 33)), vec![(1, 1), (1, 3), (1, 11)]);
        // p = 70 on {−1,0,1}^6: every proper divisor, settled by matchings
        // (a walk over unions alone runs out of budget for d = 1 and 2).
        assert_eq!(
            ruled_out(&q("-1..1", 6, 70)),
            [1, 2, 5, 7, 10, 14, 35].map(|d| (1, d)).to_vec()
        );
    }

    #[test]
    fn the_family_is_active_where_cycles_exist() {
        // The brute-force agreement tests (`soundness.rs`) only test this
        // family if it adds clauses to questions that have solutions. On
        // {0,1}^2 × {0,1,2} (a box those tests cover) with p = 6 there are
        // two windows of side 1, so three classes of close pairs, far from
        // each other, cannot exist; 6-cycles do.
        let question = Question::new(Grid::parse("0..1,0..1,0..2", None).unwrap(), 6).unwrap();
        assert_eq!(ruled_out(&question), vec![(1, 3)]);
        assert!(crate::brute::find_cycle(question.grid.ranges(), 6).is_some());
    }

    #[test]
    fn the_clause_reads_the_profile() {
        let question = q("-1..1", 3, 9);
        let enc = crate::encode::encode(
            &question,
            &crate::encode::EncodeOptions::default(),
            u64::MAX,
        )
        .unwrap();
        let fam = enc.families.iter().find(|f| f.family == FAMILY);
        assert_eq!(fam.map(|f| f.clauses), Some(2));
    }

    #[test]
    fn no_brute_force_cycle_has_an_excluded_profile() {
        // Independent of the encoding: the profiles `ruled_out` names never
        // occur on cycles that brute force finds.
        let mut tested = 0;
        for (spec, max_p) in [
            ("0..1,0..1,0..2", 8),
            ("0..1,0..2,0..3", 8),
            ("-1..1,-1..1,0..1", 8),
        ] {
            let g = Grid::parse(spec, None).unwrap();
            for p in 2..=max_p {
                let rules = ruled_out(&Question::new(g.clone(), p).unwrap());
                for cycle in crate::brute::all_cycles(g.ranges(), p, 300) {
                    let dist = |a: &[i64], b: &[i64]| crate::brute::sup_distance(a, b) as u64;
                    for &(t, d) in &rules {
                        let subgroup =
                            (1..=p / 2).all(|k| (dist(&cycle[0], &cycle[k]) <= t) == (k % d == 0));
                        assert!(!subgroup, "{spec} p={p} t={t} d={d}: {cycle:?}");
                    }
                    tested += 1;
                }
            }
        }
        assert!(tested > 300, "only {tested} cycles");
    }
}
