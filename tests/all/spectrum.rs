//! `orbitcnf spectrum`: whole spectra with checked certificates, the results
//! store surviving SIGKILL, retries of unknown answers, and contradictions.
//!
//! Expected answers: on {−1,0,1}^3 and {0,1,2,3}^3 the periods are exactly
//! 1..8 (every p ≤ 2^n by the unit-cube construction; p ≤ 8 for n = 3 by
//! Lyons and Nussbaum 1992 [recalled]); the default sweep covers 1..12, the
//! Lemmens–Scheutzow bound max_k 2^k·C(3,k) = 12 (Ergodic Theory Dynam.
//! Systems 25 (2005) 861–871). Every feasible answer's orbit is verified here
//! by the crate's checker and by the test suite's own; every stored proof is
//! re-checked by `orbitcnf verify-proof` against a fresh `orbitcnf encode`.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use serde_json::Value;

use orbitcnf::store::Store;

use crate::topical::assert_topical_cycle;
use crate::util::{ERROR, TestDir, assert_isometric_cycle, bin};

/// Every answer file of a store, by name, with its bytes.
fn answer_files(store: &Path) -> BTreeMap<String, String> {
    let dir = store.join("answers");
    let mut out = BTreeMap::new();
    if let Ok(entries) = std::fs::read_dir(&dir) {
        for e in entries.flatten() {
            let name = e.file_name().to_string_lossy().into_owned();
            if name.ends_with(".json") && !name.starts_with('.') {
                let text = std::fs::read_to_string(e.path()).expect("read an answer file");
                out.insert(name, text);
            }
        }
    }
    out
}

fn rows(report: &Value) -> &Vec<Value> {
    report["rows"].as_array().expect("rows")
}

/// The verdict of every row, in order.
fn verdicts(report: &Value) -> Vec<&str> {
    rows(report)
        .iter()
        .map(|r| r["verdict"].as_str().unwrap())
        .collect()
}

/// `(period, verdict, how, backing, orbit)` per row: what must not depend on
/// when or in how many runs the spectrum was computed.
fn essentials(report: &Value) -> Vec<(u64, String, String, String, Value)> {
    rows(report)
        .iter()
        .map(|r| {
            (
                r["period"].as_u64().unwrap(),
                r["verdict"].as_str().unwrap().to_string(),
                r["how"].as_str().unwrap().to_string(),
                r["answer"]["backing"].as_str().unwrap().to_string(),
                r["answer"]["orbit"].clone(),
            )
        })
        .collect()
}

/// Asserts that the infeasible spectrum row `row` (stored in `dir/results`)
/// has a kept proof that `orbitcnf verify-proof` accepts against a fresh
/// `orbitcnf encode QUESTION --period P`, and that [`Store::recheck`]
/// accepts as well.
fn assert_stored_proof_accepted(dir: &TestDir, store: &Store, row: &Value, question: &[&str]) {
    let p = row["period"].as_u64().unwrap().to_string();
    let answer = &row["answer"];
    assert_eq!(answer["backing"], "checked-proof", "{question:?} p = {p}");
    let rel = answer["proof"]["file"].as_str().expect("a kept proof");
    let proof = dir.path("results").join(rel);
    assert!(proof.starts_with(dir.path("results/proofs")));
    let cnf = dir.path(&format!("p{p}.cnf"));
    dir.orbitcnf()
        .arg("encode")
        .args(question)
        .args(["--period", &p, "--output"])
        .arg(&cnf)
        .run()
        .code(0);
    dir.orbitcnf()
        .arg("verify-proof")
        .arg(&cnf)
        .arg(&proof)
        .run()
        .code(0)
        .stdout_has("accepted");
    let key = answer["key"].as_str().unwrap();
    let stored = store.get(key).expect("the answer is in the store");
    let recheck = store.recheck(stored).expect("recheck");
    assert!(
        recheck.proof.is_some(),
        "{question:?} p = {p}: proof re-checked"
    );
}

/// Checks a full default spectrum of an n = 3 box: 1..8 feasible by
/// construction with verified orbits, 9..12 infeasible by the solver with
/// stored proofs that `orbitcnf verify-proof` accepts against a fresh
/// encoding, and that the library's [`Store::recheck`] accepts too.
fn check_three_dimensional_spectrum(grid: &str, bounds: &[(i64, i64)]) {
    let dir = TestDir::new();
    let run = dir
        .orbitcnf()
        .args(["spectrum", "--dim", "3", &format!("--grid={grid}")])
        .args(["--store", "results", "--json"])
        .run();
    run.code(0);
    if !run.stderr.is_empty() {
        run.fail(
            "stderr",
            "empty (no progress line without a terminal)",
            "output",
        );
    }
    let report = run.json();
    assert_eq!(report["summary"]["all_decided"], true);
    let rows = rows(&report);
    let periods: Vec<u64> = rows.iter().map(|r| r["period"].as_u64().unwrap()).collect();
    assert_eq!(periods, (1..=12).collect::<Vec<_>>(), "{grid}");
    let store = Store::open(&dir.path("results")).expect("open the store");
    for r in rows {
        let p = r["period"].as_u64().unwrap() as usize;
        let answer = &r["answer"];
        if p <= 8 {
            assert_eq!(r["verdict"], "feasible", "{grid} p = {p}");
            assert_eq!(r["how"], "construction", "{grid} p = {p}");
            assert_eq!(answer["backing"], "checked-orbit");
            let orbit: Vec<Vec<i64>> = serde_json::from_value(answer["orbit"].clone()).unwrap();
            orbitcnf::verify::check_orbit(bounds, &orbit).expect("the crate's check");
            assert_isometric_cycle(bounds, &orbit, p, &format!("{grid} p = {p}"));
        } else {
            assert_eq!(r["verdict"], "infeasible", "{grid} p = {p}");
            assert_eq!(r["how"], "solver", "{grid} p = {p}");
            let question = ["--dim", "3", &format!("--grid={grid}")];
            assert_stored_proof_accepted(&dir, &store, r, &question);
        }
    }
    // A second run reuses everything and prints the same table rows.
    let again = dir
        .orbitcnf()
        .args(["spectrum", "--dim", "3", &format!("--grid={grid}")])
        .args(["--store", "results", "--json", "--recheck"])
        .run();
    again.code(0);
    let again = again.json();
    assert_eq!(again["summary"]["reused"], 12);
    assert_eq!(essentials(&again), essentials(&report));
}

#[test]
fn spectrum_of_the_ternary_cube_is_1_to_8_with_checked_certificates() {
    check_three_dimensional_spectrum("-1..1", &[(-1, 1); 3]);
}

#[test]
fn spectrum_of_the_quaternary_cube_is_1_to_8_with_checked_certificates() {
    check_three_dimensional_spectrum("0..3", &[(0, 3); 3]);
}

#[test]
fn spectrum_table_csv_and_markdown_agree() {
    let dir = TestDir::new();
    let base = ["spectrum", "--dim", "2", "--grid=-1..1", "--store", "r"];
    let table = dir.orbitcnf().args(base).run();
    table.code(0).stdout_has("every period decided");
    for p in 1..=4 {
        table.stdout_has(&format!("    {p}  feasible    construction"));
    }
    let csv = dir.orbitcnf().args(base).arg("--csv").run();
    csv.code(0);
    let lines: Vec<&str> = csv.stdout.lines().collect();
    assert_eq!(lines.len(), 5, "{}", csv.stdout);
    assert!(lines[0].starts_with("period,verdict,how,source"));
    assert!(lines[1].starts_with("1,feasible,construction,stored,"));
    let md = dir.orbitcnf().args(base).args(["--markdown", "s.md"]).run();
    md.code(0);
    let page = dir.read("s.md");
    for needle in [
        "| 4 | feasible | construction (stored) |",
        "Lemmens and M. Scheutzow",
        "Ergodic Theory Dynam. Systems 25 (2005) 861–871",
        "Lyons and R. D. Nussbaum",
        "[recalled]",
        "A prime period is at most 2^n",
    ] {
        assert!(page.contains(needle), "missing {needle:?} in\n{page}");
    }
    // Bad input is a one-line error, not a panic.
    dir.orbitcnf()
        .args([
            "spectrum",
            "--dim",
            "2",
            "--grid=-1..1",
            "--periods",
            "3..10",
        ])
        .arg("--no-store")
        .run()
        .error_with(&["period 10 exceeds the 9 points"]);
    dir.orbitcnf()
        .args(["spectrum", "--grid=0..1", "--periods", "x", "--no-store"])
        .run()
        .error_with(&["--periods", "the period list \"x\"", "not a period"]);
    dir.orbitcnf()
        .args(["spectrum", "--grid=0..1", "--jobs", "0", "--no-store"])
        .run()
        .error_with(&["a sweep needs at least one worker thread"]);
}

#[test]
fn spectrum_survives_sigkill_without_losing_or_recomputing_answers() {
    let dir = TestDir::new();
    let store = dir.path("killed");
    let args = |store: &Path| -> Vec<String> {
        vec![
            "spectrum".into(),
            "--dim".into(),
            "3".into(),
            "--grid=0..3".into(),
            "--periods".into(),
            "6..10".into(),
            "--jobs".into(),
            "1".into(),
            "--json".into(),
            "--store".into(),
            store.display().to_string(),
        ]
    };
    let mut child = Command::new(bin())
        .args(args(&store))
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start the sweep");
    // Periods 6..8 are constructed at once; wait for the first solver answer (p = 9) too.
    let t0 = Instant::now();
    while answer_files(&store).len() < 4 {
        assert!(
            t0.elapsed() < Duration::from_secs(50),
            "no solver answer within 50 s"
        );
        std::thread::sleep(Duration::from_millis(10));
    }
    assert!(
        child.try_wait().expect("poll the sweep").is_none(),
        "the sweep finished before it could be killed; the test needs it running"
    );
    child.kill().expect("SIGKILL the sweep");
    let status = child.wait().expect("reap the sweep");
    assert!(!status.success(), "killed, not finished");
    let before = answer_files(&store);
    assert_eq!(
        before.len(),
        4,
        "p = 6..9 stored, p = 10 lost with the kill"
    );
    let killed_run: Vec<Value> = before
        .values()
        .map(|t| serde_json::from_str::<Value>(t).unwrap()["run_id"].clone())
        .collect();
    assert!(killed_run.windows(2).all(|w| w[0] == w[1]), "one run");

    // Rerun: completes the sweep, reuses every completed answer untouched.
    let rerun = dir.orbitcnf().args(args(&store)).run();
    rerun.code(0);
    let rerun = rerun.json();
    let after = answer_files(&store);
    assert_eq!(after.len(), 5);
    for (name, text) in &before {
        assert_eq!(
            after.get(name),
            Some(text),
            "{name} was rewritten by the rerun"
        );
    }
    let reused: Vec<u64> = rows(&rerun)
        .iter()
        .filter(|r| r["reused"] == true)
        .map(|r| r["period"].as_u64().unwrap())
        .collect();
    assert_eq!(reused.len(), before.len(), "reused periods {reused:?}");
    for r in rows(&rerun) {
        let from_killed = r["answer"]["run_id"] == killed_run[0];
        assert_eq!(r["reused"] == true, from_killed, "row {r}");
    }

    // The same report as an uninterrupted run.
    let fresh = dir.orbitcnf().args(args(&dir.path("fresh"))).run();
    fresh.code(0);
    assert_eq!(essentials(&rerun), essentials(&fresh.json()));
}

#[test]
fn spectrum_unknowns_are_kept_and_retried_only_with_larger_limits() {
    let dir = TestDir::new();
    let base = [
        "spectrum",
        "--dim",
        "2",
        "--grid=-1..1",
        "--periods",
        "3..6",
    ];
    let small = dir
        .orbitcnf()
        .args(base)
        .args(["--max-clauses", "10", "--json"])
        .run();
    small.code(2);
    let small = small.json();
    assert_eq!(
        verdicts(&small),
        ["feasible", "feasible", "unknown", "unknown"]
    );
    assert!(
        rows(&small)[2]["certificate"]
            .as_str()
            .unwrap()
            .contains("too large")
    );
    // Same limits: the unknowns are reused, not retried.
    let same = dir
        .orbitcnf()
        .args(base)
        .args(["--max-clauses", "10", "--json"])
        .run();
    same.code(2);
    assert_eq!(same.json()["summary"]["reused"], 4);
    // Larger limits: retried and decided.
    let larger = dir.orbitcnf().args(base).arg("--json").run();
    larger.code(0);
    let larger = larger.json();
    assert_eq!(larger["summary"]["reused"], 2);
    assert_eq!(rows(&larger)[2]["verdict"], "infeasible");
    assert_eq!(rows(&larger)[3]["verdict"], "infeasible");
}

/// Writes a copy of the stored answer `a` under other options with verdict
/// `verdict` and run id `run`, with the key and file name it needs.
fn forge(store: &Path, a: &Value, verdict: &str, run: &str) -> PathBuf {
    let mut f: orbitcnf::store::Answer = serde_json::from_value(a.clone()).unwrap();
    f.options.count = !f.options.count;
    f.verdict = match verdict {
        "feasible" => orbitcnf::Verdict::Feasible,
        _ => orbitcnf::Verdict::Infeasible,
    };
    f.run_id = run.into();
    f.key = orbitcnf::store::key(&f.question, &f.options);
    let path = store.join("answers").join(format!("{}.json", f.key));
    std::fs::write(&path, serde_json::to_string_pretty(&f).unwrap()).unwrap();
    path
}

#[test]
fn spectrum_reports_a_stored_contradiction_naming_both_runs() {
    let dir = TestDir::new();
    let base = ["spectrum", "--dim", "2", "--grid=-1..1", "--store", "r"];
    let first = dir
        .orbitcnf()
        .args(base)
        .args(["--periods", "3,5", "--json"])
        .run();
    first.code(0);
    let first = first.json();
    let infeasible5 = &rows(&first)[1]["answer"];
    assert_eq!(infeasible5["verdict"], "infeasible");
    let genuine_run = infeasible5["run_id"].as_str().unwrap().to_string();

    // Another stored answer to the same question (other options) says feasible.
    let forged = forge(&dir.path("r"), infeasible5, "feasible", "forged-run-1");
    let run = dir.orbitcnf().args(base).args(["--periods", "5"]).run();
    run.code(ERROR)
        .stderr_has("CONTRADICTION")
        .stderr_has("p = 5");
    run.stderr_has(&genuine_run).stderr_has("forged-run-1");
    run.stderr_has("infeasible by solver")
        .stderr_has("feasible by solver");
    std::fs::remove_file(forged).unwrap();

    // A stored answer that contradicts the construction (the genuine one removed).
    let feasible3 = &rows(&first)[0]["answer"];
    let genuine = format!("r/answers/{}.json", feasible3["key"].as_str().unwrap());
    std::fs::remove_file(dir.path(&genuine)).unwrap();
    forge(&dir.path("r"), feasible3, "infeasible", "forged-run-2");
    let run = dir.orbitcnf().args(base).args(["--periods", "3"]).run();
    run.code(ERROR)
        .stderr_has("CONTRADICTION")
        .stderr_has("forged-run-2");
    run.stderr_has("exists by construction");
}

// ---- The topical class ----
//
// Expected answers: every period of a topical map on R^n is at most
// C(n, ⌊n/2⌋) (B. Lemmens and M. Scheutzow, Ergodic Theory Dynam. Systems 25
// (2005) 861–871, proving the Gunawardena–Sparrow conjecture [paper, per
// docs/math.md §7]), and every period up to it occurs on the middle layer of a
// unit cube [derived]. So on {0,1}^4 the topical periods are exactly 1..6 and on
// {0,1,2}^3 exactly 1..3; the default sweep goes one period further. The
// orbits are checked here by `topical::assert_topical_cycle` (no crate code)
// and by the crate's topical check; the proofs by `verify-proof` against a
// fresh `encode --class topical` and by the store's recheck.

/// Runs the default topical spectrum of `{lo..hi}^n`, expects exactly
/// `1..=bound` feasible by construction and `bound + 1` infeasible by the
/// solver, checks every certificate, and a second run reuses all of it.
/// Returns the report.
fn check_topical_spectrum(n: usize, lo: i64, hi: i64, bound: u64) -> Value {
    let dir = TestDir::new();
    let grid = format!("--grid={lo}..{hi}");
    let dim = n.to_string();
    let question = ["--dim", &dim, &grid, "--class", "topical"];
    let run = dir
        .orbitcnf()
        .arg("spectrum")
        .args(question)
        .args(["--store", "results", "--json"])
        .run();
    run.code(0);
    let report = run.json();
    assert_eq!(report["class"], "topical", "{}", run.shown);
    let statement = report["question"].as_str().unwrap();
    assert!(
        statement.contains("periodic orbit of a topical map"),
        "{statement}"
    );
    assert_eq!(report["lemmens_scheutzow_bound"], bound);
    // The sweep's encoding, as the table names it too.
    assert_eq!(report["options"]["formulation"], "topical-cycle/1");
    let periods: Vec<u64> = rows(&report)
        .iter()
        .map(|r| r["period"].as_u64().unwrap())
        .collect();
    assert_eq!(periods, (1..=bound + 1).collect::<Vec<_>>());
    let bounds = vec![(lo, hi); n];
    let points = ((hi - lo + 1) as u64).pow(n as u32);
    let store = Store::open(&dir.path("results")).expect("open the store");
    for r in rows(&report) {
        let p = r["period"].as_u64().unwrap() as usize;
        let answer = &r["answer"];
        assert_eq!(answer["question"]["class"], "topical");
        if p as u64 <= bound {
            assert_eq!(r["verdict"], "feasible", "p = {p}");
            assert_eq!(r["how"], "construction", "p = {p}");
            assert_eq!(answer["backing"], "checked-orbit");
            assert_eq!(answer["map_checked_points"], points, "p = {p}");
            let orbit: Vec<Vec<i64>> = serde_json::from_value(answer["orbit"].clone()).unwrap();
            orbitcnf::verify::check_topical_orbit(&bounds, &orbit).expect("the crate's check");
            assert_topical_cycle(&bounds, &orbit, p, &format!("{grid} p = {p}"));
        } else {
            assert_eq!(r["verdict"], "infeasible", "p = {p}");
            assert_eq!(r["how"], "solver", "p = {p}");
            assert_eq!(answer["options"]["formulation"], "topical-cycle/1");
            assert_stored_proof_accepted(&dir, &store, r, &question);
        }
    }
    let again = dir
        .orbitcnf()
        .arg("spectrum")
        .args(question)
        .args(["--store", "results", "--json", "--recheck"])
        .run();
    again.code(0);
    let again = again.json();
    assert_eq!(again["summary"]["reused"], bound + 1);
    assert_eq!(essentials(&again), essentials(&report));
    report
}

#[test]
fn topical_spectrum_of_the_binary_4_cube_is_1_to_6_with_checked_certificates() {
    check_topical_spectrum(4, 0, 1, 6);
}

#[test]
fn topical_spectrum_of_the_ternary_3_cube_is_1_to_3_with_checked_certificates() {
    check_topical_spectrum(3, 0, 2, 3);
}

#[test]
fn topical_spectrum_reports_name_the_topical_bound_and_no_nonexpansive_theorem() {
    let dir = TestDir::new();
    let base = [
        "spectrum",
        "--class",
        "topical",
        "--dim",
        "4",
        "--grid=0..1",
        "--store",
        "r",
    ];
    let table = dir.orbitcnf().args(base).run();
    table.code(0).stdout_has("every period decided");
    table
        .stdout_has("question     for each p: p distinct points of {0,1}^4 (n = 4)")
        .stdout_has("topical-cycle/1")
        .stdout_has("p ≤ C(4,2) = 6 exist")
        .stdout_has("    7  infeasible  solver");
    for p in 1..=6 {
        table.stdout_has(&format!("    {p}  feasible    construction"));
    }
    let csv = dir.orbitcnf().args(base).arg("--csv").run();
    csv.code(0);
    let lines: Vec<&str> = csv.stdout.lines().collect();
    assert_eq!(lines.len(), 8, "{}", csv.stdout);
    assert!(lines[1].starts_with("1,feasible,construction,stored,"));
    assert!(lines[6].contains("exists: p ≤ C(4,2) = 6"), "{}", lines[6]);
    assert!(lines[7].starts_with("7,infeasible,solver,stored,"));
    assert!(lines[7].contains("excluded: p > C(4,2) = 6 (Lemmens and Scheutzow 2005"));
    let md = dir.orbitcnf().args(base).args(["--markdown", "t.md"]).run();
    md.code(0);
    let page = dir.read("t.md");
    for needle in [
        "# Periods of topical maps with an orbit in {0,1}^4",
        "forming a periodic orbit of a topical map R^4 → R^4",
        "| 7 | infeasible | solver (stored) |",
        "Ergodic Theory Dynam. Systems 25 (2005) 861–871",
        "Gunawardena",
        "middle layer",
        "[derived]",
    ] {
        assert!(page.contains(needle), "missing {needle:?} in\n{page}");
    }
    for absent in ["Lyons", "prime", "2^n", "max_k", "isometric"] {
        assert!(!page.contains(absent), "{absent:?} in\n{page}");
    }
    // The text and CSV name no nonexpansive theorem either.
    for out in [&table.stdout, &csv.stdout] {
        assert!(!out.contains("prime") && !out.contains("2^"), "{out}");
    }
}

#[test]
fn topical_and_nonexpansive_answers_are_kept_apart_and_a_topical_contradiction_is_loud() {
    // p = 7 on {0,1}^4: a nonexpansive period (7 ≤ 2^4, construction), but
    // not a topical one (7 > C(4,2) = 6, Lemmens and Scheutzow 2005). In one
    // store both answers stand, under different keys, with no contradiction.
    let dir = TestDir::new();
    let base = ["spectrum", "--dim", "4", "--grid=0..1", "--store", "r"];
    let plain = dir
        .orbitcnf()
        .args(base)
        .args(["--periods", "7", "--json"])
        .run();
    plain.code(0);
    let plain = plain.json();
    assert_eq!(rows(&plain)[0]["verdict"], "feasible");
    assert!(rows(&plain)[0]["answer"]["question"].get("class").is_none());
    let topical = ["--class", "topical", "--periods", "7", "--json"];
    let t = dir.orbitcnf().args(base).args(topical).run();
    t.code(0);
    let t = t.json();
    let row = &rows(&t)[0];
    assert_eq!(row["verdict"], "infeasible");
    assert_eq!(row["reused"], false);
    assert_ne!(row["answer"]["key"], rows(&plain)[0]["answer"]["key"]);
    assert_eq!(answer_files(&dir.path("r")).len(), 2);

    // A stored topical answer that contradicts the topical theorem.
    let genuine = format!("r/answers/{}.json", row["answer"]["key"].as_str().unwrap());
    std::fs::remove_file(dir.path(&genuine)).unwrap();
    forge(&dir.path("r"), &row["answer"], "feasible", "forged-topical");
    let run = dir.orbitcnf().args(base).args(topical).run();
    run.code(ERROR)
        .stderr_has("CONTRADICTION")
        .stderr_has("p = 7, topical maps")
        .stderr_has("published theorems exclude the period")
        .stderr_has("C(4,2) = 6")
        .stderr_has("forged-topical");
    // The nonexpansive answer is untouched by it.
    dir.orbitcnf()
        .args(base)
        .args(["--periods", "7"])
        .run()
        .code(0)
        .stdout_has("    7  feasible    construction  stored");
}

// ---- Progress for logs ----

/// Asserts that every line of `run`'s stderr is a progress line for a log
/// (`orbitcnf: progress: YYYY-MM-DDTHH:MM:SSZ …`) and returns their texts.
fn progress_lines(run: &crate::util::Run) -> Vec<String> {
    let mut out = Vec::new();
    for line in run.stderr.lines() {
        let Some(rest) = line.strip_prefix("orbitcnf: progress: ") else {
            run.fail("stderr", "only progress lines", line);
        };
        let (stamp, text) = rest.split_once(' ').unwrap_or((rest, ""));
        let shape_ok = stamp.len() == 20
            && stamp.ends_with('Z')
            && stamp.as_bytes()[10] == b'T'
            && stamp[..4].chars().all(|c| c.is_ascii_digit());
        if !shape_ok {
            run.fail("a UTC timestamp", "YYYY-MM-DDTHH:MM:SSZ", stamp);
        }
        out.push(text.to_string());
    }
    out
}

#[test]
fn spectrum_writes_progress_lines_to_a_log() {
    // stderr is a pipe here, as in a batch job: the default shows nothing
    // (see check_three_dimensional_spectrum), --progress lines a line for the
    // periods settled before solving, one per solved period, and a last one.
    let dir = TestDir::new();
    let run = dir
        .orbitcnf()
        .args([
            "spectrum",
            "--dim",
            "2",
            "--grid=-1..1",
            "--periods",
            "3..6",
        ])
        .args(["--no-store", "-j", "1", "--progress", "lines"])
        .run();
    run.code(0).stdout_has("every period decided");
    let lines = progress_lines(&run);
    let has = |needle: &str| lines.iter().filter(|l| l.contains(needle)).count();
    assert_eq!(
        has("spectrum {-1,0,1}^2: 2 of 4 periods decided before solving"),
        1,
        "{lines:#?}"
    );
    // {-1,0,1}^2: p = 5, 6 exceed max_k 2^k·C(2,k) = 4 (Lemmens and Scheutzow 2005).
    assert_eq!(has("p=5 infeasible (solver"), 1, "{lines:#?}");
    assert_eq!(has("p=6 infeasible (solver"), 1, "{lines:#?}");
    // The line of p = 6 and the last one (status lines every 30 s may add more).
    assert!(has("4/4 periods decided (2 feasible, 2 infeasible, 0 unknown)") >= 2);
    assert!(lines.last().unwrap().contains("finished:"), "{lines:#?}");

    // -q is --progress off; both at once is a usage error.
    let quiet = dir
        .orbitcnf()
        .args(["spectrum", "--dim", "2", "--grid=-1..1", "--no-store", "-q"])
        .run();
    quiet.code(0);
    assert!(quiet.stderr.is_empty(), "{}", quiet.stderr);
    dir.orbitcnf()
        .args([
            "spectrum",
            "--grid=0..1",
            "--no-store",
            "-q",
            "--progress",
            "lines",
        ])
        .run()
        .error_with(&["--quiet", "--progress"]);
}

#[test]
fn decide_jobs_without_a_profile_to_split_makes_one_solve() {
    // {-1,0,1}^3 has no period 9 (n ≤ 3: the periods are 1..8, Lyons and
    // Nussbaum 1992 [recalled]); with the clique families every profile is
    // excluded, so `--jobs` has no cube to run and solves once.
    let dir = TestDir::new();
    let run = dir
        .orbitcnf()
        .args(["decide", "--dim", "3", "--grid=-1..1", "-p", "9"])
        .args([
            "--jobs",
            "2",
            "--cubes",
            "4",
            "--progress",
            "lines",
            "--json",
        ])
        .run();
    run.code(20);
    let lines = progress_lines(&run);
    assert!(
        lines.iter().any(|l| l.contains("one solve, no cubes")),
        "{lines:#?}"
    );
    let v = run.json();
    assert_eq!(v["verdict"], "infeasible", "{v}");
    assert_eq!(v["certified"], true, "{v}");
}

#[test]
fn decide_jobs_writes_a_progress_line_for_every_finished_cube() {
    // {-1,0,1}^3 has no period 9 (n ≤ 3: the periods are 1..8, Lyons and
    // Nussbaum 1992 [recalled]); every one of the 4 cubes is refuted.
    let dir = TestDir::new();
    let run = dir
        .orbitcnf()
        .args(["decide", "--dim", "3", "--grid=-1..1", "-p", "9"])
        .args(["--no-window-cliques", "--no-clique-orbits"])
        .args(["--jobs", "2", "--cubes", "4", "--progress", "lines"])
        .run();
    run.code(20);
    let lines = progress_lines(&run);
    let cubes: Vec<&String> = lines
        .iter()
        .filter(|l| l.starts_with("decide: cube "))
        .collect();
    assert!(cubes.len() >= 4, "{lines:#?}");
    for (i, line) in cubes.iter().enumerate() {
        assert!(line.contains("refuted, proof checked and lifted"), "{line}");
        let done = format!("; {}/{} cubes done", i + 1, cubes.len());
        assert!(line.contains(&done), "{line} lacks {done:?}");
    }
    for i in 0..cubes.len() {
        let cube = format!("decide: cube {i} (");
        assert!(cubes.iter().any(|l| l.starts_with(&cube)), "{lines:#?}");
    }
}

// ---- A store with bad files ----
//
// {-1,0,1}^2 with p = 3 (feasible by the unit-cube construction) and p = 5
// (infeasible: 5 > max_k 2^k·C(2,k) = 4, Lemmens and Scheutzow 2005, and
// refuted here with a checked proof).

const BAD_STORE: [&str; 8] = [
    "spectrum",
    "--dim",
    "2",
    "--grid=-1..1",
    "--periods",
    "3,5",
    "--store",
    "r",
];

/// A store filled by one sweep of [`BAD_STORE`]; its JSON report.
fn filled_store(dir: &TestDir) -> Value {
    let run = dir.orbitcnf().args(BAD_STORE).arg("--json").run();
    run.code(0);
    let v = run.json();
    assert_eq!(rows(&v)[1]["verdict"], "infeasible");
    assert_eq!(rows(&v)[1]["checked"]["when"], "this-run");
    v
}

/// The relative path of the stored answer file of report row `i`.
fn answer_file(report: &Value, i: usize) -> String {
    format!(
        "r/answers/{}.json",
        rows(report)[i]["answer"]["key"].as_str().unwrap()
    )
}

/// Runs the sweep again over a damaged store: it must succeed, warn about
/// every file it set aside, list them in the JSON, and decide every period.
fn sweep_past_bad_files(dir: &TestDir, extra: &[&str], bad: &[&str]) -> Value {
    let run = dir
        .orbitcnf()
        .args(BAD_STORE)
        .args(extra)
        .arg("--json")
        .run();
    run.code(0);
    let v = run.json();
    assert_eq!(verdicts(&v), ["feasible", "infeasible"], "{}", run.stdout);
    let set_aside = v["set_aside"].as_array().expect("set_aside");
    for name in bad {
        run.stderr_has("orbitcnf: warning: a stored file cannot be used and was set aside: ")
            .stderr_has(name);
        let entry = set_aside
            .iter()
            .find(|f| f["file"].as_str().unwrap().ends_with(name))
            .unwrap_or_else(|| run.fail("set_aside", name, "not listed"));
        let moved = dir.root().join(entry["moved_to"].as_str().expect("moved"));
        assert!(moved.starts_with(dir.path("r/quarantine")), "{entry}");
        assert!(moved.exists(), "{entry}");
    }
    assert_eq!(set_aside.len(), bad.len(), "{}", run.stdout);
    v
}

#[test]
fn spectrum_sets_aside_a_corrupt_answer_file_and_decides_its_period_again() {
    let dir = TestDir::new();
    let first = filled_store(&dir);
    let file = answer_file(&first, 1);
    let text = dir.read(&file);
    let torn = &text[..text.len() / 2];
    std::fs::write(dir.path(&file), torn).unwrap();
    let name = file.rsplit('/').next().unwrap();
    let v = sweep_past_bad_files(&dir, &[], &[name]);
    // Decided again, by this run, with a fresh checked proof; the torn file
    // is kept, byte for byte.
    assert_eq!(rows(&v)[1]["reused"], false);
    assert_eq!(rows(&v)[1]["answer"]["backing"], "checked-proof");
    let moved = dir
        .root()
        .join(v["set_aside"][0]["moved_to"].as_str().unwrap());
    assert_eq!(std::fs::read_to_string(moved).unwrap(), torn);
    assert!(dir.path(&file).exists(), "the new answer is stored");
    // The next run finds a clean store.
    let again = dir.orbitcnf().args(BAD_STORE).arg("--json").run();
    again.code(0);
    assert!(again.stderr.is_empty(), "{}", again.stderr);
    assert_eq!(again.json()["summary"]["reused"], 2);
}

#[test]
fn spectrum_sets_aside_stray_files_in_the_answers_folder() {
    let dir = TestDir::new();
    filled_store(&dir);
    dir.write("r/answers/notes.json", "{\"todo\": \"run p = 7\"}\n");
    dir.write("r/answers/empty.json", "");
    // Not a .json file: not an answer candidate, left alone.
    dir.write("r/answers/README", "my notes\n");
    let v = sweep_past_bad_files(&dir, &[], &["notes.json", "empty.json"]);
    assert_eq!(v["summary"]["reused"], 2);
    assert_eq!(dir.read("r/answers/README"), "my notes\n");
    assert!(!dir.path("r/answers/notes.json").exists());
    assert!(!dir.path("r/answers/empty.json").exists());
    assert_eq!(
        dir.read("r/quarantine/notes.json"),
        "{\"todo\": \"run p = 7\"}\n"
    );
}

#[test]
fn spectrum_sets_aside_an_answer_whose_proof_is_missing_or_edited() {
    let dir = TestDir::new();
    let first = filled_store(&dir);
    let name = answer_file(&first, 1)
        .rsplit('/')
        .next()
        .unwrap()
        .to_string();
    let proof = |v: &Value| {
        let rel = rows(v)[1]["answer"]["proof"]["file"].as_str().unwrap();
        dir.path(&format!("r/{rel}"))
    };

    // Missing: set aside, decided again with a new proof.
    let old = proof(&first);
    std::fs::remove_file(&old).unwrap();
    let v = sweep_past_bad_files(&dir, &[], &[&name]);
    assert!(
        v["set_aside"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("missing")
    );
    assert_eq!(rows(&v)[1]["reused"], false);
    let new = proof(&v);
    assert_ne!(new, old);
    assert!(new.exists());

    // Edited, size changed: the quick check of a reuse sees it; the proof is
    // set aside with its answer.
    let mut bytes = std::fs::read(&new).unwrap();
    bytes.extend_from_slice(b"c edited\n");
    std::fs::write(&new, &bytes).unwrap();
    let proof_name = new.file_name().unwrap().to_string_lossy().into_owned();
    let v = sweep_past_bad_files(&dir, &[], &[&name, &proof_name]);
    assert!(!new.exists());
    assert_eq!(
        std::fs::read(dir.path(&format!("r/quarantine/{proof_name}"))).unwrap(),
        bytes
    );

    // Edited, same size: only the full re-check (SHA-256, then the LRAT
    // checker) sees it.
    let newest = proof(&v);
    let mut bytes = std::fs::read(&newest).unwrap();
    let last = bytes.len() - 2; // before the final "0\n"
    bytes[last] = if bytes[last] == b'1' { b'2' } else { b'1' };
    std::fs::write(&newest, &bytes).unwrap();
    let quick = dir.orbitcnf().args(BAD_STORE).arg("--json").run();
    quick.code(0);
    assert_eq!(rows(&quick.json())[1]["reused"], true);
    let newest_name = newest.file_name().unwrap().to_string_lossy().into_owned();
    let v = sweep_past_bad_files(&dir, &["--recheck"], &[&name, &newest_name]);
    assert!(
        v["set_aside"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("SHA-256"),
        "{}",
        v["set_aside"]
    );
}

#[test]
fn spectrum_says_whether_a_reused_proof_was_checked_in_this_run() {
    let dir = TestDir::new();
    let first = filled_store(&dir);
    let finished = rows(&first)[1]["answer"]["finished_at"].as_str().unwrap();
    let day = &finished[..10];
    // Reused without --recheck: the proof file is there with its size, but
    // the proof was checked by the first run, on its day, not now.
    let quick = dir.orbitcnf().args(BAD_STORE).arg("--json").run();
    quick.code(0);
    let v = quick.json();
    let row = &rows(&v)[1];
    assert_eq!(row["reused"], true);
    assert_eq!(row["checked"]["when"], "earlier");
    assert_eq!(
        row["checked"]["run_id"],
        rows(&first)[1]["answer"]["run_id"]
    );
    let words = row["certificate"].as_str().unwrap();
    assert!(
        words.starts_with(&format!(
            "LRAT proof checked on {day}, not re-checked in this run ("
        )),
        "{words}"
    );
    assert_eq!(v["summary"]["proofs_not_rechecked"], 1);
    // The feasible row's orbit and map are checked again on every reuse.
    assert_eq!(rows(&v)[0]["checked"]["when"], "rechecked");
    let table = dir.orbitcnf().args(BAD_STORE).run();
    table
        .code(0)
        .stdout_has("not re-checked in this run")
        .stdout_has("1 reused proof(s) not re-checked in this run");
    // --recheck: checked now.
    let full = dir
        .orbitcnf()
        .args(BAD_STORE)
        .args(["--recheck", "--json"])
        .run();
    full.code(0);
    let v = full.json();
    assert_eq!(rows(&v)[1]["checked"]["when"], "rechecked");
    let words = rows(&v)[1]["certificate"].as_str().unwrap();
    assert!(words.ends_with("; re-checked in this run"), "{words}");
    assert!(!words.contains("not re-checked"), "{words}");
    assert_eq!(v["summary"]["proofs_not_rechecked"], 0);
}

#[test]
fn spectrum_answers_multiples_of_refuted_periods_by_section_9_with_the_same_verdicts() {
    // {-2,…,2}^2, periods 1..12: exactly 1..4 occur, none above
    // max_k 2^k·C(2,k) = 4 (Lemmens and Scheutzow 2005). With one job the
    // periods are solved in increasing order, so 10 and 12 follow from the
    // proofs of 5 and 6 (docs/math.md §9) without a search; without the rule
    // every one of 5..12 is solved, to the same verdicts.
    let dir = TestDir::new();
    let spectrum = |periods: &str, extra: &[&str]| {
        let run = dir
            .orbitcnf()
            .args(["spectrum", "--dim", "2", "--grid=-2..2", "--periods"])
            .arg(periods)
            .args(["-j", "1"])
            .args(extra)
            .run();
        run.code(0);
        run
    };
    let sweep =
        |extra: &[&str]| spectrum("1..12", &[&["--no-store", "--json"], extra].concat()).json();
    let with = sweep(&[]);
    let without = sweep(&["--no-divisors"]);
    let feasible: Vec<&str> = (1..=12)
        .map(|p| if p <= 4 { "feasible" } else { "infeasible" })
        .collect();
    assert_eq!(verdicts(&with), feasible);
    assert_eq!(verdicts(&without), feasible);
    let how = |report: &Value, p: usize| rows(report)[p - 1]["how"].as_str().unwrap().to_string();
    for p in 5..=12 {
        let want = if p == 10 || p == 12 {
            "divisor"
        } else {
            "solver"
        };
        assert_eq!(how(&with, p), want, "p = {p}");
        assert_eq!(how(&without, p), "solver", "p = {p}");
    }
    let ten = &rows(&with)[9]["answer"];
    assert_eq!(ten["backing"], "divisor");
    assert_eq!(ten["divisor"]["period"], 5);
    assert_eq!(ten["divisor"]["key"], rows(&with)[4]["answer"]["key"]);
    assert_eq!(with["summary"]["by_divisors"], 2);

    // The table says it in words, and so do the progress lines.
    let run = spectrum("5..12", &["--no-store", "--progress", "lines"]);
    run.stdout_has("   10  infeasible  §9")
        .stdout_has("by §9: p = 5 is infeasible (LRAT proof checked, not kept)")
        .stdout_has("by §9: p = 6 is infeasible")
        .stdout_has("0 by construction, 6 by the solver, 2 by §9 (divisors)");
    let lines = progress_lines(&run);
    for needle in [
        "p=10 infeasible by §9 from p = 5",
        "p=12 infeasible by §9 from p = 6",
    ] {
        assert_eq!(
            lines.iter().filter(|l| l.contains(needle)).count(),
            1,
            "{needle}: {lines:#?}"
        );
    }
    // Stored, the answer by §9 names the proof of 5, and `report` says so.
    spectrum("5..10", &["--store", "st", "-q"]);
    let html = dir
        .orbitcnf()
        .args(["report", "st", "--format", "html"])
        .run();
    html.code(0)
        .stdout_has("by §9 (periods are closed under divisors): p = 5 is infeasible");
    dir.orbitcnf()
        .args(["spectrum", "--help"])
        .run()
        .code(0)
        .stdout_has("--no-divisors")
        .stdout_has("periods are closed under divisors");
}

#[test]
fn spectrum_decides_hard_periods_in_cubes_with_a_stored_assembled_proof() {
    // {-1,0,1}^3 has no period above 2^3 = 8 (Lyons and Nussbaum 1992
    // [recalled]; p ≤ 12 by Lemmens and Scheutzow 2005). A probe of a
    // millisecond answers nothing, so 9 and 10 are hard: each is decided in
    // whole-profile cubes on both threads, its proof assembled, checked and
    // stored; 18 then follows from 9 by §9 without a search.
    let dir = TestDir::new();
    // Without window-cliques, which leaves {−1,0,1}^3 no profile to split.
    let q = [
        "--dim",
        "3",
        "--grid=-1..1",
        "--no-window-cliques",
        "--no-clique-orbits",
    ];
    let sweep = |store: &str, extra: &[&str]| {
        let run = dir
            .orbitcnf()
            .arg("spectrum")
            .args(q)
            .args(["--periods", "9,10,18", "-j", "2", "--store", store])
            .args(extra)
            .run();
        run.code(0);
        run
    };
    let run = sweep(
        "results",
        &["--probe", "0.001", "--json", "--progress", "lines"],
    );
    let v = run.json();
    assert_eq!(verdicts(&v), ["infeasible"; 3]);
    let store = Store::open(&dir.path("results")).unwrap();
    for r in &rows(&v)[..2] {
        let st = &r["answer"]["strategy"];
        assert_eq!(st["cube_rule"], "full-profile", "{r}");
        assert_eq!(st["threads"], 2, "{r}");
        assert_eq!(st["probe_budget_seconds"], 0.001, "{r}");
        assert!(st["cubes"].as_u64().unwrap() >= 2, "{r}");
        assert_stored_proof_accepted(&dir, &store, r, &q);
    }
    assert_eq!(rows(&v)[2]["how"], "divisor");
    let lines = progress_lines(&run);
    assert!(
        lines
            .iter()
            .any(|l| l.contains("p=9: the probe gave no answer in")
                && l.contains("deciding it in cubes on 2 threads")),
        "{lines:#?}"
    );
    // A second run reuses them, re-checked; the row says how it was decided.
    sweep("results", &["--recheck"])
        .stdout_has("hard: no answer in the")
        .stdout_has("full-profile cubes on 2 threads; re-checked in this run");
    // Without the switch (and with the default probe) one solve decides each.
    let plain = sweep("plain", &["--no-auto-split", "--json"]).json();
    assert_eq!(verdicts(&plain), ["infeasible"; 3]);
    assert!(rows(&plain)[0]["answer"]["strategy"].is_null());
    dir.orbitcnf()
        .args(["spectrum", "--real", "--dim", "2", "--probe", "1"])
        .run()
        .error_with(&["--probe applies to grid spectra"]);
}

#[test]
fn spectrum_hands_the_cubes_of_a_hard_period_to_cadical() {
    if !crate::util::have_tool("cadical") || !crate::util::have_tool("rate") {
        return;
    }
    // As above, with every cube handed to CaDiCaL at once: its DRAT proof
    // goes through `rate`, is checked against F ∧ cube and lifted, and the
    // assembled proof is stored and accepted by `verify-proof`.
    let dir = TestDir::new();
    // Without window-cliques, which leaves {−1,0,1}^3 no profile to split.
    let q = [
        "--dim",
        "3",
        "--grid=-1..1",
        "--no-window-cliques",
        "--no-clique-orbits",
    ];
    let v = dir
        .orbitcnf()
        .arg("spectrum")
        .args(q)
        .args(["--periods", "9", "-j", "2", "--store", "results", "--json"])
        .args(["--probe", "0.001", "--handoff", "cadical -q"])
        .args(["--handoff-after", "0.000001"])
        .run()
        .json();
    let r = &rows(&v)[0];
    assert_eq!(r["verdict"], "infeasible");
    let solver = r["answer"]["solver"].as_str().unwrap();
    assert!(
        solver.contains("handed off to external `cadical -q`") && !solver.contains(" 0 handed"),
        "{solver}"
    );
    let store = Store::open(&dir.path("results")).unwrap();
    assert_stored_proof_accepted(&dir, &store, r, &q);
}

/// A hard period with more whole profiles than `--split-above` is split into
/// a folder of the store and solved there in blocks; a run stopped by its
/// time limit stores an unknown that says how far it got, cubes run by hand
/// in that folder count, the next run goes on (at once, without a probe; a
/// file of the split lost meanwhile is written again) and merges, and the answer
/// (backed by the folder, recorded relative to the store) is reused, fully
/// re-checked, survives a move of the store, and is set aside when a cube
/// proof changes. The threshold is lowered to 0 here so that {−1,0,1}^3
/// takes this route: p = 9..12 are infeasible there (p ≤ 8 for n = 3 by
/// Lyons and Nussbaum 1992 [recalled]; p ≤ 12 by Lemmens and Scheutzow 2005,
/// and each row is checked against both by the sweep itself), and the
/// in-memory route of the same sweep gives the same verdicts.
#[test]
fn spectrum_runs_hard_periods_as_resumable_splits_in_its_store() {
    let dir = TestDir::new();
    // Without window-cliques, which leaves {−1,0,1}^3 no profile to split.
    let ternary_cube = [
        "spectrum",
        "--dim",
        "3",
        "--grid=-1..1",
        "--no-window-cliques",
        "--no-clique-orbits",
        "--periods",
    ];
    // 16 cubes unless `extra` asks for another count.
    let sweep = |store: &str, periods: &str, extra: &[&str]| {
        let cubes: &[&str] = match extra.contains(&"--split-cubes") {
            true => &[],
            false => &["--split-cubes", "16"],
        };
        dir.orbitcnf()
            .args(ternary_cube)
            .arg(periods)
            .args(["--store", store, "--jobs", "2", "--no-divisors"])
            .args(["--probe", "0.001", "--split-above", "0"])
            .args(cubes)
            .args(extra)
            .run()
    };
    // The time limit is spent by the probe (encoding included) before the
    // first block: the split is written, no cube is solved.
    let first = sweep("st", "12", &["--time-limit", "0.0011", "--json"]);
    first.code(2);
    let v = first.json();
    let row = &rows(&v)[0];
    assert_eq!(row["verdict"], "unknown");
    assert_eq!(row["how"], "cubes");
    let cert = row["certificate"].as_str().unwrap();
    assert!(cert.contains("of 16 cubes of the split splits/"), "{cert}");
    assert!(cert.contains("the next run goes on"), "{cert}");
    let splits: Vec<PathBuf> = std::fs::read_dir(dir.path("st/splits"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    assert_eq!(splits.len(), 1);
    let folder = &splits[0];
    let key = folder.file_name().unwrap().to_string_lossy().into_owned();
    assert_eq!(row["answer"]["key"], key.as_str());
    // Cubes run by hand in the store's folder (as on a cluster) count.
    dir.orbitcnf()
        .arg("run-cube")
        .arg(folder)
        .args(["0..7", "-q"])
        .run()
        .code(0);
    let by_hand = std::fs::read(folder.join("results/cube-0003.json")).unwrap();
    // The unknown of a split is not reused but taken up, at once: no probe
    // (whose 1 ms would not fit this limit of 1 ns) and no encoding; the
    // limit is over before the first block.
    sweep(
        "st",
        "12",
        &["--time-limit", "0.000000001", "--progress", "lines"],
    )
    .code(2)
    .stderr_has("taking up the split of 16 cubes begun in")
    .stderr_has("p=12: a split of it is begun in the store, no probe;")
    .stdout_has("8 of 16 cubes of the split splits/")
    .stdout_has("no block starts after the time limit")
    .stdout_has("a rerun goes on with the splits in the store");
    // A file of the split lost meanwhile: the take-up writes it again from
    // a fresh encoding, and the results kept stay valid.
    std::fs::remove_file(folder.join("cubes.icnf")).unwrap();
    // No limit: the rest is solved and the folder merged (p = 12 in the
    // split begun above, although this run asks for another cube count).
    let done = sweep("st", "9..12", &["--json", "--split-cubes", "8"]);
    done.code(0);
    let v = done.json();
    assert_eq!(verdicts(&v), ["infeasible"; 4]);
    for r in rows(&v) {
        assert_eq!(r["how"], "cubes");
        assert_eq!(r["answer"]["backing"], "checked-cubes");
        let rel = r["answer"]["cubes"]["folder"].as_str().unwrap();
        assert!(rel.starts_with("splits/"), "{rel}");
        assert_eq!(r["answer"]["strategy"]["cube_rule"], "profile-prefix");
    }
    let p12 = &rows(&v)[3];
    assert_eq!(p12["answer"]["cubes"]["cubes"], 16);
    assert!(
        folder.join("cubes.icnf").is_file(),
        "the split was repaired"
    );
    assert_eq!(
        std::fs::read(folder.join("results/cube-0003.json")).unwrap(),
        by_hand,
        "a cube with a final result is not solved again"
    );
    // Reused, then fully re-checked (the folders merged again).
    let again = sweep("st", "9..12", &["--json"]).json();
    assert_eq!(again["summary"]["reused"], 4);
    assert_eq!(essentials(&again), essentials(&v));
    let rechecked = sweep("st", "9..12", &["--recheck", "--json"]).json();
    let cert = rows(&rechecked)[3]["certificate"].as_str().unwrap();
    assert!(cert.contains("re-checked in this run"), "{cert}");
    // The folders are recorded relative to the store, which can move.
    std::fs::rename(dir.path("st"), dir.path("moved")).unwrap();
    let moved = sweep("moved", "9..12", &["--recheck", "--json"]).json();
    assert_eq!(moved["summary"]["reused"], 4);
    assert!(moved["set_aside"].as_array().is_none_or(|a| a.is_empty()));
    // A changed cube proof: the full re-check sets the answer aside, and the
    // period is decided again in the same folder (the changed cube no
    // longer matches its result's digest, so it is solved again).
    let moved_folder = dir.path("moved/splits").join(&key);
    let proof = std::fs::read_dir(moved_folder.join("results"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .find(|p| p.to_string_lossy().contains(".lrat"))
        .expect("a kept cube proof");
    let mut bytes = std::fs::read(&proof).unwrap();
    bytes.extend_from_slice(b"tampered");
    std::fs::write(&proof, bytes).unwrap();
    let run = sweep("moved", "12", &["--recheck", "--json"]);
    run.stderr_has("set aside");
    let v = run.json();
    crate::util::assert_split_folder_set_aside(&v);
    assert_eq!(rows(&v)[0]["verdict"], "infeasible");
    assert_eq!(rows(&v)[0]["answer"]["backing"], "checked-cubes");
    // The same verdicts by the in-memory route (no store: one assembled
    // proof per period).
    let memory = dir
        .orbitcnf()
        .args(ternary_cube)
        .arg("9..12")
        .args(["--no-store", "--json", "--jobs", "2", "--no-divisors"])
        .args(["--probe", "0.001", "--split-above", "0"])
        .run();
    memory.code(0);
    let m = memory.json();
    assert_eq!(verdicts(&m), ["infeasible"; 4]);
    assert!(
        rows(&m)
            .iter()
            .all(|r| r["answer"]["backing"] == "checked-proof")
    );
}
