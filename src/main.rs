//! The `orbitcnf` command: a thin layer over the library.

use std::io::{self, Write};
use std::path::PathBuf;
use std::process::ExitCode;
use std::time::Duration;

use clap::{Args, Parser, Subcommand};

use orbitcnf::Verdict;
use orbitcnf::bundle::Evidence;
use orbitcnf::encode::{self, DEFAULT_MAX_CLAUSES, EncodeOptions, Symmetry};
use orbitcnf::points::PointSet;
use orbitcnf::proof::LratOptions;
use orbitcnf::question::MapClass;
use orbitcnf::solve::{Limits, bundled::Bundled, certified::Certified};
use orbitcnf::{Error, Grid, Question, decide, dimacs, orbit_file, verify};

const EXIT_CODES: &str = "\
Exit codes (the SAT convention):
  10  feasible: an orbit of minimal period p exists (printed and checked)
  20  infeasible: no such orbit exists
   0  unknown: no answer within the limits (or a command with no verdict succeeded)
   1  error: bad input, a failed check, or a solver that misbehaved";

/// Decide which periods sup-norm nonexpansive maps have on integer grids.
///
/// For a box D of integer points, a period p asks: is there a map f: D → D
/// with ‖f(x) − f(y)‖∞ ≤ ‖x − y‖∞ that has a periodic point of minimal period
/// p? On a box this holds iff D contains p distinct points x_0..x_{p−1} whose
/// distances ‖x_i − x_{i+k}‖∞ do not depend on i (an isometric cycle).
/// With --class topical it asks instead for p distinct points of D forming an
/// orbit of a topical map R^n → R^n: t(x_i, x_{i+k}) = max_c (x_{i,c} − x_{i+k,c})
/// must not depend on i. With --points FILE, D is any finite set of integer
/// points, and the whole map f: D → D is encoded (a cycle of preserved
/// distances need not extend to such a D).
/// orbitcnf encodes that as CNF, solves it, and checks every orbit it
/// reports; by default every "no" comes with a checked LRAT proof.
#[derive(Parser, Debug)]
#[command(name = "orbitcnf", version, after_help = EXIT_CODES, max_term_width = 100)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Decide a question with the bundled solver and print a checked answer.
    ///
    /// Example: orbitcnf decide --dim 3 --grid=-1..1 --period 8
    #[command(after_help = EXIT_CODES)]
    Decide(DecideArgs),
    /// Write the CNF of a question in DIMACS, with a header that records the
    /// question, the options and the meaning of every variable.
    ///
    /// Solve the file with any DIMACS solver, then read its answer back with
    /// `orbitcnf decode FILE.cnf SOLVER_OUTPUT`.
    Encode(EncodeArgs),
    /// Read a DIMACS solver's output for a CNF written by `encode`, check the
    /// model against every clause, decode the orbit and verify it.
    #[command(after_help = EXIT_CODES)]
    Decode(DecodeArgs),
    /// Verify an orbit given as JSON, independently of the encoder; with
    /// --map, build the nonexpansive map on the whole grid and check it on
    /// every pair of points.
    ///
    /// The file is {"grid": "-1..1,-1..1", "orbit": [[-1,-1],[-1,1],[1,1],[1,-1]]}
    /// or the output of `decide --json`.
    Check(CheckArgs),
    /// Run the fixed benchmark set: each question under the default encoding,
    /// without the profile exclusions (`--no-classes`), `--symmetry none` and
    /// the plain reference encoding, with times, conflicts and ratios printed
    /// in one table; or, with --spectrum, time the whole {-1,0,1}^4 spectrum.
    Bench(BenchArgs),
    /// Check an LRAT proof of unsatisfiability against a CNF with orbitcnf's
    /// own checker (independent of the solver's). Exit 0 when accepted, 1
    /// with the step and the reason when rejected.
    VerifyProof(VerifyProofArgs),
    /// Re-check a certificate bundle written by `decide --bundle`: re-encode
    /// the question, compare the CNF byte for byte, check every file's hash,
    /// and check the proof (or the orbit).
    CheckBundle(CheckBundleArgs),
    /// Decide every period of a box (by default all that the published bound
    /// allows), cheapest first, on all cores, with every answer certified and
    /// kept in a crash-safe results store; print a table, JSON, CSV or a
    /// Markdown page beside the published bounds.
    ///
    /// Example: orbitcnf spectrum --dim 3 --grid=-1..1
    #[command(after_help = SPECTRUM_HELP)]
    Spectrum(SpectrumArgs),
    /// Make a LaTeX table, an SVG picture or a self-contained HTML page from
    /// an answer, a certificate bundle or a results store. The orbit is
    /// re-checked and its map rebuilt and checked before anything is drawn.
    ///
    /// Example: orbitcnf report answer.json --format svg --picture cycle -o cycle.svg
    Report(ReportArgs),
    /// Split a question into cubes for solving on many cores or machines:
    /// writes a folder with the CNF, one standalone CNF per cube, an iCNF
    /// file, a checked coverage proof and manifest.json.
    ///
    /// Example: orbitcnf split --dim 4 --grid=-1..1 --period 17 --cubes 32 --out t4p17
    #[command(after_help = SPLIT_HELP)]
    Split(SplitArgs),
    /// Solve one cube of a split folder and write its result file
    /// (results/cube-NNNN.json, with the LRAT proof beside it).
    ///
    /// Example: orbitcnf run-cube t4p17 5 --time-limit 3600
    #[command(after_help = RUN_CUBE_HELP)]
    RunCube(RunCubeArgs),
    /// Combine the results of a split folder into one verdict, re-checking
    /// the split, every orbit and every proof.
    ///
    /// Example: orbitcnf merge t4p17
    #[command(after_help = MERGE_HELP)]
    Merge(MergeArgs),
}

#[derive(Args, Debug)]
struct VerifyProofArgs {
    /// The CNF (a file written by `orbitcnf encode`, or plain DIMACS).
    cnf: PathBuf,
    /// The LRAT proof (text or binary).
    proof: PathBuf,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
}

#[derive(Args, Debug)]
struct CheckBundleArgs {
    /// The bundle's folder.
    dir: PathBuf,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
}

#[derive(Args, Debug)]
struct BenchArgs {
    /// Leave out the cases whose baselines take minutes ({-1,0,1}^4 with
    /// p = 18, 20, 21 and 24).
    #[arg(long)]
    quick: bool,
    /// Time limit per run, in seconds; a baseline that hits it shows `>LIMIT`.
    #[arg(long, value_name = "SECS", value_parser = parse_seconds, default_value = "600")]
    time_limit: Duration,
    /// Only the default encoding, no baselines.
    #[arg(long)]
    no_baselines: bool,
    /// Only the named cases (comma-separated, e.g. t4-p17,t3-p9).
    #[arg(long, value_name = "NAMES")]
    only: Option<String>,
    /// Print one JSON object per case (JSON Lines) instead of the table.
    #[arg(long)]
    json: bool,
    /// Instead of the cases: time the whole spectrum of {-1,0,1}^4
    /// (p = 1..32, every answer certified) with --jobs workers, against its
    /// 15-minute target.
    #[arg(long)]
    spectrum: bool,
    /// Worker threads for --spectrum (default: the number of cores).
    #[arg(long, value_name = "N")]
    jobs: Option<usize>,
}

#[derive(Args, Debug)]
struct QuestionArgs {
    /// The dimension n; needed only when --grid gives one range for all coordinates.
    #[arg(long, value_name = "N")]
    dim: Option<usize>,
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
    grid: String,
    /// A domain that need not be a box: a file with one integer point per
    /// line (`0 1` or `0,1`; `#` comments) or JSON `[[0,1],[2,2]]`. The
    /// question becomes "a periodic orbit of a nonexpansive map D → D",
    /// answered with the full-map formulation (encodings/full-map.md).
    #[arg(long, value_name = "FILE", conflicts_with_all = ["grid", "dim"])]
    points: Option<PathBuf>,
    /// The minimal period p asked for.
    #[arg(long, short = 'p', value_name = "P", default_value_t = 8)]
    period: usize,
    #[command(flatten)]
    class: ClassArgs,
    /// Refuse to build formulas with more clauses than this.
    #[arg(long, value_name = "N", default_value_t = DEFAULT_MAX_CLAUSES)]
    max_clauses: u64,
}

impl QuestionArgs {
    fn question(&self) -> Result<Question, Error> {
        if self.dim == Some(0) {
            return Err(Error::Question(
                "the dimension must be at least 1 (got --dim 0)".into(),
            ));
        }
        let q = match &self.points {
            Some(path) => Question::on_points(PointSet::read(path)?, self.period)?,
            None => Question::new(Grid::parse(&self.grid, self.dim)?, self.period)?,
        };
        Ok(q.with_class(self.class.class))
    }
}

/// The map class flag, shared by every command that builds questions.
#[derive(Args, Debug)]
struct ClassArgs {
    /// The class of maps: `nonexpansive` (sup-norm nonexpansive maps D → D,
    /// the default) or `topical` (p distinct points of D forming an orbit of
    /// a topical map R^n → R^n; see encodings/topical.md).
    #[arg(long = "class", value_name = "CLASS", default_value = "nonexpansive", value_parser = parse_class)]
    class: MapClass,
}

fn parse_class(s: &str) -> Result<MapClass, String> {
    s.parse().map_err(|e: Error| e.to_string())
}

#[derive(Args, Debug)]
struct EncodingArgs {
    /// Symmetry breaking: `all` (the default), `none`, or a comma-separated
    /// list of translate, multiplier, rotate, isometry, stabilizer, reverse
    /// (stabilizer needs isometry, reverse needs stabilizer). Every
    /// combination is sound; see encodings/symmetry.md.
    #[arg(long, value_name = "LIST", default_value = "all")]
    symmetry: String,
    /// Leave out the redundant occupancy count (on by default; it lets the
    /// solver refute "p points in fewer than p places" quickly). In the
    /// full-map formulation: leave out the redundant orbit distance profile.
    #[arg(long)]
    no_count: bool,
    /// Leave out the redundant packing bound (on by default; it refutes
    /// "too many pairwise far points" by weighted counting over windows).
    #[arg(long)]
    no_packing: bool,
    /// Leave out the profile exclusions (on by default): one clause per
    /// subgroup profile the window count rules out, and "a triangle-free close
    /// graph has at most one edge per window"; see encodings/redundant.md.
    #[arg(long)]
    no_classes: bool,
    /// The formulation: `cycle` (isometric cycles; boxes only; the default
    /// on boxes) or `full-map` (the whole map f: D → D; the only one for
    /// --points, and available on boxes for comparison).
    #[arg(long, value_name = "NAME", value_parser = ["cycle", "full-map"])]
    formulation: Option<String>,
}

impl EncodingArgs {
    fn options(&self) -> Result<EncodeOptions, Error> {
        let base = match self.formulation.as_deref() {
            Some("full-map") => EncodeOptions::full_map(),
            _ => EncodeOptions::default(),
        };
        Ok(EncodeOptions {
            symmetry: Symmetry::parse(&self.symmetry)?,
            count: !self.no_count,
            packing: !self.no_packing,
            classes: !self.no_classes,
            ..base
        })
    }

    /// The options for `q`: a point set refuses the cycle formulation, which
    /// would answer a different question there.
    fn options_for(&self, q: &Question) -> Result<EncodeOptions, Error> {
        self.options_on(q.points.is_some())
    }

    /// As [`EncodingArgs::options_for`], knowing only whether the domain is a point set.
    fn options_on(&self, point_set: bool) -> Result<EncodeOptions, Error> {
        if point_set && self.formulation.as_deref() == Some("cycle") {
            return Err(Error::Options(
                "--formulation cycle answers the question only on boxes: on a point set an \
                 isometric cycle need not extend to a map D → D; use full-map (the default with --points)"
                    .into(),
            ));
        }
        self.options()
    }
}

#[derive(Args, Debug)]
struct DecideArgs {
    #[command(flatten)]
    question: QuestionArgs,
    #[command(flatten)]
    encoding: EncodingArgs,
    /// Give up after this many seconds and answer "unknown" (exit 0).
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    time_limit: Option<Duration>,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    json: bool,
    /// Do not show the progress line on stderr.
    #[arg(long, short)]
    quiet: bool,
    /// Write the LRAT proof of an infeasible answer to FILE (text LRAT; the
    /// proof is checked by orbitcnf's own checker in any case).
    #[arg(long, value_name = "FILE", conflicts_with = "no_certify")]
    proof: Option<PathBuf>,
    /// Write a binary DRAT proof of an infeasible answer to FILE, for
    /// external checkers such as rate or drat-trim.
    #[arg(long, value_name = "FILE", conflicts_with = "no_certify")]
    drat: Option<PathBuf>,
    /// Write a certificate bundle to DIR: manifest.json, formula.cnf and
    /// proof.lrat (infeasible) or orbit.json (feasible); re-check it with
    /// `orbitcnf check-bundle DIR`.
    #[arg(long, value_name = "DIR", conflicts_with = "no_certify")]
    bundle: Option<PathBuf>,
    /// Do not produce or check a proof for an infeasible answer (faster; the
    /// verdict then rests on the solver's word, and the report says so).
    #[arg(long)]
    no_certify: bool,
    /// Also print the explicit map of a feasible answer: the nonexpansive
    /// extension f of the orbit's shift on the whole grid (topical: the
    /// topical extension; --points: the map found), checked by exhaustion,
    /// as `check --map` prints it; in JSON under "explicit_map".
    #[arg(long)]
    map: bool,
    /// With --map: write the map as JSON to FILE (as `check --map-out` does)
    /// instead of printing it.
    #[arg(long, value_name = "FILE", requires = "map")]
    map_out: Option<PathBuf>,
    #[command(flatten)]
    scale: ScaleArgs,
}

#[derive(Args, Debug)]
struct ReportArgs {
    /// A `decide --json` answer (or a stored answer, an orbit file, a
    /// `spectrum --json` sweep), a certificate bundle folder (`decide
    /// --bundle`), or a results store folder (`spectrum --store`).
    input: PathBuf,
    /// `latex` (a standalone document with booktabs tables), `svg` (one
    /// picture, see --picture) or `html` (one self-contained page).
    #[arg(long, value_name = "FORMAT", default_value = "html", value_parser = parse_format)]
    format: orbitcnf::render::Format,
    /// The SVG picture: `cycle` (the orbit as a cycle graph of its distance
    /// profile), `distances` (the distance matrix), `orbit` (the orbit in its
    /// domain), `spectrum` (a store's or sweep's periods). Default: cycle for
    /// an answer, spectrum for a store.
    #[arg(long, value_name = "PICTURE", value_parser = parse_picture)]
    picture: Option<orbitcnf::render::Picture>,
    /// Where to write (default: stdout).
    #[arg(long, short, value_name = "FILE")]
    output: Option<PathBuf>,
}

fn parse_format(s: &str) -> Result<orbitcnf::render::Format, String> {
    s.parse().map_err(|e: Error| e.to_string())
}

fn parse_picture(s: &str) -> Result<orbitcnf::render::Picture, String> {
    s.parse().map_err(|e: Error| e.to_string())
}

/// `report`: loads the input, renders it, writes it.
fn report_cmd(a: ReportArgs) -> Result<u8, Error> {
    let loaded = orbitcnf::render::input::load(&a.input)?;
    let text = orbitcnf::render::render(&loaded, a.format, a.picture)?;
    match &a.output {
        Some(path) if path.as_os_str() != "-" => {
            orbitcnf::artifact::write_atomically(path, text.as_bytes())?;
            eprintln!("report written to {}", path.display());
        }
        _ => print(&text)?,
    }
    Ok(0)
}

/// `decide --map`: the explicit map of a feasible answer, added to the JSON
/// and the text, or written to `--map-out`.
fn decide_map(
    a: &DecideArgs,
    report: &orbitcnf::Report,
    json: &mut serde_json::Value,
    text: &mut String,
) -> Result<(), Error> {
    let Some(m) = orbitcnf::render::facts::report_map(report)? else {
        if report.orbit.is_some() {
            text.push_str(&format!(
                "map          not built: the box has more than {} points\n",
                verify::MAP_CHECK_LIMIT
            ));
        }
        return Ok(());
    };
    let orbit = report.orbit.as_deref().unwrap_or_default();
    let doc = m.to_json(&report.question.grid, report.question.class, orbit);
    match &a.map_out {
        Some(path) => {
            orbitcnf::artifact::write_atomically(path, (doc.to_string() + "\n").as_bytes())?;
            eprintln!("map written to {}", path.display());
        }
        None => {
            json["explicit_map"] = doc;
            text.push_str(&m.to_text());
        }
    }
    Ok(())
}

#[derive(Args, Debug)]
struct EncodeArgs {
    #[command(flatten)]
    question: QuestionArgs,
    #[command(flatten)]
    encoding: EncodingArgs,
    /// Where to write the CNF (`-` for stdout).
    #[arg(long, short, value_name = "FILE")]
    output: PathBuf,
}

#[derive(Args, Debug)]
struct DecodeArgs {
    /// The CNF file written by `orbitcnf encode`.
    cnf: PathBuf,
    /// The solver's output: `s` line and `v` lines, as DIMACS solvers print them.
    solver_output: PathBuf,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    json: bool,
}

#[derive(Args, Debug)]
struct CheckArgs {
    /// The orbit file (JSON).
    orbit: PathBuf,
    /// Also build the extension f on the whole grid and check it by exhaustion.
    #[arg(long)]
    map: bool,
    /// Check the orbit as one of this map class (`nonexpansive` or
    /// `topical`) instead of the class the file names (default nonexpansive).
    /// For topical orbits --map checks the unclamped extension (order-preserving,
    /// nonexpansive, f(x + s·1) = f(x) + s·1 on the grid) and the clamped map
    /// of the grid into itself (order-preserving, nonexpansive).
    #[arg(long = "class", value_name = "CLASS", value_parser = parse_class)]
    class: Option<MapClass>,
    /// With --map: write the map as JSON to FILE instead of printing the table.
    #[arg(long, value_name = "FILE", requires = "map")]
    map_out: Option<PathBuf>,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
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

fn parse_seconds(s: &str) -> Result<Duration, String> {
    let v: f64 = s
        .parse()
        .map_err(|_| format!("{s:?} is not a number of seconds"))?;
    if !(v > 0.0 && v.is_finite() && v < 1e9) {
        return Err(format!(
            "the time limit must be a positive number of seconds, got {s}"
        ));
    }
    Ok(Duration::from_secs_f64(v))
}

/// `--grid` accepts values that start with a minus (`--grid -1..1`), so
/// `--grid --dim 2` would take `--dim` as the grid and then stumble over
/// the `2`; say what really went wrong.
fn grid_missing_its_value() -> Option<String> {
    let args: Vec<String> = std::env::args().collect();
    args.windows(2).find_map(|w| {
        (w[0] == "--grid" && w[1].starts_with("--")).then(|| {
            format!(
                "orbitcnf: error: --grid needs a value, but is followed by the option '{}'; \
                 write e.g. --grid=-1..1 (see 'orbitcnf decide --help')",
                w[1]
            )
        })
    })
}

fn main() -> ExitCode {
    if let Some(message) = grid_missing_its_value() {
        eprintln!("{message}");
        return ExitCode::from(1);
    }
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            use clap::error::ErrorKind;
            if matches!(e.kind(), ErrorKind::DisplayHelp | ErrorKind::DisplayVersion) {
                let _ = e.print();
                return ExitCode::SUCCESS;
            }
            if e.kind() == ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand {
                eprintln!(
                    "orbitcnf: error: no command given; try 'orbitcnf decide' \
                     (the default question) or see 'orbitcnf --help'"
                );
                return ExitCode::from(1);
            }
            // clap's message spans several lines (the error, the missing
            // arguments, a tip, the usage); keep all but the usage, on one line.
            let text = e.render().to_string();
            let parts: Vec<&str> = text
                .lines()
                .map(str::trim)
                .take_while(|l| !l.starts_with("Usage:"))
                // Our own pointer to the help replaces clap's.
                .filter(|l| !l.is_empty() && !l.starts_with("For more information"))
                .collect();
            let msg = parts.join(" ");
            let msg = msg.trim_start_matches("error: ");
            eprintln!("orbitcnf: error: {msg} (see 'orbitcnf --help')");
            return ExitCode::from(1);
        }
    };
    match run(cli) {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            let mut msg = e.to_string();
            // The library names no flags; the binary says which one helps.
            if matches!(e, Error::TooLarge { .. }) {
                msg.push_str("; raise --max-clauses if you mean it");
            }
            let mut src = std::error::Error::source(&e);
            while let Some(s) = src {
                let t = s.to_string();
                if !msg.contains(&t) {
                    msg.push_str(": ");
                    msg.push_str(&t);
                }
                src = s.source();
            }
            eprintln!("orbitcnf: error: {}", msg.replace('\n', " "));
            ExitCode::from(1)
        }
    }
}

fn print(text: &str) -> Result<(), Error> {
    let mut out = io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Err(e) if e.kind() != io::ErrorKind::BrokenPipe => Err(Error::io("<stdout>", e)),
        _ => Ok(()),
    }
}

fn run(cli: Cli) -> Result<u8, Error> {
    match cli.command {
        Command::Decide(a) => {
            let q = a.question.question()?;
            let limits = Limits {
                time: a.time_limit,
                progress: !a.quiet && !a.json,
            };
            let options = a.encoding.options_for(&q)?;
            if let Some(code) = decide_scaled(&a, &q, &options, &limits)? {
                return Ok(code);
            }
            let report = if a.no_certify {
                decide::decide(&q, &options, &mut Bundled, &limits, a.question.max_clauses)?
            } else {
                let lrat = match (&a.proof, &a.bundle) {
                    (Some(p), _) => Some(p.clone()),
                    (None, Some(dir)) => {
                        std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
                        Some(dir.join(orbitcnf::bundle::PROOF))
                    }
                    (None, None) => None,
                };
                let mut backend = Certified {
                    lrat: lrat.clone(),
                    drat: a.drat.clone(),
                };
                let report =
                    decide::decide(&q, &options, &mut backend, &limits, a.question.max_clauses)?;
                if let Some(dir) = &a.bundle {
                    let evidence = match (&report.orbit, &lrat) {
                        (Some(orbit), _) => Some(match &report.map {
                            Some(map) => Evidence::Map { orbit, map },
                            None => Evidence::Orbit(orbit),
                        }),
                        (None, Some(path)) if report.verdict == Verdict::Infeasible => {
                            Some(Evidence::Proof(path))
                        }
                        _ => None,
                    };
                    match evidence {
                        Some(ev) => {
                            orbitcnf::bundle::write_bundle(dir, &q, &options, ev)?;
                            eprintln!("certificate bundle written to {}", dir.display());
                        }
                        None => eprintln!("no bundle written: the verdict is unknown"),
                    }
                }
                report
            };
            if a.map {
                let mut json = serde_json::to_value(&report).expect("reports serialise");
                let mut text = report.to_text();
                decide_map(&a, &report, &mut json, &mut text)?;
                print(&if a.json {
                    json.to_string() + "\n"
                } else {
                    text
                })?;
            } else {
                print(&if a.json {
                    report.to_json() + "\n"
                } else {
                    report.to_text()
                })?;
            }
            Ok(report.verdict.exit_code() as u8)
        }
        Command::Encode(a) => {
            let q = a.question.question()?;
            let enc = encode::encode(&q, &a.encoding.options_for(&q)?, a.question.max_clauses)?;
            if a.output.as_os_str() == "-" {
                let bytes = dimacs::render_cnf(&enc);
                let mut out = io::stdout().lock();
                match out.write_all(&bytes) {
                    Err(e) if e.kind() != io::ErrorKind::BrokenPipe => {
                        return Err(Error::io("<stdout>", e));
                    }
                    _ => {}
                }
            } else {
                dimacs::write_cnf(&enc, &a.output)?;
                eprintln!(
                    "wrote {} ({} variables, {} clauses) for {}",
                    a.output.display(),
                    enc.cnf.num_vars(),
                    enc.cnf.num_clauses(),
                    q.statement()
                );
            }
            Ok(0)
        }
        Command::Decode(a) => {
            let file = dimacs::read_cnf_file(&a.cnf)?;
            let text = std::fs::read_to_string(&a.solver_output)
                .map_err(|e| Error::io(&a.solver_output, e))?;
            let out_path = a.solver_output.display().to_string();
            let answer = dimacs::parse_solver_output(&text, &out_path)?;
            let report =
                decide::decode_answer(&file, &a.cnf.display().to_string(), &answer, &out_path)?;
            print(&if a.json {
                report.to_json() + "\n"
            } else {
                report.to_text()
            })?;
            Ok(report.verdict.exit_code() as u8)
        }
        Command::Check(a) => check(a),
        Command::Report(a) => report_cmd(a),
        Command::Bench(a) => bench(a),
        Command::VerifyProof(a) => verify_proof(a),
        Command::Spectrum(a) => spectrum(a),
        Command::Split(a) => split_cmd(a),
        Command::RunCube(a) => run_cube_cmd(a),
        Command::Merge(a) => merge_cmd(a),
        Command::CheckBundle(a) => {
            let c = orbitcnf::bundle::check_bundle(&a.dir)?;
            let text = match (&c.proof, &c.orbit) {
                (Some(p), _) => format!(
                    "bundle       {}\nquestion     grid {} (n = {}), period {}\nformula      identical to a fresh encoding; all hashes match\n\
                     verdict      INFEASIBLE, certified: LRAT proof of {} steps accepted (empty clause at id {})\n",
                    a.dir.display(),
                    c.manifest.question.grid,
                    c.manifest.question.dim,
                    c.manifest.question.period,
                    p.steps,
                    p.empty_clause_id
                ),
                (None, Some(o)) => format!(
                    "bundle       {}\nquestion     grid {} (n = {}), period {}\nformula      identical to a fresh encoding; all hashes match\n\
                     verdict      FEASIBLE, certified: {o}\n",
                    a.dir.display(),
                    c.manifest.question.grid,
                    c.manifest.question.dim,
                    c.manifest.question.period
                ),
                _ => String::new(),
            };
            let mut text = text;
            if let Some(pts) = &c.manifest.question.points {
                text.push_str(&format!(
                    "domain       the {} points of the manifest (the grid above is their bounding box)\n",
                    pts.len()
                ));
            }
            if let Some(m) = &c.map {
                text.push_str(&format!("map          certified: {m}\n"));
            }
            print(&if a.json {
                serde_json::to_string(&c).expect("serialises") + "\n"
            } else {
                text
            })?;
            Ok(0)
        }
    }
}

fn verify_proof(a: VerifyProofArgs) -> Result<u8, Error> {
    let text = std::fs::read_to_string(&a.cnf).map_err(|e| Error::io(&a.cnf, e))?;
    let name = a.cnf.display().to_string();
    let cnf = if text.starts_with("c orbitcnf-digest") {
        dimacs::parse_cnf_file(&text, &name)?.cnf
    } else {
        dimacs::parse_dimacs(&text, &name)?.0
    };
    let proof = std::fs::read(&a.proof).map_err(|e| Error::io(&a.proof, e))?;
    let options = LratOptions {
        ids_follow_cnf: true,
        ..LratOptions::default()
    };
    let summary = orbitcnf::proof::check_lrat_with(&cnf, &proof, &options)?;
    let out = if a.json {
        serde_json::json!({"accepted": true, "cnf": name, "proof": a.proof.display().to_string(), "summary": summary})
            .to_string()
            + "\n"
    } else {
        format!(
            "proof        accepted: {} is unsatisfiable\nsteps        {} ({} clauses added, {} deleted, {} hints), empty clause at id {}\n",
            name,
            summary.steps,
            summary.added,
            summary.deleted,
            summary.hints,
            summary.empty_clause_id
        )
    };
    print(&out)?;
    Ok(0)
}

fn bench(a: BenchArgs) -> Result<u8, Error> {
    if a.spectrum {
        let jobs = a.jobs.unwrap_or_else(orbitcnf::spectrum::default_jobs);
        let f = orbitcnf::bench::run_spectrum(jobs, a.time_limit)?;
        let line = if a.json {
            serde_json::to_string(&f).expect("serialises")
        } else {
            orbitcnf::bench::format_spectrum(&f)
        };
        print(&format!("{line}\n"))?;
        return Ok(0);
    }
    let mut cases = orbitcnf::bench::cases(a.quick);
    if let Some(only) = &a.only {
        let names: Vec<&str> = only.split(',').map(str::trim).collect();
        if let Some(bad) = names.iter().find(|n| !cases.iter().any(|c| c.name == **n)) {
            let all: Vec<String> = orbitcnf::bench::cases(false)
                .into_iter()
                .map(|c| c.name)
                .collect();
            return Err(Error::Options(format!(
                "no benchmark case {bad:?}; cases are {}",
                all.join(", ")
            )));
        }
        cases.retain(|c| names.contains(&c.name.as_str()));
    }
    if !a.json {
        print(&format!("{}\n", orbitcnf::bench::header()))?;
    }
    for case in &cases {
        let row = orbitcnf::bench::run_case(case, a.time_limit, !a.no_baselines)?;
        let line = if a.json {
            serde_json::to_string(&row).expect("serialises")
        } else {
            orbitcnf::bench::format_row(&row)
        };
        print(&format!("{line}\n"))?;
    }
    Ok(0)
}

fn check(a: CheckArgs) -> Result<u8, Error> {
    let text = std::fs::read_to_string(&a.orbit).map_err(|e| Error::io(&a.orbit, e))?;
    let f = orbit_file::parse(&text, &a.orbit.display().to_string())?;
    if let Some(points) = &f.points {
        return check_on_points(&a, &f, points);
    }
    let class = a.class.unwrap_or(f.class);
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
    if a.map {
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
        let doc = serde_json::json!({"grid": f.grid.spec()});
        show_map(&a, &table.entries, doc, formula, &mut json, &mut text)?;
    }
    print_check(a.json, &json, text)
}

/// Prints `check`'s findings: the JSON object with `--json`, else the text.
fn print_check(as_json: bool, json: &serde_json::Value, text: String) -> Result<u8, Error> {
    print(&if as_json {
        json.to_string() + "\n"
    } else {
        text
    })?;
    Ok(0)
}

/// The `--map` output of `check`: the table `(x, f(x))` written to
/// `--map-out` as `doc` plus `"map"`, or added to the JSON and the text.
fn show_map(
    a: &CheckArgs,
    map: &[(Vec<i64>, Vec<i64>)],
    mut doc: serde_json::Value,
    formula: &str,
    json: &mut serde_json::Value,
    text: &mut String,
) -> Result<(), Error> {
    let entries: Vec<serde_json::Value> = map
        .iter()
        .map(|(z, fz)| serde_json::json!({"x": z, "f": fz}))
        .collect();
    match &a.map_out {
        Some(path) => {
            doc["map"] = serde_json::Value::Array(entries);
            orbitcnf::artifact::write_atomically(path, (doc.to_string() + "\n").as_bytes())?;
            text.push_str(&format!("map          written to {}\n", path.display()));
        }
        None => {
            json["map"] = serde_json::Value::Array(entries);
            text.push_str(&format!("map          x -> f(x), {formula}\n"));
            for (z, fz) in map {
                text.push_str(&format!("             {z:?} -> {fz:?}\n"));
            }
        }
    }
    Ok(())
}

/// `check` for an orbit on a point set: the file must carry the map, which
/// is checked on all of D (the box extension does not apply off boxes).
fn check_on_points(
    a: &CheckArgs,
    f: &orbit_file::OrbitFile,
    points: &[Vec<i64>],
) -> Result<u8, Error> {
    let name = a.orbit.display().to_string();
    let map = f.map.as_ref().ok_or_else(|| {
        Error::parse(
            &name,
            0,
            "an orbit on a point set is checked with its map, and the file has no \"map\" \
             (the report of decide --points --json has one)",
        )
    })?;
    let map_check = verify::check_self_map(points, map, &f.orbit)?;
    let orbit_check = verify::check_orbit(f.grid.ranges(), &f.orbit)?;
    let mut json = serde_json::json!({
        "grid": f.grid.spec(),
        "points": points,
        "period": f.orbit.len(),
        "orbit_check": orbit_check,
        "map_check": map_check,
    });
    let mut text = format!(
        "domain       {} points of Z^{} (bounding box {})\norbit check  passed: {} distinct points of D, \
         all {} distances along the cycle preserved\nprofile      {:?}\nmap check    passed: {map_check}\n",
        points.len(),
        f.grid.dim(),
        f.grid,
        orbit_check.period,
        orbit_check.pairs_checked,
        orbit_check.profile
    );
    if a.map {
        let doc = serde_json::json!({"points": points});
        show_map(a, map, doc, "as given in the file", &mut json, &mut text)?;
    }
    print_check(a.json, &json, text)
}

const SPECTRUM_HELP: &str = "\
How each period is answered, cheapest first:
  stored        a decided answer in the results store under the same question,
                resolved encoding options and formulation is reused (its orbit
                re-checked, its proof file present; --recheck re-checks proofs)
  construction  p ≤ 2^n' (n' = coordinates with more than one value): p vertices
                of a unit cube, pairwise at distance 1; the orbit is checked, and
                on small boxes its extension to a nonexpansive map as well.
                With --class topical: p ≤ C(n',⌊n'/2⌋) points of the middle layer
                of a unit cube (t = 1 between any two); the orbit and, on small
                boxes, the topical extension and its clamp are checked
  solver        everything else: `decide` with the certified solver; infeasible
                answers carry an LRAT proof accepted by orbitcnf's own checker

The results store (--store DIR, default ./orbitcnf-results):
  DIR/answers/<key>.json   one answer per file: verdict, how decided, orbit,
                           proof path and SHA-256, statistics, limits, tool
                           version, run id, start and finish times
  DIR/proofs/<key>.<run>.lrat   the LRAT proofs of infeasible answers
                           (they can be large: about 3 GB for all of {-1,0,1}^4)
  <key> is the SHA-256 of question, resolved encoding options and formulation.
  Every file is written to a temporary file, fsynced and renamed into place, so
  a sweep killed at any moment keeps every answer it completed; run the same
  command again to continue. Decided answers are never recomputed or replaced.
  An unknown answer is retried only when this run has a larger --time-limit
  (or none) or a larger --max-clauses than the run that gave up.
  A new or stored answer whose verdict differs from another stored answer to the
  same question (under any options) is a CONTRADICTION: an error naming both
  runs. So is an answer that contradicts a published theorem (feasible above
  max_k 2^k·C(n',k), a feasible prime above 2^n', feasible above 2^n' when
  n' ≤ 3, or infeasible at p ≤ 2^n'; with --class topical: feasible above
  C(n',⌊n'/2⌋), or infeasible at or below it). The class is part of the key.

Output: a table on stdout; --json prints one JSON object (the whole spectrum,
each row with its stored answer); --csv one line per period after a header;
--markdown FILE also writes a page with the published bounds beside the answers.
The progress line on stderr appears only when stderr is a terminal.

Exit codes:
   0  every period was decided (feasible or infeasible)
   2  the sweep finished but some periods are unknown (listed in the report)
   1  error: bad input, a contradiction, a failed check or a misbehaving solver

Examples:
  orbitcnf spectrum --dim 3 --grid=-1..1
  orbitcnf spectrum --dim 4 --grid=-1..1 --jobs 2 --time-limit 600 --markdown t4.md
  orbitcnf spectrum --dim 2 --grid=0..3 --periods 5..8 --no-store --json
  orbitcnf spectrum --class topical --dim 4 --grid=0..1";

#[derive(Args, Debug)]
struct SpectrumArgs {
    /// The dimension n; needed only when --grid gives one range for all coordinates.
    #[arg(long, value_name = "N")]
    dim: Option<usize>,
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
    grid: String,
    /// A domain that need not be a box (one integer point per line, or JSON
    /// `[[0,1],[2,2]]`): every period is decided by the full-map solver, up
    /// to |D| and the Lemmens–Scheutzow bound.
    #[arg(long, value_name = "FILE", conflicts_with_all = ["grid", "dim"])]
    points: Option<PathBuf>,
    /// The periods: `A..B` (inclusive), `P`, or a comma-separated list of both.
    /// Default: 1 up to the proven bound max_k 2^k·C(n',k) (Lemmens and
    /// Scheutzow 2005); with --class topical 1 up to one past the proven
    /// bound C(n',⌊n'/2⌋) (same paper), so the first excluded period is
    /// decided too. Capped by the number of grid points.
    #[arg(long, value_name = "LIST")]
    periods: Option<String>,
    #[command(flatten)]
    class: ClassArgs,
    #[command(flatten)]
    encoding: EncodingArgs,
    /// Give up on a period after this many seconds of solving; it is reported
    /// (and stored) as unknown, and retried by a later run with a larger limit.
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    time_limit: Option<Duration>,
    /// Periods solved at the same time (default: the number of cores).
    #[arg(long, short = 'j', value_name = "N")]
    jobs: Option<usize>,
    /// The results store's folder.
    #[arg(long, value_name = "DIR", default_value = "./orbitcnf-results")]
    store: PathBuf,
    /// Keep no store: decide every period afresh and keep no files (proofs
    /// are still checked, in memory).
    #[arg(long, conflicts_with = "store")]
    no_store: bool,
    /// Re-check every reused stored answer in full: the proof file against its
    /// SHA-256 and with the LRAT checker against a fresh encoding.
    #[arg(long)]
    recheck: bool,
    /// Print one JSON object instead of the table.
    #[arg(long, conflicts_with = "csv")]
    json: bool,
    /// Print CSV instead of the table.
    #[arg(long)]
    csv: bool,
    /// Also write a Markdown page with the published bounds beside the answers.
    #[arg(long, value_name = "FILE")]
    markdown: Option<PathBuf>,
    /// Do not show the progress line on stderr.
    #[arg(long, short)]
    quiet: bool,
    /// Refuse to build formulas with more clauses than this (such a period is unknown).
    #[arg(long, value_name = "N", default_value_t = DEFAULT_MAX_CLAUSES)]
    max_clauses: u64,
}

fn spectrum(a: SpectrumArgs) -> Result<u8, Error> {
    use orbitcnf::spectrum;
    if a.dim == Some(0) {
        return Err(Error::Question(
            "the dimension must be at least 1 (got --dim 0)".into(),
        ));
    }
    let mut cfg = match &a.points {
        Some(path) => {
            if a.class.class != MapClass::Nonexpansive {
                return Err(Error::Options(
                    "spectrum --points decides nonexpansive maps D → D only (the full-map \
                     formulation); --class topical needs a box"
                        .into(),
                ));
            }
            spectrum::SweepConfig::on_points(PointSet::read(path)?)
        }
        None => spectrum::SweepConfig::for_class(Grid::parse(&a.grid, a.dim)?, a.class.class),
    };
    if let Some(list) = &a.periods {
        cfg.periods = spectrum::parse_periods(list)?;
    }
    cfg.options = a.encoding.options_on(cfg.points.is_some())?;
    cfg.jobs = a.jobs.unwrap_or_else(spectrum::default_jobs);
    cfg.time_limit = a.time_limit;
    cfg.max_clauses = a.max_clauses;
    cfg.store = (!a.no_store).then(|| a.store.clone());
    cfg.progress = !a.quiet;
    cfg.recheck = a.recheck;
    let s = spectrum::run(&cfg)?;
    if let Some(path) = &a.markdown {
        orbitcnf::artifact::write_atomically(path, s.to_markdown().as_bytes())?;
    }
    print(&if a.json {
        s.to_json() + "\n"
    } else if a.csv {
        s.to_csv()
    } else {
        s.to_table()
    })?;
    Ok(if s.summary.all_decided { 0 } else { 2 })
}

// ---- Scale-out: external solvers, `decide --jobs`, split / run-cube / merge ----

use orbitcnf::solve::external::{External, ProofFormat, ProofRequest};
use orbitcnf::split::{self, jobs::JobsOptions, run as cube_run};

const SPLIT_HELP: &str = "\
How the space is cut: a cube fixes a prefix g(1..j) of the distance profile
g(k) = ‖x_i − x_{i+k}‖∞; prefixes are refined breadth-first until there are
at least --cubes of them (or every profile is fixed), and prefixes that no
multiplier lex-leader extends are dropped. coverage.cnf (the profile's order
encoding and lex-leader clauses of formula.cnf, plus the negation of every
cube) is refuted and its LRAT proof checked before anything is written: every
model of formula.cnf lies in some cube (encodings/cubes.md).

The folder:
  manifest.json        question, options, cube list, SHA-256 of every file
  formula.cnf          the whole CNF (orbitcnf header)
  cubes.icnf           the CNF in iCNF: 'p inccnf', the clauses, one 'a … 0' per cube
  cubes/cube-NNNN.cnf  the CNF plus the cube's units; `orbitcnf decode` reads
                       any solver's output on it
  coverage.cnf, coverage.lrat   the coverage check and its proof
  results/             filled by run-cube

Then: orbitcnf run-cube DIR INDEX for every index (see docs/cluster.md for
Slurm and GNU parallel), and orbitcnf merge DIR.";

const RUN_CUBE_HELP: &str = "\
The result file is written atomically, so a killed run leaves no partial
result; a cube that already has a final result (feasible or infeasible) is
skipped unless --force, so rerunning every index redoes only what is missing.
With the bundled solver an infeasible cube's LRAT proof is checked and kept as
results/cube-NNNN.lrat; merge checks it again.

Exit codes: 0 when a result was written (whatever the verdict: it is in the
result file, and merge combines them), 1 on error (a failed or lying solver is
recorded in the result file as status \"error\" before exiting).";

const MERGE_HELP: &str = "\
merge re-encodes the question and checks that formula.cnf, every cube file and
coverage.cnf are byte for byte what this orbitcnf writes, re-checks the
coverage proof, re-verifies every orbit and re-checks every cube's LRAT proof
against its cube CNF. The verdict is feasible if some cube is, infeasible if
every cube is refuted, and unknown otherwise, with the missing or failed cubes
listed by index (rerun them with run-cube, or get the list with --pending).

Exit codes (the SAT convention):
  10  feasible (the orbit is printed and checked)
  20  infeasible (every cube refuted and the cubes cover the space)
   0  unknown: some cube has no usable result (or --pending)
   1  error: the split folder is damaged or from another orbitcnf version";

/// Which SAT solver to use.
#[derive(Args, Debug)]
struct SolverArgs {
    /// The SAT solver: `bundled` (varisat; infeasible answers come with an
    /// LRAT proof checked by orbitcnf) or `external:'COMMAND ARGS'`, any
    /// DIMACS solver that follows the competition conventions (prints `s` and
    /// `v` lines, exits 10/20, or 0 for unknown), run as COMMAND ARGS CNF; e.g.
    /// --solver external:'cadical -q'. Its model is checked against every
    /// clause and decoded as `decode` does; a solver that crashes, lies or is
    /// missing is an error, never a verdict. Without --proof-arg its
    /// "unsatisfiable" is reported as an uncertified claim.
    #[arg(long, value_name = "SOLVER", default_value = "bundled")]
    solver: String,
    /// With an external solver: ask it for a proof of an "unsatisfiable"
    /// answer. ARG is appended after the CNF path with every {} replaced by
    /// the proof file's path (CaDiCaL and Kissat: --proof-arg '{}'); repeat
    /// for several arguments. An LRAT proof is checked by orbitcnf's checker;
    /// a DRAT proof is converted to LRAT by `rate` when it is on PATH and then
    /// checked; without `rate` the answer stays uncertified and says so.
    #[arg(long, value_name = "ARG", allow_hyphen_values = true)]
    proof_arg: Vec<String>,
    /// The format of the external solver's proof: drat (CaDiCaL's default,
    /// text or binary) or lrat.
    #[arg(long, value_name = "FORMAT", default_value = "drat")]
    proof_format: ProofFormat,
}

impl SolverArgs {
    /// The external solver, or `None` for the bundled one.
    fn external(&self) -> Result<Option<External>, Error> {
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
        match s.strip_prefix("external:") {
            Some(cmd) => External::parse(cmd).map(Some),
            None => Err(Error::Options(format!(
                "unknown solver {s:?}; write --solver bundled or --solver external:'COMMAND ARGS'"
            ))),
        }
    }

    /// The external solver with its proof request (`lrat`/`raw`: where to keep the proofs).
    fn external_with_proof(
        &self,
        certify: bool,
        lrat: Option<PathBuf>,
        raw: Option<PathBuf>,
    ) -> Result<Option<External>, Error> {
        let Some(mut ext) = self.external()? else {
            return Ok(None);
        };
        if !self.proof_arg.is_empty() {
            if !certify {
                return Err(Error::Options(
                    "--proof-arg and --no-certify contradict each other".into(),
                ));
            }
            ext.proof = Some(ProofRequest {
                args: self.proof_arg.clone(),
                format: self.proof_format,
                keep_lrat: lrat,
                keep_raw: raw,
            });
        } else if lrat.is_some() || raw.is_some() {
            return Err(Error::Options(
                "--proof, --drat and --bundle with an external solver need --proof-arg \
                 (how to ask the solver for a proof)"
                    .into(),
            ));
        }
        Ok(Some(ext))
    }
}

/// `decide`'s scale-out flags.
#[derive(Args, Debug)]
struct ScaleArgs {
    #[command(flatten)]
    solver: SolverArgs,
    /// Split the question into cubes (as `orbitcnf split` does) and solve
    /// them on K threads with the bundled solver. Each cube's LRAT proof is
    /// checked, and an infeasible answer comes with one LRAT proof of the
    /// whole CNF assembled from them, checked like a monolithic one.
    #[arg(long, short = 'j', value_name = "K", default_value_t = 1)]
    jobs: usize,
    /// With --jobs: how many cubes to aim for (default: 8 per thread).
    #[arg(long, value_name = "N")]
    cubes: Option<usize>,
}

/// `decide` with an external solver or with --jobs; `None` for the plain bundled path.
fn decide_scaled(
    a: &DecideArgs,
    q: &Question,
    options: &EncodeOptions,
    limits: &Limits,
) -> Result<Option<u8>, Error> {
    let s = &a.scale;
    let parallel = s.jobs != 1 || s.cubes.is_some();
    if s.solver.external()?.is_none() && !parallel {
        return Ok(None);
    }
    let lrat = match (&a.proof, &a.bundle) {
        (Some(p), _) => Some(p.clone()),
        (None, Some(dir)) => {
            std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
            Some(dir.join(orbitcnf::bundle::PROOF))
        }
        (None, None) => None,
    };
    let report = if parallel {
        if s.solver.external()?.is_some() {
            return Err(Error::Options(
                "--jobs runs the bundled solver; for an external solver use \
                 `orbitcnf split` and `orbitcnf run-cube --solver …`"
                    .into(),
            ));
        }
        if a.drat.is_some() {
            return Err(Error::Options(
                "--drat is not available with --jobs: the proof of a split run is \
                 assembled as LRAT (write it with --proof)"
                    .into(),
            ));
        }
        let opts = JobsOptions {
            jobs: s.jobs,
            cubes: s
                .cubes
                .unwrap_or_else(|| JobsOptions::default_cubes(s.jobs)),
            certify: !a.no_certify,
            lrat: lrat.clone(),
        };
        split::jobs::decide_parallel(q, options, &opts, limits, a.question.max_clauses)?
    } else {
        let mut ext = s
            .solver
            .external_with_proof(!a.no_certify, lrat.clone(), a.drat.clone())?
            .expect("an external solver");
        decide::decide(q, options, &mut ext, limits, a.question.max_clauses)?
    };
    if let Some(dir) = &a.bundle {
        let checked = matches!(
            report.certificate,
            orbitcnf::report::Certificate::CheckedProof(_)
        );
        let evidence = match (&report.orbit, &lrat) {
            (Some(orbit), _) => Some(Evidence::Orbit(orbit)),
            (None, Some(path)) if report.verdict == Verdict::Infeasible && checked => {
                Some(Evidence::Proof(path))
            }
            _ => None,
        };
        match evidence {
            Some(ev) => {
                orbitcnf::bundle::write_bundle(dir, q, options, ev)?;
                eprintln!("certificate bundle written to {}", dir.display());
            }
            None => eprintln!("no bundle written: the verdict is not certified"),
        }
    }
    print(&if a.json {
        report.to_json() + "\n"
    } else {
        report.to_text()
    })?;
    Ok(Some(report.verdict.exit_code() as u8))
}

#[derive(Args, Debug)]
struct SplitArgs {
    #[command(flatten)]
    question: QuestionArgs,
    #[command(flatten)]
    encoding: EncodingArgs,
    /// How many cubes to aim for: prefixes of the profile are refined until
    /// there are at least this many (fewer when the profile runs out).
    #[arg(long, value_name = "N", default_value_t = 16)]
    cubes: usize,
    /// The folder to write (created; it must not hold a split already).
    #[arg(long, value_name = "DIR")]
    out: PathBuf,
    /// Print the manifest as JSON instead of the summary.
    #[arg(long)]
    json: bool,
}

fn split_cmd(a: SplitArgs) -> Result<u8, Error> {
    let q = a.question.question()?;
    let m = split::write_split(
        &a.out,
        &q,
        &a.encoding.options_for(&q)?,
        a.cubes,
        a.question.max_clauses,
    )?;
    let n = m.cubes.len();
    let d = a.out.display();
    print(&if a.json {
        serde_json::to_string(&m).expect("serialises") + "\n"
    } else {
        format!(
            "question     {}\ncubes        {n} (asked for {}), {}\n\
             coverage     checked: LRAT proof of {} steps refutes coverage.cnf, so every model lies in a cube\n\
             written      {d}/manifest.json, formula.cnf, cubes.icnf, coverage.cnf, coverage.lrat, cubes/cube-NNNN.cnf\n\
             next         orbitcnf run-cube {d} INDEX   for INDEX in 0..{}   (docs/cluster.md: Slurm, GNU parallel)\n\
             \x20            orbitcnf merge {d}\n",
            q.statement(),
            a.cubes,
            if m.split.rule == "start-point" {
                "one per start point x_0 (full-map formulation)".to_string()
            } else {
                format!("prefixes of the distance profile g(1..{})", m.split.offsets)
            },
            m.coverage.lrat_steps,
            n.saturating_sub(1),
        )
    })?;
    Ok(0)
}

#[derive(Args, Debug)]
struct RunCubeArgs {
    /// The split folder written by `orbitcnf split`.
    dir: PathBuf,
    /// The cube's index, from 0.
    index: usize,
    #[command(flatten)]
    solver: SolverArgs,
    /// Give up after this many seconds and record "unknown".
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    time_limit: Option<Duration>,
    /// With the bundled solver: do not produce or check a proof (the result
    /// is then an uncertified claim).
    #[arg(long)]
    no_certify: bool,
    /// Solve again even if the cube already has a final result.
    #[arg(long)]
    force: bool,
    /// Print the result as JSON.
    #[arg(long)]
    json: bool,
    /// Do not show the progress line on stderr.
    #[arg(long, short)]
    quiet: bool,
}

fn run_cube_cmd(a: RunCubeArgs) -> Result<u8, Error> {
    let limits = Limits {
        time: a.time_limit,
        progress: !a.quiet && !a.json,
    };
    let lrat = cube_run::lrat_target(&a.dir, a.index);
    // An external solver is asked for a proof only with --proof-arg.
    let keep = (!a.solver.proof_arg.is_empty()).then(|| lrat.clone());
    let mut external = a.solver.external_with_proof(!a.no_certify, keep, None)?;
    let mut bundled = orbitcnf::solve::bundled::Bundled;
    let mut certified = Certified {
        lrat: Some(lrat),
        drat: None,
    };
    let backend: &mut dyn orbitcnf::solve::Backend = match (external.as_mut(), a.no_certify) {
        (Some(ext), _) => ext,
        (None, true) => &mut bundled,
        (None, false) => &mut certified,
    };
    let outcome = cube_run::run_cube(&a.dir, a.index, backend, &limits, a.force)?;
    let (r, note) = match &outcome {
        cube_run::RunOutcome::Solved(r) => (r, ""),
        cube_run::RunOutcome::AlreadyDone(r) => (r, " (already solved; --force solves again)"),
    };
    print(&if a.json {
        serde_json::to_string(r).expect("serialises") + "\n"
    } else {
        let status = match r.status {
            cube_run::CubeStatus::Feasible => "feasible (orbit verified)".to_string(),
            cube_run::CubeStatus::Infeasible => match &r.proof {
                Some(p) => format!("infeasible, LRAT proof checked ({} steps)", p.steps),
                None => "infeasible, uncertified (no proof)".to_string(),
            },
            cube_run::CubeStatus::Unknown => {
                format!("unknown: {}", r.reason.as_deref().unwrap_or("no answer"))
            }
            cube_run::CubeStatus::Error => {
                format!("error: {}", r.reason.as_deref().unwrap_or("?"))
            }
        };
        format!(
            "cube {}: {status}; {:.3} s with {}{note}\n",
            r.index, r.seconds, r.solver
        )
    })?;
    Ok(0)
}

#[derive(Args, Debug)]
struct MergeArgs {
    /// The split folder.
    dir: PathBuf,
    /// When every cube is refuted with a proof: also assemble one LRAT proof
    /// of formula.cnf from the cube proofs and the coverage proof, check it,
    /// and write it to FILE (checkable with `orbitcnf verify-proof
    /// DIR/formula.cnf FILE` or any LRAT checker).
    #[arg(long, value_name = "FILE")]
    proof: Option<PathBuf>,
    /// Only print the indices of the cubes without a final result, one per
    /// line (for rerunning them), and exit 0.
    #[arg(long)]
    pending: bool,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
}

fn merge_cmd(a: MergeArgs) -> Result<u8, Error> {
    if a.pending {
        let idx = cube_run::pending_indices(&a.dir)?;
        print(&idx.iter().map(|i| format!("{i}\n")).collect::<String>())?;
        return Ok(0);
    }
    let r = cube_run::merge(&a.dir, a.proof.as_deref())?;
    print(&if a.json {
        serde_json::to_string(&r).expect("serialises") + "\n"
    } else {
        r.to_text()
    })?;
    Ok(r.exit_code() as u8)
}
