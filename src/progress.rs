//! Progress on stderr for long work. Three modes ([`Mode`], `--progress`): `auto` draws bars
//! when stderr is a terminal and nothing otherwise; `always` draws bars on a terminal and, when
//! stderr is a file or a pipe, writes plain log lines instead (one when a stage starts, one when
//! it ends with its elapsed time and rate, and one every [`LOG_EVERY`] in between), so a batch
//! job's log shows where a long run is; `never` shows nothing.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::sync::atomic::{AtomicU8, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// When progress is shown (`--progress`, or the environment variable [`PROGRESS_ENV`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mode {
    /// Bars on a terminal, nothing otherwise (the default).
    Auto,
    /// Bars on a terminal, plain log lines otherwise.
    Always,
    /// Nothing.
    Never,
}

/// The environment variable read when `--progress` is not given (`auto|always|never`).
pub const PROGRESS_ENV: &str = "EIGENTHERM_PROGRESS";

/// Interval between two log lines of one running stage (plain log mode).
pub const LOG_EVERY: Duration = Duration::from_secs(30);

static MODE: AtomicU8 = AtomicU8::new(0);

/// Sets the mode of this process (once, from the resolved flags).
pub fn set_mode(mode: Mode) {
    MODE.store(
        match mode {
            Mode::Auto => 0,
            Mode::Always => 1,
            Mode::Never => 2,
        },
        Ordering::Relaxed,
    );
}

/// The mode in force.
pub fn mode() -> Mode {
    match MODE.load(Ordering::Relaxed) {
        1 => Mode::Always,
        2 => Mode::Never,
        _ => Mode::Auto,
    }
}

/// How this process shows progress now: bars, plain lines or nothing.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Sink {
    Bars,
    Lines,
    Hidden,
}

fn sink() -> Sink {
    let terminal = std::io::stderr().is_terminal();
    match (mode(), terminal) {
        (Mode::Never, _) => Sink::Hidden,
        (_, true) => Sink::Bars,
        (Mode::Always, false) => Sink::Lines,
        (Mode::Auto, false) => Sink::Hidden,
    }
}

/// Stages logging now (plain log mode): a stage started inside another one is nested.
static OPEN_STAGES: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);

/// The plain-log state of one stage. An outermost stage logs its start and its end; a
/// nested one (a sector's pass inside the loop over sectors) logs only once it has run for
/// [`LOG_EVERY`], so a batch log holds a line per stage, not one per block pass.
#[derive(Debug)]
struct Log {
    label: String,
    len: Option<u64>,
    start: Instant,
    last: Mutex<Instant>,
    /// Whether a line of this stage was written (a nested stage ends with a line then).
    spoke: std::sync::atomic::AtomicBool,
    ended: std::sync::atomic::AtomicBool,
}

impl Log {
    fn new(label: &str, len: Option<u64>) -> Log {
        let now = Instant::now();
        let nested = OPEN_STAGES.fetch_add(1, Ordering::SeqCst) > 0;
        let log = Log {
            label: crate::error::escape(label),
            len,
            start: now,
            last: Mutex::new(now),
            spoke: std::sync::atomic::AtomicBool::new(!nested),
            ended: std::sync::atomic::AtomicBool::new(false),
        };
        if !nested {
            match len {
                Some(n) => log_line(&format!("{}: started, {n} steps", log.label)),
                None => log_line(&format!("{}: started", log.label)),
            }
        }
        log
    }

    /// Ends the stage once: the done line (unless a nested stage never spoke).
    fn end(&self, pos: u64) {
        if self.ended.swap(true, Ordering::SeqCst) {
            return;
        }
        OPEN_STAGES.fetch_sub(1, Ordering::SeqCst);
        if self.spoke.load(Ordering::SeqCst) {
            log_line(&self.line(pos, "done"));
        }
    }

    /// `label: done, pos/len steps in 1.23 s, 4.5 steps/s` (`what`: running or done);
    /// `label: done in 1.23 s` for a stage without steps.
    fn line(&self, pos: u64, what: &str) -> String {
        let secs = self.start.elapsed().as_secs_f64();
        if self.len.is_none() && pos == 0 {
            return format!("{}: {what} in {secs:.2} s", self.label);
        }
        let total = self.len.map(|n| format!("/{n}")).unwrap_or_default();
        let rate = if secs > 0.0 && pos > 0 {
            let r = pos as f64 / secs;
            let digits = if r >= 100.0 {
                0
            } else if r >= 10.0 {
                1
            } else {
                2
            };
            format!(", {r:.digits$} steps/s")
        } else {
            String::new()
        };
        format!(
            "{}: {what}, {pos}{total} steps in {secs:.2} s{rate}",
            self.label
        )
    }
}

fn log_line(s: &str) {
    eprintln!("progress: {s}");
}

/// A progress indicator of one stage: a bar (or spinner) on a terminal, plain log lines in
/// [`Mode::Always`] when stderr is not a terminal, nothing otherwise.
#[derive(Debug)]
pub struct Bar {
    pb: ProgressBar,
    log: Option<Log>,
}

impl Bar {
    /// Advances by `n` steps (a log line when [`LOG_EVERY`] has passed since the last one).
    pub fn inc(&self, n: u64) {
        self.pb.inc(n);
        if let Some(log) = &self.log {
            let mut last = log.last.lock().unwrap_or_else(|e| e.into_inner());
            if last.elapsed() >= LOG_EVERY {
                *last = Instant::now();
                log.spoke.store(true, Ordering::SeqCst);
                log_line(&log.line(self.pb.position(), "running"));
            }
        }
    }

    /// The text beside the bar (the item being worked on).
    pub fn set_message(&self, msg: String) {
        self.pb.set_message(msg);
    }

    /// Ends the stage: the bar is cleared; in log mode one line with the elapsed time and rate.
    pub fn finish_and_clear(&self) {
        self.pb.finish_and_clear();
        if let Some(log) = &self.log {
            log.end(self.pb.position());
        }
    }
}

impl Drop for Bar {
    /// A stage left by an error still closes (without a done line for a nested one).
    fn drop(&mut self) {
        if let Some(log) = &self.log {
            if !log.ended.swap(true, Ordering::SeqCst) {
                OPEN_STAGES.fetch_sub(1, Ordering::SeqCst);
            }
        }
    }
}

/// A progress bar of `len` steps labelled `what`.
pub fn bar(len: u64, what: &str) -> Bar {
    let s = sink();
    let pb = ProgressBar::with_draw_target(Some(len), draw_target(s));
    pb.set_style(
        ProgressStyle::with_template("{msg:>12} [{bar:30}] {pos}/{len} ({eta})")
            .unwrap_or_else(|_| ProgressStyle::default_bar())
            .progress_chars("=> "),
    );
    pb.set_message(what.to_string());
    Bar {
        pb,
        log: (s == Sink::Lines).then(|| Log::new(what, Some(len))),
    }
}

/// A spinner for work of unknown length labelled `what`.
pub fn spinner(what: &str) -> Bar {
    let s = sink();
    let pb = ProgressBar::with_draw_target(None, draw_target(s));
    pb.set_message(what.to_string());
    if s == Sink::Bars {
        pb.enable_steady_tick(Duration::from_millis(200));
    }
    Bar {
        pb,
        log: (s == Sink::Lines).then(|| Log::new(what, None)),
    }
}

/// A stage without steps of its own (`study: quenches`): in log mode a line when it starts
/// and one with its elapsed time when [`Bar::finish_and_clear`] ends it; nothing is drawn.
pub fn stage(what: &str) -> Bar {
    let s = sink();
    Bar {
        pb: ProgressBar::hidden(),
        log: (s == Sink::Lines).then(|| Log::new(what, None)),
    }
}

fn draw_target(s: Sink) -> ProgressDrawTarget {
    match s {
        Sink::Bars => ProgressDrawTarget::stderr(),
        _ => ProgressDrawTarget::hidden(),
    }
}

/// Prints a warning line on stderr (`warning: ...`), control characters escaped so that it
/// stays one line.
pub fn warn(msg: &str) {
    eprintln!("warning: {}", crate::error::escape(msg));
}

/// Prints a note line on stderr (`note: ...`), control characters escaped.
pub fn note(msg: &str) {
    eprintln!("note: {}", crate::error::escape(msg));
}

/// Set by [`interrupt`] (the Python module does on Ctrl-C), cleared by [`clear_interrupt`].
static INTERRUPTED: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// The message of the error a long call ends with after [`interrupt`].
pub const INTERRUPTED_MESSAGE: &str = "interrupted";

/// Asks the running passes to stop: every block of a pass over the eigenvectors and every
/// sector checks it ([`check_interrupt`]) and the call ends with [`INTERRUPTED_MESSAGE`].
/// The binary never sets it (Ctrl-C ends the process).
pub fn interrupt() {
    INTERRUPTED.store(true, std::sync::atomic::Ordering::SeqCst);
}

/// Clears the request of [`interrupt`] (before a new call).
pub fn clear_interrupt() {
    INTERRUPTED.store(false, std::sync::atomic::Ordering::SeqCst);
}

/// `Err` once [`interrupt`] was called.
pub fn check_interrupt() -> crate::Result<()> {
    if INTERRUPTED.load(std::sync::atomic::Ordering::SeqCst) {
        return Err(crate::Error::other(INTERRUPTED_MESSAGE));
    }
    Ok(())
}
