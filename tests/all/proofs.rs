//! Certificates for infeasible answers through the binary: LRAT proofs written
//! and checked, tampered proofs rejected with their reason, DRAT accepted by
//! the external checker `rate`, and certificate bundles re-checked end to end.

use orbitcnf::proof::LratFormat;
use orbitcnf::proof::lrat::read::{LratReader, Step, StepKind};
use orbitcnf::proof::lrat::write::LratWriter;

use crate::util::{ERROR, INFEASIBLE, TestDir, have_tool};

/// Decides `{-1,0,1}^3` (or another grid) with a proof file and returns the JSON report.
fn decide_with_proof(
    dir: &TestDir,
    grid: &str,
    dim: &str,
    p: usize,
    proof: &str,
) -> serde_json::Value {
    let run = dir
        .orbitcnf()
        .args([
            "decide",
            "--dim",
            dim,
            &format!("--grid={grid}"),
            "--period",
            &p.to_string(),
        ])
        .args(["--proof", proof, "--json"])
        .run();
    run.code(INFEASIBLE);
    let j = run.json();
    assert_eq!(j["verdict"], "infeasible");
    assert_eq!(j["certificate"]["kind"], "checked-proof", "{j}");
    assert!(j["certificate"]["lrat"]["steps"].as_u64().unwrap() > 0);
    j
}

fn encode(dir: &TestDir, grid: &str, dim: &str, p: usize, out: &str) {
    dir.orbitcnf()
        .args([
            "encode",
            "--dim",
            dim,
            &format!("--grid={grid}"),
            "--period",
            &p.to_string(),
            "-o",
            out,
        ])
        .run()
        .code(0);
}

#[test]
fn infeasible_answers_of_published_cases_carry_checked_proofs() {
    // Periods 9..12 on {-1,0,1}^3 exceed 2^3 = 8, the bound proven for n = 3
    // (R. Lyons and R. D. Nussbaum, 1992 [recalled]); p = 5 on {0,1,2,3}^2
    // exceeds max_k 2^k·C(2,k) = 4 (B. Lemmens and M. Scheutzow, Ergodic
    // Theory Dynam. Systems 25 (2005) [paper]), as in published.rs.
    let dir = TestDir::new();
    for (grid, dim, p) in [
        ("-1..1", "3", 9),
        ("-1..1", "3", 10),
        ("-1..1", "3", 11),
        ("-1..1", "3", 12),
        ("0..3", "2", 5),
    ] {
        let name = format!("p{p}-{dim}.lrat");
        let cnf = format!("p{p}-{dim}.cnf");
        decide_with_proof(&dir, grid, dim, p, &name);
        encode(&dir, grid, dim, p, &cnf);
        dir.orbitcnf()
            .args(["verify-proof", &cnf, &name])
            .run()
            .code(0)
            .stdout_has("accepted");
    }
}

/// Rewrites the first addition step (with literals and two hints or more)
/// of a text LRAT proof with `edit`, through orbitcnf's LRAT reader and writer.
fn tamper_first_addition(text: &str, edit: impl Fn(&mut Vec<i32>, &mut Vec<i64>)) -> String {
    let mut reader = LratReader::new(text.as_bytes(), None, u32::MAX).unwrap();
    let mut writer = LratWriter::new(Vec::new(), LratFormat::Text);
    let mut step = Step::default();
    let mut done = false;
    while reader.next_step(&mut step).unwrap() {
        if !done && step.kind == StepKind::Add && !step.lits.is_empty() && step.refs.len() >= 2 {
            edit(&mut step.lits, &mut step.refs);
            done = true;
        }
        writer.step(&step).unwrap();
    }
    String::from_utf8(writer.finish().unwrap().0).unwrap()
}

#[test]
fn tampered_proofs_are_rejected_with_the_step_and_reason() {
    let dir = TestDir::new();
    decide_with_proof(&dir, "-1..1", "3", 9, "p9.lrat");
    encode(&dir, "-1..1", "3", 9, "p9.cnf");
    encode(&dir, "-1..1", "3", 10, "p10.cnf");
    let proof = dir.read("p9.lrat");

    let flipped = tamper_first_addition(&proof, |lits, _| lits[0] = -lits[0]);
    dir.write("flipped.lrat", flipped);
    dir.orbitcnf()
        .args(["verify-proof", "p9.cnf", "flipped.lrat"])
        .run()
        .error_with(&["proof rejected", "step"]);

    let dropped = tamper_first_addition(&proof, |_, hints| {
        hints.pop();
    });
    dir.write("dropped.lrat", dropped);
    dir.orbitcnf()
        .args(["verify-proof", "p9.cnf", "dropped.lrat"])
        .run()
        .error_with(&["proof rejected", "step"]);

    let lines: Vec<&str> = proof.lines().collect();
    dir.write("truncated.lrat", lines[..lines.len() / 2].join("\n") + "\n");
    dir.orbitcnf()
        .args(["verify-proof", "p9.cnf", "truncated.lrat"])
        .run()
        .error_with(&["proof rejected", "without deriving the empty clause"]);
    let cut = &proof[..proof.len() / 2];
    dir.write(
        "cut.lrat",
        cut.trim_end_matches(|c: char| c.is_whitespace()),
    );
    dir.orbitcnf()
        .args(["verify-proof", "p9.cnf", "cut.lrat"])
        .run()
        .code(ERROR)
        .stderr_has("proof rejected");

    // The proof of p = 9 is not a proof for the CNF of p = 10.
    dir.orbitcnf()
        .args(["verify-proof", "p10.cnf", "p9.lrat"])
        .run()
        .error_with(&["proof rejected"]);
    // The untouched proof is accepted.
    dir.orbitcnf()
        .args(["verify-proof", "p9.cnf", "p9.lrat"])
        .run()
        .code(0);
}

#[test]
fn the_drat_proof_is_accepted_by_the_rate_checker() {
    let dir = TestDir::new();
    dir.orbitcnf()
        .args([
            "decide",
            "--dim",
            "3",
            "--grid=-1..1",
            "--period",
            "10",
            "--drat",
            "p10.drat",
        ])
        .run()
        .code(INFEASIBLE)
        .stdout_has("binary DRAT");
    encode(&dir, "-1..1", "3", 10, "p10.cnf");
    if !have_tool("rate") {
        return;
    }
    let run = dir.program("rate").args(["p10.cnf", "p10.drat"]).run();
    assert!(
        run.stdout.contains("s VERIFIED"),
        "rate did not verify:\n{}\n{}",
        run.stdout,
        run.stderr
    );
}

#[test]
fn bundles_are_rechecked_end_to_end_and_tampering_is_caught() {
    let dir = TestDir::new();
    dir.orbitcnf()
        .args([
            "decide",
            "--dim",
            "3",
            "--grid=-1..1",
            "--period",
            "11",
            "--bundle",
            "b11",
        ])
        .run()
        .code(INFEASIBLE)
        .stderr_has("certificate bundle written");
    let ok = dir.orbitcnf().args(["check-bundle", "b11", "--json"]).run();
    ok.code(0);
    let j = ok.json();
    assert!(j["proof"]["steps"].as_u64().unwrap() > 0);
    assert_eq!(j["manifest"]["verdict"], "infeasible");

    // A feasible bundle carries the orbit instead, and it is re-verified.
    dir.orbitcnf()
        .args([
            "decide",
            "--dim",
            "3",
            "--grid=-1..1",
            "--period",
            "8",
            "--bundle",
            "b8",
        ])
        .run()
        .code(10);
    dir.orbitcnf()
        .args(["check-bundle", "b8"])
        .run()
        .code(0)
        .stdout_has("FEASIBLE, certified");

    // Any edit of the CNF is caught by its digest.
    let cnf = dir.read("b11/formula.cnf");
    dir.write("b11/formula.cnf", format!("{cnf}c an edit\n"));
    dir.orbitcnf()
        .args(["check-bundle", "b11"])
        .run()
        .error_with(&["formula.cnf", "SHA-256"]);
    dir.write("b11/formula.cnf", cnf);
    dir.orbitcnf().args(["check-bundle", "b11"]).run().code(0);

    // A manifest that claims another question no longer matches the CNF.
    let manifest = dir.read("b11/manifest.json");
    dir.write(
        "b11/manifest.json",
        manifest.replace("\"period\": 11", "\"period\": 12"),
    );
    dir.orbitcnf()
        .args(["check-bundle", "b11"])
        .run()
        .error_with(&["differs from a fresh encoding"]);
}

/// The number of a summary field in a JSON report's `certificate.lrat`.
fn lrat_field(j: &serde_json::Value, field: &str) -> u64 {
    j["certificate"]["lrat"][field].as_u64().unwrap()
}

#[test]
fn binary_proofs_say_what_text_proofs_say() {
    let dir = TestDir::new();
    let text = decide_with_proof(&dir, "-1..1", "3", 10, "p10.lrat");
    // The same run in binary, with the DRAT proof of that run beside it.
    let run = dir
        .orbitcnf()
        .args(["decide", "--dim", "3", "--grid=-1..1", "--period", "10"])
        .args(["--proof", "p10.bin.lrat", "--proof-encoding", "binary"])
        .args(["--drat", "p10.drat", "--json"])
        .run();
    run.code(INFEASIBLE);
    let binary = run.json();
    assert_eq!(binary["certificate"]["lrat"]["format"], "Binary");
    assert_eq!(text["certificate"]["lrat"]["format"], "Text");
    // varisat is deterministic: both encodings carry the same steps.
    for field in ["steps", "added", "deleted", "hints", "empty_clause_id"] {
        assert_eq!(
            lrat_field(&binary, field),
            lrat_field(&text, field),
            "{field}"
        );
    }
    let bytes = std::fs::read(dir.path("p10.bin.lrat")).unwrap();
    assert!(
        matches!(bytes.first(), Some(b'a' | b'd')),
        "not binary LRAT"
    );
    assert!(
        bytes.len() * 3 < dir.read("p10.lrat").len() * 2,
        "binary is not smaller"
    );
    encode(&dir, "-1..1", "3", 10, "p10.cnf");
    let v = dir
        .orbitcnf()
        .args(["verify-proof", "p10.cnf", "p10.bin.lrat", "--json"])
        .run();
    v.code(0);
    assert_eq!(
        v.json()["summary"]["steps"].as_u64(),
        Some(lrat_field(&text, "steps"))
    );
    // A byte changed in the middle of the binary proof is caught.
    let mut bad = bytes.clone();
    let mid = bad.len() / 2;
    bad[mid] ^= 0x04;
    dir.write("bad.lrat", &bad);
    dir.orbitcnf()
        .args(["verify-proof", "p10.cnf", "bad.lrat"])
        .run()
        .error_with(&["proof rejected"]);
    // The run's refutation also passes rate, a checker that shares no code with
    // ours (rate reads DRAT; no independent LRAT checker is installed).
    if have_tool("rate") {
        let r = dir.program("rate").args(["p10.cnf", "p10.drat"]).run();
        assert!(
            r.stdout.contains("s VERIFIED"),
            "{}\n{}",
            r.stdout,
            r.stderr
        );
    }
    // Bundles take a binary proof, and check-bundle reads it.
    dir.orbitcnf()
        .args(["decide", "--dim", "3", "--grid=-1..1", "--period", "10"])
        .args(["--bundle", "b10", "--proof-encoding", "binary"])
        .run()
        .code(INFEASIBLE);
    let bundle = std::fs::read(dir.path("b10/proof.lrat")).unwrap();
    assert!(matches!(bundle.first(), Some(b'a' | b'd')));
    dir.orbitcnf().args(["check-bundle", "b10"]).run().code(0);
}

#[test]
fn split_runs_keep_cube_proofs_in_any_encoding_and_merge_writes_either() {
    let dir = TestDir::new();
    dir.orbitcnf()
        .args(["split", "--dim", "3", "--grid=-1..1", "--period", "10"])
        .args(["--cubes", "4", "--out", "sp"])
        .run()
        .code(0);
    let manifest: serde_json::Value = serde_json::from_str(&dir.read("sp/manifest.json")).unwrap();
    let n = manifest["cubes"].as_array().unwrap().len();
    const ZSTD_MAGIC: [u8; 4] = [0x28, 0xB5, 0x2F, 0xFD];
    for i in 0..n {
        let encoding = ["binary", "text", "zstd"][i % 3];
        dir.orbitcnf()
            .args(["run-cube", "sp", &i.to_string(), "-q"])
            .args(["--proof-encoding", encoding])
            .run()
            .code(0);
        let proof = std::fs::read(dir.path(&format!("sp/results/cube-{i:04}.lrat"))).unwrap();
        assert_eq!(
            matches!(proof.first(), Some(b'a' | b'd')),
            encoding == "binary",
            "cube {i}"
        );
        assert_eq!(
            proof.starts_with(&ZSTD_MAGIC),
            encoding == "zstd",
            "cube {i}"
        );
        // The kept proof, compressed or not, is a proof of the cube's CNF
        // for the checker (the result file names its digest and steps).
        let v = dir
            .orbitcnf()
            .args(["verify-proof", &format!("sp/cubes/cube-{i:04}.cnf")])
            .arg(format!("sp/results/cube-{i:04}.lrat"))
            .arg("--json")
            .run();
        v.code(0);
        let result: serde_json::Value =
            serde_json::from_str(&dir.read(&format!("sp/results/cube-{i:04}.json"))).unwrap();
        assert_eq!(
            v.json()["summary"]["steps"],
            result["proof"]["steps"],
            "cube {i}"
        );
        assert_eq!(result["proof"]["bytes"].as_u64(), Some(proof.len() as u64));
    }
    for encoding in ["text", "binary", "zstd"] {
        let out = format!("all.{encoding}.lrat");
        let m = dir
            .orbitcnf()
            .args(["merge", "sp", "--json", "--proof", &out])
            .args(["--proof-encoding", encoding])
            .run();
        m.code(INFEASIBLE);
        assert_eq!(m.json()["certificate"]["kind"], "combined-proof");
        dir.orbitcnf()
            .args(["verify-proof", "sp/formula.cnf", &out])
            .run()
            .code(0)
            .stdout_has("accepted");
    }
    let text = std::fs::metadata(dir.path("all.text.lrat")).unwrap().len();
    let binary = std::fs::metadata(dir.path("all.binary.lrat"))
        .unwrap()
        .len();
    assert!(binary < text, "{binary} ≥ {text}");
    let packed = std::fs::read(dir.path("all.zstd.lrat")).unwrap();
    assert!(packed.starts_with(&ZSTD_MAGIC));
    assert!(
        (packed.len() as u64) < binary,
        "{} ≥ {binary}",
        packed.len()
    );
}
