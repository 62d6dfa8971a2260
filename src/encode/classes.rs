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
//!
//! ## Two thresholds: family `pack-nested`
//!
//! On a box whose values take more than two steps, a class can be close at
//! `t` and still spread out inside its window. Take `0 ≤ u < t` and ask, in
//! addition, that every close offset be far at `u` (`g(k) > u` for `d | k`).
//! A class is then `s = p/d` points of one window of side `t`, pairwise more
//! than `u` apart. Two consequences, either of which excludes the pattern:
//!
//! - at most [`far_packing`]`(t, u) = Π_c ⌈(t_c + 1)/(u + 1)⌉` such points fit
//!   in one window (cut each coordinate into runs of `u + 1` values; two
//!   points of a cell are within `u`), so `s` larger than that is impossible
//!   whatever `d` is, and this needs no window table;
//! - the classes meet disjoint sets of windows as before, so
//!   `d · c_{t,u}(s) ≤ W_t`, with `c_{t,u}(s)` the least number of windows that
//!   `s` points of one window, pairwise more than `u` apart, meet together
//!   ([`far_classes_meet_at_least`]).
//!
//! The clause is `⋁_{d∤k} ¬G[k,t+1] ∨ ⋁_{d|k} (G[k,t+1] ∨ ¬G[k,u+1])`. For
//! each `(t, d)` only the least `u` that is ruled out gets a clause (larger
//! `u` describe fewer profiles); `u = 0` is the family `pack-classes`, `u ≥ 1`
//! the family `pack-nested`, which exists only on boxes with a side of at
//! least 3 (`1 ≤ u < t < L`). Example: `p = 17` on `{0,1,2,3}^4` with every
//! distance 2 (`t = 2`, `u = 1`, `d = 1`) would put 17 points pairwise at
//! distance 2 into a window `{a, a+1, a+2}^4`, which holds at most `2^4`;
//! `c_2(17) ≤ 16 = W_2` there, so `pack-classes` misses it. Soundness as
//! above: each clause negates a pattern no isometric cycle has.

use super::profile::ProfileLit;
use super::{Encoder, packing, profile};
use crate::cnf::Size;
use crate::question::Question;

/// The family's label.
pub const FAMILY: &str = "pack-classes";

/// The label of the two-threshold patterns (`u ≥ 1`), a family of its own
/// so that it can be switched separately and its clauses counted apart.
pub const FAMILY_NESTED: &str = "pack-nested";

/// The patterns of one family: those with `u = 0` (`pack-classes`) or those
/// with `u ≥ 1` (`pack-nested`).
pub fn select(ruled: &[Excluded], nested: bool) -> Vec<Excluded> {
    ruled
        .iter()
        .copied()
        .filter(|x| (x.u >= 1) == nested)
        .collect()
}

/// Unions the window search may visit for one `(t, d)` before giving up,
/// divided by the words (64 windows each) that one union takes.
const SEARCH_BUDGET: u64 = 2_000_000;

/// One profile pattern the family excludes, at the thresholds `u < t`: the
/// offsets close at `t` are exactly the nonzero multiples of `d`, and every
/// one of them is far at `u` (`u = 0` asks nothing more, since every
/// distance is positive).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Excluded {
    /// The outer threshold: `k` is close when `g(k) ≤ t`.
    pub t: u64,
    /// The inner threshold: the close offsets all have `g(k) > u`.
    pub u: u64,
    /// The divisor of `p` whose nonzero multiples are the close offsets.
    pub d: usize,
}

/// The patterns for which the family adds a clause, in the order `t`, `d`.
/// For each `(t, d)` only the least inner threshold `u` that is ruled out is
/// listed: a pattern with a larger `u` asks more of the same profiles, so it
/// is implied.
pub fn ruled_out(q: &Question) -> Vec<Excluded> {
    let p = q.period;
    if p < 2 {
        return Vec::new();
    }
    let mut out = Vec::new();
    for t in 1..q.grid.diameter() {
        let (total, _) = packing::windows(&q.grid, t);
        let sets = (total <= packing::MAX_WINDOWS).then(|| packing::window_sets(&q.grid, t));
        for d in (1..p).filter(|&d| p.is_multiple_of(d)) {
            let s = p / d;
            let need = total / d as u64 + 1;
            let first = (0..t).find(|&u| {
                if u >= 1 && s as u64 > far_packing(&q.grid, t, u) {
                    return true;
                }
                let Some(sets) = &sets else { return false };
                if u == 0 {
                    classes_meet_at_least(sets, total, s, need)
                } else {
                    far_classes_meet_at_least(&q.grid, sets, total, s, need, u)
                }
            });
            if let Some(u) = first {
                out.push(Excluded { t, u, d });
            }
        }
    }
    out
}

/// The most points of one window of side `t` that are pairwise more than `u`
/// apart: `Π_c ⌈(t_c + 1)/(u + 1)⌉` with `t_c = min(t, s_c)`. (Cut each
/// coordinate's `t_c + 1` values into runs of `u + 1`; two points in one cell
/// are within `u`, and the cell corners nearest the window's origin attain
/// the count.)
pub fn far_packing(g: &crate::grid::Grid, t: u64, u: u64) -> u64 {
    (0..g.dim())
        .map(|c| (t.min(g.side(c)) + 1).div_ceil(u + 1))
        .fold(1u64, |acc, x| acc.saturating_mul(x))
}

/// The clause that excludes the pattern `x` in a `p`-cycle:
/// `⋁_{d∤k} ¬G[k,t+1] ∨ ⋁_{d|k} (G[k,t+1] ∨ ¬G[k,u+1])`, the last literal
/// only when `u ≥ 1`.
pub fn clause(p: usize, x: &Excluded) -> Vec<ProfileLit> {
    let (t, u) = (x.t as i64, x.u as i64);
    let mut clause = Vec::new();
    for k in 1..=p / 2 {
        if k % x.d != 0 {
            clause.push(ProfileLit::lt(k, t + 1));
            continue;
        }
        clause.push(ProfileLit::ge(k, t + 1));
        if u >= 1 {
            clause.push(ProfileLit::lt(k, u + 1));
        }
    }
    clause
}

/// Adds one clause per pattern of [`ruled_out`], given as `ruled` ([`clause`]).
pub fn add(e: &mut Encoder, q: &Question, ruled: &[Excluded]) {
    let clauses: Vec<Vec<ProfileLit>> = ruled.iter().map(|x| clause(q.period, x)).collect();
    profile::add_clauses(e, q, &clauses);
}

/// As [`classes_meet_at_least`], for sets of points that are also pairwise
/// more than `u` apart (`u ≥ 1`): whether every `s` such points of one window
/// meet at least `need` windows together. The search walks over such sets
/// in increasing point order, keeps the union of their windows, and drops a
/// branch once that union reaches `need` or too few candidates remain.
/// `false` when the budget of visited sets runs out (unproven).
pub fn far_classes_meet_at_least(
    g: &crate::grid::Grid,
    sets: &[Vec<u32>],
    windows: u64,
    s: usize,
    need: u64,
    u: u64,
) -> bool {
    if need <= 1 || s == 0 {
        return need <= 1;
    }
    let points: Vec<crate::grid::Point> = g.points().collect();
    let far = |a: usize, b: usize| {
        points[a]
            .iter()
            .zip(&points[b])
            .any(|(x, y)| x.abs_diff(*y) > u)
    };
    let mut budget = SEARCH_BUDGET;
    for w0 in 0..windows as u32 {
        let inside = points_inside(sets, w0);
        if inside.len() < s {
            continue;
        }
        if s as u64 >= need && saturating_matching(sets, &inside) {
            continue;
        }
        let search = FarSearch::new(sets, windows, &inside, &far, s, need);
        let all = Bits::all(inside.len());
        let union = vec![0u64; search.masks.first().map_or(0, Vec::len)];
        match search.fewer_exist(&all, &union, 0, &mut budget) {
            Some(false) => {}
            Some(true) | None => return false,
        }
    }
    true
}

/// A set of indices below some bound, one bit each.
type Bits = Vec<u64>;

/// Bit sets over indices, as [`far_classes_meet_at_least`] walks them.
trait BitSet {
    /// The set `{0, …, n − 1}`.
    fn all(n: usize) -> Self;
    /// The members, in increasing order.
    fn members(&self) -> impl Iterator<Item = usize>;
    /// The number of members.
    fn count(&self) -> usize;
}

impl BitSet for Bits {
    fn all(n: usize) -> Self {
        let mut b = vec![0u64; n.div_ceil(64)];
        for i in 0..n {
            b[i / 64] |= 1 << (i % 64);
        }
        b
    }
    fn members(&self) -> impl Iterator<Item = usize> {
        self.iter().enumerate().flat_map(|(w, &word)| {
            let mut rest = word;
            std::iter::from_fn(move || {
                (rest != 0).then(|| {
                    let bit = rest.trailing_zeros() as usize;
                    rest &= rest - 1;
                    w * 64 + bit
                })
            })
        })
    }
    fn count(&self) -> usize {
        self.iter().map(|w| w.count_ones() as usize).sum()
    }
}

/// The search of [`far_classes_meet_at_least`] inside one window, on bit
/// sets: the points of the window are numbered `0..inside.len()` in grid
/// order, `masks[i]` is the set of windows containing point `i` and
/// `far[i]` the points after `i` that are more than `u` from it.
struct FarSearch {
    masks: Vec<Bits>,
    far: Vec<Bits>,
    s: usize,
    need: u64,
}

impl FarSearch {
    fn new(
        sets: &[Vec<u32>],
        windows: u64,
        inside: &[usize],
        far: &dyn Fn(usize, usize) -> bool,
        s: usize,
        need: u64,
    ) -> Self {
        let words = (windows as usize).div_ceil(64);
        let masks = inside
            .iter()
            .map(|&z| {
                let mut m = vec![0u64; words];
                for &w in &sets[z] {
                    m[w as usize / 64] |= 1 << (w % 64);
                }
                m
            })
            .collect();
        let n = inside.len();
        let far = (0..n)
            .map(|i| {
                let mut b = vec![0u64; n.div_ceil(64)];
                for j in (i + 1..n).filter(|&j| far(inside[i], inside[j])) {
                    b[j / 64] |= 1 << (j % 64);
                }
                b
            })
            .collect();
        FarSearch {
            masks,
            far,
            s,
            need,
        }
    }

    /// Whether `s − chosen` of the `candidates`, pairwise far, have windows
    /// that together with `union` number fewer than `need`; `None` past the
    /// budget. Candidates are tried in increasing order and each branch
    /// keeps only the later candidates far from the one chosen, so every
    /// set of points is reached once.
    fn fewer_exist(
        &self,
        candidates: &Bits,
        union: &[u64],
        chosen: usize,
        budget: &mut u64,
    ) -> Option<bool> {
        *budget = budget.checked_sub(1)?;
        if chosen == self.s {
            return Some(true);
        }
        let mut left = candidates.count();
        for i in candidates.members() {
            if chosen + left < self.s {
                break;
            }
            left -= 1;
            let mask = &self.masks[i];
            let size: u64 = union
                .iter()
                .zip(mask)
                .map(|(a, b)| u64::from((a | b).count_ones()))
                .sum();
            if size >= self.need {
                continue;
            }
            let next: Vec<u64> = union.iter().zip(mask).map(|(a, b)| a | b).collect();
            let rest: Bits = candidates
                .iter()
                .zip(&self.far[i])
                .map(|(c, f)| c & f)
                .collect();
            let found = self.fewer_exist(&rest, &next, chosen + 1, budget);
            if found != Some(false) {
                return found;
            }
        }
        Some(false)
    }
}

/// Whether every `s` distinct grid points lying in one common window meet at
/// least `need` windows together. `sets[z]` lists the windows containing
/// grid point `z`; `windows` is their number. `false` when some `s` points of
/// a window meet fewer, when no window holds `s` points is `true`, and
/// `false` as well when the search exceeds its budget (unproven).
pub fn classes_meet_at_least(sets: &[Vec<u32>], windows: u64, s: usize, need: u64) -> bool {
    meet_at_least((sets, windows), (sets, windows), s, need)
}

/// As [`classes_meet_at_least`] with two kinds of windows: whether every
/// `s` distinct grid points that lie in one window of `inner` meet at least
/// `need` windows of `outer` together. Each is `(sets, windows)`: for every
/// grid point the sorted indices of the windows containing it, and their
/// number. `false` when fewer is possible or the budget runs out.
pub fn meet_at_least(
    inner: (&[Vec<u32>], u64),
    outer: (&[Vec<u32>], u64),
    s: usize,
    need: u64,
) -> bool {
    let ((inner_sets, inner_windows), (sets, windows)) = (inner, outer);
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
    for w0 in 0..inner_windows as u32 {
        let inside = points_inside(inner_sets, w0);
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

/// The grid points (indices into `sets`) that lie in window `w`.
fn points_inside(sets: &[Vec<u32>], w: u32) -> Vec<usize> {
    (0..sets.len())
        .filter(|&z| sets[z].binary_search(&w).is_ok())
        .collect()
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
pub fn size(ruled: &[Excluded]) -> Size {
    Size::clauses(ruled.len() as u64)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;

    fn q(spec: &str, dim: usize, p: usize) -> Question {
        Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap()
    }

    /// The `(t, d)` of the patterns with `u = 0`, and a check that there are no others.
    fn at_zero(q: &Question) -> Vec<(u64, usize)> {
        let all = ruled_out(q);
        assert!(all.iter().all(|x| x.u == 0), "{all:?}");
        all.iter().map(|x| (x.t, x.d)).collect()
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
            at_zero(&q("-1..1", 4, 18)),
            vec![(1, 1), (1, 2), (1, 3), (1, 6), (1, 9)]
        );
        // p = 16 = 2^4 is realised, so no subgroup profile may be excluded.
        assert_eq!(at_zero(&q("-1..1", 4, 16)), vec![]);
        // p = 9 on {−1,0,1}^3: d = 1 and d = 3 (3 · 3 > 8).
        assert_eq!(at_zero(&q("-1..1", 3, 9)), vec![(1, 1), (1, 3)]);
        assert_eq!(size(&ruled_out(&q("-1..1", 4, 18))).clauses, 5);
        // p = 33 on {−1,0,1}^5: d = 3 needs eleven points of a 32-point
        // corner box meeting at most ten boxes; a plain walk over point sets
        // ran out of budget here.
        assert_eq!(at_zero(&q("-1..1", 5, 33)), vec![(1, 1), (1, 3), (1, 11)]);
        // p = 70 on {−1,0,1}^6: every proper divisor, settled by matchings
        // (a walk over unions alone runs out of budget for d = 1 and 2).
        assert_eq!(
            at_zero(&q("-1..1", 6, 70)),
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
        assert_eq!(at_zero(&question), vec![(1, 3)]);
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

    /// Every cycle brute force finds (at most `limit` per box and period)
    /// avoids every pattern [`ruled_out`] names: `(cycles tested, patterns
    /// with u ≥ 1 tested)`. Independent of the encoding.
    pub(super) fn brute_force_avoids_the_patterns(
        boxes: &[(&str, usize)],
        limit: usize,
    ) -> (usize, usize) {
        let (mut tested, mut nested) = (0, 0);
        for &(spec, max_p) in boxes {
            let g = Grid::parse(spec, None).unwrap();
            for p in 2..=max_p {
                let rules = ruled_out(&Question::new(g.clone(), p).unwrap());
                nested += rules.iter().filter(|x| x.u >= 1).count();
                for cycle in crate::brute::all_cycles(g.ranges(), p, limit) {
                    for &Excluded { t, u, d } in &rules {
                        let pattern = (1..=p / 2).all(|k| {
                            let g = crate::brute::sup_distance(&cycle[0], &cycle[k]) as u64;
                            if k % d == 0 { u < g && g <= t } else { g > t }
                        });
                        assert!(!pattern, "{spec} p={p} t={t} u={u} d={d}: {cycle:?}");
                    }
                    tested += 1;
                }
            }
        }
        (tested, nested)
    }

    #[test]
    fn no_brute_force_cycle_has_an_excluded_profile() {
        let boxes = [
            ("0..1,0..1,0..2", 8),
            ("0..1,0..2,0..3", 8),
            ("-1..1,-1..1,0..1", 8),
        ];
        let (tested, _) = brute_force_avoids_the_patterns(&boxes, 300);
        assert!(tested > 300, "only {tested} cycles");
    }
}

#[cfg(test)]
mod two_thresholds {
    use super::*;
    use crate::grid::Grid;

    #[test]
    fn far_packing_is_the_most_points_pairwise_more_than_u_apart() {
        // Independent brute force over all subsets of one window.
        for (spec, t) in [
            ("0..3,0..3", 2),
            ("0..3,0..3", 3),
            ("0..4,0..2", 3),
            ("0..3,0..1", 2),
        ] {
            let g = Grid::parse(spec, None).unwrap();
            let window: Vec<Vec<i64>> = g
                .points()
                .filter(|z| (0..g.dim()).all(|c| z[c] - g.lo(c) <= t as i64))
                .collect();
            for u in 1..t {
                let mut best = 0;
                for mask in 0u32..1 << window.len() {
                    let chosen: Vec<&Vec<i64>> = (0..window.len())
                        .filter(|i| mask >> i & 1 == 1)
                        .map(|i| &window[i])
                        .collect();
                    let ok = chosen.iter().enumerate().all(|(i, a)| {
                        chosen[i + 1..]
                            .iter()
                            .all(|b| crate::brute::sup_distance(a, b) as u64 > u)
                    });
                    if ok {
                        best = best.max(chosen.len() as u64);
                    }
                }
                assert_eq!(far_packing(&g, t, u), best, "{spec} t={t} u={u}");
            }
        }
    }

    #[test]
    fn the_far_search_agrees_with_every_subset_of_every_window() {
        // Independent brute force: for each window, every set of points of
        // it that are pairwise more than u apart, and the windows they meet
        // together (each point's windows recomputed from coordinates, not
        // from `window_sets`). The search must say "at least need" exactly
        // when the least union over sets of s points is at least need.
        for (spec, t) in [
            ("0..3,0..3", 2),
            ("0..3,0..3", 3),
            ("0..4,0..2", 3),
            ("0..4,0..4", 2),
        ] {
            let g = Grid::parse(spec, None).unwrap();
            let sets = packing::window_sets(&g, t);
            let (total, _) = packing::windows(&g, t);
            let points: Vec<Vec<i64>> = g.points().collect();
            let origins: Vec<Vec<i64>> = g
                .points()
                .filter(|z| (0..g.dim()).all(|c| z[c] + t.min(g.side(c)) as i64 <= g.hi(c)))
                .collect();
            assert_eq!(origins.len() as u64, total, "{spec}");
            let holds = |o: &[i64], z: &[i64]| {
                (0..g.dim()).all(|c| o[c] <= z[c] && z[c] <= o[c] + t.min(g.side(c)) as i64)
            };
            for u in 1..t {
                // least[s]: the fewest windows that s such points meet.
                let mut least = vec![u64::MAX; 40];
                for o in &origins {
                    let inside: Vec<&Vec<i64>> = points.iter().filter(|z| holds(o, z)).collect();
                    for mask in 1u32..1 << inside.len() {
                        let chosen: Vec<&Vec<i64>> = (0..inside.len())
                            .filter(|i| mask >> i & 1 == 1)
                            .map(|i| inside[i])
                            .collect();
                        let far = chosen.iter().enumerate().all(|(i, a)| {
                            chosen[i + 1..]
                                .iter()
                                .all(|b| crate::brute::sup_distance(a, b) as u64 > u)
                        });
                        if !far {
                            continue;
                        }
                        let met = origins
                            .iter()
                            .filter(|w| chosen.iter().any(|z| holds(w, z)))
                            .count() as u64;
                        let s = chosen.len();
                        least[s] = least[s].min(met);
                    }
                }
                for s in 1..least.len() {
                    if least[s] == u64::MAX {
                        continue;
                    }
                    for need in 1..=total + 1 {
                        assert_eq!(
                            far_classes_meet_at_least(&g, &sets, total, s, need, u),
                            least[s] >= need,
                            "{spec} t={t} u={u} s={s} need={need}"
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn all_distances_two_in_a_wider_box_is_the_small_grid_again() {
        // p = 17 on {0,1,2,3}^4 with every distance 2: the cycle lies in one
        // window {a, a+1, a+2}^4 with all points pairwise at distance 2,
        // which the 2^4 cells of side 1 cannot hold. The single-threshold
        // patterns do not see it (c_2(17) ≤ 16 there).
        let q = Question::new(Grid::parse("0..3", Some(4)).unwrap(), 17).unwrap();
        let ruled = ruled_out(&q);
        assert!(ruled.contains(&Excluded { t: 2, u: 1, d: 1 }), "{ruled:?}");
        assert!(
            !ruled.iter().any(|x| x.t == 2 && x.u == 0 && x.d == 1),
            "{ruled:?}"
        );
    }

    #[test]
    fn brute_force_cycles_avoid_the_two_threshold_patterns_on_wider_boxes() {
        let boxes = [
            ("0..3,0..3,0..1", 8),
            ("0..2,0..3,0..3", 8),
            ("0..4,0..4", 4),
        ];
        let (tested, patterns) = super::tests::brute_force_avoids_the_patterns(&boxes, 200);
        assert!(patterns >= 5, "only {patterns} two-threshold patterns");
        assert!(tested > 500, "only {tested} cycles");
    }
}

#[cfg(test)]
mod nested_family {
    use super::*;
    use crate::encode::{EncodeOptions, encode};
    use crate::grid::Grid;

    #[test]
    fn the_nested_family_acts_on_the_box_of_the_image_test() {
        // `soundness.rs` checks that every brute-force cycle on this box
        // has an image satisfying the whole CNF; that test only covers
        // `pack-nested` if the family adds clauses there.
        for p in 5..=8 {
            let q = Question::new(Grid::parse("0..3,0..3,0..1", None).unwrap(), p).unwrap();
            let e = encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
            let fam = e.families.iter().find(|f| f.family == FAMILY_NESTED);
            assert!(fam.is_some_and(|f| f.clauses >= 1), "p = {p}: {fam:?}");
            assert!(
                crate::brute::find_cycle(q.grid.ranges(), p).is_some(),
                "p = {p}"
            );
        }
    }

    #[test]
    fn the_nested_family_is_absent_where_it_cannot_act() {
        // Sides of at most 3 points: no two thresholds 1 ≤ u < t < L, and
        // the option is not recorded (so these headers are as before).
        let q = Question::new(Grid::parse("-1..1", Some(4)).unwrap(), 18).unwrap();
        let e = encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
        assert!(!e.options.nested);
        assert!(e.families.iter().all(|f| f.family != FAMILY_NESTED));
    }
}
