//! From a model back to the orbit (and, in the full-map formulation, the map).
//!
//! In the cycle formulation only the `coord` variables matter: `x_{i,c} = a_c + #{v : X[i,c,v] true}`,
//! which for a model of the `coord-order` clauses is the usual reading of an
//! order encoding. In the full-map formulation the `at` and `map` variables
//! are read ([`full_map_orbit`], [`full_map`]). The result is handed to
//! [`crate::verify`], which checks it without trusting anything here.

use crate::error::{Error, Result};
use crate::grid::Point;
use crate::question::Question;
use crate::varmap::{Meaning, VarMap};

/// Reads the orbit `x_0..x_{p−1}` of `q` out of `model` (indexed by
/// [`crate::cnf::Var::index`]) through `map`.
///
/// # Errors
/// [`Error::Decode`] when the map lacks a coordinate variable of `q` or the
/// model is shorter than the map.
pub fn orbit(q: &Question, map: &VarMap, model: &[bool]) -> Result<Vec<Point>> {
    let g = &q.grid;
    let mut points = Vec::with_capacity(q.period);
    for i in 0..q.period {
        let mut x = Vec::with_capacity(g.dim());
        for c in 0..g.dim() {
            let mut value = g.lo(c);
            for v in g.lo(c) + 1..=g.hi(c) {
                let m = Meaning::Coord { i, c, value: v };
                let var = map.get(&m).ok_or_else(|| {
                    Error::Decode(format!("the variable map has no variable for {m}"))
                })?;
                let bit = model.get(var.index()).copied().ok_or_else(|| {
                    Error::Decode(format!(
                        "the model gives no value to variable {} ({m})",
                        var.dimacs()
                    ))
                })?;
                value += i64::from(bit);
            }
            x.push(value);
        }
        points.push(x);
    }
    Ok(points)
}

/// Reads the orbit of a full-map encoding: for each position i the one
/// point z of D whose variable `o(i, z)` (`at i=… z=…`) is true.
///
/// # Errors
/// [`Error::Decode`] when a position has no point or several, or the map lacks a variable.
pub fn full_map_orbit(q: &Question, map: &VarMap, model: &[bool]) -> Result<Vec<Point>> {
    let d = q.domain();
    (0..q.period)
        .map(|i| {
            the_one(map, model, d.points(), |z| Meaning::At { i, z: z.to_vec() })
                .map_err(|e| Error::Decode(format!("position {i}: {e}")))
        })
        .collect()
}

/// Reads the map of a full-map encoding: `(z, f(z))` for every z ∈ D in
/// lexicographic order, f(z) the one w whose variable `m(z, w)` is true.
///
/// # Errors
/// [`Error::Decode`] when a point has no image or several, or the map lacks a variable.
pub fn full_map(q: &Question, map: &VarMap, model: &[bool]) -> Result<Vec<(Point, Point)>> {
    let d = q.domain();
    d.points()
        .iter()
        .map(|z| {
            let w = the_one(map, model, d.points(), |w| Meaning::Map {
                z: z.clone(),
                w: w.to_vec(),
            })
            .map_err(|e| Error::Decode(format!("f({z:?}): {e}")))?;
            Ok((z.clone(), w))
        })
        .collect()
}

/// The one candidate whose variable is true in `model`.
fn the_one(
    map: &VarMap,
    model: &[bool],
    candidates: &[Point],
    meaning: impl Fn(&[i64]) -> Meaning,
) -> std::result::Result<Point, String> {
    let mut found: Option<&Point> = None;
    for w in candidates {
        let m = meaning(w);
        let var = map
            .get(&m)
            .ok_or_else(|| format!("the variable map has no variable for {m}"))?;
        let bit = model
            .get(var.index())
            .copied()
            .ok_or_else(|| format!("the model gives no value to variable {}", var.dimacs()))?;
        if bit {
            if let Some(prev) = found {
                return Err(format!("both {prev:?} and {w:?} are chosen"));
            }
            found = Some(w);
        }
    }
    found
        .cloned()
        .ok_or_else(|| "no point is chosen".to_string())
}
