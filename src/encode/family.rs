//! Constraint families as rows of a table, one table per formulation.
//!
//! A [`Family`] row says everything the rest of the encoder needs about one
//! family: its label, when it is part of an encoding, its exact size, and
//! the function that emits it. [`estimate`] and [`build`] both walk the same
//! rows under the same condition, so the size predicted before building and
//! the formula built cannot disagree about which families there are or in
//! which order they come; that each row's `size` equals what its `add` emits
//! is checked, row by row, on many questions by the tests of
//! `encode/tests.rs`.
//!
//! `X` is the formulation's *context*: the question and what several
//! families share and compute once per encoding (for the cycle formulations
//! [`super::cycle::Cycle`], for the full-map formulation
//! [`super::fullmap::FullMap`]). A size must be cheap: [`super::encode`]
//! evaluates every applicable row's size before it builds anything, to
//! refuse formulas above the clause limit, so sizes are closed forms (each
//! module's doc gives and proves its formula) wherever the family does not
//! rest on a search whose outcome decides the clauses (`pack-classes`). Rows
//! that do are marked [`Family::searched`]; their sizes are read only once
//! the closed-form rows fit under the limit.

use super::{EncodeOptions, Encoder};
use crate::cnf::{FamilyCount, Size};

/// One constraint family of a formulation: a row of its table.
pub struct Family<X> {
    /// The label, as written in CNF headers (`c family NAME …`) and reports.
    pub name: &'static str,
    /// Whether the family is part of the encoding, given the context and the
    /// options as [`EncodeOptions::resolve`] left them for the question.
    pub applies: fn(&X, &EncodeOptions) -> bool,
    /// Whether `size` runs a search (the window searches of `pack-classes`
    /// and the families that share them). [`super::encode`] sums the sizes
    /// of the other rows first and refuses a formula that is already too
    /// large on those, so that an oversized question is refused at once
    /// instead of after searches whose clauses would never be written.
    pub searched: bool,
    /// The exact number of variables and clauses that `add` adds.
    pub size: fn(&X) -> Size,
    /// Emits the family: registers its variables and adds its clauses.
    /// Rows run in table order, so a family may use the variables of the
    /// rows above it.
    pub add: fn(&mut Encoder, &X),
}

/// The condition of a family that every encoding of the formulation has.
pub fn always<X>(_: &X, _: &EncodeOptions) -> bool {
    true
}

/// The rows of `table` that apply under `o`, in table order.
pub fn active<'t, X>(
    table: &'t [Family<X>],
    x: &X,
    o: &EncodeOptions,
) -> impl Iterator<Item = &'t Family<X>> {
    table.iter().filter(move |f| (f.applies)(x, o))
}

/// The exact size of each family that applies, in the order [`build`] adds them.
pub fn estimate<X>(table: &[Family<X>], x: &X, o: &EncodeOptions) -> Vec<FamilyCount> {
    active(table, x, o)
        .map(|f| FamilyCount::new(f.name, (f.size)(x)))
        .collect()
}

/// Emits every family that applies, in table order.
pub fn build<X>(table: &[Family<X>], x: &X, o: &EncodeOptions) -> Encoder {
    let mut enc = Encoder::new();
    for f in active(table, x, o) {
        enc.family(f.name, |e| (f.add)(e, x));
    }
    enc
}
