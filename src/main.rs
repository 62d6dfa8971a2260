//! The `orbitcnf` command: a thin layer over the library.

use std::io::{self, Write};
use std::path::PathBuf;
use std::process::ExitCode;
use std::time::Duration;

use clap::{Args, Parser, Subcommand};

use orbitcnf::Verdict;
use orbitcnf::bundle::Evidence;
use orbitcnf::encode::{self, DEFAULT_MAX_CLAUSES, EncodeOptions, Symmetry};
use orbitcnf::proof::LratOptions;
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
/// orbitcnf encodes that as CNF, solves it, and checks every orbit it reports.
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
    /// `--symmetry none` and the plain reference encoding, with times,
    /// conflicts and ratios printed in one table.
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
    /// Leave out the cases that take minutes ({-1,0,1}^4 with p = 18 and 20).
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
        allow_hyphen_values = true
    )]
    grid: String,
    /// The minimal period p asked for.
    #[arg(long, short = 'p', value_name = "P", default_value_t = 8)]
    period: usize,
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
        Question::new(Grid::parse(&self.grid, self.dim)?, self.period)
    }
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
    /// solver refute "p points in fewer than p places" quickly).
    #[arg(long)]
    no_count: bool,
    /// Leave out the redundant packing bound (on by default; it refutes
    /// "too many pairwise far points" by weighted counting over windows).
    #[arg(long)]
    no_packing: bool,
}

impl EncodingArgs {
    fn options(&self) -> Result<EncodeOptions, Error> {
        Ok(EncodeOptions {
            symmetry: Symmetry::parse(&self.symmetry)?,
            count: !self.no_count,
            packing: !self.no_packing,
            ..EncodeOptions::default()
        })
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
    /// With --map: write the map as JSON to FILE instead of printing the table.
    #[arg(long, value_name = "FILE", requires = "map")]
    map_out: Option<PathBuf>,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
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

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            use clap::error::ErrorKind;
            if matches!(e.kind(), ErrorKind::DisplayHelp | ErrorKind::DisplayVersion) {
                let _ = e.print();
                return ExitCode::SUCCESS;
            }
            let text = e.render().to_string();
            let first = text
                .lines()
                .next()
                .unwrap_or("bad arguments")
                .trim_start_matches("error: ");
            eprintln!("orbitcnf: error: {first} (see 'orbitcnf --help')");
            return ExitCode::from(1);
        }
    };
    match run(cli) {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            let mut msg = e.to_string();
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
            let options = a.encoding.options()?;
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
                        (Some(orbit), _) => Some(Evidence::Orbit(orbit)),
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
            print(&if a.json {
                report.to_json() + "\n"
            } else {
                report.to_text()
            })?;
            Ok(report.verdict.exit_code() as u8)
        }
        Command::Encode(a) => {
            let q = a.question.question()?;
            let enc = encode::encode(&q, &a.encoding.options()?, a.question.max_clauses)?;
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
        Command::Bench(a) => bench(a),
        Command::VerifyProof(a) => verify_proof(a),
        Command::Spectrum(a) => spectrum(a),
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
    let bounds = f.grid.ranges();
    let orbit_check = verify::check_orbit(bounds, &f.orbit)?;
    let mut json = serde_json::json!({
        "grid": f.grid.spec(),
        "period": f.orbit.len(),
        "orbit_check": orbit_check,
    });
    let mut text = format!(
        "grid         {}\norbit check  passed: {orbit_check}\nprofile      {:?}\n",
        f.grid, orbit_check.profile
    );
    if a.map {
        let table = verify::extend(bounds, &f.orbit)?;
        let map_check = verify::check_map(&table, &f.orbit)?;
        text.push_str(&format!("map check    passed: {map_check}\n"));
        json["map_check"] = serde_json::to_value(&map_check).expect("serialises");
        let entries: Vec<serde_json::Value> = table
            .entries
            .iter()
            .map(|(z, fz)| serde_json::json!({"x": z, "f": fz}))
            .collect();
        match &a.map_out {
            Some(path) => {
                let doc = serde_json::json!({"grid": f.grid.spec(), "map": entries});
                dimacs::write_atomically(path, (doc.to_string() + "\n").as_bytes())?;
                text.push_str(&format!("map          written to {}\n", path.display()));
            }
            None => {
                json["map"] = serde_json::Value::Array(entries);
                text.push_str(
                    "map          x -> f(x), f_c(x) = clamp(min_j (x_{j+1,c} + ‖x − x_j‖∞))\n",
                );
                for (z, fz) in &table.entries {
                    text.push_str(&format!("             {z:?} -> {fz:?}\n"));
                }
            }
        }
    }
    print(&if a.json {
        json.to_string() + "\n"
    } else {
        text
    })?;
    Ok(0)
}

const SPECTRUM_HELP: &str = "\
How each period is answered, cheapest first:
  stored        a decided answer in the results store under the same question,
                resolved encoding options and formulation is reused (its orbit
                re-checked, its proof file present; --recheck re-checks proofs)
  construction  p ≤ 2^n' (n' = coordinates with more than one value): p vertices
                of a unit cube, pairwise at distance 1; the orbit is checked, and
                on small boxes its extension to a nonexpansive map as well
  solver        everything else: `decide` with the certified solver; infeasible
                answers carry an LRAT proof accepted by orbitcnf's own checker

The results store (--store DIR, default ./orbitcnf-results):
  DIR/answers/<key>.json   one answer per file: verdict, how decided, orbit,
                           proof path and SHA-256, statistics, limits, tool
                           version, run id, start and finish times
  DIR/proofs/<key>.<run>.lrat   the LRAT proofs of infeasible answers
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
  n' ≤ 3, or infeasible at p ≤ 2^n').

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
  orbitcnf spectrum --dim 2 --grid=0..3 --periods 5..8 --no-store --json";

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
        allow_hyphen_values = true
    )]
    grid: String,
    /// The periods: `A..B` (inclusive), `P`, or a comma-separated list of both.
    /// Default: 1 up to the proven bound max_k 2^k·C(n',k) (Lemmens and
    /// Scheutzow 2005), capped by the number of grid points.
    #[arg(long, value_name = "LIST")]
    periods: Option<String>,
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
    #[arg(long)]
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
    let grid = Grid::parse(&a.grid, a.dim)?;
    let mut cfg = spectrum::SweepConfig::new(grid);
    if let Some(list) = &a.periods {
        cfg.periods = spectrum::parse_periods(list)?;
    }
    cfg.options = a.encoding.options()?;
    cfg.jobs = a.jobs.unwrap_or_else(spectrum::default_jobs);
    cfg.time_limit = a.time_limit;
    cfg.max_clauses = a.max_clauses;
    cfg.store = (!a.no_store).then(|| a.store.clone());
    cfg.progress = !a.quiet;
    cfg.recheck = a.recheck;
    let s = spectrum::run(&cfg)?;
    if let Some(path) = &a.markdown {
        dimacs::write_atomically(path, s.to_markdown().as_bytes())?;
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
