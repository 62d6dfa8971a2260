//! The question orbitcnf answers (the published bounds that frame it are in
//! [`crate::theory`]).
//!
//! A [`Question`] asks: on the grid `D`, is there a map `f: D → D`,
//! nonexpansive in the sup-norm, with a periodic point of minimal period `p`?
//! On a box this is equivalent to the existence of an *isometric cycle*: `p`
//! distinct points `x_0..x_{p−1}` of `D` with `‖x_i − x_{i+k}‖∞` independent
//! of `i` for every `k` (see `encodings/isometric-cycle.md`).
//!
//! With [`MapClass::Topical`] the question is instead: do `p` distinct
//! points of `D` form a periodic orbit of a *topical* map `R^n → R^n`
//! (order-preserving and commuting with `x ↦ x + s·1`)? That holds iff
//! `t(x_i, x_{i+k}) = max_c (x_{i,c} − x_{i+k,c})` is independent of `i` for
//! every `k` (see `encodings/topical.md`).

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::grid::{Grid, Point};
use crate::points::PointSet;

/// The class of maps a [`Question`] asks about.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum MapClass {
    /// Maps `f: D → D`, nonexpansive in the sup-norm (the default).
    #[default]
    Nonexpansive,
    /// Topical maps `R^n → R^n` (order-preserving, `f(x + s·1) = f(x) + s·1`)
    /// with a periodic orbit of `p` points of `D`.
    Topical,
}

impl MapClass {
    /// The class's name on the command line and in records.
    pub fn name(self) -> &'static str {
        match self {
            MapClass::Nonexpansive => "nonexpansive",
            MapClass::Topical => "topical",
        }
    }

    /// Whether this is the default class (records leave the default out).
    pub fn is_default(&self) -> bool {
        *self == MapClass::Nonexpansive
    }
}

impl std::str::FromStr for MapClass {
    type Err = Error;

    fn from_str(s: &str) -> Result<MapClass> {
        match s.trim() {
            "nonexpansive" => Ok(MapClass::Nonexpansive),
            "topical" => Ok(MapClass::Topical),
            other => Err(Error::Question(format!(
                "unknown map class {other:?}; choose nonexpansive or topical"
            ))),
        }
    }
}

impl std::fmt::Display for MapClass {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// A period question on an integer box, or on a finite point set.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Question {
    /// The domain D when `points` is `None`; otherwise the bounding box of the points.
    pub grid: Grid,
    /// The minimal period p asked for.
    pub period: usize,
    /// The class of maps asked about.
    pub class: MapClass,
    /// A domain that need not be a box: then D is this set, and only the
    /// full-map formulation answers the question (`encodings/full-map.md`).
    pub points: Option<PointSet>,
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
    /// The map class; left out when it is the default, so that records of
    /// nonexpansive questions read as before classes existed.
    #[serde(default, skip_serializing_if = "MapClass::is_default")]
    pub class: MapClass,
    /// The points of D, when D was given as a point set; absent for boxes,
    /// so that box records stay as they were.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points: Option<Vec<Point>>,
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
        Ok(Question {
            grid,
            period,
            class: MapClass::default(),
            points: None,
        })
    }

    /// A validated question on the point set `d`; `grid` becomes its bounding box.
    ///
    /// # Errors
    /// [`Error::Question`] when `period` is 0 or exceeds `|D|`.
    pub fn on_points(d: PointSet, period: usize) -> Result<Question> {
        if period == 0 || period > d.len() {
            return Err(Error::Question(format!(
                "period {period} is not between 1 and the {} points of D; \
                 an orbit of minimal period p has p distinct points",
                d.len()
            )));
        }
        Ok(Question {
            grid: d.bounding_box(),
            period,
            class: MapClass::default(),
            points: Some(d),
        })
    }

    /// `|D|`, saturating for huge boxes.
    pub fn num_points(&self) -> u128 {
        match &self.points {
            Some(d) => d.len() as u128,
            None => self.grid.num_points(),
        }
    }

    /// The points of D in lexicographic order: the set, or every point of the box.
    pub fn domain(&self) -> PointSet {
        match &self.points {
            Some(d) => d.clone(),
            None => PointSet::from_grid(&self.grid),
        }
    }

    /// The same question about maps of `class`.
    pub fn with_class(mut self, class: MapClass) -> Question {
        self.class = class;
        self
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
            class: self.class,
            points: self.points.as_ref().map(|d| d.points().to_vec()),
        }
    }

    /// Rebuilds a question from its record.
    ///
    /// # Errors
    /// As [`Grid::parse`], [`Question::new`] and [`Question::on_points`]; a
    /// record whose `grid` is not the bounding box of its `points` is an
    /// [`Error::Question`].
    pub fn from_record(r: &QuestionRecord) -> Result<Question> {
        let grid = Grid::parse(&r.grid, Some(r.dim))?;
        let q = match &r.points {
            None => Question::new(grid, r.period)?,
            Some(pts) => {
                let q = Question::on_points(PointSet::new(pts.clone())?, r.period)?;
                if q.grid != grid {
                    return Err(Error::Question(format!(
                        "the record's grid {} is not the bounding box {} of its points",
                        grid.spec(),
                        q.grid.spec()
                    )));
                }
                q
            }
        };
        Ok(q.with_class(r.class))
    }

    /// One-line statement of the question. On a point set it says that the
    /// question is about maps of D itself, not of a box.
    pub fn statement(&self) -> String {
        if let Some(d) = &self.points {
            return format!(
                "a periodic orbit of a nonexpansive map D → D (sup-norm) with minimal period {}, \
                 D = {d} (|D| = {}, n = {})",
                self.period,
                d.len(),
                self.dim()
            );
        }
        statement(&self.grid, self.class, &self.period.to_string())
    }
}

/// The question about `class` on `grid`, with the period written as `period`
/// (a number, or `p` for a whole sweep): one line for reports.
pub fn statement(grid: &Grid, class: MapClass, period: &str) -> String {
    let n = grid.dim();
    match class {
        MapClass::Topical => format!(
            "{period} distinct points of {grid} (n = {n}) forming a periodic orbit of a topical map R^{n} → R^{n}"
        ),
        MapClass::Nonexpansive => format!(
            "a sup-norm nonexpansive map on {grid} (n = {n}) with a periodic point of minimal period {period}"
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_class_round_trips_and_is_left_out_when_default() {
        let g = Grid::parse("0..1", Some(3)).unwrap();
        let q = Question::new(g, 3).unwrap();
        let plain = serde_json::to_string(&q.record()).unwrap();
        assert!(!plain.contains("class"), "{plain}");
        let t = q.clone().with_class(MapClass::Topical);
        let text = serde_json::to_string(&t.record()).unwrap();
        assert!(text.contains("\"class\":\"topical\""), "{text}");
        let back: QuestionRecord = serde_json::from_str(&text).unwrap();
        assert_eq!(Question::from_record(&back).unwrap(), t);
        assert_eq!("topical".parse::<MapClass>().unwrap(), MapClass::Topical);
        assert!(
            "sideways"
                .parse::<MapClass>()
                .unwrap_err()
                .to_string()
                .contains("unknown map class \"sideways\"")
        );
    }

    #[test]
    fn point_questions_round_trip_and_box_records_are_unchanged() {
        let g = Grid::parse("-1..1", Some(2)).unwrap();
        let json = serde_json::to_string(&Question::new(g, 4).unwrap().record()).unwrap();
        assert_eq!(json, r#"{"dim":2,"grid":"-1..1,-1..1","period":4}"#);
        let d = PointSet::parse("0 0\n3 1\n", "t").unwrap();
        let q = Question::on_points(d, 2).unwrap();
        let json = serde_json::to_string(&q.record()).unwrap();
        assert_eq!(
            json,
            r#"{"dim":2,"grid":"0..3,0..1","period":2,"points":[[0,0],[3,1]]}"#
        );
        assert_eq!(Question::from_record(&q.record()).unwrap(), q);
        assert!(
            q.statement()
                .starts_with("a periodic orbit of a nonexpansive map D → D")
        );
        let mut r = q.record();
        r.grid = "0..4,0..1".into();
        let e = Question::from_record(&r).unwrap_err().to_string();
        assert!(e.contains("not the bounding box"), "{e}");
        let e = Question::on_points(q.points.unwrap(), 3)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("period 3 is not between 1 and the 2 points"),
            "{e}"
        );
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
}
