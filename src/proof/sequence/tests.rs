//! Every answer of a solver reused across cubes is checked from outside: a
//! refutation by orbitcnf's LRAT checker against the cube's own CNF, a model
//! against the formula and the cube, and each answer against a fresh
//! solver's on the same cube.

use std::time::Duration;

use super::*;
use crate::proof::testgen::{Rng, cnf_of, php, random_3sat, strict};
use crate::proof::{LratFormat, check_lrat_with, solve_with_proof_sinks};
use crate::solve::Outcome;

/// `F` followed by the cube's units, as the cube's CNF is built for a split.
fn with_units(f: &Cnf, cube: &[Lit]) -> Cnf {
    let mut cnf = f.clone();
    for &l in cube {
        cnf.add_clause(&[l]);
    }
    cnf
}

fn lits(xs: &[i32]) -> Vec<Lit> {
    xs.iter().map(|&x| Lit::from_dimacs(x)).collect()
}

/// Random cubes over the first `vars` variables, `len` literals each.
fn random_cubes(vars: u32, len: usize, count: usize, seed: u64) -> Vec<Vec<Lit>> {
    let mut rng = Rng(seed | 1);
    (0..count)
        .map(|_| {
            let mut c: Vec<Lit> = Vec::new();
            while c.len() < len {
                let v = rng.below(u64::from(vars)) as i32 + 1;
                if c.iter().any(|l| l.var().dimacs() as i32 == v) {
                    continue;
                }
                c.push(Lit::from_dimacs(if rng.next() & 1 == 0 { v } else { -v }));
            }
            c
        })
        .collect()
}

/// Runs the sequence and checks every answer; returns (sat, unsat) counts.
fn run_and_check(f: &Cnf, cubes: &[Vec<Lit>], format: LratFormat) -> (usize, usize) {
    run_and_check_with(f, cubes, format, CONE_LIMIT, CONE_BYTES)
}

/// As [`run_and_check`], replacing the solver after every cube whose proof
/// has more than `cone_limit` steps or more than `cone_bytes` bytes.
fn run_and_check_with(
    f: &Cnf,
    cubes: &[Vec<Lit>],
    format: LratFormat,
    cone_limit: u64,
    cone_bytes: u64,
) -> (usize, usize) {
    let opts = SequenceOptions {
        per_cube: None,
        deadline: None,
        format,
        stop: None,
        cone_limit,
        cone_bytes,
    };
    let mut answers = Vec::new();
    solve_in_sequence(f, cubes.iter().cloned().enumerate(), &opts, |i, s| {
        answers.push((i, s));
        Ok(true)
    })
    .unwrap();
    assert_eq!(answers.len(), cubes.len());
    let (mut sat, mut unsat) = (0, 0);
    for (i, s) in answers {
        let cnf = with_units(f, &cubes[i]);
        let fresh = solve_with_proof_sinks(&cnf, Default::default(), None)
            .unwrap()
            .outcome;
        match s.answer {
            CubeAnswer::Sat(model) => {
                assert_eq!(cnf.first_falsified(&model), None, "cube {i}");
                assert!(matches!(fresh, Outcome::Sat(_)), "cube {i}");
                sat += 1;
            }
            CubeAnswer::Unsat { proof, steps, core } => {
                let summary = check_lrat_with(&cnf, &proof, &strict())
                    .unwrap_or_else(|e| panic!("cube {i}: proof rejected: {e}"));
                assert_eq!(summary.added, steps, "cube {i}");
                let dimacs: Vec<i32> = cubes[i].iter().map(|l| l.dimacs()).collect();
                assert!(core.iter().all(|l| dimacs.contains(l)), "cube {i}");
                assert_eq!(fresh, Outcome::Unsat, "cube {i}");
                unsat += 1;
            }
            CubeAnswer::Unknown(why) => panic!("cube {i}: unknown without a limit: {why}"),
        }
    }
    (sat, unsat)
}

#[test]
fn every_cube_of_random_formulas_gets_a_checked_answer() {
    let (mut sat, mut unsat) = (0, 0);
    for seed in 1..=12u64 {
        // Below the threshold ratio most formulas are satisfiable, and cubes
        // of 3–6 literals cut them both ways.
        let f = random_3sat(40, 150, seed);
        let cubes = random_cubes(40, 3 + (seed as usize % 4), 25, seed * 7919);
        let format = if seed % 2 == 0 {
            LratFormat::Binary
        } else {
            LratFormat::Text
        };
        let (s, u) = run_and_check(&f, &cubes, format);
        sat += s;
        unsat += u;
    }
    // Both kinds of answer occur, so both paths were exercised.
    assert!(sat > 20 && unsat > 20, "sat {sat}, unsat {unsat}");
}

#[test]
fn a_solver_replaced_after_every_refuted_cube_answers_as_one_kept() {
    // Cone limit 0, in steps or in bytes: every refuted cube ends its
    // solver's life, so each of these sequences starts over many times
    // between cubes.
    for seed in 1..=4u64 {
        let f = random_3sat(40, 150, seed);
        let cubes = random_cubes(40, 4, 25, seed * 104_729);
        let kept = run_and_check(&f, &cubes, LratFormat::Binary);
        for (steps, bytes) in [(0, CONE_BYTES), (CONE_LIMIT, 0)] {
            assert_eq!(
                run_and_check_with(&f, &cubes, LratFormat::Binary, steps, bytes),
                kept,
                "seed {seed}"
            );
        }
    }
    let f = php(6, 5);
    let cubes = random_cubes(30, 2, 10, 7);
    assert_eq!(
        run_and_check_with(&f, &cubes, LratFormat::Text, 0, CONE_BYTES),
        (0, 10)
    );
}

#[test]
fn cubes_of_an_unsatisfiable_formula_reuse_what_was_learned() {
    // PHP(6, 5) is unsatisfiable whatever the cube; after the first cube
    // the solver has learned the empty clause or enough to refute the rest.
    let f = php(6, 5);
    let cubes = random_cubes(30, 2, 10, 99);
    assert_eq!(run_and_check(&f, &cubes, LratFormat::Text), (0, 10));
}

#[test]
fn a_formula_refuted_while_loading_refutes_every_cube() {
    for f in [
        cnf_of(&[&[1, 2], &[], &[-1]]),
        cnf_of(&[&[1], &[2, 3], &[-1], &[3]]),
    ] {
        let cubes = vec![lits(&[2]), lits(&[-2, 3]), lits(&[])];
        assert_eq!(run_and_check(&f, &cubes, LratFormat::Binary), (0, 3));
    }
}

#[test]
fn cubes_that_contradict_the_formula_or_are_empty_are_answered() {
    // Units in F against the cube's literals, an empty cube, a cube equal to
    // a clause's negation.
    let f = cnf_of(&[&[1], &[-2, 3], &[2, 4], &[-3, -4, 5]]);
    let cubes = vec![
        lits(&[-1]),
        lits(&[]),
        lits(&[2, -3]),
        lits(&[-4, -2]),
        lits(&[2, 4, -5]),
        lits(&[5, 1]),
    ];
    let (sat, unsat) = run_and_check(&f, &cubes, LratFormat::Text);
    assert_eq!((sat, unsat), (2, 4));
}

#[test]
fn a_cube_out_of_time_is_unknown_and_the_next_cubes_are_still_answered() {
    let hard = php(9, 8);
    let opts = SequenceOptions {
        per_cube: Some(Duration::from_millis(50)),
        deadline: None,
        format: LratFormat::Binary,
        stop: None,
        cone_limit: CONE_LIMIT,
        cone_bytes: CONE_BYTES,
    };
    // The first cube leaves PHP(9, 8) as hard as it is; the second is
    // refuted by the formula's own clauses (pigeon 1 in no hole).
    let none: Vec<Lit> = (1..=8).map(|j| Lit::from_dimacs(-j)).collect();
    let cubes = vec![lits(&[1]), none.clone()];
    let mut answers = Vec::new();
    solve_in_sequence(&hard, cubes.into_iter().enumerate(), &opts, |i, s| {
        answers.push((i, s.answer));
        Ok(true)
    })
    .unwrap();
    assert!(matches!(&answers[0], (0, CubeAnswer::Unknown(w)) if w.contains("time limit")));
    let (1, CubeAnswer::Unsat { proof, .. }) = &answers[1] else {
        panic!("{:?}", answers[1]);
    };
    check_lrat_with(&with_units(&hard, &none), proof, &strict()).unwrap();
}

#[test]
fn the_stop_flag_and_the_callback_end_the_sequence() {
    let f = random_3sat(30, 100, 5);
    let cubes = random_cubes(30, 3, 10, 5);
    let stop = AtomicBool::new(false);
    let opts = SequenceOptions {
        per_cube: None,
        deadline: None,
        format: LratFormat::Binary,
        stop: Some(&stop),
        cone_limit: CONE_LIMIT,
        cone_bytes: CONE_BYTES,
    };
    let mut seen = 0;
    solve_in_sequence(&f, cubes.iter().cloned().enumerate(), &opts, |i, _| {
        seen += 1;
        if i == 3 {
            stop.store(true, Ordering::Relaxed);
        }
        Ok(true)
    })
    .unwrap();
    assert_eq!(seen, 4);
    let mut seen = 0;
    let opts = SequenceOptions { stop: None, ..opts };
    solve_in_sequence(&f, cubes.into_iter().enumerate(), &opts, |_, _| {
        seen += 1;
        Ok(seen < 2)
    })
    .unwrap();
    assert_eq!(seen, 2);
}
