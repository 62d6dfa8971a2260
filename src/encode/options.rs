//! The options of an encoding: which optional families to add
//! ([`EncodeOptions`], [`Symmetry`]), and how they resolve for a question
//! ([`EncodeOptions::resolve`]): families that cannot act on the question, or
//! whose tables would be too large, are switched off, and the formulation is
//! fixed. The resolved options are what a CNF header, a bundle and a store key
//! record, and what the rows of the family tables are asked about.

use serde::{Deserialize, Serialize};

use super::{Formulation, POINT_EQ_LIMIT, fullmap, symmetry};
use crate::error::{Error, Result};
use crate::question::{MapClass, Question};

/// Which symmetry-breaking families to add (see [`symmetry`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Symmetry {
    /// Step 1: the orbit touches a face in every coordinate.
    pub translate: bool,
    /// Step 2: the profile is lexicographically least under the multipliers.
    pub multiplier: bool,
    /// Step 3: `x_0` has the most central type on the orbit.
    pub rotate: bool,
    /// Step 4: `x_0` is the smallest point of its isometry orbit.
    pub isometry: bool,
    /// Step 5: `x_1` is the smallest point of its orbit under the stabiliser of `x_0`.
    pub stabilizer: bool,
    /// Step 6: `x_1`'s stabiliser class is at most `x_{p−1}`'s.
    pub reverse: bool,
}

impl Symmetry {
    /// Every family on.
    pub const ALL: Symmetry = Symmetry {
        translate: true,
        multiplier: true,
        rotate: true,
        isometry: true,
        stabilizer: true,
        reverse: true,
    };
    /// Every family off.
    pub const NONE: Symmetry = Symmetry {
        translate: false,
        multiplier: false,
        rotate: false,
        isometry: false,
        stabilizer: false,
        reverse: false,
    };
    /// The family names, as accepted by [`Symmetry::parse`].
    pub const NAMES: [&'static str; 6] = [
        "translate",
        "multiplier",
        "rotate",
        "isometry",
        "stabilizer",
        "reverse",
    ];

    /// Parses `all`, `none` or a comma-separated list of [`Symmetry::NAMES`].
    ///
    /// # Errors
    /// [`Error::Options`] naming an unknown family or a missing prerequisite.
    pub fn parse(text: &str) -> Result<Symmetry> {
        let t = text.trim();
        let s = match t {
            "all" => Symmetry::ALL,
            "none" | "" => Symmetry::NONE,
            _ => {
                let mut s = Symmetry::NONE;
                for name in t.split(',').map(str::trim) {
                    match name {
                        "translate" => s.translate = true,
                        "multiplier" => s.multiplier = true,
                        "rotate" => s.rotate = true,
                        "isometry" => s.isometry = true,
                        "stabilizer" => s.stabilizer = true,
                        "reverse" => s.reverse = true,
                        other => {
                            return Err(Error::Options(format!(
                                "unknown symmetry family {other:?}; choose from all, none, {}",
                                Symmetry::NAMES.join(", ")
                            )));
                        }
                    }
                }
                s
            }
        };
        s.validate()?;
        Ok(s)
    }

    /// Checks prerequisites: `stabilizer` needs `isometry`, `reverse` needs `stabilizer`.
    ///
    /// # Errors
    /// [`Error::Options`] saying which family needs which.
    pub fn validate(&self) -> Result<()> {
        if self.stabilizer && !self.isometry {
            return Err(Error::Options(
                "symmetry family 'stabilizer' needs 'isometry'".into(),
            ));
        }
        if self.reverse && !self.stabilizer {
            return Err(Error::Options(
                "symmetry family 'reverse' needs 'stabilizer'".into(),
            ));
        }
        Ok(())
    }

    /// The names of the families switched on, comma-separated (`none` when empty).
    pub fn names(&self) -> String {
        let on = [
            self.translate,
            self.multiplier,
            self.rotate,
            self.isometry,
            self.stabilizer,
            self.reverse,
        ];
        let names: Vec<&str> = Symmetry::NAMES
            .iter()
            .zip(on)
            .filter(|(_, b)| *b)
            .map(|(n, _)| *n)
            .collect();
        if names.is_empty() {
            "none".into()
        } else {
            names.join(",")
        }
    }
}

/// Options of the encoding, recorded in the CNF header so that a file says how it was made.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EncodeOptions {
    /// The formulation: [`Formulation::IsometricCycle`] (isometric cycles on
    /// boxes; asked for, it means "the class's cycle formulation"), or
    /// [`Formulation::TopicalCycle`] once [`EncodeOptions::resolve`] has seen
    /// a topical question, or [`Formulation::FullMap`] (the whole map, any
    /// finite domain). Serialised as its stable name.
    pub formulation: Formulation,
    /// Symmetry-breaking families.
    pub symmetry: Symmetry,
    /// The redundant occupancy count ([`super::count`]).
    pub count: bool,
    /// The redundant weighted packing bound ([`super::packing`]).
    pub packing: bool,
    /// The profile exclusions: impossible subgroup profiles ([`super::classes`])
    /// and the edge count of triangle-free close graphs ([`super::edges`]). Absent
    /// in headers written before these families existed, which read as off.
    #[serde(default)]
    pub classes: bool,
    /// The two-threshold profile exclusions ([`super::classes`], family
    /// `pack-nested`). They only act on boxes with a side of 3 or more, so
    /// [`EncodeOptions::resolve`] switches them off elsewhere, and a header
    /// records the option only when it is on: headers written before the
    /// family existed read as off, which is what those CNFs hold.
    #[serde(default, skip_serializing_if = "is_false")]
    pub nested: bool,
    /// The fooling-set exclusions of far patterns ([`super::bicliques`],
    /// family `biclique-cover`). [`EncodeOptions::resolve`] switches them
    /// off where the family cannot act, and a header records the option only
    /// when it is on, so formulas written before the family existed read as
    /// what they hold.
    #[serde(default, skip_serializing_if = "is_false")]
    pub bicliques: bool,
    /// The exclusions of top patterns whose close graph has more pairwise
    /// incompatible cliques than the box has windows below the diameter
    /// ([`super::cliques`], family `window-cliques`). It shares the walk of
    /// `biclique-cover`, so [`EncodeOptions::resolve`] switches it off
    /// where that family cannot act, and a header records it only when on.
    #[serde(default, skip_serializing_if = "is_false")]
    pub cliques: bool,
    /// The exclusions of top patterns with a close offset whose maximal
    /// cliques have more rotations than the box has windows
    /// ([`super::orbits`], family `clique-orbits`). It shares the walk of
    /// `biclique-cover`, so [`EncodeOptions::resolve`] switches it off
    /// where that family cannot act, and a header records it only when on.
    #[serde(default, skip_serializing_if = "is_false")]
    pub orbits: bool,
    /// The profile exclusions of the sub-boxes, carried to profiles that
    /// stay below the diameter ([`super::subbox`], family `sub-box`).
    /// [`EncodeOptions::resolve`] switches them off on boxes of diameter
    /// below 3, and a header records the option only when it is on.
    #[serde(default, skip_serializing_if = "is_false")]
    pub subbox: bool,
    /// The gap patterns: classes close at one threshold, far at a higher
    /// one ([`super::gaps`], family `pack-gap`). Off on boxes of diameter
    /// below 3, and recorded in a header only when on.
    #[serde(default, skip_serializing_if = "is_false")]
    pub gaps: bool,
    /// Step 6 (`sym-reverse`) with auxiliary variables, in `O(|R|·N)`
    /// clauses instead of `O(|R|·k·N)` ternary ones
    /// ([`super::symmetry::add_reverse_ladder`]; same models on the point
    /// indicators). [`EncodeOptions::resolve`] keeps it only where the
    /// ternary form would have more than [`REVERSE_LADDER_ABOVE`] clauses,
    /// and a header records it only when on, so formulas written before it
    /// read as the ternary clauses they hold.
    #[serde(default, skip_serializing_if = "is_false")]
    pub reverse_ladder: bool,
    /// Step 7 (`sym-twins`, [`super::symmetry::add_twins`]): when the
    /// period is even and the profile has `g(s) = g(h − s)` (`h = p/2`),
    /// `x_k` precedes `x_{k+h}` for `2 ≤ k ≤ h − 2`. [`EncodeOptions::resolve`]
    /// keeps it only on even periods from 8 on with the point indicators
    /// and some other symmetry family on, and a header records it only
    /// when on, so formulas written before it read as what they hold.
    #[serde(default, skip_serializing_if = "is_false")]
    pub twins: bool,
}

/// The ternary `sym-reverse` clauses above which step 6 is encoded as a
/// ladder. Measured on 2026-12-04: on {−2,…,2}^4 the ternary form is
/// 580,708 of the 891,871 clauses at p = 22, and loading them (into the
/// solver and its proof checker) dominated easy cubes; {0,1,2,3}^4 (42,856)
/// and {−1,0,1}^5 (15,302) stay below, so their formulas are unchanged.
pub const REVERSE_LADDER_ABOVE: u64 = 100_000;

#[cfg(test)]
thread_local! {
    /// Tests switch the threshold off to check the ladder on small boxes.
    pub(crate) static FORCE_LADDER: std::cell::Cell<bool> = const { std::cell::Cell::new(false) };
}

/// Whether the ternary `sym-reverse` of `q`'s box would have more than
/// [`REVERSE_LADDER_ABOVE`] clauses (it depends on the box alone).
fn reverse_ladder_pays(q: &Question) -> bool {
    #[cfg(test)]
    if FORCE_LADDER.with(std::cell::Cell::get) {
        return true;
    }
    super::symmetry::stabilizer_classes(q)
        .is_some_and(|c| super::symmetry::sizes::reverse(&c).clauses > REVERSE_LADDER_ABOVE)
}

fn is_false(b: &bool) -> bool {
    !*b
}

impl Default for EncodeOptions {
    /// The strongest sound combination: every family on.
    fn default() -> EncodeOptions {
        EncodeOptions {
            formulation: Formulation::IsometricCycle,
            symmetry: Symmetry::ALL,
            count: true,
            packing: true,
            classes: true,
            nested: true,
            bicliques: true,
            cliques: true,
            orbits: true,
            subbox: true,
            gaps: true,
            reverse_ladder: true,
            twins: true,
        }
    }
}

impl EncodeOptions {
    /// The plain formulation: no symmetry breaking, no redundant constraints.
    pub fn plain() -> EncodeOptions {
        EncodeOptions {
            formulation: Formulation::IsometricCycle,
            symmetry: Symmetry::NONE,
            count: false,
            packing: false,
            classes: false,
            nested: false,
            bicliques: false,
            cliques: false,
            orbits: false,
            subbox: false,
            gaps: false,
            reverse_ladder: false,
            twins: false,
        }
    }

    /// Every family on, in the full-map formulation ([`fullmap`]).
    pub fn full_map() -> EncodeOptions {
        EncodeOptions {
            formulation: Formulation::FullMap,
            ..EncodeOptions::default()
        }
    }

    /// The part of [`EncodeOptions::resolve`] that depends on the class
    /// alone: the class's cycle formulation (the full-map formulation, when
    /// asked for, stays), and for topical questions the families argued for
    /// the norm only switched off. A sweep reports its options this way,
    /// since the rest of the resolution varies by period.
    pub fn for_class(&self, class: MapClass) -> EncodeOptions {
        let mut o = self.clone();
        if o.formulation == Formulation::FullMap {
            return o;
        }
        o.formulation = Formulation::of_class(class);
        if class == MapClass::Topical {
            // The counting families, the subgroup-profile clauses (which
            // read the folded, symmetric profile) and step 6 are argued for
            // the norm only.
            o.count = false;
            o.packing = false;
            o.classes = false;
            o.nested = false;
            o.bicliques = false;
            o.cliques = false;
            o.orbits = false;
            o.subbox = false;
            o.gaps = false;
            o.symmetry.reverse = false;
            o.reverse_ladder = false;
            o.twins = false;
        }
        o
    }

    /// The part of [`EncodeOptions::resolve`] that depends only on the class
    /// and on whether D is a point set: the formulation that answers such
    /// questions (full-map on a point set, or when asked for) and the
    /// families it switches off whatever the period. A sweep over periods
    /// reports its options this way, since the rest varies by period.
    pub fn for_domain(&self, class: MapClass, point_set: bool) -> EncodeOptions {
        if point_set || self.formulation == Formulation::FullMap {
            fullmap::for_domain(self)
        } else {
            self.for_class(class)
        }
    }

    /// The options as they apply to `q`: families that cannot act on `q`, or
    /// whose tables would be too large, are switched off. A question on a
    /// point set always takes the full-map formulation, the only one that
    /// answers it. The result is what the CNF header records.
    pub fn resolve(&self, q: &Question) -> EncodeOptions {
        let mut o = self.for_domain(q.class, q.points.is_some());
        if o.formulation == Formulation::FullMap {
            return fullmap::resolve(&o, q);
        }
        if q.grid.diameter() < 3 || q.period < 2 {
            // Two thresholds 1 ≤ u < t < L need a side of 3 or more.
            o.nested = false;
            o.gaps = false;
        }
        if !super::bicliques::applies_to(q) {
            o.bicliques = false;
            o.cliques = false;
            o.orbits = false;
        }
        if !super::subbox::applies_to(q) {
            o.subbox = false;
        }
        let point_eq_ok = q.period as u128 * q.grid.num_points() <= POINT_EQ_LIMIT;
        if !point_eq_ok {
            o.count = false;
            o.packing = false;
            o.classes = false;
            o.symmetry.rotate = false;
            o.symmetry.isometry = false;
        }
        if !o.symmetry.isometry || q.period < 2 {
            o.symmetry.stabilizer = false;
        }
        if o.symmetry.stabilizer && !symmetry::stabilizer_group_fits(q) {
            o.symmetry.stabilizer = false;
        }
        if !o.symmetry.stabilizer || q.period < 3 {
            o.symmetry.reverse = false;
        }
        if !o.symmetry.reverse || !reverse_ladder_pays(q) {
            o.reverse_ladder = false;
        }
        if !point_eq_ok
            || !q.period.is_multiple_of(2)
            || q.period < 8
            || o.symmetry == Symmetry::NONE
            || q.class != MapClass::Nonexpansive
        {
            o.twins = false;
        }
        o
    }

    /// Whether the `point-eq` family is needed.
    pub fn needs_points(&self) -> bool {
        let s = &self.symmetry;
        self.count
            || self.packing
            || s.rotate
            || s.isometry
            || s.stabilizer
            || s.reverse
            || self.twins
    }
}
