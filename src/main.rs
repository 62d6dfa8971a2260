//! The `orbitcnf` command: parses arguments, calls the library, prints the
//! answer and maps it to an exit code. The commands live in [`cli`].

mod cli;

use std::ffi::OsString;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

use cli::{EXIT_CODES, bench, check, cubes, decide, report, sweep};
use orbitcnf::Error;

/// mimalloc instead of the system allocator: every cube of a block builds
/// and drops a solver and its self-checker over the whole formula, millions
/// of small allocations, and mimalloc measured about 15% less CPU on such
/// cubes (`Cargo.toml` has the measurement).
#[global_allocator]
static ALLOC: mimalloc::MiMalloc = mimalloc::MiMalloc;

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
    /// Hard questions: decide first runs one ordinary solve for at most 60 s
    /// (the probe; --probe SECS, --probe-conflicts N). Most questions are
    /// answered there, with the ordinary report. Otherwise, while time remains
    /// (--time-limit), the question is split into cubes, one per distance
    /// profile g(1..K) that the symmetry breaking and the profile exclusions
    /// leave, solved on every core (--jobs K); with more than 20,000 such
    /// profiles there is one solve and no switch (measured: prefix cubes cost
    /// more there). Every cube's
    /// proof is checked and one LRAT proof of the whole CNF is assembled and
    /// checked. The report's `strategy` line (JSON: "strategy") says so.
    /// --no-auto-split keeps the single solve; --cubes N splits at once;
    /// `orbitcnf split --cubes auto` writes the same cubes for a cluster.
    ///
    /// Example: orbitcnf decide --dim 3 --grid=-1..1 --period 8
    #[command(after_help = EXIT_CODES)]
    Decide(decide::DecideArgs),
    /// Write the CNF of a question in DIMACS, with a header that records the
    /// question, the options and the meaning of every variable.
    ///
    /// Solve the file with any DIMACS solver, then read its answer back with
    /// `orbitcnf decode FILE.cnf SOLVER_OUTPUT`.
    Encode(decide::EncodeArgs),
    /// Read a DIMACS solver's output for a CNF written by `encode`, check the
    /// model against every clause, decode the orbit and verify it.
    #[command(after_help = EXIT_CODES)]
    Decode(decide::DecodeArgs),
    /// Verify an orbit given as JSON, independently of the encoder; with
    /// --map, build the nonexpansive map on the whole grid and check it on
    /// every pair of points.
    ///
    /// The file is {"grid": "-1..1,-1..1", "orbit": [[-1,-1],[-1,1],[1,1],[1,-1]]}
    /// or the output of `decide --json`.
    Check(check::CheckArgs),
    /// Run the fixed benchmark set: each question under the default encoding,
    /// without the profile exclusions (`--no-classes`), `--symmetry none` and
    /// the plain reference encoding, with times, conflicts and ratios printed
    /// in one table; or, with --spectrum, time the whole {-1,0,1}^4 spectrum.
    Bench(bench::BenchArgs),
    /// Check an LRAT proof of unsatisfiability against a CNF with orbitcnf's
    /// own checker (independent of the solver's). Exit 0 when accepted, 1
    /// with the step and the reason when rejected.
    VerifyProof(check::VerifyProofArgs),
    /// Re-check a certificate bundle written by `decide --bundle`: re-encode
    /// the question, compare the CNF byte for byte, check every file's hash,
    /// and check the proof (or the orbit).
    CheckBundle(check::CheckBundleArgs),
    /// Decide every period of a box (by default all that the published bound
    /// allows), cheapest first, on all cores, with every answer certified and
    /// kept in a crash-safe results store; print a table, JSON, CSV or a
    /// Markdown page beside the published bounds.
    ///
    /// Example: orbitcnf spectrum --dim 3 --grid=-1..1
    #[command(after_help = sweep::SPECTRUM_HELP)]
    Spectrum(sweep::SpectrumArgs),
    /// Make a LaTeX table, an SVG picture or a self-contained HTML page from
    /// an answer, a certificate bundle or a results store. The orbit is
    /// re-checked and its map rebuilt and checked before anything is drawn.
    ///
    /// Example: orbitcnf report answer.json --format svg --picture cycle -o cycle.svg
    Report(report::ReportArgs),
    /// Split a question into cubes for solving on many cores or machines:
    /// writes a folder with the CNF, one standalone CNF per cube, an iCNF
    /// file, a checked coverage proof and manifest.json.
    ///
    /// Example: orbitcnf split --dim 4 --grid=-1..1 --period 17 --cubes 32 --out t4p17
    #[command(after_help = cubes::SPLIT_HELP)]
    Split(cubes::SplitArgs),
    /// Solve one cube of a split folder (or a range of them) and write its
    /// result file (results/cube-NNNN.json, with the LRAT proof beside it).
    ///
    /// Example: orbitcnf run-cube t4p17 5 --time-limit 3600
    /// (or: orbitcnf run-cube t4p17 0..99; every cube on 8 workers: orbitcnf
    /// run-cube t4p17 all --jobs 8)
    #[command(after_help = cubes::RUN_CUBE_HELP)]
    RunCube(cubes::RunCubeArgs),
    /// Combine the results of a split folder into one verdict, re-checking
    /// the split, every orbit and every proof.
    ///
    /// Example: orbitcnf merge t4p17
    #[command(after_help = cubes::MERGE_HELP)]
    Merge(cubes::MergeArgs),
    /// Cut the unanswered cubes of a real-space split into smaller cubes, in
    /// place: the pieces are appended, a new coverage proof is checked, the
    /// other results stay valid.
    ///
    /// Example: orbitcnf refine r18 --cubes 16
    #[command(after_help = cubes::REFINE_HELP)]
    Refine(cubes::RefineArgs),
}

/// `--grid` accepts values that start with a minus (`--grid -1..1`), so
/// `--grid --dim 2` would take `--dim` as the grid and then stumble over
/// the `2`; say what really went wrong. Arguments need not be UTF-8.
fn grid_missing_its_value(args: &[OsString]) -> Option<String> {
    args.windows(2).find_map(|w| {
        let next = w[1].to_string_lossy();
        (w[0] == "--grid" && next.starts_with("--")).then(|| {
            format!(
                "orbitcnf: error: --grid needs a value, but is followed by the option '{next}'; \
                 write e.g. --grid=-1..1 (see 'orbitcnf decide --help')"
            )
        })
    })
}

/// clap's message spans several lines (the error, the missing arguments, a
/// tip, the usage); keep all but the usage, on one line, with our own
/// pointer to the help.
fn usage_error(e: &clap::Error) -> String {
    let text = e.render().to_string();
    let parts: Vec<&str> = text
        .lines()
        .map(str::trim)
        .take_while(|l| !l.starts_with("Usage:"))
        .filter(|l| !l.is_empty() && !l.starts_with("For more information"))
        .collect();
    let msg = parts.join(" ");
    format!(
        "orbitcnf: error: {} (see 'orbitcnf --help')",
        msg.trim_start_matches("error: ")
    )
}

/// An error of the library on one line, with its causes, and the flag that
/// helps where there is one (the library names no flags).
fn error_line(e: &Error) -> String {
    let mut msg = e.to_string();
    if matches!(e, Error::TooLarge { .. }) {
        msg.push_str("; raise --max-clauses if you mean it");
    }
    let mut src = std::error::Error::source(e);
    while let Some(s) = src {
        let t = s.to_string();
        if !msg.contains(&t) {
            msg.push_str(": ");
            msg.push_str(&t);
        }
        src = s.source();
    }
    format!("orbitcnf: error: {}", msg.replace('\n', " "))
}

fn main() -> ExitCode {
    let args: Vec<OsString> = std::env::args_os().collect();
    if let Some(message) = grid_missing_its_value(&args) {
        eprintln!("{message}");
        return ExitCode::from(1);
    }
    let cli = match Cli::try_parse_from(&args) {
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
            } else {
                eprintln!("{}", usage_error(&e));
            }
            return ExitCode::from(1);
        }
    };
    let outcome = match cli.command {
        Command::Decide(a) => decide::run_decide(a),
        Command::Encode(a) => decide::run_encode(a),
        Command::Decode(a) => decide::run_decode(a),
        Command::Check(a) => check::run_check(a),
        Command::Bench(a) => bench::run(a),
        Command::VerifyProof(a) => check::run_verify_proof(a),
        Command::CheckBundle(a) => check::run_check_bundle(a),
        Command::Spectrum(a) => sweep::run(a),
        Command::Report(a) => report::run(a),
        Command::Split(a) => cubes::run_split(a),
        Command::RunCube(a) => cubes::run_cube(a),
        Command::Merge(a) => cubes::run_merge(a),
        Command::Refine(a) => cubes::run_refine(a),
    };
    match outcome {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            eprintln!("{}", error_line(&e));
            ExitCode::from(1)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_command_line_is_consistent() {
        use clap::CommandFactory;
        Cli::command().debug_assert();
    }

    #[test]
    fn a_grid_without_its_value_is_named_even_among_non_utf8_arguments() {
        #[cfg(unix)]
        {
            use std::os::unix::ffi::OsStringExt;
            let args = vec![
                OsString::from("orbitcnf"),
                OsString::from_vec(vec![0xff, 0xfe]),
                OsString::from("--grid"),
                OsString::from("--dim"),
            ];
            let m = grid_missing_its_value(&args).unwrap();
            assert!(m.contains("followed by the option '--dim'"), "{m}");
        }
    }

    #[test]
    fn errors_print_on_one_line_with_the_helping_flag() {
        let e = Error::TooLarge {
            clauses: 10,
            vars: 5,
            limit: 1,
        };
        let line = error_line(&e);
        assert!(
            line.ends_with("raise --max-clauses if you mean it"),
            "{line}"
        );
        assert!(!line.contains('\n'));
    }
}
