//! External cross-check: CNFs written by `orbitcnf encode` are solved by
//! Debian's `cadical` and `picosat`; their verdicts must match `decide`, and
//! every model goes through `orbitcnf decode` to an orbit that is verified.
//!
//! Each question is encoded twice: with the default options (symmetry
//! breaking and redundant constraints) and in the plain formulation
//! (`--symmetry none --no-count --no-packing --no-classes`), so that an external solver
//! also checks that the additions change no verdict.
//!
//! A missing solver skips the test with a note, unless the environment
//! variable `CI` is set: then the test fails, since `.ci/run` installs them.

use crate::util::{
    Expect, INFEASIBLE, PLAIN, Q, Run, TestDir, UNCHECKED, UNKNOWN, assert_decides, check_report,
    have_tool,
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
    for tool in ["cadical", "rate"] {
        assert!(have_tool(tool), "this check needs `{tool}` on PATH");
    }
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
