//! Command-line arguments exactly as typed; validated into run settings in
//! `commands`.

use clap::{Parser, Subcommand};
use fluxwright_solver::sweep::Shard;
use std::path::PathBuf;

/// 2D magnetostatic finite-element analysis of iron-cored devices.
///
/// Describe a device cross-section (planar with a depth, or axisymmetric) in
/// a model file (TOML), then check it, mesh it, solve it or sweep it.
/// Coordinates are in the model's `length_unit`; every other number is SI.
#[derive(Parser, Debug)]
#[command(
    name = "fluxwright",
    version,
    propagate_version = true,
    after_help = "First steps:\n  fluxwright demo -o out/demo                  solve the built-in example and explain its numbers\n  fluxwright demo --save-model magnet.toml     ... and keep its model file to edit\n  fluxwright check magnet.toml                 validate your model, list what it holds\n  fluxwright solve magnet.toml -o out/magnet   results.json, field.png, fields.vtu\n\nExit codes: 0 done; 1 bad input (the message names the file, line and key); 2 usage; 3 Newton did not converge (results are written, marked converged = false)."
)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
    /// Worker threads for assembly, post-processing and sweep steps
    /// (default: one per core).
    #[arg(long, global = true, value_name = "N", value_parser = clap::value_parser!(u16).range(1..))]
    pub threads: Option<u16>,
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
        /// Output directory (created if missing; default out/<model name>).
        #[arg(short, long, value_name = "DIR")]
        out: Option<PathBuf>,
    },
    /// Mesh and solve a model; write results.json, field.png, fields.vtu
    /// (ParaView), the profiles and the mesh files.
    Solve {
        /// The model file (.toml).
        model: PathBuf,
        /// Output directory (created if missing; default out/<model name>).
        #[arg(short, long, value_name = "DIR")]
        out: Option<PathBuf>,
        /// Zoom the field map on a window x0,y0,x1,y1 (model length units),
        /// e.g. on a gap.
        #[arg(long, value_name = "X0,Y0,X1,Y1", value_parser = parse_view, allow_hyphen_values = true)]
        view: Option<[f64; 4]>,
    },
    /// Solve the model's [sweep] (a current, move or turn range), one full
    /// solve a step; write sweep.csv, sweep.png, sweep.json and each step's
    /// results under steps/.
    Sweep {
        /// The model file (.toml), with a [sweep] table.
        model: PathBuf,
        /// Output directory (created if missing; default out/<model name>-sweep,
        /// or out/<model name>-sweep-K-of-N for a shard).
        #[arg(short, long, value_name = "DIR")]
        out: Option<PathBuf>,
        /// Solve only shard K of N (every N-th block of steps), to spread
        /// one sweep over machines; join the folders with `merge`.
        #[arg(long, value_name = "K/N", value_parser = parse_shard)]
        shard: Option<Shard>,
    },
    /// Join the output folders of a sharded sweep into one, identical to an
    /// unsharded run.
    Merge {
        /// The shards' output folders.
        #[arg(required = true, value_name = "DIR")]
        shards: Vec<PathBuf>,
        /// Output directory for the joined sweep.
        #[arg(short, long, value_name = "DIR")]
        out: PathBuf,
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

/// Parse `K/N` (1 ≤ K ≤ N) into a 0-based shard.
fn parse_shard(s: &str) -> Result<Shard, String> {
    let (k, n) = s
        .split_once('/')
        .ok_or_else(|| format!("expected K/N such as 2/8, got `{s}`"))?;
    let k: usize = k
        .trim()
        .parse()
        .map_err(|_| format!("`{k}` is not a whole number"))?;
    let n: usize = n
        .trim()
        .parse()
        .map_err(|_| format!("`{n}` is not a whole number"))?;
    if n == 0 || k == 0 || k > n {
        return Err(format!("shard {k} of {n}: need 1 ≤ K ≤ N"));
    }
    Ok(Shard {
        index: k - 1,
        count: n,
    })
}
