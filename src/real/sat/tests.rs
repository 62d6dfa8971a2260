//! Tests of the CDCL core against varisat and the LRAT checker.

use super::*;
use crate::proof::testgen::{php, random_3sat};
use crate::proof::{LratOptions, check_lrat_with};

fn run(cnf: &Cnf) -> (SatOutcome, Option<Vec<u8>>, Vec<bool>) {
    let mut s = Solver::new(cnf, None, vec![], true).unwrap();
    let out = s.solve(cnf, None, &mut |_| {});
    let model: Vec<bool> = (0..cnf.num_vars() as usize).map(|v| s.value(v)).collect();
    let proof = if matches!(out, SatOutcome::Unsat) {
        let (log, _) = s.into_parts();
        let mut buf = Vec::new();
        log.finish(&mut buf).unwrap();
        Some(buf)
    } else {
        None
    };
    (out, proof, model)
}

#[test]
fn pigeonholes_are_refuted_with_checked_lrat() {
    for (p, h) in [(3, 2), (4, 3), (5, 4), (6, 5)] {
        let cnf = php(p, h);
        let (out, proof, _) = run(&cnf);
        assert!(matches!(out, SatOutcome::Unsat), "php({p},{h})");
        let opts = LratOptions {
            ids_follow_cnf: true,
            format: None,
        };
        check_lrat_with(&cnf, proof.unwrap(), &opts).unwrap();
    }
    let (out, _, model) = run(&php(4, 4));
    assert!(matches!(out, SatOutcome::Sat));
    assert_eq!(php(4, 4).first_falsified(&model), None);
}

#[test]
fn random_formulas_agree_with_varisat_and_proofs_check() {
    use varisat::ExtendFormula;
    for seed in 0..60 {
        let cnf = random_3sat(40, 180, seed);
        let (out, proof, model) = run(&cnf);
        let mut v = varisat::Solver::new();
        for c in cnf.clauses() {
            let cl: Vec<varisat::Lit> = c
                .iter()
                .map(|l| varisat::Lit::from_dimacs(l.dimacs() as isize))
                .collect();
            v.add_clause(&cl);
        }
        let sat = v.solve().unwrap();
        match out {
            SatOutcome::Sat => {
                assert!(sat, "seed {seed}");
                assert_eq!(cnf.first_falsified(&model), None);
            }
            SatOutcome::Unsat => {
                assert!(!sat, "seed {seed}");
                let opts = LratOptions {
                    ids_follow_cnf: true,
                    format: None,
                };
                check_lrat_with(&cnf, proof.unwrap(), &opts).unwrap();
            }
            SatOutcome::Unknown(r) => panic!("{r}"),
        }
    }
}

#[test]
fn luby_sequence() {
    let s: Vec<u64> = (0..15).map(luby).collect();
    assert_eq!(s, vec![1, 1, 2, 1, 1, 2, 4, 1, 1, 2, 1, 1, 2, 4, 8]);
}
