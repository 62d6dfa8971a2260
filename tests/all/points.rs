//! Finite domains that are not boxes (`--points`, the full-map formulation).
//!
//! What is checked, and against what:
//!
//! - On every box with n ≤ 2 and sides ≤ 3, the full-map formulation and the
//!   cycle formulation give the same verdict for every period; on a box they
//!   answer the same question (the cycle extends to the box, MATH.md §2,
//!   restated in `encodings/isometric-cycle.md`), so a disagreement would be
//!   a bug in one of them. The cycle verdicts are also compared with
//!   `brute::find_cycle`.
//! - On non-box sets of our own design (and the example in the project's
//!   notes), the full-map verdict for every period is compared with
//!   `brute::map_periods`, which enumerates every nonexpansive self-map.
//! - The two questions differ on some of these sets: an isometric cycle
//!   exists (found by `brute::cycles_in` and checked here) but no
//!   nonexpansive map D → D has that period (brute force, and a checked LRAT
//!   proof of the full-map CNF).
//!
//! Every feasible answer's map is checked by [`assert_self_map`], written
//! here without the crate: D → D, nonexpansive on every pair, and the orbit
//! moved along itself with minimal period p.

use std::collections::HashSet;

use orbitcnf::brute;
use orbitcnf::encode::{DEFAULT_MAX_CLAUSES, EncodeOptions, Symmetry};
use orbitcnf::points::PointSet;
use orbitcnf::report::Certificate;
use orbitcnf::solve::Limits;
use orbitcnf::solve::bundled::Bundled;
use orbitcnf::solve::certified::Certified;
use orbitcnf::{Question, Report, Verdict, decide};

use crate::util::{Q, assert_isometric_cycle, decide_lib, dist};

/// The corners of {−2,2}^2 plus (0,1): the example of the project notes
/// (MATH.md §2), where isometric 3- and 4-cycles exist but maps have only
/// periods 1 and 2.
pub const NOTES_FIVE: &[&[i64]] = &[&[-2, -2], &[-2, 2], &[2, -2], &[2, 2], &[0, 1]];

/// "Two jetties" of a made-up harbour: a left jetty (0,1), (1,2), (1,3) and a
/// right one (3,0), (3,1), (3,2). Period 4 occurs, period 3 does not, though
/// an isometric 3-cycle exists: the map spectrum has a gap.
pub const JETTIES: &[&[i64]] = &[&[0, 1], &[1, 2], &[1, 3], &[3, 0], &[3, 1], &[3, 2]];

/// "The pier": two mooring posts (0,0), (0,3) and a pier (2,0), (2,1), (2,3)
/// with a gap. Isometric 4-cycles exist; maps reach period 3 only.
pub const PIER: &[&[i64]] = &[&[0, 0], &[0, 3], &[2, 0], &[2, 1], &[2, 3]];

/// "Crossroads": the centre and four arms. Here the questions agree: a
/// quarter turn is an isometry of D with period 4.
pub const CROSSROADS: &[&[i64]] = &[&[0, 0], &[1, 0], &[-1, 0], &[0, 1], &[0, -1]];

/// "Tripod" in Z^3: a unit corner (0,0,0), (1,0,0), (0,1,0), (0,0,1), its
/// far vertex (1,1,1), and a far point (2,2,2).
pub const TRIPOD: &[&[i64]] = &[
    &[0, 0, 0],
    &[1, 0, 0],
    &[0, 1, 0],
    &[0, 0, 1],
    &[1, 1, 1],
    &[2, 2, 2],
];

/// Our non-box sets, each with its name.
pub fn sets() -> Vec<(&'static str, Vec<Vec<i64>>)> {
    [
        ("notes-five", NOTES_FIVE),
        ("jetties", JETTIES),
        ("pier", PIER),
        ("crossroads", CROSSROADS),
        ("tripod", TRIPOD),
    ]
    .into_iter()
    .map(|(n, s)| (n, s.iter().map(|z| z.to_vec()).collect()))
    .collect()
}

/// A map check that shares no code with the crate: `map` lists each point of
/// `domain` once with an image in `domain`, expands no pair, and moves the
/// `p` distinct points of `orbit` along themselves.
pub fn assert_self_map(
    domain: &[Vec<i64>],
    map: &[(Vec<i64>, Vec<i64>)],
    orbit: &[Vec<i64>],
    p: usize,
    context: &str,
) {
    let fail = |why: String| -> ! { panic!("{context}: the map {map:?} fails: {why}") };
    let d: HashSet<&Vec<i64>> = domain.iter().collect();
    let args: HashSet<&Vec<i64>> = map.iter().map(|(z, _)| z).collect();
    if args != d || map.len() != domain.len() {
        fail("it does not list every point of D exactly once".into());
    }
    for (z, fz) in map {
        if !d.contains(fz) {
            fail(format!("f({z:?}) = {fz:?} is not in D"));
        }
    }
    for (y, fy) in map {
        for (z, fz) in map {
            if dist(fy, fz) > dist(y, z) {
                fail(format!("the pair {y:?}, {z:?} is stretched"));
            }
        }
    }
    let image = |x: &Vec<i64>| map.iter().find(|(z, _)| z == x).map(|(_, w)| w.clone());
    let distinct: HashSet<&Vec<i64>> = orbit.iter().collect();
    if orbit.len() != p || distinct.len() != p {
        fail(format!("the orbit {orbit:?} is not {p} distinct points"));
    }
    for i in 0..p {
        if image(&orbit[i]) != Some(orbit[(i + 1) % p].clone()) {
            fail(format!("f(x_{i}) is not x_{}", (i + 1) % p));
        }
    }
}

fn point_set(pts: &[Vec<i64>]) -> PointSet {
    PointSet::new(pts.to_vec()).expect("a valid point set")
}

/// Decides `q` through the library and checks a feasible answer's map and
/// orbit here (both must be present in the full-map formulation).
fn decide_checked(q: &Question, options: &EncodeOptions, certify: bool, context: &str) -> Report {
    let report = if certify {
        let mut backend = Certified {
            lrat: None,
            drat: None,
        };
        decide::decide(
            q,
            options,
            &mut backend,
            &Limits::default(),
            DEFAULT_MAX_CLAUSES,
        )
    } else {
        decide::decide(
            q,
            options,
            &mut Bundled,
            &Limits::default(),
            DEFAULT_MAX_CLAUSES,
        )
    }
    .unwrap_or_else(|e| panic!("{context}: decide failed: {e}"));
    assert!(
        report.options.is_full_map(),
        "{context}: {:?}",
        report.options
    );
    if report.verdict == Verdict::Feasible {
        let orbit = report
            .orbit
            .as_ref()
            .expect("a feasible report has an orbit");
        let map = report.map.as_ref().expect("a full-map report has the map");
        let domain = q.domain().points().to_vec();
        assert_self_map(&domain, map, orbit, q.period, context);
        // An orbit of a nonexpansive map is an isometric cycle (MATH.md §1).
        assert_isometric_cycle(q.grid.ranges(), orbit, q.period, context);
    }
    report
}

/// The full-map verdicts on D for p = 1..|D|, with the default and the plain options.
fn full_map_periods(pts: &[Vec<i64>], name: &str) -> Vec<usize> {
    let d = point_set(pts);
    let mut feasible = Vec::new();
    for p in 1..=d.len() {
        let q = Question::on_points(d.clone(), p).unwrap();
        let mut verdicts = Vec::new();
        for symmetry in [Symmetry::ALL, Symmetry::NONE] {
            let options = EncodeOptions {
                symmetry,
                ..EncodeOptions::full_map()
            };
            let r = decide_checked(&q, &options, false, &format!("{name}, p = {p}"));
            verdicts.push(r.verdict);
        }
        assert_eq!(
            verdicts[0], verdicts[1],
            "{name}, p = {p}: breaks changed the verdict"
        );
        if verdicts[0] == Verdict::Feasible {
            feasible.push(p);
        }
    }
    feasible
}

#[test]
fn full_map_agrees_with_brute_force_over_all_maps_on_non_box_sets() {
    for (name, pts) in sets() {
        let brute = brute::map_periods(&pts);
        let solver = full_map_periods(&pts, name);
        assert_eq!(solver, brute, "{name}: periods of nonexpansive self-maps");
    }
}

#[test]
fn the_brute_force_spectra_of_our_sets_are_pinned() {
    // Pinned from brute::map_periods and brute::cycles_in, cross-checked with an
    // independent script while designing the sets.
    let cycle_periods = |pts: &[Vec<i64>]| -> Vec<usize> {
        (1..=pts.len())
            .filter(|&p| !brute::cycles_in(pts, p, 1).is_empty())
            .collect()
    };
    let expect: [(&str, &[usize], &[usize]); 5] = [
        ("notes-five", &[1, 2, 3, 4], &[1, 2]),
        ("jetties", &[1, 2, 3, 4], &[1, 2, 4]),
        ("pier", &[1, 2, 3, 4], &[1, 2, 3]),
        ("crossroads", &[1, 2, 3, 4], &[1, 2, 3, 4]),
        ("tripod", &[1, 2, 3, 4, 5], &[1, 2, 3, 4, 5]),
    ];
    for ((name, pts), (ename, cycles, maps)) in sets().into_iter().zip(expect) {
        assert_eq!(name, ename);
        assert_eq!(cycle_periods(&pts), cycles, "{name}: isometric cycles");
        assert_eq!(brute::map_periods(&pts), maps, "{name}: maps");
    }
}

#[test]
fn where_the_questions_differ_the_cycle_exists_and_a_checked_proof_refutes_the_map() {
    for (name, pts, p) in [
        ("notes-five", NOTES_FIVE, 4),
        ("notes-five", NOTES_FIVE, 3),
        ("jetties", JETTIES, 3),
        ("pier", PIER, 4),
    ] {
        let pts: Vec<Vec<i64>> = pts.iter().map(|z| z.to_vec()).collect();
        let d = point_set(&pts);
        let context = format!("{name}, p = {p}");
        // The cycle question says yes: here is an isometric p-cycle in D.
        let cycle = brute::cycles_in(&pts, p, 1)
            .pop()
            .unwrap_or_else(|| panic!("{context}: no isometric cycle"));
        assert!(cycle.iter().all(|z| pts.contains(z)), "{context}");
        assert_isometric_cycle(d.bounding_box().ranges(), &cycle, p, &context);
        // The map question says no: brute force over all maps, and a checked proof.
        assert!(brute::find_map(&pts, p).is_none(), "{context}: brute force");
        let q = Question::on_points(d, p).unwrap();
        let r = decide_checked(&q, &EncodeOptions::default(), true, &context);
        assert_eq!(r.verdict, Verdict::Infeasible, "{context}");
        assert!(
            matches!(r.certificate, Certificate::CheckedProof(_)),
            "{context}: {:?}",
            r.certificate
        );
    }
}

#[test]
fn the_notes_example_follows_the_argument_in_the_write_up() {
    // encodings/full-map.md argues period 4 away on NOTES_FIVE in two steps;
    // both are replayed here on the distances alone.
    let corners: Vec<Vec<i64>> = NOTES_FIVE[..4].iter().map(|z| z.to_vec()).collect();
    let inner = vec![0, 1];
    // Step 1: an isometric 4-cycle uses the four corners. The corners are
    // pairwise 4 apart and (0,1) is 2 or 3 from each, so a 4-set holding
    // (0,1) has some point whose distances to the other three are not
    // {g(1), g(1), g(2)} with the same g for every point.
    for c in &corners {
        for a in &corners {
            if a != c {
                assert_eq!(dist(a, c), 4);
            }
        }
        assert!((2..=3).contains(&dist(&inner, c)));
    }
    for left_out in &corners {
        let with_inner: Vec<Vec<i64>> = NOTES_FIVE
            .iter()
            .map(|z| z.to_vec())
            .filter(|z| z != left_out)
            .collect();
        assert!(
            brute::cycles_in(&with_inner, 4, 1).is_empty(),
            "{left_out:?}"
        );
    }
    // Step 2: with f a 4-cycle π on the corners, f(0,1) = w needs
    // d(w, π(c)) ≤ d((0,1), c) for every corner c. No w ∈ D and no π do.
    let idx = [0usize, 1, 2, 3];
    for perm in [
        [1, 2, 3, 0],
        [1, 3, 0, 2],
        [2, 0, 3, 1],
        [2, 3, 1, 0],
        [3, 0, 1, 2],
        [3, 2, 0, 1],
    ] {
        // Each perm is a single 4-cycle: no point returns before 4 steps.
        assert!(idx.iter().all(|&c| perm[c] != c && perm[perm[c]] != c));
        for w in NOTES_FIVE {
            let fits = idx
                .iter()
                .all(|&c| dist(w, &corners[perm[c]]) <= dist(&inner, &corners[c]));
            assert!(!fits, "f(0,1) = {w:?} with corners permuted by {perm:?}");
        }
    }
}

#[test]
fn on_boxes_up_to_side_3_in_dimensions_1_and_2_full_map_and_cycle_agree() {
    let mut boxes: Vec<Vec<(i64, i64)>> = (0..=3).map(|s| vec![(0, s)]).collect();
    for s1 in 0..=3 {
        for s2 in s1..=3 {
            boxes.push(vec![(0, s1), (0, s2)]);
        }
    }
    for bounds in boxes {
        let n = Q::boxed(&bounds, 1).points() as usize;
        for p in 1..=n {
            let q = Q::boxed(&bounds, p);
            let cycle = decide_lib(&q).verdict;
            let brute = brute::find_cycle(&bounds, p).is_some();
            assert_eq!(
                cycle == Verdict::Feasible,
                brute,
                "{}: cycle vs brute force",
                q.label()
            );
            let full = decide_checked(&q.question(), &EncodeOptions::full_map(), false, &q.label())
                .verdict;
            assert_eq!(full, cycle, "{}: full map vs cycle", q.label());
        }
    }
}
