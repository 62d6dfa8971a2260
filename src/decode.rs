//! From a model back to the orbit.
//!
//! Only the `coord` variables matter: `x_{i,c} = a_c + #{v : X[i,c,v] true}`,
//! which for a model of the `coord-order` clauses is the usual reading of an
//! order encoding. The result is handed to [`crate::verify`], which checks it
//! without trusting anything here.

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
