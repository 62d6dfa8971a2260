//! `split`, `run-cube` and `merge`: a question cut into cubes that are
//! solved anywhere and combined here.

use std::path::PathBuf;
use std::time::Duration;

use clap::Args;

use orbitcnf::Error;
use orbitcnf::proof::lrat::compressed::FileEncoding;
use orbitcnf::real;
use orbitcnf::spectrum::Recorded;
use orbitcnf::split::auto::CubeTarget;
use orbitcnf::split::layout::{LayoutChoice, SplitLayout};
use orbitcnf::split::range::CubeEvent;
use orbitcnf::split::{self, run as cube_run};

use super::args::{EncodingArgs, ProgressArgs, QuestionArgs, SolverArgs, parse_seconds};
use super::{Outcome, code, print, print_either};

/// The long help of `split`.
pub const SPLIT_HELP: &str = "\
How the space is cut: a cube fixes a prefix g(1..j) of the distance profile
g(k) = ‖x_i − x_{i+k}‖∞; prefixes are refined breadth-first until there are
at least --cubes of them (or every profile is fixed), and prefixes that no
multiplier lex-leader extends are dropped. --cubes auto takes one cube per
whole lex-leader profile (the cubes `decide` switches to by itself) while there
are at most 20,000 of them, else 1024 breadth-first prefixes. coverage.cnf (the profile's order
encoding and lex-leader clauses of formula.cnf, plus the negation of every
cube) is refuted and its LRAT proof checked before anything is written: every
model of formula.cnf lies in some cube (encodings/cubes.md).

The folder:
  manifest.json        question, options, cube list, SHA-256 of every file
  formula.cnf          the whole CNF (orbitcnf header)
  cubes.icnf           the CNF in iCNF: 'p inccnf', the clauses, one 'a … 0' per cube
  cubes/cube-NNNN.cnf  the CNF plus the cube's units; `orbitcnf decode` reads
                       any solver's output on it (file layout only)
  coverage.cnf, coverage.lrat   the coverage check and its proof
  results/             filled by run-cube

Layout: cube files repeat the whole CNF, so above 1 GiB of them (--layout
auto, the default) or with --layout compact there are none: the manifest
lists each cube's literals with a digest of formula.cnf and the cube, and
run-cube builds the CNF plus the cube's units in memory (an external solver
gets it as a temporary file). To run a solver on one cube by hand, take
formula.cnf and the cube's 'a' line of cubes.icnf as unit clauses.

Then: orbitcnf run-cube DIR INDEX for every index (see docs/cluster.md for
Slurm and GNU parallel), and orbitcnf merge DIR.

Real space (--real --dim N -p P --cubes COUNT): the cubes fix which
coordinate and sign attain some pairs' distances (literals of the
skeleton's T(i,j,c) variables, chosen by look-ahead on the skeleton's unit
propagation); coverage.cnf is the skeleton plus every negated cube, refuted
with a checked LRAT proof (encodings/real-space.md §9). The folder holds
manifest.json (format orbitcnf-real-split/1), skeleton.cnf, coverage.cnf,
coverage.lrat and results/; run-cube and merge recognise it. --cubes auto,
--layout and the grid encoding flags do not apply.";

/// The long help of `run-cube`.
pub const RUN_CUBE_HELP: &str = "\
The result file is written atomically, so a killed run leaves no partial
result; a cube that already has a final result (feasible or infeasible) is
skipped unless --force, so rerunning every index redoes only what is missing.
With the bundled solver an infeasible cube's LRAT proof is checked and kept as
results/cube-NNNN.lrat; merge checks it again.

Every cube on one machine, in blocks of 200, the highest first (the blocks
that the campaign of {-1,0,1}^5 with p = 52, 86,870 cubes, ran in 40 minutes
on 2 cores under GNU parallel; docs/campaigns.md):
  orbitcnf run-cube g52 all --jobs 2 --proof-encoding zstd \\
      --solver external:'cadical -q --lrat' --proof-arg '{}' --proof-format lrat \\
      --handoff-after 10 --time-limit 7200 --progress lines

Exit codes: 0 when a result was written (whatever the verdict: it is in the
result file, and merge combines them), 1 on error (a failed or lying solver is
recorded in the result file as status \"error\" before exiting).

On a real-space split (split --real), the cube is solved by the real
search of decide --real with the cube's literals as unit clauses; an
infeasible cube's certificate (lemmas.txt with Farkas multipliers and
proof.lrat, checked with the cube's literals) goes to results/cube-NNNN/
before results/cube-NNNN.json is written. --solver external:'COMMAND'
with --handoff-after SECS hands the endgame to COMMAND as decide --real
does; --proof-arg and --proof-encoding are for grid splits.";

/// The long help of `merge`.
pub const MERGE_HELP: &str = "\
merge re-encodes the question and checks that formula.cnf, every cube file (or,
in the compact layout, every cube's digest) and coverage.cnf are byte for byte
what this orbitcnf writes, re-checks the
coverage proof, re-verifies every orbit and re-checks every cube's LRAT proof
against its cube CNF. The verdict is feasible if some cube is, infeasible if
every cube is refuted, and unknown otherwise, with the missing or failed cubes
listed by index (rerun them with run-cube, or get the list with --pending).

Exit codes (the SAT convention):
  10  feasible (the orbit is printed and checked)
  20  infeasible (every cube refuted with a checked proof, and the cubes cover
      the space)
  21  infeasible on a solver's unchecked word for some cube (only with
      --trust-solver)
   0  unknown: some cube has no usable result (or --pending)
   1  error: the split folder is damaged or from another orbitcnf version

With --store DIR the verdict also goes into a results store, so that
`spectrum --store DIR` reuses it (and refutes its multiples by the divisor
rule) and `report DIR` shows it beside the other periods: infeasible backed
by this folder (recorded only when every cube has a checked proof), feasible
with its orbit. Each reuse checks that the folder's manifest.json still has
the SHA-256 recorded; `spectrum --recheck` merges the folder again. Keep the
folder where it is, or the stored answer is set aside and decided again.

On a real-space split, merge rebuilds the skeleton and compares
skeleton.cnf byte for byte, recomputes every cube's digest, checks the
coverage proof against a coverage CNF rebuilt from the manifest's cubes,
re-checks every cube's certificate (Farkas checker, LRAT checker, with the
cube's literals) and every orbit. A rejected certificate is listed as
pending, with the file and line; --proof is for grid splits.";

/// Arguments of `split`.
#[derive(Args, Debug)]
pub struct SplitArgs {
    #[command(flatten)]
    question: QuestionArgs,
    #[command(flatten)]
    encoding: EncodingArgs,
    /// How many cubes to aim for: prefixes of the profile are refined until
    /// there are at least this many (fewer when the profile runs out); or
    /// `auto`: one per whole lex-leader profile (the cubes `decide` switches
    /// to when its probe gives no answer) while there are at most 20,000 of
    /// them, else 1024 breadth-first prefixes.
    #[arg(long, value_name = "N|auto", default_value = "16", value_parser = parse_cube_target)]
    cubes: CubeTarget,
    /// `files`: one standalone CNF per cube in cubes/; `compact`: none, the
    /// cubes are built from formula.cnf and their literals by run-cube;
    /// `auto` (the default): files while they take at most 1 GiB together.
    #[arg(long, value_name = "LAYOUT", default_value = "auto", value_parser = parse_layout)]
    layout: LayoutChoice,
    /// The folder to write (created). Run again on a folder that holds the
    /// same split, it writes again any file that is missing or damaged and
    /// keeps the results; a split of another question there is an error.
    #[arg(long, value_name = "DIR")]
    out: PathBuf,
    /// Print the manifest as JSON instead of the summary.
    #[arg(long)]
    json: bool,
    #[command(flatten)]
    progress: ProgressArgs,
}

/// Runs `split`.
pub fn run_split(a: SplitArgs) -> Outcome {
    if let Some(n) = a.question.domain.real_dim()? {
        let e = &a.encoding;
        let grid_only = [
            (e.symmetry != "all", "--symmetry"),
            (
                e.no_count || e.no_packing || e.no_classes || e.no_nested,
                "--no-count/--no-packing/--no-classes/--no-nested",
            ),
            (e.formulation.is_some(), "--formulation"),
            (a.layout != LayoutChoice::Auto, "--layout"),
            (
                a.question.class.class != orbitcnf::question::MapClass::Nonexpansive,
                "--class",
            ),
        ];
        if let Some((_, flag)) = grid_only.iter().find(|(on, _)| *on) {
            return Err(Error::Options(format!(
                "{flag} applies to grid questions, not to --real"
            )));
        }
        let CubeTarget::Count(cubes) = a.cubes else {
            return Err(Error::Options(
                "--cubes auto applies to grid questions; give --real a cube count".into(),
            ));
        };
        return super::real::split(n, a.question.period, cubes, &a.out, a.json);
    }
    let q = a.question.question()?;
    let options = a.encoding.options(q.points.is_some())?;
    // The walks of the largest splits take minutes; the watcher reports them.
    let watch = orbitcnf::progress::Watcher::start(a.progress.mode(a.json), "split");
    let w = split::write_split(
        &a.out,
        &q,
        &options,
        a.cubes,
        a.layout,
        a.encoding.max_clauses,
    );
    drop(watch);
    let w = w?;
    if !w.restored.is_empty() {
        eprintln!(
            "the split in {} was repaired: written again: {}",
            a.out.display(),
            w.restored.join(", ")
        );
    }
    print_either(
        a.json,
        || serde_json::to_string(&w.manifest).expect("serialises"),
        || w.manifest.summary(&a.out, &q.statement()),
    )?;
    Ok(0)
}

fn parse_cube_target(s: &str) -> Result<CubeTarget, String> {
    match s {
        "auto" => Ok(CubeTarget::Auto),
        n => n
            .parse()
            .map(CubeTarget::Count)
            .map_err(|_| format!("{s:?} is neither a cube count nor `auto`")),
    }
}

/// `N` as `(N, N)`, `A..B` (inclusive, `A ≤ B`) as `(A, B)`, or `all` as
/// `(0, usize::MAX)`.
fn parse_indices(s: &str) -> Result<(usize, usize), String> {
    if s.trim() == "all" {
        return Ok((0, usize::MAX));
    }
    let num = |t: &str| {
        t.trim()
            .parse::<usize>()
            .map_err(|_| format!("{s:?}: write a cube index (5) or an inclusive range (0..99)"))
    };
    let (a, b) = match s.split_once("..") {
        Some((a, b)) => (num(a)?, num(b.strip_prefix('=').unwrap_or(b))?),
        None => (num(s)?, num(s)?),
    };
    if a > b {
        return Err(format!(
            "{s:?}: the range is empty (its first index is above its last)"
        ));
    }
    Ok((a, b))
}

fn parse_layout(s: &str) -> Result<LayoutChoice, String> {
    match s {
        "auto" => Ok(LayoutChoice::Auto),
        "files" => Ok(LayoutChoice::Fixed(SplitLayout::Files)),
        "compact" => Ok(LayoutChoice::Fixed(SplitLayout::Compact)),
        _ => Err(format!("{s:?}: write files, compact or auto")),
    }
}

/// Arguments of `run-cube`.
#[derive(Args, Debug)]
pub struct RunCubeArgs {
    /// The split folder written by `orbitcnf split`.
    dir: PathBuf,
    /// The cube's index, from 0; an inclusive range `A..B` of cubes,
    /// solved one after another in this process (for grid splits the
    /// formula is read once, which is most of the cost of an easy cube),
    /// with one result line per cube (one JSON object per line with
    /// --json); or `all`. Each cube's result is written as soon as it is
    /// known.
    #[arg(value_name = "INDEX|A..B|all", value_parser = parse_indices)]
    index: (usize, usize),
    #[command(flatten)]
    solver: SolverArgs,
    /// Give up after this many seconds and record "unknown".
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    time_limit: Option<Duration>,
    /// With the bundled solver: do not produce or check a proof (the result
    /// is then an unchecked claim, which merge counts only with
    /// --trust-solver).
    #[arg(long)]
    no_certify: bool,
    /// Solve again even if the cube already has a final result.
    #[arg(long)]
    force: bool,
    /// How a refuted cube's LRAT proof is kept in results/: text; binary
    /// (about 45% of the size; with the bundled solver); or zstd, the
    /// bundled solver's binary proof or the external solver's proof as it
    /// came, compressed with zstd (on 1,000 cubes of {-2..2}^4, p = 30: 29%
    /// of the binary bytes, in the same time). merge and verify-proof read
    /// all three. Grid splits.
    #[arg(long, value_name = "ENC", default_value = "text")]
    proof_encoding: FileEncoding,
    /// Print the result as JSON.
    #[arg(long)]
    json: bool,
    #[command(flatten)]
    progress: ProgressArgs,
    /// With --solver external:'COMMAND': let the bundled solver try each
    /// cube for SECS seconds first and hand only the cubes it leaves
    /// unknown to COMMAND (--proof-arg and --time-limit apply to COMMAND's
    /// run). For grid splits this sends the rare hard cube to a faster
    /// solver without paying its start-up and proof conversion on the easy
    /// ones. Real-space splits: search with the bundled CDCL(T) for SECS
    /// seconds (default 10), then hand the propositional refutation of the
    /// cube to COMMAND (as decide --real).
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    handoff_after: Option<Duration>,
    /// Grid splits: solve each cube with a fresh bundled solver. By default
    /// one solver holds the formula for the whole range and assumes one cube
    /// after another, keeping what it learned (each refuted cube still gets
    /// its own LRAT proof, checked before its result is written); on the
    /// cubes of one split that is many times faster.
    #[arg(long)]
    fresh_solver: bool,
    /// Grid splits: run the range on N workers, in blocks of --block cubes,
    /// the highest block first (each block one process's worth of work: one
    /// solver, then the hand-off of what it left open). This is what a
    /// campaign under GNU parallel does, in one command; the result lines
    /// of a block are printed when it is done.
    #[arg(long, value_name = "N", default_value_t = 1)]
    jobs: usize,
    /// The cubes per block with --jobs.
    #[arg(long, value_name = "B", default_value_t = 200, value_parser = clap::builder::RangedU64ValueParser::<usize>::new().range(1..))]
    block: usize,
    /// Grid splits, one solver for the range: start a fresh solver after a
    /// cube whose proof is larger than MB megabytes. After a hard cube the
    /// easy cubes that follow are often refuted through its learned
    /// clauses, and each then carries their whole derivation in its own
    /// proof, to be written and checked again. On 2,000 prefix cubes of
    /// {−2,…,2}^4 with p = 30 that was 3.5 GB of proofs and 41 s without
    /// the bound, 172 MB and 11 s with the default.
    #[arg(long, value_name = "MB", value_parser = parse_megabytes, default_value = "1")]
    max_proof_mb: u64,
}

/// Parses a number of megabytes into bytes: at least one byte (a bound that
/// rounds to nothing would silently mean "a fresh solver after every cube").
fn parse_megabytes(s: &str) -> std::result::Result<u64, String> {
    match s.trim().parse::<f64>() {
        Ok(mb) if mb.is_finite() && mb * 1e6 >= 1.0 && mb <= 1e9 => Ok((mb * 1e6) as u64),
        _ => Err(format!(
            "{s:?} is not a number of megabytes from 0.000001 to 10^9"
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::parse_megabytes;

    #[test]
    fn megabytes_become_bytes_and_a_bound_of_no_bytes_is_refused() {
        assert_eq!(parse_megabytes("1"), Ok(1_000_000));
        assert_eq!(parse_megabytes("0.25"), Ok(250_000));
        for bad in ["0", "-1", "0.0000001", "nan", "inf", "1e10", "one"] {
            assert!(parse_megabytes(bad).is_err(), "{bad} accepted");
        }
    }
}

/// Runs `run-cube`.
pub fn run_cube(a: RunCubeArgs) -> Outcome {
    if real::cubes::is_real_split(&a.dir) {
        if !a.solver.proof_arg.is_empty() {
            return Err(Error::Options(
                "--proof-arg applies to grid splits; a real-space cube's certificate is its \
                 Farkas lemmas and LRAT proof, with --solver external:'COMMAND' handed off as \
                 in decide --real"
                    .into(),
            ));
        }
        if a.jobs > 1 {
            return Err(Error::Options(
                "--jobs applies to grid splits; run ranges of a real-space split side by side \
                 instead (docs/cluster.md)"
                    .into(),
            ));
        }
        let mut o = real::RealOptions::new();
        o.certify = !a.no_certify;
        o.handoff = super::real::handoff(&a.solver.solver, a.handoff_after)?;
        let cubes = real::cubes::run::cube_count(&a.dir)?;
        let (first, last) = resolve_range(&a, cubes)?;
        for index in first..=last {
            super::real::run_cube(
                &a.dir,
                index,
                &o,
                a.time_limit,
                a.force,
                a.json,
                a.progress.mode(a.json),
            )?;
        }
        return Ok(0);
    }
    if a.handoff_after.is_some() && a.solver.solver.trim() == "bundled" {
        return Err(Error::Options(
            "--handoff-after needs an external solver to hand hard cubes to \
             (--solver external:'COMMAND')"
                .into(),
        ));
    }
    if a.jobs == 0 {
        return Err(Error::Options(
            "run-cube needs at least one worker (--jobs 1 or more)".into(),
        ));
    }
    let cubes = cube_run::CubeRunner::new(&a.dir)?.cubes();
    let (first, last) = resolve_range(&a, cubes)?;
    let o = split::range::RangeOptions {
        time_limit: a.time_limit,
        progress: a.progress.mode(a.json),
        external: a.solver.external(!a.no_certify)?,
        handoff_after: a.handoff_after,
        fresh_solver: a.fresh_solver,
        certify: !a.no_certify,
        force: a.force,
        encoding: a.proof_encoding,
        cone_bytes: a.max_proof_mb,
    };
    let mut failures = Failures::default();
    if a.jobs == 1 {
        split::range::run_range(&a.dir, first, last, &o, &mut |e| failures.emit(a.json, e))?;
        return failures.finish();
    }
    // Each block's solves report no progress of their own: the blocks do.
    let quiet = split::range::RangeOptions {
        progress: orbitcnf::progress::ProgressMode::Off,
        ..o
    };
    let plan = split::range::BlockPlan {
        jobs: a.jobs,
        block: a.block,
        progress: a.progress.mode(a.json),
        label: "run-cube",
        go_on: &|| true,
    };
    split::range::run_blocks(&a.dir, (first, last), &quiet, &plan, |done| {
        for e in done.events {
            failures.emit(a.json, e)?;
        }
        Ok(())
    })?;
    failures.finish()
}

/// The inclusive range of cubes that `a.index` names in a split of `cubes`
/// cubes (`all` is every cube).
fn resolve_range(a: &RunCubeArgs, cubes: usize) -> Result<(usize, usize), Error> {
    let (first, last) = a.index;
    if last == usize::MAX && first == 0 {
        return match cubes {
            0 => Err(Error::Options(format!(
                "{} has no cubes to run",
                a.dir.display()
            ))),
            n => Ok((0, n - 1)),
        };
    }
    if last >= cubes {
        return Err(cube_run::out_of_range(&a.dir, last, cubes));
    }
    Ok((first, last))
}

/// The cubes of a `run-cube` range that ended in an error recorded in their
/// results ([`cube_run::recorded_error`]). Such an error is the cube's own
/// (a back-end that failed, a rejected proof), so the range goes on with
/// the other cubes; each error is printed on stderr when it happens, and
/// the run ends with an error naming them all.
#[derive(Default)]
struct Failures(Vec<usize>);

impl Failures {
    /// Prints `item`: a cube's line on stdout, or the recorded error of a
    /// cube on stderr (and remembers the cube).
    fn emit(&mut self, json: bool, event: CubeEvent) -> Result<(), Error> {
        match event {
            CubeEvent::Outcome(outcome, note) => print_outcome(json, &outcome, &note),
            CubeEvent::Failed(index, e) => {
                eprintln!(
                    "orbitcnf: cube {index}: error: {e} (recorded in its result; the range goes on)"
                );
                self.0.push(index);
                Ok(())
            }
        }
    }

    /// Exit code 0 when no cube failed, or the error that names the cubes.
    fn finish(mut self) -> Outcome {
        // Blocks on several workers finish in any order.
        self.0.sort_unstable();
        match self.0.as_slice() {
            [] => Ok(0),
            [index] => Err(Error::Options(format!(
                "cube {index} ended in an error, recorded in its result (above)"
            ))),
            many => Err(Error::Options(format!(
                "{} cubes ended in an error, recorded in their results (above): {}",
                many.len(),
                split::index_ranges(many)
            ))),
        }
    }
}

/// Prints one cube's outcome, as text (with `note`) or as JSON.
fn print_outcome(json: bool, outcome: &cube_run::RunOutcome, note: &str) -> Result<(), Error> {
    let (r, note) = match outcome {
        cube_run::RunOutcome::Solved(r) => (r, note.to_string()),
        cube_run::RunOutcome::AlreadyDone(r) => {
            (r, " (already solved; --force solves again)".to_string())
        }
    };
    print_either(
        json,
        || serde_json::to_string(r).expect("serialises"),
        || r.to_text(&note),
    )
}

/// The long help of `refine`.
pub const REFINE_HELP: &str = "\
refine works on real-space splits (split --real). A cube that run-cube left
unknown is cut into at least --cubes smaller cubes: each fixes more of the
T(i,j,c) witness variables, chosen by the same look-ahead as the first split,
so a hard region of the search gets more cubes while the rest stays as it was.
The pieces are appended to the cube list (the cut cube records their
indices), a new coverage check (the skeleton plus every cube still to solve,
negated) is refuted and its LRAT proof checked, and only then is
manifest.json replaced, in one atomic write. Results of the other cubes keep
their indices and stay valid; merge and merge --pending skip the cut cubes
and count their pieces instead (encodings/real-space.md §9).

Without --only, every cube whose result is unknown or error is cut; cubes
never run are left alone (most cubes are easy; run them first). Typical use:

  orbitcnf split --real --dim 4 -p 18 --cubes 256 --out r18
  orbitcnf run-cube r18 0..255 --time-limit 300
  orbitcnf refine r18 --cubes 16
  orbitcnf run-cube r18 256..815 --time-limit 300      (the indices it prints)
  orbitcnf merge r18

The manifest's format becomes orbitcnf-real-split/2, so that an orbitcnf
that does not know about cut cubes refuses the folder instead of asking for
their results.";

/// Arguments of `refine`.
#[derive(Args, Debug)]
pub struct RefineArgs {
    /// The real-space split folder (written by split --real).
    dir: PathBuf,
    /// Cut each cube into at least this many pieces (fewer when its
    /// variables run out).
    #[arg(long, value_name = "N", default_value = "16")]
    cubes: usize,
    /// Cut these cubes (comma-separated indices) instead of every cube
    /// whose result is unknown or error.
    #[arg(long, value_name = "I,J,...", value_delimiter = ',')]
    only: Vec<usize>,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
}

/// Runs `refine`.
pub fn run_refine(a: RefineArgs) -> Outcome {
    if !real::cubes::is_real_split(&a.dir) {
        return Err(Error::Options(format!(
            "{} is not a real-space split (split --real writes one); grid splits are cut \
             with split --cubes at the start",
            a.dir.display()
        )));
    }
    let only = (!a.only.is_empty()).then_some(a.only.as_slice());
    super::real::refine(&a.dir, only, a.cubes, a.json)
}

/// The report line of `merge --store`.
fn recorded_text(rec: &Recorded) -> String {
    match rec {
        Recorded::Written(path) => format!("stored       {}\n", path.display()),
        Recorded::Kept(path) => format!(
            "stored       {} (already there, with the same verdict; kept)\n",
            path.display()
        ),
        Recorded::NotDecided(why) => format!("stored       nothing: {why}\n"),
    }
}

/// The `store` member of `merge --store --json`.
fn recorded_json(rec: &Recorded) -> serde_json::Value {
    match rec {
        Recorded::Written(path) => serde_json::json!({"action": "written", "file": path}),
        Recorded::Kept(path) => serde_json::json!({"action": "kept", "file": path}),
        Recorded::NotDecided(why) => serde_json::json!({"action": "none", "reason": why}),
    }
}

/// Arguments of `merge`.
#[derive(Args, Debug)]
pub struct MergeArgs {
    /// The split folder.
    dir: PathBuf,
    /// When every cube is refuted with a proof: also assemble one LRAT proof
    /// of formula.cnf from the cube proofs and the coverage proof, check it,
    /// and write it to FILE (checkable with `orbitcnf verify-proof
    /// DIR/formula.cnf FILE` or any LRAT checker).
    #[arg(long, value_name = "FILE")]
    proof: Option<PathBuf>,
    /// The encoding of the proof written with --proof: text, binary, or
    /// zstd (binary LRAT compressed with zstd; verify-proof reads it, other
    /// checkers after `zstd -d`).
    #[arg(long, value_name = "ENC", default_value = "text")]
    proof_encoding: FileEncoding,
    /// Only print the indices of the cubes without a final result, one per
    /// line (for rerunning them), and exit 0.
    #[arg(long)]
    pending: bool,
    /// Count cubes refuted only on a solver's word (run-cube --no-certify,
    /// or an external solver without a proof) as refuted; the verdict is
    /// then INFEASIBLE, UNCHECKED (exit 21). Without this they are pending.
    #[arg(long)]
    trust_solver: bool,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
    /// Check the cube proofs on N threads (default: every core). Each holds
    /// one cube's CNF in memory at a time.
    #[arg(long, value_name = "N")]
    jobs: Option<usize>,
    /// Also record the verdict in the results store DIR (created when
    /// missing; the store `spectrum --store` keeps), so that a sweep of the
    /// same question reuses it and `report DIR` shows it: a feasible
    /// verdict with its orbit, an infeasible one backed by this split
    /// folder, only when every cube has a checked proof. Later sweeps check
    /// that the folder's manifest is unchanged; `spectrum --recheck` merges
    /// the folder again.
    #[arg(long, value_name = "DIR", conflicts_with = "pending")]
    store: Option<PathBuf>,
    #[command(flatten)]
    progress: ProgressArgs,
}

/// Runs `merge`.
pub fn run_merge(a: MergeArgs) -> Outcome {
    if real::cubes::is_real_split(&a.dir) {
        if a.proof.is_some() {
            return Err(Error::Options(
                "--proof applies to grid splits; a real-space split's certificate is the \
                 folder itself (every cube's lemmas and LRAT proof, and the coverage proof)"
                    .into(),
            ));
        }
        if a.jobs.is_some() {
            return Err(Error::Options(
                "--jobs applies to grid splits; a real-space split is merged on one thread".into(),
            ));
        }
        if a.store.is_some() {
            return Err(Error::Options(
                "--store applies to grid splits; a real-space split's certificate is the folder \
                 itself"
                    .into(),
            ));
        }
        return super::real::merge(
            &a.dir,
            a.pending,
            a.trust_solver,
            a.json,
            a.progress.mode(a.json),
        );
    }
    if a.pending {
        let idx = cube_run::pending_indices(&a.dir)?;
        print(&idx.iter().map(|i| format!("{i}\n")).collect::<String>())?;
        return Ok(0);
    }
    if a.jobs == Some(0) {
        return Err(Error::Options(
            "merge needs at least one thread to check the cube proofs".into(),
        ));
    }
    let r = cube_run::merge(
        &a.dir,
        a.proof.as_deref(),
        a.trust_solver,
        a.proof_encoding,
        a.progress.mode(a.json),
        a.jobs.unwrap_or_else(orbitcnf::pool::default_jobs),
    )?;
    let recorded = match &a.store {
        Some(root) => Some(orbitcnf::spectrum::record_merge(
            root,
            &a.dir,
            &r,
            &orbitcnf::store::run_id(),
        )?),
        None => None,
    };
    print_either(
        a.json,
        || {
            let mut v = serde_json::to_value(&r).expect("serialises");
            if let Some(rec) = &recorded {
                v["store"] = recorded_json(rec);
            }
            v.to_string()
        },
        || {
            let mut text = r.to_text();
            if let Some(rec) = &recorded {
                text.push_str(&recorded_text(rec));
            }
            text
        },
    )?;
    Ok(code(r.exit_code()))
}
