//! The typed variable map: what each CNF variable means, and back.
//!
//! Every variable an encoder creates is registered here with a [`Meaning`].
//! The map is written into the DIMACS header, one `c var N MEANING` line per
//! variable, so that a CNF file alone suffices to decode a model found by any
//! solver, on any machine, later (see [`crate::dimacs`]).
//!
//! Numbering: variables are handed out from DIMACS number 1 upwards in the
//! order they are registered.

use std::collections::HashMap;
use std::fmt;
use std::str::FromStr;

use crate::cnf::Var;

/// What a variable says about the orbit. Indices `i, j` are cycle positions
/// (0-based), `c` a coordinate (0-based), `k` a cyclic offset `1 ≤ k ≤ ⌊p/2⌋`.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub enum Meaning {
    /// `x_{i,c} ≥ value` (order encoding of a coordinate).
    Coord {
        /// Position on the cycle.
        i: usize,
        /// Coordinate.
        c: usize,
        /// Threshold.
        value: i64,
    },
    /// `g(k) ≥ value`, where `g(k) = ‖x_i − x_{i+k}‖∞` for every `i`. Under
    /// the formulation `topical-cycle/1` the same kind holds the one-sided
    /// `T(k) = max_c (x_{i,c} − x_{i+k,c}) ≥ value`, for `1 ≤ k ≤ p − 1`; the
    /// header's formulation line tells the two apart.
    Profile {
        /// Cyclic offset.
        k: usize,
        /// Threshold.
        value: i64,
    },
    /// `x_{i,c} − x_{j,c} ≥ value`: coordinate `c` witnesses that
    /// `‖x_i − x_j‖∞ ≥ value`. Only the implication from the variable to the
    /// inequality is encoded.
    Diff {
        /// First position.
        i: usize,
        /// Second position.
        j: usize,
        /// Coordinate.
        c: usize,
        /// Threshold.
        value: i64,
    },
    /// `x_{i,c} = value`.
    Value {
        /// Position on the cycle.
        i: usize,
        /// Coordinate.
        c: usize,
        /// The value.
        value: i64,
    },
    /// `x_i = z`: position `i` of the cycle sits at grid point `z`.
    At {
        /// Position on the cycle.
        i: usize,
        /// The grid point.
        z: Vec<i64>,
    },
    /// `f(z) = w`: the map sends the point `z` of D to the point `w` of D
    /// (full-map formulation, `encodings/full-map.md`).
    Map {
        /// The argument.
        z: Vec<i64>,
        /// The image.
        w: Vec<i64>,
    },
    /// `x_{j,c} − x_{i,c} = D_κ(i,j)`: over R^n (formulation `real-skeleton/1`,
    /// `encodings/real-space.md`) the pair `(i, j)` is tight upward from `i` to
    /// `j` in coordinate `c`, i.e. coordinate `c` attains the pair's distance
    /// with `x_j` above `x_i`. `i ≠ j`; both orders occur.
    Tight {
        /// The lower end.
        i: usize,
        /// The upper end.
        j: usize,
        /// Coordinate.
        c: usize,
    },
    /// An auxiliary variable of a constraint family, with no meaning for decoding.
    Aux {
        /// The family's label.
        family: String,
        /// Running index within the family.
        index: u64,
    },
}

impl fmt::Display for Meaning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Meaning::Coord { i, c, value } => write!(f, "coord i={i} c={c} ge={value}"),
            Meaning::Profile { k, value } => write!(f, "profile k={k} ge={value}"),
            Meaning::Diff { i, j, c, value } => write!(f, "diff i={i} j={j} c={c} ge={value}"),
            Meaning::Value { i, c, value } => write!(f, "value i={i} c={c} eq={value}"),
            Meaning::At { i, z } => write!(f, "at i={i} z={}", join(z)),
            Meaning::Map { z, w } => write!(f, "map z={} w={}", join(z), join(w)),
            Meaning::Tight { i, j, c } => write!(f, "tight i={i} j={j} c={c}"),
            Meaning::Aux { family, index } => write!(f, "aux family={family} index={index}"),
        }
    }
}

/// Coordinates as `0,-1,2`, the form `at` and `map` lines use.
fn join(z: &[i64]) -> String {
    z.iter()
        .map(|v| v.to_string())
        .collect::<Vec<_>>()
        .join(",")
}

/// Parses the `0,-1,2` form of a point in field `name` of a `kind` line.
fn point_field(kind: &str, name: &str, text: &str) -> Result<Vec<i64>, String> {
    text.split(',')
        .map(|t| {
            t.parse::<i64>()
                .map_err(|_| format!("{kind}: {name}: {t:?} is not an integer"))
        })
        .collect()
}

impl FromStr for Meaning {
    type Err = String;

    fn from_str(s: &str) -> Result<Meaning, String> {
        let mut words = s.split_whitespace();
        let kind = words.next().ok_or("empty meaning")?;
        let mut fields: HashMap<&str, &str> = HashMap::new();
        for w in words {
            let (k, v) = w
                .split_once('=')
                .ok_or_else(|| format!("expected key=value, found {w:?}"))?;
            if fields.insert(k, v).is_some() {
                return Err(format!("field {k:?} given twice"));
            }
        }
        let take = |name: &str| -> Result<&str, String> {
            fields
                .get(name)
                .copied()
                .ok_or_else(|| format!("{kind}: missing field {name:?}"))
        };
        let int = |name: &str| -> Result<i64, String> {
            take(name)?
                .parse::<i64>()
                .map_err(|_| format!("{kind}: field {name:?} is not an integer"))
        };
        let idx = |name: &str| -> Result<usize, String> {
            take(name)?
                .parse::<usize>()
                .map_err(|_| format!("{kind}: field {name:?} is not an index"))
        };
        let expect = |names: &[&str]| -> Result<(), String> {
            match fields.keys().find(|k| !names.contains(k)) {
                Some(k) => Err(format!("{kind}: unknown field {k:?}")),
                None => Ok(()),
            }
        };
        match kind {
            "coord" => {
                expect(&["i", "c", "ge"])?;
                Ok(Meaning::Coord {
                    i: idx("i")?,
                    c: idx("c")?,
                    value: int("ge")?,
                })
            }
            "profile" => {
                expect(&["k", "ge"])?;
                Ok(Meaning::Profile {
                    k: idx("k")?,
                    value: int("ge")?,
                })
            }
            "diff" => {
                expect(&["i", "j", "c", "ge"])?;
                Ok(Meaning::Diff {
                    i: idx("i")?,
                    j: idx("j")?,
                    c: idx("c")?,
                    value: int("ge")?,
                })
            }
            "value" => {
                expect(&["i", "c", "eq"])?;
                Ok(Meaning::Value {
                    i: idx("i")?,
                    c: idx("c")?,
                    value: int("eq")?,
                })
            }
            "at" => {
                expect(&["i", "z"])?;
                let z = point_field(kind, "z", take("z")?)?;
                Ok(Meaning::At { i: idx("i")?, z })
            }
            "map" => {
                expect(&["z", "w"])?;
                Ok(Meaning::Map {
                    z: point_field(kind, "z", take("z")?)?,
                    w: point_field(kind, "w", take("w")?)?,
                })
            }
            "tight" => {
                expect(&["i", "j", "c"])?;
                Ok(Meaning::Tight {
                    i: idx("i")?,
                    j: idx("j")?,
                    c: idx("c")?,
                })
            }
            "aux" => {
                expect(&["family", "index"])?;
                Ok(Meaning::Aux {
                    family: take("family")?.to_string(),
                    index: int("index")? as u64,
                })
            }
            other => Err(format!("unknown kind of variable {other:?}")),
        }
    }
}

/// A bijection between variables `1..=len` and their meanings.
#[derive(Clone, Debug, Default)]
pub struct VarMap {
    meanings: Vec<Meaning>,
    index: HashMap<Meaning, Var>,
}

impl VarMap {
    /// An empty map.
    pub fn new() -> VarMap {
        VarMap::default()
    }

    /// Registers a new variable with meaning `m` and returns it.
    ///
    /// # Panics
    /// When `m` is already registered: an encoder bug, never input-dependent.
    pub fn fresh(&mut self, m: Meaning) -> Var {
        let v = Var::from_dimacs(self.meanings.len() as u32 + 1);
        let old = self.index.insert(m.clone(), v);
        assert!(old.is_none(), "variable meaning {m} registered twice");
        self.meanings.push(m);
        v
    }

    /// The variable with meaning `m`, if registered.
    pub fn get(&self, m: &Meaning) -> Option<Var> {
        self.index.get(m).copied()
    }

    /// The meaning of `v`, if `v` is registered.
    pub fn meaning(&self, v: Var) -> Option<&Meaning> {
        self.meanings.get(v.index())
    }

    /// Number of registered variables.
    pub fn len(&self) -> usize {
        self.meanings.len()
    }

    /// Whether no variable is registered.
    pub fn is_empty(&self) -> bool {
        self.meanings.is_empty()
    }

    /// All `(variable, meaning)` pairs in numbering order.
    pub fn iter(&self) -> impl Iterator<Item = (Var, &Meaning)> + '_ {
        self.meanings
            .iter()
            .enumerate()
            .map(|(i, m)| (Var::from_dimacs(i as u32 + 1), m))
    }

    /// Rebuilds a map from `(variable, meaning)` pairs, as read from a header.
    ///
    /// # Errors
    /// A message when the numbers are not exactly `1..=len` in order, or a
    /// meaning occurs twice.
    pub fn from_pairs(pairs: Vec<(u32, Meaning)>) -> Result<VarMap, String> {
        let mut map = VarMap::new();
        for (n, m) in pairs {
            if n as usize != map.len() + 1 {
                return Err(format!(
                    "variable {n} listed where variable {} was expected",
                    map.len() + 1
                ));
            }
            if map.index.contains_key(&m) {
                return Err(format!("meaning {m} listed twice"));
            }
            map.fresh(m);
        }
        Ok(map)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn meanings_round_trip_through_text() {
        let all = [
            Meaning::Coord {
                i: 3,
                c: 1,
                value: -1,
            },
            Meaning::Profile { k: 2, value: 1 },
            Meaning::Diff {
                i: 0,
                j: 5,
                c: 2,
                value: 2,
            },
            Meaning::Aux {
                family: "count".into(),
                index: 7,
            },
            Meaning::At {
                i: 2,
                z: vec![0, -1],
            },
            Meaning::Map {
                z: vec![-2, 2],
                w: vec![0, 1],
            },
            Meaning::Tight { i: 4, j: 1, c: 3 },
        ];
        for m in all {
            let text = m.to_string();
            assert_eq!(text.parse::<Meaning>().unwrap(), m, "{text}");
        }
        assert!(
            "coord i=1 c=2"
                .parse::<Meaning>()
                .unwrap_err()
                .contains("missing field \"ge\"")
        );
        assert!(
            "coord i=1 c=2 ge=0 x=1"
                .parse::<Meaning>()
                .unwrap_err()
                .contains("unknown field")
        );
        assert!(
            "blob"
                .parse::<Meaning>()
                .unwrap_err()
                .contains("unknown kind")
        );
    }

    #[test]
    fn the_map_is_a_bijection_numbered_from_one() {
        let mut map = VarMap::new();
        let a = map.fresh(Meaning::Profile { k: 1, value: 1 });
        let b = map.fresh(Meaning::Profile { k: 1, value: 2 });
        assert_eq!((a.dimacs(), b.dimacs()), (1, 2));
        assert_eq!(map.get(&Meaning::Profile { k: 1, value: 2 }), Some(b));
        assert_eq!(map.meaning(a), Some(&Meaning::Profile { k: 1, value: 1 }));
        let pairs = map.iter().map(|(v, m)| (v.dimacs(), m.clone())).collect();
        assert_eq!(VarMap::from_pairs(pairs).unwrap().len(), 2);
        let err = VarMap::from_pairs(vec![(2, Meaning::Profile { k: 1, value: 1 })]).unwrap_err();
        assert!(err.contains("variable 2 listed where variable 1 was expected"));
    }
}
