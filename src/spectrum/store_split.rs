//! A hard period with too many whole profiles for one assembled proof,
//! decided as a split folder inside the store: the campaign of `split`,
//! `run-cube DIR all --jobs N` and `merge --store`, run by the sweep
//! itself, and resumable.
//!
//! Below [`SweepSplit::store_split_above`] whole profiles a hard period is
//! decided in memory ([`super::answer::in_cubes`]): one cube per whole
//! profile, every cube's proof lifted into one assembled proof of the whole
//! CNF, checked and kept. Above it that proof would take tens of gigabytes
//! and the run could not be resumed. So the sweep runs a campaign
//! ([`crate::split::campaign`]) in `STORE/splits/<key>/`: about
//! [`SweepSplit::store_split_cubes`] cubes (whole profiles when they fit,
//! profile prefixes otherwise), solved in blocks on every thread with their
//! proofs checked and kept with zstd, the folder merged when every cube
//! has a final result. The answer is backed by the folder
//! ([`Backing::CheckedCubes`](crate::store::Backing::CheckedCubes),
//! recorded relative to the store), exactly as `merge --store` records a
//! campaign run by hand.
//!
//! A run that stops before the end (the time limit: no block starts after
//! it; a kill at any moment) keeps every cube result written so far, and
//! stores an *unknown* answer that says how far it got. Such an unknown is
//! always retried, and a period whose split is begun in the store goes
//! there at once ([`begun`]): no probe, and no rewrite of a folder whose
//! formula is still what this orbitcnf writes and whose files are intact
//! (on the 832,605 cubes of {−1,0,1}^5, p = 54, the take-up went from some
//! 6.5 minutes, the probe, its encoding and the rewrite, to 69 s, the
//! encoding and the checks).
//! The campaign keeps the folder's cube count and its results; cubes run by
//! hand or on a cluster meanwhile (`run-cube STORE/splits/<key> A..B`)
//! count as the sweep's own, since `merge` checks them all.

use std::path::Path;
use std::time::{Duration, Instant, SystemTime};

use super::SweepConfig;
#[cfg(doc)]
use super::SweepSplit;
use super::answer::{Probed, Task, merged_answer};
use crate::encode::Encoding;
use crate::error::{Error, Result};
use crate::progress::Progress;
use crate::report::Strategy;
use crate::split::campaign::{Campaign, CampaignOptions, run_campaign};
use crate::store::{self, Answer, How, RunLimits};

/// Whether the sweep finds a split of `q` begun in its store by an earlier
/// run (a manifest in the folder of `q`'s key): such a period is taken up
/// at once, without the probe that first found it hard, and whatever
/// [`SweepSplit::store_split_above`] now says (the profiles were counted
/// when it was written). Only with a store and hard periods split.
pub(super) fn begun(cfg: &SweepConfig, q: &crate::question::Question) -> bool {
    match (&cfg.store, &cfg.split) {
        (Some(root), Some(_)) => root
            .join(store::SPLITS_DIR)
            .join(store::key_for(q, &cfg.options))
            .join(crate::split::MANIFEST)
            .is_file(),
        _ => false,
    }
}

/// The answer for the hard period `task` by a split folder in the store at
/// `root` (see the module docs), within the time the probe left. `enc` is
/// the period's encoding when the caller has made it; a split begun by an
/// earlier run needs none unless it must be written again.
///
/// # Errors
/// Writing or repairing the split folder (a folder of another question
/// under the same key is an error, not overwritten); errors of the blocks
/// that are not one cube's own; [`crate::error::Error::Contradiction`] with
/// a published theorem.
pub(super) fn in_store_split(
    task: &Task,
    cfg: &SweepConfig,
    enc: Option<&Encoding>,
    limits: &RunLimits,
    run_id: &str,
    probed: Probed,
    root: &Path,
) -> Result<Answer> {
    let q = &task.question;
    let split = cfg.split.clone().unwrap_or_default();
    let t = Instant::now();
    let started_at = store::utc_timestamp(SystemTime::now());
    let key = store::key_for(q, &cfg.options);
    let rel = format!("{}/{key}", store::SPLITS_DIR);
    let dir = root.join(&rel);
    let label = format!("spectrum {}: p={}", q.grid, q.period);
    if enc.is_some() {
        Progress::new(cfg.progress).event(|| {
            format!(
                "{label}: more than {} whole profiles; decided as a split in the store",
                split.store_split_above
            )
        });
    }
    let o = CampaignOptions {
        cubes: split.store_split_cubes,
        jobs: cfg.jobs.max(1),
        // The period's time limit counts the probe.
        time_limit: cfg
            .time_limit
            .map(|l| l.saturating_sub(Duration::from_secs_f64(probed.seconds))),
        handoff: split.handoff.clone(),
        progress: cfg.progress,
        label,
        options: cfg.options.clone(),
        max_clauses: cfg.max_clauses,
    };
    let finish = |mut a: Answer| {
        a.limits = *limits;
        a.started_at = started_at.clone();
        a.stats.seconds = probed.seconds + t.elapsed().as_secs_f64();
        a.stats.solve_seconds += probed.seconds;
        a.finished_at = store::utc_timestamp(SystemTime::now());
        a
    };
    let unknown = |why: String| {
        let mut a = Answer::unknown(
            q,
            &cfg.options,
            *limits,
            How::Cubes,
            run_id,
            started_at.clone(),
        );
        a.reason = Some(why);
        a
    };
    let a = match run_campaign(&dir, q, enc, &o) {
        Err(e @ Error::TooLarge { .. }) => unknown(e.to_string()),
        Err(e) => return Err(e),
        Ok(Campaign::Unfinished(u)) => {
            unknown(u.why(&format!("{rel} in the store"), cfg.time_limit))
        }
        Ok(Campaign::Merged {
            report, manifest, ..
        }) => match merged_answer(&dir, rel.clone(), &report, run_id)? {
            Ok(mut a) => {
                a.strategy = Some(Strategy {
                    probe_budget_seconds: split.probe.as_secs_f64(),
                    probe_budget_conflicts: None,
                    probe_seconds: probed.seconds,
                    probe_conflicts: probed.conflicts,
                    cubes: manifest.cubes.len(),
                    cube_rule: manifest.split.rule.clone(),
                    threads: o.jobs,
                });
                a
            }
            Err(why) => unknown(why),
        },
    };
    Ok(finish(a))
}
