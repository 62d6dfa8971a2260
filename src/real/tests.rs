//! Tests of the whole real-space pipeline.

use super::*;

fn run(n: usize, p: usize) -> RealReport {
    decide(n, p, &RealOptions::new(), None, &mut |_| {}).unwrap()
}

#[test]
fn small_dimensions_decide() {
    for (n, p, feasible) in [
        (1, 1, true),
        (1, 2, true),
        (1, 3, false),
        (2, 3, true),
        (2, 4, true),
        (2, 5, false),
    ] {
        let r = run(n, p);
        match (&r.answer, feasible) {
            (RealAnswer::Feasible { .. }, true) => {}
            (RealAnswer::Infeasible { check: Some(_), .. }, false) => {}
            (a, _) => panic!("n={n} p={p}: {a:?}"),
        }
    }
}
