//! Progress on standard error while harnesses build and run: a status line
//! with elapsed time, redrawn in place on a terminal, silent otherwise.

use std::io::{IsTerminal, Write};
use std::time::Duration;

/// A status line.
pub struct Progress {
    on: bool,
    label: String,
    drawn: bool,
}

impl Progress {
    /// A status line on standard error, shown only when it is a terminal.
    pub fn new() -> Self {
        Progress {
            on: std::io::stderr().is_terminal(),
            label: String::new(),
            drawn: false,
        }
    }

    /// Starts a new phase, e.g. `measuring harbour-crane`.
    pub fn phase(&mut self, label: impl Into<String>) {
        self.label = label.into();
        self.tick(Duration::ZERO);
    }

    /// Redraws the line with the elapsed time.
    pub fn tick(&mut self, elapsed: Duration) {
        if self.on {
            let mut err = std::io::stderr();
            let _ = write!(
                err,
                "\r\x1b[2K  {} ... {:.1} s",
                self.label,
                elapsed.as_secs_f64()
            );
            let _ = err.flush();
            self.drawn = true;
        }
    }

    /// Removes the line.
    pub fn clear(&mut self) {
        if self.on && self.drawn {
            let _ = write!(std::io::stderr(), "\r\x1b[2K");
            self.drawn = false;
        }
    }
}

impl Default for Progress {
    fn default() -> Self {
        Self::new()
    }
}
