//! Progress on stderr: one line redrawn in place on a terminal, or plain
//! timestamped lines for a log.
//!
//! A long run (a sweep, the cubes of `decide --jobs`, one hard solve) reports
//! through a [`Progress`] sink in one of three [`ProgressMode`]s:
//!
//! - [`ProgressMode::Bar`]: a status line redrawn in place (`\r`, erase line)
//!   at most every [`BAR_INTERVAL`], and erased when the run ends, so that it
//!   never mixes with the report. Meant for a terminal.
//! - [`ProgressMode::Lines`]: whole lines, each starting with
//!   `orbitcnf: progress: ` and a UTC timestamp, at most one status line every
//!   [`LOG_INTERVAL`], and one line at once for every event worth a line (a
//!   period decided, a cube finished). Meant for batch and cluster logs,
//!   where a redrawn line shows nothing until the run ends.
//! - [`ProgressMode::Off`] shows nothing.
//!
//! Warnings ([`Progress::warn`]) are printed in every mode, on a line of
//! their own: they say something about the answers, not about the speed.
//!
//! The text of a status or event is built by a closure that runs only when
//! the line is shown, so callers may report on every step at no cost.
//!
//! Some long computations sit deep inside the library, where no sink is at
//! hand: the walks over top patterns and profiles that encoding and
//! splitting do, minutes long on the largest questions. They publish their
//! state as a *step* ([`begin_step`], [`step_done`]), and a [`Watcher`]
//! thread started by the caller reports the step in progress through a sink
//! of its own.

use std::fmt;
use std::io::{IsTerminal, Write};
use std::str::FromStr;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;
use std::time::{Duration, Instant, SystemTime};

use crate::error::{Error, Result};

/// How often a [`ProgressMode::Bar`] line is redrawn at most.
pub const BAR_INTERVAL: Duration = Duration::from_millis(250);

/// How often a [`ProgressMode::Lines`] status line is written at most
/// (events are written at once).
pub const LOG_INTERVAL: Duration = Duration::from_secs(30);

/// How progress is shown on stderr.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum ProgressMode {
    /// Nothing (the default for library callers).
    #[default]
    Off,
    /// One line redrawn in place, for a terminal.
    Bar,
    /// Timestamped lines, for a log.
    Lines,
}

impl ProgressMode {
    /// [`ProgressMode::Bar`] when stderr is a terminal, [`ProgressMode::Off`]
    /// otherwise: a log stays quiet unless lines are asked for.
    pub fn auto() -> ProgressMode {
        if std::io::stderr().is_terminal() {
            ProgressMode::Bar
        } else {
            ProgressMode::Off
        }
    }

    /// Whether anything is shown.
    pub fn is_on(self) -> bool {
        self != ProgressMode::Off
    }

    /// The mode's name: `off`, `bar` or `lines`.
    pub fn name(self) -> &'static str {
        match self {
            ProgressMode::Off => "off",
            ProgressMode::Bar => "bar",
            ProgressMode::Lines => "lines",
        }
    }
}

impl fmt::Display for ProgressMode {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for ProgressMode {
    type Err = Error;

    /// `off`, `bar`, `lines`, or `auto` ([`ProgressMode::auto`], decided now).
    fn from_str(s: &str) -> Result<ProgressMode> {
        match s.trim() {
            "off" => Ok(ProgressMode::Off),
            "bar" => Ok(ProgressMode::Bar),
            "lines" => Ok(ProgressMode::Lines),
            "auto" => Ok(ProgressMode::auto()),
            other => Err(Error::Options(format!(
                "unknown progress mode {other:?}; choose auto, bar, lines or off"
            ))),
        }
    }
}

/// A progress sink on stderr (see the module documentation).
#[derive(Debug)]
pub struct Progress {
    mode: ProgressMode,
    every: Duration,
    last: Option<Instant>,
    drawn: bool,
}

impl Progress {
    /// A sink in `mode`, with status lines in a log every [`LOG_INTERVAL`].
    pub fn new(mode: ProgressMode) -> Progress {
        Progress::with_interval(mode, LOG_INTERVAL)
    }

    /// A sink in `mode` whose log status lines come at most every `every`.
    pub fn with_interval(mode: ProgressMode, every: Duration) -> Progress {
        Progress {
            mode,
            every,
            last: None,
            drawn: false,
        }
    }

    /// The mode.
    pub fn mode(&self) -> ProgressMode {
        self.mode
    }

    /// Reports the state of the run: redrawn on a terminal at most every
    /// [`BAR_INTERVAL`], written to a log at most every interval (the
    /// first at once). `text` runs only when the line is shown.
    pub fn status(&mut self, text: impl FnOnce() -> String) {
        let every = match self.mode {
            ProgressMode::Off => return,
            ProgressMode::Bar => BAR_INTERVAL,
            ProgressMode::Lines => self.every,
        };
        let now = Instant::now();
        if self.last.is_some_and(|l| now.duration_since(l) < every) {
            return;
        }
        self.last = Some(now);
        match self.mode {
            ProgressMode::Bar => {
                eprint!("\r\x1b[2K{}", text());
                self.drawn = true;
            }
            _ => log_line(&text()),
        }
    }

    /// Reports an event (a period decided, a cube finished): a log line at
    /// once, which also restarts the status interval. A terminal line shows
    /// the event's effect at its next redraw instead.
    pub fn event(&mut self, text: impl FnOnce() -> String) {
        if self.mode == ProgressMode::Lines {
            self.last = Some(Instant::now());
            log_line(&text());
        }
    }

    /// Prints `orbitcnf: warning: TEXT` on a line of its own, in every mode
    /// (a drawn terminal line is erased first and redrawn at the next status).
    pub fn warn(&mut self, text: &str) {
        self.clear();
        self.last = None;
        let mut err = std::io::stderr().lock();
        let _ = writeln!(err, "orbitcnf: warning: {text}");
    }

    /// Erases a drawn terminal line.
    pub fn clear(&mut self) {
        if self.drawn {
            eprint!("\r\x1b[2K");
            self.drawn = false;
        }
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        self.clear();
    }
}

fn log_line(text: &str) {
    let stamp = crate::store::utc_timestamp(SystemTime::now());
    // Whole seconds are enough in a log: `2025-01-31T23:59:59Z`.
    let stamp = match stamp.split_once('.') {
        Some((whole, _)) => format!("{whole}Z"),
        None => stamp,
    };
    let mut err = std::io::stderr().lock();
    let _ = writeln!(err, "orbitcnf: progress: {stamp} {text}");
}

/// The step in progress: its generation, name, bound and start.
struct Step {
    generation: u64,
    name: &'static str,
    bound: u64,
    started: Instant,
}

static STEP: Mutex<Option<Step>> = Mutex::new(None);
static STEP_GENERATION: AtomicU64 = AtomicU64::new(0);
static STEP_DONE: AtomicU64 = AtomicU64::new(0);

/// Ends its step when dropped (see [`begin_step`]).
#[must_use = "the step ends when the guard is dropped"]
pub struct StepGuard {
    generation: u64,
}

impl Drop for StepGuard {
    fn drop(&mut self) {
        let mut step = STEP.lock().unwrap_or_else(|e| e.into_inner());
        if step
            .as_ref()
            .is_some_and(|s| s.generation == self.generation)
        {
            *step = None;
        }
    }
}

/// Publishes a long step named `name` (for people: `biclique-cover: walk
/// of the top patterns`) that does at most `bound` steps, until the
/// returned guard is dropped; [`step_done`] says how far it got. The
/// process holds one such step: a step begun while another runs (two
/// threads encoding at once) replaces it in the reports, and each guard
/// ends only its own.
pub fn begin_step(name: &'static str, bound: u64) -> StepGuard {
    let generation = STEP_GENERATION.fetch_add(1, Ordering::Relaxed) + 1;
    STEP_DONE.store(0, Ordering::Relaxed);
    let mut step = STEP.lock().unwrap_or_else(|e| e.into_inner());
    *step = Some(Step {
        generation,
        name,
        bound,
        started: Instant::now(),
    });
    StepGuard { generation }
}

/// Says that the step in progress has done `done` of its steps. Cheap (one
/// relaxed store), but callers in tight loops still call it only every
/// million steps or so.
pub fn step_done(done: u64) {
    STEP_DONE.store(done, Ordering::Relaxed);
}

/// The step in progress, as a status text: `biclique-cover: walk of the top
/// patterns, 412 M of at most 1000 M steps, for 3m20s`.
pub fn step_words() -> Option<String> {
    let step = STEP.lock().unwrap_or_else(|e| e.into_inner());
    let s = step.as_ref()?;
    let done = STEP_DONE.load(Ordering::Relaxed);
    Some(format!(
        "{}, {} M of at most {} M steps, for {}",
        s.name,
        done / 1_000_000,
        s.bound / 1_000_000,
        duration_words(s.started.elapsed().as_secs_f64())
    ))
}

/// A thread that reports the step in progress ([`begin_step`]) in its own
/// sink, as `LABEL: STEP`, while the caller works; it stops, and erases a
/// drawn line, when dropped. Nothing is shown while no step runs, so a
/// watcher may span a whole command.
pub struct Watcher {
    stop: Arc<AtomicBool>,
    thread: Option<JoinHandle<()>>,
}

impl Watcher {
    /// Starts watching in `mode` (no thread for [`ProgressMode::Off`]).
    pub fn start(mode: ProgressMode, label: &'static str) -> Watcher {
        Watcher::with_interval(mode, label, LOG_INTERVAL)
    }

    /// [`Watcher::start`] with log lines at most every `every`.
    pub fn with_interval(mode: ProgressMode, label: &'static str, every: Duration) -> Watcher {
        let stop = Arc::new(AtomicBool::new(false));
        let thread = mode.is_on().then(|| {
            let stop = Arc::clone(&stop);
            std::thread::spawn(move || {
                let mut sink = Progress::with_interval(mode, every);
                let mut shown = None;
                while !stop.load(Ordering::Relaxed) {
                    match step_words() {
                        Some(words) => {
                            // A new step gets its first log line at once.
                            let generation = STEP_GENERATION.load(Ordering::Relaxed);
                            if shown != Some(generation) {
                                shown = Some(generation);
                                sink.last = None;
                            }
                            sink.status(|| format!("{label}: {words}"));
                        }
                        None => sink.clear(),
                    }
                    std::thread::sleep(Duration::from_millis(50));
                }
            })
        });
        Watcher { stop, thread }
    }
}

impl Drop for Watcher {
    fn drop(&mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}

/// A number of threads in words: `1 thread`, `2 threads`.
pub fn threads_words(n: usize) -> String {
    format!("{n} thread{}", if n == 1 { "" } else { "s" })
}

/// Seconds in words: `0.42 s`, `12.3 s`, `4m05s`, `2h07m`.
pub fn duration_words(s: f64) -> String {
    if !s.is_finite() || s < 0.0 {
        return "?".into();
    }
    if s < 10.0 {
        format!("{s:.2} s")
    } else if s < 60.0 {
        format!("{s:.1} s")
    } else if s < 3600.0 {
        let m = (s / 60.0).floor();
        format!("{}m{:02}s", m as u64, (s - m * 60.0).floor() as u64)
    } else {
        let h = (s / 3600.0).floor();
        format!(
            "{}h{:02}m",
            h as u64,
            ((s - h * 3600.0) / 60.0).floor() as u64
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_step_is_reported_until_its_own_guard_ends_it() {
        // Other tests in this process may encode too, so only the state
        // this test sets is asserted, under the lock the steps share.
        let first = begin_step("first walk", 3_000_000);
        step_done(2_000_000);
        let words = step_words().unwrap_or_default();
        assert!(
            words.starts_with("first walk, 2 M of at most 3 M steps, for "),
            "{words}"
        );
        // A second step replaces the first in the reports; the first's
        // guard, dropped later, leaves the second alone.
        let second = begin_step("second walk", 5_000_000);
        drop(first);
        let words = step_words().unwrap_or_default();
        assert!(
            words.starts_with("second walk, 0 M of at most 5 M"),
            "{words}"
        );
        drop(second);
        assert!(
            step_words().is_none_or(|w| !w.starts_with("second walk")),
            "the step ended with its guard"
        );
    }

    #[test]
    fn modes_parse_and_name_themselves() {
        for m in [ProgressMode::Off, ProgressMode::Bar, ProgressMode::Lines] {
            assert_eq!(m.name().parse::<ProgressMode>().unwrap(), m);
        }
        assert_eq!(
            "auto".parse::<ProgressMode>().unwrap(),
            ProgressMode::auto()
        );
        let e = "loud".parse::<ProgressMode>().unwrap_err().to_string();
        assert!(e.contains("unknown progress mode \"loud\""), "{e}");
        assert!(!ProgressMode::Off.is_on() && ProgressMode::Lines.is_on());
    }

    #[test]
    fn texts_are_built_only_when_shown() {
        let mut off = Progress::new(ProgressMode::Off);
        off.status(|| unreachable!("off shows nothing"));
        off.event(|| unreachable!("off shows nothing"));
        // A bar shows no events, and a log no status within its interval.
        let mut bar = Progress::new(ProgressMode::Bar);
        bar.event(|| unreachable!("a bar shows no events"));
        let mut log = Progress::with_interval(ProgressMode::Lines, Duration::from_secs(3600));
        let mut shown = 0;
        log.status(|| {
            shown += 1;
            "first".into()
        });
        log.status(|| unreachable!("within the interval"));
        log.event(|| {
            shown += 1;
            "an event".into()
        });
        log.status(|| unreachable!("an event restarts the interval"));
        assert_eq!(shown, 2);
    }

    #[test]
    fn durations_in_words() {
        assert_eq!(duration_words(0.423), "0.42 s");
        assert_eq!(duration_words(12.34), "12.3 s");
        assert_eq!(duration_words(245.0), "4m05s");
        assert_eq!(duration_words(7620.0), "2h07m");
        assert_eq!(duration_words(f64::NAN), "?");
    }
}
