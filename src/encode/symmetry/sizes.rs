//! Closed-form sizes of the symmetry-breaking families.
//!
//! The encoder adds these families by walking multiplier maps, type ranks
//! and group orbits; the sizes below count the same clauses from the box and
//! the period alone, so that the size estimate lists no group and no map.
//! Each formula is derived here (and restated in `encodings/symmetry.md`);
//! the tests compare every one with what the encoder emits on many
//! questions (`encode/tests.rs`) and with the enumerations it walks (below).
//!
//! **Notation.** Sides `s_c = b_c − a_c`; for each side value `s > 0`, `m_s`
//! coordinates have side `s`; `n' = Σ_s m_s` (coordinates of side `> 0`);
//! `N = Π_c (s_c + 1)` points; `L = max_c s_c`; `p` the period and `K` the
//! number of profile offsets (`⌊p/2⌋` for the norm, `p − 1` for topical
//! maps); `φ` is Euler's totient and `τ(p)` the number of divisors of `p`;
//! `C(a, b)` a binomial coefficient, `(x)⁺ = max(x, 0)`. Products `Π_s` run
//! over the distinct sides `s > 0` (a side of one point adds a factor 1).
//!
//! **`sym-translate`.** One clause per coordinate of side `> 0`, no
//! variables: `(0, n')`.
//!
//! **`sym-multiplier`.** Let `μ` be the number of multiplier maps, `F` the
//! number of pairs (map `φ_a`, offset `k ≤ K`) with `φ_a(k) = k`, and `F_K`
//! those with `k = K`. For each map and offset `k` the encoder adds: when
//! `k < K`, one chain variable, with one clause if `φ_a(k) = k`; when
//! `φ_a(k) ≠ k`, `(L − 1)⁺` clauses, and `L` more if `k < K`. So
//!
//! ```text
//!     vars    = μ(K − 1)
//!     clauses = (F − F_K) + (μK − F)·(L − 1)⁺ + (μ(K − 1) − F + F_K)·L.
//! ```
//!
//! *Norm* (`p ≥ 3`; no maps below). The maps are `k ↦ fold(a·k)` for one
//! `a` of each class `{a, −a}` of units with `a ≢ ±1`; their first values
//! `fold(a) = min(a, p − a)` differ and are not 1, so `μ = φ(p)/2 − 1`. A
//! unit `a` fixes `k` (`a·k ≡ ±k`) iff `a ≡ ±1 (mod m)`, `m = p/gcd(k, p)`
//! the order of `k`; the units `≡ 1 (mod m)` are a fibre of the surjection
//! `(Z/p)^* → (Z/m)^*`, so `φ(p)/φ(m)` of them, as many `≡ −1`, the same ones
//! when `m = 2`. In classes: `φ(p)/φ(m)` fix `k` when `m > 2`, all `φ(p)/2`
//! when `m = 2`. Offsets `k ≤ K` of order `m > 2` are half of the `φ(m)`
//! elements of order `m` (`k ↔ p − k`), and `k = p/2` is the one of order 2.
//! Summing, `Σ_{m | p, m > 2} (φ(m)/2)(φ(p)/φ(m)) + [2 | p]·φ(p)/2 =
//! (φ(p)/2)(τ(p) − 1)`, of which the class `{±1}` accounts for `K`:
//! `F = (φ(p)/2)(τ(p) − 1) − K`. `K = p/2` is fixed by every unit when `p` is
//! even and by `±1` only when `p` is odd: `F_K = μ·[2 | p]`.
//!
//! *Topical* (`p ≥ 2`). The maps are `k ↦ a·k mod p` for every unit `a ≠ 1`:
//! `μ = φ(p) − 1`. `a` fixes `k` iff `a ≡ 1 (mod m)`: `φ(p)/φ(m)` units, and
//! `φ(m)` offsets in `1..p−1` have order `m`, so all units together fix
//! `φ(p)(τ(p) − 1)` pairs, `a = 1` accounts for `p − 1`:
//! `F = φ(p)(τ(p) − 1) − (p − 1)`; `K = p − 1 ≡ −1` is fixed by `a = 1` only,
//! `F_K = 0`.
//!
//! **`sym-rotate`.** Types (sorted lists of (side, distance to the nearer
//! face)) are chosen, side by side, as multisets of `m_s` distances from
//! `0..=⌊s/2⌋`: `T = Π_s C(⌊s/2⌋ + m_s, m_s)` ranks. The least rank is the
//! corner type (every distance 0), held by `2^{n'}` points. The family has
//! `T − 1` variables for `x_0` and for each of the `p − 1` other positions,
//! and for each such position one clause per point of rank `≥ 1`, `T − 2`
//! chain clauses and `T − 1` links, then `T − 1` clauses for `x_0`:
//!
//! ```text
//!     vars    = p·(T − 1)
//!     clauses = (p − 1)·((N − 2^{n'}) + (T − 2)⁺ + (T − 1)) + (T − 1).
//! ```
//!
//! **`sym-isometry`.** One clause, `(0, 1)`.
//!
//! **`sym-stabilizer`.** For each representative `r ∈ R`, one clause per
//! point that is not the least of its `Stab(r)`-orbit: `N − k_r`, with `k_r`
//! the number of `Stab(r)`-orbits on the box. `Σ_{r ∈ R} k_r` is the number
//! of orbits of the group `G` on pairs of points (a pair `(x, y)` is moved by
//! `G` to exactly one `(r, y')` with `r ∈ R`, and `y'` is defined up to
//! `Stab(r)`). `G` acts on each side class independently, permuting its
//! coordinates (and, for the norm, reflecting each), so its orbits on pairs
//! are, per side class, multisets of `m_s` orbits of one coordinate's pairs:
//! for the norm `(s + 1)²` pairs up to the reflection `(u, v) ↦ (s − u, s − v)`,
//! which fixes only `(s/2, s/2)` for even `s`: `⌈(s + 1)²/2⌉`; for topical
//! maps (no reflections) all `(s + 1)²`. With `|R|` the number of `G`-orbits
//! on points (`T` for the norm; multisets of `m_s` values of `0..=s`,
//! `Π_s C(s + m_s, m_s)`, for topical maps):
//!
//! ```text
//!     clauses = |R|·N − P,   P = Π_s C(⌈(s + 1)²/2⌉ + m_s − 1, m_s)   (norm)
//!                            P = Π_s C((s + 1)² + m_s − 1, m_s)        (topical)
//! ```
//!
//! and no variables.
//!
//! **`sym-reverse`.** For each `r ∈ R`, with the `Stab(r)`-orbits ordered by
//! their least points, `C_1 < C_2 < … < C_{k_r}`, of sizes `c_1, …, c_{k_r}`:
//! one ternary clause for each least point `z ≠ r` of an orbit `C_j` and each
//! point `w` whose orbit's least point precedes `z`, so
//! `Σ_r Σ_{j : C_j ≠ {r}} (c_1 + … + c_{j−1})`, no variables. (`{r}` is an
//! orbit, since `Stab(r)` fixes `r`.) This one has no product form: which
//! orbits precede which depends on how the grid's lexicographic order meets
//! the orbits, so [`reverse`] reads the orbit sizes from the list of orbits
//! that the family is built from (computed once per encoding). It is at most
//! `Σ_r (k_r − 1)·N = (P − |R|)·N`.
//!
//! **`sym-sort`** (topical, with `sym-rotate`). With `P' = (p − 2)⁺`:
//! `1 + P'·L + (p − 1)(N − 1)` variables and `1 + 2P'·L + (p − 1)(2N − 1)`
//! clauses ([`super::add_sort`]).

use crate::cnf::Size;
use crate::grid::Grid;
use crate::question::{MapClass, Question};

/// `(s, m_s)` for each distinct side `s > 0`, in increasing order of `s`.
pub fn side_classes(g: &Grid) -> Vec<(u64, u64)> {
    let mut sides: Vec<u64> = (0..g.dim()).map(|c| g.side(c)).filter(|&s| s > 0).collect();
    sides.sort_unstable();
    let mut out: Vec<(u64, u64)> = Vec::new();
    for s in sides {
        match out.last_mut() {
            Some((t, m)) if *t == s => *m += 1,
            _ => out.push((s, 1)),
        }
    }
    out
}

/// `C(n, k)`, saturating at `u128::MAX`.
pub fn binomial(n: u128, k: u128) -> u128 {
    if k > n {
        return 0;
    }
    let k = k.min(n - k);
    let mut r: u128 = 1;
    for i in 1..=k {
        // r = C(n − k + i − 1, i − 1) here, so r·(n − k + i)/i is exact.
        match r.checked_mul(n - k + i) {
            Some(x) => r = x / i,
            None => return u128::MAX,
        }
    }
    r
}

/// `Π_s f(s, m_s)` over the side classes, saturating, as `u64`.
fn product_over_sides(g: &Grid, f: impl Fn(u128, u128) -> u128) -> u64 {
    let p = side_classes(g).into_iter().fold(1u128, |acc, (s, m)| {
        acc.saturating_mul(f(s as u128, m as u128))
    });
    u64::try_from(p).unwrap_or(u64::MAX)
}

/// `T`, the number of point types of the box (the ranks of `sym-rotate`).
pub fn num_types(g: &Grid) -> u64 {
    product_over_sides(g, |s, m| binomial(s / 2 + m, m))
}

/// `|R|`, the number of orbits of the class's group on the points.
pub fn num_representatives(q: &Question) -> u64 {
    match q.class {
        MapClass::Nonexpansive => num_types(&q.grid),
        MapClass::Topical => product_over_sides(&q.grid, |s, m| binomial(s + m, m)),
    }
}

/// `P = Σ_{r ∈ R} k_r`, the number of orbits of the class's group on pairs of points.
pub fn num_pair_orbits(q: &Question) -> u64 {
    match q.class {
        MapClass::Nonexpansive => product_over_sides(&q.grid, |s, m| {
            binomial(((s + 1) * (s + 1)).div_ceil(2) + m - 1, m)
        }),
        MapClass::Topical => {
            product_over_sides(&q.grid, |s, m| binomial((s + 1) * (s + 1) + m - 1, m))
        }
    }
}

/// Euler's totient `φ(n)` and the number of divisors `τ(n)`, by trial division.
pub fn totient_and_divisors(n: u64) -> (u64, u64) {
    let (mut rest, mut phi, mut tau) = (n, n, 1u64);
    let mut d = 2u64;
    while d.saturating_mul(d) <= rest {
        if rest % d == 0 {
            let mut e = 0;
            while rest % d == 0 {
                rest /= d;
                e += 1;
            }
            phi = phi / d * (d - 1);
            tau *= e + 1;
        }
        d += 1;
    }
    if rest > 1 {
        phi = phi / rest * (rest - 1);
        tau *= 2;
    }
    (phi, tau)
}

/// Size of `sym-translate`: one clause per coordinate of side `> 0`.
pub fn translate(q: &Question) -> Size {
    Size::clauses(side_classes(&q.grid).iter().map(|&(_, m)| m).sum())
}

/// `(μ, F, F_K)` of `sym-multiplier` (module doc), with `K`.
pub fn multiplier_counts(q: &Question) -> (u64, u64, u64, u64) {
    let p = q.period as u64;
    let (phi, tau) = totient_and_divisors(p);
    match q.class {
        MapClass::Nonexpansive if p >= 3 => {
            let (mu, k) = (phi / 2 - 1, p / 2);
            (
                mu,
                k,
                phi / 2 * (tau - 1) - k,
                if p.is_multiple_of(2) { mu } else { 0 },
            )
        }
        MapClass::Topical if p >= 2 => (phi - 1, p - 1, phi * (tau - 1) - (p - 1), 0),
        _ => (0, 0, 0, 0),
    }
}

/// Size of `sym-multiplier` (module doc).
pub fn multiplier(q: &Question) -> Size {
    let (mu, k, fixed, fixed_last) = multiplier_counts(q);
    if mu == 0 {
        return Size::default();
    }
    let l = q.grid.diameter();
    let moved = mu * k - fixed;
    let moved_before_last = mu * (k - 1) - (fixed - fixed_last);
    Size::new(
        mu * (k - 1),
        (fixed - fixed_last) + moved * l.saturating_sub(1) + moved_before_last * l,
    )
}

/// Size of `sym-rotate` (module doc).
pub fn rotate(q: &Question) -> Size {
    let g = &q.grid;
    let t = num_types(g);
    let n = u64::try_from(g.num_points()).unwrap_or(u64::MAX);
    let live: u64 = side_classes(g).iter().map(|&(_, m)| m).sum();
    let corners = 1u64.checked_shl(live as u32).unwrap_or(u64::MAX);
    let p = q.period as u64;
    Size::new(
        p * (t - 1),
        (p - 1) * ((n - corners) + t.saturating_sub(2) + (t - 1)) + (t - 1),
    )
}

/// Size of `sym-isometry`: one clause.
pub fn isometry() -> Size {
    Size::clauses(1)
}

/// Size of `sym-stabilizer`: `|R|·N − P` clauses (module doc).
pub fn stabilizer(q: &Question) -> Size {
    let n = u64::try_from(q.grid.num_points()).unwrap_or(u64::MAX);
    Size::clauses(num_representatives(q) * n - num_pair_orbits(q))
}

/// Size of `sym-reverse`, from the orbits `classes` the family is built from
/// ([`super::stabilizer_classes`]): for each `r`, the sizes of the orbits
/// whose least point precedes each least point `z ≠ r`, summed (module doc).
pub fn reverse(classes: &[(usize, Vec<usize>)]) -> Size {
    let mut clauses = 0u64;
    for (r, min) in classes {
        let mut orbit_size = vec![0u64; min.len()];
        for &m in min {
            orbit_size[m] += 1;
        }
        // Points whose orbit's least point precedes z.
        let mut before = 0u64;
        for (z, &m) in min.iter().enumerate() {
            if m == z && z != *r {
                clauses += before;
            }
            before += orbit_size[z];
        }
    }
    Size::clauses(clauses)
}

/// Size of `sym-reverse` as a ladder ([`super::add_reverse_ladder`]): for
/// each `r` whose stabiliser has `k ≥ 2` orbits, `k − 1` variables and
/// `(N − c_k) + (k − 2) + (k − 1 − [r's orbit is not the first])` clauses,
/// `c_k` the size of the last orbit.
pub fn reverse_ladder(classes: &[(usize, Vec<usize>)]) -> Size {
    let (mut vars, mut clauses) = (0u64, 0u64);
    for (r, min) in classes {
        let n = min.len() as u64;
        let least: Vec<usize> = (0..min.len()).filter(|&z| min[z] == z).collect();
        let k = least.len() as u64;
        if k < 2 {
            continue;
        }
        let last = *least.last().expect("k ≥ 2");
        let c_k = min.iter().filter(|&&m| m == last).count() as u64;
        let r_first = least[0] == *r;
        vars += k - 1;
        clauses += (n - c_k) + (k - 2) + (k - 1 - u64::from(!r_first));
    }
    Size::new(vars, clauses)
}

/// Size of `sym-sort` ([`super::add_sort`]).
pub fn sort(q: &Question) -> Size {
    let p = q.period as u64;
    let n = u64::try_from(q.grid.num_points()).unwrap_or(u64::MAX);
    let pl = p.saturating_sub(2) * q.grid.diameter();
    let p1 = p - 1;
    Size::new(1 + pl + p1 * (n - 1), 1 + 2 * pl + p1 * (2 * n - 1))
}

/// Size of `sym-twins` ([`super::add_twins`]): nothing on odd periods and
/// below 8.
pub fn twins(q: &Question) -> Size {
    let p = q.period as u64;
    if !p.is_multiple_of(2) || p < 8 {
        return Size::new(0, 0);
    }
    let h = p / 2;
    let ml = (h - 1) / 2 * q.grid.diameter();
    let n = u64::try_from(q.grid.num_points()).unwrap_or(u64::MAX);
    let pairs = h - 3;
    Size::new(1 + ml + pairs * (n - 1), 1 + 4 * ml + pairs * (4 * n - 4))
}

#[cfg(test)]
mod tests {
    use super::super::{multiplier_maps_for, representatives_for, stabilizer_classes, type_ranks};
    use super::*;

    fn boxes() -> Vec<Grid> {
        [
            "0..0",
            "0..1",
            "-1..1",
            "0..3",
            "0..4",
            "0..1,0..2",
            "-1..1,-1..1",
            "0..2,0..2,0..1",
            "0..3,0..3",
            "0..1,0..1,0..1,0..1",
            "0..4,0..4",
            "0..5,0..2,0..5",
            "-1..1,0..0,-1..1",
            "0..2,0..2,0..2",
        ]
        .iter()
        .map(|s| Grid::parse(s, None).unwrap())
        .collect()
    }

    #[test]
    fn totients_and_divisor_counts() {
        let by_hand = |n: u64| {
            let phi = (1..=n).filter(|&a| gcd(a, n) == 1).count() as u64;
            (phi, (1..=n).filter(|&d| n.is_multiple_of(d)).count() as u64)
        };
        for n in 1..=300 {
            assert_eq!(totient_and_divisors(n), by_hand(n), "n = {n}");
        }
    }

    fn gcd(a: u64, b: u64) -> u64 {
        if b == 0 { a } else { gcd(b, a % b) }
    }

    #[test]
    fn multiplier_counts_match_the_maps() {
        // μ, F and F_K counted on the maps the encoder walks, for both classes.
        let g = Grid::parse("0..1", Some(9)).unwrap();
        for class in [MapClass::Nonexpansive, MapClass::Topical] {
            for p in 1..=240 {
                let q = Question::new(g.clone(), p).unwrap().with_class(class);
                let k = crate::encode::profile_len(&q);
                let maps = multiplier_maps_for(&q);
                let fixed = maps
                    .iter()
                    .map(|m| (1..=k).filter(|&j| m[j] == j).count())
                    .sum::<usize>();
                let fixed_last = maps.iter().filter(|m| k > 0 && m[k] == k).count();
                let (mu, kk, f, fk) = multiplier_counts(&q);
                if maps.is_empty() {
                    assert_eq!(mu, 0, "{class} p = {p}");
                    continue;
                }
                assert_eq!(
                    (mu, kk, f, fk),
                    (maps.len() as u64, k as u64, fixed as u64, fixed_last as u64),
                    "{class} p = {p}"
                );
            }
        }
    }

    #[test]
    fn types_representatives_and_pair_orbits_match_the_enumerations() {
        for g in boxes() {
            assert_eq!(num_types(&g), type_ranks(&g).1 as u64, "{}", g.spec());
            for class in [MapClass::Nonexpansive, MapClass::Topical] {
                let q = Question::new(g.clone(), 1).unwrap().with_class(class);
                assert_eq!(
                    num_representatives(&q),
                    representatives_for(&q).len() as u64,
                    "{class} {}",
                    g.spec()
                );
                let classes = stabilizer_classes(&q).unwrap();
                let orbits: usize = classes
                    .iter()
                    .map(|(_, min)| min.iter().enumerate().filter(|&(z, &m)| m == z).count())
                    .sum();
                assert_eq!(num_pair_orbits(&q), orbits as u64, "{class} {}", g.spec());
            }
        }
    }

    #[test]
    fn binomials() {
        assert_eq!(binomial(5, 2), 10);
        assert_eq!(binomial(3, 5), 0);
        assert_eq!(binomial(40, 20), 137_846_528_820);
        assert_eq!(binomial(1000, 500), u128::MAX);
    }
}
