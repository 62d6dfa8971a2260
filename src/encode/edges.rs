//! Family `pack-edges`: triangle-free close graphs need a window per edge.
//!
//! Fix a threshold `t`; offset `k` is *close* when `g(k) ≤ t`. The *close
//! graph* of a cycle joins positions `i, j` whose offset is close. Two close
//! points lie in a common window of side `t` (coordinate by coordinate their
//! values fit one interval of length `t`, see [`super::classes`]), and the
//! points of the cycle inside one window are pairwise close, so they form a
//! clique of the close graph.
//!
//! **Lemma.** If the close graph has no triangle and at least one edge, it
//! has at most `W_t` edges. *Proof.* Give every edge a window holding both
//! ends. Two edges with the same window would put three or four points in
//! one window, pairwise close, hence a triangle. So the windows are distinct.
//!
//! The close graph is a circulant: offset `k < p/2` gives `p` edges, offset
//! `p/2` gives `p/2`, so it has `(p/2)·Σ_k w_k·[k close]` edges with
//! `w_k = 2` for `k < p/2` and `w_{p/2} = 1`. It has a triangle exactly when
//! three close offsets `a ≤ b ≤ c` (repeats allowed) satisfy
//! `±a ± b ± c ≡ 0 (mod p)` for some signs (positions `i`, `i+a`, `i+a±b`).
//! So whenever `Σ_k w_k·[k close] ≥ m = ⌊2W_t/p⌋ + 1`, some such triple must
//! be close. On `{−1,0,1}^n` with `t = 1` and `2^n < p ≤ 2^{n+1}`, `m = 2`:
//! any close offset other than `p/2` forces a triangle of close offsets.
//!
//! Variables, per threshold `t` (`1 ≤ t < L`, `W_t ≤`
//! [`super::packing::MAX_WINDOWS`], `m ≤ p − 1`): `T[j]` for each triangle
//! triple `j` ("its three offsets are close"), and a counter `R[k,u]`
//! (`1 ≤ k ≤ K`, `1 ≤ u ≤ m`: "the close offsets among `1..=k` weigh at
//! least `u`").
//!
//! Clauses: `T[j] → [a close]` for each offset of the triple (one clause per
//! distinct offset); `R[k−1,u] → R[k,u]`, `[k close] → R[k, min(w_k, m)]`,
//! `[k close] ∧ R[k−1,u] → R[k, min(u + w_k, m)]`; and
//! `¬R[K,m] ∨ ⋁_j T[j]`. Counts: `J + K·m` variables and
//! `Σ_j |distinct offsets of j| + (K−1)·m + K + (K−1)·m + 1` clauses,
//! `J` the number of triangle triples (only the terms that exist: the first
//! offset has no predecessor).
//!
//! Soundness: set `[k close]`, `T[j]` and `R[k,u]` to the truth of their
//! readings on an isometric cycle; every implication then holds, and the last
//! clause is the lemma. The clauses only push `R` up to what is really
//! there, so no solution is lost.

use super::{Encoder, Term, packing, profile};
use crate::cnf::Size;
use crate::question::Question;

/// The family's label.
pub const FAMILY: &str = "pack-edges";

/// The thresholds used and, for each, the weight `m` that forces a triangle.
fn thresholds(q: &Question) -> Vec<(u64, usize)> {
    let p = q.period;
    if p < 3 {
        return Vec::new();
    }
    (1..q.grid.diameter())
        .filter_map(|t| {
            let (total, _) = packing::windows(&q.grid, t);
            if total > packing::MAX_WINDOWS {
                return None;
            }
            let m = (2 * total / p as u64 + 1) as usize;
            (m < p).then_some((t, m))
        })
        .collect()
}

/// The weight `w_k` of offset `k`: the number of edges it gives, over `p/2`.
fn weight(p: usize, k: usize) -> usize {
    if 2 * k == p { 1 } else { 2 }
}

/// The triangle triples: offsets `a ≤ b ≤ c` in `1..=⌊p/2⌋` with
/// `±a ± b ± c ≡ 0 (mod p)` for some signs, as sorted distinct offsets.
pub fn triangles(p: usize) -> Vec<Vec<usize>> {
    let k_max = p / 2;
    let mut out = Vec::new();
    for a in 1..=k_max {
        for b in a..=k_max {
            for c in b..=k_max {
                // Up to an overall sign, the signs are (+,+,±) and (+,−,±).
                let sums = [a + b + c, a + b + p - c, a + p - b + c, a + 2 * p - b - c];
                if sums.iter().any(|s| s % p == 0) {
                    let mut t = vec![a, b, c];
                    t.dedup();
                    out.push(t);
                }
            }
        }
    }
    out
}

/// Adds the edge bound for every threshold where it can bite.
pub fn add(e: &mut Encoder, q: &Question) {
    let p = q.period;
    let k_max = p / 2;
    let tris = triangles(p);
    for (t, m) in thresholds(q) {
        let close = |e: &Encoder, k: usize| -> Term { !profile::ge(e, q, k, t as i64 + 1) };
        let mut any: Vec<Term> = Vec::with_capacity(tris.len() + 1);
        for tri in &tris {
            let v = e.aux(FAMILY);
            for &k in tri {
                let c = close(e, k);
                e.clause(&[!v, c]);
            }
            any.push(v);
        }
        // prev[u] for u = 1..=m (index 0 unused): the counter after offset k − 1.
        let mut prev: Vec<Term> = Vec::new();
        for k in 1..=k_max {
            let cur: Vec<Term> = (0..=m)
                .map(|u| if u == 0 { Term::True } else { e.aux(FAMILY) })
                .collect();
            let c = close(e, k);
            let w = weight(p, k);
            if k > 1 {
                for u in 1..=m {
                    e.clause(&[!prev[u], cur[u]]);
                }
            }
            e.clause(&[!c, cur[w.min(m)]]);
            if k > 1 {
                for u in 1..=m {
                    e.clause(&[!c, !prev[u], cur[(u + w).min(m)]]);
                }
            }
            prev = cur;
        }
        any.push(!prev[m]);
        e.clause(&any);
    }
}

/// Exact size of this family for `q` (module doc).
pub fn size(q: &Question) -> Size {
    let p = q.period as u64;
    let k = p / 2;
    let tris = triangles(q.period);
    let j = tris.len() as u64;
    let links: u64 = tris.iter().map(|t| t.len() as u64).sum();
    let (mut vars, mut clauses) = (0u64, 0u64);
    for (_, m) in thresholds(q) {
        let m = m as u64;
        vars += j + k * m;
        clauses += links + (k - 1) * m + k + (k - 1) * m + 1;
    }
    Size::new(vars, clauses)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::Grid;

    fn q(spec: &str, dim: usize, p: usize) -> Question {
        Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap()
    }

    #[test]
    fn triangles_of_small_cycles() {
        // p = 6: offsets 1, 2, 3. Triangles: (2,2,2) (i, i+2, i+4), (1,1,2)
        // (i, i+1, i+2), (1,2,3) (i, i+1, i+3); (3,3,?) would need 6 ≡ ±c.
        assert_eq!(triangles(6), vec![vec![1, 2], vec![1, 2, 3], vec![2]]);
        // p = 4: (1,1,2) only.
        assert_eq!(triangles(4), vec![vec![1, 2]]);
        // Brute force over the circulant graph: a triple of offsets is a
        // triangle iff some positions 0, x, y realise exactly those offsets.
        for p in 3..=14usize {
            let fold = |d: usize| d.min(p - d);
            let mut want = std::collections::BTreeSet::new();
            for x in 1..p {
                for y in 1..p {
                    if x != y {
                        let mut t = vec![fold(x), fold(y), fold((y + p - x) % p)];
                        t.sort_unstable();
                        t.dedup();
                        want.insert(t);
                    }
                }
            }
            let got: std::collections::BTreeSet<_> = triangles(p).into_iter().collect();
            assert_eq!(got, want, "p = {p}");
        }
    }

    #[test]
    fn counts_and_thresholds() {
        // {−1,0,1}^4, p = 18: W_1 = 16, m = ⌊32/18⌋ + 1 = 2.
        assert_eq!(thresholds(&q("-1..1", 4, 18)), vec![(1, 2)]);
        // p = 8 = 2^3 on {−1,0,1}^3: m = 3.
        assert_eq!(thresholds(&q("-1..1", 3, 8)), vec![(1, 3)]);
        let question = q("-1..1", 3, 9);
        let enc = crate::encode::encode(
            &question,
            &crate::encode::EncodeOptions::default(),
            u64::MAX,
        )
        .unwrap();
        let fam = enc.families.iter().find(|f| f.family == FAMILY).unwrap();
        assert_eq!(fam.size(), size(&question));
        // p = 9: K = 4, m = ⌊16/9⌋ + 1 = 2; triangles of 9: (1,1,2), (1,2,3),
        // (1,3,4), (1,4,4), (2,2,4), (2,3,4), (3,3,3) — seven, with 2+3+3+2+2+3+1 links.
        assert_eq!(triangles(9).len(), 7);
        assert_eq!(fam.vars, 7 + 4 * 2);
        assert_eq!(fam.clauses, 16 + 3 * 2 + 4 + 3 * 2 + 1);
    }

    #[test]
    fn the_lemma_holds_on_brute_force_cycles() {
        // Independent of the encoding: on every cycle brute force finds, a
        // close graph with an edge and no triangle has at most W_t edges.
        let mut tested = 0;
        for (spec, dim, max_p) in [
            ("-1..1", 2, 4),
            ("0..2,0..3", 2, 4),
            ("-1..1", 3, 8),
            ("0..1,0..2,0..3", 3, 8),
        ] {
            let g = Grid::parse(spec, Some(dim)).unwrap();
            for p in 3..=max_p {
                for cycle in crate::brute::all_cycles(g.ranges(), p, 300) {
                    let dist = |a: &[i64], b: &[i64]| crate::brute::sup_distance(a, b) as u64;
                    for t in 1..g.diameter() {
                        let (w, _) = packing::windows(&g, t);
                        let close = |i: usize, j: usize| dist(&cycle[i], &cycle[j]) <= t;
                        let edges = (0..p)
                            .flat_map(|i| (i + 1..p).map(move |j| (i, j)))
                            .filter(|&(i, j)| close(i, j))
                            .count() as u64;
                        let triangle = (0..p).any(|i| {
                            (i + 1..p).any(|j| {
                                (j + 1..p).any(|k| close(i, j) && close(j, k) && close(i, k))
                            })
                        });
                        assert!(
                            triangle || edges == 0 || edges <= w,
                            "{spec} p={p} t={t}: {edges} edges > {w} windows in {cycle:?}"
                        );
                        tested += 1;
                    }
                }
            }
        }
        assert!(tested > 1000, "only {tested} cycles");
    }

    #[test]
    fn the_family_is_active_where_cycles_exist() {
        // {−1,0,1}^3, p = 6: m = 3, so "distance 1 exactly at offsets 1 and 3"
        // (9 edges, no triangle, 8 windows) is excluded while 6-cycles exist;
        // the image test in `soundness.rs` then checks real cycles against it.
        let question = q("-1..1", 3, 6);
        assert_eq!(thresholds(&question), vec![(1, 3)]);
        assert!(crate::brute::find_cycle(question.grid.ranges(), 6).is_some());
    }
}
