//! Model files: the types of the fluxwright model format (version 1), the
//! parser and the validator.
//!
//! [`Model::from_toml_str`] reads the text of one model file and returns a
//! [`Model`] whose every value is typed, checked and defaulted, or
//! [`ModelErrors`] listing every problem found (not just the first), each
//! naming the file, the line and column where known, and the shape,
//! material, winding or key at fault.
//!
//! This module does no file IO: a `bh_curve_file` is read through a
//! caller-supplied [`FileLoader`].
//!
//! ```
//! use fluxwright_solver::model::{Model, ModelSource};
//!
//! let text = r#"
//! [materials.iron]
//! relative_permeability = 1000
//!
//! [[shape]]
//! name = "yoke"
//! rectangle = { min = [0, 0], max = [40, 10] }
//! material = "iron"
//! "#;
//! let model = Model::from_toml_str(text, &ModelSource::new("yoke.toml")).unwrap();
//! assert_eq!(model.title, "yoke");
//! assert_eq!(model.unit_to_m(), 1e-3); // millimetres by default
//! assert_eq!(model.mesh.max_size, 4.0); // a tenth of the 40 mm extent
//!
//! let err = Model::from_toml_str("[[shape]]\nrectangel = {}", &ModelSource::new("bad.toml")).unwrap_err();
//! assert!(err.to_string().contains("bad.toml:2:1: unknown key `rectangel`"));
//! ```

mod error;
mod geometry;
mod library;
mod parse;
mod read;
mod suggest;
mod summary;
mod types;
mod validate;

pub use error::{ErrorKind, ModelError, ModelErrors, ModelWarning};
pub use library::{library_material, library_materials, LibraryMaterial};
pub use summary::{MaterialRow, ModelSummary, ShapeRow, WindingRow};
pub use types::{
    AmpereLoop, BhCurve, EdgeCondition, EdgeKind, Excitation, ForceMethod, ForceRequest,
    LengthUnit, Material, MeshSettings, Outer, OuterCondition, OutlineSpec, Permeability, Probe,
    Profile, Shape, Sweep, Symmetry, TorqueRequest, Winding,
};

use fluxwright_mesher::{MeshInput, ShapeInput};

/// Where the model text came from, for messages and the default title.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ModelSource {
    /// The file name as the user gave it (shown in every message).
    pub name: String,
}

impl ModelSource {
    /// A source named `name` (usually the model file's path).
    pub fn new(name: impl Into<String>) -> ModelSource {
        ModelSource { name: name.into() }
    }

    /// The file stem: the name without folders and extension.
    pub fn stem(&self) -> &str {
        let base = self.name.rsplit(['/', '\\']).next().unwrap_or(&self.name);
        match base.rfind('.') {
            Some(i) if i > 0 => &base[..i],
            _ => base,
        }
    }
}

/// Reads files that a model names (a `bh_curve_file`), relative to the
/// model file. The CLI implements it over the file system; tests use maps.
pub trait FileLoader {
    /// The text of the file at `relative_path`, or why it cannot be read.
    fn read_to_string(&self, relative_path: &str) -> Result<String, String>;
}

/// A [`FileLoader`] that has no files: every `bh_curve_file` is an error.
#[derive(Clone, Copy, Debug, Default)]
pub struct NoFiles;

impl FileLoader for NoFiles {
    fn read_to_string(&self, _relative_path: &str) -> Result<String, String> {
        Err("no files can be read here (the model was given as text only)".into())
    }
}

impl<F: Fn(&str) -> Result<String, String>> FileLoader for F {
    fn read_to_string(&self, relative_path: &str) -> Result<String, String> {
        self(relative_path)
    }
}

/// A checked model: every value typed, validated and defaulted.
///
/// Lengths are in [`Model::length_unit`] (see [`Model::unit_to_m`]); all
/// other quantities are SI. Built by [`Model::from_toml_str`], which
/// guarantees the cross-references (material, winding and shape indices)
/// are valid.
#[derive(Clone, Debug, PartialEq)]
pub struct Model {
    /// The source's name, for messages.
    pub source: String,
    /// `[model] title`, or the file stem.
    pub title: String,
    /// Planar or axisymmetric.
    pub symmetry: Symmetry,
    /// The unit of every coordinate and size.
    pub length_unit: LengthUnit,
    /// Planar depth in model units (1 m by default); unused when
    /// axisymmetric.
    pub depth: f64,
    /// 1 (linear) or 2 (quadratic) triangles.
    pub element_order: u8,
    /// Mesh targets with defaults filled in.
    pub mesh: MeshSettings,
    /// Materials: index 0 is the built-in `air`, then the declared ones in
    /// file order.
    pub materials: Vec<Material>,
    /// Windings in file order.
    pub windings: Vec<Winding>,
    /// Shapes in drawing order, after `repeat` expansion.
    pub shapes: Vec<Shape>,
    /// The outer region and its condition.
    pub outer: Outer,
    /// Conditions on stretches of the outer edge.
    pub edges: Vec<EdgeCondition>,
    /// Point probes.
    pub probes: Vec<Probe>,
    /// Line profiles.
    pub profiles: Vec<Profile>,
    /// Ampère's-law loops.
    pub loops: Vec<AmpereLoop>,
    /// Force requests.
    pub forces: Vec<ForceRequest>,
    /// Torque requests.
    pub torques: Vec<TorqueRequest>,
    /// The sweep, if any.
    pub sweep: Option<Sweep>,
    /// Things that look wrong but do not stop a run.
    pub warnings: Vec<ModelWarning>,
}

/// Largest arc-chord sagitta, as a fraction of the radius, used for meshing:
/// 0.2 % keeps the area of a circle within about 0.13 % (common practice, no
/// source).
pub const DEFAULT_CHORD_FRACTION: f64 = 0.002;
/// Largest mesh a P1 model may ask for (P2 models: the count with the same
/// memory estimate, about a quarter).
pub const DEFAULT_MAX_TRIANGLES: usize = 20_000_000;

impl Model {
    /// Parse and check a model whose text is `text`. A `bh_curve_file` is an
    /// error here; use [`Model::from_toml_str_with_files`] to allow them.
    pub fn from_toml_str(text: &str, source: &ModelSource) -> Result<Model, ModelErrors> {
        Model::from_toml_str_with_files(text, source, &NoFiles)
    }

    /// Parse and check a model, reading any `bh_curve_file` through
    /// `loader`.
    pub fn from_toml_str_with_files(
        text: &str,
        source: &ModelSource,
        loader: &dyn FileLoader,
    ) -> Result<Model, ModelErrors> {
        validate::build(text, source, loader)
    }

    /// Metres per model length unit.
    pub fn unit_to_m(&self) -> f64 {
        self.length_unit.to_m()
    }

    /// The planar depth in metres; `None` for an axisymmetric model (whose
    /// totals are for the full turn).
    pub fn depth_m(&self) -> Option<f64> {
        match self.symmetry {
            Symmetry::Planar => Some(self.depth * self.unit_to_m()),
            Symmetry::Axisymmetric => None,
        }
    }

    /// The material called `name` (including `air`), with its index.
    pub fn material(&self, name: &str) -> Option<(usize, &Material)> {
        self.materials
            .iter()
            .enumerate()
            .find(|(_, m)| m.name == name)
    }

    /// The winding called `name`, with its index.
    pub fn winding(&self, name: &str) -> Option<(usize, &Winding)> {
        self.windings
            .iter()
            .enumerate()
            .find(|(_, w)| w.name == name)
    }

    /// Indices of the shapes a reference selects: the shape with that exact
    /// name, or every copy of a repeated shape given by its base name. Empty
    /// when nothing matches.
    pub fn shapes_named(&self, name: &str) -> Vec<usize> {
        validate::shapes_named(&self.shapes, name)
    }

    /// Indices of the shapes holding turns of winding `winding` with the
    /// given direction (+1 or −1).
    pub fn winding_side(&self, winding: usize, direction: f64) -> Vec<usize> {
        self.shapes
            .iter()
            .enumerate()
            .filter(|(_, s)| matches!(s.excitation, Excitation::Winding { winding: w, direction: d } if w == winding && d == direction))
            .map(|(i, _)| i)
            .collect()
    }

    /// The larger side of the shapes' bounding box, model units.
    pub fn extent(&self) -> f64 {
        validate::extent(&self.shapes)
    }

    /// The mesher's input: the outer outline, the shapes in drawing order
    /// with their sizes, the quality targets, all in model units, and the
    /// outer segments of periodic / anti-periodic pairs (meshed alike).
    /// `MeshInput::shapes[i]` is `self.shapes[i]`.
    pub fn mesh_input(&self) -> MeshInput {
        MeshInput {
            outer: self.outer.outline.clone(),
            shapes: self
                .shapes
                .iter()
                .map(|s| ShapeInput {
                    outline: s.outline.clone(),
                    mesh_size: s.mesh_size,
                })
                .collect(),
            max_size: self.mesh.max_size,
            min_angle_deg: self.mesh.min_angle_deg,
            growth: self.mesh.growth,
            chord_fraction: self.mesh.chord_fraction,
            max_triangles: self.mesh.max_triangles,
            matched: crate::study::matched_pairs(self),
        }
    }

    /// Plain tables of the shapes, materials and windings, for printing.
    pub fn summary(&self) -> ModelSummary {
        summary::summarize(self)
    }
}
