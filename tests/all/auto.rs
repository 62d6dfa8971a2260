//! `decide`'s automatic strategy (a probe, then cubes on threads) and
//! `split --cubes auto` in the compact layout, through the built binary.
//!
//! - The probe is given a conflict budget of 0, so that it stops at its
//!   first proof flush: reproducible on any machine, no timing involved.
//! - A question decided after the switch must get the verdict of the
//!   ordinary solve (`--no-auto-split`); an infeasible one comes with one
//!   assembled LRAT proof of the CNF that `encode` writes, which
//!   `verify-proof` accepts, and (when installed) CaDiCaL refutes that CNF
//!   on its own; a feasible one with an orbit checked independently
//!   ([`check_report`]).
//! - `split --cubes auto --layout compact` writes no cube files; GNU
//!   parallel runs `run-cube` on every cube and `merge` must agree with
//!   `decide`; a manifest whose cube was altered is refused.

use serde_json::Value;

use crate::util::{FEASIBLE, INFEASIBLE, Q, TestDir, UNKNOWN, check_report, have_tool};

/// `decide` of `q` with the probe at 0 conflicts and `extra`.
fn auto_decide(dir: &TestDir, q: &Q, extra: &[&str]) -> crate::util::Run {
    dir.orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(["--probe-conflicts", "0", "--jobs", "2"])
        .args(extra)
        .run()
}

#[test]
fn a_question_the_probe_leaves_open_is_refuted_in_cubes_with_one_checked_proof() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 4, 17).without_clique_families();
    let run = auto_decide(&dir, &q, &["--proof", "p.lrat", "--progress", "lines"]);
    run.code(INFEASIBLE)
        .stdout_has("verdict      INFEASIBLE")
        .stdout_has(
            "strategy     probe (budget 0 conflicts) gave no answer in ",
        )
        .stdout_has("then 14 full-profile cubes on 2 threads")
        .stdout_has("certificate  LRAT proof")
        .stderr_has("decide: the probe gave no answer (conflict budget of 0 reached); switching to 14 full-profile cubes on 2 threads");
    // The assembled proof is a proof of the very CNF that `encode` writes.
    crate::scaleout::proof_refutes_the_encoded_cnf(&dir, &q, "p.lrat");
    if have_tool("cadical") {
        // An independent solver agrees that the CNF is unsatisfiable.
        let c = dir.program("cadical").args(["-q", "f.cnf"]).run();
        assert_eq!(c.code, Some(20), "cadical: {}", c.stdout);
    }
    // The JSON report carries the same facts.
    let v = auto_decide(&dir, &q, &["--json"]).json();
    assert_eq!(v["verdict"], "infeasible");
    assert_eq!(v["certified"], true);
    let s = &v["strategy"];
    // 36 lex-leader profiles, of which `biclique-cover` excludes 21 and
    // `pack-classes` one more ("every distance 1").
    assert_eq!(s["cubes"], 14, "{s}");
    assert_eq!(s["cube_rule"], "full-profile");
    assert_eq!(s["threads"], 2);
    assert_eq!(s["probe_budget_conflicts"], 0);
    assert!(s["probe_conflicts"].as_u64().unwrap() > 0, "{s}");
    // The ordinary solve agrees, and says nothing of a strategy.
    let plain = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(["--no-auto-split", "--json"])
        .run();
    plain.code(INFEASIBLE);
    assert!(plain.json().get("strategy").is_none());
}

#[test]
fn a_feasible_question_found_in_a_cube_has_a_checked_orbit() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 4, 15);
    let run = auto_decide(&dir, &q, &["--json"]);
    run.code(FEASIBLE);
    let v = check_report(&dir, &q, &run);
    assert_eq!(v["strategy"]["cube_rule"], "full-profile", "{v}");
}

#[test]
fn easy_questions_are_answered_by_the_probe_and_reported_as_before() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 9);
    let auto = dir.orbitcnf().arg("decide").args(q.args()).run();
    auto.code(INFEASIBLE);
    assert!(!auto.stdout.contains("strategy"), "{}", auto.stdout);
    let plain = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .arg("--no-auto-split")
        .run();
    plain.code(INFEASIBLE);
    // The same lines but for the timings.
    let shape = |s: &str| -> Vec<String> {
        s.lines()
            .map(|l| l.split(" in ").next().unwrap_or(l).to_string())
            .filter(|l| !l.starts_with("stats"))
            .collect()
    };
    assert_eq!(shape(&auto.stdout), shape(&plain.stdout));
    // The probe's flags make no sense without the switch.
    dir.orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(["--no-auto-split", "--probe", "3"])
        .run()
        .error_with(&["--probe"]);
}

/// The digest of a compact cube, computed here from its definition.
fn compact_digest(formula_sha256: &str, literals: &[Value]) -> String {
    let lits: Vec<String> = literals.iter().map(|l| l.to_string()).collect();
    let line = format!("a {} 0", lits.join(" "));
    orbitcnf::artifact::sha256_hex(format!("{formula_sha256}\n{line}\n").as_bytes())
}

#[test]
fn a_compact_split_with_the_automatic_cubes_merges_to_the_verdict_of_decide() {
    if !have_tool("parallel") {
        return;
    }
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 4, 17).without_clique_families();
    dir.orbitcnf()
        .arg("split")
        .args(q.args())
        .args(["--cubes", "auto", "--layout", "compact", "--out", "sp"])
        .run()
        .code(0)
        .stdout_has("14 (chosen as decide chooses them)")
        .stdout_has("compact: no cube files");
    assert!(!dir.path("sp/cubes").exists(), "no cube files");
    let m: Value = serde_json::from_str(&dir.read("sp/manifest.json")).unwrap();
    assert_eq!(m["format"], "orbitcnf-split/2");
    assert_eq!(m["layout"], "compact");
    let formula = std::fs::read(dir.path("sp/formula.cnf")).unwrap();
    let fsha = orbitcnf::artifact::sha256_hex(&formula);
    assert_eq!(m["formula"]["sha256"], fsha.as_str());
    let cubes = m["cubes"].as_array().unwrap();
    assert_eq!(cubes.len(), 14);
    for c in cubes {
        assert!(c.get("file").is_none());
        let want = compact_digest(&fsha, c["literals"].as_array().unwrap());
        assert_eq!(c["sha256"], want.as_str(), "{c}");
    }
    let all: Vec<String> = (0..cubes.len()).map(|i| i.to_string()).collect();
    crate::scaleout::parallel_run_cubes(&dir, "sp", &all);
    let merged = dir
        .orbitcnf()
        .args(["merge", "sp", "--proof", "all.lrat", "--progress", "lines"])
        .run();
    // A log sees how far a long merge got, and the report stays on stdout.
    merged
        .code(INFEASIBLE)
        .stdout_has("all 14 cubes refuted")
        .stderr_has("orbitcnf: progress: ")
        .stderr_has("merge: 0 of 14 cube results checked on")
        .stderr_has("merge: checking the assembled proof");
    dir.orbitcnf()
        .args(["verify-proof", "sp/formula.cnf", "all.lrat"])
        .run()
        .code(0);
    // A cube altered in the manifest no longer matches its digest.
    let mut bad = m.clone();
    bad["cubes"][3]["literals"][0] = Value::from(-bad["cubes"][3]["literals"][0].as_i64().unwrap());
    dir.write("sp/manifest.json", bad.to_string());
    dir.orbitcnf()
        .args(["merge", "sp"])
        .run()
        .error_with(&["cube 3: its digest does not match"]);
}

/// Open files stay bounded however many cubes there are: with the limit at
/// 64, `decide` assembles the proof of 196 cubes and `merge` that of a
/// split of as many. (With a temporary file per lifted cube, both failed
/// with "Too many open files" from about 30 cubes on; many systems set the
/// limit to 1024, which cube counts in the thousands passed.)
#[test]
fn many_cubes_are_assembled_under_a_low_limit_of_open_files() {
    let dir = TestDir::new();
    let under_limit = |args: &str| {
        let line = format!("ulimit -n 64 && exec '{}' {args}", crate::util::bin());
        dir.program("sh").args(["-c", &line]).run()
    };
    // Without window-cliques, which leaves fewer cubes than this test needs.
    let q = "--dim 3 --grid 0..3 -p 12 --no-window-cliques --no-clique-orbits";
    under_limit(&format!("decide {q} --jobs 2 --cubes 400 --proof all.lrat"))
        .code(INFEASIBLE)
        .stdout_has("196 cubes on 2 threads");
    dir.orbitcnf()
        .args([
            "encode",
            "--grid",
            "0..3",
            "--dim",
            "3",
            "-p",
            "12",
            "--no-window-cliques",
            "--no-clique-orbits",
            "--output",
            "f.cnf",
        ])
        .run()
        .code(0);
    dir.orbitcnf()
        .args(["verify-proof", "f.cnf", "all.lrat"])
        .run()
        .code(0);
    under_limit(&format!("split {q} --cubes 400 --layout compact --out sp")).code(0);
    let all: Vec<String> = (0..196).map(|i| i.to_string()).collect();
    crate::scaleout::parallel_run_cubes(&dir, "sp", &all);
    under_limit("merge sp --proof merged.lrat")
        .code(INFEASIBLE)
        .stdout_has("all 196 cubes refuted");
}

/// Composite periods on {0,1,2,3}^4 refuted by computation (README, "What is
/// proven and what is open"). Nothing published settles them, so the
/// expectation is orbitcnf's own certified answer of 2026-12-03, pinned here
/// so that a change of the encoding that loses it is seen; every answer must
/// come with one LRAT proof of the whole CNF that the checker accepts.
#[test]
#[ignore = "about 45 minutes on 2 cores (p = 21, 22, 25 and 26 under a minute each in one solve, p = 18, 27 and 20 about 10, 12 and 16 minutes in cubes); run on purpose"]
fn q0_3_n4_composite_periods_are_refuted_with_one_checked_proof() {
    let dir = TestDir::new();
    for p in [21, 22, 25, 26, 18, 27, 20] {
        refuted_with_one_checked_proof(&dir, p);
    }
}

/// {−2,…,2}^4, p = 21, refuted by computation on 2026-12-03 (README, "What
/// is proven and what is open"; run there as 4,224 whole-profile cubes with
/// `split`, `run-cube` and `merge`, 88 minutes on one core). Nothing
/// published settles it; the expectation is orbitcnf's own certified
/// answer, pinned so that a change that loses it is seen. `decide` takes
/// the same 4,224 cubes after its probe.
#[test]
#[ignore = "about 50 minutes on 2 cores (4,224 whole-profile cubes, about 4,700 s of solving); run on purpose"]
fn m2_n4_period_21_is_refuted_in_whole_profile_cubes() {
    let dir = TestDir::new();
    let v = refuted_on(&dir, Q::cube(-2, 2, 4, 21));
    assert_eq!(v["strategy"]["cubes"], 4224, "{}", v["strategy"]);
}

/// `decide --jobs 2 --json` on {0,1,2,3}^4 with period `p`: infeasible with
/// one checked LRAT proof of the whole CNF; returns the JSON report.
fn refuted_with_one_checked_proof(dir: &TestDir, p: usize) -> Value {
    refuted_on(dir, Q::cube(0, 3, 4, p))
}

/// `decide --jobs 2 --json` on question `q`: infeasible with one checked
/// LRAT proof of the whole CNF; returns the JSON report.
fn refuted_on(dir: &TestDir, q: Q) -> Value {
    let p = q.period;
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(["--jobs", "2", "--json"])
        .run();
    run.code(INFEASIBLE);
    let v = run.json();
    assert_eq!(v["certified"], true, "p = {p}");
    assert_eq!(v["certificate"]["kind"], "checked-proof", "p = {p}");
    v
}

/// {0,1,2,3}^4, p = 24 and 28, refuted by computation on 2026-12-03 (README,
/// "What is proven and what is open"): more than 4096 whole profiles each
/// (8,098 and 10,346), so `decide` splits them itself only since its cap
/// is 20,000. Nothing published settles them; the expectation is
/// orbitcnf's own certified answer, pinned so that a change that loses it
/// is seen, and it must come with one LRAT proof of the whole CNF that the
/// checker accepts.
#[test]
#[ignore = "about 45 minutes each on 2 cores (8,098 and 10,346 whole-profile cubes); run on purpose"]
fn q0_3_n4_periods_24_and_28_are_refuted_in_whole_profile_cubes() {
    let dir = TestDir::new();
    for (p, cubes) in [(24, 8098), (28, 10346)] {
        let v = refuted_with_one_checked_proof(&dir, p);
        assert_eq!(v["strategy"]["cubes"], cubes, "p = {p}: {}", v["strategy"]);
    }
}

/// {0,1,2,3}^4, p = 30, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): 25,674 whole profiles, more than the 20,000
/// `decide` splits by itself, so it runs as a cluster would: `split`, then
/// `run-cube` in blocks of cubes under GNU parallel, then `merge`, which
/// re-checks the coverage proof and every cube's LRAT proof. Nothing
/// published settles it; the expectation is orbitcnf's own certified
/// answer, pinned so that a change that loses it is seen.
#[test]
#[ignore = "about 2 hours on 2 cores and 11 GB of disk (25,674 whole-profile cubes, about 12,600 s of solving, then an 8-minute merge); run on purpose"]
fn q0_3_n4_period_30_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(0, 3, 4, 30).without_clique_families(),
        30_000,
        25_674,
        &[],
        Handoff::None,
    );
}

/// {0,1,2,3}^4, p = 32, refuted by computation on 2026-12-04 the same way
/// as p = 30 (README, "What is proven and what is open"): 23,124
/// whole-profile cubes. With it that box has no period 17..32 at all.
#[test]
#[ignore = "about 2 hours on 2 cores and 14 GB of disk (23,124 whole-profile cubes, about 11,000 s of solving, then a 5-minute merge); run on purpose"]
fn q0_3_n4_period_32_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(0, 3, 4, 32).without_clique_families(),
        30_000,
        23_124,
        &[],
        Handoff::None,
    );
}

/// {-1,0,1}^5, p = 36, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"; so p = 72 is excluded too, by the divisor
/// argument of docs/math.md §9): 4,412 whole-profile cubes. Two of them,
/// 3803 and 4349, had no answer from the bundled solver in 30 minutes;
/// they go to CaDiCaL (25 and 15 minutes), whose DRAT proofs `rate`
/// turns into LRAT for orbitcnf's checker (up to 40 minutes each), the
/// others to the bundled solver. Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 2 hours on 2 cores and 12 GB of disk (4,412 whole-profile cubes, about 5,500 s of solving, and two cubes with CaDiCaL and rate, about an hour each); run on purpose"]
fn m1_n5_period_36_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 36).without_clique_families(),
        20_000,
        4_412,
        &[3803, 4349],
        Handoff::None,
    );
}

/// {-1,0,1}^5, p = 38, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"; so p = 76 is excluded too, by docs/math.md
/// §9): 3,848 whole-profile cubes, the split the pruned biclique-cover walk
/// leaves (58,285 before it). Two were handed off after 10 s to a CaDiCaL
/// that writes LRAT ([`Handoff::Lrat`]): cube 3784 (distance 1 exactly at
/// offsets 1, 18 and 19) took it 31 minutes and a proof of 4.26 M steps,
/// cube 3788 90 s. Nothing published settles it; the expectation is
/// orbitcnf's own certified answer.
#[test]
#[ignore = "about 40 minutes on 2 cores and 2.7 GB of disk (3,848 whole-profile cubes, two handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, one for half an hour); run on purpose"]
fn m1_n5_period_38_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 38).without_clique_families(),
        200_000,
        3_848,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 41: a prime period above 2^5, so excluded on all of R^5
/// by the theorem on prime periods (Lyons and Nussbaum, 1992; see p = 29
/// on {−2,…,2}^4) **[recalled]**: a test of the method on the 2,359
/// whole-profile cubes the pruned biclique-cover walk leaves (2026-12-05:
/// 4 minutes of cubes on one shared core, one handed off for 18 s; the
/// merge 26 s).
#[test]
#[ignore = "about 5 minutes on 2 cores and 1 GB of disk (2,359 whole-profile cubes, one handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m1_n5_period_41_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 41).without_clique_families(),
        200_000,
        2_359,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 51, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"): 24,344 whole-profile cubes, more than the
/// 20,000 `split --cubes auto` takes whole, so the test asks for them with
/// a large cube budget, as the campaign did. About 26 minutes of cubes on
/// 2 cores shared with a CI run, 12 handed off after 10 s to a CaDiCaL
/// that writes LRAT ([`Handoff::Lrat`]), the longest 509 s (cube 24265,
/// distance 1 exactly at offsets 1, 16, 17 and 18). Nothing published
/// settles it; the expectation is orbitcnf's own certified answer.
#[test]
#[ignore = "about 30 minutes on 2 cores and 8 GB of disk (24,344 whole-profile cubes, 12 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m1_n5_period_51_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 51).without_clique_families(),
        200_000,
        24_344,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 49, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"): 12,359 whole-profile cubes. About 12
/// minutes of cubes on 2 shared cores, 9 handed off after 10 s to a
/// CaDiCaL that writes LRAT ([`Handoff::Lrat`]), the longest 59 s. Nothing
/// published settles it; the expectation is orbitcnf's own certified
/// answer.
#[test]
#[ignore = "about 20 minutes on 2 cores and 4.5 GB of disk (12,359 whole-profile cubes, 9 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m1_n5_period_49_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 49).without_clique_families(),
        200_000,
        12_359,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 44, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"): 13,903 whole-profile cubes, which
/// `split --cubes auto` writes since the walk's bound is 10^9 steps. About
/// 31 minutes of cubes on 2 shared cores, 11 handed off after 10 s to a
/// CaDiCaL that writes LRAT ([`Handoff::Lrat`]), the longest 14 minutes
/// (cube 13563, distance 1 exactly at offsets 1, 21 and 22) and 12 minutes
/// (cube 13873, offsets 2, 20 and 22). Nothing published settles it; the
/// expectation is orbitcnf's own certified answer.
#[test]
#[ignore = "about 40 minutes on 2 cores and 6.5 GB of disk (13,903 whole-profile cubes, 11 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, two for 12 to 14 minutes); run on purpose"]
fn m1_n5_period_44_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 44).without_clique_families(),
        200_000,
        13_903,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 45, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"): 9,549 whole-profile cubes. About 16
/// minutes of cubes on 2 shared cores, 13 handed off after 10 s to a
/// CaDiCaL that writes LRAT ([`Handoff::Lrat`]), the longest 207 s (cube
/// 9391, distance 1 exactly at offsets 1, 14, 15 and 16). Nothing published
/// settles it; the expectation is orbitcnf's own certified answer.
#[test]
#[ignore = "about 20 minutes on 2 cores and 3.6 GB of disk (9,549 whole-profile cubes, 13 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m1_n5_period_45_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 45).without_clique_families(),
        200_000,
        9_549,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 55, refuted by computation on 2026-12-05
/// (docs/campaigns.md; README, "What is proven and what is open"): 46,590
/// whole-profile cubes, more than `split --cubes auto` takes whole, so the
/// test asks for them with a large cube budget, as the campaign did. About
/// 46 minutes of cubes on 2 shared cores, 6 handed off after 10 s to a
/// CaDiCaL that writes LRAT ([`Handoff::Lrat`]), the longest 166 s (cube
/// 46145). Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about an hour on 2 cores and 15 GB of disk (46,590 whole-profile cubes, 6 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m1_n5_period_55_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 55).without_clique_families(),
        200_000,
        46_590,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 48, refuted by computation on 2026-12-05
/// (docs/campaigns.md; README, "What is proven and what is open"): 41,287
/// whole-profile cubes, more than `split --cubes auto` takes whole, so the
/// test asks for them with a large cube budget, as the campaign did. About
/// 74 minutes of cubes on 2 cores, 28 handed off after 10 s to a
/// CaDiCaL that writes LRAT ([`Handoff::Lrat`]), the longest 1,460 s (cube
/// 41164, distance 1 exactly at offsets 3, 21 and 24). Nothing published
/// settles it; the expectation is orbitcnf's own certified answer.
#[test]
#[ignore = "about 90 minutes on 2 cores and 18 GB of disk (41,287 whole-profile cubes, 28 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, one for about 25 minutes); run on purpose"]
fn m1_n5_period_48_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 48).without_clique_families(),
        200_000,
        41_287,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 54, refuted by computation on 2026-12-05
/// (docs/campaigns.md; README, "What is proven and what is open") by
/// `spectrum` alone: more than 20,000 whole profiles, so after its probe the
/// sweep split the period into 832,605 whole-profile cubes in its store and
/// solved them in blocks on both threads (about 1 h 46 min of blocks over
/// three runs, 7,692 s of solving; 12 handed off after 10 s to a CaDiCaL
/// that writes LRAT, the longest 223 s), then merged the folder (11 min
/// 30 s). Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 2 hours on 2 cores and 33 GB of disk with zstd proofs (832,605 whole-profile cubes in the store, 12 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT), then a merge of about 12 minutes and the same again for --recheck; run on purpose"]
fn m1_n5_period_54_is_refuted_by_spectrum_in_its_store() {
    refuted_by_spectrum_in_its_store(&Q::cube(-1, 1, 5, 54).without_clique_families(), 832_605);
}

/// {-1,0,1}^5, p = 58, refuted by computation on 2026-12-05
/// (docs/campaigns.md; README, "What is proven and what is open") with
/// `window-cliques` in the default: 9 profile-prefix cubes, two handed off
/// after 10 s to a CaDiCaL that writes LRAT (one for about 4 minutes).
/// Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
/// {-1,0,1}^5, p = 56, refuted by computation on 2026-12-05
/// (docs/campaigns.md; README) with `window-cliques` in the default: 65
/// profile-prefix cubes, 10 handed off after 10 s to a CaDiCaL that writes
/// LRAT, the longest 223 s. Nothing published settles it; the expectation
/// is orbitcnf's own certified answer.
#[test]
#[ignore = "about 20 minutes on 2 cores (two walks of the top patterns of some minutes each, the probe, 65 cubes, 10 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL for up to about 4 minutes); run on purpose"]
fn m1_n5_period_56_is_refuted_by_spectrum_in_its_store() {
    refuted_by_spectrum_in_its_store(&Q::cube(-1, 1, 5, 56).without_clique_orbits(), 65);
}

#[test]
#[ignore = "about 25 minutes on 2 cores (two walks of the top patterns of about 5 minutes each, the probe, 9 cubes, one handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL for about 4 minutes); run on purpose"]
fn m1_n5_period_58_is_refuted_by_spectrum_in_its_store() {
    refuted_by_spectrum_in_its_store(&Q::cube(-1, 1, 5, 58).without_clique_orbits(), 9);
}

/// {-1,0,1}^5, p = 57, refuted by computation on 2026-12-06 (README, "What
/// is proven and what is open"): with `clique-orbits` in the default the
/// probe of `spectrum` refuted it in one solve (180,594 conflicts, 57.5 s
/// of solving beside another probe; 286,307 clauses encoded in 0.24 s).
/// Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about a minute on one core (one solve of some 180,000 conflicts and its LRAT check); run on purpose"]
fn m1_n5_period_57_is_refuted_in_one_solve() {
    refuted_by_decide(57, 1);
}

/// {-1,0,1}^5, p = 62, 63, 64, 65, 69, 75 and 77, refuted by computation
/// on 2026-12-06 (README, "What is proven and what is open";
/// docs/campaigns.md) with `clique-orbits` in the default: `spectrum`'s
/// probe of 60 s gave no answer, then whole-profile cubes in memory on 2
/// threads, those the bundled solver left open for 10 s handed off to a
/// CaDiCaL that writes LRAT; the assembled proof checked and kept in the
/// store. p = 62: 8 cubes, 8 min 12 s; 63: 31 cubes, 4 min 57 s (and by
/// `decide --jobs 2` alone, without hand-offs, in 637 s as this test beside
/// other work); 64: 62 cubes, 24 min 1 s (a proof of 3.9 GB); 65: 10
/// cubes, 2 min 21 s; 69: 7 cubes, 1 min 51 s; 75: 31 cubes, 2 min 29 s;
/// 77: 9 cubes, 2 min 30 s. Nothing published settles them; the
/// expectation is orbitcnf's own certified answer.
#[test]
#[ignore = "about 10 minutes on 2 cores (a probe of 60 s, 8 whole-profile cubes, one handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL); run on purpose"]
fn m1_n5_period_62_is_refuted_by_spectrum_in_memory() {
    refuted_by_spectrum_in_memory(62, 8);
}

#[test]
#[ignore = "about 10 minutes on 2 cores (a probe of 60 s, then 31 whole-profile cubes, no hand-off); run on purpose"]
fn m1_n5_period_63_is_refuted_in_cubes_by_decide() {
    refuted_by_decide(63, 2);
}

#[test]
#[ignore = "about 25 minutes on 2 cores and 4 GB of disk (62 whole-profile cubes, 10 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL, a proof of 3.9 GB); run on purpose"]
fn m1_n5_period_64_is_refuted_by_spectrum_in_memory() {
    refuted_by_spectrum_in_memory(64, 62);
}

#[test]
#[ignore = "a few minutes on 2 cores (the probe, then whole-profile cubes of 65, 69, 75 and 77, some handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL); run on purpose"]
fn m1_n5_periods_65_69_75_77_are_refuted_by_spectrum_in_memory() {
    for (p, cubes) in [(65, 10), (69, 7), (75, 31), (77, 9)] {
        refuted_by_spectrum_in_memory(p, cubes);
    }
}

/// {-1,0,1}^5, p = 60, refuted by computation on 2026-12-06 (README) with
/// `clique-orbits` in the default: 168 profile-prefix cubes in the store,
/// 23 handed off after 10 s to a CaDiCaL that writes LRAT, the longest
/// 579 s; 29 min 27 s in all. Nothing published settles it; the
/// expectation is orbitcnf's own certified answer.
#[test]
#[ignore = "about 30 minutes on 2 cores (the probe, 168 cubes, some 20 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL for up to 10 minutes); run on purpose"]
fn m1_n5_period_60_is_refuted_by_spectrum_in_its_store() {
    refuted_by_spectrum_in_its_store(&Q::cube(-1, 1, 5, 60), 168);
}

/// `spectrum` of {−1,0,1}^5 at the period `p` alone, with a store and the
/// hand-off to CaDiCaL: infeasible by one assembled proof of `cubes`
/// whole-profile cubes, checked.
fn refuted_by_spectrum_in_memory(p: usize, cubes: u64) {
    let cadical = std::env::var(LRAT_CADICAL).unwrap_or_else(|_| {
        panic!("this check needs {LRAT_CADICAL}, the path of a CaDiCaL that writes LRAT (--lrat)")
    });
    let dir = TestDir::new();
    let run = dir
        .orbitcnf()
        .args(["spectrum", "--dim", "5", "--grid=-1..1"])
        .args(["--periods", &p.to_string(), "--jobs", "2", "--store", "st"])
        .args(["--json", "--handoff", &format!("{cadical} -q --lrat")])
        .args(["--handoff-proof", "lrat"])
        .run();
    run.code(0);
    let v = run.json();
    let row = &v["rows"][0];
    assert_eq!(row["period"], p);
    assert_eq!(row["verdict"], "infeasible", "{row}");
    assert_eq!(row["answer"]["backing"], "checked-proof", "{row}");
    assert_eq!(row["answer"]["strategy"]["cubes"], cubes, "{row}");
}

/// `decide` on {−1,0,1}^5 with period `p` and `jobs` threads: infeasible,
/// certified.
fn refuted_by_decide(p: usize, jobs: usize) {
    let dir = TestDir::new();
    let run = dir
        .orbitcnf()
        .args(["decide", "--dim", "5", "--grid=-1..1", "-p", &p.to_string()])
        .args(["--jobs", &jobs.to_string(), "--json"])
        .run();
    run.code(20);
    let v = run.json();
    assert_eq!(v["verdict"], "infeasible", "{v}");
    assert_eq!(v["certified"], true, "{v}");
}

/// {-1,0,1}^5, p = 52, refuted by computation on 2026-12-05
/// (docs/campaigns.md; README, "What is proven and what is open"): 86,870
/// whole-profile cubes (`split --cubes 200000`). About 40 minutes of cubes
/// on 2 cores, 10 handed off after 10 s to a CaDiCaL that writes LRAT
/// ([`Handoff::Lrat`]), the longest 440 s (cube 86817, distance 1 exactly at
/// offsets 2, 24 and 26) and 405 s (cube 84921, offsets 1, 25 and 26).
/// Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 50 minutes on 2 cores and 6.6 GB of disk with zstd proofs (86,870 whole-profile cubes, 10 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, two for about 7 minutes); run on purpose"]
fn m1_n5_period_52_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 52).without_clique_families(),
        200_000,
        86_870,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 50, refuted by computation on 2026-12-05
/// (docs/campaigns.md; README, "What is proven and what is open"): 46,249
/// whole-profile cubes (`split --cubes 200000`). About 21 minutes of cubes
/// on 2 cores, 6 handed off after 10 s to a CaDiCaL that writes LRAT
/// ([`Handoff::Lrat`]), the longest 215 s (cube 45322, distance 1 exactly at
/// offsets 1, 24 and 25). Nothing published settles it; the expectation is
/// orbitcnf's own certified answer.
#[test]
#[ignore = "about 30 minutes on 2 cores and 17 GB of disk (46,249 whole-profile cubes, 6 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, one for about 4 minutes); run on purpose"]
fn m1_n5_period_50_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 50).without_clique_families(),
        200_000,
        46_249,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 46, refuted by computation on 2026-12-05
/// (docs/campaigns.md; README, "What is proven and what is open"): 17,661
/// whole-profile cubes, which `split --cubes auto` writes since the walk's
/// bound is 10^9 steps. About 41 minutes of cubes on 2 shared cores, 6
/// handed off after 10 s to a CaDiCaL that writes LRAT ([`Handoff::Lrat`]),
/// the longest 729 s (cube 17527, distance 1 exactly at offsets 1, 22 and
/// 23). Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 45 minutes on 2 cores and 7.5 GB of disk (17,661 whole-profile cubes, 6 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, one for about 12 minutes); run on purpose"]
fn m1_n5_period_46_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 46).without_clique_families(),
        200_000,
        17_661,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 42, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"; so p = 84 is excluded too, by docs/math.md
/// §9, though it lies above the Lemmens–Scheutzow bound anyway): 15,040
/// whole-profile cubes. Counting them takes the pruned walk 632 M steps,
/// above the bound `split --cubes auto` gives itself, so the test asks for
/// them with a large cube budget, as the campaign did. About 80 minutes of
/// cubes on 2 shared cores, 21 handed off after 10 s to a CaDiCaL that
/// writes LRAT ([`Handoff::Lrat`]), the longest 16 minutes (cube 15038,
/// distance 1 exactly at offsets 14 and 21) and 15 minutes (cube 13257,
/// offsets 1, 20 and 21). Nothing published settles it; the expectation is
/// orbitcnf's own certified answer.
#[test]
#[ignore = "about 90 minutes on 2 cores and 7.5 GB of disk (15,040 whole-profile cubes, 21 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, two for about 15 minutes); run on purpose"]
fn m1_n5_period_42_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 42).without_clique_families(),
        200_000,
        15_040,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 40, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"; so p = 80 is excluded too, by docs/math.md
/// §9): 8,084 whole-profile cubes on the formula with the twin break
/// (symmetry step 7). 53 minutes of cubes on 2 shared cores, 36 handed off
/// after 10 s to a CaDiCaL that writes LRAT ([`Handoff::Lrat`]), the
/// longest for 20 minutes (cube 8071, a twin-symmetric profile); the merge
/// about 5 minutes. Nothing published settles it; the expectation is
/// orbitcnf's own certified answer.
#[test]
#[ignore = "about an hour on 2 cores and 5 GB of disk (8,084 whole-profile cubes, 36 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, three for 10 to 20 minutes); run on purpose"]
fn m1_n5_period_40_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 40).without_clique_families(),
        200_000,
        8_084,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {-1,0,1}^5, p = 39, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"; so p = 78 is excluded too, by docs/math.md
/// §9): 2,602 whole-profile cubes, the split the pruned biclique-cover walk
/// leaves (44,421 before it). About 6.5 minutes of cubes beside another
/// campaign, three handed off after 10 s to a CaDiCaL that writes LRAT
/// ([`Handoff::Lrat`]), the longest for 94 s; the merge 32 s on one
/// thread. Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 10 minutes on 2 cores and 1.1 GB of disk (2,602 whole-profile cubes, three handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m1_n5_period_39_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-1, 1, 5, 39).without_clique_families(),
        200_000,
        2_602,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 18, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): 10,333 whole-profile cubes. The bundled
/// solver gets each for 60 s; the few it leaves open (cubes whose top
/// pattern is a coset pattern, such as cube 8435, which it had not refuted
/// in 30 minutes) go to CaDiCaL, whose DRAT proofs `rate` turns into LRAT
/// for orbitcnf's checker. Nothing published settles it; the expectation
/// is orbitcnf's own certified answer.
#[test]
#[ignore = "about 2.5 hours on 2 cores and 20 GB of disk (10,333 whole-profile cubes, some handed off to CaDiCaL and rate); run on purpose"]
fn m2_n4_period_18_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 18).without_clique_families(),
        20_000,
        10_333,
        &[],
        Handoff::Drat("60"),
    );
}

/// {−2,…,2}^4, p = 22, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): 13,703 whole-profile cubes, the first
/// campaign on the formula whose reversal break is a ladder. As for p = 18,
/// the bundled solver gets each cube for 60 s and hands what it leaves open
/// to CaDiCaL, whose DRAT proofs `rate` turns into LRAT for orbitcnf's
/// checker. Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 45 minutes on 2 cores and 5.5 GB of disk (13,703 whole-profile cubes, one handed off to CaDiCaL and rate in the run of record), then a 1-minute merge; run on purpose"]
fn m2_n4_period_22_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 22).without_clique_families(),
        20_000,
        13_703,
        &[],
        Handoff::Drat("60"),
    );
}

/// {−2,…,2}^4, p = 20, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): 16,844 whole-profile cubes. The bundled
/// solver gets each for 10 s and hands what it leaves open to a CaDiCaL that
/// writes LRAT itself ([`Handoff::Lrat`]): with Debian's CaDiCaL, `rate`
/// had not converted the 369 MB DRAT proof of cube 11844 within 2 hours.
/// Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 4 hours on 2 cores and 13 GB of disk (16,844 whole-profile cubes, 35 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, one for an hour); run on purpose"]
fn m2_n4_period_20_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 20).without_clique_families(),
        200_000,
        16_844,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 25, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): 4,383 whole-profile cubes in 11 minutes on
/// 2 shared cores; this test, run the same evening, passed in 307 s. Seven
/// cubes were handed off after 10 s to a CaDiCaL that writes LRAT
/// ([`Handoff::Lrat`]), the longest for 280 s. Nothing
/// published settles it; the expectation is orbitcnf's own certified
/// answer.
#[test]
#[ignore = "about 5 minutes on 2 cores (307 s on 2026-12-04 beside another campaign) and 1 GB of disk (4,383 whole-profile cubes, some handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m2_n4_period_25_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 25).without_clique_families(),
        200_000,
        4_383,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 24, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): 146,529 whole-profile cubes in about 66
/// minutes on 2 shared cores, 69 handed off after 10 s to a CaDiCaL that
/// writes LRAT ([`Handoff::Lrat`]), the longest for 1,408 s; the merge 2 min
/// 42 s. Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 70 minutes on 2 cores and 32 GB of disk (146,529 whole-profile cubes, 69 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT), then a merge of about 3 minutes; run on purpose"]
fn m2_n4_period_24_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 24).without_clique_families(),
        1_000_000,
        146_529,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 28, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): 215,234 whole-profile cubes, all but one in
/// 45 minutes on 2 shared cores; 23 handed off after 10 s to a CaDiCaL that
/// writes LRAT ([`Handoff::Lrat`]), the longest (cube 199478) for 1,304 s;
/// the merge 2 min 15 s. Nothing published settles it; the expectation is
/// orbitcnf's own certified answer.
#[test]
#[ignore = "about 70 minutes on 2 cores and 22 GB of disk (215,234 whole-profile cubes, 23 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, one for 22 minutes), then a merge of about 2 minutes; run on purpose"]
fn m2_n4_period_28_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 28).without_clique_families(),
        1_000_000,
        215_234,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 29: a prime period above 2^4, so excluded on all of R^4
/// by the theorem on prime periods (R. Lyons and R. D. Nussbaum, 1992; a
/// proof in B. Lemmens and R. D. Nussbaum, Nonlinear Perron–Frobenius
/// Theory, Cambridge University Press, 2012) **[recalled]**: a test of the
/// method on 8,930 whole-profile cubes (62 s of cubes and a 25 s merge on
/// 2026-12-04, one cube handed off for 8 s).
#[test]
#[ignore = "about 2 minutes on 2 cores and 0.6 GB of disk (8,930 whole-profile cubes, one handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m2_n4_period_29_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 29).without_clique_families(),
        200_000,
        8_930,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 30, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"): 1,000,001 cubes from `split --cubes
/// 1000000` (more than a million whole profiles, so prefixes), solved with
/// `run-cube DIR all --jobs 2` and the hand-off to a CaDiCaL that writes
/// LRAT ([`Handoff::Lrat`]; this test runs the same blocks under GNU
/// parallel): about 75 minutes of cubes on 2 shared cores,
/// 51 handed off, the longest 327 s (cube 968026); 4,386 s of solving; the
/// merge 5 min 9 s. Nothing published settles it; the expectation is
/// orbitcnf's own certified answer.
#[test]
#[ignore = "about 90 minutes on 2 cores and 12 GB of disk with zstd proofs (1,000,001 prefix cubes, 51 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, one for about 5 minutes); run on purpose"]
fn m2_n4_period_30_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 30).without_clique_families(),
        1_000_000,
        1_000_001,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 32, refuted by computation on 2026-12-05 (README, "What
/// is proven and what is open"): exactly 1,000,000 cubes from `split
/// --cubes 1000000` (more than a million whole profiles, so prefixes),
/// solved with `run-cube DIR all --jobs 2` and the hand-off to a CaDiCaL
/// that writes LRAT ([`Handoff::Lrat`]; this test runs the same blocks
/// under GNU parallel): 93 minutes of cubes on 2 shared cores, 54 handed
/// off, the longest 1,000 s (cube 992960); 6,787 s of solving; the merge
/// 3 min 5 s. With p = 17..31 this leaves {−2,…,2}^4 no period 17..32.
/// Nothing published settles it; the expectation is orbitcnf's own
/// certified answer.
#[test]
#[ignore = "about 100 minutes on 2 cores and 12 GB of disk with zstd proofs (1,000,000 prefix cubes, 54 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT, one for about 17 minutes); run on purpose"]
fn m2_n4_period_32_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 32).without_clique_families(),
        1_000_000,
        1_000_000,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 31: a prime period above 2^4, so excluded on all of R^4
/// by the theorem on prime periods (Lyons and Nussbaum, 1992; see p = 29)
/// **[recalled]**: a test of the method on 200,000 cubes, prefixes of 13
/// and 14 of the 15 distances (2026-12-04/05: about 24 minutes of cubes on
/// 2 shared cores, one handed off for 13 s; the merge 36 s).
#[test]
#[ignore = "about 25 minutes on 2 cores and 1.3 GB of disk (200,000 prefix cubes, one handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m2_n4_period_31_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 31).without_clique_families(),
        200_000,
        200_000,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 26, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): this test is the run of record, 7 min 14 s
/// on 2 quiet cores. An earlier campaign on shared cores had refuted all
/// 33,348 whole-profile cubes, 8 handed off after 10 s to a CaDiCaL that
/// writes LRAT ([`Handoff::Lrat`]), the longest for 99 s; one solve of the
/// whole question had no answer in 900 s. Nothing published settles it;
/// the expectation is orbitcnf's own certified answer.
#[test]
#[ignore = "about 7 minutes on 2 cores (434 s on 2026-12-04, merge included) and 3.4 GB of disk (33,348 whole-profile cubes, some handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m2_n4_period_26_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 26).without_clique_families(),
        200_000,
        33_348,
        &[],
        Handoff::Lrat("10"),
    );
}

/// {−2,…,2}^4, p = 26 again, by `spectrum` alone: more than 20,000 whole
/// profiles, so after its probe the sweep splits the period into a folder
/// of its store (33,348 whole-profile cubes), solves them in blocks on both
/// threads with the hand-off of `--handoff-proof lrat`, merges the folder
/// and records the answer backed by it (2026-12-05: 11 min 21 s beside
/// another campaign, 9 cubes handed off). The answer must agree with the
/// run of record above; a second sweep reuses it and `--recheck` merges the
/// folder again.
#[test]
#[ignore = "about 10 minutes on 2 cores and 0.7 GB of disk (a 60 s probe, then 33,348 whole-profile cubes in the store, some handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT); run on purpose"]
fn m2_n4_period_26_is_refuted_by_spectrum_in_its_store() {
    refuted_by_spectrum_in_its_store(&Q::cube(-2, 2, 4, 26).without_clique_families(), 33_348);
}

/// `spectrum` of `q`'s one period with a store, both threads and the
/// hand-off to the CaDiCaL of [`LRAT_CADICAL`]: infeasible, in cubes, backed
/// by the store's split folder of `cubes` cubes; a second sweep reuses the
/// answer and `--recheck` merges the folder again.
fn refuted_by_spectrum_in_its_store(q: &Q, cubes: u64) {
    let cadical = std::env::var(LRAT_CADICAL).unwrap_or_else(|_| {
        panic!("this check needs {LRAT_CADICAL}, the path of a CaDiCaL that writes LRAT (--lrat)")
    });
    let dir = TestDir::new();
    let sweep = |extra: &[&str]| {
        let run = dir
            .orbitcnf()
            .args(["spectrum", "--dim", &q.dim().to_string()])
            .arg(format!("--grid={}", q.spec()))
            .args(["--periods", &q.period.to_string()])
            .args([
                "--jobs",
                "2",
                "--store",
                "st",
                "--json",
                "--progress",
                "lines",
            ])
            .args(["--handoff", &format!("{cadical} -q --lrat")])
            .args(["--handoff-proof", "lrat"])
            .args(&q.flags)
            .args(extra)
            .run();
        run.code(0);
        run.json()
    };
    let v = sweep(&[]);
    let row = &v["rows"][0];
    assert_eq!(row["period"], q.period);
    assert_eq!(row["verdict"], "infeasible");
    assert_eq!(row["how"], "cubes");
    assert_eq!(row["answer"]["backing"], "checked-cubes");
    assert_eq!(row["answer"]["cubes"]["cubes"], cubes);
    let again = sweep(&["--recheck"]);
    assert_eq!(again["summary"]["reused"], 1);
    let cert = again["rows"][0]["certificate"].as_str().unwrap();
    assert!(cert.contains("re-checked in this run"), "{cert}");
}

/// {−2,…,2}^4, p = 27, refuted by computation on 2026-12-04 (README, "What
/// is proven and what is open"): 40,907 whole-profile cubes in 41 minutes
/// on 2 shared cores, 11 handed off after 10 s to a CaDiCaL that writes
/// LRAT ([`Handoff::Lrat`]), the longest for 993 s. Nothing published
/// settles it; the expectation is orbitcnf's own certified answer.
#[test]
#[ignore = "about an hour on 2 cores and 2.4 GB of disk (40,907 whole-profile cubes, 11 handed off to a CaDiCaL named by ORBITCNF_LRAT_CADICAL that writes LRAT), then a merge of about 15 minutes; run on purpose"]
fn m2_n4_period_27_is_refuted_in_blocks_of_cubes() {
    let dir = TestDir::new();
    refuted_in_blocks(
        &dir,
        &Q::cube(-2, 2, 4, 27).without_clique_families(),
        200_000,
        40_907,
        &[],
        Handoff::Lrat("10"),
    );
}

/// Cubes per `run-cube` range: one solver takes a whole block, so blocks
/// are long (docs/cluster.md measures why).
const BLOCK: usize = 200;

/// Cubes per range on splits of more than [`BIG_SPLIT`] cubes: every
/// process reads the whole manifest (about 1 s for a million cubes).
const BIG_BLOCK: usize = 2_000;

/// See [`BIG_BLOCK`].
const BIG_SPLIT: usize = 300_000;

/// Where the blocks of [`refuted_in_blocks`] send the cubes that the
/// bundled solver leaves open for the given number of seconds.
enum Handoff<'a> {
    /// Nowhere: the bundled solver answers every cube.
    None,
    /// To CaDiCaL on `PATH`, whose DRAT proof `rate` turns into LRAT.
    Drat(&'a str),
    /// To the CaDiCaL named by the environment variable [`LRAT_CADICAL`],
    /// which writes LRAT itself (`--lrat`, CaDiCaL 2.0 on; Debian's 1.5
    /// does not). For campaigns whose hardest cubes would keep `rate` for
    /// hours on their DRAT proofs.
    Lrat(&'a str),
}

/// The environment variable that names a CaDiCaL able to write LRAT
/// (`--lrat`), for [`Handoff::Lrat`].
const LRAT_CADICAL: &str = "ORBITCNF_LRAT_CADICAL";

/// `split` of `q` into cubes (asking for `requested`; there
/// must be `cubes`), `run-cube` with binary proofs on blocks of at most
/// [`BLOCK`] (or [`BIG_BLOCK`]) cubes under GNU parallel, except the cubes in `hard`, which
/// CaDiCaL refutes with a DRAT proof (turned into LRAT by `rate`), and
/// `merge`: infeasible, every cube refuted with a checked proof. The
/// blocks hand the cubes the bundled solver leaves open as `handoff` says.
fn refuted_in_blocks(
    dir: &TestDir,
    q: &Q,
    requested: usize,
    cubes: usize,
    hard: &[usize],
    handoff: Handoff,
) {
    crate::util::require_tools(&["parallel"]);
    if !hard.is_empty() || matches!(handoff, Handoff::Drat(_)) {
        crate::util::require_tools(&["cadical", "rate"]);
    }
    let lrat_cadical = match handoff {
        Handoff::Lrat(_) => Some(std::env::var(LRAT_CADICAL).unwrap_or_else(|_| {
            panic!(
                "this check needs {LRAT_CADICAL}, the path of a CaDiCaL that writes LRAT (--lrat)"
            )
        })),
        _ => None,
    };
    dir.orbitcnf()
        .arg("split")
        .args(q.args())
        .args(["--cubes", &requested.to_string()])
        .args(["--layout", "compact", "--out", "sp"])
        .run()
        .code(0)
        .stdout_has("coverage     checked");
    let m: Value = serde_json::from_str(&dir.read("sp/manifest.json")).expect("manifest is JSON");
    assert_eq!(m["cubes"].as_array().map(Vec::len), Some(cubes));
    let block = if cubes > BIG_SPLIT { BIG_BLOCK } else { BLOCK };
    let mut jobs: Vec<String> = Vec::new();
    let mut start = None;
    for i in 0..=cubes {
        let cut = i == cubes || hard.contains(&i);
        if let Some(a) = start
            && (cut || i - a == block)
        {
            jobs.push(format!("{a}..{}", i - 1));
            start = None;
        }
        if !cut && start.is_none() {
            start = Some(i);
        }
    }
    // The highest blocks first: the hard cubes of a whole-profile split
    // gather at its end, and started first they overlap the easy blocks
    // (docs/cluster.md, "Blocks of cubes, the highest first").
    jobs.reverse();
    // `-I @@`: the block goes where `@@` is, and `{}` stays for --proof-arg.
    let handoff: Vec<String> = match (handoff, lrat_cadical) {
        (Handoff::Drat(after), _) => [
            "--solver",
            "external:'cadical -q'",
            "--proof-arg",
            "'{}'",
            "--handoff-after",
            after,
        ]
        .map(String::from)
        .to_vec(),
        (Handoff::Lrat(after), Some(cadical)) => vec![
            "--solver".into(),
            format!("external:'{cadical} -q --lrat'"),
            "--proof-arg".into(),
            "'{}'".into(),
            "--proof-format".into(),
            "lrat".into(),
            "--handoff-after".into(),
            after.into(),
        ],
        _ => Vec::new(),
    };
    dir.program("parallel")
        .args(["--will-cite", "-j", "2", "-I", "@@"])
        .args([crate::util::bin(), "run-cube", "sp", "@@"])
        .args(&handoff)
        // zstd: the disk figures in the ignore reasons are of the binary
        // proofs the campaigns kept before it existed; zstd keeps a quarter
        // to a third of that (docs/cluster.md).
        .args(["--proof-encoding", "zstd", "-q", ":::"])
        .args(&jobs)
        .run()
        .code(0);
    for i in hard {
        dir.orbitcnf()
            .args([
                "run-cube",
                "sp",
                &i.to_string(),
                "--solver",
                "external:cadical -q",
            ])
            .args(["--proof-arg", "{}", "--proof-encoding", "binary", "-q"])
            .run()
            .code(0);
    }
    dir.orbitcnf()
        .args(["merge", "sp"])
        .run()
        .code(INFEASIBLE)
        .stdout_has(&format!("all {cubes} cubes refuted"));
}

/// `decide --split-dir DIR`: the campaign of `split`, `run-cube all` and
/// `merge` in one command, resumable. A run stopped by its time limit
/// answers unknown and says how far it got; cubes run by hand in the folder
/// count; the next run takes the split up (its cube count kept, whatever
/// `--cubes` now says) and merges it; `merge DIR` agrees; a feasible
/// question gives an orbit checked here and by `check`; a folder of another
/// question is refused and left as it was. {−1,0,1}^3 has no period 10
/// (p ≤ 8 for n = 3, Lyons and Nussbaum 1992 [recalled]; p ≤ 12 by
/// Lemmens and Scheutzow 2005) and has period 8 = 2^3 (the construction of
/// `docs/math.md`).
#[test]
fn decide_runs_a_resumable_campaign_in_a_split_folder() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 10);
    let campaign = |q: &Q, extra: &[&str]| {
        dir.orbitcnf()
            .arg("decide")
            .args(q.args())
            .args(["--split-dir", "c", "--jobs", "2"])
            .args(extra)
            .run()
    };
    // A limit of 1 ns is over before the first block.
    let stopped = campaign(&q, &["--cubes", "16", "--time-limit", "0.000000001"]);
    stopped
        .code(UNKNOWN)
        .stdout_has("verdict      unknown: 0 of ")
        .stdout_has("no block starts after the time limit")
        .stdout_has("the same command goes on");
    let v = campaign(&q, &["--time-limit", "0.000000001", "--json"]).json();
    assert_eq!(v["verdict"], "unknown");
    assert_eq!(v["finished"], 0);
    let cubes = v["cubes"].as_u64().unwrap();
    assert!(cubes >= 2, "{v}");
    // Two cubes run by hand, as on another machine.
    dir.orbitcnf()
        .args(["run-cube", "c", "0..1", "-q"])
        .run()
        .code(0);
    let by_hand = std::fs::read(dir.path("c/results/cube-0001.json")).unwrap();
    campaign(&q, &["--time-limit", "0.000000001"])
        .code(UNKNOWN)
        .stdout_has(&format!(
            "verdict      unknown: 2 of {cubes} cubes of the split c "
        ));
    // A formula.cnf that is not what this orbitcnf writes for the question
    // (as from an earlier version), with a manifest that lists it as it
    // is: the take-up writes the formula again instead of solving against
    // it (the merge would refuse it on every later run).
    let formula = std::fs::read(dir.path("c/formula.cnf")).unwrap();
    let mut stale = formula.clone();
    stale.extend_from_slice(b"c written by another version\n");
    std::fs::write(dir.path("c/formula.cnf"), &stale).unwrap();
    let mut manifest: Value = serde_json::from_str(&dir.read("c/manifest.json")).unwrap();
    manifest["formula"]["sha256"] = orbitcnf::artifact::sha256_hex(&stale).into();
    manifest["formula"]["bytes"] = stale.len().into();
    dir.write("c/manifest.json", manifest.to_string());
    // No limit: the rest is solved and the folder merged.
    let done = campaign(&q, &["--cubes", "3", "--json", "--progress", "lines"]);
    done.code(INFEASIBLE)
        .stderr_has(&format!("taking up the split of {cubes} cubes begun in c"));
    let v = done.json();
    assert_eq!(v["verdict"], "infeasible");
    assert_eq!(v["cubes"], cubes);
    assert_eq!(v["taken_up"], true);
    assert_eq!(v["certified"].as_array().unwrap().len() as u64, cubes);
    assert_eq!(
        std::fs::read(dir.path("c/results/cube-0001.json")).unwrap(),
        by_hand,
        "a cube with a final result is not solved again"
    );
    assert_eq!(
        std::fs::read(dir.path("c/formula.cnf")).unwrap(),
        formula,
        "the stale formula was written again"
    );
    // `merge` of the folder checks it all again and agrees.
    dir.orbitcnf()
        .args(["merge", "c"])
        .run()
        .code(INFEASIBLE)
        .stdout_has("verdict      INFEASIBLE");
    // A feasible question: a checked orbit.
    let q8 = Q::cube(-1, 1, 3, 8);
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q8.args())
        .args(["--split-dir", "c8", "--json"])
        .run();
    check_report(&dir, &q8, &run);
    // The folder of p = 10 is not a folder for p = 9, and is left as it was.
    let manifest = std::fs::read(dir.path("c/manifest.json")).unwrap();
    campaign(&Q::cube(-1, 1, 3, 9), &[]).error_with(&["c", "another question"]);
    assert_eq!(
        std::fs::read(dir.path("c/manifest.json")).unwrap(),
        manifest
    );
    // Options that do not fit a campaign are refused.
    campaign(&q, &["--no-certify"]).error_with(&["checked"]);
    campaign(&q, &["--proof", "x.lrat"]).error_with(&["--proof"]);
}
