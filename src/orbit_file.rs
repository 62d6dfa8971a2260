//! Orbit files for `orbitcnf check`.
//!
//! Two JSON forms are read: the plain one,
//! `{"grid": "-1..1,-1..1", "orbit": [[-1,-1], [-1,1], [1,1], [1,-1]]}`
//! (`"dim"` optional, for a grid given as one range), and the report printed
//! by `decide --json`, whose `question` holds `dim` and `grid`. Either may
//! name the map class (`"class": "topical"`); without it the orbit is read
//! as one of a nonexpansive map. A report on a point set (`decide --points
//! --json`) also carries the points of D (`question.points`) and the whole
//! map (`map`, `[[z, f(z)], …]`), which `check` then verifies on D.

use serde_json::Value;

use crate::error::{Error, Result};
use crate::grid::{Grid, Point};
use crate::question::MapClass;

/// An orbit with the grid it lives in.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OrbitFile {
    /// The grid.
    pub grid: Grid,
    /// The points `x_0..x_{p−1}`.
    pub orbit: Vec<Point>,
    /// The class of maps the orbit belongs to.
    pub class: MapClass,
    /// The points of D, when the orbit lives on a point set.
    pub points: Option<Vec<Point>>,
    /// The map `(z, f(z))` on D, when the file gives one.
    pub map: Option<Vec<(Point, Point)>>,
}

/// Parses an orbit file's text; `path` names it in errors.
///
/// # Errors
/// [`Error::Parse`] saying which field is missing or malformed, or the JSON error's line.
pub fn parse(text: &str, path: &str) -> Result<OrbitFile> {
    let v: Value = serde_json::from_str(text)
        .map_err(|e| Error::parse(path, e.line(), format!("not valid JSON: {e}")))?;
    let bad = |r: String| Error::parse(path, 0, r);
    let holder = match v.get("question") {
        Some(q) if q.get("grid").is_some() => q,
        _ => &v,
    };
    let spec = holder
        .get("grid")
        .and_then(Value::as_str)
        .ok_or_else(|| bad("no \"grid\" string (e.g. \"grid\": \"-1..1,-1..1\")".into()))?;
    let dim = match holder.get("dim") {
        None | Some(Value::Null) => None,
        Some(d) => Some(
            d.as_u64()
                .ok_or_else(|| bad("\"dim\" must be a whole number".into()))? as usize,
        ),
    };
    let grid = Grid::parse(spec, dim).map_err(|e| bad(e.to_string()))?;
    let class = match holder.get("class") {
        None | Some(Value::Null) => MapClass::default(),
        Some(Value::String(name)) => name.parse().map_err(|e: Error| bad(e.to_string()))?,
        Some(other) => return Err(bad(format!("\"class\" must be a string, not {other}"))),
    };
    let list = v
        .get("orbit")
        .or_else(|| v.get("points"))
        .and_then(Value::as_array)
        .ok_or_else(|| {
            bad("no \"orbit\" list of points (a feasible report has one; an infeasible one has none)".into())
        })?;
    let mut orbit = Vec::with_capacity(list.len());
    for (i, p) in list.iter().enumerate() {
        let coords = p
            .as_array()
            .ok_or_else(|| bad(format!("orbit point {i} is not a list of integers")))?;
        let mut x = Vec::with_capacity(coords.len());
        for (c, val) in coords.iter().enumerate() {
            x.push(val.as_i64().ok_or_else(|| {
                bad(format!(
                    "orbit point {i}, coordinate {c}: {val} is not an integer"
                ))
            })?);
        }
        orbit.push(x);
    }
    let points = match holder.get("points") {
        None | Some(Value::Null) => None,
        Some(list) => Some(
            serde_json::from_value::<Vec<Point>>(list.clone())
                .map_err(|e| bad(format!("\"points\" must be a list of integer points: {e}")))?,
        ),
    };
    let map = match v.get("map") {
        None | Some(Value::Null) => None,
        Some(list) => Some(
            serde_json::from_value::<Vec<(Point, Point)>>(list.clone())
                .map_err(|e| bad(format!("\"map\" must be a list of [z, f(z)] pairs: {e}")))?,
        ),
    };
    Ok(OrbitFile {
        grid,
        orbit,
        class,
        points,
        map,
    })
}

/// The plain JSON form of an orbit file; the class is written only when it
/// is not the default.
pub fn to_json(grid: &Grid, class: MapClass, orbit: &[Point]) -> String {
    let mut doc = serde_json::json!({ "grid": grid.spec(), "orbit": orbit });
    if !class.is_default() {
        doc["class"] = class.name().into();
    }
    doc.to_string()
}
