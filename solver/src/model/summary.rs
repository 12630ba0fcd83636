//! Plain tables describing a model, for the CLI to print.

use super::types::{Excitation, Permeability};
use super::Model;

/// One row per shape.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct ShapeRow {
    /// Shape name.
    pub name: String,
    /// `rectangle`, `circle`, `polygon` or `sector`.
    pub outline: &'static str,
    /// Material name.
    pub material: String,
    /// What drives it: `winding NAME (+1)`, `12.5 A`, or empty.
    pub source: String,
    /// Area of the outline in `length_unit`² (before later shapes cover it).
    pub area: f64,
}

/// One row per material.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct MaterialRow {
    /// Material name.
    pub name: String,
    /// e.g. `linear μr = 1000`, `B-H curve, 12 points`, `magnet Br = 1.2 T, μr = 1.05`.
    pub kind: String,
    /// Stacking factor.
    pub stacking_factor: f64,
    /// Names of the shapes made of it.
    pub shapes: Vec<String>,
}

/// One row per winding.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct WindingRow {
    /// Winding name.
    pub name: String,
    /// Series turns.
    pub turns: f64,
    /// Current per turn, A.
    pub current_a: f64,
    /// Names of the shapes holding its turns, with `(+1)` or `(-1)`.
    pub shapes: Vec<String>,
}

/// The model at a glance.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct ModelSummary {
    /// Title.
    pub title: String,
    /// `planar` or `axisymmetric`.
    pub symmetry: &'static str,
    /// Length unit name.
    pub length_unit: &'static str,
    /// Planar depth in metres (`None` when axisymmetric).
    pub depth_m: Option<f64>,
    /// Element order.
    pub element_order: u8,
    /// The outer outline kind and condition, e.g. `circle, open`.
    pub outer: String,
    /// Shapes in drawing order.
    pub shapes: Vec<ShapeRow>,
    /// Materials (air first).
    pub materials: Vec<MaterialRow>,
    /// Windings.
    pub windings: Vec<WindingRow>,
}

fn sign(d: f64) -> &'static str {
    if d < 0.0 {
        "-1"
    } else {
        "+1"
    }
}

pub(crate) fn summarize(model: &Model) -> ModelSummary {
    let material_name = |i: usize| {
        model
            .materials
            .get(i)
            .map(|m| m.name.clone())
            .unwrap_or_default()
    };
    let shapes = model
        .shapes
        .iter()
        .map(|s| ShapeRow {
            name: s.name.clone(),
            outline: s.spec.kind(),
            material: material_name(s.material),
            source: match s.excitation {
                Excitation::None => String::new(),
                Excitation::Winding { winding, direction } => format!(
                    "winding {} ({})",
                    model
                        .windings
                        .get(winding)
                        .map(|w| w.name.as_str())
                        .unwrap_or("?"),
                    sign(direction)
                ),
                Excitation::Current { amps } => format!("{amps} A"),
            },
            area: s.outline.area(),
        })
        .collect();
    let materials = model
        .materials
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let mut kind = match (&m.permeability, m.remanence_t) {
                (Permeability::Linear { relative }, Some(br)) => {
                    format!("magnet Br = {br} T, μr = {relative}")
                }
                (Permeability::Linear { relative }, None) => format!("linear μr = {relative}"),
                (Permeability::Curve(c), _) => format!("B-H curve, {} points", c.h_a_per_m.len()),
            };
            if let Some(lib) = &m.from_library {
                kind.push_str(&format!(" (from library `{lib}`)"));
            }
            MaterialRow {
                name: m.name.clone(),
                kind,
                stacking_factor: m.stacking_factor,
                shapes: model
                    .shapes
                    .iter()
                    .filter(|s| s.material == i)
                    .map(|s| s.name.clone())
                    .collect(),
            }
        })
        .collect();
    let windings = model
        .windings
        .iter()
        .enumerate()
        .map(|(i, w)| WindingRow {
            name: w.name.clone(),
            turns: w.turns,
            current_a: w.current_a,
            shapes: model
                .shapes
                .iter()
                .filter_map(|s| match s.excitation {
                    Excitation::Winding { winding, direction } if winding == i => {
                        Some(format!("{} ({})", s.name, sign(direction)))
                    }
                    _ => None,
                })
                .collect(),
        })
        .collect();
    let condition = match model.outer.condition {
        super::OuterCondition::Open => "open",
        super::OuterCondition::ZeroPotential => "zero-potential",
        super::OuterCondition::FluxNormal => "flux-normal",
        super::OuterCondition::UniformField { .. } => "uniform-field",
    };
    ModelSummary {
        title: model.title.clone(),
        symmetry: model.symmetry.as_str(),
        length_unit: model.length_unit.as_str(),
        depth_m: model.depth_m(),
        element_order: model.element_order,
        outer: format!(
            "{}{}, {condition}",
            model.outer.spec.kind(),
            if model.outer.is_default {
                " (default)"
            } else {
                ""
            }
        ),
        shapes,
        materials,
        windings,
    }
}
