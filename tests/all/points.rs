//! Finite domains that are not boxes (`--points`, the full-map formulation).
//!
//! What is checked, and against what:
//!
//! - On every box with n ≤ 2 and sides ≤ 3, the full-map formulation and the
//!   cycle formulation give the same verdict for every period; on a box they
//!   answer the same question (the cycle extends to the box, docs/math.md §2,
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

use serde_json::Value;

use orbitcnf::brute;
use orbitcnf::encode::{DEFAULT_MAX_CLAUSES, EncodeOptions, Formulation, Symmetry};
use orbitcnf::evidence::Evidence as Certificate;
use orbitcnf::points::PointSet;
use orbitcnf::solve::bundled::Bundled;
use orbitcnf::solve::certified::Certified;
use orbitcnf::solve::{Backend, Limits, Outcome};
use orbitcnf::{Question, Report, Verdict, decide};

use crate::util::{
    FEASIBLE, INFEASIBLE, Q, Run, TestDir, UNCHECKED, UNKNOWN, assert_isometric_cycle, decide_lib,
    dist, orbit_of,
};

/// The corners of {−2,2}^2 plus (0,1): the example of docs/math.md §2.3,
/// where isometric 3- and 4-cycles exist but maps have only periods 1 and 2.
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
        let mut backend = Certified::default();
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
        report.options.formulation == Formulation::FullMap,
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
        // An orbit of a nonexpansive map is an isometric cycle (docs/math.md §1).
        assert_isometric_cycle(q.grid.ranges(), orbit, q.period, context);
    }
    report
}

/// The full-map verdicts on D for p = 1..|D|, with the default, no breaks, and the plain options.
fn full_map_periods(pts: &[Vec<i64>], name: &str) -> Vec<usize> {
    let d = point_set(pts);
    let mut feasible = Vec::new();
    for p in 1..=d.len() {
        let q = Question::on_points(d.clone(), p).unwrap();
        let mut verdicts = Vec::new();
        // Default; no symmetry breaking; and plain (no breaks, no orbit-profile).
        for (symmetry, count) in [
            (Symmetry::ALL, true),
            (Symmetry::NONE, true),
            (Symmetry::NONE, false),
        ] {
            let options = EncodeOptions {
                symmetry,
                count,
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

// ---------------------------------------------------------------- the command line

/// The map of a JSON report, as `(z, f(z))` pairs.
fn map_of(v: &Value) -> Vec<(Vec<i64>, Vec<i64>)> {
    let point = |p: &Value| -> Vec<i64> {
        p.as_array()
            .expect("a point is an array")
            .iter()
            .map(|c| c.as_i64().expect("an integer coordinate"))
            .collect()
    };
    v["map"]
        .as_array()
        .unwrap_or_else(|| panic!("no map in {v}"))
        .iter()
        .map(|e| (point(&e[0]), point(&e[1])))
        .collect()
}

/// Writes `pts` to `name` in the line form, with a comment and a blank line.
fn write_points(dir: &TestDir, name: &str, pts: &[Vec<i64>]) -> String {
    let mut text = String::from("# a test set\n\n");
    for z in pts {
        let c: Vec<String> = z.iter().map(|v| v.to_string()).collect();
        text.push_str(&c.join(" "));
        text.push('\n');
    }
    dir.write(name, text);
    name.to_string()
}

/// Checks a feasible `--json` report on the point set `pts` with our own checker.
fn assert_feasible_report(run: &Run, pts: &[Vec<i64>], p: usize) -> Value {
    run.code(FEASIBLE);
    let v = run.json();
    assert_eq!(v["verdict"], "feasible");
    assert_eq!(v["options"]["formulation"], "full-map/1");
    assert_eq!(
        v["question"]["points"].as_array().map(Vec::len),
        Some(pts.len())
    );
    let orbit = orbit_of(&v).expect("an orbit");
    assert_self_map(pts, &map_of(&v), &orbit, p, &run.shown);
    assert_eq!(
        v["map_check"]["pairs_checked"],
        (pts.len() * (pts.len() - 1) / 2) as u64
    );
    v
}

/// Runs `orbitcnf decide --points FILE -p P EXTRA…`.
fn decide_points(dir: &TestDir, file: &str, p: usize, extra: &[&str]) -> Run {
    dir.orbitcnf()
        .args(["decide", "--points", file, "-p", &p.to_string()])
        .args(extra)
        .run()
}

/// The square {-1,0,1}^2 in the full-map formulation, as decide's flags.
const SQUARE_FULL_MAP: [&str; 5] = ["--dim", "2", "--grid=-1..1", "--formulation", "full-map"];

fn owned(pts: &[&[i64]]) -> Vec<Vec<i64>> {
    pts.iter().map(|z| z.to_vec()).collect()
}

#[test]
fn decide_with_points_says_which_question_it_answered() {
    let dir = TestDir::new();
    let pts = owned(JETTIES);
    let file = write_points(&dir, "jetties.txt", &pts);
    decide_points(&dir, &file, 4, &["-q"])
        .code(FEASIBLE)
        .stdout_has("question     a periodic orbit of a nonexpansive map D → D")
        .stdout_has(
            "map check    passed: maps all 6 points of D into D, nonexpansive on all 15 pairs",
        )
        .stdout_has("map          (");
    assert_feasible_report(&decide_points(&dir, &file, 4, &["--json"]), &pts, 4);
    // Period 3: an isometric 3-cycle exists, but no map has it (brute force agrees).
    assert!(brute::find_map(&pts, 3).is_none());
    decide_points(&dir, &file, 3, &["-q"])
        .code(INFEASIBLE)
        .stdout_has("no nonexpansive map D → D has a periodic point of minimal period 3")
        .stdout_has("accepted by orbitcnf's own checker")
        .stdout_has("encodings/full-map.md");
}

#[test]
fn encode_then_decode_reads_the_map_from_the_header_alone() {
    let dir = TestDir::new();
    let pts = owned(PIER);
    let file = write_points(&dir, "pier.txt", &pts);
    dir.orbitcnf()
        .args(["encode", "--points", &file, "-p", "3", "-o", "pier3.cnf"])
        .run()
        .code(0);
    let text = dir.read("pier3.cnf");
    assert!(text.contains("c question {\"dim\":2,\"grid\":\"0..2,0..3\",\"period\":3,\"points\":[[0,0],[0,3],[2,0],[2,1],[2,3]]}"));
    assert!(text.contains("formulation=full-map/1"));
    // The point file is gone: decoding needs only the CNF.
    std::fs::remove_file(dir.path(&file)).unwrap();
    let cnf = orbitcnf::dimacs::read_cnf_file(&dir.path("pier3.cnf")).unwrap();
    let model = match Bundled.solve(&cnf.cnf, &Limits::default()).unwrap().outcome {
        Outcome::Sat(m) => m,
        other => panic!("pier, p = 3: expected a model, got {other:?}"),
    };
    let lits: Vec<String> = model
        .iter()
        .enumerate()
        .map(|(i, &b)| {
            if b {
                (i + 1).to_string()
            } else {
                format!("-{}", i + 1)
            }
        })
        .collect();
    dir.write(
        "out.txt",
        format!("s SATISFIABLE\nv {} 0\n", lits.join(" ")),
    );
    let run = dir
        .orbitcnf()
        .args(["decode", "pier3.cnf", "out.txt", "--json"])
        .run();
    assert_feasible_report(&run, &pts, 3);
    dir.write("unsat.txt", "s UNSATISFIABLE\n");
    dir.orbitcnf()
        .args(["decode", "pier3.cnf", "unsat.txt"])
        .run()
        .code(UNKNOWN)
        .stdout_has("no proof was checked");
    dir.orbitcnf()
        .args(["decode", "pier3.cnf", "unsat.txt", "--trust-solver"])
        .run()
        .code(UNCHECKED)
        .stdout_has("INFEASIBLE, UNCHECKED");
}

#[test]
fn the_full_map_formulation_runs_on_a_box_too() {
    let dir = TestDir::new();
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(SQUARE_FULL_MAP)
        .args(["-p", "4", "--json"])
        .run();
    run.code(FEASIBLE);
    let v = run.json();
    assert_eq!(v["options"]["formulation"], "full-map/1");
    assert!(v["question"].get("points").is_none());
    let grid: Vec<Vec<i64>> = (-1..=1)
        .flat_map(|a| (-1..=1).map(move |b| vec![a, b]))
        .collect();
    assert_self_map(&grid, &map_of(&v), &orbit_of(&v).unwrap(), 4, &run.shown);
    // Period 5 on {-1,0,1}^2: p ≤ 4 for n = 2 (B. Lemmens and M. Scheutzow,
    // Ergodic Theory Dynam. Systems 25 (2005) 861–871), with a checked proof.
    dir.orbitcnf()
        .arg("decide")
        .args(SQUARE_FULL_MAP)
        .args(["-p", "5"])
        .run()
        .code(INFEASIBLE)
        .stdout_has("accepted by orbitcnf's own checker");
}

#[test]
fn bundles_of_point_questions_carry_the_map_and_are_rechecked() {
    let dir = TestDir::new();
    let pts = owned(NOTES_FIVE);
    let file = write_points(&dir, "five.txt", &pts);
    for (p, code, needle) in [
        (
            2,
            FEASIBLE,
            "map          certified: maps all 5 points of D into D",
        ),
        (4, INFEASIBLE, "INFEASIBLE, certified: LRAT proof"),
    ] {
        let b = format!("b{p}");
        decide_points(&dir, &file, p, &["-q", "--bundle", &b]).code(code);
        dir.orbitcnf()
            .args(["check-bundle", &b])
            .run()
            .code(0)
            .stdout_has(needle)
            .stdout_has("domain       the 5 points of the manifest");
    }
    // An edited map.json is refused: first by its digest, and, with the
    // digest in the manifest updated too, by the map check itself.
    let mut doc: Value = serde_json::from_str(&dir.read("b2/map.json")).unwrap();
    doc["map"][0][1] = serde_json::json!([1, 1]);
    let edited = doc.to_string() + "\n";
    dir.write("b2/map.json", &edited);
    dir.orbitcnf()
        .args(["check-bundle", "b2"])
        .run()
        .error_with(&["map.json: does not match its size and SHA-256"]);
    let mut manifest: Value = serde_json::from_str(&dir.read("b2/manifest.json")).unwrap();
    for f in manifest["files"].as_array_mut().unwrap() {
        if f["name"] == "map.json" {
            f["sha256"] = orbitcnf::artifact::sha256_hex(edited.as_bytes()).into();
            f["bytes"] = edited.len().into();
        }
    }
    dir.write("b2/manifest.json", manifest.to_string());
    dir.orbitcnf()
        .args(["check-bundle", "b2"])
        .run()
        .error_with(&["check failed", "[1, 1], which is not a point of D"]);
}

#[test]
fn split_run_cube_and_merge_work_on_point_questions() {
    let dir = TestDir::new();
    let file = write_points(&dir, "five.txt", &owned(NOTES_FIVE));
    dir.orbitcnf()
        .args([
            "split", "--points", &file, "-p", "3", "--cubes", "8", "--out", "sp",
        ])
        .run()
        .code(0)
        .stdout_has("one per start point x_0 (full-map formulation)");
    // The reflection x ↦ −x pairs the corners: x_0 has 3 possible classes.
    let manifest: Value = serde_json::from_str(&dir.read("sp/manifest.json")).unwrap();
    assert_eq!(manifest["cubes"].as_array().map(Vec::len), Some(3));
    assert_eq!(manifest["split"]["rule"], "start-point");
    for i in 0..3 {
        dir.orbitcnf()
            .args(["run-cube", "sp", &i.to_string()])
            .run()
            .code(0);
    }
    dir.orbitcnf()
        .args(["merge", "sp"])
        .run()
        .code(INFEASIBLE)
        .stdout_has("all 3 cubes refuted");
    let jobs = ["--jobs", "2", "--cubes", "4"];
    let run = decide_points(&dir, &file, 2, &[&jobs[..], &["--json"]].concat());
    assert_feasible_report(&run, &owned(NOTES_FIVE), 2);
    decide_points(&dir, &file, 4, &jobs)
        .code(INFEASIBLE)
        .stdout_has("accepted by orbitcnf's own checker");
    // The same as one campaign in a folder: split, cubes, merge.
    decide_points(&dir, &file, 3, &["--split-dir", "c3", "-q"])
        .code(INFEASIBLE)
        .stdout_has("all 3 cubes refuted")
        .stdout_has("campaign     c3, written in this run");
    let run = decide_points(&dir, &file, 2, &["--split-dir", "c2", "--json"]);
    run.code(FEASIBLE);
    let v = run.json();
    assert_eq!(v["verdict"], "feasible");
    assert!(v["map_check"].is_object(), "{v}");
}

#[test]
fn bad_point_files_and_flag_mixes_are_one_line_errors() {
    let dir = TestDir::new();
    for (name, text, needles) in [
        (
            "dim.txt",
            "0 0\n1 1\n# next line is wrong\n2 2 2\n",
            &["dim.txt:4:", "has 3 coordinates", "(line 1) has 2"][..],
        ),
        (
            "dup.txt",
            "0 0\n1 1\n0,0\n",
            &["dup.txt:3:", "repeats the point on line 1"][..],
        ),
        (
            "frac.txt",
            "0 0\n0.5 1\n",
            &["frac.txt:2:", "\"0.5\" is not an integer"][..],
        ),
        (
            "empty.txt",
            "# only a comment\n",
            &["empty.txt: no points"][..],
        ),
        (
            "json.txt",
            "[[0,0],\n [1,z]]\n",
            &["json.txt:2:", "\"z\" is not an integer"][..],
        ),
    ] {
        dir.write(name, text);
        decide_points(&dir, name, 1, &[]).error_with(needles);
    }
    dir.orbitcnf()
        .args(["decide", "--points", "missing.txt"])
        .run()
        .error_with(&["missing.txt"]);
    let file = write_points(&dir, "five.txt", &owned(NOTES_FIVE));
    decide_points(&dir, &file, 6, &[])
        .error_with(&["period 6 is not between 1 and the 5 points of D"]);
    decide_points(&dir, &file, 3, &["--formulation", "cycle"])
        .error_with(&["--formulation cycle answers the question only on boxes"]);
    decide_points(&dir, &file, 2, &["--class", "topical"]).error_with(&[
        "the full-map formulation (and so --points) encodes nonexpansive maps D → D only",
    ]);
    decide_points(&dir, &file, 1, &["--grid=0..1"]).error_with(&["--grid"]);
}

#[test]
fn spectrum_of_a_point_set_matches_brute_force_and_reuses_its_store() {
    let dir = TestDir::new();
    let pts = owned(JETTIES);
    let file = write_points(&dir, "jetties.txt", &pts);
    let sweep = |extra: &[&str]| {
        let run = dir
            .orbitcnf()
            .args(["spectrum", "--points", &file, "-q", "-j", "1", "--json"])
            .args(extra)
            .run();
        run.code(0);
        run.json()
    };
    let v = sweep(&["--store", "st"]);
    assert_eq!(v["options"]["formulation"], "full-map/1");
    assert_eq!(v["points"].as_array().map(Vec::len), Some(6));
    let rows = v["rows"].as_array().unwrap();
    // Periods 1..4: the bound p ≤ 4 for n = 2 (Lemmens and Scheutzow 2005) cuts |D| = 6.
    assert_eq!(rows.len(), 4);
    let mut feasible = Vec::new();
    for r in rows {
        let p = r["period"].as_u64().unwrap() as usize;
        assert_eq!(
            r["how"], "solver",
            "p = {p}: no construction on a point set"
        );
        if r["verdict"] == "feasible" {
            let a = &r["answer"];
            let orbit = orbit_of(a).unwrap();
            assert_self_map(&pts, &map_of(a), &orbit, p, &format!("spectrum row {p}"));
            feasible.push(p);
        } else {
            assert_eq!(r["verdict"], "infeasible");
            assert_eq!(r["answer"]["backing"], "checked-proof", "p = {p}");
        }
    }
    assert_eq!(
        feasible,
        brute::map_periods(&pts)
            .into_iter()
            .filter(|&p| p <= 4)
            .collect::<Vec<_>>()
    );
    // A second sweep reuses every stored answer, re-checking the stored maps.
    let again = sweep(&["--store", "st"]);
    assert!(
        again["rows"]
            .as_array()
            .unwrap()
            .iter()
            .all(|r| r["reused"] == true)
    );
    let table = dir
        .orbitcnf()
        .args(["spectrum", "--points", &file, "-q", "-j", "1", "--no-store"])
        .run();
    table
        .code(0)
        .stdout_has("spectrum     D = {(0,1), (1,2), (1,3), (3,0), (3,1), (3,2)}")
        .stdout_has("the unit-cube construction needs a box");
}

#[test]
fn spectrum_of_a_point_set_names_the_formulation_that_ran_in_every_report() {
    // The table, the Markdown page and the JSON name one formulation: the
    // full-map one, which answered every period (the answers say so too).
    // Jetties has n' = 2, so the page must not claim that every p ≤ 2^2
    // occurs or that "the periods are exactly 1..4": the unit-cube
    // construction needs a box, and on this D p = 4 need not occur.
    let dir = TestDir::new();
    let file = write_points(&dir, "jetties.txt", &owned(JETTIES));
    let base = ["spectrum", "--points", &file, "-q", "-j", "1", "--no-store"];
    let table = dir.orbitcnf().args(base).args(["--markdown", "d.md"]).run();
    table.code(0).stdout_has("encoding     full-map/1 (");
    assert!(
        !table.stdout.contains("isometric-cycle"),
        "{}",
        table.stdout
    );
    let page = dir.read("d.md");
    assert!(page.contains("with the formulation full-map/1 ("), "{page}");
    assert!(page.contains("Point set D = {(0,1), "), "{page}");
    for absent in [
        "isometric-cycle",
        "Box `",
        "Every p ≤ 2^n occurs",
        "the periods are exactly 1..4",
    ] {
        assert!(!page.contains(absent), "{absent:?} in\n{page}");
    }
    let json = dir.orbitcnf().args(base).arg("--json").run();
    json.code(0);
    let v = json.json();
    assert_eq!(v["options"]["formulation"], "full-map/1");
    for r in v["rows"].as_array().unwrap() {
        assert_eq!(r["answer"]["options"]["formulation"], "full-map/1");
    }
    // A box asked in the full-map formulation: the same word everywhere.
    let boxed = dir
        .orbitcnf()
        .args([
            "spectrum",
            "--dim",
            "2",
            "--grid=0..1",
            "--formulation",
            "full-map",
        ])
        .args(["-q", "-j", "1", "--no-store"])
        .run();
    boxed.code(0).stdout_has("encoding     full-map/1 (");
}

#[test]
fn external_solvers_answer_point_questions_through_encode_and_decode() {
    // CaDiCaL and PicoSAT (Debian packages; see tests/all/external.rs for the
    // skip rule) solve the CNF that encode writes; decode checks the model
    // against every clause and the decoded map on all of D. Verdicts: brute
    // force over all maps (brute::find_map).
    let dir = TestDir::new();
    for (name, set) in [("pier", PIER), ("jetties", JETTIES)] {
        let pts = owned(set);
        let file = write_points(&dir, &format!("{name}.txt"), &pts);
        for p in 2..=4 {
            let expect = brute::find_map(&pts, p).is_some();
            let cnf = format!("{name}{p}.cnf");
            dir.orbitcnf()
                .args([
                    "encode",
                    "--points",
                    &file,
                    "-p",
                    &p.to_string(),
                    "-o",
                    &cnf,
                ])
                .run()
                .code(0);
            for solver in ["cadical", "picosat"] {
                if !crate::util::have_tool(solver) {
                    continue;
                }
                let run = dir.program(solver).arg(&cnf).run();
                let code = if expect { FEASIBLE } else { INFEASIBLE };
                run.code(code);
                dir.write("out.txt", &run.stdout);
                let decoded = dir
                    .orbitcnf()
                    .args(["decode", &cnf, "out.txt", "--json", "--trust-solver"])
                    .run();
                if expect {
                    assert_feasible_report(&decoded, &pts, p);
                } else {
                    decoded.code(UNCHECKED);
                }
            }
        }
    }
}

#[test]
fn check_verifies_the_map_of_a_point_set_report() {
    let dir = TestDir::new();
    let pts = owned(JETTIES);
    let file = write_points(&dir, "jetties.txt", &pts);
    let report = decide_points(&dir, &file, 4, &["--json"]);
    assert_feasible_report(&report, &pts, 4);
    dir.write("r.json", &report.stdout);
    dir.orbitcnf()
        .args(["check", "r.json"])
        .run()
        .code(0)
        .stdout_has("map check    passed: maps all 6 points of D into D");
    // x_0 sent to itself: not the shift (and, here, a stretched pair, which
    // the check meets first).
    let mut v = report.json();
    let x0 = v["orbit"][0].clone();
    for e in v["map"].as_array_mut().unwrap() {
        if e[0] == x0 {
            e[1] = x0.clone();
        }
    }
    dir.write("bad.json", v.to_string());
    dir.orbitcnf()
        .args(["check", "bad.json"])
        .run()
        .error_with(&["check failed"]);
    v.as_object_mut().unwrap().remove("map");
    dir.write("nomap.json", v.to_string());
    dir.orbitcnf()
        .args(["check", "nomap.json"])
        .run()
        .error_with(&["checked with its map", "has no \"map\""]);
}

#[test]
fn spectrum_decides_a_hard_period_of_a_point_set_in_start_point_cubes() {
    // The 27 points of {-1,0,1}^3 as a point set: period 7 ≤ 2^3 occurs (a
    // cycle on the unit cube {0,1}^3, whose points are pairwise at distance
    // 1). A probe of a millisecond does not answer it (encoding the full map
    // alone takes longer), so the sweep decides it in start-point cubes;
    // the map it returns is checked here again, independently.
    let dir = TestDir::new();
    let pts: Vec<Vec<i64>> = (0..27)
        .map(|i| vec![i / 9 - 1, (i / 3) % 3 - 1, i % 3 - 1])
        .collect();
    let file = write_points(&dir, "cube27.txt", &pts);
    let run = dir
        .orbitcnf()
        .args(["spectrum", "--points", &file, "--periods", "7", "-j", "2"])
        .args(["--no-store", "--probe", "0.001", "--json"])
        .run();
    run.code(0);
    let v = run.json();
    let r = &v["rows"][0];
    assert_eq!(r["verdict"], "feasible");
    let a = &r["answer"];
    assert_eq!(a["strategy"]["cube_rule"], "start-point", "{a}");
    let orbit = orbit_of(a).unwrap();
    assert_self_map(&pts, &map_of(a), &orbit, 7, "hard period 7");
}
