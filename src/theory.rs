//! The published theory of periods: the bounds, the constructions that reach
//! them, and the citations, in one place.
//!
//! Every statement here is about the *effective dimension* `n'` of a box
//! ([`effective_dim`]): a box with `n'` sides of length ≥ 1 is isometric to
//! a subset of `R^{n'}`, so every theorem about `R^{n'}` applies to it.
//!
//! - **Bounds.** Every period of a sup-norm nonexpansive map on a subset of
//!   `R^n` is at most `max_k 2^k·C(n,k)` ([`lemmens_scheutzow_bound`]), and
//!   every period of a topical map on `R^n` at most `C(n, ⌊n/2⌋)`
//!   ([`topical_bound`]), both by Lemmens and Scheutzow ([`CITE_LS`],
//!   [`CITE_LS_TOPICAL`]). For `n ≤ 3` the periods are exactly `1..2^n`
//!   ([`CITE_LN`], \[recalled\]); a prime period is at most `2^n`
//!   ([`CITE_PRIME`], \[recalled\]).
//! - **Constructions** ([`construct`]): every `p ≤ 2^n'` by `p` vertices of
//!   a unit cube ([`unit_cube`]); for topical maps every
//!   `p ≤ C(n', ⌊n'/2⌋)` by points of its middle layer ([`middle_layer`]).
//! - **Verdicts against theorems**: [`published`] says what is known about
//!   one period, [`theorem_conflict`] whether a verdict contradicts it, and
//!   [`statements`] words the theorems for reports, applied to one box.

use serde::Serialize;

use crate::grid::{Grid, Point};
use crate::question::{MapClass, QuestionRecord};
use crate::report::Verdict;

/// Number of coordinates whose range has more than one point: the dimension
/// the box really has. A side of one point adds nothing to any distance.
pub fn effective_dim(grid: &Grid) -> usize {
    (0..grid.dim()).filter(|&c| grid.side(c) > 0).count()
}

/// `C(n, ⌊n/2⌋)`, the largest antichain of `{0,1}^n` (Sperner): every period
/// of a topical map on R^n is at most this ([`CITE_LS_TOPICAL`]).
/// Saturates at `u128::MAX`.
pub fn topical_bound(n: usize) -> u128 {
    let mut binom = 1u128;
    for k in 1..=n / 2 {
        binom = binom.saturating_mul((n - k + 1) as u128) / k as u128;
    }
    binom
}

/// `max_k 2^k·C(n,k)`: every period of a sup-norm nonexpansive map on a
/// subset of R^n is at most this ([`CITE_LS`]). Saturates at `u128::MAX`.
pub fn lemmens_scheutzow_bound(n: usize) -> u128 {
    let mut best = 1u128;
    let mut binom = 1u128; // C(n, k)
    for k in 0..=n {
        if k > 0 {
            binom = binom.saturating_mul((n - k + 1) as u128) / k as u128;
        }
        let pow = if k < 127 { 1u128 << k } else { u128::MAX };
        best = best.max(binom.saturating_mul(pow));
    }
    best
}

/// Every period up to this is answered by [`construct`]: `2^n'` for
/// nonexpansive maps, `C(n', ⌊n'/2⌋)` for topical maps. Saturates.
pub fn construction_limit(grid: &Grid, class: MapClass) -> u128 {
    construction_limit_in(effective_dim(grid), class)
}

fn construction_limit_in(n: usize, class: MapClass) -> u128 {
    match class {
        MapClass::Nonexpansive if n >= 128 => u128::MAX,
        MapClass::Nonexpansive => 1u128 << n,
        MapClass::Topical => topical_bound(n),
    }
}

/// The proven upper bound on the periods of `class` in dimension `n'`, both
/// from Lemmens and Scheutzow (2005): `max_k 2^k·C(n',k)` for sup-norm
/// nonexpansive maps, `C(n', ⌊n'/2⌋)` for topical maps. Saturates.
pub fn period_bound(grid: &Grid, class: MapClass) -> u128 {
    period_bound_in(effective_dim(grid), class)
}

fn period_bound_in(n: usize, class: MapClass) -> u128 {
    match class {
        MapClass::Nonexpansive => lemmens_scheutzow_bound(n),
        MapClass::Topical => topical_bound(n),
    }
}

/// A `p`-cycle of `class` on `grid` built without solving, when
/// `1 ≤ p ≤` [`construction_limit`]: [`unit_cube`] for nonexpansive maps,
/// [`middle_layer`] for topical maps. `None` above the limit.
pub fn construct(grid: &Grid, class: MapClass, p: usize) -> Option<Vec<Point>> {
    if p == 0 || p as u128 > construction_limit(grid, class) {
        return None;
    }
    Some(match class {
        MapClass::Nonexpansive => unit_cube(grid, p),
        MapClass::Topical => middle_layer(grid, p),
    })
}

/// The coordinates of side ≥ 1 and the lower corner `(a_c)_c` of `grid`:
/// the unit cube both constructions live in is `lower + {0,1}^active`.
fn unit_cube_frame(grid: &Grid) -> (Vec<usize>, Point) {
    let active = (0..grid.dim()).filter(|&c| grid.side(c) > 0).collect();
    let lower = (0..grid.dim()).map(|c| grid.lo(c)).collect();
    (active, lower)
}

/// `p` points of the unit cube `Π_c {a_c, a_c + 1}` over the coordinates of
/// side ≥ 1 (the others fixed at `a_c`), for `1 ≤ p ≤ 2^n'`: point `i`
/// adds the binary digits of `i` to the lower corner. Distinct points of the
/// cube differ by exactly 1 in some coordinate and by at most 1 in every
/// coordinate, so all distances are 1 and any order is an isometric cycle.
/// Callers keep `p ≤ 2^n'` ([`construct`] does); above it points repeat.
pub fn unit_cube(grid: &Grid, p: usize) -> Vec<Point> {
    let (active, lower) = unit_cube_frame(grid);
    (0..p)
        .map(|i| {
            let mut z = lower.clone();
            for (bit, &c) in active.iter().enumerate() {
                if bit < usize::BITS as usize && (i >> bit) & 1 == 1 {
                    z[c] += 1;
                }
            }
            z
        })
        .collect()
}

/// The first `p` points, in lexicographic order of their sets of raised
/// coordinates, of the middle layer of the unit cube of [`unit_cube`]: the
/// points with exactly `⌊n'/2⌋` of the `n'` coordinates of side ≥ 1 raised
/// from `a_c` to `a_c + 1`. For `1 ≤ p ≤ C(n', ⌊n'/2⌋)` they are a topical
/// `p`-cycle in any order \[derived\]: two distinct points `y ≠ z` of one
/// layer are incomparable 0/1 offsets from the corner with the same number
/// of ones, so some coordinate has `y_c − z_c = 1` and none has more, and
/// `t(y, z) = max_c (y_c − z_c) = 1` for every ordered pair (the fixed
/// coordinates contribute 0). So `t(x_i, x_{i+k}) = 1` for all `i` and
/// `k ≢ 0`. Callers keep `p` in range ([`construct`] does); above it the
/// list is shorter than `p`.
pub fn middle_layer(grid: &Grid, p: usize) -> Vec<Point> {
    let (active, lower) = unit_cube_frame(grid);
    let (n, k) = (active.len(), active.len() / 2);
    // The k-subsets of 0..n in lexicographic order: `chosen` is increasing;
    // the next subset raises the last entry that can still move right and
    // resets the entries after it.
    let mut chosen: Vec<usize> = (0..k).collect();
    let mut out = Vec::with_capacity(p);
    while out.len() < p {
        let mut z = lower.clone();
        for &j in &chosen {
            z[active[j]] += 1;
        }
        out.push(z);
        let Some(i) = (0..k).rev().find(|&i| chosen[i] < n - k + i) else {
            break;
        };
        chosen[i] += 1;
        for j in i + 1..k {
            chosen[j] = chosen[j - 1] + 1;
        }
    }
    out
}

/// What the published theorems say about a period.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Status {
    /// The period occurs (the class's construction).
    Exists,
    /// A theorem excludes it.
    Excluded,
    /// Nothing published decides it, as far as we know.
    Open,
}

impl Status {
    /// The word used in reports: `exists`, `excluded` or `open`.
    pub fn word(self) -> &'static str {
        match self {
            Status::Exists => "exists",
            Status::Excluded => "excluded",
            Status::Open => "open",
        }
    }
}

/// The published facts that bear on one period.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Published {
    /// What they say.
    pub status: Status,
    /// Which theorems, in words with their sources.
    pub reasons: Vec<String>,
}

/// The Lemmens–Scheutzow bound with its source.
pub const CITE_LS: &str = "B. Lemmens and M. Scheutzow, On the dynamics of sup-norm non-expansive maps, \
     Ergodic Theory Dynam. Systems 25 (2005) 861–871";
/// The case n ≤ 3 with its source (recalled, not read).
pub const CITE_LN: &str = "R. Lyons and R. D. Nussbaum, On transitive and commutative finite groups of \
     isometries, in Fixed Point Theory and Applications, World Scientific, 1992 [recalled]";
/// The topical bound with its source (read, as recorded in docs/math.md §7).
pub const CITE_LS_TOPICAL: &str = "B. Lemmens and M. Scheutzow, On the dynamics of sup-norm non-expansive maps, \
     Ergodic Theory Dynam. Systems 25 (2005) 861–871, proving a conjecture of J. Gunawardena and C. Sparrow";
/// The prime-period theorem with its source (recalled, not read).
pub const CITE_PRIME: &str = "Lyons and Nussbaum; a proof is in B. Lemmens and R. D. Nussbaum, \
     Nonlinear Perron–Frobenius Theory, Cambridge University Press, 2012 [recalled]";
/// [`CITE_LS`] (and [`CITE_LS_TOPICAL`]) in short, for one-line reasons.
pub const SHORT_LS: &str = "Lemmens and Scheutzow 2005";
/// [`CITE_LN`] in short, with its mark.
pub const SHORT_LN: &str = "Lyons and Nussbaum 1992 [recalled]";

fn is_prime(p: usize) -> bool {
    p >= 2
        && (2..)
            .take_while(|d| d * d <= p)
            .all(|d| !p.is_multiple_of(d))
}

/// What is published about period `p` of `class` on `grid`, in terms of the
/// effective dimension `n'`. A box with `n'` sides of length ≥ 1 is
/// isometric to a subset of `R^{n'}`, so every bound for `R^{n'}` applies to
/// nonexpansive maps. For topical maps, dropping the fixed coordinates keeps
/// `t` on the orbit (they add a 0 to a maximum that is ≥ 1 on distinct
/// integer points of a cycle), so the orbit is a topical cycle in `R^{n'}`
/// and the `n'` bound applies too \[derived\].
pub fn published(grid: &Grid, class: MapClass, p: usize) -> Published {
    if class == MapClass::Topical {
        return published_topical(grid, p);
    }
    let n = effective_dim(grid);
    let two_n = construction_limit(grid, class);
    let ls = period_bound(grid, class);
    let p128 = p as u128;
    if p >= 1 && p128 <= two_n {
        return Published {
            status: Status::Exists,
            reasons: vec![format!(
                "p ≤ 2^{n} = {two_n}: any p vertices of a unit cube, pairwise at distance 1"
            )],
        };
    }
    let mut reasons = Vec::new();
    if p128 > ls {
        reasons.push(format!("p > {ls} = max_k 2^k·C({n},k) ({SHORT_LS})"));
    }
    if n <= 3 {
        reasons.push(format!(
            "n' = {n} ≤ 3: the periods are exactly 1..{two_n} ({SHORT_LN})"
        ));
    }
    if is_prime(p) {
        reasons.push(format!(
            "p is prime and > 2^{n} = {two_n} (prime-period theorem [recalled])"
        ));
    }
    if reasons.is_empty() {
        Published {
            status: Status::Open,
            reasons: vec!["no published answer known".into()],
        }
    } else {
        Published {
            status: Status::Excluded,
            reasons,
        }
    }
}

/// The topical half of [`published`]: there is no open period, because the
/// middle-layer construction reaches the Lemmens–Scheutzow bound
/// `C(n', ⌊n'/2⌋)` exactly. None of the nonexpansive theorems is shown.
fn published_topical(grid: &Grid, p: usize) -> Published {
    let n = effective_dim(grid);
    let bound = period_bound(grid, MapClass::Topical);
    let words = format!("C({n},{}) = {bound}", n / 2);
    if p >= 1 && p as u128 <= bound {
        Published {
            status: Status::Exists,
            reasons: vec![format!(
                "p ≤ {words}: any p points of the middle layer of a unit cube, with t = 1 between any two [derived]"
            )],
        }
    } else {
        Published {
            status: Status::Excluded,
            reasons: vec![format!(
                "p > {words} ({SHORT_LS}, the Gunawardena–Sparrow conjecture)"
            )],
        }
    }
}

/// The theorem that `verdict` for period `p` of `class` on `grid`
/// contradicts, if any: feasible where a theorem excludes the period, or
/// infeasible where the construction exists.
pub fn theorem_conflict(
    grid: &Grid,
    class: MapClass,
    p: usize,
    verdict: Verdict,
) -> Option<String> {
    conflict_with(published(grid, class, p), verdict)
}

/// [`published`] for the question of `record`: on a point set (inside the
/// box `grid`) the upper bounds still hold, as D is a subset of R^n', but the
/// unit-cube construction does not, so "exists" becomes "open".
pub fn published_for(record: &QuestionRecord, grid: &Grid) -> Published {
    let pubd = published(grid, record.class, record.period);
    if record.points.is_none() || pubd.status != Status::Exists {
        return pubd;
    }
    Published {
        status: Status::Open,
        reasons: vec![
            "the unit-cube construction needs a box; D is a point set, decided by the full-map solver"
                .into(),
        ],
    }
}

/// [`theorem_conflict`] for the question of `record` ([`published_for`]).
pub fn theorem_conflict_for(
    record: &QuestionRecord,
    grid: &Grid,
    verdict: Verdict,
) -> Option<String> {
    conflict_with(published_for(record, grid), verdict)
}

fn conflict_with(pubd: Published, verdict: Verdict) -> Option<String> {
    match (pubd.status, verdict) {
        (Status::Excluded, Verdict::Feasible) => Some(format!(
            "published theorems exclude the period ({})",
            pubd.reasons.join("; ")
        )),
        (Status::Exists, Verdict::Infeasible) => Some(format!(
            "the period exists by construction ({})",
            pubd.reasons.join("; ")
        )),
        _ => None,
    }
}

/// One published theorem, or a construction, as it applies to one domain,
/// worded for reports.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Statement {
    /// One clause for a one-line summary (`p > 12 excluded (Lemmens and
    /// Scheutzow 2005)`); `None` when the statement says nothing here.
    pub short: Option<String>,
    /// A Markdown paragraph: the statement, its source, and what it gives here.
    pub long: String,
}

/// The published statements that frame a sweep of `class` in effective
/// dimension `n'` = `n`, on a box or (`on_points`) on a point set inside
/// one. On a point set the upper bounds hold (D is a subset of `R^n'`) but
/// the unit-cube construction does not: no period is known to occur without
/// solving. For topical maps only the topical theorem and the middle layer
/// are stated; the nonexpansive theorems bound a larger class and would
/// mislead.
pub fn statements(n: usize, class: MapClass, on_points: bool) -> Vec<Statement> {
    let cl = construction_limit_in(n, class);
    let bound = period_bound_in(n, class);
    if class == MapClass::Topical {
        let k = n / 2;
        return vec![
            Statement {
                short: Some(format!(
                    "p ≤ C({n},{k}) = {bound} exist (middle layer of a unit cube [derived])"
                )),
                long: format!(
                    "**Every p ≤ C(n,⌊n/2⌋) occurs** (construction [derived]): the C(n,⌊n/2⌋) points of the middle layer \
                     of a unit cube `Π {{a_c, a_c+1}}` are incomparable 0/1 offsets with the same number of ones, so \
                     t(y, z) = max_c (y_c − z_c) = 1 for any two of them, and any p of them, in any order, are a periodic \
                     orbit of a topical map. Here C({n},{k}) = {bound}."
                ),
            },
            Statement {
                short: Some(format!("p > {bound} excluded ({SHORT_LS})")),
                long: format!(
                    "**p ≤ C(n,⌊n/2⌋)** for every periodic orbit of a topical map on R^n: {CITE_LS_TOPICAL}. \
                     Here the bound is {bound}, so the periods are exactly 1..{bound}."
                ),
            },
        ];
    }
    let construction = if on_points {
        Statement {
            short: Some(
                "the unit-cube construction needs a box, so every period of D went to the full-map solver"
                    .into(),
            ),
            long: "**The unit-cube construction needs a box**: D is a point set, so no period of D is known \
                   to occur without solving, and every period was decided by the full-map solver."
                .into(),
        }
    } else {
        Statement {
            short: Some(format!("p ≤ 2^{n} = {cl} exist (construction)")),
            long: format!(
                "**Every p ≤ 2^n occurs** (construction): the {cl} vertices of a unit cube `Π {{a_c, a_c+1}}` are pairwise \
                 at distance 1, so any p of them, in any order, are an isometric p-cycle. Here 2^{n} = {cl}."
            ),
        }
    };
    let small = Statement {
        short: (n <= 3).then(|| match on_points {
            true => format!("n' ≤ 3: p ≤ {cl} ({SHORT_LN})"),
            false => format!("n' ≤ 3: exactly 1..{cl} ({SHORT_LN})"),
        }),
        long: format!(
            "**n ≤ 3: the periods are exactly 1..2^n** (p ≤ 8 for n = 3; with the construction): {CITE_LN}. {}",
            match (n <= 3, on_points) {
                (true, false) => format!("It applies here: the periods are exactly 1..{cl}."),
                (true, true) => format!("It applies here: every period of D is at most {cl}."),
                (false, _) => "It does not apply here (n' > 3).".into(),
            }
        ),
    };
    let mut out = Vec::with_capacity(4);
    if !on_points {
        out.push(construction.clone());
    }
    out.push(Statement {
        short: Some(format!("p > {bound} excluded ({SHORT_LS})")),
        long: format!(
            "**p ≤ max_k 2^k·C(n,k)** for every sup-norm nonexpansive map on a subset of R^n: {CITE_LS}. \
             Here the bound is {bound}."
        ),
    });
    out.push(small);
    out.push(Statement {
        short: Some(format!("prime p > {cl} excluded [recalled]")),
        long: format!(
            "**A prime period is at most 2^n**: {CITE_PRIME}. Here it excludes the primes above {cl}."
        ),
    });
    if on_points {
        out.push(construction);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::question::Question;
    use crate::verify;

    fn grid(spec: &str, dim: usize) -> Grid {
        Grid::parse(spec, Some(dim)).unwrap()
    }

    #[test]
    fn bound_values_match_the_table_in_lemmens_scheutzow_2005() {
        // Values for n = 1..8 from the formula of the paper (docs/math.md §6).
        let got: Vec<u128> = (1..=8).map(lemmens_scheutzow_bound).collect();
        assert_eq!(got, vec![2, 4, 12, 32, 80, 240, 672, 1792]);
    }

    #[test]
    fn topical_bound_values_match_the_table_in_math_md() {
        // C(n, ⌊n/2⌋) for n = 1..8 (Lemmens and Scheutzow 2005; values as in
        // docs/math.md §7).
        let got: Vec<u128> = (1..=8).map(topical_bound).collect();
        assert_eq!(got, vec![1, 2, 3, 6, 10, 20, 35, 70]);
    }

    #[test]
    fn sides_of_one_point_do_not_count() {
        let g = Grid::parse("0..2,5..5,0..1", None).unwrap();
        assert_eq!(effective_dim(&g), 2);
    }

    /// The extension of `orbit`'s shift to the whole box, built and checked
    /// by exhaustion, as `check --map` does, for the class of `q`.
    fn assert_extends(q: &Question, orbit: &[Point]) {
        let bounds = q.grid.ranges();
        match q.class {
            MapClass::Nonexpansive => {
                let table = verify::extend(bounds, orbit).unwrap();
                verify::check_map(&table, orbit).unwrap();
            }
            MapClass::Topical => {
                for clamp in [false, true] {
                    let table = verify::extend_topical(bounds, orbit, clamp).unwrap();
                    verify::check_topical_map(&table, orbit, !clamp).unwrap();
                }
            }
        }
    }

    #[test]
    fn construction_gives_checked_cycles_up_to_two_to_the_n() {
        for (g, limit) in [
            (grid("-1..1", 3), 8),
            (grid("0..3", 2), 4),
            (grid("0..2,5..5,0..1", 3), 4),
            (grid("7..7", 2), 1),
        ] {
            let class = MapClass::Nonexpansive;
            assert_eq!(construction_limit(&g, class), limit);
            for p in 1..=limit as usize {
                let orbit = construct(&g, class, p).unwrap();
                let check = verify::check_orbit(g.ranges(), &orbit).unwrap();
                assert!(check.profile.iter().all(|&d| d == 1));
                assert_extends(&Question::new(g.clone(), p).unwrap(), &orbit);
            }
            assert!(construct(&g, class, limit as usize + 1).is_none());
            assert!(construct(&g, class, 0).is_none());
        }
    }

    #[test]
    fn published_statuses() {
        let ne = MapClass::Nonexpansive;
        let t3 = grid("-1..1", 3);
        assert_eq!(published(&t3, ne, 8).status, Status::Exists);
        assert_eq!(published(&t3, ne, 9).status, Status::Excluded);
        assert_eq!(published(&t3, ne, 13).reasons.len(), 3);
        let t4 = grid("-1..1", 4);
        assert_eq!(published(&t4, ne, 16).status, Status::Exists);
        assert_eq!(published(&t4, ne, 17).status, Status::Excluded);
        assert_eq!(published(&t4, ne, 18).status, Status::Open);
        assert_eq!(published(&t4, ne, 33).status, Status::Excluded);
        assert!(theorem_conflict(&t4, ne, 17, Verdict::Feasible).is_some());
        assert!(theorem_conflict(&t4, ne, 18, Verdict::Feasible).is_none());
        assert!(theorem_conflict(&t4, ne, 3, Verdict::Infeasible).is_some());
        assert!(theorem_conflict(&t4, ne, 3, Verdict::Unknown).is_none());
    }

    #[test]
    fn published_statuses_of_topical_maps() {
        // Lemmens and Scheutzow (2005): topical periods on R^4 are at most
        // C(4,2) = 6; the middle layer gives 1..6 [derived]. Nothing is open,
        // and none of the nonexpansive theorems (2^n, n ≤ 3, primes) is cited.
        let t = MapClass::Topical;
        let b4 = grid("0..1", 4);
        for p in 1..=6 {
            assert_eq!(published(&b4, t, p).status, Status::Exists, "p = {p}");
        }
        for p in [7, 11, 16] {
            let pubd = published(&b4, t, p);
            assert_eq!(pubd.status, Status::Excluded, "p = {p}");
            assert_eq!(pubd.reasons.len(), 1);
            assert!(pubd.reasons[0].contains("C(4,2) = 6"), "{:?}", pubd.reasons);
        }
        // p = 7 is prime and ≤ 2^4 = 16: only the topical bound excludes it;
        // p = 13 is a nonexpansive period of {-1,0,1}^4 but not a topical one.
        let text = format!("{:?}", published(&b4, t, 13));
        assert!(!text.contains("prime") && !text.contains("2^"), "{text}");
        assert!(theorem_conflict(&b4, t, 7, Verdict::Feasible).is_some());
        assert!(theorem_conflict(&b4, t, 6, Verdict::Infeasible).is_some());
        assert!(theorem_conflict(&b4, t, 7, Verdict::Infeasible).is_none());
        // The fixed coordinate does not count: n' = 3, C(3,1) = 3.
        let flat = grid("0..2,1..1,0..2,0..2", 4);
        assert_eq!(published(&flat, t, 3).status, Status::Exists);
        assert_eq!(published(&flat, t, 4).status, Status::Excluded);
    }

    #[test]
    fn middle_layer_gives_checked_topical_cycles_up_to_the_bound() {
        // Every p ≤ C(n', ⌊n'/2⌋) on boxes with unequal sides, one-point
        // sides and n' = 0..6: the orbit passes the topical check with t = 1
        // everywhere, and both extensions pass the topical map check.
        let t = MapClass::Topical;
        for (g, limit) in [
            (grid("0..1", 4), 6),
            (grid("0..1", 5), 10),
            (grid("0..1", 6), 20),
            (grid("-1..1", 3), 3),
            (grid("0..2,5..5,0..1", 3), 2),
            (grid("0..1,0..3,-2..0,7..7,1..2", 5), 6),
            (grid("0..3", 1), 1),
            (grid("7..7", 2), 1),
        ] {
            assert_eq!(construction_limit(&g, t), limit, "{g}");
            let q = |p| Question::new(g.clone(), p).unwrap().with_class(t);
            for p in 1..=limit as usize {
                let orbit = construct(&g, t, p).unwrap();
                assert_eq!(orbit.len(), p);
                let check = verify::check_topical_orbit(g.ranges(), &orbit)
                    .unwrap_or_else(|e| panic!("{g} p = {p}: {e}"));
                assert!(check.profile.iter().all(|&d| d == 1), "{g} p = {p}");
                if g.num_points() <= 64 {
                    assert_extends(&q(p), &orbit);
                }
            }
            // The whole layer is used, and no more.
            assert_eq!(middle_layer(&g, limit as usize + 5).len(), limit as usize);
            assert!(construct(&g, t, limit as usize + 1).is_none());
            assert!(construct(&g, t, 0).is_none());
        }
        // The layer of {0,1}^4 in order: the 2-subsets 01, 02, 03, 12, 13, 23.
        assert_eq!(
            middle_layer(&grid("0..1", 4), 6),
            vec![
                vec![1, 1, 0, 0],
                vec![1, 0, 1, 0],
                vec![1, 0, 0, 1],
                vec![0, 1, 1, 0],
                vec![0, 1, 0, 1],
                vec![0, 0, 1, 1],
            ]
        );
        // A unit-cube cycle is not topical: (0,0) ≤ (1,0) gives t = 0.
        let cube = construct(&grid("0..1", 2), MapClass::Nonexpansive, 2).unwrap();
        assert!(verify::check_topical_orbit(grid("0..1", 2).ranges(), &cube).is_err());
    }

    #[test]
    fn statements_on_a_point_set_claim_no_construction() {
        // On a box with n' = 2 every p ≤ 4 exists; on a point set in it only
        // the upper bounds hold, and nothing says "exactly" or "occurs".
        let on_box = statements(2, MapClass::Nonexpansive, false);
        let on_set = statements(2, MapClass::Nonexpansive, true);
        assert!(on_box[0].long.starts_with("**Every p ≤ 2^n occurs**"));
        assert_eq!(on_box.len(), on_set.len());
        let longs: Vec<&str> = on_set.iter().map(|s| s.long.as_str()).collect();
        assert!(longs.iter().all(|l| !l.contains("occurs**")), "{longs:?}");
        assert!(
            longs
                .iter()
                .any(|l| l.contains("every period of D is at most 4")),
            "{longs:?}"
        );
        assert!(!format!("{on_set:?}").contains("exactly 1..4"));
        // n' > 3: the small-dimension theorem is named but gives nothing.
        let big = statements(4, MapClass::Nonexpansive, false);
        assert_eq!(big.iter().filter(|s| s.short.is_some()).count(), 3);
    }
}
