//! A progress bar on stderr, drawn only when stderr is a terminal.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Progress of one run, shown as a bar of simulated time.
pub struct Progress {
    bar: Option<ProgressBar>,
}

impl Progress {
    /// A bar over the fraction of the run, hidden when stderr is not a terminal.
    pub fn new(what: &str) -> Self {
        if !std::io::stderr().is_terminal() {
            return Self { bar: None };
        }
        let bar = ProgressBar::with_draw_target(Some(1000), ProgressDrawTarget::stderr());
        let style =
            ProgressStyle::with_template("{msg} [{bar:40}] {percent}% {prefix} ({elapsed})")
                .unwrap_or_else(|_| ProgressStyle::default_bar())
                .progress_chars("=> ");
        bar.set_style(style);
        bar.set_message(what.to_string());
        Self { bar: Some(bar) }
    }

    /// Updates the bar to `fraction` at time `t`.
    pub fn update(&self, t: f64, fraction: f64) {
        if let Some(bar) = &self.bar {
            bar.set_position((fraction * 1000.0) as u64);
            bar.set_prefix(format!("t = {t:.6}"));
        }
    }

    /// Updates the bar to `fraction` (for work measured in other units than time).
    pub fn update_fraction(&self, fraction: f64) {
        if let Some(bar) = &self.bar {
            bar.set_position((fraction.clamp(0.0, 1.0) * 1000.0) as u64);
        }
    }

    /// Shows `label` where the bar shows the time (for example the parameter value reached).
    pub fn show(&self, label: &str) {
        if let Some(bar) = &self.bar {
            bar.set_prefix(label.to_string());
        }
    }

    /// Removes the bar.
    pub fn finish(&self) {
        if let Some(bar) = &self.bar {
            bar.finish_and_clear();
        }
    }
}
