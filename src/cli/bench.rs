//! `bench`: the fixed benchmark set, or the timed spectrum of {-1,0,1}^4 or {-1,0,1}^5.

use std::time::Duration;

use clap::Args;

use super::args::parse_seconds;
use super::{Outcome, print, print_either};

/// The default time limit per run of the whole set.
const FULL_LIMIT_SECS: u64 = 600;
/// The default time limit per run of the quick set.
const QUICK_LIMIT_SECS: u64 = 20;

/// Arguments of `bench`.
#[derive(Args, Debug)]
pub struct BenchArgs {
    /// Leave out the cases whose baselines take minutes ({-1,0,1}^4 with
    /// p = 18, 20, 21 and 24, {0,1,2,3}^4 with p = 17, {-1,0,1}^5 with
    /// p = 34, {-2,...,2}^4 with p = 18).
    #[arg(long)]
    quick: bool,
    /// Time limit per run, in seconds; a baseline that hits it shows `>LIMIT`.
    /// Default: 600, or 20 with --quick (so that a slow baseline cannot make
    /// the quick set slow).
    #[arg(long, value_name = "SECS", value_parser = parse_seconds)]
    time_limit: Option<Duration>,
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
    /// 15-minute target; with --dim 5, of {-1,0,1}^5 (p = 1..80) against
    /// its 2-hour target. --time-limit applies to each period.
    #[arg(long)]
    spectrum: bool,
    /// With --spectrum: the dimension n of {-1,0,1}^n, 4 (default) or 5.
    #[arg(long, value_name = "N", requires = "spectrum", default_value = "4")]
    dim: usize,
    /// With --spectrum: a results store, in which hard periods with more
    /// than 20,000 whole profiles are split and solved (as `spectrum --store`
    /// does; without a store they get one solve). Give a new folder: answers
    /// already in it are reused, and the line then says the run is not a
    /// timing of the whole spectrum.
    #[arg(long, value_name = "DIR", requires = "spectrum")]
    store: Option<std::path::PathBuf>,
    /// With --spectrum: hand cubes of hard periods that the bundled solver
    /// leaves open for --handoff-after seconds to COMMAND, as `spectrum
    /// --handoff` does (e.g. 'cadical -q --lrat' with --handoff-proof lrat).
    #[arg(long, value_name = "COMMAND", requires = "spectrum")]
    handoff: Option<String>,
    /// With --handoff: seconds of the bundled solver first.
    #[arg(long, value_name = "SECS", value_parser = parse_seconds, requires = "handoff", default_value = "10")]
    handoff_after: Duration,
    /// With --handoff: the proof COMMAND writes, `drat` (converted by
    /// `rate`) or `lrat`.
    #[arg(
        long,
        value_name = "FORMAT",
        requires = "handoff",
        default_value = "drat"
    )]
    handoff_proof: orbitcnf::solve::external::ProofFormat,
    /// Worker threads for --spectrum (default: the number of cores).
    #[arg(long, value_name = "N")]
    jobs: Option<usize>,
    /// Instead of the cases: the real-space benchmark, n = 3, p = 9..12
    /// over R^3, each certified (certificate check included), against z3
    /// (scripts/real_z3.py, minimal symmetry breaking) unless
    /// --no-baselines, with the totals and their ratio (target: 10 times
    /// faster than z3).
    #[arg(long)]
    real: bool,
}

/// Runs `bench`.
pub fn run(a: BenchArgs) -> Outcome {
    use orbitcnf::bench;
    let limit = a.time_limit.unwrap_or(Duration::from_secs(if a.quick {
        QUICK_LIMIT_SECS
    } else {
        FULL_LIMIT_SECS
    }));
    if a.real {
        use orbitcnf::real::bench as rb;
        let rows = rb::run(
            &rb::cases(),
            &orbitcnf::real::RealOptions::new(),
            limit,
            !a.no_baselines,
        )?;
        if a.json {
            for r in &rows {
                print(&(serde_json::to_string(r).expect("serialises") + "\n"))?;
            }
        } else {
            print(&rb::format(&rows))?;
        }
        return Ok(0);
    }
    if a.spectrum {
        let jobs = a.jobs.unwrap_or_else(orbitcnf::pool::default_jobs);
        let f = bench::run_spectrum(&bench::SpectrumBench {
            dim: a.dim,
            jobs,
            limit,
            store: a.store.clone(),
            handoff: match &a.handoff {
                Some(command) => Some(super::sweep::cube_handoff(
                    command,
                    a.handoff_after,
                    a.handoff_proof,
                )?),
                None => None,
            },
        })?;
        print_either(
            a.json,
            || serde_json::to_string(&f).expect("serialises"),
            || bench::format_spectrum(&f) + "\n",
        )?;
        return Ok(0);
    }
    let cases = bench::select(a.quick, a.only.as_deref())?;
    if !a.json {
        print(&format!("{}\n", bench::header()))?;
    }
    for case in &cases {
        let row = bench::run_case(case, limit, !a.no_baselines)?;
        print_either(
            a.json,
            || serde_json::to_string(&row).expect("serialises"),
            || bench::format_row(&row) + "\n",
        )?;
    }
    Ok(0)
}
