//! `orbitcnf report` and `decide --map` through the built binary.

use orbitcnf::render::{self, Format, Picture};

use super::{load, path};
use crate::util::{FEASIBLE, INFEASIBLE, TestDir, dist};

fn absolute(name: &str) -> String {
    std::fs::canonicalize(path(name))
        .expect("the input exists")
        .display()
        .to_string()
}

#[test]
fn report_writes_what_the_library_renders() {
    let dir = TestDir::new();
    let input = absolute("answer-n3-p8.json");
    let loaded = render::input::load(std::path::Path::new(&input)).expect("loads");
    for (format, picture, file) in [
        ("latex", None, "a.tex"),
        ("svg", Some("distances"), "a.svg"),
        ("html", None, "a.html"),
    ] {
        let mut cmd = dir.orbitcnf();
        cmd.args(["report", &input, "--format", format, "-o", file]);
        if let Some(p) = picture {
            cmd.args(["--picture", p]);
        }
        cmd.run().code(0).stderr_has("report written to");
        let want = render::render(
            &loaded,
            format.parse::<Format>().expect("a format"),
            picture.map(|p| p.parse::<Picture>().expect("a picture")),
        )
        .expect("renders");
        assert_eq!(dir.read(file), want, "{format}");
    }
    // Without -o the report goes to stdout; HTML is the default format.
    let run = dir.orbitcnf().args(["report", &input]).run();
    run.code(0).stdout_has("<!DOCTYPE html>");
}

#[test]
fn report_draws_a_spectrum_from_a_store_and_refuses_what_does_not_fit() {
    let dir = TestDir::new();
    let store = absolute("store-n2");
    dir.orbitcnf()
        .args(["report", &store, "--format", "svg"])
        .run()
        .code(0)
        .stdout_has("class=\"period\"");
    dir.orbitcnf()
        .args(["report", &store, "--format", "svg", "--picture", "cycle"])
        .run()
        .error_with(&["cannot make the cycle picture", "spectrum"]);
    dir.orbitcnf()
        .args(["report", &absolute("answer-n2-p5.json"), "--format", "svg"])
        .run()
        .error_with(&["cannot make the cycle picture", "infeasible", "no orbit"]);
    dir.orbitcnf()
        .args(["report", &store, "--format", "pdf"])
        .run()
        .code(1)
        .stderr_has("unknown format \"pdf\"");
    dir.orbitcnf()
        .args(["report", &store, "--picture", "pie"])
        .run()
        .code(1)
        .stderr_has("unknown picture \"pie\"");
    std::fs::create_dir_all(dir.path("empty")).expect("a folder");
    dir.orbitcnf().args(["report", "empty"]).run().error_with(&[
        "empty",
        "neither a certificate bundle",
        "nor a results store",
    ]);
    dir.write("not.json", "[1, 2");
    dir.orbitcnf()
        .args(["report", "not.json"])
        .run()
        .error_with(&["not.json", "not JSON"]);
}

/// Copies input `name` (a file or a folder of files) into `dir`.
fn copy(dir: &TestDir, name: &str) -> std::path::PathBuf {
    let from = path(name);
    let to = dir.path(name);
    if from.is_dir() {
        std::fs::create_dir_all(&to).expect("a folder");
        for e in std::fs::read_dir(&from).expect("a folder") {
            let e = e.expect("an entry");
            std::fs::copy(e.path(), to.join(e.file_name())).expect("copied");
        }
    } else {
        std::fs::copy(&from, &to).expect("copied");
    }
    to
}

#[test]
fn report_refuses_tampered_inputs() {
    let dir = TestDir::new();
    // A bundle whose orbit differs from its manifest's digest.
    let bundle = copy(&dir, "bundle-n2-p4");
    let orbit = bundle.join("orbit.json");
    let text = std::fs::read_to_string(&orbit).expect("orbit.json");
    std::fs::write(&orbit, text.replacen("-1", "0", 1)).expect("tampered");
    dir.orbitcnf()
        .args(["report", "bundle-n2-p4"])
        .run()
        .error_with(&["orbit.json", "differs from the manifest"]);
    // An answer whose orbit is not an isometric cycle.
    let answer = copy(&dir, "answer-n2-p4.json");
    let mut v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&answer).expect("answer")).expect("JSON");
    v["orbit"][1] = serde_json::json!([0, 1]);
    std::fs::write(&answer, v.to_string()).expect("tampered");
    dir.orbitcnf()
        .args(["report", "answer-n2-p4.json"])
        .run()
        .error_with(&["check failed"]);
    // An answer whose stated profile is not its orbit's.
    let mut v = load("answer-n2-p4.json");
    if let render::input::Input::Answer(a) = &mut v.input {
        a.profile = Some(vec![1, 2]);
    }
    let err = render::render(&v, Format::Html, None).expect_err("a wrong profile is refused");
    assert!(
        err.to_string().contains("states the profile [1, 2]"),
        "{err}"
    );
}

#[test]
fn decide_map_prints_writes_and_checks_the_explicit_map() {
    let dir = TestDir::new();
    let q = [
        "decide",
        "--dim",
        "2",
        "--grid=-1..1",
        "--period",
        "4",
        "-q",
        "--map",
    ];
    dir.orbitcnf()
        .args(q)
        .run()
        .code(FEASIBLE)
        .stdout_has(
            "map check    passed: maps all 9 points into the box, nonexpansive on all 36 pairs",
        )
        .stdout_has("[0, 0] -> [0, 0]");
    let json = dir.orbitcnf().args(q).arg("--json").run().json();
    let map = json["explicit_map"]["map"].as_array().expect("a map");
    assert_eq!(map.len(), 9);
    let orbit: Vec<Vec<i64>> = serde_json::from_value(json["orbit"].clone()).expect("an orbit");
    let pairs: Vec<(Vec<i64>, Vec<i64>)> =
        serde_json::from_value(json["explicit_map"]["map"].clone()).expect("pairs");
    // Checked here without the crate: the map moves the orbit along and
    // expands no pair.
    for (i, x) in orbit.iter().enumerate() {
        let image = pairs.iter().find(|(z, _)| z == x).map(|(_, f)| f);
        assert_eq!(image, Some(&orbit[(i + 1) % orbit.len()]));
    }
    for (z, fz) in &pairs {
        for (w, fw) in &pairs {
            assert!(dist(fz, fw) <= dist(z, w));
        }
    }
    // --map-out writes an orbit file that check and report read.
    dir.orbitcnf()
        .args(q)
        .args(["--map-out", "map.json"])
        .run()
        .code(FEASIBLE)
        .stderr_has("map written to map.json");
    dir.orbitcnf()
        .args(["check", "map.json", "--map"])
        .run()
        .code(0)
        .stdout_has("map check    passed");
    dir.orbitcnf()
        .args(["report", "map.json", "--format", "latex"])
        .run()
        .code(0)
        .stdout_has("\\caption{The map on all 9 points");
    // No map without an orbit.
    let run = dir
        .orbitcnf()
        .args([
            "decide",
            "--dim",
            "2",
            "--grid=-1..1",
            "--period",
            "5",
            "-q",
            "--map",
        ])
        .run();
    run.code(INFEASIBLE);
    assert!(
        !run.stdout.contains("map check") && !run.stdout.contains("\nmap "),
        "an infeasible answer has no map:\n{}",
        run.stdout
    );
    dir.orbitcnf()
        .args(["decide", "--map-out", "x.json"])
        .run()
        .code(1)
        .stderr_has("--map");
}

#[test]
fn long_orbits_skip_the_pictures_of_all_pairs_but_keep_the_rest() {
    // 300 distinct points of {0,1}^9 are pairwise at distance 1, so any
    // order is an isometric 300-cycle [derived].
    let orbit: Vec<Vec<i64>> = (0..300u32)
        .map(|m| (0..9).map(|c| i64::from((m >> c) & 1)).collect())
        .collect();
    let dir = TestDir::new();
    let file = dir.write(
        "long.json",
        serde_json::json!({"grid": "0..1", "dim": 9, "orbit": orbit}).to_string(),
    );
    let loaded = render::input::load(&file).expect("loads");
    for pic in [Picture::Cycle, Picture::Distances] {
        let err = render::render(&loaded, Format::Svg, Some(pic)).expect_err("too many pairs");
        assert!(err.to_string().contains("up to p = 256"), "{err}");
    }
    let svg =
        render::render(&loaded, Format::Svg, Some(Picture::Orbit)).expect("parallel coordinates");
    assert_eq!(svg.matches("class=\"point\"").count(), 300);
    let html = render::render(&loaded, Format::Html, None).expect("a page");
    assert_eq!(html.matches("<figure").count(), 1, "only the orbit picture");
    let tex = render::render(&loaded, Format::Latex, None).expect("tables");
    assert!(tex.contains("The map on all 512 points"));
}
