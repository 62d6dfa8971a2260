//! Cubes of the real question: the numbering, coverage by brute force over
//! every assignment of tiny skeletons (no solver, no proof), and cube by
//! cube decisions against the whole question.

use super::*;
use crate::real::{RealAnswer, RealOptions, decide, decide_cube};

fn sk(n: usize, p: usize) -> Skeleton {
    skeleton::build(n, p, &SkeletonOptions::default()).unwrap()
}

#[test]
fn tight_of_inverts_tight_var() {
    for n in 1..=3 {
        for p in 2..=7 {
            for c in 0..n {
                for i in 0..p {
                    for j in (0..p).filter(|&j| j != i) {
                        let v = skeleton::tight_var(n, p, i, j, c).dimacs();
                        assert_eq!(tight_of(n, p, v), Some((i, j, c)));
                    }
                }
            }
            assert_eq!(tight_of(n, p, 0), None);
            assert_eq!(tight_of(n, 0, 1), None);
            assert_eq!(tight_of(n, 1, 1), None);
            assert_eq!(tight_of(n, p, (n * p * (p - 1)) as u32 + 1), None);
        }
    }
    assert_eq!(describe(2, 3, &[]), "the whole question");
    let l = skeleton::tight_var(2, 3, 2, 0, 1).dimacs() as i32;
    assert_eq!(describe(2, 3, &[-l]), "¬T(2,0,1)");
}

/// Every assignment of the skeleton's variables that satisfies all its
/// clauses satisfies exactly one cube (the cubes are the leaves of a
/// binary tree), checked by enumeration.
#[test]
fn every_model_of_a_tiny_skeleton_lies_in_exactly_one_cube() {
    for (n, p) in [(1, 3), (1, 4), (2, 3)] {
        let s = sk(n, p);
        let vars = s.cnf.num_vars() as usize;
        assert!(vars <= 18, "{vars} variables");
        for target in [1, 2, 4, 8, 64] {
            let cubes = make_cubes(&s, target);
            let mut models = 0u64;
            for bits in 0u32..(1 << vars) {
                let model: Vec<bool> = (0..vars).map(|v| bits >> v & 1 == 1).collect();
                if s.cnf.first_falsified(&model).is_some() {
                    continue;
                }
                models += 1;
                let holding = cubes
                    .iter()
                    .filter(|c| c.iter().all(|&l| Lit::from_dimacs(l).holds(&model)))
                    .count();
                assert_eq!(holding, 1, "n={n} p={p} target={target} bits={bits:b}");
            }
            assert!(models > 0, "n={n} p={p}");
            refute_coverage(&coverage_cnf(&s, &cubes)).unwrap();
        }
    }
}

#[test]
fn cube_counts_reach_the_target_and_stay_within_twice_it() {
    for (n, p) in [(2, 5), (3, 7), (3, 9), (4, 9)] {
        let s = sk(n, p);
        for target in [1, 3, 16, 100] {
            let cubes = make_cubes(&s, target);
            assert!(cubes.len() >= target, "n={n} p={p}: {}", cubes.len());
            assert!(
                cubes.len() < 2 * target.max(1),
                "n={n} p={p}: {}",
                cubes.len()
            );
            assert!(
                cubes
                    .iter()
                    .flatten()
                    .all(|&l| { tight_of(n, p, l.unsigned_abs()).is_some() })
            );
        }
        assert_eq!(make_cubes(&s, 1), vec![Vec::<i32>::new()]);
    }
}

/// Leaving out any cube that holds a model of the skeleton makes the
/// coverage check fail, as it must.
#[test]
fn a_left_out_cube_with_a_model_fails_the_coverage_check() {
    use crate::solve::refute::{ProofPlan, solve_bundled};
    let s = sk(2, 4);
    let cubes = make_cubes(&s, 8);
    let mut failures = 0;
    for k in 0..cubes.len() {
        let mut with = s.cnf.clone();
        for &l in &cubes[k] {
            with.add_clause(&[Lit::from_dimacs(l)]);
        }
        let has_model = matches!(
            solve_bundled(&with, &Limits::default(), &ProofPlan::default(), None)
                .unwrap()
                .outcome,
            Outcome::Sat(_)
        );
        let mut rest = cubes.clone();
        rest.remove(k);
        let r = refute_coverage(&coverage_cnf(&s, &rest));
        if has_model {
            let e = r.unwrap_err().to_string();
            assert!(e.contains("lies in no cube"), "{e}");
            failures += 1;
        }
    }
    assert!(failures > 0);
}

/// Each cube decided alone, with its certificate checked against the cube:
/// the whole question is feasible iff some cube is. The periods of R^2 are
/// 1..=4 (R. Lyons and R. D. Nussbaum, 1992 [recalled]); R^3 has 5..=8
/// (the Gray-code cycle on {0,1}^3 and its sub-cycles [recalled]).
#[test]
fn cubes_decide_like_the_whole_question() {
    let o = RealOptions::new();
    for (n, p, target) in [
        (2, 3, 4),
        (2, 4, 8),
        (2, 5, 8),
        (2, 6, 5),
        (3, 5, 6),
        (3, 8, 4),
    ] {
        let whole = decide(n, p, &o, None, &mut |_| {}).unwrap();
        let s = sk(n, p);
        let cubes = make_cubes(&s, target);
        let mut feasible = false;
        for c in &cubes {
            let r = decide_cube(n, p, c, &o, None, &mut |_| {}).unwrap();
            match r.answer {
                RealAnswer::Feasible { .. } => feasible = true,
                RealAnswer::Infeasible { check, .. } => assert!(check.is_some()),
                RealAnswer::Unknown { reason } => panic!("n={n} p={p}: {reason}"),
            }
        }
        assert_eq!(feasible, whole.verdict() == "feasible", "n={n} p={p}");
        assert_eq!(feasible, p <= 1 << n, "n={n} p={p}");
    }
}

#[test]
fn a_cube_certificate_does_not_refute_another_cube_or_the_whole_question() {
    let dir = tempfile::tempdir().unwrap();
    let s = sk(2, 5);
    let cubes = make_cubes(&s, 4);
    let mut o = RealOptions::new();
    o.certificate_dir = Some(dir.path().to_path_buf());
    let cube = cubes.last().unwrap();
    let r = decide_cube(2, 5, cube, &o, None, &mut |_| {}).unwrap();
    assert!(matches!(
        r.answer,
        RealAnswer::Infeasible { check: Some(_), .. }
    ));
    let files = crate::real::certificate::CertificateFiles {
        skeleton: &dir.path().join("skeleton.cnf"),
        lemmas: &dir.path().join("lemmas.txt"),
        proof: &dir.path().join("proof.lrat"),
    };
    crate::real::certificate::check_parts(2, 5, &files, cube).unwrap();
    // the same proof without the cube's units: the ids no longer fit
    assert!(crate::real::certificate::check_parts(2, 5, &files, &[]).is_err());
    let e = crate::real::certificate::check_parts(2, 5, &files, &[0]).unwrap_err();
    assert!(e.to_string().contains("not a variable"), "{e}");
}

/// The pieces of a cube extend it, and every model of a tiny skeleton
/// inside the cube lies in exactly one piece (enumeration, no solver).
#[test]
fn the_pieces_of_a_cube_partition_its_models() {
    for (n, p) in [(1, 4), (2, 3)] {
        let s = sk(n, p);
        let vars = s.cnf.num_vars() as usize;
        for parent in make_cubes(&s, 4) {
            for target in [2, 3, 8] {
                let Some(pieces) = make_cubes_under(&s, &parent, target) else {
                    continue;
                };
                assert!(pieces.iter().all(|c| c.starts_with(&parent)));
                for bits in 0u32..(1 << vars) {
                    let model: Vec<bool> = (0..vars).map(|v| bits >> v & 1 == 1).collect();
                    let holds = |c: &Vec<i32>| c.iter().all(|&l| Lit::from_dimacs(l).holds(&model));
                    if s.cnf.first_falsified(&model).is_some() || !holds(&parent) {
                        continue;
                    }
                    let holding = pieces.iter().filter(|c| holds(c)).count();
                    assert_eq!(holding, 1, "n={n} p={p} {parent:?} bits={bits:b}");
                }
            }
        }
    }
    // a cube that unit propagation refutes needs no piece
    let s = sk(2, 3);
    let v = skeleton::tight_var(2, 3, 0, 1, 0).dimacs() as i32;
    assert_eq!(make_cubes_under(&s, &[v, -v], 4), None);
}

/// `refine_split` in a folder: pieces appended, the cut cube marked, a
/// new coverage proof that `verify_split` accepts, the other results kept,
/// and the merge counting the pieces; a manifest whose cut cube lost a
/// piece fails the coverage check.
#[test]
fn refine_cuts_cubes_in_place_and_merge_counts_the_pieces() {
    use crate::progress::ProgressMode;
    use crate::report::Verdict;
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let m = write_split(d, 2, 5, &SkeletonOptions::default(), 4).unwrap();
    assert_eq!(m.format, FORMAT);
    let o = RealOptions::new();
    run::run_cube(d, 0, &o, None, false, &mut |_| {}).unwrap();
    let e = refine_split(d, None, 4).unwrap_err().to_string();
    assert!(e.contains("nothing to cut"), "{e}");
    let e = refine_split(d, Some(&[0]), 4).unwrap_err().to_string();
    assert!(e.contains("already answered"), "{e}");
    let e = refine_split(d, Some(&[1]), 1).unwrap_err().to_string();
    assert!(e.contains("at least 2"), "{e}");
    let r = refine_split(d, Some(&[2, 1]), 4).unwrap();
    let m = r.manifest;
    assert_eq!(m.format, FORMAT_REFINED);
    assert_eq!(m.refinements, 1);
    assert_eq!(r.refined.iter().map(|x| x.0).collect::<Vec<_>>(), [1, 2]);
    for (i, into) in &r.refined {
        assert_eq!(m.cubes[*i].refined_into.as_ref(), Some(into));
        for &k in into {
            assert!(m.cubes[k].literals.starts_with(&m.cubes[*i].literals));
        }
    }
    assert!(!d.join(COVERAGE).exists() && d.join("coverage-1.lrat").exists());
    let again = RealSplitManifest::read(d).unwrap();
    assert_eq!(again, m);
    verify_split(d, &again).unwrap();
    let e = refine_split(d, Some(&[1]), 4).unwrap_err().to_string();
    assert!(e.contains("already cut"), "{e}");
    let e = write_split(d, 2, 5, &SkeletonOptions::default(), 4)
        .unwrap_err()
        .to_string();
    assert!(e.contains("would lose"), "{e}");
    for c in m.cubes.iter() {
        let out = run::run_cube(d, c.index, &o, None, false, &mut |_| {}).unwrap();
        assert_eq!(
            matches!(out, run::RealRunOutcome::Refined(_)),
            !c.is_leaf(),
            "cube {}",
            c.index
        );
    }
    assert!(run::pending_indices(d).unwrap().is_empty());
    let merged = run::merge(d, false, ProgressMode::Off).unwrap();
    assert_eq!(merged.verdict, Verdict::Infeasible);
    assert_eq!(merged.cubes, m.cubes.len() - 2);
    assert_eq!(merged.refined, [1, 2]);
    assert_eq!(merged.certified.len(), merged.cubes);
    // a piece dropped from the list: the coverage proof no longer fits
    let mut bad = m.clone();
    let (i, into) = &r.refined[0];
    let dropped = into[0];
    bad.cubes[*i].refined_into = Some(into[1..].to_vec());
    bad.cubes[dropped].refined_into = Some(Vec::new());
    let e = verify_split(d, &bad).unwrap_err().to_string();
    assert!(
        e.contains("coverage-1.lrat") && e.contains("not known to cover"),
        "{e}"
    );
}

#[test]
fn the_format_is_read_from_the_head_or_from_the_whole_object() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("m.json");
    let cases: [(&str, Option<&str>); 7] = [
        // As serde_json writes manifests: `format` first, compact or pretty.
        (r#"{"format":"a/1","cubes":[1,2]}"#, Some("a/1")),
        (
            "\n {\n  \"format\" : \"b\\u002f2\",\n  \"x\": 1\n}",
            Some("b/2"),
        ),
        // `format` elsewhere: the whole object is read.
        (r#"{"x":{"format":"no"},"format":"c/3"}"#, Some("c/3")),
        // Not a manifest.
        (r#"{"x":1}"#, None),
        (r#"{"format":3}"#, None),
        ("[1, 2]", None),
        ("", None),
    ];
    for (text, want) in cases {
        std::fs::write(&path, text).unwrap();
        assert_eq!(manifest_format(&path).as_deref(), want, "{text}");
    }
    // A head cut inside the string falls back to the whole file.
    let long = format!(r#"{{"format":"{}","n":1}}"#, "z".repeat(5000));
    std::fs::write(&path, &long).unwrap();
    assert_eq!(manifest_format(&path).map(|f| f.len()), Some(5000));
    assert_eq!(manifest_format(&dir.path().join("missing.json")), None);
}
