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

/// What [`check`] found about an orbit file, for people and for programs.
#[derive(Clone, Debug)]
pub struct FileCheck {
    /// The findings as one JSON object (without the map).
    pub json: serde_json::Value,
    /// The findings as lines of text (without the map).
    pub text: String,
    /// The map `(z, f(z))`, when one was asked for, with a note on how it
    /// was built.
    pub map: Option<(Vec<(Point, Point)>, &'static str)>,
    /// What a file of the map starts from: the grid or the points of D.
    pub map_doc: serde_json::Value,
}

/// Checks an orbit file with the independent verifier, as one of `class`
/// (default: the file's class). With `with_map`, the map is built and
/// checked by exhaustion: on a box the extension of the shift to the whole
/// grid (for topical orbits the unclamped topical extension and its clamp),
/// on a point set the file's own map on all of D (which is needed even
/// without `with_map`: there the orbit alone proves nothing).
///
/// # Errors
/// [`Error::Check`] naming the first failure; [`Error::Parse`] for a point
/// set without its map.
pub fn check(
    f: &OrbitFile,
    class: Option<MapClass>,
    with_map: bool,
    path: &str,
) -> Result<FileCheck> {
    use crate::verify;
    if let Some(points) = &f.points {
        let map = f.map.as_ref().ok_or_else(|| {
            Error::file(
                path,
                "an orbit on a point set is checked with its map, and the file has no \"map\" \
                 (the report of decide --points --json has one)",
            )
        })?;
        let map_check = verify::check_self_map(points, map, &f.orbit)?;
        let orbit_check = verify::check_orbit(f.grid.ranges(), &f.orbit)?;
        let json = serde_json::json!({
            "grid": f.grid.spec(),
            "points": points,
            "period": f.orbit.len(),
            "orbit_check": orbit_check,
            "map_check": map_check,
        });
        let text = format!(
            "domain       {} points of Z^{} (bounding box {})\norbit check  passed: {} distinct points of D, \
             all {} distances along the cycle preserved\nprofile      {:?}\nmap check    passed: {map_check}\n",
            points.len(),
            f.grid.dim(),
            f.grid,
            orbit_check.period,
            orbit_check.pairs_checked,
            orbit_check.profile
        );
        return Ok(FileCheck {
            json,
            text,
            map: with_map.then(|| (map.clone(), "as given in the file")),
            map_doc: serde_json::json!({"points": points}),
        });
    }
    let class = class.unwrap_or(f.class);
    let topical = class == MapClass::Topical;
    let bounds = f.grid.ranges();
    let orbit_check = if topical {
        verify::check_topical_orbit(bounds, &f.orbit)?
    } else {
        verify::check_orbit(bounds, &f.orbit)?
    };
    let mut json = serde_json::json!({
        "grid": f.grid.spec(),
        "period": f.orbit.len(),
        "orbit_check": orbit_check,
    });
    let mut text = format!(
        "grid         {}\norbit check  passed: {orbit_check}\nprofile      {:?}\n",
        f.grid, orbit_check.profile
    );
    if topical {
        json["class"] = class.name().into();
        text = format!("class        topical\n{text}");
    }
    let mut map = None;
    if with_map {
        let (table, formula) = if topical {
            // The witness is the unclamped f, topical on all of R^n; the
            // clamped one is the map D → D, order-preserving and nonexpansive.
            let free = verify::extend_topical(bounds, &f.orbit, false)?;
            let free_check = verify::check_topical_map(&free, &f.orbit, true)?;
            let clamped = verify::extend_topical(bounds, &f.orbit, true)?;
            let clamped_check = verify::check_topical_map(&clamped, &f.orbit, false)?;
            text.push_str(&format!(
                "map check    passed: f_c(x) = min_j (x_{{j+1,c}} + t(x, x_j)) is {free_check}\n\
                 clamped map  passed: clamp(f) on the grid {clamped_check}\n"
            ));
            json["map_check"] = serde_json::to_value(&free_check).expect("serialises");
            json["clamped_map_check"] = serde_json::to_value(&clamped_check).expect("serialises");
            (
                free,
                "f_c(x) = min_j (x_{j+1,c} + max_d (x_d − x_{j,d})), topical on R^n (not clamped)",
            )
        } else {
            let table = verify::extend(bounds, &f.orbit)?;
            let map_check = verify::check_map(&table, &f.orbit)?;
            text.push_str(&format!("map check    passed: {map_check}\n"));
            json["map_check"] = serde_json::to_value(&map_check).expect("serialises");
            (table, "f_c(x) = clamp(min_j (x_{j+1,c} + ‖x − x_j‖∞))")
        };
        map = Some((table.entries, formula));
    }
    Ok(FileCheck {
        json,
        text,
        map,
        map_doc: serde_json::json!({"grid": f.grid.spec()}),
    })
}
