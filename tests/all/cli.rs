//! The command line, through the built binary: exit codes, the JSON report,
//! `encode` / `decode` round trips and every way `decode` must refuse its
//! input, `check` and `check --map`, the time limit, and bad input of every
//! kind with its message.
//!
//! Models for the `decode` tests come from the bundled solver run through the
//! library on the CNF file that `encode` wrote (so these tests need no
//! external solver); they are written out in the competition format that
//! DIMACS solvers print. The external solvers are exercised in `external.rs`.

use std::time::Duration;

use serde_json::{Value, json};

use orbitcnf::solve::bundled::Bundled;
use orbitcnf::solve::{Backend, Limits, Outcome};

use crate::util::{
    ERROR, Expect, FEASIBLE, INFEASIBLE, Q, TestDir, UNCHECKED, UNKNOWN, assert_certified,
    assert_decides, assert_isometric_cycle, check_report, cli_check, dist, encode, orbit_of,
};

// ---------------------------------------------------------------- help, exit codes

#[test]
fn help_and_version_exit_0() {
    let dir = TestDir::new();
    let run = dir.orbitcnf().arg("--help").run();
    run.code(0);
    for word in ["decide", "encode", "decode", "check", "10", "20"] {
        run.stdout_has(word);
    }
    for sub in ["decide", "encode", "decode", "check"] {
        dir.orbitcnf()
            .args([sub, "--help"])
            .run()
            .code(0)
            .stdout_has("Usage");
    }
    dir.orbitcnf()
        .arg("--version")
        .run()
        .code(0)
        .stdout_has(env!("CARGO_PKG_VERSION"));
}

#[test]
fn feasible_exits_10_and_the_json_report_has_its_fields() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 2, 4);
    let v = assert_decides(&dir, &q, Expect::Feasible);
    assert_eq!(v["verdict"], "feasible");
    assert_eq!(
        v["question"],
        json!({"dim": 2, "grid": "-1..1,-1..1", "period": 4})
    );
    assert_eq!(orbit_of(&v).map(|o| o.len()), Some(4));
    assert_eq!(v["profile"].as_array().map(Vec::len), Some(2));
    assert_eq!(v["check"]["period"], 4);
    assert_eq!(v["check"]["pairs_checked"], 12);
    assert_eq!(v["certificate"]["kind"], "witness");
    assert!(
        v["statement"]
            .as_str()
            .is_some_and(|s| s.contains("period 4"))
    );
    let stats = &v["stats"];
    assert!(
        stats["variables"].as_u64().is_some_and(|n| n > 0),
        "{stats}"
    );
    assert!(stats["clauses"].as_u64().is_some_and(|n| n > 0), "{stats}");
    assert!(
        stats["seconds"].as_f64().is_some_and(|s| s >= 0.0),
        "{stats}"
    );
    assert!(
        stats["solver"].as_str().is_some_and(|s| !s.is_empty()),
        "{stats}"
    );
    assert!(stats["families"].is_array(), "{stats}");
}

#[test]
fn infeasible_exits_20_without_an_orbit() {
    let dir = TestDir::new();
    let v = assert_decides(&dir, &Q::cube(-1, 1, 2, 5), Expect::Infeasible);
    assert!(v.get("orbit").is_none() && v.get("check").is_none(), "{v}");
    // Backed by the solver, not by a witness (the kind of backing may grow stronger).
    let kind = v["certificate"]["kind"].as_str().unwrap_or("<missing>");
    assert!(kind != "witness" && kind != "none", "certificate {kind}");
    assert!(v["stats"]["clauses"].as_u64().is_some_and(|n| n > 0));
}

/// Reads the orbit out of the text report (lines `   i  (x, y, …)`).
fn orbit_from_text(text: &str) -> Vec<Vec<i64>> {
    text.lines()
        .skip_while(|l| !l.starts_with("orbit "))
        .skip(1)
        .take_while(|l| {
            l.trim_start()
                .chars()
                .next()
                .is_some_and(|c| c.is_ascii_digit())
        })
        .map(|l| {
            let inner = &l[l.find('(').expect("(") + 1..l.find(')').expect(")")];
            inner
                .split(',')
                .map(|t| t.trim().parse().expect("an integer"))
                .collect()
        })
        .collect()
}

#[test]
fn the_text_report_shows_a_checked_orbit() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 8);
    let run = dir.orbitcnf().arg("decide").args(q.args()).run();
    run.code(FEASIBLE)
        .stdout_has("verdict      FEASIBLE")
        .stdout_has("check        passed");
    let orbit = orbit_from_text(&run.stdout);
    assert_isometric_cycle(&q.bounds, &orbit, 8, &run.stdout);
    let doc = json!({"grid": q.spec(), "orbit": orbit}).to_string();
    cli_check(&dir, &q, &doc);

    let q = Q::cube(-1, 1, 2, 5);
    dir.orbitcnf()
        .arg("decide")
        .args(q.args())
        .run()
        .code(INFEASIBLE)
        .stdout_has("verdict      INFEASIBLE");
}

/// Runs `decide` on {−1,0,1}^5 with p = 33 (no answer within minutes) and a time limit, with `extra`
/// encoding options, and asserts an unknown answer well within 30 s.
fn assert_times_out(dir: &TestDir, limit: &str, extra: &[&str]) {
    let run = dir
        .orbitcnf()
        .args(["decide", "--dim", "5", "--grid=-1..1", "--period", "33"])
        .args(["--time-limit", limit, "--json"])
        .args(extra)
        .run();
    let v = check_report(dir, &Q::cube(-1, 1, 5, 33), &run);
    run.code(UNKNOWN);
    assert_eq!(v["verdict"], "unknown");
    assert_eq!(v["certificate"]["kind"], "none");
    if !v["reason"]
        .as_str()
        .is_some_and(|r| r.contains("time limit"))
    {
        run.fail(
            "the reason",
            "mentions the time limit",
            &v["reason"].to_string(),
        );
    }
    if run.elapsed >= Duration::from_secs(30) {
        run.fail(
            "the time taken",
            "under 30 s",
            &format!("{:?}", run.elapsed),
        );
    }
}

/// {−1,0,1}^5 with p = 33 takes over a minute with every encoding (about
/// 70 s with the default one, far longer with the plain one), so limits of
/// 1 s and 0.5 s are always hit, however fast the machine is within reason.
#[test]
fn a_time_limit_gives_unknown_with_exit_0() {
    let dir = TestDir::new();
    assert_times_out(&dir, "1", &[]);
    assert_times_out(
        &dir,
        "1",
        &[
            "--symmetry",
            "none",
            "--no-count",
            "--no-packing",
            "--no-classes",
        ],
    );
    // The text form says so too.
    let run = dir
        .orbitcnf()
        .args(["decide", "--dim", "5", "--grid=-1..1", "-p", "33"])
        .args(["--time-limit", "0.5", "--quiet", "--symmetry", "none"])
        .run();
    run.code(UNKNOWN).stdout_has("verdict      UNKNOWN");
    assert!(run.elapsed < Duration::from_secs(30), "{:?}", run.elapsed);
}

/// Every encoding option gives a verified orbit for a feasible question and
/// the same infeasible verdict for an infeasible one, and the report records
/// the options used.
#[test]
fn every_encoding_option_gives_checked_answers() {
    let dir = TestDir::new();
    let option_sets: &[&[&str]] = &[
        &[],
        &["--symmetry", "all"],
        &["--symmetry", "none"],
        &[
            "--symmetry",
            "none",
            "--no-count",
            "--no-packing",
            "--no-classes",
        ],
        &["--no-count"],
        &["--no-packing"],
        &["--symmetry", "translate"],
        &["--symmetry", "multiplier"],
        &["--symmetry", "rotate"],
        &["--symmetry", "isometry"],
        &["--symmetry", "isometry,stabilizer"],
        &["--symmetry", "isometry,stabilizer,reverse"],
        &["--symmetry", "translate, rotate , multiplier"],
    ];
    let questions = [
        (Q::cube(-1, 1, 3, 8), Expect::Feasible),
        (Q::boxed(&[(0, 3), (-1, 1), (0, 1)], 6), Expect::Feasible),
        (Q::cube(-1, 1, 2, 5), Expect::Infeasible),
        (Q::boxed(&[(0, 2), (0, 3)], 5), Expect::Infeasible),
    ];
    for opts in option_sets {
        for (q, expect) in &questions {
            let run = dir
                .orbitcnf()
                .arg("decide")
                .args(q.args())
                .arg("--json")
                .args(*opts)
                .run();
            let v = check_report(&dir, q, &run);
            if v["verdict"] != expect.word() {
                run.fail("the verdict", expect.word(), &v["verdict"].to_string());
            }
            let o = &v["options"];
            if opts.contains(&"--no-count") && o["count"] != false {
                run.fail("options.count", "false", &o.to_string());
            }
            if opts.contains(&"none")
                && o["symmetry"]
                    .as_object()
                    .is_some_and(|m| m.values().any(|b| b != false))
            {
                run.fail("options.symmetry", "all false", &o.to_string());
            }
        }
    }
}

#[test]
fn bad_encoding_options_are_errors() {
    let dir = TestDir::new();
    for (opt, needles) in [
        (
            "frob",
            &["unknown symmetry family \"frob\"", "translate"][..],
        ),
        ("translate,frob", &["unknown symmetry family \"frob\""][..]),
        ("stabilizer", &["'stabilizer' needs 'isometry'"][..]),
        ("isometry,reverse", &["'reverse' needs 'stabilizer'"][..]),
    ] {
        let question = ["--dim", "2", "--grid=-1..1", "-p", "4", "--symmetry", opt];
        dir.orbitcnf()
            .arg("decide")
            .args(question)
            .run()
            .error_with(needles);
        dir.orbitcnf()
            .arg("encode")
            .args(question)
            .args(["-o", "x.cnf"])
            .run()
            .error_with(needles);
    }
    assert!(!dir.path("x.cnf").exists());
}

// ---------------------------------------------------------------- bad input

/// A missing required argument must be named in the message. Today the
/// binary keeps only the first line of clap's message, and clap lists the
/// missing arguments on the lines after it, so the user is told that some
/// arguments are missing but not which.
#[test]
fn a_missing_required_argument_is_named() {
    let dir = TestDir::new();
    dir.orbitcnf()
        .args(["encode", "--dim", "1", "--grid=0..1"])
        .run()
        .error_with(&["--output"]);
    dir.orbitcnf()
        .args(["decode", "only-one.cnf"])
        .run()
        .error_with(&["SOLVER_OUTPUT"]);
    dir.orbitcnf().arg("check").run().error_with(&["ORBIT"]);
}

/// With no subcommand the binary exits 1 but prints the first line of the
/// help text as the error ("orbitcnf: error: Decide which periods …"),
/// which reads as if deciding had failed. It should say that a command is
/// missing (or show the usage).
#[test]
fn no_subcommand_says_a_command_is_missing() {
    let run = TestDir::new().orbitcnf().run();
    run.code(ERROR);
    if !(run.stderr.contains("command") || run.stderr.contains("Usage")) {
        run.fail(
            "the message",
            "mentions the missing command or the usage",
            &run.stderr,
        );
    }
}

/// Every bad question, for every command that takes one, is an error with exit
/// 1, one line on stderr that names the problem, and no output file.
#[test]
fn bad_questions_are_errors_with_a_message() {
    let cases: &[(&[&str], &[&str])] = &[
        (&["--grid="], &["empty grid specification"]),
        (&["--grid=  "], &["empty grid specification"]),
        (&["--grid=0..1,"], &["part 2: empty range"]),
        (&["--grid=0..1,,0..1"], &["part 2: empty range"]),
        (
            &["--dim", "2", "--grid=1..0"],
            &["range 1..0 is empty", "lower bound exceeds the upper"],
        ),
        (
            &["--grid=0..1,3..2"],
            &["coordinate 1: range 3..2 is empty"],
        ),
        (
            &["--dim", "0"],
            &["the dimension must be at least 1", "--dim 0"],
        ),
        (&["--dim", "0", "--grid=0..1"], &["at least 1"]),
        (
            &["--period", "0"],
            &["the period must be at least 1 (got 0)"],
        ),
        (
            &["--dim", "2", "--grid=-1..1", "--period", "10"],
            &["period 10 exceeds the 9 points"],
        ),
        (
            &["--grid=0..1", "--dim", "1", "--period", "3"],
            &["period 3 exceeds the 2 points"],
        ),
        (
            &["--grid=0..1,0..1", "--dim", "3"],
            &["2 ranges given but --dim is 3"],
        ),
        (&["--grid=a..2"], &["\"a\" is not an integer"]),
        (&["--grid=0..99999999999"], &["within"]),
        (&["--period", "x"], &["period"]),
        (&["--frobnicate"], &["--frobnicate"]),
    ];
    let dir = TestDir::new();
    for (args, needles) in cases {
        dir.orbitcnf()
            .arg("decide")
            .args(*args)
            .run()
            .error_with(needles);
        let out = dir.path("bad.cnf");
        dir.orbitcnf()
            .arg("encode")
            .args(*args)
            .arg("-o")
            .arg(&out)
            .run()
            .error_with(needles);
        assert!(!out.exists(), "encode {args:?} wrote a file");
    }
}

#[test]
fn bad_time_limits_and_missing_arguments_are_errors() {
    let dir = TestDir::new();
    for (limit, needle) in [
        ("0", "positive number of seconds"),
        ("-1", "time-limit"),
        ("abc", "is not a number of seconds"),
        ("inf", "below 1e9 seconds"),
        ("1e300", "below 1e9 seconds (about 31 years)"),
    ] {
        dir.orbitcnf()
            .args(["decide", "--dim", "1", "--grid=0..1", "-p", "2"])
            .arg(format!("--time-limit={limit}"))
            .run()
            .error_with(&[needle]);
    }
    dir.orbitcnf().run().code(ERROR);
    dir.orbitcnf()
        .arg("frobnicate")
        .run()
        .error_with(&["frobnicate"]);
    dir.orbitcnf()
        .args(["encode", "--dim", "1", "--grid=0..1"])
        .run()
        .error_with(&["required"]);
    dir.orbitcnf()
        .args(["decode", "only-one.cnf"])
        .run()
        .code(ERROR);
    dir.orbitcnf().arg("check").run().code(ERROR);
    // `--grid` takes values starting with a minus, so a forgotten value
    // would swallow the next option; the message names both.
    dir.orbitcnf()
        .args(["decide", "--grid", "--dim", "2", "-p", "3"])
        .run()
        .error_with(&["--grid needs a value", "'--dim'", "--grid=-1..1"]);
}

/// Checks the shape of the "too large" message: it gives the estimated size
/// and the limit, and the estimate exceeds the limit. The exact estimate
/// depends on the encoding, so it is not pinned here.
fn assert_too_large(run: &crate::util::Run, limit: u64) {
    run.error_with(&["too large", "clauses over", "variables", "--max-clauses"]);
    let line = run.stderr.trim();
    let after = line.split("about ").nth(1).unwrap_or("");
    let clauses: u64 = after
        .split_whitespace()
        .next()
        .and_then(|w| w.parse().ok())
        .unwrap_or_else(|| run.fail("the estimate", "about N clauses", line));
    let vars: u64 = after
        .split("over ")
        .nth(1)
        .and_then(|s| s.split_whitespace().next())
        .and_then(|w| w.parse().ok())
        .unwrap_or_else(|| run.fail("the estimate", "over N variables", line));
    if clauses <= limit || vars == 0 {
        run.fail(
            "the estimate",
            &format!("more than {limit} clauses"),
            &format!("{clauses} clauses, {vars} variables"),
        );
    }
    run.stderr_has(&format!("(limit {limit} clauses)"));
}

#[test]
fn oversized_questions_are_refused_with_the_estimated_size() {
    let dir = TestDir::new();
    let big = ["--dim", "6", "--grid=0..40", "--period", "300"];
    let run = dir.orbitcnf().arg("decide").args(big).run();
    assert_too_large(&run, 20_000_000);
    let run = dir
        .orbitcnf()
        .arg("encode")
        .args(big)
        .args(["-o", "big.cnf"])
        .run();
    assert_too_large(&run, 20_000_000);
    assert!(!dir.path("big.cnf").exists());
    let run = dir
        .orbitcnf()
        .args([
            "decide",
            "--dim",
            "2",
            "--grid=-1..1",
            "-p",
            "4",
            "--max-clauses",
            "10",
        ])
        .run();
    assert_too_large(&run, 10);
}

// ---------------------------------------------------------------- encode

#[test]
fn encode_writes_a_dimacs_file_with_the_question_in_its_header() {
    let dir = TestDir::new();
    let q = Q::boxed(&[(-1, 1), (0, 3)], 4);
    let run = dir
        .orbitcnf()
        .arg("encode")
        .args(q.args())
        .args(["-o", "q.cnf"])
        .run();
    run.code(0).stderr_has("wrote q.cnf");
    assert!(run.stdout.is_empty(), "{}", run.stdout);
    let text = dir.read("q.cnf");
    let lines: Vec<&str> = text.lines().collect();
    assert!(
        lines[0].starts_with("c orbitcnf-digest sha256:"),
        "{}",
        lines[0]
    );
    let record = lines
        .iter()
        .find_map(|l| l.strip_prefix("c question "))
        .expect("a 'c question' line");
    let record: Value = serde_json::from_str(record).expect("JSON question record");
    assert_eq!(record, json!({"dim": 2, "grid": "-1..1,0..3", "period": 4}));
    let (vars, clauses) = dimacs_clauses(&text);
    let max_var = clauses.iter().flatten().map(|l| l.unsigned_abs()).max();
    assert!(
        max_var.is_some_and(|m| m as usize <= vars),
        "{max_var:?} > {vars}"
    );
    assert!(
        !lines.iter().any(|l| l.starts_with("c --")),
        "a comment line starts with 'c --'"
    );
    // The count on stderr is the count in the file.
    run.stderr_has(&format!("({vars} variables, {} clauses)", clauses.len()));

    // `-o -` writes the same bytes to stdout.
    let run = dir
        .orbitcnf()
        .arg("encode")
        .args(q.args())
        .args(["-o", "-"])
        .run();
    run.code(0);
    assert!(
        run.stdout == text,
        "encode -o - differs from encode -o FILE"
    );
}

/// The clauses of a DIMACS text, parsed here: `(declared variables, clauses)`.
pub fn dimacs_clauses(text: &str) -> (usize, Vec<Vec<i64>>) {
    let mut vars = None;
    let mut declared = 0;
    let mut clauses = Vec::new();
    let mut cur = Vec::new();
    for line in text.lines() {
        if line.starts_with('c') || line.trim().is_empty() {
            continue;
        }
        if let Some(rest) = line.strip_prefix("p cnf ") {
            let f: Vec<usize> = rest
                .split_whitespace()
                .map(|w| w.parse().unwrap())
                .collect();
            vars = Some(f[0]);
            declared = f[1];
            continue;
        }
        for tok in line.split_whitespace() {
            let x: i64 = tok.parse().unwrap();
            if x == 0 {
                clauses.push(std::mem::take(&mut cur));
            } else {
                cur.push(x);
            }
        }
    }
    assert!(cur.is_empty(), "an unterminated clause");
    assert_eq!(clauses.len(), declared, "the p line's clause count");
    (vars.expect("a p cnf line"), clauses)
}

// ---------------------------------------------------------------- decode

/// A model of the CNF file `name`, found by the bundled solver through the
/// library, as DIMACS literals `±v` for every variable `v`.
fn model_of(dir: &TestDir, name: &str) -> Vec<i64> {
    let file = orbitcnf::dimacs::read_cnf_file(&dir.path(name)).expect("read the CNF back");
    let result = Bundled
        .solve(&file.cnf, &Limits::default())
        .expect("the bundled solver runs");
    match result.outcome {
        Outcome::Sat(model) => model
            .iter()
            .enumerate()
            .map(|(i, &b)| if b { i as i64 + 1 } else { -(i as i64 + 1) })
            .collect(),
        other => panic!("{name}: expected a model, got {other:?}"),
    }
}

/// Solver output in competition form, `per_line` literals to a `v` line.
fn solver_output(status: &str, model: &[i64], per_line: usize) -> String {
    let mut s = String::from("c crafted by the orbitcnf tests\n");
    s.push_str(&format!("s {status}\n"));
    for chunk in model.chunks(per_line) {
        let words: Vec<String> = chunk.iter().map(i64::to_string).collect();
        s.push_str(&format!("v {}\n", words.join(" ")));
    }
    s.push_str("v 0\n");
    s
}

fn decode(dir: &TestDir, cnf: &str, output: &str) -> crate::util::Run {
    dir.orbitcnf().args(["decode", cnf, output, "--json"]).run()
}

#[test]
fn decode_reads_a_model_on_one_line_or_wrapped_over_many() {
    let dir = TestDir::new();
    for q in [
        Q::cube(-1, 1, 2, 4),
        Q::boxed(&[(0, 3), (5, 5), (-1, 1)], 3),
        Q::cube(-1, 1, 3, 8),
    ] {
        encode(&dir, &q, "q.cnf");
        let model = model_of(&dir, "q.cnf");
        for per_line in [model.len(), 7, 1] {
            dir.write("out.txt", solver_output("SATISFIABLE", &model, per_line));
            let run = decode(&dir, "q.cnf", "out.txt");
            let v = check_report(&dir, &q, &run);
            assert_eq!(v["verdict"], "feasible", "{}", q.label());
            assert_eq!(v["certificate"]["kind"], "witness");
        }
        // The text form, too.
        dir.orbitcnf()
            .args(["decode", "q.cnf", "out.txt"])
            .run()
            .code(FEASIBLE)
            .stdout_has("check        passed");
    }
}

#[test]
fn decode_reports_unsat_and_unknown_answers() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 2, 5);
    encode(&dir, &q, "q.cnf");
    let cases = [
        // A bare "s UNSATISFIABLE" is the solver's word: not a verdict
        // unless the user accepts unchecked claims (below).
        (
            "c solved\ns UNSATISFIABLE\n",
            UNKNOWN,
            Some("no proof was checked"),
        ),
        ("s UNKNOWN\n", UNKNOWN, Some("s UNKNOWN")),
        ("s INDETERMINATE\n", UNKNOWN, Some("s UNKNOWN")),
        // A solver stopped by a limit (CaDiCaL with -t) prints only comments.
        (
            "c limit reached\nc UNKNOWN\nc exit 0\n",
            UNKNOWN,
            Some("c UNKNOWN"),
        ),
        ("", UNKNOWN, Some("no status line")),
    ];
    for (text, code, reason) in cases {
        dir.write("out.txt", text);
        let run = decode(&dir, "q.cnf", "out.txt");
        let v = check_report(&dir, &q, &run);
        run.code(code);
        if let Some(r) = reason {
            let got = v["reason"].as_str().unwrap_or("");
            if !got.contains(r) {
                run.fail("the reason", r, got);
            }
            assert_eq!(v["certificate"]["kind"], "none");
        }
        assert_eq!(v["certified"], false);
    }
}

#[test]
fn an_unchecked_refutation_never_passes_for_a_certified_one() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 2, 5);
    encode(&dir, &q, "q.cnf");
    dir.write("out.txt", "s UNSATISFIABLE\n");
    // Accepted on the solver's word: said in the verdict line, in JSON and
    // in the exit code.
    let run = dir
        .orbitcnf()
        .args(["decode", "q.cnf", "out.txt", "--trust-solver"])
        .run();
    run.code(UNCHECKED)
        .stdout_has("verdict      INFEASIBLE, UNCHECKED (the word of");
    let run = dir
        .orbitcnf()
        .args(["decode", "q.cnf", "out.txt", "--trust-solver", "--json"])
        .run();
    let v = run.code(UNCHECKED).json();
    assert_eq!(
        (&v["verdict"], &v["certified"]),
        (&"infeasible".into(), &false.into())
    );
    assert_eq!(v["certificate"]["kind"], "solver-claim");
    // Backed by a proof of this very CNF: checked, certified, exit 20.
    dir.orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(["--proof", "p.lrat", "-q"])
        .run()
        .code(INFEASIBLE);
    let run = dir
        .orbitcnf()
        .args(["decode", "q.cnf", "out.txt", "--proof", "p.lrat", "--json"])
        .run();
    let v = run.code(INFEASIBLE).json();
    assert_certified(&run, &v);
    // A proof of another CNF is rejected, not believed.
    dir.orbitcnf()
        .args([
            "decide",
            "--dim",
            "2",
            "--grid=-1..1",
            "-p",
            "6",
            "--proof",
            "other.lrat",
            "-q",
        ])
        .run()
        .code(INFEASIBLE);
    dir.orbitcnf()
        .args(["decode", "q.cnf", "out.txt", "--proof", "other.lrat"])
        .run()
        .error_with(&["proof rejected"]);
    // The solver's output may come on standard input.
    dir.orbitcnf()
        .args(["decode", "q.cnf", "-", "--trust-solver"])
        .stdin("s UNSATISFIABLE\n")
        .run()
        .code(UNCHECKED);
    let sat = Q::cube(-1, 1, 2, 4);
    encode(&dir, &sat, "sat.cnf");
    let model = model_of(&dir, "sat.cnf");
    dir.orbitcnf()
        .args(["decode", "sat.cnf", "-"])
        .stdin(solver_output("SATISFIABLE", &model, 10))
        .run()
        .code(FEASIBLE);
}

#[test]
fn decode_refuses_malformed_solver_output() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 2, 4);
    encode(&dir, &q, "q.cnf");
    let model = model_of(&dir, "q.cnf");
    let good = solver_output("SATISFIABLE", &model, 10);
    let n = model.len() as i64;
    let beyond = format!("variable {}", n + 1);
    let cases: Vec<(String, Vec<&str>)> = vec![
        ("hello world\n".into(), vec!["out.txt:1", "unexpected line"]),
        (
            "garbage\x01\x02 ###\ns SATISFIABLE\n".into(),
            vec!["unexpected line"],
        ),
        ("s SATISFIABLE\n".into(), vec!["no 'v' lines"]),
        ("s MAYBE\n".into(), vec!["unknown status"]),
        (
            "s SATISFIABLE\ns UNSATISFIABLE\n".into(),
            vec!["out.txt:2", "a second status line"],
        ),
        ("v 1 -2 0\n".into(), vec!["without an 's SATISFIABLE'"]),
        ("s UNSATISFIABLE\nv 1 0\n".into(), vec!["not SATISFIABLE"]),
        (good.replace("v 0\n", ""), vec!["not closed by 0"]),
        (
            good.replace("v 0\n", "v 0 5\n"),
            vec!["after the model's closing 0"],
        ),
        (
            good.replacen("v ", "v x ", 1),
            vec!["\"x\" is not a literal"],
        ),
        (
            good.replace("v 0\n", &format!("v {} 0\n", n + 1)),
            vec![&beyond, "the CNF has"],
        ),
        (
            good.replace("v 0\n", &format!("v {} 0\n", -model[0])),
            vec!["both signs"],
        ),
    ];
    for (text, needles) in &cases {
        dir.write("out.txt", text);
        decode(&dir, "q.cnf", "out.txt").error_with(needles);
    }
    decode(&dir, "q.cnf", "missing.txt").error_with(&["missing.txt"]);
}

#[test]
fn decode_refuses_a_model_that_falsifies_a_clause() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 8);
    encode(&dir, &q, "q.cnf");
    let text = dir.read("q.cnf");
    let (_, clauses) = dimacs_clauses(&text);
    let clause_lines: Vec<usize> = text
        .lines()
        .enumerate()
        .skip_while(|(_, l)| !l.starts_with("p cnf"))
        .skip(1)
        .map(|(i, _)| i + 1)
        .collect();
    let model = model_of(&dir, "q.cnf");
    let holds = |m: &[i64], l: i64| m[(l.unsigned_abs() - 1) as usize] == l;
    // Flip the first variable whose flip falsifies some clause.
    let (flipped, first_bad) = (0..model.len())
        .find_map(|v| {
            let mut m = model.clone();
            m[v] = -m[v];
            clauses
                .iter()
                .position(|c| !c.iter().any(|&l| holds(&m, l)))
                .map(|c| (m, c))
        })
        .expect("some flip falsifies a clause");
    dir.write("out.txt", solver_output("SATISFIABLE", &flipped, 12));
    let clause: Vec<String> = clauses[first_bad].iter().map(i64::to_string).collect();
    decode(&dir, "q.cnf", "out.txt").error_with(&[
        &format!("q.cnf:{}:", clause_lines[first_bad]),
        &format!("falsifies clause {first_bad} ({} 0)", clause.join(" ")),
        "the solver's answer is wrong",
    ]);
}

#[test]
fn decode_refuses_a_cnf_without_or_with_an_altered_header() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 2, 4);
    encode(&dir, &q, "q.cnf");
    let model = model_of(&dir, "q.cnf");
    dir.write("out.txt", solver_output("SATISFIABLE", &model, 10));
    decode(&dir, "q.cnf", "out.txt").code(FEASIBLE);
    let text = dir.read("q.cnf");
    let (first, rest) = text.split_once('\n').unwrap();

    // No header at all: the plain DIMACS part alone.
    let plain: String = text
        .lines()
        .filter(|l| !l.starts_with('c'))
        .map(|l| format!("{l}\n"))
        .collect();
    dir.write("plain.cnf", &plain);
    decode(&dir, "plain.cnf", "out.txt").error_with(&["plain.cnf:1", "no orbitcnf header"]);
    // The digest line removed.
    dir.write("nodigest.cnf", rest);
    decode(&dir, "nodigest.cnf", "out.txt").error_with(&["no orbitcnf header"]);

    let altered = |name: &str, body: String| {
        assert_ne!(body, rest, "{name}: the alteration changed nothing");
        dir.write(name, format!("{first}\n{body}"));
        decode(&dir, name, "out.txt").error_with(&[
            &format!("{name}:1"),
            "altered",
            "digest mismatch",
        ]);
    };
    // A header line changed: the period in the question record.
    altered(
        "question.cnf",
        rest.replacen("\"period\":4", "\"period\":3", 1),
    );
    // A variable's meaning changed.
    altered("var.cnf", rest.replacen("c var 1 ", "c var 2 ", 1));
    // A clause changed: the sign of the first literal of the first clause.
    let p_at = rest.find("\np cnf").unwrap() + 1;
    let clause_at = p_at + rest[p_at..].find('\n').unwrap() + 1;
    let mut body = rest.to_string();
    if body[clause_at..].starts_with('-') {
        body.remove(clause_at);
    } else {
        body.insert(clause_at, '-');
    }
    altered("clause.cnf", body);
    // A clause removed (and the count in the p line left as is).
    let clause_end = clause_at + rest[clause_at..].find('\n').unwrap() + 1;
    altered(
        "dropped.cnf",
        format!("{}{}", &rest[..clause_at], &rest[clause_end..]),
    );
    // Trailing junk appended.
    altered("junk.cnf", format!("{rest}1 2 0\n"));

    decode(&dir, "missing.cnf", "out.txt").error_with(&["missing.cnf"]);
}

// ---------------------------------------------------------------- check

#[test]
fn check_accepts_an_orbit_file_and_reports_what_it_checked() {
    let dir = TestDir::new();
    let file = dir.write(
        "square.json",
        r#"{"grid": "-1..1,-1..1", "orbit": [[-1,-1],[-1,1],[1,1],[1,-1]]}"#,
    );
    let run = dir.orbitcnf().arg("check").arg(&file).arg("--json").run();
    run.code(0);
    let v = run.json();
    assert_eq!(v["grid"], "-1..1,-1..1");
    assert_eq!(v["period"], 4);
    assert_eq!(
        v["orbit_check"],
        json!({"period": 4, "profile": [2, 2], "pairs_checked": 12})
    );
    // A grid given as one range with "dim".
    let file = dir.write(
        "dim.json",
        r#"{"grid": "0..3", "dim": 1, "orbit": [[0],[3]]}"#,
    );
    cli_check(
        &dir,
        &Q::cube(0, 3, 1, 2),
        &std::fs::read_to_string(&file).unwrap(),
    );
    // The text form.
    dir.orbitcnf()
        .arg("check")
        .arg("square.json")
        .run()
        .code(0)
        .stdout_has("orbit check  passed");
}

/// Checks a `check --map` table here, independently: one entry per point of
/// the box, images in the box, nonexpansive on every pair, and the orbit
/// moved along itself. Returns the number of pairs.
fn assert_map(bounds: &[(i64, i64)], orbit: &[Vec<i64>], entries: &[Value]) -> usize {
    let table: Vec<(Vec<i64>, Vec<i64>)> = entries
        .iter()
        .map(|e| {
            let pt = |k: &str| -> Vec<i64> {
                e[k].as_array()
                    .unwrap_or_else(|| panic!("map entry {e} has no {k}"))
                    .iter()
                    .map(|c| c.as_i64().unwrap())
                    .collect()
            };
            (pt("x"), pt("f"))
        })
        .collect();
    let points: u64 = bounds.iter().map(|(a, b)| (b - a + 1) as u64).product();
    assert_eq!(table.len() as u64, points, "one entry per point");
    let inside = |z: &[i64]| z.iter().zip(bounds).all(|(v, (a, b))| a <= v && v <= b);
    let mut xs: Vec<&Vec<i64>> = table.iter().map(|(x, _)| x).collect();
    xs.sort();
    xs.dedup();
    assert_eq!(xs.len(), table.len(), "repeated arguments");
    let mut pairs = 0;
    for (a, (x, fx)) in table.iter().enumerate() {
        assert!(inside(x) && inside(fx), "{x:?} -> {fx:?} leaves the box");
        for (y, fy) in &table[a + 1..] {
            assert!(
                dist(fx, fy) <= dist(x, y),
                "the map expands {x:?}, {y:?}: {} -> {}",
                dist(x, y),
                dist(fx, fy)
            );
            pairs += 1;
        }
    }
    for (j, x) in orbit.iter().enumerate() {
        let fx = &table
            .iter()
            .find(|(z, _)| z == x)
            .expect("orbit point in table")
            .1;
        assert_eq!(fx, &orbit[(j + 1) % orbit.len()], "f(x_{j})");
    }
    pairs
}

#[test]
fn check_map_on_a_three_dimensional_orbit_checks_all_351_pairs() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 8);
    let report = assert_decides(&dir, &q, Expect::Feasible);
    let orbit = orbit_of(&report).unwrap();
    let file = dir.write("report.json", report.to_string());
    let run = dir
        .orbitcnf()
        .arg("check")
        .arg(&file)
        .args(["--map", "--json"])
        .run();
    run.code(0);
    let v = run.json();
    // 27 points of {-1,0,1}^3, C(27, 2) = 351 pairs.
    assert_eq!(
        v["map_check"],
        json!({"points_checked": 27, "pairs_checked": 351, "period": 8}),
        "{v}"
    );
    assert_eq!(v["orbit_check"]["pairs_checked"], 56);
    let entries = v["map"].as_array().expect("the map table");
    assert_eq!(assert_map(&q.bounds, &orbit, entries), 351);

    // --map-out writes the same table to a file instead.
    let run = dir
        .orbitcnf()
        .arg("check")
        .arg(&file)
        .args(["--map", "--map-out", "map.json", "--json"])
        .run();
    run.code(0);
    let v2 = run.json();
    assert_eq!(v2["map_check"], v["map_check"]);
    assert!(v2.get("map").is_none(), "{v2}");
    let doc: Value = serde_json::from_str(&dir.read("map.json")).expect("map.json is JSON");
    assert_eq!(doc["grid"], q.spec());
    assert_eq!(doc["map"], v["map"]);

    // The text form prints the table.
    dir.orbitcnf()
        .arg("check")
        .arg(&file)
        .arg("--map")
        .run()
        .code(0)
        .stdout_has("map check    passed")
        .stdout_has("nonexpansive on all 351 pairs");
}

#[test]
fn check_map_on_boxes_with_unequal_and_one_point_sides() {
    let dir = TestDir::new();
    for q in [
        Q::boxed(&[(0, 3), (-1, 1)], 4),
        Q::boxed(&[(-1, 1), (2, 2), (-1, 1)], 4),
        Q::boxed(&[(0, 4)], 2),
    ] {
        let report = assert_decides(&dir, &q, Expect::Feasible);
        let file = dir.write("r.json", report.to_string());
        let run = dir
            .orbitcnf()
            .arg("check")
            .arg(&file)
            .args(["--map", "--json"])
            .run();
        run.code(0);
        let v = run.json();
        let n = q.points();
        assert_eq!(v["map_check"]["points_checked"], n, "{}", q.label());
        assert_eq!(v["map_check"]["pairs_checked"], n * (n - 1) / 2);
        let pairs = assert_map(
            &q.bounds,
            &orbit_of(&report).unwrap(),
            v["map"].as_array().unwrap(),
        );
        assert_eq!(pairs as u64, n * (n - 1) / 2);
    }
}

#[test]
fn check_refuses_bad_orbit_files() {
    let dir = TestDir::new();
    let cases: &[(&str, &str, &[&str])] = &[
        (
            "nojson.json",
            "this is not JSON",
            &["nojson.json", "not valid JSON"],
        ),
        ("empty.json", "", &["not valid JSON"]),
        (
            "outside.json",
            r#"{"grid": "-1..1,-1..1", "orbit": [[-1,-1],[-1,2],[1,1],[1,-1]]}"#,
            &["check failed", "point 1 [-1, 2] lies outside the box"],
        ),
        (
            "repeated.json",
            r#"{"grid": "-1..1,-1..1", "orbit": [[-1,-1],[1,1],[-1,-1],[1,1]]}"#,
            &["points 0 and 2 are equal", "not be minimal"],
        ),
        (
            "distance.json",
            r#"{"grid": "-1..1,-1..1", "orbit": [[0,0],[1,0],[1,1],[-1,1]]}"#,
            &["distance not preserved at offset 1"],
        ),
        (
            "wrongdim.json",
            r#"{"grid": "-1..1,-1..1", "orbit": [[0,0],[1]]}"#,
            &["point 1 has 1 coordinates, the box has 2"],
        ),
        (
            "nogrid.json",
            r#"{"orbit": [[0,0],[1,1]]}"#,
            &["no \"grid\" string"],
        ),
        (
            "badgrid.json",
            r#"{"grid": "1..0", "orbit": [[1]]}"#,
            &["range 1..0 is empty"],
        ),
        (
            "noorbit.json",
            r#"{"verdict":"infeasible","question":{"dim":2,"grid":"-1..1,-1..1","period":5}}"#,
            &["no \"orbit\" list"],
        ),
        (
            "emptyorbit.json",
            r#"{"grid": "0..1", "orbit": []}"#,
            &["the orbit has no points"],
        ),
        (
            "notint.json",
            r#"{"grid": "0..1", "dim": 1, "orbit": [[0], [0.5]]}"#,
            &["orbit point 1, coordinate 0", "not an integer"],
        ),
    ];
    for (name, text, needles) in cases {
        dir.write(name, text);
        dir.orbitcnf()
            .arg("check")
            .arg(name)
            .run()
            .error_with(needles);
        dir.orbitcnf()
            .args(["check", name, "--map", "--json"])
            .run()
            .error_with(needles);
    }
    dir.orbitcnf()
        .args(["check", "missing.json"])
        .run()
        .error_with(&["missing.json"]);
    // --map-out needs --map.
    dir.write(
        "ok.json",
        r#"{"grid": "0..1", "dim": 1, "orbit": [[0],[1]]}"#,
    );
    dir.orbitcnf()
        .args(["check", "ok.json", "--map-out", "m.json"])
        .run()
        .code(ERROR);
    assert!(!dir.path("m.json").exists());
    // A box too large to check a map on every pair: the orbit alone passes.
    dir.write(
        "big.json",
        r#"{"grid": "0..200,0..200", "orbit": [[0,0],[200,200]]}"#,
    );
    dir.orbitcnf().args(["check", "big.json"]).run().code(0);
    dir.orbitcnf()
        .args(["check", "big.json", "--map"])
        .run()
        .error_with(&["40401 points", "limited to"]);
}

/// `bench --spectrum` sweeps {−1,0,1}^4 (here into a store, which a second
/// run reuses and then says it is no timing) and reports its figures: p ≤ 16 by
/// construction (every p ≤ 2^n occurs, docs/math.md §5), the other 16 periods by
/// the solver with checked proofs, nothing unknown or uncertified. Among
/// those 16, the primes 17, 19, 23, 29, 31 are excluded by the prime-period
/// theorem [recalled]; the composites are this tool's own computation.
#[test]
fn bench_spectrum_reports_the_ternary_four_cube() {
    let dir = TestDir::new();
    let run = dir
        .orbitcnf()
        .args([
            "bench",
            "--spectrum",
            "--jobs",
            "2",
            "--json",
            "--store",
            "st",
        ])
        .run();
    run.code(0);
    let v: Value = serde_json::from_str(run.stdout.trim())
        .unwrap_or_else(|e| run.fail("JSON", "one object", &e.to_string()));
    assert_eq!(v["grid"], "{-1,0,1}^4", "{v}");
    assert_eq!(v["by_construction"], 16, "{v}");
    assert_eq!(v["by_solver"], 16, "{v}");
    assert_eq!(v["by_cubes"], 0, "{v}");
    assert_eq!(v["reused"], 0, "{v}");
    assert_eq!(v["unknown"], 0, "{v}");
    assert_eq!(v["uncertified"], 0, "{v}");
    assert_eq!(v["target_seconds"], 900.0, "{v}");
    assert!(v["seconds"].as_f64().is_some_and(|s| s > 0.0), "{v}");
    // The same store again: every answer reused, which is no timing.
    dir.orbitcnf()
        .args(["bench", "--spectrum", "--jobs", "2", "--store", "st"])
        .run()
        .code(0)
        .stdout_has("(MISS 900 s); 32 decided (16 by construction, 16 by the solver")
        .stdout_has("; 32 reused from the store, so not a timing of the whole spectrum");
    // Only {−1,0,1}^4 and {−1,0,1}^5 have a target.
    dir.orbitcnf()
        .args(["bench", "--spectrum", "--dim", "3"])
        .run()
        .error_with(&["{-1,0,1}^4 and {-1,0,1}^5", "not dimension 3"]);
    dir.orbitcnf()
        .args(["bench", "--dim", "5"])
        .run()
        .error_with(&["--spectrum"]);
}

/// `encode --progress lines` reports the long walks inside encoding: on
/// {−1,0,1}^5 with p = 38 the biclique-cover family walks the top patterns
/// for seconds before the CNF is written.
#[test]
fn encode_reports_the_walks_inside_encoding_in_a_log() {
    let dir = TestDir::new();
    dir.orbitcnf()
        .args(["encode", "--dim", "5", "--grid=-1..1", "-p", "38"])
        // With clique-orbits the walk takes a fraction of a second, too
        // short for a progress line; without it, seconds.
        .args(["--no-clique-orbits"])
        .args(["--progress", "lines", "-o", "f.cnf"])
        .run()
        .code(0)
        .stderr_has("encode: biclique-cover: walk of the top patterns, ")
        .stderr_has("orbitcnf: progress: ");
}
