//! Integer boxes and the sup-norm.
//!
//! A [`Grid`] is a box `D = [a_1, b_1] × … × [a_n, b_n] ∩ Z^n`, given per
//! coordinate. Points are plain `Vec<i64>`; the sup-norm distance is
//! [`sup_dist`]. Coordinates are bounded by [`MAX_COORD`] in absolute value so
//! that every difference and every sum in the encoders and the verifier fits in
//! an `i64` with room to spare.

use std::fmt;

use crate::error::{Error, Result};

/// Largest absolute value a grid bound may have.
pub const MAX_COORD: i64 = 1_000_000_000;

/// Largest dimension accepted; far beyond what any CNF of this kind can solve.
pub const MAX_DIM: usize = 64;

/// A point of Z^n.
pub type Point = Vec<i64>;

/// An integer box, one inclusive range per coordinate.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct Grid {
    ranges: Vec<(i64, i64)>,
}

impl Grid {
    /// A box from inclusive ranges `(a_c, b_c)`.
    ///
    /// # Errors
    /// [`Error::GridSpec`] when there are no ranges, more than [`MAX_DIM`], a
    /// range is reversed (`a > b`) or a bound exceeds [`MAX_COORD`].
    pub fn new(ranges: Vec<(i64, i64)>) -> Result<Grid> {
        let spec = spec_of(&ranges);
        let bad = |reason: String| Error::GridSpec {
            spec: spec.clone(),
            reason,
        };
        if ranges.is_empty() {
            return Err(bad("the dimension must be at least 1".into()));
        }
        if ranges.len() > MAX_DIM {
            return Err(bad(format!(
                "dimension {} exceeds the supported maximum {MAX_DIM}",
                ranges.len()
            )));
        }
        for (c, &(a, b)) in ranges.iter().enumerate() {
            if a > b {
                return Err(bad(format!(
                    "coordinate {c}: range {a}..{b} is empty (the lower bound exceeds the upper)"
                )));
            }
            if a.abs() > MAX_COORD || b.abs() > MAX_COORD {
                return Err(bad(format!(
                    "coordinate {c}: bounds must lie within ±{MAX_COORD}"
                )));
            }
        }
        Ok(Grid { ranges })
    }

    /// Parses a grid from the command-line form.
    ///
    /// `spec` is either one range `a..b` used for every coordinate (then `dim`
    /// gives the dimension, 3 when absent) or a comma-separated list
    /// `a1..b1,a2..b2,…` with one range per coordinate (then `dim`, when given,
    /// must agree). A single integer `a` stands for `a..a`.
    ///
    /// # Errors
    /// [`Error::GridSpec`] naming the offending part of `spec`.
    pub fn parse(spec: &str, dim: Option<usize>) -> Result<Grid> {
        let bad = |reason: String| Error::GridSpec {
            spec: spec.to_string(),
            reason,
        };
        let trimmed = spec.trim();
        if trimmed.is_empty() {
            return Err(bad(
                "empty grid specification; expected e.g. -1..1 or 0..1,0..3".into(),
            ));
        }
        let mut ranges = Vec::new();
        for (c, part) in trimmed.split(',').enumerate() {
            ranges.push(parse_range(part.trim()).map_err(|r| bad(format!("part {}: {r}", c + 1)))?);
        }
        let ranges = match (ranges.len(), dim) {
            (_, Some(0)) => return Err(bad("the dimension must be at least 1".into())),
            (1, d) => {
                let d = d.unwrap_or(3);
                if d > MAX_DIM {
                    return Err(bad(format!(
                        "dimension {d} exceeds the supported maximum {MAX_DIM}"
                    )));
                }
                vec![ranges[0]; d]
            }
            (k, Some(d)) if k != d => {
                return Err(bad(format!(
                    "{k} ranges given but --dim is {d}; give one range for all coordinates or exactly {d}"
                )));
            }
            _ => ranges,
        };
        Grid::new(ranges).map_err(|e| match e {
            Error::GridSpec { reason, .. } => bad(reason),
            other => other,
        })
    }

    /// The dimension n.
    pub fn dim(&self) -> usize {
        self.ranges.len()
    }

    /// The inclusive ranges, one per coordinate.
    pub fn ranges(&self) -> &[(i64, i64)] {
        &self.ranges
    }

    /// Lower bound of coordinate `c`.
    pub fn lo(&self, c: usize) -> i64 {
        self.ranges[c].0
    }

    /// Upper bound of coordinate `c`.
    pub fn hi(&self, c: usize) -> i64 {
        self.ranges[c].1
    }

    /// `b_c − a_c`: the number of points in coordinate `c`, minus one.
    pub fn side(&self, c: usize) -> u64 {
        (self.ranges[c].1 - self.ranges[c].0) as u64
    }

    /// The largest side, which is also the diameter of the box.
    pub fn diameter(&self) -> u64 {
        (0..self.dim()).map(|c| self.side(c)).max().unwrap_or(0)
    }

    /// Number of points, saturating at `u128::MAX` (never reached in practice).
    pub fn num_points(&self) -> u128 {
        self.ranges.iter().fold(1u128, |acc, &(a, b)| {
            acc.saturating_mul((b - a + 1) as u128)
        })
    }

    /// Whether `z` lies in the box.
    pub fn contains(&self, z: &[i64]) -> bool {
        z.len() == self.dim()
            && z.iter()
                .zip(&self.ranges)
                .all(|(&v, &(a, b))| a <= v && v <= b)
    }

    /// The canonical text form, one range per coordinate: `-1..1,-1..1`.
    pub fn spec(&self) -> String {
        spec_of(&self.ranges)
    }

    /// The shortest text form: `-1..1` when all coordinates agree.
    pub fn short_spec(&self) -> String {
        if self.ranges.windows(2).all(|w| w[0] == w[1]) {
            let (a, b) = self.ranges[0];
            format!("{a}..{b}")
        } else {
            self.spec()
        }
    }

    /// All points of the box in lexicographic order (last coordinate fastest).
    pub fn points(&self) -> impl Iterator<Item = Point> + '_ {
        let mut next: Option<Point> = Some(self.ranges.iter().map(|r| r.0).collect());
        std::iter::from_fn(move || {
            let current = next.take()?;
            let mut succ = current.clone();
            for c in (0..succ.len()).rev() {
                if succ[c] < self.ranges[c].1 {
                    succ[c] += 1;
                    next = Some(succ);
                    break;
                }
                succ[c] = self.ranges[c].0;
            }
            Some(current)
        })
    }
}

impl fmt::Display for Grid {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let parts: Vec<String> = self
            .ranges
            .iter()
            .map(|&(a, b)| {
                if b - a <= 3 {
                    let vals: Vec<String> = (a..=b).map(|v| v.to_string()).collect();
                    format!("{{{}}}", vals.join(","))
                } else {
                    format!("{{{a}..{b}}}")
                }
            })
            .collect();
        if parts.windows(2).all(|w| w[0] == w[1]) && parts.len() > 1 {
            write!(f, "{}^{}", parts[0], parts.len())
        } else {
            write!(f, "{}", parts.join("×"))
        }
    }
}

fn spec_of(ranges: &[(i64, i64)]) -> String {
    ranges
        .iter()
        .map(|&(a, b)| format!("{a}..{b}"))
        .collect::<Vec<_>>()
        .join(",")
}

fn parse_range(part: &str) -> std::result::Result<(i64, i64), String> {
    let int = |s: &str| -> std::result::Result<i64, String> {
        s.trim()
            .parse::<i64>()
            .map_err(|_| format!("{s:?} is not an integer"))
    };
    if part.is_empty() {
        return Err("empty range".into());
    }
    match part.split_once("..") {
        Some((a, b)) => {
            let b = b.strip_prefix('=').unwrap_or(b);
            Ok((int(a)?, int(b)?))
        }
        None => {
            let a = int(part).map_err(|e| format!("{e}; expected a range such as -1..1"))?;
            Ok((a, a))
        }
    }
}

/// The sup-norm distance `max_c |y_c − z_c|`.
///
/// # Panics
/// When the points have different lengths (a programming error, not input).
pub fn sup_dist(y: &[i64], z: &[i64]) -> i64 {
    assert_eq!(y.len(), z.len(), "points of different dimensions");
    y.iter()
        .zip(z)
        .map(|(a, b)| (a - b).abs())
        .max()
        .unwrap_or(0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_uniform_and_listed_ranges() {
        let g = Grid::parse("-1..1", Some(4)).unwrap();
        assert_eq!(g.dim(), 4);
        assert_eq!(g.num_points(), 81);
        assert_eq!(g.short_spec(), "-1..1");
        let g = Grid::parse("0..1, -1..1,0..3", None).unwrap();
        assert_eq!(g.ranges(), &[(0, 1), (-1, 1), (0, 3)]);
        assert_eq!(g.num_points(), 24);
        assert_eq!(g.to_string(), "{0,1}×{-1,0,1}×{0,1,2,3}");
        assert_eq!(Grid::parse("-1..1", None).unwrap().dim(), 3);
        assert_eq!(
            Grid::parse("2", Some(2)).unwrap().ranges(),
            &[(2, 2), (2, 2)]
        );
        assert_eq!(Grid::parse("0..=2", Some(1)).unwrap().ranges(), &[(0, 2)]);
    }

    #[test]
    fn rejects_bad_specs_with_reasons() {
        let msg = |s: &str, d| Grid::parse(s, d).unwrap_err().to_string();
        assert!(
            msg("1..-1", None).contains("empty"),
            "{}",
            msg("1..-1", None)
        );
        assert!(msg("", None).contains("empty grid"));
        assert!(msg("a..2", None).contains("\"a\" is not an integer"));
        assert!(msg("0..1,0..1", Some(3)).contains("2 ranges given but --dim is 3"));
        assert!(msg("0..1", Some(0)).contains("at least 1"));
        assert!(msg("0..1,", None).contains("part 2: empty range"));
        assert!(msg("0..99999999999", None).contains("within"));
    }

    #[test]
    fn points_are_enumerated_in_order() {
        let g = Grid::parse("0..1,5..6", None).unwrap();
        let pts: Vec<Point> = g.points().collect();
        assert_eq!(pts, vec![vec![0, 5], vec![0, 6], vec![1, 5], vec![1, 6]]);
        assert_eq!(sup_dist(&[0, 5], &[1, 7]), 2);
    }
}
