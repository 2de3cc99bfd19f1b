//! How progress is shown. On a terminal: one updating line per phase
//! (indicatif), with its elapsed time. Elsewhere (a log, a pipe): a line
//! when something changed and at least [`MIN_GAP`] has passed, and a
//! heartbeat at least every [`HEARTBEAT`], whatever the library is doing.
//! With `-q`: warnings only. Warnings are always printed.

use classcert_prover::progress::{Hook, Sink};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// Off a terminal, lines are at least this far apart (warnings excepted).
pub const MIN_GAP: Duration = Duration::from_secs(3);
/// Off a terminal, a line at least this often while a phase runs.
pub const HEARTBEAT: Duration = Duration::from_secs(9);

#[derive(Clone, Copy, PartialEq, Eq)]
enum Mode {
    Quiet,
    Lines,
    Bars,
}

struct State {
    start: Instant,
    phase: Option<String>,
    /// When the current phase began.
    phase_start: Instant,
    done: Option<(u64, Option<u64>)>,
    /// The count when the rate's clock (`phase_start`) last started: 0 at
    /// a phase, the count so far at a note (work read back from a
    /// checkpoint before it is no part of the rate).
    base: u64,
    changed: bool,
    last_line: Instant,
    lines: u32,
    bar: Option<(ProgressBar, bool)>,
}

pub struct CliSink {
    mode: Mode,
    state: Mutex<State>,
}

/// The count of a phase, with its rate and the time left when the total
/// is known (`elapsed`: since the count was `base`).
fn counts(done: Option<(u64, Option<u64>)>, base: u64, elapsed: Duration) -> String {
    match done {
        None => String::new(),
        Some((d, None)) => format!(" ({d})"),
        Some((d, Some(t))) => {
            let secs = elapsed.as_secs_f64();
            if d <= base || secs < 1.0 {
                return format!(" ({d}/{t})");
            }
            let rate = (d - base) as f64 / secs;
            let left = t.saturating_sub(d) as f64 / rate;
            format!(" ({d}/{t}, {rate:.1}/s, about {left:.0} s left)")
        }
    }
}

impl CliSink {
    /// The sink for this process (leaked: it lives as long as the run).
    pub fn install(quiet: bool) -> &'static CliSink {
        let mode = if quiet {
            Mode::Quiet
        } else if std::io::stderr().is_terminal() {
            Mode::Bars
        } else {
            Mode::Lines
        };
        let now = Instant::now();
        let sink: &'static CliSink = Box::leak(Box::new(CliSink {
            mode,
            state: Mutex::new(State {
                start: now,
                phase: None,
                phase_start: now,
                done: None,
                base: 0,
                changed: false,
                last_line: now,
                lines: 0,
                bar: None,
            }),
        }));
        if mode == Mode::Lines {
            std::thread::spawn(move || loop {
                std::thread::sleep(Duration::from_millis(250));
                sink.heartbeat();
            });
        }
        sink
    }

    pub fn hook(&'static self) -> Hook {
        Hook::new(self)
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, State> {
        self.state.lock().unwrap_or_else(|e| e.into_inner())
    }

    fn heartbeat(&self) {
        let mut s = self.lock();
        let Some(phase) = s.phase.clone() else { return };
        let gap = s.last_line.elapsed();
        if (s.changed && gap >= MIN_GAP) || gap >= HEARTBEAT {
            let t = s.start.elapsed().as_secs_f64();
            eprintln!(
                "[{t:6.1} s] {phase}{}",
                counts(s.done, s.base, s.phase_start.elapsed())
            );
            s.last_line = Instant::now();
            s.changed = false;
            s.lines += 1;
        }
    }

    /// Ends the current phase (its line stays on a terminal).
    pub fn finish(&self) {
        let mut s = self.lock();
        if let Some((bar, _)) = s.bar.take() {
            bar.finish();
        }
        if self.mode == Mode::Lines && s.phase.take().is_some() && s.lines > 0 {
            eprintln!("[{:6.1} s] done", s.start.elapsed().as_secs_f64());
            s.last_line = Instant::now();
        }
    }
}

impl Sink for CliSink {
    fn phase(&self, name: &str) {
        let mut s = self.lock();
        match self.mode {
            Mode::Quiet => {}
            Mode::Lines => {
                s.phase = Some(name.to_string());
                s.phase_start = Instant::now();
                s.base = 0;
                s.done = None;
                s.changed = true;
            }
            Mode::Bars => {
                if let Some((bar, _)) = s.bar.take() {
                    bar.finish();
                }
                let bar = ProgressBar::with_draw_target(None, ProgressDrawTarget::stderr());
                if let Ok(style) = ProgressStyle::with_template("{spinner} {msg} [{elapsed}]") {
                    bar.set_style(style);
                }
                bar.set_message(name.to_string());
                bar.enable_steady_tick(Duration::from_millis(120));
                s.bar = Some((bar, false));
            }
        }
    }

    fn tick(&self, done: u64, total: Option<u64>) {
        let mut s = self.lock();
        match self.mode {
            Mode::Quiet => {}
            Mode::Lines => {
                if s.phase.is_some() {
                    s.done = Some((done, total));
                    s.changed = true;
                }
            }
            Mode::Bars => {
                if let Some((bar, styled)) = s.bar.as_mut() {
                    if !*styled {
                        let template = if total.is_some() {
                            "{spinner} {msg} {pos}/{len} ({per_sec}, about {eta} left) [{elapsed}]"
                        } else {
                            "{spinner} {msg} ({pos}) [{elapsed}]"
                        };
                        if let Ok(style) = ProgressStyle::with_template(template) {
                            bar.set_style(style);
                        }
                        *styled = true;
                    }
                    if let Some(t) = total {
                        bar.set_length(t);
                    }
                    bar.set_position(done);
                }
            }
        }
    }

    fn note(&self, msg: &str) {
        let mut s = self.lock();
        match self.mode {
            Mode::Quiet => {}
            Mode::Lines => {
                eprintln!("[{:6.1} s] {msg}", s.start.elapsed().as_secs_f64());
                s.last_line = Instant::now();
                s.base = s.done.map_or(0, |(d, _)| d);
                s.phase_start = Instant::now();
            }
            Mode::Bars => match &s.bar {
                Some((bar, _)) => {
                    bar.suspend(|| eprintln!("{msg}"));
                    bar.reset_eta();
                }
                None => eprintln!("{msg}"),
            },
        }
    }

    fn warn(&self, msg: &str) {
        let s = self.lock();
        match &s.bar {
            Some((bar, _)) => bar.suspend(|| eprintln!("classcert: warning: {msg}")),
            None => eprintln!("classcert: warning: {msg}"),
        }
    }
}
