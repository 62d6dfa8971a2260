//! The question orbitcnf answers, and the published bounds that frame it.
//!
//! A [`Question`] asks: on the grid `D`, is there a map `f: D → D`,
//! nonexpansive in the sup-norm, with a periodic point of minimal period `p`?
//! On a box this is equivalent to the existence of an *isometric cycle*: `p`
//! distinct points `x_0..x_{p−1}` of `D` with `‖x_i − x_{i+k}‖∞` independent
//! of `i` for every `k` (see `encodings/isometric-cycle.md`).

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::grid::Grid;

/// A period question on an integer box.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Question {
    /// The domain D.
    pub grid: Grid,
    /// The minimal period p asked for.
    pub period: usize,
}

/// The serialised form of a [`Question`], as written in JSON reports and CNF headers.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct QuestionRecord {
    /// The dimension n.
    pub dim: usize,
    /// The grid, one range per coordinate: `-1..1,-1..1`.
    pub grid: String,
    /// The period p.
    pub period: usize,
}

impl Question {
    /// A validated question.
    ///
    /// # Errors
    /// [`Error::Question`] when `period` is 0 or exceeds the number of grid
    /// points (an orbit of minimal period p has p distinct points).
    pub fn new(grid: Grid, period: usize) -> Result<Question> {
        if period == 0 {
            return Err(Error::Question(
                "the period must be at least 1 (got 0)".into(),
            ));
        }
        let points = grid.num_points();
        if period as u128 > points {
            return Err(Error::Question(format!(
                "period {period} exceeds the {points} points of the grid {}; \
                 an orbit of minimal period p has p distinct points",
                grid.spec()
            )));
        }
        Ok(Question { grid, period })
    }

    /// The dimension n.
    pub fn dim(&self) -> usize {
        self.grid.dim()
    }

    /// The record written into reports and headers.
    pub fn record(&self) -> QuestionRecord {
        QuestionRecord {
            dim: self.dim(),
            grid: self.grid.spec(),
            period: self.period,
        }
    }

    /// Rebuilds a question from its record.
    ///
    /// # Errors
    /// As [`Grid::parse`] and [`Question::new`].
    pub fn from_record(r: &QuestionRecord) -> Result<Question> {
        Question::new(Grid::parse(&r.grid, Some(r.dim))?, r.period)
    }

    /// One-line statement of the question.
    pub fn statement(&self) -> String {
        format!(
            "a sup-norm nonexpansive map on {} (n = {}) with a periodic point of minimal period {}",
            self.grid,
            self.dim(),
            self.period
        )
    }
}

/// Number of coordinates whose range has more than one point: the dimension
/// the box really has. A side of one point adds nothing to any distance.
pub fn effective_dim(grid: &Grid) -> usize {
    (0..grid.dim()).filter(|&c| grid.side(c) > 0).count()
}

/// `max_k 2^k·C(n,k)`: every period of a sup-norm nonexpansive map on a
/// subset of R^n is at most this (B. Lemmens and M. Scheutzow, On the
/// dynamics of sup-norm non-expansive maps, Ergodic Theory Dynam. Systems 25
/// (2005) 861–871). Saturates at `u128::MAX`.
pub fn lemmens_scheutzow_bound(n: usize) -> u128 {
    let mut best = 1u128;
    let mut binom = 1u128; // C(n, k)
    for k in 0..=n {
        if k > 0 {
            binom = binom.saturating_mul((n - k + 1) as u128) / k as u128;
        }
        let pow = if k < 127 { 1u128 << k } else { u128::MAX };
        best = best.max(binom.saturating_mul(pow));
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bound_values_match_the_table_in_lemmens_scheutzow_2005() {
        // Values for n = 1..8 as tabulated in MATH.md from the formula of the paper.
        let got: Vec<u128> = (1..=8).map(lemmens_scheutzow_bound).collect();
        assert_eq!(got, vec![2, 4, 12, 32, 80, 240, 672, 1792]);
    }

    #[test]
    fn questions_are_validated() {
        let g = Grid::parse("-1..1", Some(2)).unwrap();
        assert!(
            Question::new(g.clone(), 0)
                .unwrap_err()
                .to_string()
                .contains("at least 1")
        );
        let e = Question::new(g.clone(), 10).unwrap_err().to_string();
        assert!(e.contains("period 10 exceeds the 9 points"), "{e}");
        let q = Question::new(g, 9).unwrap();
        assert_eq!(Question::from_record(&q.record()).unwrap(), q);
    }

    #[test]
    fn sides_of_one_point_do_not_count() {
        let g = Grid::parse("0..2,5..5,0..1", None).unwrap();
        assert_eq!(effective_dim(&g), 2);
    }
}
