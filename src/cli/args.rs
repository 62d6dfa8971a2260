//! Argument groups that several commands share, flattened into each
//! command's arguments, with their parse tests beside them.
//!
//! What the user typed is validated here (values, combinations); the
//! library's objects — [`Question`], [`EncodeOptions`], [`Solver`] — are
//! built from it by the `question`, `options` and `solver` methods.

use std::path::PathBuf;
use std::time::Duration;

use clap::{Args, ValueEnum};

use orbitcnf::decide::Solver;
use orbitcnf::encode::{DEFAULT_MAX_CLAUSES, EncodeOptions, Formulation, Symmetry};
use orbitcnf::points::PointSet;
use orbitcnf::progress::ProgressMode;
use orbitcnf::proof::LratFormat;
use orbitcnf::question::MapClass;
use orbitcnf::solve::external::{External, ProofFormat, ProofRequest};
use orbitcnf::split::auto::{AutoOptions, DEFAULT_PROBE};
use orbitcnf::split::jobs::{CubeHandoff, JobsOptions};
use orbitcnf::{Error, Grid, Question};

/// `--progress MODE` and `-q`, shared by the commands that can run long.
#[derive(Args, Debug, Clone)]
pub struct ProgressArgs {
    /// Progress on stderr: `bar`, one line redrawn in place; `lines`, plain
    /// timestamped lines for logs (`orbitcnf: progress: …`, one for every
    /// decided period or finished cube, one when a long walk inside
    /// encoding or splitting starts, and a status every 30 s); `off`; or
    /// `auto`, the default: `bar` when stderr is a terminal (and no --json
    /// report is asked of decide or run-cube), nothing otherwise.
    #[arg(long, value_name = "MODE", value_enum, default_value_t = ProgressChoice::Auto)]
    pub progress: ProgressChoice,
    /// Show no progress on stderr (as --progress off).
    #[arg(long, short, conflicts_with = "progress")]
    pub quiet: bool,
}

/// The values of `--progress`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ProgressChoice {
    /// A bar on a terminal, nothing otherwise.
    Auto,
    /// One line redrawn in place.
    Bar,
    /// Timestamped lines for logs.
    Lines,
    /// Nothing.
    Off,
}

impl ProgressArgs {
    /// The mode asked for; `auto` stays quiet beside a machine-read report
    /// (`quiet_auto`) as well as off a terminal.
    pub fn mode(&self, quiet_auto: bool) -> ProgressMode {
        match (self.quiet, self.progress) {
            (true, _) | (false, ProgressChoice::Off) => ProgressMode::Off,
            (false, ProgressChoice::Bar) => ProgressMode::Bar,
            (false, ProgressChoice::Lines) => ProgressMode::Lines,
            (false, ProgressChoice::Auto) if quiet_auto => ProgressMode::Off,
            (false, ProgressChoice::Auto) => ProgressMode::auto(),
        }
    }
}

/// The domain D: a box (`--grid`, `--dim`) or a point set (`--points`).
#[derive(Args, Debug, Clone)]
pub struct DomainArgs {
    /// The dimension n; needed only when --grid gives one range for all coordinates.
    #[arg(long, value_name = "N")]
    pub dim: Option<usize>,
    /// The grid: one inclusive range for every coordinate (`-1..1`) or one per
    /// coordinate (`0..1,-1..1,0..3`). Write `--grid=-1..1` so the leading
    /// minus is not taken for a flag.
    #[arg(
        long,
        value_name = "SPEC",
        default_value = "-1..1",
        allow_hyphen_values = true,
        value_parser = parse_grid_text
    )]
    pub grid: String,
    /// A domain that need not be a box: a file with one integer point per
    /// line (`0 1` or `0,1`; `#` comments) or JSON `[[0,1],[2,2]]`. The
    /// question becomes "a periodic orbit of a nonexpansive map D → D",
    /// answered with the full-map formulation (encodings/full-map.md).
    #[arg(long, value_name = "FILE", conflicts_with_all = ["grid", "dim"])]
    pub points: Option<PathBuf>,
    /// Ask about all of R^n (with --dim n) instead of a grid: does some
    /// subset of R^n carry a nonexpansive map of minimal period p? Decided
    /// exactly, with no grid, by the real-space search (encodings/real-space.md);
    /// an infeasible answer comes with Farkas lemmas and an LRAT proof.
    #[arg(long, requires = "dim", conflicts_with_all = ["grid", "points"])]
    pub real: bool,
}

impl DomainArgs {
    /// The dimension of a real-space question (`--real --dim n`), if it is one.
    ///
    /// # Errors
    /// A dimension of 0.
    pub fn real_dim(&self) -> Result<Option<usize>, Error> {
        match (self.real, self.dim) {
            (false, _) => Ok(None),
            (true, Some(0) | None) => Err(Error::Question(
                "a real-space question needs a dimension of at least 1".into(),
            )),
            (true, Some(n)) => Ok(Some(n)),
        }
    }

    /// Whether the domain is a point set.
    pub fn is_points(&self) -> bool {
        self.points.is_some()
    }

    /// The box, when the domain is one.
    ///
    /// # Errors
    /// A bad grid or dimension.
    pub fn grid(&self) -> Result<Grid, Error> {
        if self.dim == Some(0) {
            return Err(Error::Question(
                "the dimension must be at least 1 (got --dim 0)".into(),
            ));
        }
        Grid::parse(&self.grid, self.dim)
    }

    /// The point set, when the domain is one.
    ///
    /// # Errors
    /// An unreadable or malformed point file.
    pub fn point_set(&self) -> Result<Option<PointSet>, Error> {
        self.points.as_deref().map(PointSet::read).transpose()
    }

    /// The question of period `period` about `class` on this domain.
    ///
    /// # Errors
    /// A bad domain or period.
    pub fn question(&self, period: usize, class: MapClass) -> Result<Question, Error> {
        let q = match self.point_set()? {
            Some(d) => Question::on_points(d, period)?,
            None => Question::new(self.grid()?, period)?,
        };
        Ok(q.with_class(class))
    }
}

/// Accepts `-1..1` after `--grid` but not a flag that follows a missing value.
fn parse_grid_text(s: &str) -> Result<String, String> {
    if s.starts_with("--")
        || (s.starts_with('-') && s[1..].starts_with(|c: char| c.is_ascii_alphabetic()))
    {
        return Err(format!(
            "{s:?} is a flag, not a grid; give a value such as --grid=-1..1"
        ));
    }
    Ok(s.to_string())
}

/// The map class flag.
#[derive(Args, Debug, Clone)]
pub struct ClassArgs {
    /// The class of maps: `nonexpansive` (sup-norm nonexpansive maps D → D,
    /// the default) or `topical` (p distinct points of D forming an orbit of
    /// a topical map R^n → R^n; see encodings/topical.md).
    #[arg(long = "class", value_name = "CLASS", default_value = "nonexpansive", value_parser = parse_class)]
    pub class: MapClass,
}

/// Parses a map class name.
pub fn parse_class(s: &str) -> Result<MapClass, String> {
    s.parse().map_err(|e: Error| e.to_string())
}

/// A whole question: domain, period and class.
#[derive(Args, Debug, Clone)]
pub struct QuestionArgs {
    #[command(flatten)]
    pub domain: DomainArgs,
    /// The minimal period p asked for.
    #[arg(long, short = 'p', value_name = "P", default_value_t = 8)]
    pub period: usize,
    #[command(flatten)]
    pub class: ClassArgs,
}

impl QuestionArgs {
    /// The question.
    ///
    /// # Errors
    /// A bad domain or period.
    pub fn question(&self) -> Result<Question, Error> {
        self.domain.question(self.period, self.class.class)
    }
}

/// How the question is encoded.
#[derive(Args, Debug, Clone)]
pub struct EncodingArgs {
    /// Symmetry breaking: `all` (the default), `none`, or a comma-separated
    /// list of translate, multiplier, rotate, isometry, stabilizer, reverse
    /// (stabilizer needs isometry, reverse needs stabilizer). Every
    /// combination is sound; see encodings/symmetry.md.
    #[arg(long, value_name = "LIST", default_value = "all")]
    pub symmetry: String,
    /// Leave out the redundant occupancy count (on by default; it lets the
    /// solver refute "p points in fewer than p places" quickly). In the
    /// full-map formulation: leave out the redundant orbit distance profile.
    #[arg(long)]
    pub no_count: bool,
    /// Leave out the redundant packing bound (on by default; it refutes
    /// "too many pairwise far points" by weighted counting over windows).
    #[arg(long)]
    pub no_packing: bool,
    /// Leave out the profile exclusions (on by default): one clause per
    /// subgroup profile the window count rules out, and "a triangle-free close
    /// graph has at most one edge per window"; see encodings/redundant.md.
    #[arg(long)]
    pub no_classes: bool,
    /// Leave out the two-threshold profile exclusions (on by default; they
    /// act on boxes with a side of 3 or more): when the offsets closer than
    /// t + 1 are exactly the multiples of d and all of them are more than u
    /// apart, each class lies in one window of side t with its points
    /// pairwise more than u apart, which bounds how many fit; see
    /// encodings/redundant.md, pack-nested.
    #[arg(long)]
    pub no_nested: bool,
    /// Leave out the biclique-cover exclusions (on by default where
    /// p > 2^r, r the number of coordinates whose side is the box's
    /// diameter, and p/2 ≤ 40): the pairs at the diameter are covered by one
    /// biclique per such coordinate, so r + 1 far pairs of which no two can
    /// share a biclique rule the pattern out; see encodings/redundant.md,
    /// biclique-cover.
    #[arg(long)]
    pub no_bicliques: bool,
    /// Leave out the window-clique exclusions (on where the biclique-cover
    /// exclusions can act): every clique of pairs closer than the diameter
    /// lies in one of the 2^r windows (the box with one end of each such
    /// coordinate dropped), and distinct maximal cliques need distinct
    /// windows, so 2^r + 1 of them rule the pattern out; see
    /// encodings/redundant.md, window-cliques.
    #[arg(long)]
    pub no_window_cliques: bool,
    /// Leave out the clique-orbit exclusions (on where the biclique-cover
    /// exclusions can act): the rotations of the cycle map a maximal clique
    /// of close pairs to as many maximal cliques as the index of its
    /// stabilizer, so a close offset whose cliques can be invariant under no
    /// rotation of index at most 2^r rules the pattern out in a clause of a
    /// dozen literals; see encodings/redundant.md, clique-orbits.
    #[arg(long)]
    pub no_clique_orbits: bool,
    /// Leave out the sub-box exclusions (on by default on boxes whose
    /// diameter L is 3 or more): a cycle with every distance at most m < L
    /// fits in a box of side m, so the profile exclusions of that smaller
    /// box (pack-classes, pack-nested, pack-gap, biclique-cover, each as
    /// switched)
    /// hold for it; see encodings/redundant.md, sub-box.
    #[arg(long = "no-sub-box")]
    pub no_subbox: bool,
    /// Leave out the gap exclusions (on by default on boxes whose diameter
    /// is 3 or more): when the offsets with distance at most t are the
    /// multiples of d and all others are more than T > t apart, the classes
    /// fit windows of side t and meet disjoint windows of side T, which
    /// bounds d; see encodings/redundant.md, pack-gap.
    #[arg(long)]
    pub no_gaps: bool,
    /// Encode the reversal break (symmetry step 6) as ternary clauses even
    /// on large boxes. By default, where those would be more than 100,000
    /// clauses ({−2,…,2}^4 and larger), the same constraint is written with
    /// auxiliary variables in far fewer clauses; see encodings/symmetry.md.
    #[arg(long)]
    pub no_reverse_ladder: bool,
    /// Leave out the twin break (symmetry step 7, on by default for even
    /// p ≥ 8 unless --symmetry none): when the profile has g(s) = g(p/2 − s)
    /// for every s, x_k and x_{k+p/2} can be swapped without changing any
    /// distance, so the encoding asks x_k to come first in grid order
    /// (2 ≤ k ≤ p/2 − 2); see encodings/symmetry.md, step 7.
    #[arg(long)]
    pub no_twins: bool,
    /// The formulation: `cycle` (isometric cycles; boxes only; the default
    /// on boxes) or `full-map` (the whole map f: D → D; the only one for
    /// --points, and available on boxes for comparison).
    #[arg(long, value_name = "NAME", value_parser = formulation_word())]
    pub formulation: Option<Formulation>,
    /// Refuse to build formulas with more clauses than this.
    #[arg(long, value_name = "N", default_value_t = DEFAULT_MAX_CLAUSES)]
    pub max_clauses: u64,
}

/// The words `--formulation` accepts: `cycle` asks for the class's cycle
/// formulation, which the options spell [`Formulation::IsometricCycle`]
/// until they are resolved for a question.
fn formulation_word() -> impl clap::builder::TypedValueParser<Value = Formulation> {
    use clap::builder::TypedValueParser;
    clap::builder::PossibleValuesParser::new(["cycle", "full-map"]).map(|w| match w.as_str() {
        "full-map" => Formulation::FullMap,
        _ => Formulation::IsometricCycle,
    })
}

impl EncodingArgs {
    /// The options for a question on a box (`point_set` false) or a point
    /// set: a point set refuses the cycle formulation, which would answer a
    /// different question there.
    ///
    /// # Errors
    /// A bad symmetry list, or the cycle formulation on a point set.
    pub fn options(&self, point_set: bool) -> Result<EncodeOptions, Error> {
        if point_set && self.formulation == Some(Formulation::IsometricCycle) {
            return Err(Error::Options(
                "--formulation cycle answers the question only on boxes: on a point set an \
                 isometric cycle need not extend to a map D → D; use full-map (the default with --points)"
                    .into(),
            ));
        }
        let base = match self.formulation {
            Some(Formulation::FullMap) => EncodeOptions::full_map(),
            _ => EncodeOptions::default(),
        };
        Ok(EncodeOptions {
            symmetry: Symmetry::parse(&self.symmetry)?,
            count: !self.no_count,
            packing: !self.no_packing,
            classes: !self.no_classes,
            nested: !self.no_nested,
            bicliques: !self.no_bicliques,
            cliques: !self.no_window_cliques,
            orbits: !self.no_clique_orbits,
            subbox: !self.no_subbox,
            gaps: !self.no_gaps,
            reverse_ladder: !self.no_reverse_ladder,
            twins: !self.no_twins,
            ..base
        })
    }
}

/// Parses a time limit in seconds: positive, finite, below 10^9.
pub fn parse_seconds(s: &str) -> Result<Duration, String> {
    let v: f64 = s
        .parse()
        .map_err(|_| format!("{s:?} is not a number of seconds"))?;
    if v.is_nan() || v <= 0.0 {
        return Err(format!(
            "the time limit must be a positive number of seconds, got {s}"
        ));
    }
    if v >= 1e9 {
        return Err(format!(
            "the time limit must be below 1e9 seconds (about 31 years), got {s}; \
             leave the option out for no limit"
        ));
    }
    Ok(Duration::from_secs_f64(v))
}

/// Which SAT solver to use.
#[derive(Args, Debug, Clone)]
pub struct SolverArgs {
    /// The SAT solver: `bundled` (varisat; infeasible answers come with an
    /// LRAT proof checked by orbitcnf) or `external:'COMMAND ARGS'`, any
    /// DIMACS solver that follows the competition conventions (prints `s` and
    /// `v` lines, exits 10/20, or 0 for unknown), run as COMMAND ARGS CNF; e.g.
    /// --solver external:'cadical -q'. Its model is checked against every
    /// clause and decoded as `decode` does; a solver that crashes, lies or is
    /// missing is an error, never a verdict. Without --proof-arg its
    /// "unsatisfiable" is an unchecked claim (see --trust-solver).
    #[arg(long, value_name = "SOLVER", default_value = "bundled")]
    pub solver: String,
    /// With an external solver: ask it for a proof of an "unsatisfiable"
    /// answer. ARG is appended after the CNF path with every {} replaced by
    /// the proof file's path (CaDiCaL and Kissat: --proof-arg '{}'); repeat
    /// for several arguments. An LRAT proof is checked by orbitcnf's checker;
    /// a DRAT proof is converted to LRAT by `rate` when it is on PATH and then
    /// checked; without `rate` the answer stays unchecked and says so.
    #[arg(long, value_name = "ARG", allow_hyphen_values = true)]
    pub proof_arg: Vec<String>,
    /// The format of the external solver's proof: drat (CaDiCaL's default,
    /// text or binary) or lrat.
    #[arg(long, value_name = "FORMAT", default_value = "drat")]
    pub proof_format: ProofFormat,
}

impl SolverArgs {
    /// The external solver with its proof request, or `None` for the bundled one.
    ///
    /// # Errors
    /// An unknown solver, a bad command line, or a proof request that
    /// contradicts `certify`.
    pub fn external(&self, certify: bool) -> Result<Option<External>, Error> {
        let s = self.solver.trim();
        if s == "bundled" {
            if !self.proof_arg.is_empty() {
                return Err(Error::Options(
                    "--proof-arg is for external solvers; the bundled solver always certifies"
                        .into(),
                ));
            }
            return Ok(None);
        }
        let Some(cmd) = s.strip_prefix("external:") else {
            return Err(Error::Options(format!(
                "unknown solver {s:?}; write --solver bundled or --solver external:'COMMAND ARGS'"
            )));
        };
        let mut ext = External::parse(cmd)?;
        if !self.proof_arg.is_empty() {
            if !certify {
                return Err(Error::Options(
                    "--proof-arg and --no-certify contradict each other".into(),
                ));
            }
            ext.proof = Some(ProofRequest {
                args: self.proof_arg.clone(),
                format: self.proof_format,
                keep_lrat: None,
                keep_raw: None,
            });
        }
        Ok(Some(ext))
    }
}

/// Whether refutations must be checked.
#[derive(Args, Debug, Clone)]
pub struct CertifyArgs {
    /// Do not produce or check a proof for an infeasible answer (faster).
    /// The verdict then rests on the solver's word: it is printed as
    /// INFEASIBLE, UNCHECKED, marked "certified": false in JSON, and exits
    /// with 21 instead of 20. Implies --trust-solver.
    #[arg(long)]
    pub no_certify: bool,
    /// Accept a solver's unchecked claim that no such map exists (an
    /// external solver without --proof-arg, or a `decode` without --proof)
    /// as an infeasible verdict, marked UNCHECKED (exit 21). Without this, an
    /// unchecked claim is reported as unknown (exit 0), so that nothing
    /// unchecked can pass for a refutation.
    #[arg(long)]
    pub trust_solver: bool,
}

impl CertifyArgs {
    /// Whether unchecked claims count as verdicts.
    pub fn accept_claims(&self) -> bool {
        self.no_certify || self.trust_solver
    }
}

/// `decide`'s scale-out flags.
#[derive(Args, Debug, Clone)]
pub struct ScaleArgs {
    #[command(flatten)]
    pub solver: SolverArgs,
    /// Threads for cubes (default: every core). A question that the probe
    /// (see --probe) does not answer is split into cubes and solved on K
    /// threads with the bundled solver; each cube's LRAT proof is checked,
    /// and an infeasible answer comes with one LRAT proof of the whole CNF
    /// assembled from them, checked like a monolithic one. With
    /// --no-auto-split, --jobs K splits at once into 8 cubes per thread.
    /// With --real: the real question is split into cubes (8 per thread
    /// unless --cubes), solved on K threads and merged; every cube's
    /// certificate is checked, and --bundle DIR keeps the split folder as
    /// the certificate (encodings/real-space.md §9).
    #[arg(long, short = 'j', value_name = "K")]
    pub jobs: Option<usize>,
    /// Split at once into about N cubes, without a probe (on --jobs
    /// threads, 1 by default; with --real, at least N cubes).
    #[arg(long, value_name = "N")]
    pub cubes: Option<usize>,
    /// The probe: one ordinary solve of at most SECS seconds (default 60)
    /// before a question is split into one cube per lex-leader distance
    /// profile that the profile exclusions leave (when there are at
    /// most 20,000; otherwise one solve is made
    /// with the whole time limit). A question answered within the probe
    /// gets the ordinary report; otherwise the report's `strategy` line
    /// says what followed.
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    pub probe: Option<Duration>,
    /// Also end the probe after about N conflicts (checked every few
    /// hundred): unlike seconds, the same on every machine.
    #[arg(long, value_name = "N")]
    pub probe_conflicts: Option<u64>,
    /// Never split by itself: one solve (or, with --jobs K, cubes from the
    /// start, 8 per thread), as orbitcnf did before the probe.
    #[arg(long, conflicts_with_all = ["probe", "probe_conflicts"])]
    pub no_auto_split: bool,
}

impl ScaleArgs {
    /// The library's solver choice. `single_solve` (a DRAT proof was asked
    /// for, which only one solve gives) turns the automatic split off.
    ///
    /// # Errors
    /// As [`SolverArgs::external`]; an external solver with --jobs.
    pub fn solver(
        &self,
        certify: bool,
        single_solve: bool,
        handoff_after: Option<Duration>,
    ) -> Result<Solver, Error> {
        let parallel = self.jobs.is_some_and(|j| j != 1) || self.cubes.is_some();
        let handoff = match handoff_after {
            None => None,
            Some(after) => Some(self.cube_handoff(certify, after)?),
        };
        let jobs_options = |jobs: usize, cubes: usize| {
            Solver::Cubes(JobsOptions {
                jobs,
                cubes,
                certify,
                lrat: None,
                format: LratFormat::Text,
                handoff: handoff.clone(),
            })
        };
        if handoff.is_some() {
            let jobs = self.jobs.unwrap_or_else(orbitcnf::pool::default_jobs);
            return match (self.cubes, self.no_auto_split) {
                (Some(n), _) => Ok(jobs_options(self.jobs.unwrap_or(1), n)),
                (None, true) if parallel => {
                    Ok(jobs_options(jobs, JobsOptions::default_cubes(jobs)))
                }
                (None, true) => Err(Error::Options(
                    "--handoff-after hands hard cubes to the external solver; with \
                     --no-auto-split and one thread there are no cubes"
                        .into(),
                )),
                (None, false) => Ok(Solver::Auto(AutoOptions {
                    certify,
                    jobs,
                    probe: self.probe.unwrap_or(DEFAULT_PROBE),
                    probe_conflicts: self.probe_conflicts,
                    lrat: None,
                    format: LratFormat::Text,
                    handoff,
                })),
            };
        }
        match self.solver.external(certify)? {
            Some(_) if parallel => Err(Error::Options(
                "--jobs runs the bundled solver; for an external solver use \
                 `orbitcnf split` and `orbitcnf run-cube --solver …`"
                    .into(),
            )),
            Some(_) if self.probe.is_some() || self.probe_conflicts.is_some() => Err(
                Error::Options("--probe applies to the bundled solver".into()),
            ),
            Some(ext) => Ok(Solver::External(ext)),
            None => Ok(match (self.cubes, self.jobs) {
                (Some(n), jobs) => jobs_options(jobs.unwrap_or(1), n),
                (None, Some(j)) if (self.no_auto_split || single_solve) && j != 1 => {
                    jobs_options(j, JobsOptions::default_cubes(j))
                }
                _ if self.no_auto_split || single_solve => Solver::Bundled { certify },
                (None, jobs) => Solver::Auto(AutoOptions {
                    certify,
                    jobs: jobs.unwrap_or_else(orbitcnf::pool::default_jobs),
                    probe: self.probe.unwrap_or(DEFAULT_PROBE),
                    probe_conflicts: self.probe_conflicts,
                    lrat: None,
                    format: LratFormat::Text,
                    handoff: None,
                }),
            }),
        }
    }

    /// The hand-off of hard cubes to `--solver external:…` after `after`.
    pub fn cube_handoff(&self, certify: bool, after: Duration) -> Result<CubeHandoff, Error> {
        let Some(solver) = self.solver.external(certify)? else {
            return Err(Error::Options(
                "--handoff-after needs an external solver to hand hard cubes to \
                 (--solver external:'COMMAND')"
                    .into(),
            ));
        };
        if certify && solver.proof.is_none() {
            return Err(Error::Options(
                "a handed-off cube needs a proof to be certified: add --proof-arg '{}' \
                 (CaDiCaL, Kissat) or turn certification off with --no-certify"
                    .into(),
            ));
        }
        Ok(CubeHandoff { solver, after })
    }
}

#[cfg(test)]
mod tests {
    use clap::Parser;

    use super::*;

    #[derive(Parser, Debug)]
    struct T {
        #[command(flatten)]
        q: QuestionArgs,
        #[command(flatten)]
        e: EncodingArgs,
        #[command(flatten)]
        s: ScaleArgs,
        #[command(flatten)]
        c: CertifyArgs,
        #[arg(long, value_parser = parse_seconds)]
        time_limit: Option<Duration>,
    }

    fn parse(args: &[&str]) -> Result<T, String> {
        T::try_parse_from(std::iter::once("t").chain(args.iter().copied()))
            .map_err(|e| e.to_string())
    }

    #[test]
    fn domains_come_from_a_grid_or_a_point_file() {
        let t = parse(&["--grid=-1..1", "--dim", "4", "-p", "17"]).unwrap();
        let q = t.q.question().unwrap();
        assert_eq!((q.grid.dim(), q.period), (4, 17));
        assert!(parse(&["--grid", "-1..1", "--dim", "2"]).is_ok());
        // A flag where the grid should be is refused (main names it; see
        // `grid_missing_its_value`).
        assert!(parse(&["--grid", "--dim", "2"]).is_err());
        let e = parse(&["--grid", "-dim"]).unwrap_err();
        assert!(e.contains("is a flag, not a grid"), "{e}");
        let e = parse(&["--points", "d.txt", "--grid=0..1"]).unwrap_err();
        assert!(e.contains("cannot be used with"), "{e}");
        let zero = parse(&["--dim", "0"]).unwrap().q.question().unwrap_err();
        assert!(zero.to_string().contains("at least 1"), "{zero}");
    }

    #[test]
    fn the_cycle_formulation_is_refused_on_point_sets() {
        let t = parse(&["--formulation", "cycle"]).unwrap();
        assert!(t.e.options(false).is_ok());
        let e = t.e.options(true).unwrap_err().to_string();
        assert!(e.contains("only on boxes"), "{e}");
        assert!(parse(&["--formulation", "loop"]).is_err());
        assert!(
            parse(&["--symmetry", "all"])
                .unwrap()
                .e
                .options(false)
                .is_ok()
        );
        assert!(
            parse(&["--symmetry", "twist"])
                .unwrap()
                .e
                .options(false)
                .is_err()
        );
    }

    #[test]
    fn time_limits_are_positive_finite_and_not_absurd() {
        assert_eq!(
            parse(&["--time-limit", "1.5"]).unwrap().time_limit,
            Some(Duration::from_millis(1500))
        );
        for (bad, says) in [
            ("0", "positive"),
            ("-3", "unexpected argument"),
            ("NaN", "positive"),
            ("soon", "not a number"),
            ("1e300", "below 1e9 seconds"),
            ("inf", "below 1e9 seconds"),
        ] {
            let e = parse(&["--time-limit", bad]).unwrap_err();
            assert!(e.contains(says), "{bad}: {e}");
        }
    }

    #[test]
    fn a_handoff_goes_with_cubes_an_external_solver_and_its_proof() {
        let after = Some(Duration::from_secs(7));
        let ext = ["--solver", "external:cadical -q", "--proof-arg", "{}"];
        let handoff_of = |s: &Solver| match s {
            Solver::Auto(o) => o.handoff.clone(),
            Solver::Cubes(o) => o.handoff.clone(),
            _ => None,
        };
        // Automatic: the probe, then cubes with the hand-off.
        let t = parse(&[&ext[..], &["-j", "2"]].concat()).unwrap();
        let s = t.s.solver(true, false, after).unwrap();
        assert!(matches!(&s, Solver::Auto(o) if o.jobs == 2));
        let h = handoff_of(&s).unwrap();
        assert_eq!(h.after, Duration::from_secs(7));
        assert_eq!(h.solver.command, ["cadical", "-q"]);
        assert!(h.solver.proof.is_some());
        // Given cubes, or threads without the probe: cubes at once.
        for extra in [&["--cubes", "5"][..], &["-j", "2", "--no-auto-split"]] {
            let t = parse(&[&ext[..], extra].concat()).unwrap();
            let s = t.s.solver(true, false, after).unwrap();
            assert!(matches!(s, Solver::Cubes(_)), "{extra:?}");
            assert!(handoff_of(&s).is_some(), "{extra:?}");
        }
        // Refused: no external solver, no proof while certifying, no cubes.
        for (args, says) in [
            (&["-j", "2"][..], "external solver"),
            (&["--solver", "external:cadical -q"], "--proof-arg"),
            (&[&ext[..], &["--no-auto-split"]].concat(), "no cubes"),
        ] {
            let e = parse(args)
                .unwrap()
                .s
                .solver(true, false, after)
                .unwrap_err();
            assert!(e.to_string().contains(says), "{args:?}: {e}");
        }
        // Without certification the external solver's word may do.
        let t = parse(&["--solver", "external:cadical -q"]).unwrap();
        assert!(handoff_of(&t.s.solver(false, false, after).unwrap()).is_some());
    }

    #[test]
    fn solvers_and_certification_fit_together() {
        let t = parse(&[]).unwrap();
        assert!(matches!(
            t.s.solver(true, false, None),
            Ok(Solver::Auto(o)) if o.certify && o.probe == DEFAULT_PROBE && o.jobs >= 1
        ));
        assert!(matches!(
            t.s.solver(true, true, None),
            Ok(Solver::Bundled { certify: true })
        ));
        assert!(!t.c.accept_claims());
        let t = parse(&["--no-certify"]).unwrap();
        assert!(t.c.accept_claims());
        let t = parse(&["--trust-solver"]).unwrap();
        assert!(t.c.accept_claims());
        let t = parse(&["-j", "2"]).unwrap();
        assert!(matches!(t.s.solver(true, false, None), Ok(Solver::Auto(o)) if o.jobs == 2));
        let t = parse(&["-j", "2", "--no-auto-split"]).unwrap();
        assert!(matches!(t.s.solver(true, false, None), Ok(Solver::Cubes(o)) if o.cubes == 16));
        assert!(matches!(
            parse(&["-j", "2"]).unwrap().s.solver(true, true, None),
            Ok(Solver::Cubes(o)) if o.cubes == 16
        ));
        let t = parse(&["--cubes", "5"]).unwrap();
        assert!(matches!(t.s.solver(true, false, None), Ok(Solver::Cubes(o)) if o.jobs == 1));
        let t = parse(&["--no-auto-split"]).unwrap();
        assert!(matches!(
            t.s.solver(true, false, None),
            Ok(Solver::Bundled { certify: true })
        ));
        assert!(parse(&["--no-auto-split", "--probe", "3"]).is_err());
        let t = parse(&["--solver", "external:cadical -q", "-j", "2"]).unwrap();
        assert!(
            t.s.solver(true, false, None)
                .unwrap_err()
                .to_string()
                .contains("--jobs")
        );
        let t = parse(&["--solver", "external:cadical", "--proof-arg", "{}"]).unwrap();
        assert!(
            matches!(t.s.solver(true, false, None), Ok(Solver::External(e)) if e.proof.is_some())
        );
        assert!(
            t.s.solver(false, false, None).is_err(),
            "--proof-arg with --no-certify"
        );
        let t = parse(&["--solver", "kissat"]).unwrap();
        assert!(
            t.s.solver(true, false, None)
                .unwrap_err()
                .to_string()
                .contains("unknown solver")
        );
        let t = parse(&["--proof-arg", "{}"]).unwrap();
        assert!(
            t.s.solver(true, false, None).is_err(),
            "--proof-arg with the bundled solver"
        );
    }
}
