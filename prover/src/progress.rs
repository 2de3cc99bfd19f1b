//! Progress lines on stderr, shown only once a run has taken more than a
//! second (short runs stay quiet).

use std::time::{Duration, Instant};

pub struct Progress {
    enabled: bool,
    start: Instant,
    pending: Vec<String>,
    shown: bool,
}

impl Progress {
    pub fn new(enabled: bool) -> Progress {
        Progress {
            enabled,
            start: Instant::now(),
            pending: Vec::new(),
            shown: false,
        }
    }

    pub fn say(&mut self, msg: &str) {
        if !self.enabled {
            return;
        }
        let t = self.start.elapsed();
        let line = format!("[{:7.2}s] {msg}", t.as_secs_f64());
        if self.shown
            || t > Duration::from_secs(1)
            || std::env::var_os("CLASSCERT_PROGRESS").is_some()
        {
            for p in self.pending.drain(..) {
                eprintln!("{p}");
            }
            eprintln!("{line}");
            self.shown = true;
        } else {
            self.pending.push(line);
        }
    }

    pub fn done(&mut self) {
        if self.enabled && self.shown {
            eprintln!("[{:7.2}s] done", self.start.elapsed().as_secs_f64());
        }
    }
}
