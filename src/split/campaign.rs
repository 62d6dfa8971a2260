//! A whole campaign in one folder: the split written (or taken up), its
//! cubes solved in blocks on every thread, and the folder merged when every
//! cube has a final result; what `split`, `run-cube DIR all --jobs N` and
//! `merge` do by hand, resumable at any point.
//!
//! Nothing here decides a verdict by itself: a merged campaign's verdict is
//! [`super::run::merge`]'s, which checks the split against a fresh encoding,
//! the coverage proof and every cube's proof (or the orbit of a feasible
//! cube) again. What the campaign adds is the bookkeeping of a long run:
//!
//! * A folder that holds a split of the same question is **taken up**: its
//!   cube count is kept whatever this run asks (its results are the work
//!   done so far), and when its formula is the one a fresh encoding gives
//!   and every file its manifest lists is there with its digest
//!   ([`super::SplitManifest::check_files`]) it is used as it is, without
//!   writing it again (on the 832,605 cubes of {−1,0,1}^5, p = 54, the
//!   encoding, about a minute, and seconds of hashing, where writing it
//!   again and checking its coverage proof took 4.5 minutes more). A
//!   folder with a missing or changed file, or the formula of an earlier
//!   encoding, is written again; a folder of another question is an error.
//! * Cubes with a final result (solved by an earlier run, or by hand with
//!   `run-cube`, or on a cluster) are not solved again.
//! * The time limit is checked before each block: no block starts after
//!   it, and a block that has started finishes (each cube within the limit
//!   itself), so a run can overrun the limit by one block.
//! * A cube whose kept result the merge cannot use (a proof changed since
//!   it was checked, a damaged result file) is solved again, once, and the
//!   folder merged again, so that no run stops at the same place forever.

use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use super::auto::CubeTarget;
use super::jobs::CubeHandoff;
use super::layout::{LayoutChoice, SplitLayout};
use super::range::{BlockPlan, CubeEvent, RangeOptions, run_blocks, run_range};
use super::run::{CubeStatus, MergeReport, RunOutcome, merge, pending_indices};
use super::{RESULTS_DIR, SplitManifest, index_ranges, write_split_encoded};
use crate::artifact::sha256_hex;
use crate::dimacs::render_cnf;
use crate::encode::{EncodeOptions, Encoding, encode};
use crate::error::Result;
use crate::progress::{Progress, ProgressMode, duration_words, threads_words};
use crate::proof::lrat::compressed::FileEncoding;
use crate::question::Question;
use crate::report::Verdict;

/// Cubes in a block: as many as an easy block solves in a few seconds
/// (200 easy prefix cubes of {−2,…,2}^4, p = 30, take about 2 s), so that
/// the time limit and the progress lines come often, and few enough that
/// the blocks of one hard cube's neighbours do not wait behind it.
pub const CAMPAIGN_BLOCK: usize = 200;

/// Proof bytes after which a block's solver is replaced (as `run-cube
/// --max-proof-mb 1`, its default): a solver that has learnt much makes
/// every later cube's proof carry that derivation.
pub const CAMPAIGN_CONE_BYTES: u64 = 1_000_000;

/// The cubes a new split gets unless asked otherwise: a million, as many
/// as a folder holds comfortably (a manifest of about 240 MB), so that the
/// whole profiles of most hard questions fit (832,605 for {−1,0,1}^5,
/// p = 54) and the others get profile prefixes of about that number.
pub const CAMPAIGN_CUBES: usize = 1_000_000;

/// How to run a campaign.
#[derive(Clone, Debug)]
pub struct CampaignOptions {
    /// About how many cubes a new split gets (whole profiles when they fit,
    /// profile prefixes otherwise); a split taken up keeps its own.
    pub cubes: usize,
    /// Threads solving blocks.
    pub jobs: usize,
    /// No block starts after this much time from the start of the run.
    pub time_limit: Option<Duration>,
    /// Cubes the bundled solver leaves open after a while go to an external
    /// solver with a proof request.
    pub handoff: Option<CubeHandoff>,
    /// Progress lines (the campaign's own, and the merge's).
    pub progress: ProgressMode,
    /// What the progress lines are about (such as `decide {-1,0,1}^5: p=54`).
    pub label: String,
    /// Encoding options (for a split written here; a split taken up keeps
    /// its manifest's, which must be these resolved for the question).
    pub options: EncodeOptions,
    /// The cap on the formula's clauses when the split must be encoded.
    pub max_clauses: u64,
}

/// How far a campaign got.
#[derive(Debug)]
pub enum Campaign {
    /// Every cube had a final result (or one was feasible) and the folder
    /// was merged: the merge's report, whose verdict may still be unknown
    /// (a cube without a usable result after its second solve).
    Merged {
        /// The merge of the folder.
        report: Box<MergeReport>,
        /// The split's manifest (its cube count and rule).
        manifest: Box<SplitManifest>,
        /// Whether the folder held the split before this run.
        taken_up: bool,
    },
    /// The run stopped before every cube had a final result; the folder
    /// keeps every result, and the next run goes on.
    Unfinished(Unfinished),
}

/// A campaign stopped before the merge.
#[derive(Debug, Clone)]
pub struct Unfinished {
    /// Cubes with a final result in the folder.
    pub finished: usize,
    /// Cubes of the split.
    pub cubes: usize,
    /// Whether the time limit stopped blocks from starting.
    pub stopped_by_time: bool,
    /// Cubes of this run left unknown at their time limit.
    pub unknown: usize,
    /// Cubes of this run whose solve failed (their results say why).
    pub failed: Vec<usize>,
}

impl Unfinished {
    /// How far the campaign in `folder` (as the user should read it) got,
    /// and what next, in one line; `limit` is the run's time limit.
    pub fn why(&self, folder: &str, limit: Option<Duration>) -> String {
        let mut why = vec![format!(
            "{} of {} cubes of the split {folder} have a final result",
            self.finished, self.cubes
        )];
        if self.stopped_by_time {
            why.push(format!(
                "no block starts after the time limit ({})",
                duration_words(limit.unwrap_or_default().as_secs_f64())
            ));
        }
        if self.unknown > 0 {
            why.push(format!(
                "{} cubes unknown at their time limit",
                self.unknown
            ));
        }
        if !self.failed.is_empty() {
            why.push(format!(
                "cubes {} failed (their results say why)",
                index_ranges(&self.failed)
            ));
        }
        why.push("the next run goes on from there".into());
        why.join("; ")
    }
}

/// What the blocks of one run did.
#[derive(Default)]
struct Tally {
    finished: usize,
    unknown: usize,
    failed: Vec<usize>,
}

/// Runs the campaign of `q` in `dir` (see the module docs); `enc` is `q`'s
/// encoding under `o.options` when the caller has made it (made here
/// otherwise).
///
/// # Errors
/// [`crate::error::Error::Options`] for no threads; a folder holding a
/// split of another question (before any work), or of other options or
/// layout; [`crate::error::Error::TooLarge`] when the formula is over
/// `o.max_clauses`; errors writing the
/// split, of the blocks that are not one cube's own, and of the merge.
pub fn run_campaign(
    dir: &Path,
    q: &Question,
    enc: Option<&Encoding>,
    o: &CampaignOptions,
) -> Result<Campaign> {
    if o.jobs == 0 {
        return Err(crate::error::Error::Options(
            "a campaign needs at least one thread".into(),
        ));
    }
    let t = Instant::now();
    let deadline = o.time_limit.map(|l| t + l);
    let label = &o.label;
    let mut progress = Progress::new(o.progress);
    let earlier = SplitManifest::read(dir).ok();
    if let Some(m) = &earlier
        && m.question != q.record()
    {
        // Refused before any work (an encoding can take minutes).
        return Err(crate::error::Error::Options(format!(
            "{} already holds a split of another question ({}); choose another folder",
            dir.display(),
            crate::store::question_words(&m.question)
        )));
    }
    let target = earlier.as_ref().map_or(o.cubes, |m| m.requested_cubes);
    let taken_up = earlier.is_some();
    progress.event(|| match &earlier {
        Some(m) => format!(
            "{label}: taking up the split of {} cubes begun in {}",
            m.cubes.len(),
            dir.display(),
        ),
        None => format!(
            "{label}: splitting it into about {target} cubes in {} (a later run goes on where \
             this one stops)",
            dir.display()
        ),
    });
    // The folder is used as it is only when its formula is the one this
    // orbitcnf writes for the question now (an earlier version may have
    // encoded it otherwise, and the merge would then refuse the folder on
    // every later run) and every file it lists is intact; otherwise
    // `write_split` writes it again, and cube results of another formula
    // no longer match their cubes' digests and are solved again.
    let fresh;
    let enc = match enc {
        Some(enc) => enc,
        None => {
            fresh = encode(q, &o.options, o.max_clauses)?;
            &fresh
        }
    };
    let kept = earlier.filter(|m| {
        m.options == enc.options
            && m.formula.sha256 == sha256_hex(&render_cnf(enc))
            && m.check_files(dir).is_ok()
            && std::fs::create_dir_all(dir.join(RESULTS_DIR)).is_ok()
    });
    let rewritten = kept.is_none();
    let manifest = match kept {
        Some(m) => m,
        None => {
            write_split_encoded(
                dir,
                q,
                enc,
                CubeTarget::Count(target),
                LayoutChoice::Fixed(SplitLayout::Compact),
            )?
            .manifest
        }
    };
    let n = manifest.cubes.len();
    // Few cubes (a question the profile exclusions leave little of) would
    // all fall into one block on one thread: smaller blocks spread them.
    // Such cubes are the hard ones (p = 60 of {−1,0,1}^5: 168 cubes of
    // minutes each), so the last block, which runs alone, stays short: at
    // least 16 blocks a thread.
    let block = (n / (16 * o.jobs.max(1))).clamp(1, CAMPAIGN_BLOCK);
    progress.event(|| {
        format!(
            "{label}: {n} cubes, the coverage proof ({} steps) checked {}; solving them in \
             blocks of {block} on {}",
            manifest.coverage.lrat_steps,
            match taken_up && !rewritten {
                true => "when the split was written (the merge checks it again)",
                false => "now",
            },
            threads_words(o.jobs)
        )
    });
    let ro = RangeOptions {
        time_limit: o.time_limit,
        progress: ProgressMode::Off,
        external: o.handoff.as_ref().map(|h| h.solver.clone()),
        handoff_after: o.handoff.as_ref().map(|h| h.after),
        fresh_solver: false,
        certify: true,
        force: false,
        encoding: FileEncoding::Zstd,
        cone_bytes: CAMPAIGN_CONE_BYTES,
    };
    let found = AtomicBool::new(false);
    let go_on = || !found.load(Ordering::SeqCst) && deadline.is_none_or(|d| Instant::now() < d);
    let plan = BlockPlan {
        jobs: o.jobs,
        block,
        progress: o.progress,
        label,
        go_on: &go_on,
    };
    let mut tally = Tally::default();
    // No cube at all: the coverage proof alone refutes the formula, and the
    // merge below says so.
    let all_ran = if n == 0 {
        true
    } else {
        run_blocks(dir, (0, n - 1), &ro, &plan, |done| {
            for e in done.events {
                match e {
                    CubeEvent::Outcome(outcome, _) => {
                        let r = match *outcome {
                            RunOutcome::Solved(r) | RunOutcome::AlreadyDone(r) => r,
                        };
                        match r.status {
                            CubeStatus::Feasible => {
                                found.store(true, Ordering::SeqCst);
                                tally.finished += 1;
                            }
                            CubeStatus::Infeasible => tally.finished += 1,
                            CubeStatus::Unknown => tally.unknown += 1,
                            CubeStatus::Error => tally.failed.push(r.index),
                        }
                    }
                    CubeEvent::Failed(index, _) => tally.failed.push(index),
                }
            }
            Ok(())
        })?
    };
    let complete = all_ran && tally.finished == n;
    if !complete && !found.load(Ordering::SeqCst) {
        // Cubes of blocks that did not start may have results from an
        // earlier run or from `run-cube` by hand.
        let finished = if all_ran {
            tally.finished
        } else {
            n - pending_indices(dir)?.len()
        };
        tally.failed.sort_unstable();
        return Ok(Campaign::Unfinished(Unfinished {
            finished,
            cubes: n,
            stopped_by_time: !all_ran,
            unknown: tally.unknown,
            failed: tally.failed,
        }));
    }
    let merged = || merge(dir, None, false, FileEncoding::Binary, o.progress, o.jobs);
    let mut report = merged()?;
    let redo: Vec<usize> = report.pending.iter().map(|p| p.index).collect();
    if report.verdict == Verdict::Unknown && !redo.is_empty() && go_on() {
        progress.event(|| {
            format!(
                "{label}: the merge could not use the results of cubes {}; solving them again",
                index_ranges(&redo)
            )
        });
        let again = RangeOptions { force: true, ..ro };
        for &index in &redo {
            run_range(dir, index, index, &again, &mut |_| Ok(()))?;
        }
        report = merged()?;
    }
    Ok(Campaign::Merged {
        report: Box::new(report),
        manifest: Box::new(manifest),
        taken_up,
    })
}
