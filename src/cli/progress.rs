//! Progress on a terminal: the engine's [`Progress`] drawn as a bar on
//! standard error (indicatif), and nothing at all when standard error is
//! not a terminal, so piped and scripted runs stay quiet.

use std::io::IsTerminal as _;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use ambit::usecases::Progress;

/// A progress bar for one long command; hidden when stderr is not a
/// terminal. It clears itself when dropped.
pub struct Bar {
    bar: ProgressBar,
}

impl Bar {
    pub fn new() -> Self {
        let bar = if std::io::stderr().is_terminal() {
            let bar = ProgressBar::with_draw_target(Some(0), ProgressDrawTarget::stderr());
            if let Ok(style) =
                ProgressStyle::with_template("{bar:30.cyan/blue} {pos}/{len} {wide_msg}")
            {
                bar.set_style(style);
            }
            bar
        } else {
            ProgressBar::hidden()
        };
        Self { bar }
    }
}

impl Bar {
    /// Runs `print` with the bar hidden, so lines printed meanwhile are not
    /// drawn over.
    pub fn suspend<T>(&self, print: impl FnOnce() -> T) -> T {
        self.bar.suspend(print)
    }
}

impl Progress for Bar {
    fn step(&self, done: usize, total: usize, label: &str) {
        self.bar.set_length(total as u64);
        self.bar.set_position(done as u64);
        self.bar.set_message(ambit_label(label));
    }
}

impl Drop for Bar {
    fn drop(&mut self) {
        self.bar.finish_and_clear();
    }
}

/// A label as shown on one terminal line: control characters dropped.
fn ambit_label(label: &str) -> String {
    label.chars().filter(|c| !c.is_control()).collect()
}
