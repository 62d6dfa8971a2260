//! The solver against brute force: on every small box, for every period up to
//! the number of points, `decide` (through the library) and
//! `orbitcnf::brute::find_cycle` (an exhaustive depth-first search that shares
//! no code with the encoders) must agree. Every orbit either of them returns
//! is verified, by `orbitcnf::verify::check_orbit` and by the checker in
//! `util`. The comparison is made for several encodings (see [`option_sets`]),
//! since symmetry breaking must never turn a feasible question infeasible.

use orbitcnf::Verdict;
use orbitcnf::brute::find_cycle;
use orbitcnf::encode::{EncodeOptions, Symmetry};

use crate::util::{Q, assert_isometric_cycle, decide_lib_with};

/// The encodings compared with brute force: the default (every symmetry
/// break and redundant constraint), the plain formulation, the redundant
/// constraints alone, and each symmetry family alone (with its
/// prerequisites) over the plain one. (The crate's own soundness tests run
/// every combination; these are the end-to-end checks through `decide`.)
fn option_sets() -> Vec<EncodeOptions> {
    let mut sets = vec![EncodeOptions::default(), EncodeOptions::plain()];
    for names in [
        "none",
        "translate",
        "multiplier",
        "rotate",
        "isometry",
        "isometry,stabilizer",
        "isometry,stabilizer,reverse",
    ] {
        let symmetry = Symmetry::parse(names).expect("a valid family list");
        let base = if names == "none" {
            EncodeOptions::default()
        } else {
            EncodeOptions::plain()
        };
        sets.push(EncodeOptions { symmetry, ..base });
    }
    sets
}

/// Compares the two on `bounds` for every p from 1 to the number of points
/// and every encoding of [`option_sets`]; returns the feasible periods.
fn agree_on(bounds: &[(i64, i64)]) -> Vec<usize> {
    let q0 = Q::boxed(bounds, 1);
    let sets = option_sets();
    let mut feasible = Vec::new();
    for p in 1..=q0.points() as usize {
        let q = Q::boxed(bounds, p);
        let brute = find_cycle(bounds, p);
        if let Some(c) = &brute {
            orbitcnf::verify::check_orbit(bounds, c)
                .unwrap_or_else(|e| panic!("{}: brute force returned {c:?}: {e}", q.label()));
            assert_isometric_cycle(bounds, c, p, &format!("brute force, {}", q.label()));
        }
        for options in &sets {
            let report = decide_lib_with(&q, options);
            let solver_says = report.verdict == Verdict::Feasible;
            assert_eq!(
                solver_says,
                brute.is_some(),
                "{}, {options:?}: decide says {:?}, brute force found {:?}",
                q.label(),
                report.verdict,
                brute
            );
        }
        if brute.is_some() {
            feasible.push(p);
        }
    }
    feasible
}

/// The periods of a segment of s points: 1 and, from s = 2 on, 2.
#[test]
fn segments_of_1_to_6_points() {
    for s in 1..=6i64 {
        for lo in [0, -3] {
            let got = agree_on(&[(lo, lo + s - 1)]);
            let want: Vec<usize> = (1..=s.min(2) as usize).collect();
            assert_eq!(got, want, "segment of {s} points from {lo}");
        }
    }
}

#[test]
fn rectangles_with_sides_up_to_3_points() {
    for a in 1..=3 {
        for b in 1..=3 {
            agree_on(&[(0, a - 1), (-1, b - 2)]);
        }
    }
}

#[test]
fn rectangles_with_a_side_of_4_or_5_points() {
    for bounds in [
        [(0, 3), (0, 1)],
        [(0, 1), (0, 3)],
        [(0, 3), (-1, 1)],
        [(0, 4), (0, 1)],
        [(0, 0), (0, 4)],
    ] {
        agree_on(&bounds);
    }
}

#[test]
fn three_dimensional_boxes_up_to_12_points() {
    for bounds in [
        [(0, 1), (0, 1), (0, 1)],
        [(0, 0), (0, 1), (0, 2)],
        [(-1, 1), (0, 0), (-1, 1)],
        [(0, 1), (0, 1), (-1, 1)],
        [(0, 1), (0, 2), (0, 1)],
    ] {
        agree_on(&bounds);
    }
}

#[test]
fn four_dimensional_boxes_up_to_16_points() {
    for bounds in [
        [(0, 1), (0, 0), (0, 1), (0, 1)],
        [(0, 1), (0, 1), (0, 1), (0, 1)],
    ] {
        let got = agree_on(&bounds);
        // On {0,1}^n every self-map is nonexpansive (docs/math.md §5 [derived]).
        let points = bounds.iter().map(|(a, b)| (b - a + 1) as usize).product();
        assert_eq!(got, (1..=points).collect::<Vec<_>>(), "{bounds:?}");
    }
}
