//! Family `window-cliques`: the close graph below the diameter has at most
//! one maximal clique per window, so more than `2^r` pairwise incompatible
//! cliques rule a pattern out.
//!
//! Let `L` be the box's diameter and `r` the number of full coordinates
//! (sides equal to `L`), as in [`super::bicliques`]. Call an offset `k`
//! *close* when `g(k) < L` and *far* when `g(k) = L`; the *close graph* of
//! an isometric `p`-cycle joins the positions at a close offset. It is the
//! complement of the far graph of `biclique-cover`, and like it depends
//! only on the top pattern.
//!
//! A *window* is a sub-box with side `L − 1` in each full coordinate and the
//! whole side in the others; there are `W = 2^r` of them (each full
//! coordinate drops either its least or its greatest value).
//!
//! **Lemma** \[derived\]. (a) The positions of any clique of the close graph
//! lie in one common window. (b) The positions of the orbit points inside
//! one window form a clique. Hence a family of cliques `M_1, …, M_m` such
//! that every two of them have a far pair between them (`u ∈ M_a`,
//! `v ∈ M_b`, `g(|u − v|) = L`) has `m ≤ 2^r`.
//! *Proof.* (a) Points of a clique are pairwise closer than `L`, so in a
//! full coordinate no two of them take the least and the greatest value;
//! the clique's values there miss one of the two ends, and a window drops
//! that end. In the other coordinates the window holds the whole side.
//! (b) Two points of one window differ by at most `L − 1` in every
//! coordinate, so they are closer than `L`, and they are distinct. For the
//! bound, give each `M_a` a window holding it by (a). If `M_a` and `M_b` got
//! the same window, the far pair between them would be two orbit points of
//! one window, which (b) says are close. So the windows are distinct, and
//! there are `2^r` of them. ∎
//!
//! Distinct maximal cliques always have a far pair between them (their
//! union is no clique, and a non-edge of it joins a point of one that is not
//! in the other to a point of the other), so the lemma says in particular
//! that the close graph has at most `2^r` maximal cliques. On `{−1,0,1}^n`
//! the windows are the `2^n` corner boxes of `pack-window`, and the lemma
//! generalises `pack-edges` (a close graph without triangles: its maximal
//! cliques are its edges) from edges to cliques of every size.
//!
//! **Which clauses.** The family shares the walk of `biclique-cover` over
//! the top patterns that are lex-least under the multipliers
//! ([`super::bicliques::ruled_out`]). At a whole pattern for which no
//! fooling set was found (or `biclique-cover` is off), [`clique_family`]
//! lists maximal cliques of the circulant close graph with the
//! Bron–Kerbosch search (pivoting, candidate sets as bit sets) until it has
//! `2^r + 1` of them, within [`NODE_BUDGET`] search nodes (no clause when
//! the budget runs out). [`exclusion`] then picks, for every two cliques, one
//! far pair between them (preferring an offset already named and points
//! already picked), keeps of each clique only the points it picked, and
//! names the offsets of those pairs far and every offset inside a kept
//! clique close. Every pattern with those offsets far and close has the
//! same `2^r + 1` kept cliques with the same far pairs between them, so the
//! clause
//!
//! ```text
//!     ⋁_{k ∈ far} ¬G[k, L]  ∨  ⋁_{k ∈ close} G[k, L]
//! ```
//!
//! holds on every isometric cycle. Images under the multipliers follow
//! `biclique-cover`'s rule (a multiplier maps the close graph of a pattern
//! onto that of its image, cliques onto cliques and far pairs onto far
//! pairs).
//!
//! Variables: none. Clauses: one per exclusion, each with at most `⌊p/2⌋`
//! literals.
//!
//! Soundness: each clause negates a partial top pattern under which the
//! named cliques and far pairs exist, which the lemma rules out on every
//! isometric cycle; no symmetry breaking is assumed. Tests: every exclusion
//! re-checked from its clause alone (cliques and far pairs rebuilt from the
//! named offsets, with the unnamed ones flipped); the lemma checked on every
//! cycle brute force finds on small boxes, at every threshold; every
//! brute-force cycle satisfies every clause; the agreement tests of
//! `src/encode/soundness.rs` switch the family with the others.

use std::collections::BTreeSet;

use super::bicliques::{Exclusion, Found, fold, is_far};

/// The family's label.
pub const FAMILY: &str = "window-cliques";

/// Search nodes one top pattern may use in [`clique_family`] before it is
/// left without a clause. A count, not a time, so the formula does not
/// depend on the machine.
pub const NODE_BUDGET: u64 = 20_000;

/// `need` maximal cliques of the close graph of the top pattern `mask` of a
/// `p`-cycle (positions `u ≠ v` joined when their offset is not in `mask`),
/// if the search finds that many within `budget` nodes, adding the nodes it
/// used to `spent`. `None` for `p > 128` (the width of the bit sets).
///
/// Bron–Kerbosch with the pivot of most candidates, candidates taken lowest
/// first: which cliques are found and how many nodes that takes depend only
/// on `(p, mask, need, budget)`.
pub fn clique_family(
    p: usize,
    mask: u64,
    need: usize,
    budget: u64,
    spent: &mut u64,
) -> Option<Vec<Vec<usize>>> {
    if p > 128 || need == 0 {
        return None;
    }
    let rows: Vec<u128> = (0..p)
        .map(|a| {
            (0..p)
                .filter(|&b| b != a && !is_far(p, mask, a, b))
                .fold(0u128, |m, b| m | 1 << b)
        })
        .collect();
    struct Bk<'a> {
        rows: &'a [u128],
        need: usize,
        budget: u64,
        nodes: u64,
        found: Vec<Vec<usize>>,
        current: Vec<usize>,
    }
    // Returns true when the search is to stop: enough found, or the budget
    // spent.
    fn grow(s: &mut Bk, mut cand: u128, mut done: u128) -> bool {
        s.nodes += 1;
        if s.nodes > s.budget {
            return true;
        }
        if cand == 0 {
            if done == 0 {
                s.found.push(s.current.clone());
                return s.found.len() >= s.need;
            }
            return false;
        }
        let mut pivot = 0;
        let mut best = 0;
        for u in bits(cand | done) {
            let n = (cand & s.rows[u]).count_ones() + 1;
            if n > best {
                best = n;
                pivot = u;
            }
        }
        for v in bits(cand & !s.rows[pivot]) {
            s.current.push(v);
            if grow(s, cand & s.rows[v], done & s.rows[v]) {
                return true;
            }
            s.current.pop();
            cand &= !(1u128 << v);
            done |= 1u128 << v;
        }
        false
    }
    let all = if p == 128 {
        u128::MAX
    } else {
        (1u128 << p) - 1
    };
    let mut s = Bk {
        rows: &rows,
        need,
        budget,
        nodes: 0,
        found: Vec::new(),
        current: Vec::new(),
    };
    grow(&mut s, all, 0);
    *spent += s.nodes;
    (s.found.len() >= need).then_some(s.found)
}

/// The set bits of a word, lowest first.
fn bits(mut w: u128) -> impl Iterator<Item = usize> {
    std::iter::from_fn(move || {
        if w == 0 {
            return None;
        }
        let b = w.trailing_zeros() as usize;
        w &= w - 1;
        Some(b)
    })
}

/// The partial pattern under which `cliques` (of the close graph of `mask`)
/// stay pairwise incompatible: for every two of them one far pair between
/// them, its offset named far; of each clique only the points of those
/// pairs, every offset between two of them named close. `None` when two of
/// the cliques have no far pair between them or a kept clique is no clique
/// under `mask` (then the pattern gets no clause rather than an unsound
/// one).
pub fn exclusion(p: usize, mask: u64, cliques: &[Vec<usize>]) -> Option<Exclusion> {
    kept_cliques(p, mask, cliques).map(|(x, _)| x)
}

/// [`exclusion`] with the kept cliques: the points of each clique that the
/// exclusion's far pairs use.
fn kept_cliques(
    p: usize,
    mask: u64,
    cliques: &[Vec<usize>],
) -> Option<(Exclusion, Vec<BTreeSet<usize>>)> {
    if p > 128 || cliques.iter().flatten().any(|&u| u >= p) {
        return None;
    }
    // Bit sets, as this runs at every pattern the cliques rule out: row `u`
    // holds the points far from `u`; `far` the offsets named far (bit
    // `k − 1`); `kept[a]` the points of clique `a` kept so far.
    let far_rows: Vec<u128> = (0..p)
        .map(|u| {
            (0..p)
                .filter(|&v| is_far(p, mask, u, v))
                .fold(0u128, |m, v| m | 1 << v)
        })
        .collect();
    let n = cliques.len();
    let mut far = 0u64;
    let mut kept = vec![0u128; n];
    for a in 0..n {
        for b in a + 1..n {
            // Cost of a far pair: a new offset to name, then new points
            // (each may bring new close offsets), then the offset itself,
            // so that the largest named offset stays small and the walk
            // returns early. Ties go to the first pair in the cliques'
            // order.
            let mut best: Option<((bool, u8, usize), usize, usize)> = None;
            for &u in &cliques[a] {
                let row = far_rows[u];
                if row == 0 {
                    continue;
                }
                for &v in &cliques[b] {
                    if row >> v & 1 == 0 {
                        continue;
                    }
                    // `fold` without its division: `u ≠ v` are below `p`.
                    let d = if v > u { v - u } else { v + p - u };
                    let k = d.min(p - d);
                    let new_points =
                        u8::from(kept[a] >> u & 1 == 0) + u8::from(kept[b] >> v & 1 == 0);
                    let key = (far >> (k - 1) & 1 == 0, new_points, k);
                    if best.as_ref().is_none_or(|(b, _, _)| key < *b) {
                        best = Some((key, u, v));
                    }
                }
            }
            let (key, u, v) = best?;
            far |= 1 << (key.2 - 1);
            kept[a] |= 1 << u;
            kept[b] |= 1 << v;
        }
    }
    let mut close = 0u64;
    for &set in &kept {
        for u in bits(set) {
            if far_rows[u] & set != 0 {
                return None;
            }
            for v in bits(set >> (u + 1)) {
                close |= 1 << (fold(v + 1, p) - 1);
            }
        }
    }
    let offsets = |m: u64| {
        (0..64)
            .filter(|&b| m >> b & 1 == 1)
            .map(|b| b + 1)
            .collect()
    };
    let x = Exclusion {
        far: offsets(far),
        close: offsets(close),
        source: mask,
        found: Found::WindowCliques,
    };
    Some((x, kept.into_iter().map(|m| bits(m).collect()).collect()))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The maximal cliques of a small graph by brute force over all subsets.
    fn maximal_cliques_brute(p: usize, mask: u64) -> Vec<Vec<usize>> {
        let close = |u: usize, v: usize| u != v && !is_far(p, mask, u, v);
        let is_clique = |s: u32| {
            (0..p).all(|u| {
                s >> u & 1 == 0 || (0..p).all(|v| v == u || s >> v & 1 == 0 || close(u, v))
            })
        };
        let mut out = Vec::new();
        for s in 1u32..(1 << p) {
            if !is_clique(s) {
                continue;
            }
            let maximal = (0..p).all(|w| s >> w & 1 == 1 || !is_clique(s | 1 << w));
            if maximal {
                out.push((0..p).filter(|&u| s >> u & 1 == 1).collect());
            }
        }
        out
    }

    #[test]
    fn the_search_lists_the_maximal_cliques_brute_force_lists() {
        for p in 3..=13usize {
            let h = p / 2;
            for mask in 0u64..(1 << h) {
                let mut want = maximal_cliques_brute(p, mask);
                let mut got =
                    clique_family(p, mask, usize::MAX, u64::MAX, &mut 0).unwrap_or_else(|| {
                        // Fewer than `need` found: rerun asking for exactly
                        // as many as there are.
                        clique_family(p, mask, want.len(), u64::MAX, &mut 0).unwrap()
                    });
                for c in got.iter_mut() {
                    c.sort_unstable();
                }
                got.sort();
                want.sort();
                assert_eq!(got, want, "p={p} mask={mask:#b}");
            }
        }
    }

    /// [`kept_cliques`] as first written, with sets and `is_far`: the bit
    /// set version must choose the same pairs (the formula depends on it).
    fn reference_kept_cliques(
        p: usize,
        mask: u64,
        cliques: &[Vec<usize>],
    ) -> Option<(Exclusion, Vec<BTreeSet<usize>>)> {
        let n = cliques.len();
        let mut far = BTreeSet::new();
        let mut kept: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); n];
        for a in 0..n {
            for b in a + 1..n {
                // Cost of a far pair: a new offset to name, then new points
                // (each may bring new close offsets), then the offset itself,
                // so that the largest named offset stays small and the walk
                // returns early.
                let mut best: Option<((bool, u8, usize), usize, usize)> = None;
                for &u in &cliques[a] {
                    for &v in &cliques[b] {
                        if !is_far(p, mask, u, v) {
                            continue;
                        }
                        let k = fold(v + p - u, p);
                        let new_points =
                            u8::from(!kept[a].contains(&u)) + u8::from(!kept[b].contains(&v));
                        let key = (!far.contains(&k), new_points, k);
                        if best.as_ref().is_none_or(|(b, _, _)| key < *b) {
                            best = Some((key, u, v));
                        }
                    }
                }
                let (key, u, v) = best?;
                far.insert(key.2);
                kept[a].insert(u);
                kept[b].insert(v);
            }
        }
        let mut close = BTreeSet::new();
        for set in &kept {
            let pts: Vec<usize> = set.iter().copied().collect();
            for (i, &u) in pts.iter().enumerate() {
                for &v in &pts[i + 1..] {
                    if is_far(p, mask, u, v) {
                        return None;
                    }
                    close.insert(fold(v + p - u, p));
                }
            }
        }
        let x = Exclusion {
            far: far.into_iter().collect(),
            close: close.into_iter().collect(),
            source: mask,
            found: Found::WindowCliques,
        };
        Some((x, kept))
    }

    #[test]
    fn the_bit_set_choice_takes_the_reference_choice() {
        let mut compared = 0;
        for p in 5..=26usize {
            let h = p / 2;
            for mask in (0u64..(1 << h)).step_by(if p > 20 { 7 } else { 1 }) {
                for need in [3usize, 5, 9, 17] {
                    let Some(cliques) = clique_family(p, mask, need, NODE_BUDGET, &mut 0) else {
                        continue;
                    };
                    assert_eq!(
                        kept_cliques(p, mask, &cliques),
                        reference_kept_cliques(p, mask, &cliques),
                        "p={p} mask={mask:#b} need={need}"
                    );
                    compared += 1;
                }
            }
        }
        assert!(compared > 10_000, "{compared}");
    }

    /// The clause of every exclusion is enough: under any pattern that
    /// agrees with it on its named offsets (the unnamed ones flipped, or
    /// set at random), its kept cliques are still cliques and every two
    /// still have a far pair between them, so the lemma applies there too.
    #[test]
    fn every_exclusion_holds_on_every_pattern_its_clause_describes() {
        let mut checked = 0;
        let mut seed = 0x9e37_79b9_7f4a_7c15u64;
        for p in 5..=22usize {
            let h = p / 2;
            for mask in 0u64..(1 << h) {
                for need in [3usize, 4, 5, 9] {
                    let Some(cliques) = clique_family(p, mask, need, NODE_BUDGET, &mut 0) else {
                        continue;
                    };
                    let (x, kept) =
                        kept_cliques(p, mask, &cliques).expect("maximal cliques are incompatible");
                    assert_eq!(kept.len(), need);
                    assert!(x.far.iter().all(|k| mask >> (k - 1) & 1 == 1));
                    assert!(x.close.iter().all(|k| mask >> (k - 1) & 1 == 0));
                    let named: u64 = x
                        .far
                        .iter()
                        .chain(&x.close)
                        .fold(0, |m, k| m | 1 << (k - 1));
                    let free = ((1u64 << h) - 1) & !named;
                    seed ^= seed << 13;
                    seed ^= seed >> 7;
                    seed ^= seed << 17;
                    for other in [mask ^ free, (mask & !free) | (seed & free)] {
                        assert!(
                            incompatible_cliques(p, other, &kept),
                            "p={p} mask={mask:#b} need={need} other={other:#b}"
                        );
                    }
                    checked += 1;
                }
            }
        }
        assert!(checked > 1000, "{checked}");
    }

    /// The lemma itself, at every threshold and on every box: on every
    /// cycle brute force finds, the close graph at `t` (offsets with
    /// `g(k) ≤ t`) has at most `W_t` maximal cliques, `W_t` the number of
    /// windows of side `t`. The maximal cliques are counted by brute force
    /// over all subsets of positions, independently of the search.
    #[test]
    fn brute_force_cycles_have_at_most_one_maximal_clique_per_window() {
        use crate::brute::{all_cycles, sup_distance};
        use crate::grid::Grid;
        let mut tested = 0;
        let mut tight = 0;
        for (spec, max_p) in [
            ("0..2,0..1", 6),
            ("-1..1,-1..1", 8),
            ("0..3,0..1", 8),
            ("0..3,0..2", 9),
            ("0..1,0..1,0..1", 8),
            ("0..2,0..2,0..1", 9),
            ("-1..1,-1..1,-1..1", 10),
        ] {
            let g = Grid::parse(spec, None).unwrap();
            let l = g.diameter() as i64;
            for p in 3..=max_p {
                for cycle in all_cycles(g.ranges(), p, 300) {
                    for t in 1..l {
                        let windows: u64 = (0..g.dim())
                            .map(|c| {
                                let s = g.side(c) as i64;
                                (s - t.min(s) + 1) as u64
                            })
                            .product();
                        let far_mask = (1..=p / 2)
                            .filter(|&k| sup_distance(&cycle[0], &cycle[k]) > t)
                            .fold(0u64, |m, k| m | 1 << (k - 1));
                        let m = maximal_cliques_brute(p, far_mask).len() as u64;
                        assert!(
                            m <= windows,
                            "{spec} p={p} t={t}: {m} > {windows}: {cycle:?}"
                        );
                        tight += u64::from(m == windows);
                        tested += 1;
                    }
                }
            }
        }
        assert!(tested > 1000 && tight > 0, "{tested} cases, {tight} tight");
    }

    /// Whether every set of `sets` is a clique of the close graph of `mask`
    /// and every two have a far pair between them.
    fn incompatible_cliques(p: usize, mask: u64, sets: &[BTreeSet<usize>]) -> bool {
        let cliques = sets.iter().all(|s| {
            s.iter()
                .all(|&u| s.iter().all(|&v| u == v || !is_far(p, mask, u, v)))
        });
        let pairs = sets.iter().enumerate().all(|(a, s)| {
            sets[a + 1..]
                .iter()
                .all(|t| s.iter().any(|&u| t.iter().any(|&v| is_far(p, mask, u, v))))
        });
        cliques && pairs
    }
}
