//! The progress line of `solve` and `demo` on stderr: a spinner while
//! meshing, then a bar over the decades of residual that Newton has to
//! shed. indicatif draws nothing when stderr is not a terminal, so logs and
//! pipes stay clean.

use fluxwright_solver::progress::{NewtonStep, Phase, Progress};
use indicatif::{ProgressBar, ProgressStyle};
use std::time::Duration;

/// Positions per decade of residual.
const PER_DECADE: f64 = 10.0;

/// One line that follows a mesh-and-solve run.
pub struct SolveBar {
    bar: ProgressBar,
}

impl SolveBar {
    pub fn new() -> SolveBar {
        let bar = ProgressBar::new(0);
        if let Ok(style) =
            ProgressStyle::with_template("{spinner} {prefix:<10} [{bar:24}] {msg} ({elapsed})")
        {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.enable_steady_tick(Duration::from_millis(120));
        SolveBar { bar }
    }

    /// Print a line on stdout above the bar (also when the bar is hidden).
    pub fn println(&self, line: &str) {
        self.bar.suspend(|| println!("{line}"));
    }

    /// Results, files and pictures are being made.
    pub fn writing(&self) {
        self.bar.set_prefix("writing");
        self.bar.set_position(self.bar.length().unwrap_or(0));
        self.bar.set_message("results, field map, VTK files");
    }

    /// Remove the line (before the summary is printed).
    pub fn clear(&self) {
        self.bar.finish_and_clear();
    }
}

impl Progress for SolveBar {
    fn phase(&self, phase: Phase) {
        match phase {
            Phase::Meshing { round } => {
                self.bar.set_prefix("meshing");
                self.bar.set_length(1);
                self.bar.set_position(0);
                self.bar.set_message(if round == 0 {
                    String::new()
                } else {
                    format!("adapt round {round}")
                });
            }
            Phase::Solving { triangles, .. } => {
                self.bar.set_prefix("solving");
                self.bar.set_length(1);
                self.bar.set_position(0);
                self.bar.set_message(format!("{triangles} triangles"));
            }
            _ => {}
        }
    }

    fn newton_step(&self, step: NewtonStep) {
        let decades = |r: f64| (-r.log10()).max(0.0) * PER_DECADE;
        let target = decades(step.tolerance).ceil();
        self.bar.set_length(target as u64);
        let done = decades(step.relative_residual).min(target);
        self.bar
            .set_position(if done.is_finite() { done as u64 } else { 0 });
        self.bar.set_message(format!(
            "Newton step {}, residual {:.1e}",
            step.iteration, step.relative_residual
        ));
    }
}
