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

use std::fmt;
use std::io::{IsTerminal, Write};
use std::str::FromStr;
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
