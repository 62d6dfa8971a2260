//! Family `clique-orbits`: a close edge whose maximal cliques cannot be
//! invariant under a rotation of small index has more than `2^r` maximal
//! cliques around the cycle, which `window-cliques`' lemma forbids.
//!
//! Notation as in [`super::cliques`]: `L` the box's diameter, `r` its full
//! coordinates, `W = 2^r` its windows; an offset `k` is *close* when
//! `g(k) < L` and *far* when `g(k) = L`; the *close graph* joins positions
//! of the `p`-cycle at a close offset. It is a circulant graph: the
//! rotations `x ↦ x + t` of `Z_p` are automorphisms of it.
//!
//! **Lemma** \[derived\]. Let `k` (`1 ≤ k ≤ ⌊p/2⌋`) be close, and let
//! `D` be the divisors `s` of `p` with `s ≤ W`. For `s ∈ D` put
//!
//! ```text
//!     R(k, s) = { fold(j·s), fold(k + j·s) : 0 ≤ j < p/s } \ {0}
//! ```
//!
//! (`fold` maps a difference to its offset in `0..=⌊p/2⌋`). If every
//! `R(k, s)`, `s ∈ D`, holds a far offset, the close graph has more than
//! `W` maximal cliques; so no isometric cycle has such a top pattern.
//!
//! *Proof.* Positions `0` and `k` are joined; take a maximal clique `C`
//! holding both. The rotations that map `C` onto itself form a subgroup of
//! `Z_p`, so it is `⟨s⟩` for a divisor `s` of `p`, of index `s`, and `C` is
//! a union of cosets of `⟨s⟩`; the rotations map maximal cliques to maximal
//! cliques, and `C` has exactly `s` distinct images. If `s ∈ D`, then `C`
//! holds `⟨s⟩ ∪ (k + ⟨s⟩)`, that is `j·s` and `k + j·s` for every `j`, and
//! with `0` every offset of `R(k, s)` is the offset of two distinct points
//! of `C`, hence close: but one of them is far. So `s ∉ D`, and as `s`
//! divides `p`, `s > W`: the `s` images of `C` are more than `W` maximal
//! cliques, while [`super::cliques`] proves there are at most `W`. ∎
//!
//! The lemma needs nothing but the named offsets: `k` close and, for each
//! `s ∈ D`, one far offset `f_s ∈ R(k, s)`. So the clause
//!
//! ```text
//!     G[k, L]  ∨  ⋁_{s ∈ D} ¬G[f_s, L]
//! ```
//!
//! (with `G[k, L]` true when `g(k) ≥ L`, i.e. `k` far) holds on every
//! isometric cycle. It has at most `|D| + 1` literals (at most 12 on
//! `{−1,0,1}^5` for `p ≤ 80`), where a `window-cliques` clause names most
//! offsets of the pattern.
//!
//! **Which clauses.** The family shares the walk of `biclique-cover` over
//! the lex-least top patterns ([`super::bicliques::ruled_out`]); at each
//! whole pattern it is tried first, as it costs `O(p · |D| · ⌊p/2⌋)` steps
//! and no search. [`exclusion`] tries every close `k` and for each `s ∈ D`
//! takes the least far offset of `R(k, s)`; of the `k` for which every `s`
//! has one it keeps the one whose largest named offset is least (then the
//! fewest literals, then the least `k`), so that the walk returns as far up
//! as it can. Images under the multipliers follow `biclique-cover`'s rule:
//! a multiplier maps the close graph of a pattern onto that of its image,
//! which has as many maximal cliques.
//!
//! Variables: none. Clauses: one per exclusion.
//!
//! Soundness: the lemma above, on top of `window-cliques`' count; no
//! symmetry breaking assumed. Tests: on every pattern of every small period
//! and several window counts, every exclusion's clause is checked against
//! brute force (every pattern that agrees with it on its named offsets has
//! more maximal cliques than windows, counted over all subsets of
//! positions); every brute-force cycle satisfies every clause (in
//! [`super::bicliques`]); the agreement tests of `src/encode/soundness.rs`
//! switch the family with the others.

use super::bicliques::{Exclusion, Found, fold};

/// The family's label.
pub const FAMILY: &str = "clique-orbits";

/// The exclusion of the top pattern `mask` of a `p`-cycle (bit `k − 1` set
/// when offset `k` is far) by the lemma with `windows` windows, if some
/// close offset has a far offset in every `R(k, s)`; `None` otherwise, and
/// for `p > 128` (offsets beyond the mask).
pub fn exclusion(p: usize, mask: u64, windows: usize) -> Option<Exclusion> {
    let h = p / 2;
    if p > 128 || h == 0 {
        return None;
    }
    let divisors: Vec<usize> = (1..=windows.min(p))
        .filter(|&s| p.is_multiple_of(s))
        .collect();
    let far_at = |k: usize| k != 0 && mask >> (k - 1) & 1 == 1;
    // (largest named offset, literals, k, far offsets as bits)
    let mut best: Option<(usize, u32, usize, u64)> = None;
    for k in (1..=h).filter(|&k| !far_at(k)) {
        let mut far = 0u64;
        let all = divisors.iter().all(|&s| {
            let least = (0..p / s)
                .flat_map(|j| [fold(j * s, p), fold(k + j * s, p)])
                .filter(|&o| far_at(o))
                .min();
            if let Some(f) = least {
                far |= 1 << (f - 1);
            }
            least.is_some()
        });
        if !all {
            continue;
        }
        let end = k.max(64 - far.leading_zeros() as usize);
        let key = (end, far.count_ones() + 1, k, far);
        if best.is_none_or(|b| key < b) {
            best = Some(key);
        }
    }
    let (_, _, k, far) = best?;
    Some(Exclusion {
        far: (0..64)
            .filter(|&b| far >> b & 1 == 1)
            .map(|b| b + 1)
            .collect(),
        close: vec![k],
        source: mask,
        found: Found::CliqueOrbits,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The number of maximal cliques of the close graph of `mask` by brute
    /// force over all subsets of positions.
    fn maximal_cliques(p: usize, mask: u64) -> usize {
        let far = |u: usize, v: usize| {
            let d = v.abs_diff(u);
            let k = d.min(p - d);
            k != 0 && mask >> (k - 1) & 1 == 1
        };
        let is_clique = |s: u32| {
            (0..p).all(|u| s >> u & 1 == 0 || (0..u).all(|v| s >> v & 1 == 0 || !far(u, v)))
        };
        (1u32..(1 << p))
            .filter(|&s| is_clique(s) && (0..p).all(|w| s >> w & 1 == 1 || !is_clique(s | 1 << w)))
            .count()
    }

    #[test]
    fn every_clause_describes_patterns_with_too_many_maximal_cliques() {
        let mut checked = 0;
        for p in 4..=14usize {
            let h = p / 2;
            let counts: Vec<usize> = (0u64..(1 << h)).map(|m| maximal_cliques(p, m)).collect();
            for windows in [1usize, 2, 3, 4, 6, 8] {
                if p <= windows {
                    continue;
                }
                for mask in 0u64..(1 << h) {
                    let Some(x) = exclusion(p, mask, windows) else {
                        continue;
                    };
                    // Found on its own pattern.
                    assert!(x.far.iter().all(|&k| mask >> (k - 1) & 1 == 1));
                    assert!(x.close.iter().all(|&k| mask >> (k - 1) & 1 == 0));
                    let far: u64 = x.far.iter().fold(0, |m, k| m | 1 << (k - 1));
                    let close: u64 = x.close.iter().fold(0, |m, k| m | 1 << (k - 1));
                    for other in 0u64..(1 << h) {
                        if other & far == far && other & close == 0 {
                            assert!(
                                counts[other as usize] > windows,
                                "p={p} W={windows} mask={mask:#b}: {x:?} holds at {other:#b} \
                                 with {} maximal cliques",
                                counts[other as usize]
                            );
                            checked += 1;
                        }
                    }
                }
            }
        }
        assert!(checked > 10_000, "{checked}");
    }

    #[test]
    fn it_rules_out_every_pattern_of_a_prime_period_with_a_close_and_a_far_offset() {
        // For a prime p > W the only divisor up to W is 1, whose R(k, 1)
        // holds every offset: one far offset anywhere is enough.
        for p in [37usize, 41, 43] {
            let h = p / 2;
            for mask in [1u64, 1 << (h - 1), 0b1010, (1 << h) - 2] {
                let x = exclusion(p, mask, 32).expect("ruled out");
                assert_eq!(x.far.len(), 1);
                assert_eq!(x.close.len(), 1);
            }
            assert!(exclusion(p, 0, 32).is_none(), "no far offset");
            assert!(exclusion(p, (1 << h) - 1, 32).is_none(), "no close offset");
        }
    }
}
