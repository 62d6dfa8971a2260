//! Family `pack-gap`: classes close at one threshold and far apart at a
//! higher one.
//!
//! `pack-classes` ([`super::classes`]) reads one threshold `t`: the offsets
//! with `g(k) ≤ t` are exactly the multiples of `d`. Many profiles leave a
//! gap instead: for thresholds `t < T`, every multiple of `d` has
//! `g(k) ≤ t` and every other offset has `g(k) > T`, with no offset in
//! between. Then the `d` residue classes (of `s = p/d` points each) are each
//! pairwise within `t`, so each lies in one window of side `t`; and points of
//! different classes are more than `T` apart, so no window of side `T` holds
//! two points of different classes. The sets of `T`-windows that the classes
//! meet are therefore disjoint, and if `c_{t,T}(s)` is the least number of
//! windows of side `T` that `s` distinct points of one window of side `t`
//! meet together,
//!
//! ```text
//!     d · c_{t,T}(s)  ≤  W_T.
//! ```
//!
//! When this fails the pattern is impossible:
//! `⋁_{d|k} G[k,t+1] ∨ ⋁_{d∤k} ¬G[k,T+1]` over `1 ≤ k ≤ ⌊p/2⌋`. With `T = t`
//! this is `pack-classes`; the point of `T > t` is that the small classes
//! meet many of the few large windows. Example: `p = 18` on `{0,1,2,3}^4`
//! with `g = 1` at the multiples of 6 and `g = 3` elsewhere: six classes of
//! three points, each pairwise within 1, pairwise across at distance 3. The
//! sixteen windows of side 2 are the corner boxes `{0,1,2}` or `{1,2,3}` in
//! each coordinate; three distinct points of a window of side 1 meet at
//! least three of them, and `6 · 3 > 16`. Windows of side 1 (81 of them) or
//! side 2 alone prove nothing there (`pack-classes` at `t = 2` asks for
//! six classes of three in windows of side 2, which meet at least two each).
//!
//! `c_{t,T}(s) ≥ ⌊W_T/d⌋ + 1` is decided by the search of
//! [`classes::meet_at_least`], over the windows of side `t` for where the
//! points are and those of side `T` for what they meet; when its budget
//! runs out, no clause.
//!
//! Which patterns get a clause ([`ruled_out`]): for each `d | p`, `d < p`,
//! and `1 ≤ t < T < L` with `W_t, W_T ≤` [`packing::MAX_WINDOWS`], unless
//! `pack-classes` excludes `(t', d)` for some `t ≤ t' ≤ T` (its pattern then
//! contains this one). A pattern with a larger `t` or a smaller
//! `T` describes more profiles, so `t` is walked downwards, for each `t` only
//! the least `T` that is ruled out is kept, and a pattern implied by one
//! already kept (`t ≤ t'`, `T ≥ T'`) is skipped.
//!
//! Variables: none. Clauses: one per pattern ([`size`]), `⌊p/2⌋` literals each.
//!
//! Soundness: each clause negates a pattern that the inequality above rules
//! out on every isometric cycle of the box (no symmetry breaking assumed).
//! Tested against every cycle brute force finds on boxes with a side of four
//! or five points.

use super::profile::ProfileLit;
use super::{Encoder, classes, packing, profile};
use crate::cnf::Size;
use crate::question::Question;

/// The family's label.
pub const FAMILY: &str = "pack-gap";

/// One pattern: the multiples of `d` have `g(k) ≤ t`, every other offset
/// `g(k) > T`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Gap {
    /// The inner threshold.
    pub t: u64,
    /// The outer threshold, `t < T < L`.
    pub big_t: u64,
    /// The divisor of `p` whose nonzero multiples are the close offsets.
    pub d: usize,
}

/// The patterns the family excludes on `q`'s box (see the module docs for
/// which). `classes` is [`classes::ruled_out`] of the same question.
pub fn ruled_out(q: &Question, classes_ruled: &[classes::Excluded]) -> Vec<Gap> {
    let p = q.period;
    let l = q.grid.diameter();
    if p < 2 || l < 3 {
        return Vec::new();
    }
    let windows: Vec<Option<(Vec<Vec<u32>>, u64)>> = (0..l)
        .map(|t| {
            let (total, _) = packing::windows(&q.grid, t);
            (t >= 1 && total <= packing::MAX_WINDOWS)
                .then(|| (packing::window_sets(&q.grid, t), total))
        })
        .collect();
    let mut out: Vec<Gap> = Vec::new();
    for d in (1..p).filter(|&d| p.is_multiple_of(d)) {
        let s = p / d;
        for t in (1..l - 1).rev() {
            let Some((inner, inner_total)) = &windows[t as usize] else {
                continue;
            };
            for big_t in t + 1..l {
                // Implied by a kept pattern, or by a `pack-classes` one at a
                // threshold t ≤ t' ≤ T: so for every larger T too.
                let kept = out.iter().any(|g| g.d == d && g.t >= t && g.big_t <= big_t);
                let by_classes = classes_ruled
                    .iter()
                    .any(|x| x.d == d && x.u == 0 && (t..=big_t).contains(&x.t));
                if kept || by_classes {
                    break;
                }
                let Some((outer, outer_total)) = &windows[big_t as usize] else {
                    continue;
                };
                let need = outer_total / d as u64 + 1;
                if classes::meet_at_least((inner, *inner_total), (outer, *outer_total), s, need) {
                    out.push(Gap { t, big_t, d });
                    break;
                }
            }
        }
    }
    out
}

/// The clause that excludes `x` in a `p`-cycle:
/// `⋁_{d|k} G[k,t+1] ∨ ⋁_{d∤k} ¬G[k,T+1]`.
pub fn clause(p: usize, x: &Gap) -> Vec<ProfileLit> {
    (1..=p / 2)
        .map(|k| {
            if k % x.d == 0 {
                ProfileLit::ge(k, x.t as i64 + 1)
            } else {
                ProfileLit::lt(k, x.big_t as i64 + 1)
            }
        })
        .collect()
}

/// The family's size: no variables, one clause per pattern.
pub fn size(ruled: &[Gap]) -> Size {
    Size::clauses(ruled.len() as u64)
}

/// Adds one clause per pattern ([`clause`]).
pub fn add(e: &mut Encoder, q: &Question, ruled: &[Gap]) {
    let clauses: Vec<Vec<ProfileLit>> = ruled.iter().map(|x| clause(q.period, x)).collect();
    profile::add_clauses(e, q, &clauses);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;

    fn q(spec: &str, p: usize) -> Question {
        Question::new(Grid::parse(spec, None).unwrap(), p).unwrap()
    }

    fn gaps(question: &Question) -> Vec<(u64, u64, usize)> {
        ruled_out(question, &classes::ruled_out(question))
            .iter()
            .map(|g| (g.t, g.big_t, g.d))
            .collect()
    }

    #[test]
    fn six_classes_of_three_do_not_fit_the_corner_windows() {
        let question = q("0..3,0..3,0..3,0..3", 18);
        let found = gaps(&question);
        assert!(found.contains(&(1, 2, 6)), "{found:?}");
        // The profile of the example: g = 1 at multiples of 6, 3 elsewhere.
        let g: Vec<i64> = (1..=9).map(|k| if k % 6 == 0 { 1 } else { 3 }).collect();
        let ruled = ruled_out(&question, &classes::ruled_out(&question));
        assert!(
            ruled
                .iter()
                .any(|x| { clause(18, x).iter().all(|l| l.holds(&g) == Some(false)) })
        );
    }

    #[test]
    fn nothing_below_diameter_three() {
        assert!(gaps(&q("-1..1,-1..1,-1..1,-1..1", 18)).is_empty());
    }

    #[test]
    fn brute_force_cycles_satisfy_every_clause() {
        let mut tested = 0;
        let mut clauses = 0;
        // The boxes and periods where the family has clauses this small
        // (seven patterns in all).
        for (spec, max_p) in [
            ("0..3,0..3", 8),
            ("0..4,0..4", 8),
            ("0..4,0..2", 7),
            ("0..5,0..2", 9),
            ("0..3,0..2,0..1", 10),
        ] {
            let g = Grid::parse(spec, None).unwrap();
            for p in 2..=max_p {
                let question = Question::new(g.clone(), p).unwrap();
                let ruled = ruled_out(&question, &classes::ruled_out(&question));
                clauses += ruled.len();
                for cycle in crate::brute::all_cycles(g.ranges(), p, 400) {
                    let profile: Vec<i64> = (1..=p / 2)
                        .map(|k| crate::brute::sup_distance(&cycle[0], &cycle[k]))
                        .collect();
                    for x in &ruled {
                        let holds = clause(p, x).iter().any(|l| l.holds(&profile) == Some(true));
                        assert!(holds, "{spec} p={p} {x:?}: {cycle:?}");
                    }
                    tested += 1;
                }
            }
        }
        assert!(
            tested > 500 && clauses >= 7,
            "{tested} cycles, {clauses} clauses"
        );
    }
}
