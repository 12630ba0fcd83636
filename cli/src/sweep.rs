//! `fluxwright sweep` and `fluxwright merge`: the sweep table (sweep.csv),
//! its picture (sweep.png), each step's full results (steps/NNN.json), and
//! joining the shards of one sweep.
//!
//! Numbers in sweep.csv are written in Rust's shortest round-trip form, so
//! a merged table of shards is byte-identical to an unsharded run's.

use crate::output::Staging;
use crate::plot::{ensure_font, FONT};
use crate::Failure;
use anyhow::{anyhow, Context, Result};
use fluxwright_solver::model::{Model, Sweep};
use fluxwright_solver::sweep::{self, Shard, SweepOptions, SweepStep};
use indicatif::{ProgressBar, ProgressStyle};
use plotters::prelude::*;
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};

/// `OUT/sweep.json`: what a sweep folder holds, so that shards can be
/// checked and merged.
#[derive(Serialize, Deserialize, PartialEq, Debug)]
struct SweepIndex {
    format: String,
    title: String,
    /// What is swept, in words.
    parameter: String,
    /// Steps of the whole sweep.
    total_steps: usize,
    /// `[K, N]` (1-based) for a shard, absent for a whole sweep.
    #[serde(skip_serializing_if = "Option::is_none")]
    shard: Option<[usize; 2]>,
    /// The steps in this folder.
    steps: Vec<usize>,
    /// Whether every step in this folder converged.
    converged: bool,
}

const INDEX_FORMAT: &str = "fluxwright-sweep/1";

/// Run the model's sweep (or one shard) into `out`. Exit code 3 when a step
/// did not converge (everything is still written, marked in the table).
pub fn sweep(model: &Model, out: &Path, shard: Option<Shard>) -> Result<u8> {
    let Some(spec) = &model.sweep else {
        return Err(Failure::input(format!(
            "{}: the model has no [sweep] table; add one (current, move or turn) or use `fluxwright solve`",
            model.source
        ))
        .into());
    };
    let total = spec.values().len();
    let mine = sweep::shard_steps(total, shard);
    let bar = ProgressBar::new(mine.len() as u64);
    bar.set_style(
        ProgressStyle::with_template(
            "{prefix} [{bar:30}] {pos}/{len} steps, {elapsed} ({eta} left)",
        )
        .map_err(|e| anyhow!("progress bar style: {e}"))?
        .progress_chars("=> "),
    );
    bar.set_prefix("sweep");
    let options = SweepOptions {
        shard,
        ..SweepOptions::default()
    };
    let steps = sweep::run(model, &options, &|_| bar.inc(1))
        .map_err(|e| Failure::input(format!("{}: {e}", model.source)));
    bar.finish_and_clear();
    let steps = steps?;

    let staging = Staging::new(out)?;
    for s in &steps {
        staging.write(
            &format!("steps/{:03}.json", s.index),
            serde_json::to_string_pretty(&s.results)?.as_bytes(),
        )?;
    }
    let table = Table::of(model, spec, &steps);
    let csv = table.to_csv();
    staging.write("sweep.csv", csv.as_bytes())?;
    let converged = steps.iter().all(|s| s.results.solve.converged);
    let index = SweepIndex {
        format: INDEX_FORMAT.into(),
        title: model.title.clone(),
        parameter: parameter_words(model, spec),
        total_steps: total,
        shard: shard.map(|s| [s.index + 1, s.count]),
        steps: steps.iter().map(|s| s.index).collect(),
        converged,
    };
    if !table.rows.is_empty() {
        let png = staging.path("sweep.png")?;
        sweep_png(&png, &model.title, &index.parameter, &table)?;
    }
    staging.write(
        "sweep.json",
        serde_json::to_string_pretty(&index)?.as_bytes(),
    )?;
    staging.commit()?;

    print_table(&table);
    let count = |kind: sweep::StepMesh| steps.iter().filter(|s| s.mesh == kind).count();
    if !matches!(spec, Sweep::Current { .. }) {
        println!(
            "  meshes: {} made afresh, {} steps blended, {} blended and reconnected in the moving band",
            count(sweep::StepMesh::Fresh),
            count(sweep::StepMesh::Blended),
            count(sweep::StepMesh::Reconnected),
        );
    }
    match shard {
        Some(s) => println!(
            "wrote {} (shard {} of {}: {} of {total} steps; join the shards with `fluxwright merge`)",
            out.display(),
            s.index + 1,
            s.count,
            steps.len()
        ),
        None => println!("wrote {}", out.display()),
    }
    if converged {
        Ok(0)
    } else {
        let bad: Vec<String> = steps
            .iter()
            .filter(|s| !s.results.solve.converged)
            .map(|s| s.index.to_string())
            .collect();
        eprintln!(
            "{}: Newton did not converge at step(s) {}; results are written and marked converged = false",
            model.source,
            bad.join(", ")
        );
        Ok(3)
    }
}

/// Join shard folders of one sweep into `out`: sweep.csv (identical to an
/// unsharded run's), sweep.png, sweep.json and the steps' results.
pub fn merge(dirs: &[PathBuf], out: &Path) -> Result<u8> {
    let mut parts = Vec::new();
    for d in dirs {
        let read = |name: &str| -> Result<String> {
            let p = d.join(name);
            std::fs::read_to_string(&p).map_err(|e| {
                Failure::input(format!(
                    "{}: cannot read {name} ({e}); is it the output folder of `fluxwright sweep`?",
                    d.display()
                ))
                .into()
            })
        };
        let index: SweepIndex = serde_json::from_str(&read("sweep.json")?).map_err(|e| {
            Failure::input(format!(
                "{}: sweep.json is not a sweep index: {e}",
                d.display()
            ))
        })?;
        if index.format != INDEX_FORMAT {
            return Err(Failure::input(format!(
                "{}: sweep.json has format `{}`, expected `{INDEX_FORMAT}`",
                d.display(),
                index.format
            ))
            .into());
        }
        let table = Table::parse(&read("sweep.csv")?)
            .map_err(|e| Failure::input(format!("{}/sweep.csv: {e}", d.display())))?;
        parts.push((d, index, table));
    }
    let Some((first_dir, first, first_table)) = parts.first() else {
        return Err(Failure::input("merge: give at least one sweep folder").into());
    };
    // A shard with no steps (more shards than blocks) has only the fixed
    // columns; the others must agree column for column.
    let header = parts
        .iter()
        .find(|p| !p.2.rows.is_empty())
        .map_or(&first_table.header, |p| &p.2.header);
    let mut rows: Vec<(usize, Vec<String>)> = Vec::new();
    let mut converged = true;
    for (d, index, table) in &parts {
        if index.title != first.title
            || index.parameter != first.parameter
            || index.total_steps != first.total_steps
            || (!table.rows.is_empty() && table.header != *header)
        {
            return Err(Failure::input(format!(
                "{} and {} hold different sweeps (title, parameter, step count or columns differ)",
                first_dir.display(),
                d.display()
            ))
            .into());
        }
        converged &= index.converged;
        for row in &table.rows {
            let step: usize = row[0].parse().map_err(|_| {
                Failure::input(format!("{}/sweep.csv: bad step `{}`", d.display(), row[0]))
            })?;
            rows.push((step, row.clone()));
        }
    }
    rows.sort_by_key(|r| r.0);
    for w in rows.windows(2) {
        if w[0].0 == w[1].0 {
            return Err(Failure::input(format!(
                "merge: step {} appears in two folders; give each shard once",
                w[0].0
            ))
            .into());
        }
    }
    let have: Vec<usize> = rows.iter().map(|r| r.0).collect();
    let missing: Vec<String> = (0..first.total_steps)
        .filter(|k| have.binary_search(k).is_err())
        .map(|k| k.to_string())
        .collect();
    if !missing.is_empty() {
        return Err(Failure::input(format!(
            "merge: steps {} of {} are missing; run the remaining shards first",
            missing.join(", "),
            first.total_steps
        ))
        .into());
    }
    let table = Table {
        header: header.clone(),
        rows: rows.into_iter().map(|r| r.1).collect(),
    };
    let staging = Staging::new(out)?;
    for (d, index, _) in &parts {
        for k in &index.steps {
            let name = format!("steps/{k:03}.json");
            let text = std::fs::read(d.join(&name))
                .with_context(|| format!("cannot read {}", d.join(&name).display()))?;
            staging.write(&name, &text)?;
        }
    }
    staging.write("sweep.csv", table.to_csv().as_bytes())?;
    let png = staging.path("sweep.png")?;
    sweep_png(&png, &first.title, &first.parameter, &table)?;
    let index = SweepIndex {
        format: INDEX_FORMAT.into(),
        title: first.title.clone(),
        parameter: first.parameter.clone(),
        total_steps: first.total_steps,
        shard: None,
        steps: (0..first.total_steps).collect(),
        converged,
    };
    staging.write(
        "sweep.json",
        serde_json::to_string_pretty(&index)?.as_bytes(),
    )?;
    staging.commit()?;
    println!(
        "merged {} folders, {} steps, into {}",
        parts.len(),
        first.total_steps,
        out.display()
    );
    Ok(if converged { 0 } else { 3 })
}

/// The swept parameter in words, for axis labels.
fn parameter_words(model: &Model, spec: &Sweep) -> String {
    let unit = model.length_unit.as_str();
    match spec {
        Sweep::Current { winding, .. } => {
            format!("current in {} (A)", model.windings[*winding].name)
        }
        Sweep::Move { .. } => format!("displacement ({unit})"),
        Sweep::Turn { .. } => "angle (degrees)".to_string(),
    }
}

/// The sweep table: a header and one row of text cells per step.
struct Table {
    header: Vec<String>,
    rows: Vec<Vec<String>>,
}

impl Table {
    fn of(model: &Model, spec: &Sweep, steps: &[SweepStep]) -> Table {
        let swept = match spec {
            Sweep::Current { winding, .. } => {
                format!("{}.current_a", model.windings[*winding].name)
            }
            Sweep::Move { .. } => format!("move_{}", model.length_unit.as_str()),
            Sweep::Turn { .. } => "turn_deg".to_string(),
        };
        let mut header: Vec<String> = [
            "step",
            swept.as_str(),
            "converged",
            "iterations",
            "error_estimate",
            "energy_j",
            "coenergy_j",
        ]
        .map(String::from)
        .to_vec();
        let mut rows: Vec<Vec<String>> = steps
            .iter()
            .map(|s| {
                let r = &s.results;
                vec![
                    s.index.to_string(),
                    num(s.value),
                    r.solve.converged.to_string(),
                    r.solve.iterations.to_string(),
                    r.solve.error_estimate.map(num).unwrap_or_default(),
                    num(r.energy_j),
                    num(r.coenergy_j),
                ]
            })
            .collect();
        let mut column = |name: String, cell: &dyn Fn(&SweepStep) -> String| {
            header.push(name);
            for (row, s) in rows.iter_mut().zip(steps) {
                row.push(cell(s));
            }
        };
        let Some(first) = steps.first() else {
            return Table { header, rows };
        };
        let r0 = &first.results;
        for w in r0.windings.keys() {
            column(format!("{w}.flux_linkage_wb"), &|s| {
                num(s.results.windings[w].flux_linkage_wb)
            });
            column(format!("{w}.inductance_h"), &|s| {
                s.results.windings[w]
                    .inductance_h
                    .map(num)
                    .unwrap_or_default()
            });
            column(format!("{w}.incremental_inductance_h"), &|s| {
                num(s.results.windings[w].incremental_inductance_h)
            });
        }
        for f in r0.forces.keys() {
            column(format!("{f}.force_x_n"), &|s| {
                num(s.results.forces[f].force_n[0])
            });
            column(format!("{f}.force_y_n"), &|s| {
                num(s.results.forces[f].force_n[1])
            });
        }
        for t in r0.torques.keys() {
            column(format!("{t}.torque_n_m"), &|s| {
                num(s.results.torques[t].torque_n_m)
            });
        }
        for p in r0.probes.keys() {
            column(format!("{p}.b_magnitude_t"), &|s| {
                s.results
                    .probes
                    .get(p)
                    .map(|x| num(x.b_magnitude_t))
                    .unwrap_or_default()
            });
        }
        Table { header, rows }
    }

    fn to_csv(&self) -> String {
        let mut s = self.header.join(",");
        s.push('\n');
        for row in &self.rows {
            s.push_str(&row.join(","));
            s.push('\n');
        }
        s
    }

    fn parse(text: &str) -> Result<Table, String> {
        let mut lines = text.lines();
        let header: Vec<String> = lines
            .next()
            .ok_or("the file is empty")?
            .split(',')
            .map(String::from)
            .collect();
        if header.first().map(String::as_str) != Some("step") {
            return Err("the first column must be `step`".into());
        }
        let mut rows = Vec::new();
        for (i, line) in lines.enumerate() {
            let row: Vec<String> = line.split(',').map(String::from).collect();
            if row.len() != header.len() {
                return Err(format!(
                    "line {}: {} cells, the header has {}",
                    i + 2,
                    row.len(),
                    header.len()
                ));
            }
            rows.push(row);
        }
        Ok(Table { header, rows })
    }

    /// Column `name` as numbers (empty cells are gaps).
    fn numbers(&self, col: usize) -> Vec<Option<f64>> {
        self.rows.iter().map(|r| r[col].parse().ok()).collect()
    }
}

/// `v` to `digits` significant digits, in plain notation between 0.001 and
/// 10⁶ and in scientific notation outside.
fn readable(v: f64, digits: usize) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let magnitude = v.abs().log10().floor() as i32;
    if (-3..6).contains(&magnitude) {
        let decimals = (digits as i32 - 1 - magnitude).max(0) as usize;
        let s = format!("{v:.decimals$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        format!("{v:.*e}", digits - 1)
    }
}

/// Shortest text that reads back as the same f64.
fn num(x: f64) -> String {
    format!("{x:?}")
}

fn print_table(table: &Table) {
    // Step, value and the physics columns; the bookkeeping ones are in the CSV.
    let keep: Vec<usize> = (0..table.header.len())
        .filter(|&c| {
            !matches!(
                table.header[c].as_str(),
                "converged" | "iterations" | "error_estimate"
            )
        })
        .collect();
    let short = |x: &str| -> String {
        x.parse::<f64>()
            .map(|v| readable(v, 6))
            .unwrap_or_else(|_| x.to_string())
    };
    let cells: Vec<Vec<String>> =
        std::iter::once(keep.iter().map(|&c| table.header[c].clone()).collect())
            .chain(
                table
                    .rows
                    .iter()
                    .map(|r| keep.iter().map(|&c| short(&r[c])).collect()),
            )
            .collect();
    let widths: Vec<usize> = (0..keep.len())
        .map(|c| {
            cells
                .iter()
                .map(|r| r[c].chars().count())
                .max()
                .unwrap_or(0)
        })
        .collect();
    for row in &cells {
        let line: Vec<String> = row
            .iter()
            .zip(&widths)
            .map(|(cell, &w)| format!("{cell:>w$}"))
            .collect();
        println!("  {}", line.join("  "));
    }
}

/// One picture panel: title, unit, and the (legend, column) of each series.
type Panel = (String, String, Vec<(String, usize)>);

/// One panel a quantity: energy, each winding's λ, each winding's L and
/// dλ/dI, each force, each torque, each probe's |B|.
fn sweep_png(path: &Path, title: &str, parameter: &str, table: &Table) -> Result<()> {
    ensure_font()?;
    let x: Vec<Option<f64>> = table.numbers(1);
    let mut panels: Vec<Panel> = vec![(
        "stored energy and co-energy".into(),
        "J".into(),
        vec![("energy".into(), 5), ("co-energy".into(), 6)],
    )];
    let h = &table.header;
    let find = |name: &str| h.iter().position(|c| c == name);
    for (c, name) in h.iter().enumerate() {
        if let Some(w) = name.strip_suffix(".flux_linkage_wb") {
            panels.push((
                format!("flux linkage of {w}"),
                "Wb".into(),
                vec![("λ".into(), c)],
            ));
            let mut series = Vec::new();
            if let Some(l) = find(&format!("{w}.inductance_h")) {
                series.push(("secant λ/I".to_string(), l));
            }
            if let Some(l) = find(&format!("{w}.incremental_inductance_h")) {
                series.push(("incremental dλ/dI".to_string(), l));
            }
            panels.push((format!("inductance of {w}"), "H".into(), series));
        } else if let Some(f) = name.strip_suffix(".force_x_n") {
            let mut series = vec![("Fx".to_string(), c)];
            if let Some(y) = find(&format!("{f}.force_y_n")) {
                series.push(("Fy".to_string(), y));
            }
            // Drop a component that is zero throughout (axisymmetric Fr).
            series.retain(|(_, col)| {
                table
                    .numbers(*col)
                    .iter()
                    .any(|v| v.is_some_and(|v| v != 0.0))
            });
            if !series.is_empty() {
                panels.push((format!("force on {f}"), "N".into(), series));
            }
        } else if let Some(t) = name.strip_suffix(".torque_n_m") {
            panels.push((
                format!("torque on {t}"),
                "N·m".into(),
                vec![("torque".into(), c)],
            ));
        } else if let Some(p) = name.strip_suffix(".b_magnitude_t") {
            panels.push((
                format!("|B| at probe {p}"),
                "T".into(),
                vec![("|B|".into(), c)],
            ));
        }
    }
    let cols = if panels.len() > 1 { 2 } else { 1 };
    let rows = panels.len().div_ceil(cols);
    let (w, ph) = (560 * cols as u32, 330u32);
    let root = BitMapBackend::new(path, (w, ph * rows as u32 + 50)).into_drawing_area();
    root.fill(&WHITE).map_err(plot_err)?;
    let (top, body) = root.split_vertically(50);
    top.titled(&format!("{title}: sweep"), (FONT, 24))
        .map_err(plot_err)?;
    let areas = body.split_evenly((rows, cols));
    let colours = [
        RGBColor(30, 40, 90),
        RGBColor(200, 110, 40),
        RGBColor(60, 150, 120),
    ];
    let x_lo = x.iter().flatten().copied().fold(f64::INFINITY, f64::min);
    let x_hi = x
        .iter()
        .flatten()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    let (x_lo, x_hi) = if x_hi > x_lo {
        (x_lo, x_hi)
    } else {
        (x_lo - 0.5, x_lo + 0.5)
    };
    for ((caption, unit, series), area) in panels.iter().zip(areas) {
        let data: Vec<Vec<(f64, f64)>> = series
            .iter()
            .map(|(_, col)| {
                x.iter()
                    .zip(table.numbers(*col))
                    .filter_map(|(a, b)| Some(((*a)?, b?)))
                    .collect()
            })
            .collect();
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for p in data.iter().flatten() {
            lo = lo.min(p.1);
            hi = hi.max(p.1);
        }
        if !lo.is_finite() {
            (lo, hi) = (0.0, 1.0);
        }
        let pad = 0.06 * (hi - lo).abs().max(1e-12 * hi.abs().max(1e-30));
        let mut chart = ChartBuilder::on(&area)
            .caption(caption, (FONT, 18))
            .margin(10)
            .x_label_area_size(38)
            .y_label_area_size(78)
            .build_cartesian_2d(x_lo..x_hi, (lo - pad)..(hi + pad))
            .map_err(plot_err)?;
        chart
            .configure_mesh()
            .light_line_style(RGBColor(235, 235, 235))
            .x_desc(parameter)
            .y_desc(unit.as_str())
            .y_label_formatter(&|v| readable(*v, 3))
            .label_style((FONT, 13))
            .axis_desc_style((FONT, 14))
            .draw()
            .map_err(plot_err)?;
        for (((label, _), points), colour) in series.iter().zip(&data).zip(colours.iter().cycle()) {
            let colour = *colour;
            chart
                .draw_series(LineSeries::new(
                    points.iter().copied(),
                    colour.stroke_width(2),
                ))
                .map_err(plot_err)?
                .label(label.as_str())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
                });
            chart
                .draw_series(points.iter().map(|&p| Circle::new(p, 3, colour.filled())))
                .map_err(plot_err)?;
        }
        if series.len() > 1 {
            chart
                .configure_series_labels()
                .position(SeriesLabelPosition::UpperRight)
                .background_style(WHITE.mix(0.9))
                .border_style(RGBColor(120, 120, 120))
                .label_font((FONT, 13))
                .draw()
                .map_err(plot_err)?;
        }
    }
    root.present().map_err(plot_err)?;
    Ok(())
}

fn plot_err<E: std::fmt::Debug>(e: E) -> anyhow::Error {
    anyhow!("drawing the sweep picture failed: {e:?}")
}
