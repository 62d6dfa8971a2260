//! Where the search meets the theory: lemma clauses, the theory check after
//! unit propagation, and the examination of models found elsewhere.

use super::{NONE, Solver, var};
use crate::real::theory::{Item, Lemma, Step, TheoryError};

impl Solver {
    /// The clause of a lemma: the conclusion (if any) first, then the negated
    /// facts and atoms, the latter sorted by trail position, latest first.
    pub(super) fn lemma_lits(&self, lemma: &Lemma) -> std::result::Result<Vec<u32>, String> {
        let mut lits: Vec<u32> = Vec::new();
        for &((i, j, c), _) in &lemma.atoms {
            let v = self
                .atom_var
                .get(&Item::Tight(i, j, c))
                .ok_or_else(|| format!("lemma names T({i},{j},{c}), which is no variable"))?;
            lits.push((*v << 1) | 1);
        }
        for (f, _) in &lemma.facts {
            let v = self
                .fact_var
                .get(*f)
                .ok_or_else(|| format!("lemma names fact {f}, which has no variable"))?;
            lits.push((*v << 1) | 1);
        }
        for &l in &lits {
            if self.lval(l) != -1 {
                return Err("a lemma names an item that is not asserted".into());
            }
        }
        lits.sort_by_key(|&l| std::cmp::Reverse(self.tpos[var(l)]));
        Ok(lits)
    }

    /// Records a lemma clause in the log and the lemma list, and stores it; returns its index.
    pub(super) fn store_lemma(&mut self, lits: &[u32], lemma: Lemma) -> u32 {
        let id = self.log.lemma();
        self.lemmas.push(lemma);
        let lbd = self.lbd(lits);
        self.attach(lits, id, true, lbd)
    }

    /// Runs the theory: `Ok(None)` when consistent, `Ok(Some(ci))` for a
    /// conflict clause, and `Err(None)` when it propagated a fact (propagate again).
    pub(super) fn theory_check(&mut self) -> std::result::Result<Option<u32>, Option<String>> {
        let Some(th) = self.theory.as_mut() else {
            return Ok(None);
        };
        let (val, fact_var) = (&self.val, &self.fact_var);
        let open = |f: usize| fact_var.get(f).is_some_and(|&v| val[2 * v as usize] == 0);
        match th.check_with(&open) {
            Ok(Step::Done) => Ok(None),
            Ok(Step::Refuted(list)) => {
                for (fact, lemma) in list {
                    let fv = self.fact_variable(fact);
                    let neg = (fv << 1) | 1;
                    if self.lval(neg) != 0 {
                        continue;
                    }
                    let mut lits = Vec::with_capacity(lemma.facts.len());
                    for (g, _) in &lemma.facts {
                        let v = self.fact_variable(*g);
                        if v != fv {
                            lits.push((v << 1) | 1);
                        }
                    }
                    if lits.iter().any(|&l| self.lval(l) != -1) {
                        return Err(Some("a refutation names a fact not in force".into()));
                    }
                    lits.sort_by_key(|&l| std::cmp::Reverse(self.tpos[var(l)]));
                    lits.insert(0, neg);
                    let id = self.log.lemma();
                    self.lemmas.push(lemma);
                    let ci = self.attach(&lits, id, false, 2);
                    self.enqueue(neg, ci);
                }
                Err(None)
            }
            Ok(Step::Implied { fact, lemma }) => {
                let fv = self.fact_variable(fact);
                let mut lits = self.lemma_lits(&lemma).map_err(Some)?;
                let f = fv << 1;
                match self.lval(f) {
                    0 => {
                        lits.insert(0, f);
                        let ci = self.store_lemma(&lits, lemma);
                        self.enqueue(f, ci);
                        Err(None)
                    }
                    -1 => {
                        lits.push(f);
                        lits.sort_by_key(|&l| std::cmp::Reverse(self.tpos[var(l)]));
                        self.stats.theory_conflicts += 1;
                        Ok(Some(self.store_lemma(&lits, lemma)))
                    }
                    _ => Err(Some(format!("fact {fact} is in force and violated"))),
                }
            }
            Err(TheoryError::Conflict(lemma)) => {
                self.stats.theory_conflicts += 1;
                let lits = self.lemma_lits(&lemma).map_err(Some)?;
                Ok(Some(self.store_lemma(&lits, *lemma)))
            }
            Err(TheoryError::Internal(e)) => Err(Some(e)),
        }
    }

    /// Examines a full assignment found elsewhere (an external solver's model
    /// of the skeleton and the lemmas) and learns from it as much as one
    /// theory pass allows. Its true tight atoms are asserted one at a time,
    /// the theory checked after each; an atom that makes a conflict yields
    /// a lemma and is then left out (the others are asserted again), so one
    /// model gives up to `max_lemmas` distinct lemmas instead of one.
    /// Returns `true` when every true atom was kept, so the theory is
    /// consistent with the whole model: then the model's literals are
    /// assigned here (for [`Solver::value`]) and [`Solver::theory`] holds
    /// the profile and potentials of an orbit; `false` after lemmas were added.
    ///
    /// # Errors
    /// A message when the theory fails internally.
    pub fn refine(
        &mut self,
        model: &[bool],
        max_lemmas: usize,
    ) -> std::result::Result<bool, String> {
        self.backtrack(0);
        self.lim.push(self.trail.len());
        let atoms: Vec<u32> = (0..self.nvars.min(model.len()))
            .filter(|&v| model[v] && matches!(self.atom[v], Some(Item::Tight(..))))
            .map(|v| (v as u32) << 1)
            .collect();
        let mut kept: Vec<u32> = Vec::with_capacity(atoms.len());
        let mut found = 0usize;
        for &l in &atoms {
            if self.lval(l) != 0 {
                continue;
            }
            self.enqueue(l, NONE);
            if self.settle()? {
                kept.push(l);
                continue;
            }
            found += 1;
            if found >= max_lemmas {
                break;
            }
            // Leave `l` out: assert the atoms kept so far again, which the
            // theory accepted before.
            self.backtrack(0);
            self.lim.push(self.trail.len());
            for &k in &kept {
                if self.lval(k) == 0 {
                    self.enqueue(k, NONE);
                }
            }
            if !self.settle()? {
                found += 1;
                break;
            }
        }
        if found > 0 {
            self.backtrack(0);
            return Ok(false);
        }
        for (v, &on) in model.iter().enumerate().take(self.nvars) {
            let l = ((v as u32) << 1) | u32::from(!on);
            if self.lval(l) == 0 {
                self.enqueue(l, NONE);
            }
        }
        // The model's other literals (facts among them) go to the theory too.
        if !self.settle()? {
            self.backtrack(0);
            return Ok(false);
        }
        Ok(true)
    }

    /// Runs the theory to a fixpoint: `true` when consistent, `false` after
    /// a conflict (its lemma stored).
    fn settle(&mut self) -> std::result::Result<bool, String> {
        loop {
            match self.theory_check() {
                Ok(None) => return Ok(true),
                Ok(Some(_)) => return Ok(false),
                Err(None) => {}
                Err(Some(e)) => return Err(e),
            }
        }
    }
}
