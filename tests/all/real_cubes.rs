//! The real question in cubes through the built binary: `split --real`,
//! `run-cube`, `merge`, `decide --real --jobs`, GNU parallel, and tampered
//! split folders. The periods are published theorems [recalled]: (R^2,
//! ‖·‖∞) has exactly the periods 1..=4 (R. Lyons and R. D. Nussbaum, 1992;
//! docs/math.md §6), and every period up to 2^n occurs in R^n (the
//! Gray-code cycle on {0,1}^n and its sub-cycles), so R^3 has 8. Every
//! orbit is re-checked by `assert_isometric_cycle`, which shares no code
//! with the crate.

use serde_json::Value;

use crate::util::{
    ERROR, FEASIBLE, INFEASIBLE, TestDir, UNKNOWN, assert_isometric_cycle, have_tool,
};

fn split(dir: &TestDir, n: usize, p: usize, cubes: usize, name: &str) -> Value {
    let r = dir
        .orbitcnf()
        .args([
            "split",
            "--real",
            "--dim",
            &n.to_string(),
            "-p",
            &p.to_string(),
        ])
        .args(["--cubes", &cubes.to_string(), "--out", name, "--json"])
        .run();
    r.code(0);
    r.json()
}

fn count(m: &Value) -> usize {
    m["cubes"].as_array().expect("a cube list").len()
}

fn run_all(dir: &TestDir, name: &str, m: &Value) {
    for i in 0..count(m) {
        dir.orbitcnf()
            .args(["run-cube", name, &i.to_string(), "-q"])
            .run()
            .code(0);
    }
}

fn merge(dir: &TestDir, name: &str) -> crate::util::Run {
    dir.orbitcnf().args(["merge", name, "--json"]).run()
}

fn check_orbit_of(v: &Value, n: usize, p: usize) {
    let orbit: Vec<Vec<i64>> = serde_json::from_value(v["orbit"].clone()).expect("an orbit");
    let lo = orbit.iter().flatten().copied().min().unwrap_or(0);
    let hi = orbit.iter().flatten().copied().max().unwrap_or(0);
    assert_isometric_cycle(&vec![(lo, hi); n], &orbit, p, &format!("R^{n}, p = {p}"));
}

#[test]
fn split_run_cube_merge_decides_r2_and_r3() {
    let dir = TestDir::new();
    for (n, p, cubes, code) in [
        (2, 5, 8, INFEASIBLE),
        (2, 4, 8, FEASIBLE),
        (3, 8, 6, FEASIBLE),
    ] {
        let name = format!("s{n}-{p}");
        let m = split(&dir, n, p, cubes, &name);
        assert_eq!(m["format"], "orbitcnf-real-split/1");
        assert_eq!(m["question"]["space"], "real");
        assert!(count(&m) >= cubes);
        run_all(&dir, &name, &m);
        // a second run skips every finished cube
        let again = dir.orbitcnf().args(["run-cube", &name, "0"]).run();
        again.code(0).stdout_has("already solved");
        let r = merge(&dir, &name);
        r.code(code);
        let v = r.json();
        if code == FEASIBLE {
            assert_eq!(v["verdict"], "feasible");
            check_orbit_of(&v, n, p);
        } else {
            assert_eq!(v["verdict"], "infeasible");
            assert_eq!(v["certified"].as_array().unwrap().len(), count(&m));
            assert!(v["pending"].as_array().unwrap().is_empty());
        }
    }
}

#[test]
fn merge_lists_pending_cubes_and_run_cube_takes_ranges_and_refuses_bad_indices() {
    let dir = TestDir::new();
    let m = split(&dir, 2, 6, 4, "sp");
    let n = count(&m);
    dir.orbitcnf()
        .args(["run-cube", "sp", "0", "-q"])
        .run()
        .code(0);
    let r = merge(&dir, "sp");
    r.code(UNKNOWN);
    assert_eq!(r.json()["pending"].as_array().unwrap().len(), n - 1);
    let pending = dir.orbitcnf().args(["merge", "sp", "--pending"]).run();
    pending.code(0);
    let want: Vec<String> = (1..n).map(|i| i.to_string()).collect();
    assert_eq!(
        pending.stdout.split_whitespace().collect::<Vec<_>>(),
        want.iter().map(String::as_str).collect::<Vec<_>>()
    );
    dir.orbitcnf()
        .args(["run-cube", "sp", &n.to_string()])
        .run()
        .code(ERROR)
        .stderr_has("out of range");
    dir.orbitcnf()
        .args(["run-cube", "sp", &format!("1..{n}")])
        .run()
        .code(ERROR)
        .stderr_has("out of range");
    // the rest as one range: one JSON line per cube, cube 0 already solved
    let range = dir
        .orbitcnf()
        .args(["run-cube", "sp", &format!("0..{}", n - 1), "--json", "-q"])
        .run();
    range.code(0);
    let lines: Vec<Value> = range
        .stdout
        .lines()
        .map(|l| serde_json::from_str(l).expect("one JSON object per line"))
        .collect();
    assert_eq!(lines.len(), n);
    for (i, l) in lines.iter().enumerate() {
        assert_eq!(l["index"], i);
        assert_eq!(l["status"], "infeasible");
    }
    let merged = dir
        .orbitcnf()
        .args(["merge", "sp", "--progress", "lines"])
        .run();
    merged.code(INFEASIBLE).stdout_has("INFEASIBLE");
    merged.stderr_has("merge: 0 of ");
    dir.orbitcnf()
        .args(["merge", "sp", "--proof", "x.lrat"])
        .run()
        .code(ERROR)
        .stderr_has("--proof applies to grid splits");
    dir.orbitcnf()
        .args([
            "split", "--real", "--dim", "2", "-p", "6", "--cubes", "auto", "--out", "a",
        ])
        .run()
        .code(ERROR)
        .stderr_has("--cubes auto");
}

/// `decide --real --jobs 2` against the single search, on the fast cases.
#[test]
fn decide_in_cubes_agrees_with_the_single_search() {
    let dir = TestDir::new();
    let cases = (1..=8).map(|p| (2, p)).chain((5..=8).map(|p| (3, p)));
    for (n, p) in cases {
        let args = |extra: &[&str]| {
            let mut a = vec![
                "decide".to_string(),
                "--real".into(),
                "--dim".into(),
                n.to_string(),
                "-p".into(),
                p.to_string(),
                "--json".into(),
                "-q".into(),
            ];
            a.extend(extra.iter().map(|s| s.to_string()));
            a
        };
        let single = dir.orbitcnf().args(args(&[])).run();
        let cubes = dir.orbitcnf().args(args(&["--jobs", "2"])).run();
        let (s, c) = (single.json(), cubes.json());
        assert_eq!(s["verdict"], c["verdict"], "n={n} p={p}: {c}");
        assert_eq!(single.code, cubes.code, "n={n} p={p}");
        assert_eq!(c["certified"], true, "n={n} p={p}");
        let want = if p <= 1 << n {
            "feasible"
        } else {
            "infeasible"
        };
        assert_eq!(c["verdict"], want, "n={n} p={p}");
        if want == "feasible" {
            check_orbit_of(if p == 1 { &c } else { &c["merge"] }, n, p);
        }
    }
}

#[test]
fn decide_in_cubes_keeps_a_checkable_split_folder() {
    let dir = TestDir::new();
    dir.orbitcnf()
        .args([
            "decide", "--real", "--dim", "2", "-p", "6", "-j", "2", "--cubes", "6",
        ])
        .args(["-q", "--bundle", "b"])
        .run()
        .code(INFEASIBLE)
        .stdout_has("INFEASIBLE");
    dir.orbitcnf()
        .args(["check-bundle", "b"])
        .run()
        .code(0)
        .stdout_has("all");
    merge(&dir, "b").code(INFEASIBLE);
}

/// `refine` cuts unanswered cubes into pieces in place; `run-cube` over the
/// whole range skips the cut cubes, `merge` counts the pieces, and a piece
/// deleted from a cut cube's list is caught by the coverage check. R^2 has
/// no period 6 (R. Lyons and R. D. Nussbaum, 1992 [recalled]).
#[test]
fn refine_cuts_cubes_and_merge_still_certifies() {
    let dir = TestDir::new();
    let m = split(&dir, 2, 6, 4, "rf");
    let n = count(&m);
    dir.orbitcnf()
        .args(["refine", "rf"])
        .run()
        .code(ERROR)
        .stderr_has("nothing to cut");
    let r = dir
        .orbitcnf()
        .args(["refine", "rf", "--only", "1,3", "--cubes", "4", "--json"])
        .run();
    r.code(0);
    let v = r.json();
    assert_eq!(v["manifest"]["format"], "orbitcnf-real-split/2");
    let cut = v["refined"].as_array().unwrap();
    assert_eq!(cut.len(), 2);
    assert_eq!(cut[0][0], 1);
    assert_eq!(cut[1][0], 3);
    let total = count(&v["manifest"]);
    let pieces = total - n;
    assert!(pieces >= 8, "{pieces} pieces");
    let text = dir.orbitcnf().args(["refine", "rf", "--only", "1"]).run();
    text.code(ERROR).stderr_has("already cut");
    let range = dir
        .orbitcnf()
        .args(["run-cube", "rf", &format!("0..{}", total - 1), "-q"])
        .run();
    range.code(0).stdout_has("cube 1: cut into cubes");
    let pending = dir.orbitcnf().args(["merge", "rf", "--pending"]).run();
    pending.code(0);
    assert_eq!(pending.stdout.trim(), "");
    let r = merge(&dir, "rf");
    r.code(INFEASIBLE);
    let v = r.json();
    assert_eq!(v["cubes"], total - 2);
    assert_eq!(v["refined"], serde_json::json!([1, 3]));
    let text = dir.orbitcnf().args(["merge", "rf"]).run();
    text.code(INFEASIBLE)
        .stdout_has("refined      1 3 (cut into smaller cubes");
    // writing the split again would lose the pieces
    dir.orbitcnf()
        .args([
            "split", "--real", "--dim", "2", "-p", "6", "--cubes", "4", "--out", "rf",
        ])
        .run()
        .code(ERROR)
        .stderr_has("would lose");
    // one piece of cube 1 marked as cut into nothing: the coverage proof no
    // longer fits
    let first_piece = n;
    tamper(&dir, "rf", "manifest.json", |t| {
        let mut v: Value = serde_json::from_str(&t).unwrap();
        v["cubes"][first_piece]["refined_into"] = serde_json::json!([]);
        serde_json::to_string_pretty(&v).unwrap()
    });
    merge(&dir, "rf")
        .code(ERROR)
        .stderr_has("coverage-1.lrat")
        .stderr_has("not known to cover");
    // a grid split is refused with the reason
    dir.orbitcnf()
        .args(["refine", "nowhere"])
        .run()
        .code(ERROR)
        .stderr_has("not a real-space split");
}

/// Rewrites `file` of the split `name` with `f`.
fn tamper(dir: &TestDir, name: &str, file: &str, f: impl FnOnce(String) -> String) {
    let path = dir.path(name).join(file);
    let text = std::fs::read_to_string(&path).unwrap();
    std::fs::write(&path, f(text)).unwrap();
}

#[test]
fn merge_refuses_a_missing_cube_and_a_changed_multiplier() {
    let dir = TestDir::new();
    let m = split(&dir, 2, 5, 6, "sp");
    run_all(&dir, "sp", &m);
    merge(&dir, "sp").code(INFEASIBLE);
    let saved = std::fs::read_to_string(dir.path("sp/manifest.json")).unwrap();

    // the last cube left out of the manifest: the coverage proof no longer fits
    tamper(&dir, "sp", "manifest.json", |t| {
        let mut v: Value = serde_json::from_str(&t).unwrap();
        v["cubes"].as_array_mut().unwrap().pop();
        serde_json::to_string_pretty(&v).unwrap()
    });
    merge(&dir, "sp")
        .code(ERROR)
        .stderr_has("coverage.lrat")
        .stderr_has("not known to cover");
    std::fs::write(dir.path("sp/manifest.json"), &saved).unwrap();
    merge(&dir, "sp").code(INFEASIBLE);

    // a changed Farkas multiplier in one cube's lemma file: that cube is
    // rejected, naming the file and line, and there is no verdict
    let lemmas = "results/cube-0000/lemmas.txt";
    let text = dir.read(&format!("sp/{lemmas}"));
    let line = text.lines().position(|l| l.contains(" y 1 1")).unwrap() + 1;
    tamper(&dir, "sp", lemmas, |t| t.replacen(" y 1 1", " y 2 1", 1));
    let r = merge(&dir, "sp");
    r.code(UNKNOWN);
    let v = r.json();
    let p = &v["pending"][0];
    assert_eq!(
        (&p["index"], &p["state"]),
        (&Value::from(0), &Value::from("rejected"))
    );
    let why = p["reason"].as_str().unwrap();
    assert!(why.contains(&format!("lemmas.txt:{line}")), "{why}");
}

/// GNU parallel runs the cubes through the built binary, two at a time.
#[test]
fn gnu_parallel_runs_real_cubes() {
    if !have_tool("parallel") {
        return;
    }
    let dir = TestDir::new();
    let m = split(&dir, 2, 6, 8, "sp");
    let all: Vec<String> = (0..count(&m)).map(|i| i.to_string()).collect();
    crate::scaleout::parallel_run_cubes(&dir, "sp", &all);
    let r = merge(&dir, "sp");
    r.code(INFEASIBLE);
    assert_eq!(r.json()["certified"].as_array().unwrap().len(), all.len());
}

/// Hand each cube's endgame to CaDiCaL at once.
const HANDOFF: [&str; 4] = [
    "--solver",
    "external:cadical -q",
    "--handoff-after",
    "0.001",
];

/// The hand-off per cube: the bundled CDCL(T) for a moment, then CaDiCaL
/// refutes skeleton, cube units and lemmas with a DRAT proof that `rate`
/// turns into LRAT; `merge` re-checks it like any cube certificate.
#[test]
fn cubes_handed_off_to_cadical_are_certified() {
    if !have_tool("cadical") || !have_tool("rate") {
        return;
    }
    let dir = TestDir::new();
    let m = split(&dir, 2, 6, 4, "sp");
    for i in 0..count(&m) {
        dir.orbitcnf()
            .args(["run-cube", "sp", &i.to_string(), "-q"])
            .args(HANDOFF)
            .run()
            .code(0)
            .stdout_has("certificate checked");
    }
    merge(&dir, "sp").code(INFEASIBLE);
    dir.orbitcnf()
        .args(["decide", "--real", "--dim", "2", "-p", "5", "-j", "2", "-q"])
        .args(HANDOFF)
        .run()
        .code(INFEASIBLE);
}
