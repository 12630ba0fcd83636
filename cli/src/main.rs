//! The `fluxwright` command: check, mesh and solve 2D magnetostatic models.
//!
//! Exit codes: 0 done, 1 the model (or another input) is wrong, 2 usage,
//! 3 the solver did not converge (results written and marked).

mod args;
mod colormap;
mod commands;
mod output;
mod plot;
mod progress;
mod raster;
mod sweep;
mod vtu;

use clap::Parser;
use std::process::ExitCode;

/// An error that ends the run with a given exit code; its message is printed
/// as is.
#[derive(Debug)]
pub struct Failure {
    /// Process exit code.
    pub code: u8,
    /// What went wrong and what to do.
    pub message: String,
}

impl Failure {
    /// A bad-input failure (exit code 1).
    pub fn input(message: impl Into<String>) -> Failure {
        Failure {
            code: 1,
            message: message.into(),
        }
    }
}

impl std::fmt::Display for Failure {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for Failure {}

fn main() -> ExitCode {
    let cli = match args::Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let _ = e.print();
            return ExitCode::from(if e.use_stderr() { 2 } else { 0 });
        }
    };
    match commands::run(cli) {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            if let Some(f) = e.downcast_ref::<Failure>() {
                eprintln!("{}", f.message);
                ExitCode::from(f.code)
            } else {
                eprintln!("error: {e:#}");
                ExitCode::from(1)
            }
        }
    }
}
