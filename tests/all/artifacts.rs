//! What the binary leaves on disk, and how it treats what it finds there:
//! certificate bundles, split folders, temporary files, and arguments that
//! are not text. Each test here failed before the redesign of the evidence
//! layer (one bundle writer for every back-end, folders replaced whole,
//! abandoned temporary files swept, splits repaired in place).

use std::time::{Duration, SystemTime};

use crate::util::{ERROR, FEASIBLE, INFEASIBLE, TestDir, UNKNOWN, have_tool};

/// Two jetties of a made-up harbour: six points of Z^2 that are not a box.
const HARBOUR: &str = "0 1\n1 2\n1 3\n3 0\n3 1\n3 2\n";

#[test]
fn point_bundles_carry_the_map_whatever_the_back_end() {
    let dir = TestDir::new();
    dir.write("h.txt", HARBOUR);
    let mut backends: Vec<Vec<&str>> = vec![vec![], vec!["--jobs", "2", "--no-auto-split"]];
    if have_tool("cadical") {
        backends.push(vec!["--solver", "external:cadical -q"]);
    }
    for (i, extra) in backends.iter().enumerate() {
        let b = format!("b{i}");
        dir.orbitcnf()
            .args([
                "decide", "--points", "h.txt", "-p", "4", "-q", "--bundle", &b,
            ])
            .args(extra)
            .run()
            .code(FEASIBLE)
            .stderr_has("certificate bundle written");
        assert!(
            dir.path(&b).join("map.json").is_file(),
            "{extra:?}: no map.json"
        );
        dir.orbitcnf()
            .args(["check-bundle", &b])
            .run()
            .code(0)
            .stdout_has("map          certified: maps all 6 points of D into D");
    }
}

#[test]
fn bundles_are_replaced_whole_and_unknown_answers_write_nothing() {
    let dir = TestDir::new();
    let decide = |p: &str, extra: &[&str]| {
        let mut c = dir.orbitcnf();
        c.args([
            "decide",
            "--dim",
            "2",
            "--grid=-1..1",
            "-p",
            p,
            "-q",
            "--bundle",
            "b",
        ]);
        c.args(extra);
        c.run()
    };
    decide("4", &[]).code(FEASIBLE);
    assert!(dir.path("b/orbit.json").is_file());
    decide("5", &[]).code(INFEASIBLE);
    assert!(
        !dir.path("b/orbit.json").exists(),
        "a stale orbit.json survived beside the proof"
    );
    assert!(dir.path("b/proof.lrat").is_file());
    dir.orbitcnf().args(["check-bundle", "b"]).run().code(0);
    // An unknown verdict creates no folder.
    let run = dir
        .orbitcnf()
        .args([
            "decide",
            "--dim",
            "3",
            "-p",
            "12",
            "-q",
            "--time-limit",
            "0.000001",
            "--bundle",
            "u",
        ])
        .run();
    run.code(UNKNOWN)
        .stderr_has("no bundle written: the verdict is unknown");
    assert!(!dir.path("u").exists(), "an unknown verdict left a folder");
    // A folder that is not a bundle is refused before any solving.
    std::fs::create_dir(dir.path("mine")).unwrap();
    dir.write("mine/thesis.tex", "\\documentclass{article}");
    dir.orbitcnf()
        .args(["decide", "--dim", "4", "-p", "17", "--bundle", "mine"])
        .run()
        .error_with(&["mine exists and is not a folder orbitcnf wrote"]);
    assert!(dir.path("mine/thesis.tex").is_file());
}

/// A file left by a killed run: named as orbitcnf names its temporary
/// files, unlocked, an hour old.
fn abandoned(dir: &TestDir, name: &str) -> std::path::PathBuf {
    let p = dir.write(name, vec![0u8; 4096]);
    let f = std::fs::File::options().write(true).open(&p).unwrap();
    f.set_modified(SystemTime::now() - Duration::from_secs(3600))
        .unwrap();
    p
}

#[test]
fn temporary_files_of_killed_runs_are_swept() {
    let dir = TestDir::new();
    std::fs::create_dir(dir.path("proofs")).unwrap();
    let left = abandoned(&dir, "proofs/.orbitcnf-tmp-killed");
    let mine = dir.write("proofs/.notes", "a user's file");
    dir.orbitcnf()
        .args([
            "decide",
            "--dim",
            "2",
            "-p",
            "5",
            "-q",
            "--proof",
            "proofs/p5.lrat",
        ])
        .run()
        .code(INFEASIBLE);
    assert!(
        !left.exists(),
        "the abandoned temporary file is still there"
    );
    assert!(mine.exists() && dir.path("proofs/p5.lrat").is_file());
    // In a results store, old-style temporary files go too.
    std::fs::create_dir_all(dir.path("store/answers")).unwrap();
    let old = abandoned(&dir, "store/answers/.tmpXk3pQ9");
    dir.orbitcnf()
        .args(["spectrum", "--dim", "1", "--store", "store", "-q"])
        .run()
        .code(0);
    assert!(!old.exists(), "the store kept an abandoned temporary file");
}

#[test]
fn a_split_is_repaired_in_place_and_keeps_its_results() {
    let dir = TestDir::new();
    let split = |p: &str| {
        dir.orbitcnf()
            .args([
                "split",
                "--dim",
                "2",
                "--grid=-1..1",
                "-p",
                p,
                "--cubes",
                "4",
                "--out",
                "sp",
                // {−1,0,1}^2 with p = 5 keeps its cubes without
                // window-cliques and clique-orbits (with them, no profile
                // is left to split).
                "--no-window-cliques",
                "--no-clique-orbits",
            ])
            .run()
    };
    split("5").code(0);
    dir.orbitcnf()
        .args(["run-cube", "sp", "0", "-q"])
        .run()
        .code(0);
    std::fs::remove_file(dir.path("sp/cubes/cube-0001.cnf")).unwrap();
    dir.write("sp/coverage.lrat", "1 0 0\n");
    split("5")
        .code(0)
        .stderr_has("repaired")
        .stderr_has("cubes/cube-0001.cnf")
        .stderr_has("coverage.lrat");
    assert!(
        dir.path("sp/results/cube-0000.json").is_file(),
        "results were lost"
    );
    let n = std::fs::read_dir(dir.path("sp/cubes")).unwrap().count();
    for i in 1..n {
        dir.orbitcnf()
            .args(["run-cube", "sp", &i.to_string(), "-q"])
            .run()
            .code(0);
    }
    dir.orbitcnf().args(["merge", "sp"]).run().code(INFEASIBLE);
    split("6").error_with(&["already holds a split of another question"]);
}

#[cfg(unix)]
#[test]
fn arguments_that_are_not_text_are_errors_not_panics() {
    use std::ffi::OsString;
    use std::os::unix::ffi::OsStringExt;
    let dir = TestDir::new();
    let bad = || OsString::from_vec(b"caf\xe9.json".to_vec());
    let runs = [
        vec![OsString::from("check"), bad()],
        vec![OsString::from("decide"), OsString::from("--grid"), bad()],
        vec![OsString::from("decide"), OsString::from("--points"), bad()],
        vec![
            OsString::from("spectrum"),
            OsString::from("--periods"),
            bad(),
        ],
        vec![OsString::from("merge"), bad()],
    ];
    for args in runs {
        let run = dir.orbitcnf().args(&args).run();
        run.code(ERROR);
        let lines = run.stderr.lines().count();
        assert_eq!(lines, 1, "{}: {}", run.shown, run.stderr);
        assert!(
            run.stderr.starts_with("orbitcnf: error: "),
            "{}",
            run.stderr
        );
    }
}

#[test]
fn messages_name_the_file_without_a_line_zero_and_carry_no_stray_prefix() {
    let dir = TestDir::new();
    dir.write("empty.txt", "# nothing here\n");
    dir.orbitcnf()
        .args(["decide", "--points", "empty.txt"])
        .run()
        .error_with(&["empty.txt: no points"]);
    let run = dir.orbitcnf().args(["bench", "--only", "t9-p99"]).run();
    run.error_with(&["orbitcnf: error: no benchmark case \"t9-p99\""]);
    assert!(
        !run.stderr.contains("invalid encoding options"),
        "{}",
        run.stderr
    );
}
