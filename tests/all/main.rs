//! The integration tests of orbitcnf, in one test binary.
//!
//! - `artifacts`: bundles, split folders, temporary files and odd arguments through the binary.
//! - `cli`: the command line through the built binary.
//! - `published`: published theorems and the project's derived facts.
//! - `brute`: the solver against an independent brute-force search.
//! - `external`: CNFs written by `encode`, solved by Debian's CaDiCaL and
//!   PicoSAT, read back by `decode`; CaDiCaL's DRAT proofs through `rate`
//!   and orbitcnf's checker.
//! - `instances`: one generated test per file in `instances/` (see `build.rs`).
//! - `points`: finite domains that are not boxes (full-map formulation).
//! - `mathdoc`: every `docs/math.md §n` cited in the repository exists there.
//!
//! - `render`: reports in LaTeX, SVG and HTML, read by pdflatex, resvg and Chromium.
//! - `real_cubes`: the real question in cubes (`split --real`, `run-cube`,
//!   `merge`, `decide --real --jobs`, GNU parallel).
//! - `topical`: the topical map class (`--class topical`), published bound and brute force.
//!
//! No verdict is trusted alone: every feasible answer's orbit is verified.

mod artifacts;
mod auto;
mod brute;
mod cli;
mod external;
mod instances;
mod mathdoc;
mod points;
mod proofs;
mod published;
mod real;
mod real_cli;
mod real_cubes;
mod render;
mod scaleout;
mod spectrum;
mod topical;
mod util;
