//! Scale-out: `split`, `run-cube`, `merge`, `decide --jobs` and external solvers.
//!
//! - The coverage proof of a split is checked again here by orbitcnf's LRAT
//!   checker, and every file's SHA-256 against the manifest.
//! - GNU parallel runs the cubes with two workers; one worker is killed
//!   (by a wrapper that dies on its first attempt at a cube, or by killing
//!   the whole parallel process group after the first result appears); only
//!   the pending cubes are rerun, and the merged verdict must be the verdict
//!   of a monolithic `decide`; for an infeasible question every cube proof is
//!   re-checked by `merge`, and the assembled single proof by `verify-proof`.
//! - CaDiCaL as `--solver external:…` on feasible, infeasible and
//!   time-limited questions; fake solvers (scripts written here) that lie in
//!   every way we could think of, each caught with a one-line error.
//!
//! A missing `cadical` or `parallel` skips its test with a note, unless the
//! environment variable `CI` is set: then the test fails.

use std::path::Path;
use std::time::{Duration, Instant};

use serde_json::Value;

use crate::util::{
    ERROR, FEASIBLE, INFEASIBLE, PLAIN, Q, TestDir, UNCHECKED, UNKNOWN, assert_isometric_cycle,
    bin, check_report, have_tool, orbit_of, require_tools,
};

/// `orbitcnf split` of `q` into about `cubes` cubes in `dir/name`; returns the manifest.
fn split(dir: &TestDir, q: &Q, cubes: usize, name: &str) -> Value {
    dir.orbitcnf()
        .arg("split")
        .args(q.args())
        .args(["--cubes", &cubes.to_string(), "--out", name])
        .run()
        .code(0)
        .stdout_has("coverage     checked");
    serde_json::from_str(&dir.read(&format!("{name}/manifest.json"))).expect("manifest is JSON")
}

fn cube_count(manifest: &Value) -> usize {
    manifest["cubes"].as_array().expect("a cube list").len()
}

/// The verdict word of a monolithic `decide --json`.
fn monolithic(dir: &TestDir, q: &Q) -> String {
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .arg("--json")
        .run();
    check_report(dir, q, &run)["verdict"]
        .as_str()
        .expect("a verdict")
        .to_string()
}

/// `merge --pending`: the indices without a final result.
fn pending(dir: &TestDir, name: &str) -> Vec<String> {
    let run = dir.orbitcnf().args(["merge", name, "--pending"]).run();
    run.code(0);
    run.stdout.split_whitespace().map(str::to_string).collect()
}

/// The LRAT proof at `proof` refutes exactly the CNF `encode` writes for
/// `q` (written to `f.cnf`), as `verify-proof` checks it.
pub(crate) fn proof_refutes_the_encoded_cnf(dir: &TestDir, q: &Q, proof: &str) {
    crate::util::encode(dir, q, "f.cnf");
    dir.orbitcnf()
        .args(["verify-proof", "f.cnf", proof])
        .run()
        .code(0);
}

/// GNU parallel runs `run-cube DIR INDEX` on two workers for each index.
pub(crate) fn parallel_run_cubes(dir: &TestDir, name: &str, indices: &[String]) {
    dir.program("parallel")
        .args([
            "--will-cite",
            "-j",
            "2",
            bin(),
            "run-cube",
            name,
            "{}",
            "-q",
            ":::",
        ])
        .args(indices)
        .run()
        .code(0);
}

/// Writes an executable shell script.
fn script(dir: &TestDir, name: &str, body: &str) -> String {
    let p = dir.write(name, format!("#!/bin/sh\n{body}"));
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o755)).expect("chmod");
    p.display().to_string()
}

#[test]
fn split_writes_a_checked_coverage_proof_and_hashes_every_file() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 9).without_clique_families();
    let m = split(&dir, &q, 6, "sp");
    let n = cube_count(&m);
    assert!(n >= 6, "{n} cubes");
    // Every file matches its digest in the manifest.
    let mut entries = vec![
        m["formula"].clone(),
        m["icnf"].clone(),
        m["coverage"]["cnf"].clone(),
        m["coverage"]["proof"].clone(),
    ];
    entries.extend(
        m["cubes"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| c["file"].clone()),
    );
    for e in &entries {
        let name = e["name"].as_str().unwrap();
        let bytes = std::fs::read(dir.path("sp").join(name)).unwrap();
        assert_eq!(
            e["sha256"],
            orbitcnf::artifact::sha256_hex(&bytes),
            "{name}"
        );
    }
    // The coverage CNF: the negation of every cube plus the profile's order
    // encoding (and the lex-leader clauses); its proof is accepted by our checker.
    let text = dir.read("sp/coverage.cnf");
    let (cnf, _) = orbitcnf::dimacs::parse_dimacs(&text, "coverage.cnf").unwrap();
    let kept = m["coverage"]["formula_clauses"].as_u64().unwrap() as usize;
    assert_eq!(cnf.num_clauses(), kept + n);
    for (j, c) in m["cubes"].as_array().unwrap().iter().enumerate() {
        let neg: Vec<i32> = c["literals"]
            .as_array()
            .unwrap()
            .iter()
            .map(|l| -(l.as_i64().unwrap() as i32))
            .collect();
        let got: Vec<i32> = cnf.clause(kept + j).iter().map(|l| l.dimacs()).collect();
        assert_eq!(got, neg, "coverage clause of cube {j}");
    }
    let proof = std::fs::read(dir.path("sp/coverage.lrat")).unwrap();
    let options = orbitcnf::proof::LratOptions {
        ids_follow_cnf: true,
        ..Default::default()
    };
    let summary = orbitcnf::proof::check_lrat_with(&cnf, &proof, &options)
        .unwrap_or_else(|e| panic!("coverage proof rejected: {e}"));
    assert!(summary.steps >= 1);
    // The iCNF file: `p inccnf`, the clauses, one `a` line per cube.
    let icnf = dir.read("sp/cubes.icnf");
    assert!(icnf.lines().any(|l| l == "p inccnf"));
    assert_eq!(icnf.lines().filter(|l| l.starts_with("a ")).count(), n);
    // A second split into the same folder is refused.
    dir.orbitcnf()
        .arg("split")
        .args(q.args())
        .args(["--out", "sp"])
        .run()
        .error_with(&["already holds a split"]);
}

/// `merge --jobs N` checks the cube proofs on N threads and reports exactly
/// what one thread reports: the same verdict, the same pending cubes in the
/// same order (here a missing result and a proof changed by one byte), the
/// same certified list.
#[test]
fn merge_on_several_threads_reports_what_one_thread_reports() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 9).without_clique_families();
    let n = cube_count(&split(&dir, &q, 8, "sp"));
    assert!(n >= 4, "{n} cubes");
    dir.orbitcnf()
        .args(["run-cube", "sp", &format!("0..{}", n - 1), "-q"])
        .run()
        .code(0);
    let merged = |jobs: &str| {
        let run = dir
            .orbitcnf()
            .args(["merge", "sp", "--json", "--jobs", jobs])
            .run();
        (run.code, run.json())
    };
    dir.orbitcnf()
        .args(["merge", "sp", "--jobs", "0"])
        .run()
        .error_with(&["at least one thread"]);
    let (code, whole) = merged("1");
    assert_eq!(code, Some(INFEASIBLE), "{whole}");
    assert_eq!(merged("3"), (code, whole));
    // One result gone, one proof changed: both pending, in cube order.
    std::fs::remove_file(dir.path("sp/results/cube-0001.json")).expect("remove a result");
    let proof = dir.path(&format!("sp/results/cube-{:04}.lrat", n - 1));
    let mut bytes = std::fs::read(&proof).expect("read a proof");
    let last = bytes.len() - 2;
    bytes[last] ^= 1;
    std::fs::write(&proof, bytes).expect("write the proof back");
    let (code, one) = merged("1");
    assert_eq!(code, Some(UNKNOWN), "{one}");
    let states: Vec<(u64, String)> = one["pending"]
        .as_array()
        .expect("a pending list")
        .iter()
        .map(|p| {
            (
                p["index"].as_u64().unwrap(),
                p["state"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    assert_eq!(
        states,
        [
            (1, "missing".to_string()),
            (n as u64 - 1, "rejected".to_string())
        ],
        "{one}"
    );
    assert_eq!(merged("2"), (code, one));
}

/// GNU parallel with a worker that dies (SIGKILL) on its first attempt at cube 2.
#[test]
fn parallel_with_a_killed_worker_then_rerun_refutes_every_cube() {
    if !have_tool("parallel") {
        return;
    }
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 9).without_clique_families();
    let n = cube_count(&split(&dir, &q, 6, "sp"));
    let worker = script(
        &dir,
        "worker.sh",
        &format!(
            "# Dies by SIGKILL the first time it is given cube 2, like a worker killed part-way.\n\
             if [ \"$1\" = 2 ] && [ ! -e died-once ]; then : > died-once; kill -KILL $$; fi\n\
             exec {} run-cube sp \"$1\" -q\n",
            bin()
        ),
    );
    let all: Vec<String> = (0..n).map(|i| i.to_string()).collect();
    let first = dir
        .program("parallel")
        .args(["--will-cite", "-j", "2", &worker, "{}", ":::"])
        .args(&all)
        .run();
    if first.code == Some(0) {
        first.fail("parallel's exit code", "1 (one job was killed)", "0");
    }
    assert!(!dir.path("sp/results/cube-0002.json").exists());
    // merge: unknown, cube 2 listed as missing.
    let m = dir.orbitcnf().args(["merge", "sp", "--json"]).run();
    m.code(UNKNOWN);
    let v = m.json();
    assert_eq!(v["verdict"], "unknown");
    assert_eq!(v["pending"][0]["index"], 2, "{v}");
    assert_eq!(v["pending"][0]["state"], "missing");
    // Rerun only the pending cubes.
    let todo = pending(&dir, "sp");
    assert_eq!(todo, vec!["2"]);
    parallel_run_cubes(&dir, "sp", &todo);
    assert!(pending(&dir, "sp").is_empty());
    // merge re-checks every cube's proof; --proof assembles one proof of formula.cnf.
    let m = dir
        .orbitcnf()
        .args(["merge", "sp", "--json", "--proof", "all.lrat"])
        .run();
    m.code(INFEASIBLE);
    let v = m.json();
    assert_eq!(v["verdict"], monolithic(&dir, &q));
    assert_eq!(v["certified"].as_array().unwrap().len(), n);
    assert_eq!(v["certificate"]["kind"], "combined-proof");
    dir.orbitcnf()
        .args(["verify-proof", "sp/formula.cnf", "all.lrat"])
        .run()
        .code(0)
        .stdout_has("accepted");
    // Rerunning everything solves nothing again.
    dir.orbitcnf()
        .args(["run-cube", "sp", "0"])
        .run()
        .code(0)
        .stdout_has("already solved");
}

/// GNU parallel is killed, workers and all, once the first result appears.
#[test]
fn parallel_killed_after_the_first_result_then_rerun_finds_the_orbit() {
    if !have_tool("parallel") {
        return;
    }
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 8);
    let n = cube_count(&split(&dir, &q, 8, "sp"));
    let slow = script(
        &dir,
        "slow.sh",
        &format!("sleep 0.4\nexec {} run-cube sp \"$1\" -q\n", bin()),
    );
    let mut cmd = std::process::Command::new("parallel");
    cmd.current_dir(dir.root())
        .args(["--will-cite", "-j", "2", &slow, "{}", ":::"])
        .args((0..n).map(|i| i.to_string()))
        .stdin(std::process::Stdio::null())
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null());
    use std::os::unix::process::CommandExt;
    cmd.process_group(0);
    let mut child = cmd.spawn().expect("start parallel");
    let results = dir.path("sp/results");
    let t0 = Instant::now();
    let count = |p: &Path| {
        std::fs::read_dir(p)
            .map(|d| {
                d.filter(|e| {
                    e.as_ref()
                        .is_ok_and(|e| e.file_name().to_string_lossy().ends_with(".json"))
                })
                .count()
            })
            .unwrap_or(0)
    };
    while count(&results) == 0 && t0.elapsed() < Duration::from_secs(60) {
        std::thread::sleep(Duration::from_millis(10));
    }
    // Kill parallel and every worker it started (its process group).
    let pgid = child.id();
    std::process::Command::new("sh")
        .args(["-c", &format!("kill -KILL -{pgid}")])
        .status()
        .expect("kill the process group");
    let _ = child.wait();
    // GNU parallel runs each job in its own process group, so a worker may
    // outlive the kill and still write its result: wait until the count settles.
    let mut done = count(&results);
    let settle = Instant::now();
    loop {
        std::thread::sleep(Duration::from_millis(1500));
        let now = count(&results);
        if now == done || settle.elapsed() > Duration::from_secs(60) {
            break;
        }
        done = now;
    }
    assert!(
        done >= 1 && done <= n,
        "{done} of {n} results after the kill"
    );
    let todo = pending(&dir, "sp");
    assert_eq!(todo.len(), n - done);
    parallel_run_cubes(&dir, "sp", &todo);
    let m = dir.orbitcnf().args(["merge", "sp", "--json"]).run();
    m.code(FEASIBLE);
    let v = m.json();
    assert_eq!(v["verdict"], monolithic(&dir, &q));
    let orbit = orbit_of(&v).expect("an orbit");
    assert_isometric_cycle(&q.bounds, &orbit, q.period, "merged orbit");
    assert!(v["pending"].as_array().unwrap().is_empty(), "{v}");
}

#[test]
fn decide_jobs_agrees_with_decide_and_certifies_the_whole_cnf() {
    let dir = TestDir::new();
    for q in [
        Q::cube(-1, 1, 3, 8).without_clique_families(),
        Q::cube(-1, 1, 3, 9).without_clique_families(),
        Q::cube(-1, 1, 2, 5).without_clique_families(),
        Q::cube(0, 3, 2, 5).without_clique_families(),
    ] {
        let want = monolithic(&dir, &q);
        let run = dir
            .orbitcnf()
            .arg("decide")
            .args(q.args())
            .args(["--jobs", "2", "--cubes", "5", "--json", "--proof", "p.lrat"])
            .run();
        let v = check_report(&dir, &q, &run);
        assert_eq!(v["verdict"], want.as_str(), "{}", q.label());
        assert!(
            v["stats"]["solver"]
                .as_str()
                .unwrap()
                .contains("on 2 threads"),
            "{v}"
        );
        if want == "infeasible" {
            assert_eq!(v["certificate"]["kind"], "checked-proof", "{v}");
            proof_refutes_the_encoded_cnf(&dir, &q, "p.lrat");
        }
    }
    // A bundle from a parallel run passes check-bundle.
    let q = Q::cube(-1, 1, 3, 9).without_clique_families();
    dir.orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(["--jobs", "2", "--no-auto-split", "--bundle", "b"])
        .run()
        .code(INFEASIBLE);
    dir.orbitcnf()
        .args(["check-bundle", "b"])
        .run()
        .code(0)
        .stdout_has("INFEASIBLE, certified");
    // --jobs with an external solver is refused, with the way to do it.
    dir.orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(["--jobs", "2", "--solver", "external:cadical"])
        .run()
        .error_with(&["run-cube"]);
}

#[test]
fn cadical_as_external_solver_on_feasible_infeasible_and_limited_questions() {
    if !have_tool("cadical") {
        return;
    }
    let dir = TestDir::new();
    let ext = ["--solver", "external:cadical -q"];
    // Feasible: the model is checked, decoded and verified.
    let q = Q::cube(-1, 1, 3, 8);
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(ext)
        .arg("--json")
        .run();
    let v = check_report(&dir, &q, &run);
    assert_eq!(v["verdict"], "feasible");
    assert!(v["stats"]["solver"].as_str().unwrap().contains("cadical"));
    // Infeasible without a proof: the solver's claim is not a verdict …
    let q = Q::cube(-1, 1, 3, 9);
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(ext)
        .arg("--json")
        .run();
    let v = check_report(&dir, &q, &run);
    assert_eq!(v["verdict"], "unknown");
    assert!(
        v["reason"]
            .as_str()
            .unwrap()
            .contains("no proof was checked"),
        "{v}"
    );
    // … unless the user accepts it, and then it is marked unchecked.
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(ext)
        .args(["--json", "--trust-solver"])
        .run();
    let v = check_report(&dir, &q, &run);
    run.code(UNCHECKED);
    assert_eq!(v["verdict"], "infeasible");
    assert_eq!(v["certified"], false);
    assert_eq!(v["certificate"]["kind"], "solver-claim");
    // With a DRAT proof: checked through rate when rate is installed, and
    // a log hears of the conversion (which can outlast the solve).
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .args(ext)
        .args(["--proof-arg", "{}", "--json", "--progress", "lines"])
        .run();
    let v = check_report(&dir, &q, &run);
    if have_tool("rate") {
        assert_eq!(v["verdict"], "infeasible");
        assert_eq!(v["certificate"]["kind"], "checked-proof", "{v}");
        run.stderr_has("solving with external `cadical -q`: ")
            .stderr_has(") to LRAT with `rate`: ");
    } else {
        // Without rate the DRAT proof stays unchecked, so the claim is no verdict.
        assert_eq!(v["verdict"], "unknown", "{v}");
        assert!(
            v["stats"]["solver"]
                .as_str()
                .unwrap()
                .contains("not checked")
        );
    }
    // Time limit: orbitcnf kills CaDiCaL and answers unknown (exit 0).
    let hard = Q::cube(-1, 1, 4, 17);
    let t0 = Instant::now();
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(hard.args())
        .args(PLAIN)
        .args(ext)
        .args(["--time-limit", "1", "--json"])
        .run();
    run.code(UNKNOWN);
    assert!(t0.elapsed() < Duration::from_secs(20));
    let v = run.json();
    assert_eq!(v["verdict"], "unknown");
    assert!(v["reason"].as_str().unwrap().contains("time limit"), "{v}");
    // CaDiCaL's own limit: `c UNKNOWN`, no status line, exit 0.
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(hard.args())
        .args(PLAIN)
        .args(["--solver", "external:cadical -q -t 1", "--json"])
        .run();
    run.code(UNKNOWN);
    assert!(
        run.json()["reason"].as_str().unwrap().contains("c UNKNOWN"),
        "{}",
        run.stdout
    );
}

#[test]
fn cadical_solves_cubes_and_merge_marks_them_uncertified() {
    if !have_tool("cadical") {
        return;
    }
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 9).without_clique_families();
    let n = cube_count(&split(&dir, &q, 4, "sp"));
    for i in 0..n {
        dir.orbitcnf()
            .args([
                "run-cube",
                "sp",
                &i.to_string(),
                "--solver",
                "external:cadical -q",
            ])
            .run()
            .code(0)
            .stdout_has("infeasible, UNCHECKED (no proof");
    }
    // Unchecked cubes are pending unless the user accepts solvers' claims …
    let m = dir.orbitcnf().args(["merge", "sp", "--json"]).run();
    m.code(UNKNOWN);
    let v = m.json();
    assert_eq!(v["pending"].as_array().unwrap().len(), n);
    assert_eq!(v["pending"][0]["state"], "unchecked");
    // … and then the verdict says that it rests on them.
    let m = dir
        .orbitcnf()
        .args(["merge", "sp", "--json", "--trust-solver"])
        .run();
    m.code(UNCHECKED);
    let v = m.json();
    assert_eq!(v["certificate"]["kind"], "partly-uncertified");
    assert_eq!(v["uncertified"].as_array().unwrap().len(), n);
    dir.orbitcnf()
        .args(["merge", "sp", "--trust-solver"])
        .run()
        .code(UNCHECKED)
        .stdout_has("INFEASIBLE, UNCHECKED");
    // A standalone cube file is a CNF that `decode` reads back.
    let run = dir
        .program("cadical")
        .args(["-q", "sp/cubes/cube-0000.cnf"])
        .run();
    run.code(INFEASIBLE);
    dir.write("out.txt", &run.stdout);
    dir.orbitcnf()
        .args([
            "decode",
            "sp/cubes/cube-0000.cnf",
            "out.txt",
            "--trust-solver",
        ])
        .run()
        .code(UNCHECKED);
}

/// Fake solvers that lie: each is caught with a one-line error, never a verdict.
#[test]
fn lying_solvers_are_caught() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 2, 4);
    let fake = |name: &str, body: &str| script(&dir, name, body);
    let cases: Vec<(String, Vec<&str>)> = vec![
        (
            fake(
                "wrong-model.sh",
                "echo 's SATISFIABLE'\necho 'v 0'\nexit 10\n",
            ),
            vec!["its model is wrong", "falsifies clause"],
        ),
        (
            fake(
                "sat-exit-20.sh",
                "echo 's SATISFIABLE'\necho 'v 0'\nexit 20\n",
            ),
            vec!["s SATISFIABLE contradicts its exit code 20"],
        ),
        (
            fake("unsat-exit-10.sh", "echo 's UNSATISFIABLE'\nexit 10\n"),
            vec!["s UNSATISFIABLE contradicts its exit code 10"],
        ),
        (
            fake("silent-exit-20.sh", "exit 20\n"),
            vec!["(no status line) contradicts its exit code 20"],
        ),
        (
            fake("segfault.sh", "echo 'c starting' >&2\nkill -SEGV $$\n"),
            vec!["crashed", "signal 11", "SIGSEGV"],
        ),
        (
            fake("exit-3.sh", "echo 'out of memory' >&2\nexit 3\n"),
            vec!["exited with code 3", "out of memory"],
        ),
        (
            fake("garbage.sh", "echo 'hello, I am a solver'\nexit 10\n"),
            vec!["not in competition form", "unexpected line"],
        ),
        (
            fake(
                "two-status.sh",
                "echo 's UNSATISFIABLE'\necho 's SATISFIABLE'\nexit 20\n",
            ),
            vec!["not in competition form", "a second status line"],
        ),
        (
            fake(
                "bad-literal.sh",
                "echo 's SATISFIABLE'\necho 'v 1 999999 0'\nexit 10\n",
            ),
            vec!["its model is wrong", "variable 999999"],
        ),
        (
            "/nonexistent/solver".to_string(),
            vec!["was not found", "installed"],
        ),
    ];
    for (solver, needles) in &cases {
        dir.orbitcnf()
            .arg("decide")
            .args(q.args())
            .args(["--solver", &format!("external:{solver}")])
            .run()
            .error_with(needles);
    }
    // UNSAT with a proof asked for but none written, and with a bogus LRAT proof.
    let infeasible = Q::cube(-1, 1, 2, 5);
    let no_proof = fake("no-proof.sh", "echo 's UNSATISFIABLE'\nexit 20\n");
    dir.orbitcnf()
        .arg("decide")
        .args(infeasible.args())
        .args([
            "--solver",
            &format!("external:{no_proof}"),
            "--proof-arg",
            "{}",
        ])
        .run()
        .error_with(&["left no proof file"]);
    let bogus = fake(
        "bogus-proof.sh",
        "echo '99999 0 1 2 0' > \"$2\"\necho 's UNSATISFIABLE'\nexit 20\n",
    );
    dir.orbitcnf()
        .arg("decide")
        .args(infeasible.args())
        .args([
            "--solver",
            &format!("external:{bogus}"),
            "--proof-arg",
            "{}",
        ])
        .args(["--proof-format", "lrat"])
        .run()
        .error_with(&["rejected by orbitcnf's checker"]);
    // An external solver's time limit kills a solver that never answers.
    let sleeper = fake("sleeper.sh", "exec sleep 30\n");
    let t0 = Instant::now();
    let run = dir
        .orbitcnf()
        .arg("decide")
        .args(q.args())
        .args([
            "--solver",
            &format!("external:{sleeper}"),
            "--time-limit",
            "0.5",
        ])
        .run();
    run.code(UNKNOWN).stdout_has("time limit");
    assert!(t0.elapsed() < Duration::from_secs(10));
    // In run-cube, a lying solver's failure is recorded, and merge lists it.
    dir.orbitcnf()
        .arg("split")
        .args(q.args())
        .args(["--cubes", "2", "--out", "sp"])
        .run()
        .code(0);
    dir.orbitcnf()
        .args([
            "run-cube",
            "sp",
            "0",
            "--solver",
            &format!("external:{}", cases[0].0),
        ])
        .run()
        .code(1)
        .stderr_has("orbitcnf: cube 0: error: ")
        .stderr_has("its model is wrong")
        .stderr_has("orbitcnf: error: cube 0 ended in an error, recorded in its result");
    let r: Value = serde_json::from_str(&dir.read("sp/results/cube-0000.json")).unwrap();
    assert_eq!(r["status"], "error");
    // Cube 0 failed and the others were never run: unknown, with cube 0 listed as an error.
    let m = dir.orbitcnf().args(["merge", "sp", "--json"]).run();
    m.code(UNKNOWN);
    let v = m.json();
    assert!(
        v["pending"]
            .as_array()
            .unwrap()
            .iter()
            .any(|p| p["index"] == 0 && p["state"] == "error"),
        "{v}"
    );
    // Bad indices and folders are errors.
    dir.orbitcnf()
        .args(["run-cube", "sp", "99"])
        .run()
        .error_with(&["out of range"]);
    dir.orbitcnf().args(["merge", "nowhere"]).run().code(ERROR);
}

#[test]
fn merge_rejects_a_tampered_split_and_a_tampered_proof() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 2, 5).without_clique_families();
    let n = cube_count(&split(&dir, &q, 3, "sp"));
    for i in 0..n {
        dir.orbitcnf()
            .args(["run-cube", "sp", &i.to_string(), "-q"])
            .run()
            .code(0);
    }
    dir.orbitcnf().args(["merge", "sp"]).run().code(INFEASIBLE);
    // A proof file changed after the fact: that cube is listed, the verdict is unknown.
    let p = dir.path("sp/results/cube-0000.lrat");
    let mut bytes = std::fs::read(&p).unwrap();
    bytes.extend_from_slice(b"c tampered\n");
    std::fs::write(&p, bytes).unwrap();
    let m = dir.orbitcnf().args(["merge", "sp", "--json"]).run();
    m.code(UNKNOWN);
    assert_eq!(m.json()["pending"][0]["state"], "rejected");
    // A cube file changed: merge refuses the whole split.
    let c = dir.path("sp/cubes/cube-0001.cnf");
    let text = std::fs::read_to_string(&c).unwrap();
    std::fs::write(&c, text.replacen("p cnf", "c x\np cnf", 1)).unwrap();
    dir.orbitcnf()
        .args(["merge", "sp"])
        .run()
        .error_with(&["cube-0001.cnf", "SHA-256"]);
}

/// `merge --store`: a merged split's verdict goes into a results store,
/// where `spectrum` reuses it (and reads its multiples off it by §9 of
/// docs/math.md); the quick check notices a changed manifest, the full
/// re-check merges the folder again and notices a changed cube proof, and
/// both then set the answer aside and decide the period afresh. An unknown
/// merge records nothing; a feasible one records its checked orbit. p = 5
/// on {0,1,2,3}^2 is above the bound 4 of Lemmens and Scheutzow (2005) for
/// n = 2, so infeasible is the expected verdict.
#[test]
fn merge_records_its_verdict_in_a_store_that_spectrum_reuses() {
    let dir = TestDir::new();
    let q = Q::cube(0, 3, 2, 5);
    let n = cube_count(&split(&dir, &q, 3, "sp"));
    assert!(n >= 2, "{n} cubes");
    dir.orbitcnf()
        .args(["run-cube", "sp", &format!("0..{}", n - 1), "-q"])
        .run()
        .code(0);
    dir.orbitcnf()
        .args(["merge", "sp", "--store", "st"])
        .run()
        .code(INFEASIBLE)
        .stdout_has("stored       st/answers/");
    // Recording again keeps the stored answer.
    let again = dir
        .orbitcnf()
        .args(["merge", "sp", "--store", "st", "--json"])
        .run();
    again.code(INFEASIBLE);
    assert_eq!(again.json()["store"]["action"], "kept");
    let sweep = |extra: &[&str]| {
        let run = dir
            .orbitcnf()
            .args([
                "spectrum",
                "--dim",
                "2",
                "--grid",
                "0..3",
                "--periods",
                "5,10",
            ])
            .args(["--store", "st", "--json", "-q"])
            .args(extra)
            .run();
        run.code(0);
        run
    };
    let v = sweep(&[]).json();
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(rows[0]["how"], "cubes");
    assert_eq!(rows[0]["reused"], true);
    assert_eq!(rows[0]["answer"]["backing"], "checked-cubes");
    assert_eq!(rows[0]["answer"]["cubes"]["cubes"], n as u64);
    let cert = rows[0]["certificate"].as_str().unwrap();
    assert!(cert.contains("not re-checked in this run"), "{cert}");
    assert_eq!(rows[1]["how"], "divisor");
    assert_eq!(rows[1]["answer"]["divisor"]["period"], 5);
    assert_eq!(v["summary"]["by_cubes"], 1);
    // --recheck merges the folder again.
    let v = sweep(&["--recheck"]).json();
    let cert = v["rows"][0]["certificate"].as_str().unwrap().to_string();
    assert!(cert.contains("re-checked in this run"), "{cert}");
    // A changed cube proof: the full re-check refuses the folder, the answer
    // (and the one read off it) is set aside, and p = 5 is solved afresh.
    let p = dir.path("sp/results/cube-0000.lrat");
    let mut bytes = std::fs::read(&p).unwrap();
    bytes.extend_from_slice(b"c tampered\n");
    std::fs::write(&p, bytes).unwrap();
    let run = sweep(&["--recheck"]);
    run.stderr_has("set aside");
    let v = run.json();
    assert_eq!(v["rows"][0]["how"], "solver");
    assert_eq!(v["rows"][0]["verdict"], "infeasible");
    crate::util::assert_split_folder_set_aside(&v);
    // A changed manifest is noticed by the quick check alone.
    let m = dir.path("sp/manifest.json");
    dir.orbitcnf()
        .args(["merge", "sp", "--store", "st2"])
        .run()
        .code(UNKNOWN)
        .stdout_has("stored       nothing: the merge is unknown");
    dir.orbitcnf()
        .args(["run-cube", "sp", "0", "--force", "-q"])
        .run()
        .code(0);
    dir.orbitcnf()
        .args(["merge", "sp", "--store", "st2"])
        .run()
        .code(INFEASIBLE);
    let mut text = std::fs::read(&m).unwrap();
    text.push(b'\n');
    std::fs::write(&m, text).unwrap();
    dir.orbitcnf()
        .args(["spectrum", "--dim", "2", "--grid", "0..3", "--periods", "5"])
        .args(["--store", "st2", "-q"])
        .run()
        .code(0)
        .stderr_has("is not the one recorded (SHA-256 differs)");
    // A feasible merge records its orbit, checked.
    let yes = Q::cube(-1, 1, 2, 4);
    let n = cube_count(&split(&dir, &yes, 3, "yes"));
    dir.orbitcnf()
        .args(["run-cube", "yes", &format!("0..{}", n - 1), "-q"])
        .run()
        .code(0);
    let run = dir
        .orbitcnf()
        .args(["merge", "yes", "--store", "st3", "--json"])
        .run();
    run.code(FEASIBLE);
    let file = run.json()["store"]["file"].as_str().unwrap().to_string();
    let a: Value = serde_json::from_str(&dir.read(&file)).unwrap();
    assert_eq!(
        (a["how"].as_str(), a["backing"].as_str()),
        (Some("cubes"), Some("checked-orbit"))
    );
    let orbit = orbit_of(&a).expect("an orbit");
    assert_isometric_cycle(&[(-1, 1), (-1, 1)], &orbit, 4, "merge --store");
    // --pending only lists cubes; it records nothing.
    dir.orbitcnf()
        .args(["merge", "yes", "--pending", "--store", "st3"])
        .run()
        .error_with(&["--pending"]);
    // A real-space split's certificate is its folder: no store for it.
    dir.orbitcnf()
        .args([
            "split", "--real", "--dim", "2", "-p", "6", "--cubes", "4", "--out", "r",
        ])
        .run()
        .code(0);
    dir.orbitcnf()
        .args(["merge", "r", "--store", "st4"])
        .run()
        .error_with(&["--store applies to grid splits"]);
}

/// `run-cube --solver external:'cadical -q' --handoff-after SECS`: the
/// bundled solver tries each cube first; a cube it leaves unknown goes to
/// CaDiCaL, whose DRAT proof `rate` converts and orbitcnf checks. With a
/// long hand-off time nothing is handed off; with a microsecond every cube
/// is; either way `merge` re-checks every proof. Without an external solver
/// the option is refused.
#[test]
fn cubes_the_bundled_solver_leaves_open_go_to_cadical() {
    if !have_tool("cadical") || !have_tool("rate") {
        return;
    }
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 9).without_clique_families();
    let n = cube_count(&split(&dir, &q, 4, "sp"));
    let run = |range: &str, after: &str| {
        dir.orbitcnf()
            .args(["run-cube", "sp", range, "--solver", "external:cadical -q"])
            .args(["--proof-arg", "{}", "--handoff-after", after])
            .run()
    };
    let first = n / 2;
    let own = run(&format!("0..{}", first - 1), "600");
    own.code(0);
    assert_eq!(
        own.stdout.matches("with varisat").count(),
        first,
        "{}",
        own.stdout
    );
    assert!(!own.stdout.contains("handed off"), "{}", own.stdout);
    let handed = run(&format!("{first}..{}", n - 1), "0.000001");
    handed.code(0);
    assert_eq!(
        handed
            .stdout
            .matches("with external `cadical -q` (handed off after")
            .count(),
        n - first,
        "{}",
        handed.stdout
    );
    assert!(
        handed
            .stdout
            .lines()
            .all(|l| l.contains("LRAT proof checked")),
        "{}",
        handed.stdout
    );
    // The result files say how long the bundled solver had each cube: the
    // handed-off ones a little, the others not at all.
    for i in 0..n {
        let text = std::fs::read_to_string(orbitcnf::split::run::result_path(&dir.path("sp"), i))
            .expect("a result file");
        let r: serde_json::Value = serde_json::from_str(&text).unwrap();
        assert_eq!(
            r["handed_off_after"].is_number(),
            i >= first,
            "cube {i}: {r}"
        );
    }
    dir.orbitcnf()
        .args(["merge", "sp"])
        .run()
        .code(INFEASIBLE)
        .stdout_has(&format!(
            "{n} refuted with a re-checked LRAT proof, 0 on the solver's word only"
        ));
    dir.orbitcnf()
        .args(["run-cube", "sp", "0", "--handoff-after", "5"])
        .run()
        .error_with(&["--handoff-after", "external solver"]);
}

/// A cube whose hand-off fails (here a solver that runs out of memory)
/// gets a result with status `error` and the reason, and the range goes on
/// with its other cubes, with one solver for the range and with a fresh one
/// per cube; the run then ends with one error naming the failed cubes, and
/// `merge --pending` lists them for a rerun.
#[test]
fn a_failed_hand_off_is_recorded_and_the_range_goes_on() {
    let dir = TestDir::new();
    let q = Q::cube(-1, 1, 3, 9).without_clique_families();
    let n = cube_count(&split(&dir, &q, 4, "sp"));
    assert!(n >= 3, "{n} cubes");
    let oom = script(&dir, "oom.sh", "echo 'out of memory' >&2\nexit 3\n");
    for extra in [&[][..], &["--fresh-solver"][..]] {
        let run = dir
            .orbitcnf()
            .args(["run-cube", "sp", &format!("0..{}", n - 1), "--force"])
            .args(["--solver", &format!("external:{oom}")])
            .args(["--handoff-after", "0.000001"])
            .args(extra)
            .run();
        run.code(ERROR);
        let cube_lines: Vec<&str> = run
            .stderr
            .lines()
            .filter(|l| l.contains("(recorded in its result; the range goes on)"))
            .collect();
        assert_eq!(cube_lines.len(), n, "{extra:?}: {}", run.stderr);
        assert!(
            cube_lines.iter().all(|l| l.contains("exited with code 3")),
            "{}",
            run.stderr
        );
        run.stderr_has(&format!(
            "orbitcnf: error: {n} cubes ended in an error, recorded in their results (above): 0..{}",
            n - 1
        ));
        for i in 0..n {
            let text =
                std::fs::read_to_string(orbitcnf::split::run::result_path(&dir.path("sp"), i))
                    .expect("a result file");
            let r: serde_json::Value = serde_json::from_str(&text).unwrap();
            assert_eq!(r["status"], "error", "cube {i}: {r}");
        }
        assert_eq!(pending(&dir, "sp").len(), n, "{extra:?}");
    }
}

/// `decide --solver external:'cadical -q' --proof-arg '{}' --handoff-after
/// SECS`: the cubes the bundled solver leaves open go to CaDiCaL. With a
/// microsecond every cube is handed off; an infeasible answer is then one
/// assembled LRAT proof of the whole CNF that `verify-proof` accepts again,
/// and a feasible one an orbit checked by the test's own verifier. The same
/// verdicts as a monolithic `decide`.
#[test]
fn decide_hands_the_cubes_it_leaves_open_to_cadical() {
    if !have_tool("cadical") || !have_tool("rate") {
        return;
    }
    let dir = TestDir::new();
    let handoff = |q: &Q, extra: &[&str]| {
        dir.orbitcnf()
            .arg("decide")
            .args(q.args())
            .args(["--solver", "external:cadical -q", "--proof-arg", "{}"])
            .args(["--handoff-after", "0.000001", "--json"])
            .args(extra)
            .run()
    };
    let no = Q::cube(-1, 1, 3, 9).without_clique_families();
    assert_eq!(monolithic(&dir, &no), "infeasible");
    let run = handoff(&no, &["--jobs", "2", "--cubes", "4", "--proof", "p.lrat"]);
    let v = check_report(&dir, &no, &run);
    assert_eq!(v["verdict"], "infeasible");
    let solver = v["stats"]["solver"].as_str().unwrap();
    assert!(
        solver.contains("handed off to external `cadical -q`"),
        "{solver}"
    );
    assert!(!solver.contains(" 0 handed off"), "{solver}");
    dir.orbitcnf()
        .arg("encode")
        .args(no.args())
        .args(["-o", "f.cnf"])
        .run()
        .code(0);
    dir.orbitcnf()
        .args(["verify-proof", "f.cnf", "p.lrat"])
        .run()
        .code(0);
    // After a probe that gives no answer (one conflict), on its own.
    let run = handoff(&no, &["--jobs", "2", "--probe-conflicts", "1"]);
    let v = check_report(&dir, &no, &run);
    assert_eq!(v["verdict"], "infeasible");
    assert_eq!(v["strategy"]["cube_rule"], "full-profile");
    let yes = Q::cube(-1, 1, 3, 8).without_clique_families();
    let run = handoff(&yes, &["--jobs", "2", "--cubes", "4"]);
    let v = check_report(&dir, &yes, &run);
    assert_eq!(v["verdict"], "feasible");
}

/// {−1,0,1}^5 with p = 33, the first period above 2^5, split into 64 cubes,
/// each refuted by CaDiCaL with a DRAT proof that `rate` and orbitcnf's
/// checker accept, and merged with the coverage proof. No published answer
/// is known to us; this replays the computation the README reports (about a
/// minute on 2 cores), so run on purpose:
/// `cargo test --release -- --ignored n5_period_33`.
#[test]
#[ignore = "about a minute of cubes with CaDiCaL and rate on 2 cores; run on purpose"]
fn n5_period_33_is_refuted_by_certified_cubes() {
    require_tools(&["cadical", "rate"]);
    let dir = TestDir::new();
    dir.orbitcnf()
        .args(["split", "--dim", "5", "--grid=-1..1", "-p", "33"])
        .args(["--cubes", "64", "--out", "t5"])
        .run()
        .code(0);
    for i in 0..64 {
        dir.orbitcnf()
            .args([
                "run-cube",
                "t5",
                &i.to_string(),
                "--solver",
                "external:cadical -q",
            ])
            .args(["--proof-arg", "{}"])
            .run()
            .code(0);
    }
    dir.orbitcnf()
        .args(["merge", "t5"])
        .run()
        .code(INFEASIBLE)
        .stdout_has("64 refuted with a re-checked LRAT proof, 0 on the solver's word only");
}

/// `run-cube DIR A..B` solves a range of cubes in one process, with the
/// results that one process per cube writes: `merge` agrees with `decide`,
/// a second run keeps the results, and bad ranges are errors.
#[test]
fn a_range_of_cubes_in_one_process_merges_to_the_verdict_of_decide() {
    let dir = TestDir::new();
    let q = Q::cube(0, 3, 3, 10).without_clique_families();
    assert_eq!(monolithic(&dir, &q), "infeasible");
    dir.orbitcnf()
        .arg("split")
        .args(q.args())
        .args(["--cubes", "40", "--layout", "compact", "--out", "sp"])
        .run()
        .code(0);
    let n = cube_count(&serde_json::from_str(&dir.read("sp/manifest.json")).unwrap());
    assert!(n >= 40, "{n} cubes");
    let last = (n - 1).to_string();
    // Two ranges that meet, the second as JSON lines.
    let first = dir.orbitcnf().args(["run-cube", "sp", "0..9"]).run();
    first
        .code(0)
        .stdout_has("cube 0: infeasible")
        .stdout_has("cube 9: infeasible");
    let rest = dir
        .orbitcnf()
        .args(["run-cube", "sp", &format!("10..{last}"), "--json"])
        .run();
    rest.code(0);
    let lines: Vec<Value> = rest
        .stdout
        .lines()
        .map(|l| serde_json::from_str(l).expect("one JSON object per line"))
        .collect();
    assert_eq!(lines.len(), n - 10);
    assert!(
        lines.iter().all(|v| v["status"] == "infeasible"),
        "{lines:?}"
    );
    assert!(pending(&dir, "sp").is_empty());
    dir.orbitcnf()
        .args(["merge", "sp"])
        .run()
        .code(INFEASIBLE)
        .stdout_has(&format!("all {n} cubes refuted"));
    // Solved cubes are kept.
    dir.orbitcnf()
        .args(["run-cube", "sp", "0..2"])
        .run()
        .code(0)
        .stdout_has("already solved");
    for (bad, needle) in [
        (format!("0..{n}"), "out of range".to_string()),
        ("5..3".to_string(), "the range is empty".to_string()),
        ("1..x".to_string(), "an inclusive range".to_string()),
    ] {
        dir.orbitcnf()
            .args(["run-cube", "sp", &bad])
            .run()
            .error_with(&[&needle]);
    }
}

/// `run-cube DIR all --jobs 2 --block B` runs every cube on two workers in
/// blocks, the highest first, as a campaign under GNU parallel does: one
/// result per cube, `merge` agrees with `decide`, a second run keeps every
/// result, and a hand-off that fails in every block is recorded per cube
/// and named in one error at the end. Real-space splits refuse `--jobs`.
#[test]
fn all_cubes_on_two_workers_in_blocks_merge_to_the_verdict_of_decide() {
    let dir = TestDir::new();
    let q = Q::cube(0, 3, 3, 10);
    assert_eq!(monolithic(&dir, &q), "infeasible");
    dir.orbitcnf()
        .arg("split")
        .args(q.args())
        .args(["--cubes", "40", "--layout", "compact", "--out", "sp"])
        .run()
        .code(0);
    let n = cube_count(&serde_json::from_str(&dir.read("sp/manifest.json")).unwrap());
    let run = dir
        .orbitcnf()
        .args(["run-cube", "sp", "all", "--jobs", "2", "--block", "7"])
        .args(["--json", "--progress", "lines", "--proof-encoding", "zstd"])
        .run();
    run.code(0);
    let mut seen: Vec<u64> = run
        .stdout
        .lines()
        .map(|l| {
            let v: Value = serde_json::from_str(l).expect("one JSON object per line");
            assert_eq!(v["status"], "infeasible", "{v}");
            v["index"].as_u64().unwrap()
        })
        .collect();
    seen.sort_unstable();
    assert_eq!(seen, (0..n as u64).collect::<Vec<_>>());
    // One progress line per block, the last one with every cube.
    let blocks = n.div_ceil(7);
    let done: Vec<&str> = run
        .stderr
        .lines()
        .filter(|l| l.contains("run-cube: cubes "))
        .collect();
    assert_eq!(done.len(), blocks, "{}", run.stderr);
    run.stderr_has(&format!("{n} of {n} cubes, {blocks} of {blocks} blocks"));
    dir.orbitcnf()
        .args(["merge", "sp"])
        .run()
        .code(INFEASIBLE)
        .stdout_has(&format!("all {n} cubes refuted"));
    let again = dir
        .orbitcnf()
        .args(["run-cube", "sp", "all", "--jobs", "2"])
        .run();
    again.code(0);
    assert_eq!(again.stdout.matches("already solved").count(), n);
    // A hand-off that fails: every cube's error recorded, one error at the end.
    let oom = script(&dir, "oom.sh", "echo 'out of memory' >&2\nexit 3\n");
    let failed = dir
        .orbitcnf()
        .args([
            "run-cube", "sp", "all", "--jobs", "2", "--block", "7", "--force",
        ])
        .args(["--solver", &format!("external:{oom}")])
        .args(["--handoff-after", "0.000001"])
        .run();
    failed.code(ERROR);
    assert_eq!(
        failed
            .stderr
            .matches("(recorded in its result; the range goes on)")
            .count(),
        n,
        "{}",
        failed.stderr
    );
    failed.stderr_has(&format!(
        "orbitcnf: error: {n} cubes ended in an error, recorded in their results (above): 0..{}",
        n - 1
    ));
    dir.orbitcnf()
        .args([
            "split", "--real", "--dim", "2", "-p", "6", "--cubes", "8", "--out", "r",
        ])
        .run()
        .code(0);
    dir.orbitcnf()
        .args(["run-cube", "r", "all", "--jobs", "2"])
        .run()
        .error_with(&["--jobs applies to grid splits"]);
}

/// `run-cube DIR A..B` keeps one solver for the range and assumes one cube
/// after another (`proof::sequence`); `--fresh-solver` gives each cube its
/// own. On a question with feasible and infeasible cubes both give every
/// cube the same status, each refuted cube keeps its own proof, which
/// `merge` re-checks against that cube's CNF, and each feasible cube an
/// orbit that the test's own verifier accepts.
#[test]
fn one_solver_for_a_range_answers_every_cube_as_fresh_solvers_do() {
    let dir = TestDir::new();
    for (q, code) in [
        (Q::cube(-1, 1, 3, 8), FEASIBLE),
        (Q::cube(0, 3, 3, 10), INFEASIBLE),
    ] {
        let mut statuses = Vec::new();
        for (name, extra) in [("one", None), ("fresh", Some("--fresh-solver"))] {
            dir.orbitcnf()
                .arg("split")
                .args(q.args())
                .args(["--cubes", "24", "--layout", "compact", "--out", name])
                .run()
                .code(0);
            let n = cube_count(
                &serde_json::from_str(&dir.read(&format!("{name}/manifest.json"))).unwrap(),
            );
            let mut cmd = dir.orbitcnf();
            cmd.args(["run-cube", name, &format!("0..{}", n - 1), "--json"]);
            if let Some(x) = extra {
                cmd.arg(x);
            }
            let run = cmd.run();
            run.code(0);
            let lines: Vec<Value> = run
                .stdout
                .lines()
                .map(|l| serde_json::from_str(l).expect("one JSON object per line"))
                .collect();
            assert_eq!(lines.len(), n);
            for v in &lines {
                let one = v["solver"].as_str().unwrap().contains("one solver");
                assert_eq!(one, extra.is_none(), "{v}");
                if v["status"] == "feasible" {
                    let orbit: Vec<Vec<i64>> = serde_json::from_value(v["orbit"].clone()).unwrap();
                    assert_isometric_cycle(&q.bounds, &orbit, q.period, name);
                } else {
                    assert_eq!(v["status"], "infeasible", "{v}");
                    assert!(v["proof"]["steps"].as_u64().unwrap() > 0, "{v}");
                }
            }
            statuses.push(
                lines
                    .iter()
                    .map(|v| v["status"].clone())
                    .collect::<Vec<_>>(),
            );
            dir.orbitcnf().args(["merge", name]).run().code(code);
            std::fs::remove_dir_all(dir.path(name)).unwrap();
        }
        assert_eq!(statuses[0], statuses[1], "{q:?}");
        // The feasible question's split has cubes of both kinds.
        for want in ["feasible", "infeasible"] {
            assert!(
                code == INFEASIBLE || statuses[0].iter().any(|s| s == want),
                "{q:?}: no {want} cube"
            );
        }
    }
}

/// A killed orbitcnf takes its external solver with it (Linux): a cluster
/// job killed by its scheduler must not leave a solver running on the node.
#[cfg(target_os = "linux")]
#[test]
fn a_killed_run_leaves_no_external_solver_behind() {
    use std::time::{Duration, Instant};
    let dir = TestDir::new();
    let pid_file = dir.path("solver.pid");
    let solver = script(
        &dir,
        "slow.sh",
        &format!("echo $$ > {}\nexec sleep 120\n", pid_file.display()),
    );
    let q = Q::cube(-1, 1, 2, 4);
    let mut run = std::process::Command::new(crate::util::bin())
        .arg("decide")
        .args(q.args())
        .args([
            "--solver",
            &format!("external:{solver}"),
            "--progress",
            "off",
        ])
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .expect("orbitcnf starts");
    let started = Instant::now();
    let pid = loop {
        if let Ok(s) = std::fs::read_to_string(&pid_file)
            && let Ok(pid) = s.trim().parse::<u32>()
        {
            break pid;
        }
        assert!(
            started.elapsed() < Duration::from_secs(30),
            "the solver never started"
        );
        std::thread::sleep(Duration::from_millis(20));
    };
    run.kill().expect("kill orbitcnf");
    run.wait().expect("reap orbitcnf");
    // The kernel sends SIGKILL when orbitcnf's thread ends; /proc shows the
    // solver gone (or a zombie that init reaps) within moments.
    let gone = || {
        std::fs::read_to_string(format!("/proc/{pid}/stat"))
            .map(|s| s.contains(") Z "))
            .unwrap_or(true)
    };
    let killed = Instant::now();
    while !gone() {
        assert!(
            killed.elapsed() < Duration::from_secs(10),
            "the external solver {pid} outlived the killed orbitcnf"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
}
