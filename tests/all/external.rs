//! External cross-check: CNFs written by `orbitcnf encode` are solved by
//! Debian's `cadical` and `picosat`; their verdicts must match `decide`, and
//! every model goes through `orbitcnf decode` to an orbit that is verified.
//!
//! Each question is encoded twice: with the default options (symmetry
//! breaking and redundant constraints) and in the plain formulation
//! (`--symmetry none --no-count --no-packing --no-classes`), so that an external solver
//! also checks that the additions change no verdict.
//!
//! On larger boxes (a side of 4 or 5 points, dimensions 3 and 4, where the
//! default CNF includes the `pack-nested` exclusions) CaDiCaL's refutations
//! come with DRAT proofs that `rate` verifies and converts to LRAT, and
//! `orbitcnf verify-proof` checks that LRAT ([`refute_with_drat`]).
//!
//! A missing solver skips the test with a note, unless the environment
//! variable `CI` is set: then the test fails, since `.ci/run` installs them.

use crate::util::{
    Expect, INFEASIBLE, PLAIN, Q, Run, TestDir, UNCHECKED, UNKNOWN, assert_decides, check_report,
    have_tool, require_tools,
};

/// Questions with known answers that the bundled solver decides in well under a second.
fn cases() -> Vec<(Q, Expect)> {
    vec![
        (Q::cube(-1, 1, 1, 2), Expect::Feasible),
        (Q::cube(-1, 1, 1, 3), Expect::Infeasible),
        (Q::cube(-1, 1, 2, 4), Expect::Feasible),
        (Q::cube(-1, 1, 2, 5), Expect::Infeasible),
        (Q::cube(0, 3, 2, 3), Expect::Feasible),
        (Q::cube(0, 3, 2, 6), Expect::Infeasible),
        (Q::boxed(&[(0, 3), (0, 0), (-1, 1)], 4), Expect::Feasible),
        (Q::boxed(&[(-1, 1), (4, 4), (-1, 1)], 5), Expect::Infeasible),
        (Q::cube(-1, 1, 3, 7), Expect::Feasible),
        (Q::cube(-1, 1, 3, 8), Expect::Feasible),
        (Q::boxed(&[(0, 1), (-1, 1), (0, 3)], 6), Expect::Feasible),
        (Q::cube(-1, 1, 4, 16), Expect::Feasible),
    ]
}

/// Encodes `q` with `encode_args`, runs `solver` on the file, and decodes the solver's output.
/// The solver's exit code and its decoded verdict must both be `expect`
/// (the orbit of a satisfiable answer is verified by `check_report`).
fn solve_and_decode(
    dir: &TestDir,
    solver: &str,
    solver_args: &[&str],
    q: &Q,
    encode_args: &[&str],
    expect: Expect,
) {
    dir.orbitcnf()
        .arg("encode")
        .args(q.args())
        .args(encode_args)
        .args(["-o", "q.cnf"])
        .run()
        .code(0);
    let run = dir.program(solver).args(solver_args).arg("q.cnf").run();
    run.code(expect.code());
    dir.write("out.txt", &run.stdout);
    // The solver's "unsatisfiable" is the independent reference here, so it
    // is taken on its word, and must come back marked so.
    let decoded = dir
        .orbitcnf()
        .args(["decode", "q.cnf", "out.txt", "--json", "--trust-solver"])
        .run();
    let v = check_report(dir, q, &decoded);
    if expect == Expect::Infeasible {
        decoded.code(UNCHECKED);
        assert_eq!(v["certified"], false, "{v}");
    }
    if v["verdict"] != expect.word() {
        decoded.fail(
            &format!("{solver}'s verdict on {} {encode_args:?}", q.label()),
            expect.word(),
            &v["verdict"].to_string(),
        );
    }
}

fn cross_check(solver: &str, args: &[&str]) {
    if !have_tool(solver) {
        return;
    }
    let dir = TestDir::new();
    for (q, expect) in cases() {
        assert_decides(&dir, &q, expect);
        solve_and_decode(&dir, solver, args, &q, &[], expect);
        solve_and_decode(&dir, solver, args, &q, PLAIN, expect);
    }
}

#[test]
fn cadical_agrees_with_decide() {
    cross_check("cadical", &["-q"]);
}

#[test]
fn picosat_agrees_with_decide() {
    cross_check("picosat", &[]);
}

/// The plain formulation of questions that are hard without symmetry
/// breaking (the bundled solver needs 10–40 s on them, CaDiCaL 3–5 s); the
/// expected verdict comes from R. Lyons and R. D. Nussbaum, On transitive and
/// commutative finite groups of isometries (1992) [recalled]: no period
/// exceeds 8 for n = 3.
#[test]
fn cadical_refutes_n3_periods_above_8() {
    if !have_tool("cadical") {
        return;
    }
    let dir = TestDir::new();
    for q in [Q::cube(-1, 1, 3, 9), Q::cube(-1, 1, 3, 12)] {
        solve_and_decode(&dir, "cadical", &["-q"], &q, PLAIN, Expect::Infeasible);
        solve_and_decode(&dir, "cadical", &["-q"], &q, &[], Expect::Infeasible);
    }
}

/// CaDiCaL stopped by a limit prints `c UNKNOWN` and no `s` line; `decode`
/// must answer unknown with exit 0. A conflict limit of 10 (`-c 10`) makes
/// the stop certain: the plain formulation of {−1,0,1}^4 with p = 17 needs
/// far more conflicts than that, whatever the machine's speed.
#[test]
fn cadical_stopped_by_a_limit_decodes_to_unknown() {
    if !have_tool("cadical") {
        return;
    }
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 4, 17);
    dir.orbitcnf()
        .arg("encode")
        .args(q.args())
        .args(PLAIN)
        .args(["-o", "hard.cnf"])
        .run()
        .code(0);
    let run: Run = dir.program("cadical").args(["-c", "10", "hard.cnf"]).run();
    run.code(0).stdout_has("c UNKNOWN");
    dir.write("out.txt", &run.stdout);
    let decoded = dir
        .orbitcnf()
        .args(["decode", "hard.cnf", "out.txt", "--json"])
        .run();
    let v = check_report(&dir, &q, &decoded);
    decoded.code(UNKNOWN);
    assert_eq!(v["verdict"], "unknown");
    assert!(
        v["reason"].as_str().is_some_and(|r| r.contains("UNKNOWN")),
        "{v}"
    );
}

/// The composite periods p = 18..32 on {−1,0,1}^4, for which we know of no
/// published answer, refuted by CaDiCaL *without* orbitcnf's symmetry
/// breaking (`--symmetry none`): the verdicts then rest on neither varisat
/// nor the symmetry arguments of `encodings/symmetry.md`. They do rest on
/// the redundant families of `encodings/redundant.md` (occupancy count,
/// packing bound, profile exclusions), which stay on: each has its own
/// soundness argument there and brute-force test. CaDiCaL's DRAT
/// proof goes through `rate` to LRAT and orbitcnf's checker. Minutes per
/// period (CaDiCaL alone took 42 s to 4.5 min for most, more than 5 min for
/// p = 24, on 2 shared cores), so run on purpose:
/// `cargo test --release -- --ignored composite_n4`.
#[test]
#[ignore = "minutes per period with CaDiCaL; run on purpose"]
fn cadical_refutes_the_composite_n4_periods_without_symmetry_breaking() {
    require_tools(&["cadical", "rate"]);
    let dir = TestDir::new();
    for p in [18, 20, 21, 22, 24, 25, 26, 27, 28, 30, 32] {
        let q = Q::cube(-1, 1, 4, p);
        let run = dir
            .orbitcnf()
            .arg("decide")
            .args(q.args())
            .args(["--symmetry", "none", "--solver", "external:cadical -q"])
            .args(["--proof-arg", "{}", "--json"])
            .run();
        let v = check_report(&dir, &q, &run);
        run.code(INFEASIBLE);
        assert_eq!(
            v["certificate"]["kind"],
            "checked-proof",
            "{}: {v}",
            q.label()
        );
    }
}

/// What one refutation outside orbitcnf's solvers cost.
struct DratRefutation {
    cadical: std::time::Duration,
    drat_bytes: u64,
    rate: std::time::Duration,
    lrat_bytes: u64,
    check: std::time::Duration,
}

/// Refutes the CNF that `orbitcnf encode` writes for `q` with the default
/// options, with nothing of orbitcnf's solving in the loop: CaDiCaL refutes
/// it and writes a DRAT proof, `rate` verifies that proof and writes it as
/// LRAT, and `orbitcnf verify-proof` checks the LRAT against the same CNF.
/// Prints the costs (seen with `--nocapture`) and returns them.
fn refute_with_drat(dir: &TestDir, q: &Q) -> DratRefutation {
    crate::util::encode(dir, q, "x.cnf");
    // The cross-check is meant to cover the `pack-nested` exclusions, which
    // the default options add on boxes with a side of 3 or more
    // (encodings/redundant.md); the header records the family's clauses.
    let nested = dir
        .read("x.cnf")
        .lines()
        .any(|l| l.starts_with("c family pack-nested ") && !l.ends_with(" clauses=0"));
    assert!(nested, "{}: no pack-nested clauses", q.label());
    let solved = dir.program("cadical").args(["-q", "x.cnf", "x.drat"]).run();
    solved.code(INFEASIBLE).stdout_has("s UNSATISFIABLE");
    let rate = dir
        .program("rate")
        .args(["-L", "x.lrat", "x.cnf", "x.drat"])
        .run();
    rate.code(0).stdout_has("s VERIFIED");
    let check = dir
        .orbitcnf()
        .args(["verify-proof", "x.cnf", "x.lrat"])
        .run();
    check.code(0).stdout_has("accepted");
    let size = |f: &str| std::fs::metadata(dir.path(f)).map_or(0, |m| m.len());
    let r = DratRefutation {
        cadical: solved.elapsed,
        drat_bytes: size("x.drat"),
        rate: rate.elapsed,
        lrat_bytes: size("x.lrat"),
        check: check.elapsed,
    };
    use std::io::Write;
    let _ = writeln!(
        std::io::stderr(),
        "{}: CaDiCaL {:.2} s, DRAT {} bytes; rate {:.2} s, LRAT {} bytes; orbitcnf's check {:.2} s",
        q.label(),
        r.cadical.as_secs_f64(),
        r.drat_bytes,
        r.rate.as_secs_f64(),
        r.lrat_bytes,
        r.check.as_secs_f64()
    );
    r
}

/// Infeasible questions on boxes with a side of 4 or 5 points, in dimensions
/// 3 and 4, whose default CNFs (with `pack-nested`) CaDiCaL refutes in well
/// under a second: each refutation goes through DRAT, `rate` and orbitcnf's
/// checker ([`refute_with_drat`]), and `decide` with the bundled solver must
/// agree. The answers come from published theorems, named beside each case.
#[test]
fn cadical_drat_refutations_on_larger_boxes_pass_rate_and_our_checker() {
    if !(have_tool("cadical") && have_tool("rate")) {
        return;
    }
    // R. Lyons and R. D. Nussbaum, On transitive and commutative finite
    // groups of isometries (1992) [recalled]: no period exceeds 8 for n = 3
    // (docs/math.md §6.3); every box below lies in R^3.
    let n3 = [
        Q::cube(0, 3, 3, 9),
        Q::cube(-2, 2, 3, 9),
        Q::boxed(&[(0, 3), (0, 3), (0, 1)], 9),
        Q::cube(0, 3, 3, 12),
    ];
    // A prime period p satisfies p ≤ 2^n: R. Lyons and R. D. Nussbaum (1992)
    // [recalled], with a proof in B. Lemmens and R. D. Nussbaum, Nonlinear
    // Perron–Frobenius Theory (2012) (docs/math.md §6.4); 17 and 19 exceed 2^4.
    let n4_prime = [
        Q::boxed(&[(0, 3), (0, 3), (0, 3), (0, 1)], 17),
        Q::boxed(&[(0, 3), (0, 3), (0, 1), (0, 1)], 19),
        Q::boxed(&[(0, 4), (0, 1), (0, 1), (0, 1)], 17),
    ];
    let dir = TestDir::new();
    for q in n3.iter().chain(&n4_prime) {
        refute_with_drat(&dir, q);
        assert_decides(&dir, q, Expect::Infeasible);
    }
}

/// {0,1,2,3}^4 with the prime periods between 2^4 and 32 (17, 19, 23, 29,
/// 31), infeasible by the theorem on prime periods (R. Lyons and R. D.
/// Nussbaum (1992) [recalled]; a proof in B. Lemmens and R. D. Nussbaum,
/// Nonlinear Perron–Frobenius Theory (2012); docs/math.md §6.4): the default
/// CNF, refuted by CaDiCaL with a DRAT proof that `rate` verifies and
/// converts to LRAT, which orbitcnf's checker accepts ([`refute_with_drat`]).
/// For p = 17 and 19 `decide` with the bundled solver must agree here; for
/// the others it takes minutes, and the ignored instances
/// `instances/q0_3_n4_p{23,29,31}.json` check it. Measured on 2026-12-03 by
/// one run of this test (Debian's CaDiCaL 1.5.3, version string "sc2021";
/// rate 0.3.0; 2 cores shared with another long job, the test niced),
/// 173 s in all, of which the bundled solver took 21.6 s (p = 17) and
/// 21.0 s (p = 19):
///
/// | p | CaDiCaL | DRAT (binary) | rate | LRAT (text) | orbitcnf's check |
/// |---|---|---|---|---|---|
/// | 17 | 7.6 s | 9,887,448 bytes | 10.8 s | 27,334,533 bytes | 0.31 s |
/// | 19 | 6.8 s | 8,904,423 bytes | 10.9 s | 23,163,890 bytes | 0.33 s |
/// | 23 | 9.0 s | 7,824,114 bytes | 19.9 s | 26,460,225 bytes | 0.44 s |
/// | 29 | 12.0 s | 11,156,261 bytes | 16.4 s | 31,268,022 bytes | 0.36 s |
/// | 31 | 13.2 s | 10,330,466 bytes | 20.9 s | 35,097,572 bytes | 0.52 s |
///
/// Run on purpose: `cargo test --release -- --ignored q0_3_n4_primes`.
#[test]
#[ignore = "about 3 minutes: CaDiCaL and rate on five 4-dimensional questions, the bundled solver on two"]
fn cadical_drat_refutes_q0_3_n4_primes_through_rate_and_our_checker() {
    require_tools(&["cadical", "rate"]);
    let dir = TestDir::new();
    for p in [17, 19, 23, 29, 31] {
        let q = Q::cube(0, 3, 4, p);
        refute_with_drat(&dir, &q);
        if p <= 19 {
            let t0 = std::time::Instant::now();
            assert_decides(&dir, &q, Expect::Infeasible);
            use std::io::Write;
            let _ = writeln!(
                std::io::stderr(),
                "p = {p}: decide with the bundled solver {:.1} s",
                t0.elapsed().as_secs_f64()
            );
        }
    }
}
