//! Command-line arguments exactly as typed; validated into run settings in
//! `commands`.

use clap::{Parser, Subcommand};
use std::path::PathBuf;

/// 2D magnetostatic finite-element analysis of iron-cored devices.
///
/// Describe a device cross-section in a model file (TOML), then check it,
/// mesh it or solve it. Coordinates are in the model's `length_unit`; every
/// other number is SI.
#[derive(Parser, Debug)]
#[command(name = "fluxwright", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Subcommand, Debug)]
pub enum Command {
    /// Read and validate a model; print its shapes, materials and windings.
    Check {
        /// The model file (.toml).
        model: PathBuf,
    },
    /// Mesh a model; write mesh.json, mesh.vtu (ParaView) and mesh.png.
    Mesh {
        /// The model file (.toml).
        model: PathBuf,
        /// Output directory (created if missing).
        #[arg(short, long, value_name = "DIR")]
        out: PathBuf,
    },
    /// Mesh and solve a model; write results.json, fields.vtu (ParaView) and
    /// the mesh files.
    Solve {
        /// The model file (.toml).
        model: PathBuf,
        /// Output directory (created if missing).
        #[arg(short, long, value_name = "DIR")]
        out: PathBuf,
    },
    /// Mesh and solve the built-in demo model (an invented door-holding
    /// electromagnet), write every output and explain each number.
    Demo {
        /// Output directory (created if missing).
        #[arg(short, long, value_name = "DIR", default_value = "out/demo")]
        out: PathBuf,
        /// Also write the demo's model file here, to edit and re-run.
        #[arg(long, value_name = "FILE")]
        save_model: Option<PathBuf>,
    },
}
