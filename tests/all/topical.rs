//! The topical map class (`--class topical`), through the binary.
//!
//! A topical map `f: R^n → R^n` is order-preserving and satisfies
//! `f(x + s·1) = f(x) + s·1`. `decide --class topical` asks whether `p`
//! distinct points of the grid form a periodic orbit of such a map; by the
//! argument of `encodings/topical.md` [derived] that holds iff
//! `t(x_i, x_{i+k}) = max_c (x_{i,c} − x_{i+k,c})` does not depend on `i`.
//!
//! Every feasible answer is checked here with this file's own
//! [`assert_topical_cycle`] (no crate code) and with `orbitcnf check --map`,
//! which builds the extension and checks order-preservation, homogeneity on
//! the grid, nonexpansiveness and the orbit by exhaustion. Every infeasible
//! answer must carry an LRAT proof accepted by orbitcnf's checker.
//!
//! Source of the published values: B. Lemmens and M. Scheutzow, On the
//! dynamics of sup-norm non-expansive maps, Ergodic Theory Dynam. Systems 25
//! (2005) 861–871 [paper, as recorded in docs/math.md §7], proving a conjecture of
//! Gunawardena and Sparrow: every period of a topical map on R^n is at most
//! `C(n, ⌊n/2⌋)`. The periods up to the bound occur on `{0,1}^n` by the
//! middle-layer construction [derived]: distinct points of one layer are
//! incomparable 0/1 vectors, so `t = 1` between any two of them.

use serde_json::Value;

use crate::util::{Q, TestDir};

/// `t(y, z) = max_c (y_c − z_c)`.
fn t(y: &[i64], z: &[i64]) -> i64 {
    y.iter().zip(z).map(|(a, b)| a - b).max().unwrap_or(0)
}

fn binomial(n: usize, k: usize) -> usize {
    (0..k).fold(1, |c, i| c * (n - i) / (i + 1))
}

/// Asserts that `orbit` has `p` distinct points in the box with
/// `t(x_i, x_{i+k}) = t(x_0, x_k)` for all `i, k`.
pub fn assert_topical_cycle(bounds: &[(i64, i64)], orbit: &[Vec<i64>], p: usize, context: &str) {
    assert_eq!(orbit.len(), p, "{context}: length");
    for x in orbit {
        assert_eq!(x.len(), bounds.len(), "{context}: dimension of {x:?}");
        for (v, (a, b)) in x.iter().zip(bounds) {
            assert!(a <= v && v <= b, "{context}: {x:?} outside the box");
        }
    }
    for i in 0..p {
        for j in i + 1..p {
            assert_ne!(orbit[i], orbit[j], "{context}: points {i} and {j} repeat");
        }
    }
    for k in 1..p {
        let want = t(&orbit[0], &orbit[k]);
        for i in 0..p {
            let got = t(&orbit[i], &orbit[(i + k) % p]);
            assert_eq!(got, want, "{context}: t(x_{i}, x_{{i+{k}}})");
        }
    }
}

fn orbit_of(v: &Value) -> Vec<Vec<i64>> {
    v["orbit"]
        .as_array()
        .expect("an orbit")
        .iter()
        .map(|x| {
            x.as_array()
                .expect("a point")
                .iter()
                .map(|c| c.as_i64().expect("an integer"))
                .collect()
        })
        .collect()
}

/// Decides `q` as a topical question and checks everything the answer
/// claims: the orbit here and with `check --map`, or the checked proof.
pub fn decide_topical(dir: &TestDir, q: &Q, extra: &[&str], feasible: bool) -> Value {
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(["--class", "topical", "--json"])
        .args(extra)
        .run();
    run.code(if feasible { 10 } else { 20 });
    let v = run.json();
    assert_eq!(v["question"]["class"], "topical", "{}", run.shown);
    assert_eq!(v["options"]["formulation"], "topical-cycle/1");
    if feasible {
        let orbit = orbit_of(&v);
        assert_topical_cycle(&q.bounds, &orbit, q.period, &q.label());
        let file = dir.write("report.json", &run.stdout);
        let check = dir
            .orbitcnf()
            .args(["check", "--map", "--json"])
            .arg(&file)
            .run();
        check.code(0);
        let c = check.json();
        let n = q.points();
        assert_eq!(c["class"], "topical", "{}", check.shown);
        assert_eq!(c["map_check"]["points_checked"], n, "{}", check.shown);
        assert_eq!(c["map_check"]["pairs_checked"], n * (n - 1) / 2);
        assert!(c["map_check"]["homogeneity_checked"].is_u64());
        assert_eq!(c["clamped_map_check"]["images_outside_box"], 0);
        assert_eq!(c["map_check"]["period"], q.period);
    } else {
        assert_eq!(
            v["certificate"]["kind"],
            "checked-proof",
            "{}: an infeasible topical answer needs a checked proof",
            q.label()
        );
    }
    v
}

#[test]
fn topical_periods_up_to_the_sperner_number_occur_on_the_cube_and_one_more_does_not() {
    // Lemmens and Scheutzow (2005): periods ≤ C(n, ⌊n/2⌋); the middle layer attains it.
    let dir = TestDir::new();
    for n in 2..=5usize {
        let bound = binomial(n, n / 2);
        for p in 1..=bound {
            decide_topical(&dir, &Q::cube(0, 1, n, p), &[], true);
        }
        decide_topical(&dir, &Q::cube(0, 1, n, bound + 1), &[], false);
    }
}

#[test]
fn topical_bound_plus_one_is_infeasible_on_the_three_point_grid() {
    // Lemmens and Scheutzow (2005): C(n, ⌊n/2⌋) + 1 on {0,1,2}^n, n = 2..4
    // (n = 4, p = 7 takes well under a second with the default encoding).
    let dir = TestDir::new();
    for n in 2..=4usize {
        let bound = binomial(n, n / 2);
        decide_topical(&dir, &Q::cube(0, 2, n, bound), &[], true);
        decide_topical(&dir, &Q::cube(0, 2, n, bound + 1), &[], false);
    }
}

#[test]
fn topical_verdicts_agree_with_brute_force_on_small_boxes() {
    // Independent reference: the exhaustive search of orbitcnf::brute, which
    // shares no code with the encoders. n ≤ 2, sides of ≤ 3 points, all p.
    let dir = TestDir::new();
    let sides = [(0, 0), (0, 1), (0, 2), (-1, 1)];
    let mut boxes: Vec<Vec<(i64, i64)>> = sides.iter().map(|&s| vec![s]).collect();
    for &a in &sides {
        for &b in &sides {
            boxes.push(vec![a, b]);
        }
    }
    boxes.push(vec![(0, 1); 3]);
    boxes.push(vec![(0, 2); 3]);
    for bounds in boxes {
        let points: usize = bounds.iter().map(|(a, b)| (b - a + 1) as usize).product();
        let top = if bounds.len() == 3 { 5 } else { points };
        for p in 1..=top.min(points) {
            let q = Q::boxed(&bounds, p);
            let found = orbitcnf::brute::find_topical_cycle(&bounds, p);
            if let Some(c) = &found {
                assert_topical_cycle(&bounds, c, p, "brute force");
            }
            decide_topical(&dir, &q, &[], found.is_some());
        }
    }
}

#[test]
fn topical_cubes_split_and_assemble_one_checked_proof() {
    // The split over the unfolded profile T(1..p−1) covers the space: the
    // assembled proof is checked like a monolithic one. {0,1,2}^3, p = 4
    // (C(3,1) + 1, Lemmens and Scheutzow 2005), and the feasible p = 3.
    let dir = TestDir::new();
    decide_topical(
        &dir,
        &Q::cube(0, 2, 3, 4),
        &["--jobs", "2", "--cubes", "6"],
        false,
    );
    decide_topical(
        &dir,
        &Q::cube(0, 2, 3, 3),
        &["--jobs", "2", "--cubes", "6"],
        true,
    );
}

#[test]
fn topical_encode_writes_its_own_formulation_and_class() {
    let dir = TestDir::new();
    let out = dir.path("t.cnf");
    let run = dir
        .orbitcnf()
        .args([
            "encode",
            "--dim",
            "3",
            "--grid=0..1",
            "--period",
            "3",
            "--class",
            "topical",
        ])
        .arg("--output")
        .arg(&out)
        .run();
    run.code(0);
    let text = dir.read("t.cnf");
    assert!(text.contains("formulation=topical-cycle/1"), "{text}");
    assert!(text.contains("\"class\":\"topical\""), "{text}");
    assert!(text.contains("tdist-lower"), "{text}");
    // The default class leaves its CNF as it was: no class in the header.
    let plain = dir.path("n.cnf");
    dir.orbitcnf()
        .args([
            "encode",
            "--dim",
            "3",
            "--grid=0..1",
            "--period",
            "3",
            "--output",
        ])
        .arg(&plain)
        .run()
        .code(0);
    let text = dir.read("n.cnf");
    assert!(text.contains("formulation=isometric-cycle/1") && !text.contains("\"class\""));
    // A bad class is one line naming it.
    dir.orbitcnf()
        .args(["decide", "--class", "sideways"])
        .run()
        .error_with(&["sideways"]);
}

#[test]
fn check_with_class_topical_rejects_an_isometric_but_not_topical_cycle() {
    // (0,0), (1,1) is an isometric 2-cycle, but the points are comparable:
    // t((0,0), (1,1)) = −1 ≠ t((1,1), (0,0)) = 1, so no topical map has it.
    let dir = TestDir::new();
    let file = dir.write("o.json", r#"{"grid": "0..1,0..1", "orbit": [[0,0],[1,1]]}"#);
    dir.orbitcnf().arg("check").arg(&file).run().code(0);
    dir.orbitcnf()
        .args(["check", "--class", "topical"])
        .arg(&file)
        .run()
        .error_with(&["one-sided distance not preserved"]);
}
