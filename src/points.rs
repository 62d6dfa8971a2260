//! Finite point sets: domains D ⊂ Z^n that need not be boxes.
//!
//! A [`PointSet`] is a nonempty set of distinct integer points of one
//! dimension, kept in lexicographic order; that order numbers the points
//! `0..|D|` for the full-map encoding (`encodings/full-map.md`). Sets are read
//! from files in one of two forms ([`PointSet::parse`]):
//!
//! - one point per line, coordinates separated by spaces and/or commas,
//!   optionally wrapped in `(…)` or `[…]`; `#` starts a comment; blank lines
//!   are skipped;
//! - JSON, an array of integer arrays: `[[0,1],[2,2]]`.
//!
//! Every error names the file and the 1-based line. A point given twice is an
//! error rather than silently merged: in a hand-written list a repeat is far
//! more often a typo for another point than an intended duplicate.
//!
//! The module also computes the *ambient isometries* of D: the maps
//! `x ↦ Px + b` (P a signed permutation matrix) that send D onto itself. They
//! form a subgroup of the metric isometries of (D, ‖·‖∞), which is all the
//! full-map symmetry breaking needs (any bijection of D preserving distances
//! conjugates nonexpansive maps to nonexpansive maps).

use std::fmt;
use std::path::Path;

use crate::error::{Error, Result};
use crate::grid::{Grid, MAX_COORD, MAX_DIM, Point};

/// Largest number of points accepted; the full-map CNF grows like `|D|^4`,
/// so sets near this size are refused by the clause limit anyway, and the
/// `|D|²` distance table stays small even when that limit is lifted.
pub const MAX_POINTS: usize = 2_000;

/// A nonempty finite set of distinct points of Z^n, in lexicographic order.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct PointSet {
    points: Vec<Point>,
}

impl PointSet {
    /// A set from `points`, which may come in any order.
    ///
    /// # Errors
    /// [`Error::Question`] when the list is empty or longer than
    /// [`MAX_POINTS`], points differ in dimension, the dimension is 0 or above
    /// [`MAX_DIM`], a coordinate exceeds [`MAX_COORD`], or a point repeats.
    pub fn new(points: Vec<Point>) -> Result<PointSet> {
        let bad = |reason: String| Error::Question(format!("point set: {reason}"));
        let first = points.first().ok_or_else(|| bad("no points".into()))?;
        if points.len() > MAX_POINTS {
            return Err(bad(format!(
                "{} points exceed the supported maximum {MAX_POINTS}",
                points.len()
            )));
        }
        let n = first.len();
        if n == 0 || n > MAX_DIM {
            return Err(bad(format!(
                "dimension {n}; it must lie between 1 and {MAX_DIM}"
            )));
        }
        for (i, z) in points.iter().enumerate() {
            if z.len() != n {
                return Err(bad(format!(
                    "point {i} {z:?} has {} coordinates, point 0 has {n}",
                    z.len()
                )));
            }
            if z.iter().any(|v| v.abs() > MAX_COORD) {
                return Err(bad(format!(
                    "point {i} {z:?}: coordinates must lie within ±{MAX_COORD}"
                )));
            }
        }
        let mut sorted = points;
        sorted.sort();
        if let Some(w) = sorted.windows(2).find(|w| w[0] == w[1]) {
            return Err(bad(format!("the point {:?} is given twice", w[0])));
        }
        Ok(PointSet { points: sorted })
    }

    /// Every point of the box `g`.
    pub fn from_grid(g: &Grid) -> PointSet {
        // Grid::points enumerates in lexicographic order, distinct by construction.
        PointSet {
            points: g.points().collect(),
        }
    }

    /// Reads a point file (see the module docs for the two forms).
    ///
    /// # Errors
    /// [`Error::Io`] when the file cannot be read, otherwise as [`PointSet::parse`].
    pub fn read(path: &Path) -> Result<PointSet> {
        let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
        PointSet::parse(&text, &path.display().to_string())
    }

    /// Parses the text of a point file; `path` is used in messages only.
    ///
    /// # Errors
    /// [`Error::Parse`] at the offending line: a token that is not an
    /// integer, a coordinate beyond [`MAX_COORD`], a point whose dimension
    /// differs from the first point's, a point given twice (both lines are
    /// named), malformed JSON, or no points at all (line 0).
    pub fn parse(text: &str, path: &str) -> Result<PointSet> {
        let is_json = text
            .lines()
            .map(|l| l.split('#').next().unwrap_or("").trim())
            .find(|l| !l.is_empty())
            .is_some_and(|l| l.starts_with("[["));
        let located = if is_json {
            parse_json(text).map_err(|(line, reason)| Error::parse(path, line, reason))?
        } else {
            parse_lines(text).map_err(|(line, reason)| Error::parse(path, line, reason))?
        };
        check_located(&located).map_err(|(line, reason)| Error::parse(path, line, reason))?;
        PointSet::new(located.into_iter().map(|(_, z)| z).collect())
            .map_err(|e| Error::parse(path, 0, e.to_string()))
    }

    /// The points in lexicographic order; a point's position is its number in the encoding.
    pub fn points(&self) -> &[Point] {
        &self.points
    }

    /// `|D|`.
    pub fn len(&self) -> usize {
        self.points.len()
    }

    /// Always false: a point set has at least one point.
    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }

    /// The dimension n.
    pub fn dim(&self) -> usize {
        self.points[0].len()
    }

    /// The number of `z`, if `z ∈ D`.
    pub fn index_of(&self, z: &[i64]) -> Option<usize> {
        self.points.binary_search_by(|p| p.as_slice().cmp(z)).ok()
    }

    /// The smallest box containing D.
    pub fn bounding_box(&self) -> Grid {
        let ranges = (0..self.dim())
            .map(|c| {
                let vals = self.points.iter().map(|z| z[c]);
                (vals.clone().min().unwrap_or(0), vals.max().unwrap_or(0))
            })
            .collect();
        Grid::new(ranges).expect("bounds of validated points form a valid box")
    }

    /// Whether D is all of its bounding box.
    pub fn is_box(&self) -> bool {
        self.bounding_box().num_points() == self.points.len() as u128
    }

    /// The ambient isometries of D as permutations of point numbers, the
    /// identity first; `None` when there are more than `limit` candidate
    /// signed permutations times points to try (`n!·2^n·|D|`).
    pub fn isometries(&self, limit: u128) -> Option<Vec<Vec<usize>>> {
        let n = self.dim();
        // n!·2^n, saturating: MAX_DIM = 64 would overflow u128.
        let candidates = (1..=n as u128)
            .fold(1u128, |acc, k| acc.saturating_mul(k))
            .saturating_mul(1u128 << n.min(127));
        if candidates.saturating_mul(self.len() as u128) > limit {
            return None;
        }
        let lo: Vec<i64> = (0..n)
            .map(|c| self.points.iter().map(|z| z[c]).min().unwrap_or(0))
            .collect();
        let mut out = vec![(0..self.len()).collect::<Vec<usize>>()];
        for perm in permutations(n) {
            for signs in 0u64..(1u64 << n) {
                let image = |z: &Point| -> Point {
                    (0..n)
                        .map(|c| {
                            let v = z[perm[c]];
                            if signs >> c & 1 == 1 { -v } else { v }
                        })
                        .collect()
                };
                let raw: Vec<Point> = self.points.iter().map(image).collect();
                // The translation b is fixed by the bounding boxes: min(P·D) + b = min(D).
                let shift: Vec<i64> = (0..n)
                    .map(|c| lo[c] - raw.iter().map(|z| z[c]).min().unwrap_or(0))
                    .collect();
                let moved: Option<Vec<usize>> = raw
                    .iter()
                    .map(|z| {
                        let t: Point = z.iter().zip(&shift).map(|(v, s)| v + s).collect();
                        self.index_of(&t)
                    })
                    .collect();
                if let Some(sigma) = moved
                    && sigma.iter().enumerate().any(|(i, &j)| i != j)
                    && !out.contains(&sigma)
                {
                    out.push(sigma);
                }
            }
        }
        Some(out)
    }

    /// The canonical text form: one point per line, coordinates separated by spaces.
    pub fn to_text(&self) -> String {
        let mut s = String::new();
        for z in &self.points {
            let coords: Vec<String> = z.iter().map(|v| v.to_string()).collect();
            s.push_str(&coords.join(" "));
            s.push('\n');
        }
        s
    }
}

impl fmt::Display for PointSet {
    /// `{(0,0), (1,2)}` for up to 8 points, otherwise the count and the bounding box.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.len() <= 8 {
            let pts: Vec<String> = self
                .points
                .iter()
                .map(|z| {
                    let c: Vec<String> = z.iter().map(|v| v.to_string()).collect();
                    format!("({})", c.join(","))
                })
                .collect();
            write!(f, "{{{}}}", pts.join(", "))
        } else {
            write!(f, "{} points in {}", self.len(), self.bounding_box())
        }
    }
}

/// All permutations of `0..n` (Heap's algorithm order does not matter here).
fn permutations(n: usize) -> Vec<Vec<usize>> {
    let mut out = vec![Vec::new()];
    for k in 0..n {
        out = out
            .into_iter()
            .flat_map(|p: Vec<usize>| {
                (0..=k).map(move |pos| {
                    let mut q = p.clone();
                    q.insert(pos, k);
                    q
                })
            })
            .collect();
    }
    out
}

type Located = Vec<(usize, Point)>;
type ParseFail = (usize, String);

/// Dimension, range and duplicate checks with the lines of the points.
fn check_located(pts: &Located) -> std::result::Result<(), ParseFail> {
    let Some((line0, first)) = pts.first() else {
        return Err((
            0,
            "no points; give one point per line, or JSON [[0,1],[2,2]]".into(),
        ));
    };
    if pts.len() > MAX_POINTS {
        return Err((
            0,
            format!(
                "{} points exceed the supported maximum {MAX_POINTS}",
                pts.len()
            ),
        ));
    }
    for (line, z) in pts {
        if z.len() != first.len() {
            return Err((
                *line,
                format!(
                    "point {} has {} coordinates, but the first point (line {line0}) has {}",
                    show(z),
                    z.len(),
                    first.len()
                ),
            ));
        }
        if let Some(v) = z.iter().find(|v| v.abs() > MAX_COORD) {
            return Err((
                *line,
                format!("coordinate {v} of point {} exceeds ±{MAX_COORD}", show(z)),
            ));
        }
    }
    let mut sorted: Vec<&(usize, Point)> = pts.iter().collect();
    sorted.sort_by(|a, b| a.1.cmp(&b.1).then(a.0.cmp(&b.0)));
    if let Some(w) = sorted.windows(2).find(|w| w[0].1 == w[1].1) {
        return Err((
            w[1].0,
            format!(
                "the point {} repeats the point on line {}; each point must be given once",
                show(&w[1].1),
                w[0].0
            ),
        ));
    }
    Ok(())
}

fn show(z: &[i64]) -> String {
    let c: Vec<String> = z.iter().map(|v| v.to_string()).collect();
    format!("({})", c.join(", "))
}

fn int_token(tok: &str) -> std::result::Result<i64, String> {
    tok.parse::<i64>()
        .map_err(|_| format!("{tok:?} is not an integer"))
}

/// One point per line: `0 1`, `0,1`, `(0, 1)` or `[0, 1]`; `#` comments.
fn parse_lines(text: &str) -> std::result::Result<Located, ParseFail> {
    let mut out = Vec::new();
    for (idx, raw) in text.lines().enumerate() {
        let line = idx + 1;
        let body = raw.split('#').next().unwrap_or("").trim();
        if body.is_empty() {
            continue;
        }
        let inner = body
            .strip_prefix('(')
            .and_then(|b| b.strip_suffix(')'))
            .or_else(|| body.strip_prefix('[').and_then(|b| b.strip_suffix(']')))
            .unwrap_or(body);
        let z = inner
            .split(|c: char| c == ',' || c.is_whitespace())
            .filter(|t| !t.is_empty())
            .map(int_token)
            .collect::<std::result::Result<Point, String>>()
            .map_err(|r| (line, r))?;
        if z.is_empty() {
            return Err((line, format!("{body:?} holds no coordinates")));
        }
        out.push((line, z));
    }
    Ok(out)
}

/// JSON `[[0,1],[2,2]]`, read by a small scanner that keeps line numbers
/// (serde_json's values forget where they came from).
fn parse_json(text: &str) -> std::result::Result<Located, ParseFail> {
    let mut line = 1usize;
    let mut chars = text.chars().peekable();
    let mut out = Vec::new();
    // depth 0: before the outer '['; 1: inside the outer array; 2: inside a point.
    let mut depth = 0;
    let mut current: Point = Vec::new();
    let mut start_line = 0;
    let mut token = String::new();
    let mut expect_value = true;
    let flush = |token: &mut String, current: &mut Point, line: usize| {
        if token.is_empty() {
            return Ok(());
        }
        let v = int_token(token).map_err(|r| (line, r))?;
        current.push(v);
        token.clear();
        Ok::<(), ParseFail>(())
    };
    while let Some(ch) = chars.next() {
        match ch {
            '\n' => {
                flush(&mut token, &mut current, line)?;
                line += 1;
            }
            '[' if depth < 2 => {
                depth += 1;
                if depth == 2 {
                    current.clear();
                    start_line = line;
                    expect_value = true;
                }
            }
            '[' => {
                return Err((
                    line,
                    "points must be arrays of integers, not nested deeper".into(),
                ));
            }
            ']' => {
                flush(&mut token, &mut current, line)?;
                match depth {
                    2 => {
                        if current.is_empty() {
                            return Err((line, "an empty point []".into()));
                        }
                        out.push((start_line, std::mem::take(&mut current)));
                        depth = 1;
                    }
                    1 => {
                        depth = 0;
                        if let Some(rest) = chars.find(|c| !c.is_whitespace()) {
                            return Err((line, format!("unexpected {rest:?} after the closing ]")));
                        }
                    }
                    _ => return Err((line, "unbalanced ]".into())),
                }
            }
            ',' => {
                flush(&mut token, &mut current, line)?;
                if depth == 2 && expect_value && current.is_empty() {
                    return Err((line, "a comma before the first coordinate".into()));
                }
            }
            c if c.is_whitespace() => flush(&mut token, &mut current, line)?,
            c if depth == 2 => {
                token.push(c);
                expect_value = false;
            }
            c => {
                return Err((
                    line,
                    format!("unexpected {c:?}; the JSON form is an array of integer arrays"),
                ));
            }
        }
    }
    if depth != 0 {
        return Err((line, "the JSON array is not closed".into()));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn msg(text: &str) -> String {
        PointSet::parse(text, "d.txt").unwrap_err().to_string()
    }

    #[test]
    fn both_file_forms_give_the_same_sorted_set() {
        let a = PointSet::parse("# corners\n2 2\n-2,-2\n\n(0, 1)  # the odd one\n", "a").unwrap();
        let b = PointSet::parse("[[0,1],\n [2,2], [-2,-2]]\n", "b").unwrap();
        assert_eq!(a, b);
        assert_eq!(a.points(), &[vec![-2, -2], vec![0, 1], vec![2, 2]]);
        assert_eq!(a.index_of(&[0, 1]), Some(1));
        assert_eq!(a.index_of(&[0, 0]), None);
        assert_eq!(a.bounding_box().spec(), "-2..2,-2..2");
        assert!(!a.is_box());
        assert!(
            PointSet::parse("0 0\n0 1\n1 0\n1 1\n", "c")
                .unwrap()
                .is_box()
        );
    }

    #[test]
    fn errors_name_the_file_and_line() {
        assert_eq!(msg("0 0\n1 x\n"), "d.txt:2: \"x\" is not an integer");
        assert_eq!(msg("0 0\n1.5 0\n"), "d.txt:2: \"1.5\" is not an integer");
        assert_eq!(
            msg("0 0\n\n1 0 0\n"),
            "d.txt:3: point (1, 0, 0) has 3 coordinates, but the first point (line 1) has 2"
        );
        assert_eq!(
            msg("0 1\n2 2\n0,1\n"),
            "d.txt:3: the point (0, 1) repeats the point on line 1; each point must be given once"
        );
        assert!(msg("# nothing\n\n").starts_with("d.txt: no points"));
        assert_eq!(msg("[[0,1],\n[2,x]]"), "d.txt:2: \"x\" is not an integer");
        assert_eq!(
            msg("[[0,1],\n[2]]"),
            "d.txt:2: point (2) has 1 coordinates, but the first point (line 1) has 2"
        );
        assert!(msg("[[0,1]").contains("not closed"));
        assert!(msg("0 0\n5000000000 0\n").starts_with("d.txt:2: coordinate 5000000000"));
        let many: String = (0..=MAX_POINTS).map(|i| format!("{i}\n")).collect();
        assert!(msg(&many).contains("2001 points exceed the supported maximum 2000"));
    }

    #[test]
    fn isometries_of_a_square_and_of_a_lopsided_set() {
        let sq = PointSet::from_grid(&Grid::parse("0..1", Some(2)).unwrap());
        assert_eq!(sq.isometries(u128::MAX).unwrap().len(), 8);
        // The corners of {-2,2}^2 plus (0,1): only the reflection x ↦ −x survives.
        let d = PointSet::parse("-2 -2\n-2 2\n2 -2\n2 2\n0 1\n", "d").unwrap();
        let g = d.isometries(u128::MAX).unwrap();
        assert_eq!(g.len(), 2);
        assert_eq!(g[1], vec![3, 4, 2, 0, 1]);
        // A translation-free shape in a shifted position keeps its symmetry.
        let l = PointSet::parse("10 10\n10 11\n11 10\n", "l").unwrap();
        assert_eq!(l.isometries(u128::MAX).unwrap().len(), 2);
        assert!(l.isometries(3).is_none());
        // In dimension 40 the n!·2^n candidates are far too many: refused, no overflow.
        let wide = PointSet::new(vec![vec![0; 40], vec![1; 40]]).unwrap();
        assert!(wide.isometries(u128::MAX / 2).is_none());
    }
}
