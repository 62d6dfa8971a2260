//! Variables, literals and CNF formulas.
//!
//! Numbering: a [`Var`] holds its DIMACS number, which starts at 1. Where a
//! 0-based index is needed (a model as `Vec<bool>`, varisat's `Var::from_index`)
//! the conversion is [`Var::index`], and it happens only there.

use std::fmt;

/// A propositional variable, numbered from 1 as in DIMACS.
#[derive(Copy, Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Var(u32);

impl Var {
    /// The variable with DIMACS number `n ≥ 1`.
    ///
    /// # Panics
    /// When `n` is 0 or exceeds `i32::MAX` (DIMACS literals are signed 32-bit).
    pub fn from_dimacs(n: u32) -> Var {
        assert!(
            n >= 1 && n <= i32::MAX as u32,
            "DIMACS variable {n} out of range"
        );
        Var(n)
    }

    /// The DIMACS number (1-based).
    pub fn dimacs(self) -> u32 {
        self.0
    }

    /// The 0-based index.
    pub fn index(self) -> usize {
        (self.0 - 1) as usize
    }

    /// The positive literal.
    pub fn pos(self) -> Lit {
        Lit(self.0 as i32)
    }

    /// The negative literal.
    #[allow(clippy::should_implement_trait)] // a variable is not negated, it has a negative literal
    pub fn neg(self) -> Lit {
        Lit(-(self.0 as i32))
    }
}

/// A literal: a variable or its negation, stored as a signed DIMACS integer.
#[derive(Copy, Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Lit(i32);

impl Lit {
    /// The literal with DIMACS value `n ≠ 0`.
    ///
    /// # Panics
    /// When `n` is 0 or `i32::MIN`.
    pub fn from_dimacs(n: i32) -> Lit {
        assert!(n != 0 && n != i32::MIN, "DIMACS literal {n} out of range");
        Lit(n)
    }

    /// The signed DIMACS value.
    pub fn dimacs(self) -> i32 {
        self.0
    }

    /// The variable.
    pub fn var(self) -> Var {
        Var(self.0.unsigned_abs())
    }

    /// Whether the literal is the variable itself (not its negation).
    pub fn is_positive(self) -> bool {
        self.0 > 0
    }

    /// Whether the literal is true under `model` (indexed by [`Var::index`]).
    pub fn holds(self, model: &[bool]) -> bool {
        model[self.var().index()] == self.is_positive()
    }
}

impl std::ops::Not for Lit {
    type Output = Lit;
    fn not(self) -> Lit {
        Lit(-self.0)
    }
}

impl fmt::Display for Lit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0)
    }
}

/// Per-family statistics: how many variables and clauses a constraint family added.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct FamilyCount {
    /// The family's label, e.g. `coord-order`.
    pub family: String,
    /// Variables introduced by the family.
    pub vars: u64,
    /// Clauses added by the family.
    pub clauses: u64,
}

impl FamilyCount {
    /// The count of family `family` of size `size`.
    pub fn new(family: &str, size: Size) -> FamilyCount {
        FamilyCount {
            family: family.to_string(),
            vars: size.vars,
            clauses: size.clauses,
        }
    }

    /// The variables and clauses without the label.
    pub fn size(&self) -> Size {
        Size {
            vars: self.vars,
            clauses: self.clauses,
        }
    }
}

/// How many variables and clauses a constraint family adds.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Size {
    /// Variables introduced.
    pub vars: u64,
    /// Clauses added.
    pub clauses: u64,
}

impl Size {
    /// `vars` variables and `clauses` clauses.
    pub const fn new(vars: u64, clauses: u64) -> Size {
        Size { vars, clauses }
    }

    /// Clauses only, no variables.
    pub const fn clauses(clauses: u64) -> Size {
        Size { vars: 0, clauses }
    }
}

impl std::ops::Add for Size {
    type Output = Size;
    fn add(self, o: Size) -> Size {
        Size::new(self.vars + o.vars, self.clauses + o.clauses)
    }
}

impl std::ops::AddAssign for Size {
    fn add_assign(&mut self, o: Size) {
        *self = *self + o;
    }
}

impl std::iter::Sum for Size {
    fn sum<I: Iterator<Item = Size>>(it: I) -> Size {
        it.fold(Size::default(), |a, b| a + b)
    }
}

/// A CNF formula stored flat: all literals in one vector, clause starts in another.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Cnf {
    num_vars: u32,
    lits: Vec<Lit>,
    starts: Vec<usize>,
}

impl Cnf {
    /// An empty formula over no variables.
    pub fn new() -> Cnf {
        Cnf::default()
    }

    /// Number of variables (the largest DIMACS number that may occur).
    pub fn num_vars(&self) -> u32 {
        self.num_vars
    }

    /// Declares variables up to DIMACS number `n` (never lowers the count).
    pub fn reserve_vars(&mut self, n: u32) {
        self.num_vars = self.num_vars.max(n);
    }

    /// Number of clauses.
    pub fn num_clauses(&self) -> usize {
        self.starts.len()
    }

    /// Total number of literal occurrences.
    pub fn num_lits(&self) -> usize {
        self.lits.len()
    }

    /// Appends a clause; variables beyond [`Cnf::num_vars`] raise the count.
    pub fn add_clause(&mut self, clause: &[Lit]) {
        self.starts.push(self.lits.len());
        for &l in clause {
            self.num_vars = self.num_vars.max(l.var().dimacs());
        }
        self.lits.extend_from_slice(clause);
    }

    /// Keeps the first `n` clauses (all of them when there are fewer) and
    /// drops the rest. The variable count stays as it is, even where a
    /// dropped clause had raised it.
    pub fn truncate(&mut self, n: usize) {
        if n < self.starts.len() {
            self.lits.truncate(self.starts[n]);
            self.starts.truncate(n);
        }
    }

    /// Clause `i`.
    pub fn clause(&self, i: usize) -> &[Lit] {
        let end = self.starts.get(i + 1).copied().unwrap_or(self.lits.len());
        &self.lits[self.starts[i]..end]
    }

    /// All clauses in order.
    pub fn clauses(&self) -> impl Iterator<Item = &[Lit]> + '_ {
        (0..self.num_clauses()).map(move |i| self.clause(i))
    }

    /// The index of the first clause that `model` falsifies, if any.
    ///
    /// `model` is indexed by [`Var::index`] and must cover [`Cnf::num_vars`].
    pub fn first_falsified(&self, model: &[bool]) -> Option<usize> {
        (0..self.num_clauses()).find(|&i| !self.clause(i).iter().any(|l| l.holds(model)))
    }
}

/// Renders a clause in DIMACS form, with the closing 0.
pub fn clause_text(clause: &[Lit]) -> String {
    let mut s = String::new();
    for l in clause {
        s.push_str(&l.0.to_string());
        s.push(' ');
    }
    s.push('0');
    s
}

/// A formula followed by unit clauses that change from one use to the
/// next (the cubes of a split, one after another): the formula's clauses are
/// copied once, and [`WithUnits::set`] replaces the units of the use before.
/// A range or merge of many small cubes spent most of its time copying the
/// formula per cube before (measured on 2026-12-04: 1,000 cubes of
/// {−2,…,2}^4, p = 29, 6.6 s of CPU with the copies, 0.5 s without).
#[derive(Clone, Debug)]
pub struct WithUnits {
    cnf: Cnf,
    base: usize,
}

impl WithUnits {
    /// `base` with no units yet.
    pub fn new(base: &Cnf) -> WithUnits {
        WithUnits {
            cnf: base.clone(),
            base: base.num_clauses(),
        }
    }

    /// The formula with `units` as unit clauses after its own, in order
    /// (the CNF a cube file holds).
    ///
    /// # Errors
    /// The first unit over a variable the formula does not have: a cube that
    /// names one is not a cube of this formula, and adding it would raise
    /// the variable count for every use after it. The buffer then holds
    /// the formula alone.
    pub fn set(&mut self, units: impl IntoIterator<Item = Lit>) -> Result<&Cnf, Lit> {
        self.cnf.truncate(self.base);
        let vars = self.cnf.num_vars() as usize;
        for l in units {
            if l.var().index() >= vars {
                self.cnf.truncate(self.base);
                return Err(l);
            }
            self.cnf.add_clause(&[l]);
        }
        Ok(&self.cnf)
    }

    /// The formula with the units of the last [`WithUnits::set`].
    pub fn cnf(&self) -> &Cnf {
        &self.cnf
    }

    /// The formula with the last units, owned.
    pub fn into_cnf(self) -> Cnf {
        self.cnf
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_replace_the_units_of_the_use_before() {
        let mut f = Cnf::new();
        f.add_clause(&[Lit::from_dimacs(1), Lit::from_dimacs(-2)]);
        f.add_clause(&[Lit::from_dimacs(2), Lit::from_dimacs(3)]);
        let mut w = WithUnits::new(&f);
        let lits = |c: &Cnf| c.clauses().map(<[Lit]>::to_vec).collect::<Vec<_>>();
        let a = w.set([Lit::from_dimacs(-1), Lit::from_dimacs(3)]).unwrap();
        assert_eq!(a.num_clauses(), 4);
        assert_eq!(a.clause(3), &[Lit::from_dimacs(3)]);
        let b = lits(w.set([Lit::from_dimacs(2)]).unwrap());
        let mut expected = lits(&f);
        expected.push(vec![Lit::from_dimacs(2)]);
        assert_eq!(b, expected);
        assert_eq!(lits(w.set([]).unwrap()), lits(&f));
        // A unit beyond the formula's variables is refused, and the buffer
        // keeps neither it nor the units before it.
        assert_eq!(
            w.set([Lit::from_dimacs(1), Lit::from_dimacs(-4)]),
            Err(Lit::from_dimacs(-4))
        );
        assert_eq!(lits(w.cnf()), lits(&f));
        assert_eq!(w.cnf().num_vars(), 3);
        let mut t = f.clone();
        t.truncate(5);
        assert_eq!(t.num_clauses(), 2);
        t.truncate(0);
        assert_eq!((t.num_clauses(), t.num_lits(), t.num_vars()), (0, 0, 3));
    }

    #[test]
    fn literals_and_clauses() {
        let a = Var::from_dimacs(1);
        let b = Var::from_dimacs(3);
        let mut cnf = Cnf::new();
        cnf.add_clause(&[a.pos(), b.neg()]);
        cnf.add_clause(&[!a.pos()]);
        assert_eq!(cnf.num_vars(), 3);
        assert_eq!(cnf.clause(0), &[Lit::from_dimacs(1), Lit::from_dimacs(-3)]);
        assert_eq!(clause_text(cnf.clause(1)), "-1 0");
        assert_eq!(cnf.first_falsified(&[false, false, false]), None);
        assert_eq!(cnf.first_falsified(&[true, false, true]), Some(1));
        assert_eq!(cnf.first_falsified(&[false, false, true]), Some(0));
        assert_eq!(a.index(), 0);
    }
}
