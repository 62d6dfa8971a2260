//! An exact, incremental simplex over the profile variables `D_1..D_m`.
//!
//! The algorithm is the bounded simplex of B. Dutertre and L. de Moura, A
//! fast linear-arithmetic solver for DPLL(T), CAV 2006 (LNCS 4144): every
//! constraint is a row `s = a·D` with bounds on the slack `s`; rows are added
//! once and kept, bounds are asserted and retracted as the search moves, and
//! [`ExactLp::check`] restores feasibility by pivoting with Bland's rule
//! (smallest index first), which terminates. When no pivot can repair a row,
//! the row itself is the conflict: its coefficients are Farkas multipliers
//! over the bounds it mentions ([`Conflict`]).
//!
//! The variables here are the `m` profile values (indices `0..m`, lower bound
//! 1: the scaling normalisation `D_k ≥ 1`), one permanent row `D_1 − D_u ≤ 0`
//! per unit class `u ≠ 1` (the multiplier normalisation), and the cut rows
//! `a·D ≥ 0` that the theory adds, whose bound is switched on and off.
//!
//! Arithmetic is exact: rationals over `i128` with every operation checked,
//! and on the first overflow the whole tableau is rebuilt over big integers
//! from the recorded rows and bounds (same variable numbers, so the caller
//! sees no difference). No floating point is used.

use num_bigint::BigInt;
use num_rational::{BigRational, Ratio};
use num_traits::{CheckedAdd, CheckedDiv, CheckedMul, CheckedSub, One, Signed, Zero};

/// The exact numbers the tableau can be built over.
pub trait Num: Clone + PartialOrd + std::fmt::Debug {
    /// The integer `v`.
    fn int(v: i64) -> Self;
    /// `self + o`, `None` on overflow.
    fn add(&self, o: &Self) -> Option<Self>;
    /// `self − o`, `None` on overflow.
    fn sub(&self, o: &Self) -> Option<Self>;
    /// `self · o`, `None` on overflow.
    fn mul(&self, o: &Self) -> Option<Self>;
    /// `self / o` for `o ≠ 0`, `None` on overflow.
    fn div(&self, o: &Self) -> Option<Self>;
    /// Whether the number is 0.
    fn nil(&self) -> bool;
    /// Whether the number is > 0.
    fn pos(&self) -> bool;
    /// Whether the number is < 0.
    fn neg(&self) -> bool;
    /// The number as a big rational.
    fn big(&self) -> BigRational;
}

impl Num for Ratio<i128> {
    fn int(v: i64) -> Self {
        Ratio::from_integer(v as i128)
    }
    // Most entries of the tableau are integers (the rows have coefficients
    // ±1), and `Ratio`'s general operations spend two gcds and divisions of
    // 128-bit numbers on every call; an integer result is `n/1` in
    // `Ratio`'s reduced form, so building it raw gives the same value.
    fn add(&self, o: &Self) -> Option<Self> {
        if self.denom() == &1 && o.denom() == &1 {
            return Some(Ratio::new_raw(
                i128::checked_add(*self.numer(), *o.numer())?,
                1,
            ));
        }
        self.checked_add(o)
    }
    fn sub(&self, o: &Self) -> Option<Self> {
        if self.denom() == &1 && o.denom() == &1 {
            return Some(Ratio::new_raw(
                i128::checked_sub(*self.numer(), *o.numer())?,
                1,
            ));
        }
        self.checked_sub(o)
    }
    fn mul(&self, o: &Self) -> Option<Self> {
        if self.denom() == &1 && o.denom() == &1 {
            return Some(Ratio::new_raw(
                i128::checked_mul(*self.numer(), *o.numer())?,
                1,
            ));
        }
        self.checked_mul(o)
    }
    fn div(&self, o: &Self) -> Option<Self> {
        if o == &Ratio::from_integer(1) {
            return Some(*self);
        }
        self.checked_div(o)
    }
    fn nil(&self) -> bool {
        self.is_zero()
    }
    fn pos(&self) -> bool {
        self.is_positive()
    }
    fn neg(&self) -> bool {
        self.is_negative()
    }
    fn big(&self) -> BigRational {
        BigRational::new(BigInt::from(*self.numer()), BigInt::from(*self.denom()))
    }
}

impl Num for BigRational {
    fn int(v: i64) -> Self {
        BigRational::from_integer(BigInt::from(v))
    }
    fn add(&self, o: &Self) -> Option<Self> {
        Some(self + o)
    }
    fn sub(&self, o: &Self) -> Option<Self> {
        Some(self - o)
    }
    fn mul(&self, o: &Self) -> Option<Self> {
        Some(self * o)
    }
    fn div(&self, o: &Self) -> Option<Self> {
        if o.is_zero() { None } else { Some(self / o) }
    }
    fn nil(&self) -> bool {
        self.is_zero()
    }
    fn pos(&self) -> bool {
        self.is_positive()
    }
    fn neg(&self) -> bool {
        self.is_negative()
    }
    fn big(&self) -> BigRational {
        self.clone()
    }
}

/// Which bound of a variable a Farkas multiplier applies to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Side {
    /// The lower bound (`x ≥ l`).
    Lower,
    /// The upper bound (`x ≤ u`).
    Upper,
}

/// An infeasible set of bounds: `Σ mult · (bound as "expr ≥ const")` reads
/// `0 ≥ positive`. Each entry is `(variable, side, multiplier > 0)`.
#[derive(Clone, Debug)]
pub struct Conflict {
    /// The bounds used and their multipliers.
    pub terms: Vec<(usize, Side, BigRational)>,
}

/// Overflow marker of the checked engine.
#[derive(Debug)]
struct Overflow;

/// A dense tableau over numbers `N`.
#[derive(Clone, Debug)]
struct Tableau<N: Num> {
    m: usize,
    lo: Vec<Option<N>>,
    hi: Vec<Option<N>>,
    val: Vec<N>,
    /// For each variable: `Some(r)` when it is basic in row `r`.
    row_of: Vec<Option<usize>>,
    /// For each variable: `Some(j)` when it is nonbasic in column `j`.
    col_of: Vec<Option<usize>>,
    /// Column `j` holds this variable.
    cols: Vec<usize>,
    /// Rows: basic variable and its coefficients over the columns.
    rows: Vec<(usize, Vec<N>)>,
}

macro_rules! ck {
    ($e:expr) => {
        $e.ok_or(Overflow)?
    };
}

impl<N: Num> Tableau<N> {
    fn new(m: usize) -> Self {
        Tableau {
            m,
            lo: vec![Some(N::int(1)); m],
            hi: vec![None; m],
            val: vec![N::int(1); m],
            row_of: vec![None; m],
            col_of: (0..m).map(Some).collect(),
            cols: (0..m).collect(),
            rows: Vec::new(),
        }
    }

    /// Adds the basic variable `s = Σ coeffs[k]·D_k`; returns its index.
    fn add_row(&mut self, coeffs: &[i64]) -> Result<usize, Overflow> {
        let mut row = vec![N::int(0); self.m];
        let mut value = N::int(0);
        for (k, &a) in coeffs.iter().enumerate() {
            if a == 0 {
                continue;
            }
            let a = N::int(a);
            value = ck!(value.add(&ck!(a.mul(&self.val[k]))));
            match (self.col_of[k], self.row_of[k]) {
                (Some(j), _) => row[j] = ck!(row[j].add(&a)),
                (None, Some(r)) => {
                    for (j, x) in self.rows[r].1.iter().enumerate() {
                        if !x.nil() {
                            row[j] = ck!(row[j].add(&ck!(a.mul(x))));
                        }
                    }
                }
                (None, None) => unreachable!("every variable is basic or nonbasic"),
            }
        }
        let v = self.val.len();
        self.lo.push(None);
        self.hi.push(None);
        self.val.push(value);
        self.row_of.push(Some(self.rows.len()));
        self.col_of.push(None);
        self.rows.push((v, row));
        Ok(v)
    }

    /// Moves nonbasic `x` to `v`, updating the basic variables.
    fn update(&mut self, x: usize, v: N) -> Result<(), Overflow> {
        let j = self.col_of[x].ok_or(Overflow)?;
        let delta = ck!(v.sub(&self.val[x]));
        for (b, row) in &self.rows {
            if !row[j].nil() {
                self.val[*b] = ck!(self.val[*b].add(&ck!(row[j].mul(&delta))));
            }
        }
        self.val[x] = v;
        Ok(())
    }

    fn set_lower(&mut self, x: usize, b: Option<N>) -> Result<(), Overflow> {
        self.lo[x] = b.clone();
        if let (Some(b), Some(_)) = (b, self.col_of[x])
            && self.val[x] < b
        {
            self.update(x, b)?;
        }
        Ok(())
    }

    fn set_upper(&mut self, x: usize, b: Option<N>) -> Result<(), Overflow> {
        self.hi[x] = b.clone();
        if let (Some(b), Some(_)) = (b, self.col_of[x])
            && self.val[x] > b
        {
            self.update(x, b)?;
        }
        Ok(())
    }

    /// Pivots basic row `r` with column `j`, after moving the basic variable to `v`.
    fn pivot_and_update(&mut self, r: usize, j: usize, v: N) -> Result<(), Overflow> {
        let xb = self.rows[r].0;
        let xn = self.cols[j];
        let a = self.rows[r].1[j].clone();
        let theta = ck!(ck!(v.sub(&self.val[xb])).div(&a));
        self.val[xn] = ck!(self.val[xn].add(&theta));
        for (b, row) in &self.rows {
            if *b != xb && !row[j].nil() {
                self.val[*b] = ck!(self.val[*b].add(&ck!(row[j].mul(&theta))));
            }
        }
        self.val[xb] = v;
        // Row r solved for xn: xn = (xb − Σ_{c≠j} a_c x_c) / a.
        let mut new = vec![N::int(0); self.m];
        for (c, x) in self.rows[r].1.iter().enumerate() {
            new[c] = if c == j {
                ck!(N::int(1).div(&a))
            } else if x.nil() {
                N::int(0)
            } else {
                ck!(ck!(N::int(0).sub(x)).div(&a))
            };
        }
        for (s, (_, row)) in self.rows.iter_mut().enumerate() {
            if s == r || row[j].nil() {
                continue;
            }
            let bj = row[j].clone();
            for c in 0..self.m {
                if c == j {
                    row[c] = ck!(bj.mul(&new[j]));
                } else if !new[c].nil() {
                    row[c] = ck!(row[c].add(&ck!(bj.mul(&new[c]))));
                }
            }
        }
        self.rows[r] = (xn, new);
        self.row_of[xn] = Some(r);
        self.col_of[xn] = None;
        self.row_of[xb] = None;
        self.col_of[xb] = Some(j);
        self.cols[j] = xb;
        Ok(())
    }

    /// Restores all bounds or returns a conflict (Bland's rule).
    fn check(&mut self) -> Result<Option<Conflict>, Overflow> {
        loop {
            let mut pick: Option<(usize, usize, bool)> = None; // (var, row, below)
            for (r, (b, _)) in self.rows.iter().enumerate() {
                let below = matches!(&self.lo[*b], Some(l) if self.val[*b] < *l);
                let above = matches!(&self.hi[*b], Some(u) if self.val[*b] > *u);
                if (below || above) && pick.is_none_or(|(v, _, _)| *b < v) {
                    pick = Some((*b, r, below));
                }
            }
            let Some((xb, r, below)) = pick else {
                return Ok(None);
            };
            let row = &self.rows[r].1;
            let mut best: Option<(usize, usize)> = None; // (var, column)
            for (j, a) in row.iter().enumerate() {
                if a.nil() {
                    continue;
                }
                let x = self.cols[j];
                let can_up = self.hi[x].as_ref().is_none_or(|u| self.val[x] < *u);
                let can_down = self.lo[x].as_ref().is_none_or(|l| self.val[x] > *l);
                let ok = if below == a.pos() { can_up } else { can_down };
                if ok && best.is_none_or(|(v, _)| x < v) {
                    best = Some((x, j));
                }
            }
            match best {
                Some((_, j)) => {
                    let target = if below {
                        self.lo[xb].clone()
                    } else {
                        self.hi[xb].clone()
                    };
                    self.pivot_and_update(r, j, target.ok_or(Overflow)?)?;
                }
                None => {
                    let one = BigRational::one();
                    let mut terms = vec![(xb, if below { Side::Lower } else { Side::Upper }, one)];
                    for (j, a) in row.iter().enumerate() {
                        if a.nil() {
                            continue;
                        }
                        let side = if below == a.pos() {
                            Side::Upper
                        } else {
                            Side::Lower
                        };
                        terms.push((self.cols[j], side, a.big().abs()));
                    }
                    return Ok(Some(Conflict { terms }));
                }
            }
        }
    }
}

/// What the caller asked for, kept to rebuild the tableau over big numbers.
#[derive(Clone, Debug, Default)]
struct Record {
    rows: Vec<Vec<i64>>,
    /// Per slack variable: lower bound 0 on, upper bound 0 on.
    lower_zero: Vec<bool>,
    upper_zero: Vec<bool>,
}

/// The exact incremental simplex: an `i128` tableau, replaced by a big-number
/// one on the first overflow.
#[derive(Clone, Debug)]
pub struct ExactLp {
    m: usize,
    small: Option<Tableau<Ratio<i128>>>,
    big: Option<Tableau<BigRational>>,
    record: Record,
}

impl ExactLp {
    /// `m` profile variables with `D_k ≥ 1`, and no rows.
    pub fn new(m: usize) -> ExactLp {
        ExactLp {
            m,
            small: Some(Tableau::new(m)),
            big: None,
            record: Record::default(),
        }
    }

    /// Number of profile variables.
    pub fn m(&self) -> usize {
        self.m
    }

    /// Whether the tableau has moved to big integers.
    pub fn is_big(&self) -> bool {
        self.big.is_some()
    }

    fn go_big(&mut self) {
        let mut t = Tableau::<BigRational>::new(self.m);
        for (i, r) in self.record.rows.iter().enumerate() {
            let Ok(v) = t.add_row(r) else { unreachable!() };
            debug_assert_eq!(v, self.m + i);
            if self.record.lower_zero[i] {
                let _ = t.set_lower(v, Some(BigRational::zero()));
            }
            if self.record.upper_zero[i] {
                let _ = t.set_upper(v, Some(BigRational::zero()));
            }
        }
        self.small = None;
        self.big = Some(t);
    }

    /// Runs `f` on the small tableau; on overflow rebuilds over big numbers
    /// from the record (which already holds the operation) and returns `None`.
    fn try_small<R>(
        &mut self,
        f: impl FnOnce(&mut Tableau<Ratio<i128>>) -> Result<R, Overflow>,
    ) -> Option<R> {
        let t = self.small.as_mut()?;
        match f(t) {
            Ok(r) => Some(r),
            Err(Overflow) => {
                self.go_big();
                None
            }
        }
    }

    /// Adds the row `s = Σ coeffs[k]·D_k` (no bound yet); returns the variable `s`.
    pub fn add_row(&mut self, coeffs: &[i64]) -> usize {
        self.record.rows.push(coeffs.to_vec());
        self.record.lower_zero.push(false);
        self.record.upper_zero.push(false);
        let v = self.m + self.record.rows.len() - 1;
        if self.small.is_some() {
            self.try_small(|t| t.add_row(coeffs));
        } else if let Some(t) = self.big.as_mut() {
            let _ = t.add_row(coeffs);
        }
        v
    }

    /// Switches the bound `s ≥ 0` (`upper = false`) or `s ≤ 0` (`upper = true`)
    /// of row variable `s` on or off.
    pub fn set_zero_bound(&mut self, s: usize, upper: bool, on: bool) {
        let Some(i) = s
            .checked_sub(self.m)
            .filter(|&i| i < self.record.rows.len())
        else {
            return;
        };
        if upper {
            self.record.upper_zero[i] = on;
        } else {
            self.record.lower_zero[i] = on;
        }
        if self.small.is_some() {
            self.try_small(|t| {
                let b = on.then(|| Ratio::from_integer(0));
                if upper {
                    t.set_upper(s, b)
                } else {
                    t.set_lower(s, b)
                }
            });
        } else if let Some(t) = self.big.as_mut() {
            let b = on.then(BigRational::zero);
            let _ = if upper {
                t.set_upper(s, b)
            } else {
                t.set_lower(s, b)
            };
        }
    }

    /// Restores feasibility, or returns a conflict.
    pub fn check(&mut self) -> Option<Conflict> {
        if self.small.is_some()
            && let Some(r) = self.try_small(|t| t.check())
        {
            return r;
        }
        self.big.as_mut().and_then(|t| t.check().ok().flatten())
    }

    /// The current values of `D_1..D_m` (feasible after a successful [`ExactLp::check`]).
    pub fn profile(&self) -> Vec<BigRational> {
        match (&self.small, &self.big) {
            (Some(t), _) => t.val[..self.m].iter().map(Num::big).collect(),
            (_, Some(t)) => t.val[..self.m].to_vec(),
            _ => Vec::new(),
        }
    }

    /// Number of rows in the tableau.
    pub fn num_rows(&self) -> usize {
        self.record.rows.len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(n: i64, d: i64) -> BigRational {
        BigRational::new(n.into(), d.into())
    }

    #[test]
    fn finds_feasible_points_and_conflicts() {
        // D_2 ≥ 2 D_1 (row 2D_1 − D_2 ≤ 0 as −2D_1 + D_2 ≥ 0), D_1 ≥ 1.
        let mut lp = ExactLp::new(2);
        let s = lp.add_row(&[-2, 1]);
        lp.set_zero_bound(s, false, true);
        assert!(lp.check().is_none());
        let d = lp.profile();
        assert!(d[1] >= q(2, 1) * d[0].clone() && d[0] >= q(1, 1));
        // and 3D_1 − D_2 ≤ ... : D_1 − D_2 + 0 ≥ 0 contradicts D_2 ≥ 2D_1 ≥ 2 > D_1.
        let t = lp.add_row(&[1, -1]);
        lp.set_zero_bound(t, false, true);
        let c = lp.check().expect("infeasible");
        // Farkas: multipliers over (s ≥ 0), (t ≥ 0), (D_1 ≥ 1).
        let mut sum = [q(0, 1), q(0, 1)];
        let mut rhs = q(0, 1);
        for (v, side, mu) in &c.terms {
            assert_eq!(*side, Side::Lower);
            let row: Vec<i64> = match *v {
                0 => vec![1, 0],
                1 => vec![0, 1],
                2 => vec![-2, 1],
                3 => vec![1, -1],
                _ => unreachable!(),
            };
            for k in 0..2 {
                sum[k] += mu * q(row[k], 1);
            }
            if *v < 2 {
                rhs += mu.clone();
            }
        }
        assert_eq!(sum, [q(0, 1), q(0, 1)]);
        assert!(rhs > q(0, 1));
        lp.set_zero_bound(t, false, false);
        assert!(lp.check().is_none());
    }

    #[test]
    fn overflow_falls_back_to_big_numbers() {
        // Rows with huge coefficients force the i128 tableau to overflow.
        let mut lp = ExactLp::new(3);
        let big = 1i64 << 62;
        let a = lp.add_row(&[big, -big + 1, 0]);
        let b = lp.add_row(&[0, big - 3, -big]);
        let c = lp.add_row(&[-big + 7, 0, big - 1]);
        for s in [a, b, c] {
            lp.set_zero_bound(s, false, true);
        }
        let r = lp.check();
        let d = lp.profile();
        if r.is_none() {
            let z = BigRational::zero();
            let dot = |cf: [i64; 3]| {
                cf.iter()
                    .zip(&d)
                    .fold(z.clone(), |acc, (a, x)| acc + q(*a, 1) * x)
            };
            assert!(dot([big, -big + 1, 0]) >= z);
            assert!(dot([0, big - 3, -big]) >= z);
            assert!(dot([-big + 7, 0, big - 1]) >= z);
        }
    }
}
