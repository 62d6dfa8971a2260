//! Family `biclique-cover`: far pairs at the box's diameter need a biclique
//! per coordinate, so a fooling set of far pairs bounds the dimension.
//!
//! Let `L` be the box's diameter (its largest side) and call a coordinate
//! *full* when its side is `L`; say `r` of them are. Two points are at
//! distance `L` exactly when some full coordinate takes its least value at
//! one and its greatest at the other. So the *far graph* of a cycle (the
//! pairs `{i, j}` with `g(|i − j|) = L`) is the union of `r` complete
//! bipartite graphs `A_c × B_c` (`A_c` the positions at the low end of
//! coordinate `c`, `B_c` those at the high end), each a subgraph of it.
//!
//! Two far pairs `{a, b}` and `{e, f}` can lie in one such biclique only if
//! the cross pairs of one of the two ways of placing them are far: `{a, f}`
//! and `{e, b}` (a and e on one side), or `{a, e}` and `{f, b}` (a and f on
//! one side). A pair of a point with itself is never far, since the sides
//! are disjoint. A *fooling set* is a set of far pairs of which no two can
//! share a biclique; each biclique then holds at most one of them, so a
//! fooling set of `r + 1` pairs proves that no cycle has this far graph.
//!
//! The far graph depends only on which offsets `k` have `g(k) = L` (the *top
//! pattern*), and it is circulant, so a fooling set can be moved to contain
//! position 0. [`ruled_out`] walks the top patterns that are lex-least
//! under the multiplier maps (as `sym-multiplier` orders profiles), searches
//! each for a fooling set of `r + 1` pairs ([`fooling_set`], with a budget of
//! search nodes), and for each one found writes the exclusion: the offsets of
//! its pairs must not all be far while, for every two of its pairs and each
//! of the two placements, one named cross pair is close. That describes every
//! profile in which the same pairs form a fooling set, so the clause
//!
//! ```text
//!     ⋁_{k ∈ far} ¬G[k, L]  ∨  ⋁_{k ∈ close} G[k, L]
//! ```
//!
//! holds on every isometric cycle. A cross pair of a point with itself needs
//! no offset. When the box's profile takes more than two values, or the
//! multiplier break is off, the images of each exclusion under every
//! multiplier map are added as well (a multiplier maps a fooling set of one
//! pattern onto a fooling set of the image pattern); with two values
//! (`L = 2`) the lex-least profiles are exactly the lex-least top patterns,
//! so the images would exclude only profiles the break already excludes.
//!
//! On `{−1,0,1}^5`, `p = 34` this excludes 14,674 of the 16,460 lex-least
//! profiles: covering the far pairs needs six bicliques where the box has
//! five coordinates, a pigeonhole argument that resolution finds only with
//! long refutations.
//!
//! The family applies to nonexpansive cycles with `p > 2^r` (below that the
//! questions are quickly answered without it, and their formulas stay as
//! they were) and `⌊p/2⌋ ≤` [`MAX_OFFSETS`].
//!
//! Variables: none. Clauses: one per exclusion ([`size`]), each with at most
//! `⌊p/2⌋` literals.
//!
//! Soundness: each clause negates a partial top pattern in which the named
//! pairs form a fooling set of `r + 1` far pairs, which no isometric cycle on
//! the box has (the argument above). The clauses are tested against every
//! cycle brute force finds on small boxes.

use std::collections::BTreeSet;

use super::profile::ProfileLit;
use super::{Encoder, profile, symmetry};
use crate::cnf::Size;
use crate::question::{MapClass, Question};

/// The family's label.
pub const FAMILY: &str = "biclique-cover";

/// The family acts only when the profile has at most this many offsets
/// (`2^MAX_OFFSETS` top patterns are walked).
pub const MAX_OFFSETS: usize = 18;

/// Search nodes one top pattern may use before it is left without a clause.
const NODE_BUDGET: u64 = 20_000;

/// One excluded partial top pattern.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub struct Exclusion {
    /// The offsets that the pattern has at distance `L` (sorted).
    pub far: Vec<usize>,
    /// The offsets that the pattern has below `L` (sorted, disjoint from `far`).
    pub close: Vec<usize>,
    /// The whole top pattern it was found on: bit `k − 1` set when `g(k) = L`.
    pub source: u64,
}

/// The number of full coordinates (sides equal to the diameter).
pub fn full_coordinates(q: &Question) -> usize {
    let l = q.grid.diameter();
    (0..q.dim()).filter(|&c| q.grid.side(c) == l).count()
}

/// Whether the family can act on `q` (see the module docs).
pub fn applies_to(q: &Question) -> bool {
    let r = full_coordinates(q) as u32;
    let h = q.period / 2;
    q.class == MapClass::Nonexpansive
        && q.points.is_none()
        && q.grid.diameter() >= 1
        && (1..=MAX_OFFSETS).contains(&h)
        && r < 64
        && (q.period as u128) > (1u128 << r)
}

/// The exclusions of `q`, sorted and without repeats; empty where the
/// family does not apply. `with_images` adds each exclusion's images under
/// the multiplier maps (see the module docs for when that is needed).
pub fn ruled_out(q: &Question, with_images: bool) -> Vec<Exclusion> {
    if !applies_to(q) {
        return Vec::new();
    }
    let p = q.period;
    let h = p / 2;
    let need = full_coordinates(q) + 1;
    let maps = symmetry::multiplier_maps(p);
    let mut out = BTreeSet::new();
    for mask in 1u64..(1u64 << h) {
        if !lex_least(mask, &maps, h) {
            continue;
        }
        let Some(pairs) = fooling_set(p, mask, need) else {
            continue;
        };
        let Some(x) = exclusion(p, mask, &pairs) else {
            continue;
        };
        if with_images {
            for map in &maps {
                out.insert(image(&x, map));
            }
        }
        out.insert(x);
    }
    out.into_iter().collect()
}

/// Whether the 0/1 pattern `mask` (bit `k − 1` for offset `k`) is no larger,
/// lexicographically over `k = 1..h`, than its image under any map.
fn lex_least(mask: u64, maps: &[Vec<usize>], h: usize) -> bool {
    let bit = |k: usize| (mask >> (k - 1)) & 1;
    maps.iter().all(|map| {
        for k in 1..=h {
            let (a, b) = (bit(k), bit(map[k]));
            if a != b {
                return a < b;
            }
        }
        true
    })
}

fn fold(k: usize, p: usize) -> usize {
    let k = k % p;
    k.min(p - k)
}

/// Whether positions `a` and `b` of a `p`-cycle are far under `mask`.
fn far(p: usize, mask: u64, a: usize, b: usize) -> bool {
    a != b && (mask >> (fold(b + p - a, p) - 1)) & 1 == 1
}

/// [`far`] as a table, since the search asks it millions of times.
struct FarTable {
    p: usize,
    far: Vec<bool>,
}

impl FarTable {
    fn new(p: usize, mask: u64) -> FarTable {
        let far = (0..p * p).map(|i| far(p, mask, i / p, i % p)).collect();
        FarTable { p, far }
    }

    fn far(&self, a: usize, b: usize) -> bool {
        self.far[a * self.p + b]
    }

    /// Whether the far pairs `x` and `y` cannot share a biclique.
    fn incompatible(&self, x: (usize, usize), y: (usize, usize)) -> bool {
        let ((a, b), (e, f)) = (x, y);
        let same_sides = self.far(a, f) && self.far(e, b);
        let crossed = self.far(a, e) && self.far(f, b);
        !same_sides && !crossed
    }
}

/// A fooling set of `need` far pairs of the circulant graph of `mask`, if
/// the search finds one within its budget. Pairs are `(a, b)` with `a < b`.
pub fn fooling_set(p: usize, mask: u64, need: usize) -> Option<Vec<(usize, usize)>> {
    let table = FarTable::new(p, mask);
    let edges: Vec<(usize, usize)> = (0..p)
        .flat_map(|a| (a + 1..p).map(move |b| (a, b)))
        .filter(|&(a, b)| table.far(a, b))
        .collect();
    if edges.len() < need {
        return None;
    }
    let mut nodes = 0u64;
    // Translation moves any fooling set onto one whose first pair holds
    // position 0, and the reflection i ↦ −i (an automorphism of every
    // circulant graph) maps (0, j) to (0, p − j): so j ≤ p/2 suffices.
    for (i, &first) in edges.iter().enumerate() {
        if first.0 != 0 || first.1 > p / 2 {
            continue;
        }
        let cand: Vec<usize> = (0..edges.len())
            .filter(|&j| j != i && table.incompatible(first, edges[j]))
            .collect();
        let mut chosen = vec![i];
        if grow(&table, &edges, &cand, &mut chosen, need, &mut nodes) {
            return Some(chosen.iter().map(|&j| edges[j]).collect());
        }
        if nodes > NODE_BUDGET {
            return None;
        }
    }
    None
}

fn grow(
    table: &FarTable,
    edges: &[(usize, usize)],
    cand: &[usize],
    chosen: &mut Vec<usize>,
    need: usize,
    nodes: &mut u64,
) -> bool {
    if chosen.len() >= need {
        return true;
    }
    for (n, &v) in cand.iter().enumerate() {
        if chosen.len() + (cand.len() - n) < need {
            return false;
        }
        *nodes += 1;
        if *nodes > NODE_BUDGET {
            return false;
        }
        let next: Vec<usize> = cand[n + 1..]
            .iter()
            .copied()
            .filter(|&w| table.incompatible(edges[v], edges[w]))
            .collect();
        chosen.push(v);
        if grow(table, edges, &next, chosen, need, nodes) {
            return true;
        }
        chosen.pop();
    }
    false
}

/// The partial pattern that makes `pairs` a fooling set under `mask`: their
/// offsets far, and for every two of them and each placement one cross pair
/// close (reusing offsets already named where possible). `None` when
/// `pairs` is no fooling set under `mask`.
pub fn exclusion(p: usize, mask: u64, pairs: &[(usize, usize)]) -> Option<Exclusion> {
    let far_set: BTreeSet<usize> = pairs.iter().map(|&(a, b)| fold(b + p - a, p)).collect();
    let mut close = BTreeSet::new();
    for (x, &(a, b)) in pairs.iter().enumerate() {
        for &(e, f) in &pairs[x + 1..] {
            for cross in [[(a, f), (e, b)], [(a, e), (f, b)]] {
                // A point paired with itself is never far: nothing to name.
                if cross.iter().any(|&(u, v)| u == v) {
                    continue;
                }
                let closes: Vec<usize> = cross
                    .iter()
                    .filter(|&&(u, v)| !far(p, mask, u, v))
                    .map(|&(u, v)| fold(v + p - u, p))
                    .collect();
                // Incompatible pairs always leave one cross pair close; if
                // none were, the pairs would not be a fooling set, and the
                // pattern gets no clause rather than an unsound one.
                let first = closes.first()?;
                if !closes.iter().any(|k| close.contains(k)) {
                    close.insert(*first);
                }
            }
        }
    }
    Some(Exclusion {
        far: far_set.into_iter().collect(),
        close: close.into_iter().collect(),
        source: mask,
    })
}

/// `x` relabelled by a multiplier map (offset `k` to `map[k]`).
fn image(x: &Exclusion, map: &[usize]) -> Exclusion {
    let mut far: Vec<usize> = x.far.iter().map(|&k| map[k]).collect();
    let mut close: Vec<usize> = x.close.iter().map(|&k| map[k]).collect();
    far.sort_unstable();
    close.sort_unstable();
    let mut source = 0u64;
    for k in 1..map.len() {
        if (x.source >> (k - 1)) & 1 == 1 {
            source |= 1 << (map[k] - 1);
        }
    }
    Exclusion { far, close, source }
}

/// The family's size: no variables, one clause per exclusion.
pub fn size(ruled: &[Exclusion]) -> Size {
    Size {
        vars: 0,
        clauses: ruled.len() as u64,
    }
}

/// The clause of one exclusion on a box of diameter `l`:
/// `⋁_{k ∈ far} ¬G[k, l] ∨ ⋁_{k ∈ close} G[k, l]`.
pub fn clause(l: i64, x: &Exclusion) -> Vec<ProfileLit> {
    let far = x.far.iter().map(|&k| ProfileLit::lt(k, l));
    let close = x.close.iter().map(|&k| ProfileLit::ge(k, l));
    far.chain(close).collect()
}

/// Adds one clause per exclusion ([`clause`]).
pub fn add(e: &mut Encoder, q: &Question, ruled: &[Exclusion]) {
    let l = q.grid.diameter() as i64;
    let clauses: Vec<Vec<ProfileLit>> = ruled.iter().map(|x| clause(l, x)).collect();
    profile::add_clauses(e, q, &clauses);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;

    fn q(spec: &str, p: usize) -> Question {
        Question::new(Grid::parse(spec, None).unwrap(), p).unwrap()
    }

    /// Every biclique `A × B` of the circulant graph of `mask` on `p`
    /// vertices, by brute force over all placements of the vertices in A,
    /// in B or in neither (independent of [`FarTable`]).
    fn bicliques_by_brute_force(p: usize, mask: u64) -> Vec<(Vec<usize>, Vec<usize>)> {
        let mut out = Vec::new();
        for code in 0..3usize.pow(p as u32) {
            let side: Vec<usize> = (0..p).map(|i| code / 3usize.pow(i as u32) % 3).collect();
            let a: Vec<usize> = (0..p).filter(|&i| side[i] == 1).collect();
            let b: Vec<usize> = (0..p).filter(|&i| side[i] == 2).collect();
            let complete = a.iter().all(|&x| {
                b.iter().all(|&y| {
                    let k = x.abs_diff(y).min(p - x.abs_diff(y));
                    (mask >> (k - 1)) & 1 == 1
                })
            });
            if !a.is_empty() && !b.is_empty() && complete {
                out.push((a, b));
            }
        }
        out
    }

    #[test]
    fn no_biclique_holds_two_pairs_of_a_fooling_set() {
        let mut found = 0;
        for p in 3..=8usize {
            for mask in 1u64..(1 << (p / 2)) {
                let Some(set) = fooling_set(p, mask, 3) else {
                    continue;
                };
                found += 1;
                for (a, b) in bicliques_by_brute_force(p, mask) {
                    let held = set
                        .iter()
                        .filter(|&&(x, y)| {
                            (a.contains(&x) && b.contains(&y)) || (a.contains(&y) && b.contains(&x))
                        })
                        .count();
                    assert!(
                        held <= 1,
                        "p={p} mask={mask:b}: {a:?}×{b:?} holds {held} of {set:?}"
                    );
                }
            }
        }
        assert!(found > 10, "only {found} fooling sets of 3 pairs");
    }

    #[test]
    fn the_clause_describes_the_fooling_set_it_came_from() {
        // Every profile that agrees with an exclusion has the fooling set
        // the exclusion was built from: check it on the source pattern and
        // on the pattern with every unnamed offset flipped.
        let x = q("-1..1,-1..1,-1..1", 18);
        let ruled = ruled_out(&x, false);
        assert!(!ruled.is_empty());
        for e in &ruled {
            let named: u64 = e
                .far
                .iter()
                .chain(&e.close)
                .fold(0, |m, k| m | 1 << (k - 1));
            let flipped = e.source ^ (!named & ((1 << 9) - 1));
            for mask in [e.source, flipped] {
                assert!(e.far.iter().all(|k| (mask >> (k - 1)) & 1 == 1));
                assert!(e.close.iter().all(|k| (mask >> (k - 1)) & 1 == 0));
                assert!(fooling_set(18, mask, 4).is_some(), "{e:?} mask {mask:b}");
            }
        }
    }

    #[test]
    fn the_family_applies_above_two_to_the_full_coordinates() {
        assert!(!applies_to(&q("-1..1,-1..1,-1..1,-1..1", 16)));
        assert!(applies_to(&q("-1..1,-1..1,-1..1,-1..1", 17)));
        // One full coordinate of side 3: r = 1, so every p ≥ 3.
        assert!(applies_to(&q("0..3,0..1,0..1", 3)));
        assert!(applies_to(&q("-1..1,-1..1,-1..1,-1..1,-1..1", 37)));
        assert!(!applies_to(&q("-1..1,-1..1,-1..1,-1..1,-1..1", 38)));
        let mut topical = q("-1..1,-1..1", 5);
        topical.class = MapClass::Topical;
        assert!(!applies_to(&topical));
    }

    #[test]
    fn on_the_five_cube_p_34_it_excludes_the_counted_profiles() {
        // 14,674 of the 16,460 lex-least profiles (counted by a separate
        // enumeration when the family was written).
        assert_eq!(
            ruled_out(&q("-1..1,-1..1,-1..1,-1..1,-1..1", 34), false).len(),
            14_674
        );
    }

    #[test]
    fn brute_force_cycles_satisfy_every_clause() {
        let mut tested = 0;
        let mut clauses = 0;
        for (spec, max_p) in [
            ("0..2,0..1", 6),
            ("0..3,0..1,0..1", 8),
            ("0..2,0..2,0..1", 8),
            ("-1..1,-1..1", 8),
            ("0..1,0..1,0..1", 8),
        ] {
            let g = Grid::parse(spec, None).unwrap();
            let l = g.diameter() as i64;
            for p in 3..=max_p {
                let question = Question::new(g.clone(), p).unwrap();
                let ruled = ruled_out(&question, true);
                clauses += ruled.len();
                for cycle in crate::brute::all_cycles(g.ranges(), p, 400) {
                    let top = |k: usize| crate::brute::sup_distance(&cycle[0], &cycle[k]) == l;
                    for e in &ruled {
                        let matches =
                            e.far.iter().all(|&k| top(k)) && e.close.iter().all(|&k| !top(k));
                        assert!(!matches, "{spec} p={p} {e:?}: {cycle:?}");
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
