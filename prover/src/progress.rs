//! Progress reporting: a small hook that the library calls and a front end
//! implements. The library says which phase it is in, ticks counters in
//! its long loops and reports warnings; how (or whether) that is shown is
//! the front end's business (the command line draws one updating line per
//! phase on a terminal and a line every few seconds elsewhere).
//!
//! `Options::progress` holds a [`Hook`]: `Hook::none()` (the default)
//! discards everything, warnings included, which suits library callers
//! and tests; `Hook::from(true)` prints phases and warnings as plain lines
//! on stderr.

use std::cell::Cell;
use std::time::{Duration, Instant};

/// What a front end implements. Calls come from the computing thread;
/// implementations must be cheap (the library already throttles ticks).
pub trait Sink: Send + Sync {
    /// A new phase starts (`name` is a short sentence, with figures).
    fn phase(&self, name: &str);
    /// Progress within the current phase: `done` items of `total` (when
    /// the total is known in advance).
    fn tick(&self, done: u64, total: Option<u64>);
    /// Something the user should know even when progress is hidden.
    fn warn(&self, msg: &str);
    /// A fact about the run worth a line of its own, shown at once (unlike
    /// a phase, which may be folded into the next line), and hidden with
    /// progress. The phase's rate is measured afresh from here on (a note
    /// marks a change of pace, such as the end of work read back).
    fn note(&self, msg: &str) {
        self.phase(msg);
    }
}

/// Where progress goes: nowhere, or a sink that lives for the whole
/// process (front ends create one per run and leak it, so that the hook
/// stays `Copy` and fits in `Options`).
#[derive(Clone, Copy, Default)]
pub struct Hook(Option<&'static dyn Sink>);

impl Hook {
    pub const fn none() -> Hook {
        Hook(None)
    }

    pub fn new(sink: &'static dyn Sink) -> Hook {
        Hook(Some(sink))
    }
}

impl std::fmt::Debug for Hook {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(if self.0.is_some() {
            "Hook(sink)"
        } else {
            "Hook(none)"
        })
    }
}

/// `true`: plain lines on stderr (phases and warnings, no counters);
/// `false`: nothing.
impl From<bool> for Hook {
    fn from(show: bool) -> Hook {
        if show {
            Hook(Some(&PLAIN))
        } else {
            Hook(None)
        }
    }
}

/// Phases and warnings as plain stderr lines.
struct Plain;

static PLAIN: Plain = Plain;

impl Sink for Plain {
    fn phase(&self, name: &str) {
        eprintln!("{name}");
    }
    fn tick(&self, _done: u64, _total: Option<u64>) {}
    fn warn(&self, msg: &str) {
        eprintln!("warning: {msg}");
    }
}

/// Ticks closer together than this are not passed on.
const TICK_INTERVAL: Duration = Duration::from_millis(200);

/// The library's handle on a hook: one per computation.
pub struct Progress {
    hook: Hook,
    last_tick: Cell<Option<Instant>>,
}

impl Progress {
    pub fn new(hook: impl Into<Hook>) -> Progress {
        Progress {
            hook: hook.into(),
            last_tick: Cell::new(None),
        }
    }

    pub fn phase(&self, name: &str) {
        if let Some(s) = self.hook.0 {
            s.phase(name);
            self.last_tick.set(None);
        }
    }

    /// The same as [`Progress::phase`] (the name older call sites use).
    pub fn say(&self, msg: &str) {
        self.phase(msg);
    }

    /// Passes a counter on, at most every 200 ms.
    pub fn tick(&self, done: u64, total: Option<u64>) {
        let Some(s) = self.hook.0 else { return };
        let now = Instant::now();
        if let Some(t) = self.last_tick.get() {
            if now.duration_since(t) < TICK_INTERVAL {
                return;
            }
        }
        self.last_tick.set(Some(now));
        s.tick(done, total);
    }

    pub fn warn(&self, msg: &str) {
        if let Some(s) = self.hook.0 {
            s.warn(msg);
        }
    }

    /// The hook, for a part of the computation that reports by itself.
    pub fn hook(&self) -> Hook {
        self.hook
    }

    /// See [`Sink::note`].
    pub fn note(&self, msg: &str) {
        if let Some(s) = self.hook.0 {
            s.note(msg);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::Mutex;

    #[derive(Default)]
    struct Record(Mutex<Vec<String>>);

    impl Sink for Record {
        fn phase(&self, name: &str) {
            self.0.lock().unwrap().push(format!("phase {name}"));
        }
        fn tick(&self, done: u64, total: Option<u64>) {
            self.0
                .lock()
                .unwrap()
                .push(format!("tick {done} {total:?}"));
        }
        fn warn(&self, msg: &str) {
            self.0.lock().unwrap().push(format!("warn {msg}"));
        }
    }

    #[test]
    fn ticks_are_throttled_and_phases_reset_them() {
        let rec: &'static Record = Box::leak(Box::default());
        let p = Progress::new(Hook::new(rec));
        p.phase("a");
        for i in 0..1000 {
            p.tick(i, Some(1000));
        }
        p.phase("b");
        p.tick(7, None);
        p.warn("w");
        let got = rec.0.lock().unwrap().clone();
        assert_eq!(
            got,
            vec![
                "phase a",
                "tick 0 Some(1000)",
                "phase b",
                "tick 7 None",
                "warn w"
            ]
        );
    }

    #[test]
    fn no_hook_is_silent() {
        let p = Progress::new(false);
        p.phase("a");
        p.tick(1, None);
        p.warn("w");
        assert_eq!(format!("{:?}", Hook::default()), "Hook(none)");
    }
}
