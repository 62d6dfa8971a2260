//! orbitcnf: which periods do sup-norm nonexpansive maps have on integer grids?
//!
//! For a box `D ⊂ Z^n` and a period `p`, a sup-norm nonexpansive map
//! `f: D → D` with a periodic point of minimal period `p` exists iff `D` holds
//! an *isometric p-cycle*: distinct `x_0..x_{p−1}` with `‖x_i − x_{i+k}‖∞`
//! independent of `i` for every `k` (on a cycle every distance is preserved;
//! conversely the shift extends to all of `D`, see [`verify::extend`]).
//! orbitcnf encodes that condition as CNF ([`encode`]), solves it with a
//! [`solve::Backend`] or writes DIMACS ([`dimacs`]), decodes models
//! ([`decode`]) and checks every orbit independently ([`verify`]).
//!
//! The pipeline in one call is [`decide::decide`].

// Index loops follow the mathematics (x_{i,c}, g(k)); iterator chains would hide the indices.
#![allow(clippy::needless_range_loop)]

pub mod artifact;
pub mod bench;
pub mod brute;
pub mod bundle;
pub mod cnf;
pub mod decide;
pub mod decode;
pub mod dimacs;
pub mod encode;
pub mod error;
pub mod evidence;
pub mod grid;
pub mod isometry;
pub mod orbit_file;
pub mod points;
pub mod pool;
pub mod progress;
pub mod proof;
pub mod question;
pub mod real;
pub mod render;
pub mod report;
pub mod solve;
pub mod spectrum;
pub mod split;
pub mod store;
pub mod theory;
pub mod varmap;
pub mod verify;

pub use error::{Error, Result};
pub use grid::{Grid, Point};
pub use question::Question;
pub use report::{Report, Verdict};
