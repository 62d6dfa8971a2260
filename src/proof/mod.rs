//! Certificates for "infeasible": unsatisfiability proofs, produced and checked.
//!
//! A model is checked against every clause before orbitcnf believes a
//! "feasible" answer. This module does the same for "infeasible": the bundled
//! solver writes a proof of unsatisfiability ([`produce`]), and orbitcnf checks
//! it with its own LRAT checker ([`lrat`]), which shares no code with the
//! solver or with varisat's checker.
//!
//! * [`produce::solve_with_proofs`] runs varisat 0.2.2 and writes an LRAT
//!   proof (through `varisat-lrat`) and/or a DRAT proof of an UNSAT answer.
//! * [`lrat::check_lrat`] checks an LRAT proof (text or binary) against a
//!   [`Cnf`](crate::cnf::Cnf) and reports [`lrat::LratSummary`] or a typed
//!   [`lrat::LratError`] with the step and clause id where it went wrong.
//! * [`produce::certify`] does both in memory: solve, and on UNSAT check the
//!   LRAT proof before answering.
//!
//! A DRAT proof can get a second opinion from an external checker such as
//! `rate` (the tests do this when the `rate` binary is on `PATH`).

pub mod lrat;
pub mod produce;

pub use lrat::{
    LratError, LratFormat, LratOptions, LratReason, LratSummary, check_lrat, check_lrat_with,
};
pub use produce::{
    Certification, ProofOutcome, ProofRoute, ProofSinks, certify, solve_with_proof_sinks,
    solve_with_proofs,
};

/// Small formulas for the tests of this module.
#[cfg(test)]
pub(crate) mod testgen {
    use crate::cnf::{Cnf, Var};

    /// The pigeonhole formula PHP(pigeons, holes): unsatisfiable when pigeons > holes.
    /// Variable `i·holes + j + 1` says pigeon `i` sits in hole `j`.
    pub fn php(pigeons: u32, holes: u32) -> Cnf {
        let v = |i: u32, j: u32| Var::from_dimacs(i * holes + j + 1);
        let mut cnf = Cnf::new();
        for i in 0..pigeons {
            let c: Vec<_> = (0..holes).map(|j| v(i, j).pos()).collect();
            cnf.add_clause(&c);
        }
        for j in 0..holes {
            for i in 0..pigeons {
                for k in i + 1..pigeons {
                    cnf.add_clause(&[v(i, j).neg(), v(k, j).neg()]);
                }
            }
        }
        cnf
    }

    /// A deterministic xorshift generator.
    pub struct Rng(pub u64);

    impl Rng {
        /// The next 64 random bits.
        pub fn next(&mut self) -> u64 {
            self.0 ^= self.0 << 13;
            self.0 ^= self.0 >> 7;
            self.0 ^= self.0 << 17;
            self.0
        }

        /// A number in `0..n`.
        pub fn below(&mut self, n: u64) -> u64 {
            self.next() % n
        }
    }

    /// A random 3-CNF over `vars` variables with `clauses` clauses of three distinct variables.
    pub fn random_3sat(vars: u32, clauses: usize, seed: u64) -> Cnf {
        let mut rng = Rng(seed.wrapping_mul(0x9e37_79b9_7f4a_7c15) | 1);
        let mut cnf = Cnf::new();
        cnf.reserve_vars(vars);
        for _ in 0..clauses {
            let mut c = Vec::with_capacity(3);
            while c.len() < 3 {
                let v = Var::from_dimacs(rng.below(u64::from(vars)) as u32 + 1);
                if c.iter().any(|l: &crate::cnf::Lit| l.var() == v) {
                    continue;
                }
                c.push(if rng.next() & 1 == 0 {
                    v.pos()
                } else {
                    v.neg()
                });
            }
            cnf.add_clause(&c);
        }
        cnf
    }

    /// The CNF in DIMACS.
    pub fn dimacs(cnf: &Cnf) -> String {
        let mut s = format!("p cnf {} {}\n", cnf.num_vars(), cnf.num_clauses());
        for c in cnf.clauses() {
            s.push_str(&crate::cnf::clause_text(c));
            s.push('\n');
        }
        s
    }
}
