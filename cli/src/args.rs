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
        /// Zoom the field map on a window x0,y0,x1,y1 (model length units),
        /// e.g. on a gap.
        #[arg(long, value_name = "X0,Y0,X1,Y1", value_parser = parse_view, allow_hyphen_values = true)]
        view: Option<[f64; 4]>,
    },
    /// List the built-in typical materials (for `from_library`), or show one
    /// with its B-H points.
    Materials {
        /// A material's name, to show its values.
        name: Option<String>,
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

/// Parse `x0,y0,x1,y1` into a zoom window with some area.
fn parse_view(s: &str) -> Result<[f64; 4], String> {
    let v: Vec<f64> = s
        .split(',')
        .map(|p| {
            p.trim()
                .parse::<f64>()
                .map_err(|_| format!("`{p}` is not a number"))
        })
        .collect::<Result<_, _>>()?;
    match v[..] {
        [x0, y0, x1, y1] if v.iter().all(|x| x.is_finite()) && x0 != x1 && y0 != y1 => {
            Ok([x0, y0, x1, y1])
        }
        [_, _, _, _] => Err("the window needs finite numbers with x0 ≠ x1 and y0 ≠ y1".into()),
        _ => Err(format!(
            "expected four numbers x0,y0,x1,y1, got {}",
            v.len()
        )),
    }
}
