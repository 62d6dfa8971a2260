//! Soundness tests of the symmetry breaking and redundant constraints.
//!
//! Two checks against the independent brute force of [`crate::brute`].
//!
//! 1. Verdicts agree with brute force, every orbit verified, under options:
//!    - every one of the 256 valid combinations (`all_combinations`: the 32
//!      valid sets of symmetry families times the 8 subsets of the redundant
//!      families `count`, `packing` and `classes`) on every box of dimension
//!      one (up to 6 points) and two (up to 4 points per side), for both map
//!      classes (a topical question resolves every combination to one of 24
//!      option sets, since the redundant families and `sym-reverse` are off
//!      for it);
//!    - in dimension three (sides of up to 3 points), the representative
//!      sets of `representative_combinations` in the default suite, and
//!      all 256 in an ignored test.
//!
//!    Every combination is encoded for every question and period; a formula
//!    identical (same clauses, same variables) to one already decided for
//!    that question is not solved again, since its verdict and orbit are
//!    the same.
//! 2. Every cycle that brute force finds has an image under the symmetry
//!    group that satisfies the CNF with all breaking constraints on. This is
//!    checked with the solver (the image fixes the coordinate variables, the
//!    solver completes the auxiliaries) and the completed model is then
//!    checked clause by clause.

use std::collections::HashSet;

use varisat::{ExtendFormula, Solver};

use super::{EncodeOptions, Symmetry, encode};
use crate::brute;
use crate::grid::{Grid, Point};
use crate::isometry;
use crate::question::{MapClass, Question};
use crate::report::Verdict;
use crate::solve::Limits;
use crate::solve::bundled::Bundled;
use crate::theory::{effective_dim, lemmens_scheutzow_bound, topical_bound};
use crate::varmap::Meaning;
use crate::{decide, verify};

/// Every valid combination of the options: the 8 subsets of translate,
/// multiplier and rotate, times the 4 levels none ⊂ isometry ⊂ stabilizer ⊂
/// reverse (each needs the one before), times the 8 subsets of count,
/// packing and classes: 8 × 4 × 8 = 256.
fn all_combinations() -> Vec<EncodeOptions> {
    let mut out = Vec::new();
    for mask in 0..8u8 {
        for level in 0..4u8 {
            for redundant in 0..8u8 {
                let (count, packing, classes) =
                    (redundant & 1 != 0, redundant & 2 != 0, redundant & 4 != 0);
                let symmetry = Symmetry {
                    translate: mask & 1 != 0,
                    multiplier: mask & 2 != 0,
                    rotate: mask & 4 != 0,
                    isometry: level >= 1,
                    stabilizer: level >= 2,
                    reverse: level >= 3,
                };
                out.push(EncodeOptions {
                    symmetry,
                    count,
                    packing,
                    classes,
                    nested: classes,
                    bicliques: classes,
                    cliques: classes,
                    orbits: classes,
                    subbox: classes,
                    gaps: classes,
                    ..EncodeOptions::default()
                });
            }
        }
    }
    out
}

fn boxes(dim: usize, max_points: i64) -> Vec<Grid> {
    let mut sides: Vec<Vec<i64>> = vec![vec![]];
    for _ in 0..dim {
        sides = sides
            .into_iter()
            .flat_map(|s| {
                let start = s.last().copied().unwrap_or(1);
                (start..=max_points).map(move |k| {
                    let mut t = s.clone();
                    t.push(k);
                    t
                })
            })
            .collect();
    }
    sides
        .into_iter()
        .map(|s| Grid::new(s.iter().map(|&k| (-(k / 2), k - 1 - k / 2)).collect()).unwrap())
        .collect()
}

fn agree_on(grids: &[Grid], combos: &[EncodeOptions], extra: u128) -> usize {
    agree_on_class(grids, combos, extra, MapClass::Nonexpansive)
}

/// A formula as the solver and the decoder see it: its clauses (each closed
/// by 0) and the meaning of every variable.
fn formula_key(q: &Question, o: &EncodeOptions) -> (Vec<i32>, Vec<String>) {
    let e = encode(q, o, u64::MAX).unwrap();
    let mut lits = Vec::with_capacity(e.cnf.num_lits() + e.cnf.num_clauses());
    for c in e.cnf.clauses() {
        lits.extend(c.iter().map(|l| l.dimacs()));
        lits.push(0);
    }
    (lits, e.map.iter().map(|(_, m)| m.to_string()).collect())
}

/// Verdicts of `decide` under every option set in `combos` equal those of
/// the brute force of `class`, for `p` up to the class's published bound plus
/// `extra`; every orbit is verified. Each option set is encoded; one whose
/// formula equals a formula already decided for the same question is not
/// solved again. Returns the number of formulas decided.
fn agree_on_class(grids: &[Grid], combos: &[EncodeOptions], extra: u128, class: MapClass) -> usize {
    let mut decided = 0;
    for g in grids {
        let n = effective_dim(g);
        let bound = match class {
            MapClass::Nonexpansive => lemmens_scheutzow_bound(n),
            MapClass::Topical => topical_bound(n),
        } + extra;
        let max_p = bound.min(g.num_points()) as usize;
        for p in 1..=max_p {
            let brute = match class {
                MapClass::Nonexpansive => brute::find_cycle(g.ranges(), p),
                MapClass::Topical => brute::find_topical_cycle(g.ranges(), p),
            };
            let q = Question::new(g.clone(), p).unwrap().with_class(class);
            let mut seen = HashSet::new();
            for o in combos {
                if !seen.insert(formula_key(&q, o)) {
                    continue;
                }
                decided += 1;
                let r = decide::decide(&q, o, &mut Bundled, &Limits::default(), u64::MAX).unwrap();
                let want = if brute.is_some() {
                    Verdict::Feasible
                } else {
                    Verdict::Infeasible
                };
                assert_eq!(
                    r.verdict,
                    want,
                    "{class} {} p={p} options {:?}",
                    g.spec(),
                    o
                );
                if let Some(orbit) = &r.orbit {
                    match class {
                        MapClass::Nonexpansive => verify::check_orbit(g.ranges(), orbit),
                        MapClass::Topical => verify::check_topical_orbit(g.ranges(), orbit),
                    }
                    .unwrap();
                }
            }
        }
    }
    decided
}

#[test]
fn brute_force_agrees_under_every_combination_in_dimensions_one_and_two() {
    let combos = all_combinations();
    assert_eq!(combos.len(), 256);
    assert!(combos.iter().any(|o| !o.classes) && combos.iter().any(|o| o.classes));
    let mut grids = boxes(1, 6);
    grids.extend(boxes(2, 4));
    let decided = agree_on(&grids, &combos, 2);
    assert!(decided > 1000, "only {decided} distinct formulas decided");
}

/// The default; each symmetry family alone (with the redundant families);
/// each redundant family off alone. (With all three off, the dimension-three
/// questions take about four times as long as any of these; that
/// combination is covered in dimensions one and two and by the ignored test.)
fn representative_combinations() -> Vec<EncodeOptions> {
    let mut out = vec![EncodeOptions::default()];
    out.extend(super::tests::variations(
        &EncodeOptions::default(),
        &[
            "none",
            "translate",
            "multiplier",
            "rotate",
            "isometry",
            "isometry,stabilizer,reverse",
        ],
        &[
            (false, true, true),
            (true, false, true),
            (true, true, false),
        ],
    ));
    out
}

#[test]
fn brute_force_agrees_in_dimension_three_on_representative_combinations() {
    agree_on(&boxes(3, 3), &representative_combinations(), 2);
}

#[test]
#[ignore = "long: all 256 combinations on every box of dimension three (sides of up to 3 points)"]
fn brute_force_agrees_in_dimension_three_under_every_combination() {
    agree_on(&boxes(3, 3), &all_combinations(), 2);
}

/// All images of `cycle` under translations inside the box, the box's
/// isometries (only the unreflected ones for `Topical`) and the
/// re-indexings `i ↦ a·i + r`, `gcd(a, p) = 1`.
fn images(g: &Grid, cycle: &[Point], class: MapClass) -> Vec<Vec<Point>> {
    let p = cycle.len();
    let mut group = isometry::elements(g, 1 << 20).unwrap();
    if class == MapClass::Topical {
        group.retain(|s| s.flip.iter().all(|f| !f));
    }
    let mut out = Vec::new();
    let n = g.dim();
    let mut shifts: Vec<Vec<i64>> = vec![vec![]];
    for c in 0..n {
        let lo = g.lo(c) - cycle.iter().map(|x| x[c]).min().unwrap();
        let hi = g.hi(c) - cycle.iter().map(|x| x[c]).max().unwrap();
        shifts = shifts
            .into_iter()
            .flat_map(|s| {
                (lo..=hi).map(move |t| {
                    let mut u = s.clone();
                    u.push(t);
                    u
                })
            })
            .collect();
    }
    for shift in &shifts {
        let moved: Vec<Point> = cycle
            .iter()
            .map(|x| x.iter().zip(shift).map(|(a, b)| a + b).collect())
            .collect();
        for s in &group {
            let iso: Vec<Point> = moved.iter().map(|x| s.apply(g, x)).collect();
            for a in (1..=p.max(1)).filter(|&a| gcd(a, p) == 1) {
                for r in 0..p {
                    out.push((0..p).map(|i| iso[(a * i + r) % p].clone()).collect());
                }
            }
        }
    }
    out
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 { a } else { gcd(b, a % b) }
}

/// Step 7 of the normalisation (`encodings/symmetry.md`), done here
/// independently of the encoder: if `p = 2h ≥ 8` and the cycle's distances
/// satisfy `g(s) = g(h − s)`, the cycle with `x_k` and `x_{k+h}` swapped
/// wherever `x_{k+h}` comes first in grid order (`2 ≤ k ≤ h − 2`); `None`
/// when the step does not apply.
fn twin_normalised(g: &Grid, cycle: &[Point]) -> Option<Vec<Point>> {
    let p = cycle.len();
    if !p.is_multiple_of(2) || p < 8 {
        return None;
    }
    let h = p / 2;
    let dist = |a: &Point, b: &Point| a.iter().zip(b).map(|(x, y)| (x - y).abs()).max();
    let gap = |s: usize| dist(&cycle[0], &cycle[s]);
    if (1..h).any(|s| gap(s) != gap(h - s)) {
        return None;
    }
    let mut out = cycle.to_vec();
    for k in 2..=h - 2 {
        if isometry::index_of(g, &out[k + h]) < isometry::index_of(g, &out[k]) {
            out.swap(k, k + h);
        }
    }
    Some(out)
}

fn some_image_satisfies_all_breaks(g: &Grid, p: usize, limit: usize) -> usize {
    image_check(g, p, limit, MapClass::Nonexpansive)
}

fn image_check(g: &Grid, p: usize, limit: usize, class: MapClass) -> usize {
    let cycles = match class {
        MapClass::Nonexpansive => brute::all_cycles(g.ranges(), p, limit),
        MapClass::Topical => brute::all_topical_cycles(g.ranges(), p, limit),
    };
    let q = Question::new(g.clone(), p).unwrap().with_class(class);
    let enc = encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
    let mut solver = Solver::new();
    for clause in enc.cnf.clauses() {
        let lits: Vec<varisat::Lit> = clause
            .iter()
            .map(|l| varisat::Lit::from_dimacs(l.dimacs() as isize))
            .collect();
        solver.add_clause(&lits);
    }
    for cycle in &cycles {
        let mut ok = false;
        let all = images(g, cycle, class);
        let twinned = all.iter().filter_map(|x| twin_normalised(g, x));
        for image in all.iter().cloned().chain(twinned) {
            let mut assumptions = Vec::new();
            for (i, x) in image.iter().enumerate() {
                for c in 0..g.dim() {
                    for value in g.lo(c) + 1..=g.hi(c) {
                        let v = enc.map.get(&Meaning::Coord { i, c, value }).unwrap();
                        let lit = varisat::Lit::from_dimacs(v.dimacs() as isize);
                        assumptions.push(if x[c] >= value { lit } else { !lit });
                    }
                }
            }
            solver.assume(&assumptions);
            if solver.solve().unwrap() {
                let mut model = vec![false; enc.cnf.num_vars() as usize];
                for l in solver.model().unwrap() {
                    model[l.var().index()] = l.is_positive();
                }
                assert_eq!(
                    enc.cnf.first_falsified(&model),
                    None,
                    "model of {image:?} falsifies a clause"
                );
                ok = true;
                break;
            }
        }
        assert!(
            ok,
            "{} p={p}: no image of the cycle {cycle:?} satisfies the breaking constraints",
            g.spec()
        );
    }
    cycles.len()
}

/// Step 7 acts where the period is even, at least 8, and the profile is
/// twin-symmetric: on {0,1}^4 every profile is (all distances are 1), and
/// on {−1,0,1}^3 with p = 8 some are. Every cycle brute force finds there
/// has an image under the symmetries, twin swaps included, that satisfies
/// the whole default CNF.
#[test]
fn every_brute_force_cycle_of_a_twin_profile_has_an_image_satisfying_step_seven() {
    let mut checked = 0;
    for (spec, dim, ps, limit) in [("0..1", 4, 8..=12, 6), ("-1..1", 3, 8..=8, 40)] {
        let g = Grid::parse(spec, Some(dim)).unwrap();
        for p in ps.step_by(2) {
            let q = Question::new(g.clone(), p).unwrap();
            let e = encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
            assert!(e.options.twins, "{} p={p}: step 7 is off", g.spec());
            checked += some_image_satisfies_all_breaks(&g, p, limit);
        }
    }
    assert!(checked >= 50, "only {checked} cycles checked");
}

/// Exact sizes of step 7 (module docs of `symmetry::add_twins`): on
/// {−1,0,1}^3 with p = 8 (h = 4: M = 1, L = 2, N = 27, one pair)
/// 1 + 2 + 26 = 29 variables and 1 + 8 + 104 = 113 clauses; on {0,1}^4
/// with p = 10 (h = 5: M = 2, L = 1, N = 16, two pairs) 1 + 2 + 30 = 33
/// and 1 + 8 + 120 = 129; nothing on odd periods.
#[test]
fn step_seven_has_its_exact_size() {
    for (spec, dim, p, size) in [
        ("-1..1", 3, 8, Some((29, 113))),
        ("0..1", 4, 10, Some((33, 129))),
        ("-1..1", 4, 17, None),
    ] {
        let q = Question::new(Grid::parse(spec, Some(dim)).unwrap(), p).unwrap();
        let e = encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
        let row = e
            .families
            .iter()
            .find(|f| f.family == super::symmetry::TWINS)
            .map(|f| (f.vars, f.clauses));
        assert_eq!(row, size, "{spec}^{dim} p={p}");
    }
}

#[test]
fn every_brute_force_cycle_has_an_image_satisfying_all_breaks() {
    let mut checked = 0;
    for g in boxes(2, 4) {
        for p in 1..=(g.num_points().min(4) as usize) {
            checked += some_image_satisfies_all_breaks(&g, p, 40);
        }
    }
    for g in boxes(1, 6) {
        for p in 1..=(g.num_points().min(2) as usize) {
            checked += some_image_satisfies_all_breaks(&g, p, 40);
        }
    }
    // The last box has sides of 4 points, where `pack-nested` adds clauses
    // (for p = 5..8: "every distance is 2" cannot fit 2·2·1 cells).
    for (spec, ps) in [
        ("-1..1", 2..=8),
        ("0..1,0..2,0..2", 2..=8),
        ("0..3,0..3,0..1", 5..=8),
    ] {
        let g = Grid::parse(spec, Some(3)).unwrap();
        for p in ps {
            checked += some_image_satisfies_all_breaks(&g, p, 12);
        }
    }
    assert!(checked > 300, "only {checked} cycles checked");
}

/// All 256 combinations, on topical questions: resolution switches the
/// redundant families and `sym-reverse` off for them, so at most 24
/// different formulas per question are decided.
#[test]
fn topical_brute_force_agrees_under_every_combination_in_dimensions_one_and_two() {
    let mut grids = boxes(1, 4);
    grids.extend(boxes(2, 4));
    let decided = agree_on_class(&grids, &all_combinations(), 3, MapClass::Topical);
    assert!(decided > 300, "only {decided} distinct formulas decided");
}

#[test]
fn topical_brute_force_agrees_in_dimension_three() {
    let combos = [
        EncodeOptions::default(),
        EncodeOptions::plain(),
        EncodeOptions {
            symmetry: Symmetry::parse("translate,rotate").unwrap(),
            ..EncodeOptions::default()
        },
    ];
    agree_on_class(&boxes(3, 3), &combos, 2, MapClass::Topical);
}

#[test]
fn every_topical_brute_force_cycle_has_an_image_satisfying_all_breaks() {
    let mut checked = 0;
    for g in boxes(2, 4) {
        for p in 1..=(g.num_points().min(4) as usize) {
            checked += image_check(&g, p, 40, MapClass::Topical);
        }
    }
    for (spec, ps) in [("0..1", 1..=3), ("0..2", 1..=4), ("0..1,0..2,0..2", 1..=4)] {
        let g = Grid::parse(spec, Some(3)).unwrap();
        for p in ps {
            checked += image_check(&g, p, 30, MapClass::Topical);
        }
    }
    assert!(checked > 100, "only {checked} topical cycles checked");
}

/// Runs `f` with `sym-reverse` encoded as a ladder on every box, however
/// small ([`super::options::FORCE_LADDER`]).
pub(super) fn with_ladder<R>(f: impl FnOnce() -> R) -> R {
    super::options::FORCE_LADDER.with(|c| c.set(true));
    let r = f();
    super::options::FORCE_LADDER.with(|c| c.set(false));
    r
}

/// The ladder form of step 6 (`add_reverse_ladder`) gives the verdicts of
/// brute force on every box of dimensions one and two and the boxes of
/// dimension three, with the other families as in the default and with
/// the redundant ones off; every orbit verified.
#[test]
fn brute_force_agrees_with_the_ladder_form_of_step_six() {
    let combos = [
        EncodeOptions::default(),
        // Every break, no redundant family.
        EncodeOptions {
            symmetry: EncodeOptions::default().symmetry,
            reverse_ladder: true,
            ..EncodeOptions::plain()
        },
    ];
    let mut grids = boxes(1, 6);
    grids.extend(boxes(2, 4));
    grids.extend(boxes(3, 3));
    let decided = with_ladder(|| {
        let q = Question::new(Grid::parse("-1..1", Some(3)).unwrap(), 6).unwrap();
        let o = EncodeOptions::default().resolve(&q);
        assert!(o.reverse_ladder, "forced on a small box");
        let e = encode(&q, &o, u64::MAX).unwrap();
        assert!(
            e.families
                .iter()
                .any(|f| f.family == super::symmetry::REVERSE && f.vars > 0),
            "the ladder has variables"
        );
        agree_on(&grids, &combos, 2)
    });
    assert!(decided > 200, "only {decided} distinct formulas decided");
}

/// With the ladder form of step 6, every cycle brute force finds still has
/// an image that satisfies every breaking constraint.
#[test]
fn every_brute_force_cycle_has_an_image_satisfying_the_ladder() {
    let checked = with_ladder(|| {
        let mut checked = 0;
        for (spec, dim, ps) in [
            ("-1..1", 2, 3..=4),
            ("0..3", 2, 3..=4),
            ("-1..1", 3, 3..=8),
            ("0..1,0..2,0..2", 3, 3..=8),
        ] {
            let g = Grid::parse(spec, Some(dim)).unwrap();
            for p in ps {
                checked += some_image_satisfies_all_breaks(&g, p, 12);
            }
        }
        checked
    });
    assert!(checked > 50, "only {checked} cycles checked");
}

/// Exact counts of the ladder on `{−1,0,1}^2` (worked out by hand in
/// `encodings/symmetry.md`): 12 variables and 43 clauses, against 49
/// ternary clauses.
#[test]
fn the_ladder_of_the_ternary_square_has_12_variables_and_43_clauses() {
    let q = Question::new(Grid::parse("-1..1", Some(2)).unwrap(), 5).unwrap();
    let count = |ladder: bool| {
        let run = || {
            let e = encode(&q, &EncodeOptions::default(), u64::MAX).unwrap();
            let f = e
                .families
                .iter()
                .find(|f| f.family == super::symmetry::REVERSE)
                .unwrap()
                .clone();
            (f.vars, f.clauses)
        };
        if ladder { with_ladder(run) } else { run() }
    };
    assert_eq!(count(false), (0, 49));
    assert_eq!(count(true), (12, 43));
}
