//! The formulations: the ways a question is turned into CNF.
//!
//! A formulation fixes what the variables mean and which constraint families
//! may appear (each formulation has its own table of families, see
//! [`super::family`]). Its stable name, `name/version`, is written into every
//! CNF header (`c orbitcnf … formulation=NAME` and the options' JSON), every
//! report, bundle manifest and stored answer, and it is part of every store
//! key; so the names below must never change, and a change that would make an
//! old CNF mean something else takes a new version (`isometric-cycle/2`) and
//! a new variant.
//!
//! To add a formulation (for example a skeleton of real space): add a
//! variant, give it its name in [`Formulation::name`] and in
//! [`Formulation::ALL`], say in [`Formulation::encodes_map`] whether its
//! models carry a whole map, write its family table (a module beside
//! [`super::fullmap`]) and dispatch to it in [`super::estimate`] and
//! [`super::encode`]; the compiler then points at every `match` that must
//! learn the new case (decoding, checking, reports).

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Deserializer, Serialize, Serializer};

use crate::question::MapClass;

/// A formulation, by its stable name (see the module doc).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Formulation {
    /// `isometric-cycle/1`: `p` points of a box whose distance profile does
    /// not depend on the position (`encodings/isometric-cycle.md`).
    IsometricCycle,
    /// `topical-cycle/1`: the same with the one-sided `t(x, y) = max_c (x_c − y_c)`
    /// of topical maps (`encodings/topical.md`).
    TopicalCycle,
    /// `full-map/1`: the whole map f: D → D of a finite domain with an orbit
    /// of period `p` (`encodings/full-map.md`).
    FullMap,
}

/// A formulation name that this version does not know.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error(
    "unknown formulation {name:?}; this version knows {}",
    Formulation::ALL.map(Formulation::name).join(", ")
)]
pub struct UnknownFormulation {
    /// The name as it was read.
    pub name: String,
}

impl Formulation {
    /// Every formulation this version knows.
    pub const ALL: [Formulation; 3] = [
        Formulation::IsometricCycle,
        Formulation::TopicalCycle,
        Formulation::FullMap,
    ];

    /// The stable name and version, as written in headers, reports and keys.
    pub const fn name(self) -> &'static str {
        match self {
            Formulation::IsometricCycle => "isometric-cycle/1",
            Formulation::TopicalCycle => "topical-cycle/1",
            Formulation::FullMap => "full-map/1",
        }
    }

    /// The cycle formulation that answers questions of `class` on a box.
    pub fn of_class(class: MapClass) -> Formulation {
        match class {
            MapClass::Nonexpansive => Formulation::IsometricCycle,
            MapClass::Topical => Formulation::TopicalCycle,
        }
    }

    /// Whether a model describes the whole map, not only an orbit: then
    /// decoding reads the map, a feasible answer carries it, and its check is
    /// the check of a self-map of the domain.
    pub fn encodes_map(self) -> bool {
        match self {
            Formulation::IsometricCycle | Formulation::TopicalCycle => false,
            Formulation::FullMap => true,
        }
    }
}

impl fmt::Display for Formulation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Formulation {
    type Err = UnknownFormulation;

    fn from_str(name: &str) -> Result<Formulation, UnknownFormulation> {
        Formulation::ALL
            .into_iter()
            .find(|f| f.name() == name)
            .ok_or_else(|| UnknownFormulation {
                name: name.to_string(),
            })
    }
}

impl Serialize for Formulation {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

impl<'de> Deserialize<'de> for Formulation {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Formulation, D::Error> {
        let name = String::deserialize(d)?;
        name.parse().map_err(serde::de::Error::custom)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_stable_and_read_back() {
        // These strings are in every CNF header, store key and bundle written
        // so far; changing one would orphan them.
        let names: Vec<&str> = Formulation::ALL.iter().map(|f| f.name()).collect();
        assert_eq!(
            names,
            ["isometric-cycle/1", "topical-cycle/1", "full-map/1"]
        );
        for f in Formulation::ALL {
            assert_eq!(f.name().parse::<Formulation>(), Ok(f));
            assert_eq!(f.to_string(), f.name());
            let json = serde_json::to_string(&f).unwrap();
            assert_eq!(json, format!("\"{}\"", f.name()));
            assert_eq!(serde_json::from_str::<Formulation>(&json).unwrap(), f);
        }
    }

    #[test]
    fn unknown_names_are_named_with_the_known_ones() {
        let e = "sideways/9".parse::<Formulation>().unwrap_err();
        assert_eq!(e.name, "sideways/9");
        assert_eq!(
            e.to_string(),
            "unknown formulation \"sideways/9\"; this version knows \
             isometric-cycle/1, topical-cycle/1, full-map/1"
        );
        // A version this build does not know is unknown too.
        assert!("isometric-cycle/2".parse::<Formulation>().is_err());
        let e = serde_json::from_str::<Formulation>("\"full-map/0\"").unwrap_err();
        assert!(
            e.to_string().contains("unknown formulation \"full-map/0\""),
            "{e}"
        );
    }
}
