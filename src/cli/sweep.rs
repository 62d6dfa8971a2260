//! `spectrum`: every period of one domain, with a crash-safe results store.

use std::path::PathBuf;
use std::time::Duration;

use clap::Args;

use orbitcnf::Error;
use orbitcnf::question::MapClass;
use orbitcnf::solve::external::{External, ProofFormat, ProofRequest};
use orbitcnf::spectrum::{self, STORE_SPLIT_CUBES, SweepConfig, SweepSplit};
use orbitcnf::split::auto::{DEFAULT_PROBE, FULL_PROFILE_CAP};
use orbitcnf::split::jobs::CubeHandoff;

use super::args::{ClassArgs, DomainArgs, EncodingArgs, ProgressArgs, parse_seconds};
use super::{Outcome, print};

/// The long help of `spectrum`.
pub const SPECTRUM_HELP: &str = "\
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
  §9            periods are closed under divisors (docs/math.md §9): if x has
                minimal period q under f and d divides q, x has minimal period d
                under f^(q/d), nonexpansive (topical) as f is. So a period q that
                is a multiple of a period refuted with a checked proof is
                infeasible without a search (its answer names that period and
                its proof, and every check of it checks that proof), and a
                divisor d of a feasible q gets every (q/d)-th point of q's orbit
                (and f^(q/d) on a point set), checked as any witness. Periods are
                solved in increasing order; no search starts whose answer §9
                already gives (one running meanwhile is finished). With --real
                as well (rows by §9 are derived again by each run, not stored).
                --no-divisors turns this off
  solver        everything else: `decide` with the certified solver; infeasible
                answers carry an LRAT proof accepted by orbitcnf's own checker
  hard          a period that one solve of --probe seconds (default 60) leaves
                unknown waits until the others are answered; then it is split
                into one cube per lex-leader distance profile (as `decide` does
                after its probe), solved on every --jobs thread, each cube's
                proof checked and lifted, one assembled proof checked and kept
                (binary LRAT). Its row says 'hard: …'. With --handoff 'cadical
                -q', cubes the bundled solver leaves open for --handoff-after
                seconds go to CaDiCaL (DRAT through `rate`, then checked as
                any cube's; --handoff 'cadical -q --lrat' --handoff-proof lrat
                for CaDiCaL 2). --no-auto-split decides every period by one solve
  hard, in the store
                a hard period with more than --split-above whole profiles
                (default 20,000) is split into about --split-cubes cubes
                (default 1,000,000) in DIR/splits/<key>/ and solved there in
                blocks of 200 on every --jobs thread, each refuted cube's proof
                checked and kept (zstd); when every cube has a result the folder
                is merged (coverage proof and every cube proof checked again)
                and the answer is backed by it. A run stopped by --time-limit
                (no block starts after it) or killed keeps every cube result:
                its unknown says how far it got, and the next run goes on from
                there at once (no probe; the folder as it is while its
                formula and files are intact). Cubes can also be run elsewhere meanwhile
                (orbitcnf run-cube DIR/splits/<key> A..B). Without a store:
                one solve (decide --split-dir DIR runs one question this way)

The results store (--store DIR, default ./orbitcnf-results):
  DIR/answers/<key>.json   one answer per file: verdict, how decided, orbit,
                           proof path and SHA-256, statistics, limits, tool
                           version, run id, start and finish times
  DIR/proofs/<key>.<run>.lrat   the LRAT proofs of infeasible answers
                           (text LRAT, binary for hard periods; about 60 MB
                           for all of {-1,0,1}^4)
  DIR/splits/<key>/        split folders of hard periods with many profiles
                           (a manifest, the formula, the coverage proof, one
                           result and one zstd proof per cube)
  <key> is the SHA-256 of question, resolved encoding options and formulation.
  Every file is written to a temporary file, fsynced and renamed into place, so
  a sweep killed at any moment keeps every answer it completed; run the same
  command again to continue. Decided answers are never recomputed or replaced.
  A reused answer is checked first: its orbit and map again, its proof file for
  presence and size (in full with --recheck); the report says whether a proof
  was checked in this run or when it was. A file in DIR/answers/ that is not a
  valid answer, and an answer whose evidence fails that check (a missing or
  edited proof), is moved (never deleted) to DIR/quarantine/ with a warning,
  listed in the report, and its period is decided again.
  An unknown answer is retried only when this run has a larger --time-limit
  (or none) or a larger --max-clauses than the run that gave up; the unknown
  of an unfinished split in DIR/splits/ is always taken up again.
  A new or stored answer whose verdict differs from another stored answer to the
  same question (under any options) is a CONTRADICTION: an error naming both
  runs. So is an answer that contradicts a published theorem (feasible above
  max_k 2^k·C(n',k), a feasible prime above 2^n', feasible above 2^n' when
  n' ≤ 3, or infeasible at p ≤ 2^n'; with --class topical: feasible above
  C(n',⌊n'/2⌋), or infeasible at or below it). The class is part of the key.

Output: a table on stdout; --json prints one JSON object (the whole spectrum,
each row with its stored answer); --csv one line per period after a header;
--markdown FILE also writes a page with the published bounds beside the answers.
Progress (--progress MODE): on a terminal one line redrawn in place; with
--progress lines, for batch and cluster logs, one timestamped line on stderr
for every decided period and a status line every 30 s:
  orbitcnf: progress: 2026-12-03T03:12:31Z spectrum {-1,0,1}^4: p=17 infeasible
  (solver, 0.47 s); 17/32 periods decided (16 feasible, 1 infeasible, 0 unknown),
  1 running: p=18 (0.52 s, 767 conflicts), 0.78 s elapsed, ≈ 3.55 s left
(one line each; here broken for the width).
By default (auto) nothing is written when stderr is not a terminal.

Exit codes:
   0  every period was decided (feasible or infeasible)
   2  the sweep finished but some periods are unknown (listed in the report)
   1  error: bad input, a contradiction, a failed check or a misbehaving solver

Examples:
  orbitcnf spectrum --dim 3 --grid=-1..1
  orbitcnf spectrum --dim 4 --grid=-1..1 --jobs 2 --time-limit 600 --markdown t4.md
  orbitcnf spectrum --dim 2 --grid=0..3 --periods 5..8 --no-store --json
  orbitcnf spectrum --class topical --dim 4 --grid=0..1
  orbitcnf spectrum --dim 4 --grid 0..3 --periods 17..18 --jobs 2 --handoff 'cadical -q' --handoff-after 60
  orbitcnf spectrum --real --dim 3 --jobs 2 --no-store";

/// The periods of `--periods`, parsed by clap so that a bad list is a usage
/// error that names the flag (the library's error names none).
#[derive(Clone, Debug)]
struct PeriodList(Vec<usize>);

fn parse_period_list(s: &str) -> Result<PeriodList, String> {
    spectrum::parse_periods(s)
        .map(PeriodList)
        .map_err(|e| e.to_string())
}

/// Arguments of `spectrum`.
#[derive(Args, Debug)]
pub struct SpectrumArgs {
    #[command(flatten)]
    domain: DomainArgs,
    /// The periods: `A..B` (inclusive), `P`, or a comma-separated list of both.
    /// Default: 1 up to the proven bound max_k 2^k·C(n',k) (Lemmens and
    /// Scheutzow 2005); with --class topical 1 up to one past the proven
    /// bound C(n',⌊n'/2⌋) (same paper), so the first excluded period is
    /// decided too; with --points up to |D| and the first bound. Capped by
    /// the number of grid points.
    #[arg(long, value_name = "LIST", value_parser = parse_period_list)]
    periods: Option<PeriodList>,
    #[command(flatten)]
    class: ClassArgs,
    #[command(flatten)]
    encoding: EncodingArgs,
    /// Give up on a period after this many seconds of solving; it is reported
    /// (and stored) as unknown, and retried by a later run with a larger limit.
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    time_limit: Option<Duration>,
    /// Periods solved at the same time (default: the number of cores); with
    /// --real as well, one search per period.
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
    /// Decide no period by §9 (docs/math.md §9: a multiple of a refuted
    /// period is infeasible, a divisor of a feasible one feasible); search
    /// every period that is not stored or constructed.
    #[arg(long)]
    no_divisors: bool,
    /// Print one JSON object instead of the table.
    #[arg(long, conflicts_with = "csv")]
    json: bool,
    /// Print CSV instead of the table.
    #[arg(long)]
    csv: bool,
    /// Also write a Markdown page with the published bounds beside the answers.
    #[arg(long, value_name = "FILE")]
    markdown: Option<PathBuf>,
    #[command(flatten)]
    progress: ProgressArgs,
    /// Hand hard work to an external DRAT solver COMMAND (e.g. 'cadical -q',
    /// run as COMMAND CNF PROOF; `rate` converts its proof to LRAT, which
    /// orbitcnf's checker checks). On a box: each cube of a hard period that
    /// the bundled solver leaves open for --handoff-after seconds. With
    /// --real: each period after --handoff-after seconds of internal search,
    /// with the propositional refutation of the skeleton plus the lemmas found.
    #[arg(long, value_name = "COMMAND")]
    handoff: Option<String>,
    /// With --handoff: seconds of the bundled solver (internal search) before
    /// the hand-off.
    #[arg(long, value_name = "SECS", value_parser = parse_seconds, requires = "handoff", default_value = "10")]
    handoff_after: Duration,
    /// A period that one solve of SECS seconds (default 60) does not answer
    /// is hard: it waits until the other periods are answered, and is then
    /// split into one cube per lex-leader distance profile, solved on every
    /// --jobs thread; its proof is assembled from the cubes' and checked.
    /// The row says so. Not with --real.
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    probe: Option<Duration>,
    /// With --handoff on a box: the proof the external solver writes,
    /// `drat` (converted by `rate`) or `lrat` (checked directly; CaDiCaL 2
    /// writes it with --lrat: --handoff 'cadical -q --lrat').
    #[arg(
        long,
        value_name = "FORMAT",
        requires = "handoff",
        default_value = "drat"
    )]
    handoff_proof: ProofFormat,
    /// A hard period with more than N whole profiles (default 20,000, the
    /// most one assembled proof holds) is split into a folder of the store,
    /// STORE/splits/<key>/, and solved there in blocks of cubes; a run that
    /// stops (time limit, kill) goes on from there next time.
    #[arg(long, value_name = "N")]
    split_above: Option<usize>,
    /// About how many cubes such a split has: every whole profile when
    /// there are at most N, otherwise N profile prefixes.
    /// Default 1,000,000.
    #[arg(long, value_name = "N",
          value_parser = clap::builder::RangedU64ValueParser::<usize>::new().range(1..))]
    split_cubes: Option<usize>,
    /// Decide every period by one solve, never in cubes.
    #[arg(long, conflicts_with_all = ["probe", "handoff"])]
    no_auto_split: bool,
}

/// The hand-off of a sweep's cubes to `command`, run as `COMMAND CNF PROOF`
/// with a proof in `format`, after `after` of the bundled solver.
///
/// # Errors
/// As [`External::parse`].
pub fn cube_handoff(
    command: &str,
    after: Duration,
    format: ProofFormat,
) -> Result<CubeHandoff, Error> {
    Ok(CubeHandoff {
        solver: External {
            proof: Some(ProofRequest {
                args: vec!["{}".into()],
                format,
                keep_lrat: None,
                keep_raw: None,
            }),
            ..External::parse(command)?
        },
        after,
    })
}

/// Runs `spectrum`.
pub fn run(a: SpectrumArgs) -> Outcome {
    if let Some(n) = a.domain.real_dim()? {
        return run_real(n, a);
    }
    let mut cfg = match a.domain.point_set()? {
        Some(d) => {
            if a.class.class != MapClass::Nonexpansive {
                return Err(Error::Options(
                    "spectrum --points decides nonexpansive maps D → D only (the full-map \
                     formulation); --class topical needs a box"
                        .into(),
                ));
            }
            SweepConfig::on_points(d)
        }
        None => SweepConfig::for_class(a.domain.grid()?, a.class.class),
    };
    if let Some(PeriodList(list)) = a.periods {
        cfg.periods = list;
    }
    cfg.options = a.encoding.options(a.domain.is_points())?;
    cfg.jobs = a.jobs.unwrap_or_else(orbitcnf::pool::default_jobs);
    cfg.time_limit = a.time_limit;
    cfg.max_clauses = a.encoding.max_clauses;
    cfg.store = (!a.no_store).then(|| a.store.clone());
    cfg.progress = a.progress.mode(false);
    cfg.recheck = a.recheck;
    cfg.divisors = !a.no_divisors;
    cfg.split = if a.no_auto_split {
        None
    } else {
        Some(SweepSplit {
            probe: a.probe.unwrap_or(DEFAULT_PROBE),
            handoff: match &a.handoff {
                Some(command) => Some(cube_handoff(command, a.handoff_after, a.handoff_proof)?),
                None => None,
            },
            store_split_above: a.split_above.unwrap_or(FULL_PROFILE_CAP),
            store_split_cubes: a.split_cubes.unwrap_or(STORE_SPLIT_CUBES),
        })
    };
    // The walks inside encoding (minutes on the largest questions) go to
    // the log as lines; a terminal's bar is the sweep's own.
    let watch = orbitcnf::progress::Watcher::start(
        match cfg.progress {
            orbitcnf::progress::ProgressMode::Lines => orbitcnf::progress::ProgressMode::Lines,
            _ => orbitcnf::progress::ProgressMode::Off,
        },
        "spectrum",
    );
    let s = spectrum::run(&cfg);
    drop(watch);
    let s = s?;
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

/// `spectrum --real --dim n`: every period over all of R^n, in turn.
fn run_real(n: usize, a: SpectrumArgs) -> Outcome {
    let grid_only = [
        (a.class.class != MapClass::Nonexpansive, "--class"),
        (a.probe.is_some(), "--probe"),
        (a.no_auto_split, "--no-auto-split"),
        (a.split_above.is_some(), "--split-above"),
        (a.split_cubes.is_some(), "--split-cubes"),
        (a.handoff_proof != ProofFormat::Drat, "--handoff-proof"),
        (a.csv, "--csv"),
        (a.markdown.is_some(), "--markdown"),
    ];
    if let Some((_, flag)) = grid_only.iter().find(|(on, _)| *on) {
        return Err(Error::Options(format!(
            "{flag} applies to grid spectra, not to --real"
        )));
    }
    let periods = match a.periods {
        Some(PeriodList(list)) => list,
        None => {
            let top =
                usize::try_from(orbitcnf::theory::lemmens_scheutzow_bound(n)).unwrap_or(usize::MAX);
            (1..=top).collect()
        }
    };
    let cfg = orbitcnf::real::sweep::RealSweep {
        n,
        periods,
        options: orbitcnf::real::RealOptions {
            handoff: a.handoff.as_ref().map(|command| orbitcnf::real::Handoff {
                command: command.clone(),
                after: a.handoff_after,
            }),
            ..orbitcnf::real::RealOptions::new()
        },
        time_limit: a.time_limit,
        store: (!a.no_store).then(|| a.store.clone()),
        recheck: a.recheck,
        divisors: !a.no_divisors,
        jobs: a.jobs.unwrap_or_else(orbitcnf::pool::default_jobs).max(1),
    };
    let mut line = super::real::progress_line(a.progress.mode(a.json));
    let s = orbitcnf::real::sweep::run(&cfg, &mut |running| {
        let words: Vec<String> = running
            .iter()
            .map(|(p, pr)| {
                format!(
                    "p = {p}: {:.0} s, {} conflicts, {} lemmas",
                    pr.seconds, pr.stats.conflicts, pr.lemmas
                )
            })
            .collect();
        if !words.is_empty() {
            line(&format!("real space R^{n} {}", words.join("; ")));
        }
    });
    line("");
    let s = s?;
    print(&if a.json {
        s.to_json() + "\n"
    } else {
        s.to_table()
    })?;
    Ok(if s.all_decided { 0 } else { 2 })
}
