//! The typed, validated and defaulted contents of a model file.
//!
//! Coordinates and sizes stay in the model's `length_unit` (the mesher is
//! unit-free); [`crate::model::Model::unit_to_m`] converts. Everything else
//! is SI.

use fluxwright_mesher::{Outline, Point};

/// Planar (x, y; current along z) or axisymmetric (x = r ≥ 0, y = z).
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Symmetry {
    /// x, y with current along z; totals are for the model's depth.
    Planar,
    /// x = r ≥ 0, y = z, current along φ; totals are for the full turn.
    Axisymmetric,
}

impl Symmetry {
    /// The name used in model and results files.
    pub fn as_str(self) -> &'static str {
        match self {
            Symmetry::Planar => "planar",
            Symmetry::Axisymmetric => "axisymmetric",
        }
    }
}

/// The unit of every coordinate and size in the model.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
pub enum LengthUnit {
    /// metre
    #[serde(rename = "m")]
    Metre,
    /// centimetre
    #[serde(rename = "cm")]
    Centimetre,
    /// millimetre
    #[serde(rename = "mm")]
    Millimetre,
    /// micrometre
    #[serde(rename = "um")]
    Micrometre,
    /// inch (25.4 mm exactly)
    #[serde(rename = "in")]
    Inch,
}

impl LengthUnit {
    /// All units with their model-file names.
    pub const ALL: [(LengthUnit, &'static str); 5] = [
        (LengthUnit::Metre, "m"),
        (LengthUnit::Centimetre, "cm"),
        (LengthUnit::Millimetre, "mm"),
        (LengthUnit::Micrometre, "um"),
        (LengthUnit::Inch, "in"),
    ];

    /// Metres per unit.
    pub fn to_m(self) -> f64 {
        match self {
            LengthUnit::Metre => 1.0,
            LengthUnit::Centimetre => 1e-2,
            LengthUnit::Millimetre => 1e-3,
            LengthUnit::Micrometre => 1e-6,
            // The international inch, defined as exactly 25.4 mm (1959).
            LengthUnit::Inch => 0.0254,
        }
    }

    /// The name used in model files.
    pub fn as_str(self) -> &'static str {
        LengthUnit::ALL
            .iter()
            .find(|(u, _)| *u == self)
            .map(|(_, s)| *s)
            .unwrap_or("m")
    }
}

/// Mesh size and quality targets, all defaults filled in.
#[derive(Clone, Debug, PartialEq)]
pub struct MeshSettings {
    /// Largest element edge anywhere, model units.
    pub max_size: f64,
    /// Smallest triangle angle aimed for, degrees, in (0, 34].
    pub min_angle_deg: f64,
    /// Size growth ratio per element away from small features, > 1.
    pub growth: f64,
    /// Rounds of error-driven refinement after the first solve.
    pub adapt: u32,
    /// Stop adapting below this estimated relative energy error.
    pub target_error: f64,
    /// Largest arc-chord sagitta as a fraction of the radius.
    pub chord_fraction: f64,
    /// Refuse meshes estimated to need more triangles than this.
    pub max_triangles: usize,
}

/// An outline as written in the model, before `translate`, `rotate` and
/// `repeat`.
#[derive(Clone, Debug, PartialEq)]
pub enum OutlineSpec {
    /// `rectangle = { min, max }`
    Rectangle {
        /// Lower-left corner.
        min: Point,
        /// Upper-right corner.
        max: Point,
    },
    /// `circle = { center, radius }`
    Circle {
        /// Centre.
        center: Point,
        /// Radius > 0.
        radius: f64,
    },
    /// `polygon = [[x, y], ...]`, closed implicitly.
    Polygon(Vec<Point>),
    /// `sector = { center, inner_radius, outer_radius, start_angle, end_angle }`
    Sector {
        /// Centre.
        center: Point,
        /// Inner radius ≥ 0 (default 0).
        inner_radius: f64,
        /// Outer radius > inner radius.
        outer_radius: f64,
        /// Start angle from +x, degrees (default 0).
        start_angle_deg: f64,
        /// End angle, degrees, counter-clockwise from the start (default 360).
        end_angle_deg: f64,
    },
}

impl OutlineSpec {
    /// The outline key: `rectangle`, `circle`, `polygon` or `sector`.
    pub fn kind(&self) -> &'static str {
        match self {
            OutlineSpec::Rectangle { .. } => "rectangle",
            OutlineSpec::Circle { .. } => "circle",
            OutlineSpec::Polygon(_) => "polygon",
            OutlineSpec::Sector { .. } => "sector",
        }
    }

    /// The mesher's outline (no transforms).
    pub fn to_outline(&self) -> Result<Outline, fluxwright_mesher::GeometryError> {
        match self {
            OutlineSpec::Rectangle { min, max } => Outline::rectangle(*min, *max),
            OutlineSpec::Circle { center, radius } => Outline::circle(*center, *radius),
            OutlineSpec::Polygon(points) => Outline::polygon(points),
            OutlineSpec::Sector {
                center,
                inner_radius,
                outer_radius,
                start_angle_deg,
                end_angle_deg,
            } => Outline::sector(
                *center,
                *inner_radius,
                *outer_radius,
                *start_angle_deg,
                *end_angle_deg,
            ),
        }
    }
}

/// A B-H curve: H in A/m, B in T, starting at (0, 0), strictly increasing in
/// both, at least two points. Past the last point the curve continues with
/// slope μ0.
#[derive(Clone, Debug, PartialEq)]
pub struct BhCurve {
    /// Field strength H, A/m.
    pub h_a_per_m: Vec<f64>,
    /// Flux density B, T.
    pub b_t: Vec<f64>,
}

/// How a material's B depends on H.
#[derive(Clone, Debug, PartialEq)]
pub enum Permeability {
    /// Linear: B = μ0 μr H (for a magnet, μr is the recoil permeability).
    Linear {
        /// Relative permeability μr ≥ 1.
        relative: f64,
    },
    /// A nonlinear B-H curve.
    Curve(BhCurve),
}

/// A material, after `from_library` and the overrides are applied.
#[derive(Clone, Debug, PartialEq)]
pub struct Material {
    /// The name (`air` is built in).
    pub name: String,
    /// Linear μr or a B-H curve.
    pub permeability: Permeability,
    /// Laminated fill fraction, 0 < f ≤ 1 (1 for solid material).
    pub stacking_factor: f64,
    /// Permanent-magnet remanence Br in T; `None` for a non-magnet.
    pub remanence_t: Option<f64>,
    /// The library entry this material started from, if any.
    pub from_library: Option<String>,
    /// Line of the `[materials.NAME]` header (`None` for built-in `air`).
    pub line: Option<usize>,
}

/// A winding: series turns and the current per turn.
#[derive(Clone, Debug, PartialEq)]
pub struct Winding {
    /// The name.
    pub name: String,
    /// Series turns of the whole winding; each go and return side carries
    /// all of them.
    pub turns: f64,
    /// Current per turn, A (0 when not given).
    pub current_a: f64,
    /// Line of the `[windings.NAME]` header.
    pub line: Option<usize>,
}

/// What drives current through a shape.
#[derive(Clone, Debug, PartialEq)]
pub enum Excitation {
    /// No source current.
    None,
    /// The shape holds turns of a winding. Its current density is
    /// `direction × turns × current ÷ (total area of that winding's shapes
    /// with the same direction)`.
    Winding {
        /// Index into [`crate::model::Model::windings`].
        winding: usize,
        /// +1 (along +z, or +φ) or −1.
        direction: f64,
    },
    /// A solid conductor carrying its own total current.
    Current {
        /// Signed total current, A: the `current` key times `direction`.
        amps: f64,
    },
}

/// One shape after `repeat` expansion, with its transforms applied.
#[derive(Clone, Debug, PartialEq)]
pub struct Shape {
    /// Unique name; a repeated shape's copies are `NAME[0]`, `NAME[1]`, ...
    /// (copy 0 is the one drawn, unrotated by the repeat).
    pub name: String,
    /// The name before expansion (`NAME` for all copies); references to it
    /// select every copy.
    pub base_name: String,
    /// Copy index within a `repeat`, if any.
    pub copy: Option<usize>,
    /// The outline as written (before transforms).
    pub spec: OutlineSpec,
    /// The outline in place: translated, rotated, then rotated by the repeat.
    pub outline: Outline,
    /// Index into [`crate::model::Model::materials`].
    pub material: usize,
    /// Largest element edge inside the shape, model units.
    pub mesh_size: f64,
    /// The source current.
    pub excitation: Excitation,
    /// Magnetization direction from +x, degrees, in place: the given angle
    /// plus `rotate`, plus the repeat angle of the copy, plus 180° on odd
    /// copies of an `alternate` repeat. Used only for magnets.
    pub magnetization_angle_deg: f64,
    /// 1-based index of the `[[shape]]` table this came from.
    pub table_index: usize,
    /// Line of the `[[shape]]` table.
    pub line: Option<usize>,
}

/// The condition on the outer edge.
#[derive(Clone, Debug, PartialEq)]
pub enum OuterCondition {
    /// The field decays to zero at infinity (Kelvin-transformed exterior).
    Open,
    /// A = 0: flux runs along the edge.
    ZeroPotential,
    /// Flux crosses the edge at right angles (natural condition).
    FluxNormal,
    /// An applied uniform field.
    UniformField {
        /// [Bx, By], T.
        field_t: [f64; 2],
    },
}

/// The edge of the modelled region.
///
/// Axisymmetric models lie in x = r ≥ 0; where the region touches the axis
/// (the straight edge of the default half-disc), A = 0 holds there by
/// symmetry whatever `condition` says, and the solver must impose it.
#[derive(Clone, Debug, PartialEq)]
pub struct Outer {
    /// The outline as written, or the default one.
    pub spec: OutlineSpec,
    /// The region.
    pub outline: Outline,
    /// Whether the default outline was used (no `[outer] shape`).
    pub is_default: bool,
    /// The condition on the edge (except where an `[[edge]]` overrides it).
    pub condition: OuterCondition,
}

/// The condition on a stretch of the outer edge.
#[derive(Clone, Debug, PartialEq)]
pub enum EdgeKind {
    /// A = 0.
    ZeroPotential,
    /// Natural condition.
    FluxNormal,
    /// A equal on this stretch and its partner.
    Periodic {
        /// The partner stretch `[from, to]`.
        partner: [Point; 2],
    },
    /// A opposite on this stretch and its partner.
    AntiPeriodic {
        /// The partner stretch `[from, to]`.
        partner: [Point; 2],
    },
}

/// An `[[edge]]`: a condition on a straight stretch of the outer edge.
#[derive(Clone, Debug, PartialEq)]
pub struct EdgeCondition {
    /// Start of the stretch.
    pub from: Point,
    /// End of the stretch.
    pub to: Point,
    /// The condition.
    pub kind: EdgeKind,
}

/// A `[[probe]]`: B and H at a point.
#[derive(Clone, Debug, PartialEq)]
pub struct Probe {
    /// Results key.
    pub name: String,
    /// The point, model units.
    pub at: Point,
}

/// A `[[profile]]`: B along a line.
#[derive(Clone, Debug, PartialEq)]
pub struct Profile {
    /// Results key (and CSV file stem).
    pub name: String,
    /// Start point.
    pub from: Point,
    /// End point.
    pub to: Point,
    /// Number of sample points, ≥ 2 (default 201).
    pub samples: usize,
}

/// A `[[loop]]`: Ampère's-law check around an outline.
#[derive(Clone, Debug, PartialEq)]
pub struct AmpereLoop {
    /// Results key.
    pub name: String,
    /// The outline as written.
    pub spec: OutlineSpec,
    /// The outline.
    pub outline: Outline,
}

/// How a force is computed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ForceMethod {
    /// Weighted-band Maxwell stress tensor (default).
    StressTensor,
    /// Virtual work (energy change under a small displacement).
    VirtualWork,
}

/// A `[[force]]` request.
#[derive(Clone, Debug, PartialEq)]
pub struct ForceRequest {
    /// Results key.
    pub name: String,
    /// Indices into [`crate::model::Model::shapes`] (a repeated shape's base
    /// name selects all its copies).
    pub shapes: Vec<usize>,
    /// The method.
    pub method: ForceMethod,
}

/// A `[[torque]]` request.
#[derive(Clone, Debug, PartialEq)]
pub struct TorqueRequest {
    /// Results key.
    pub name: String,
    /// Indices into [`crate::model::Model::shapes`].
    pub shapes: Vec<usize>,
    /// Centre of the torque, model units (default the origin).
    pub center: Point,
}

/// The swept parameter. `steps` is the number of intervals: a sweep solves
/// `steps + 1` points from `from` to `to` inclusive (see
/// [`Sweep::values`]).
#[derive(Clone, Debug, PartialEq)]
pub enum Sweep {
    /// The current per turn of one winding, A.
    Current {
        /// Index into [`crate::model::Model::windings`].
        winding: usize,
        /// First value, A.
        from: f64,
        /// Last value, A.
        to: f64,
        /// Intervals, ≥ 1.
        steps: usize,
    },
    /// A translation of some shapes along a direction, model units.
    Move {
        /// Indices into [`crate::model::Model::shapes`].
        shapes: Vec<usize>,
        /// Unit vector of the direction (`along`, normalised).
        along: [f64; 2],
        /// First distance.
        from: f64,
        /// Last distance.
        to: f64,
        /// Intervals, ≥ 1.
        steps: usize,
    },
    /// A rotation of some shapes about a centre, degrees.
    Turn {
        /// Indices into [`crate::model::Model::shapes`].
        shapes: Vec<usize>,
        /// Centre of rotation.
        center: Point,
        /// First angle, degrees.
        from: f64,
        /// Last angle, degrees.
        to: f64,
        /// Intervals, ≥ 1.
        steps: usize,
    },
}

impl Sweep {
    /// The swept values, `steps + 1` of them from `from` to `to`.
    pub fn values(&self) -> Vec<f64> {
        let (from, to, steps) = match *self {
            Sweep::Current {
                from, to, steps, ..
            }
            | Sweep::Move {
                from, to, steps, ..
            }
            | Sweep::Turn {
                from, to, steps, ..
            } => (from, to, steps.max(1)),
        };
        (0..=steps)
            .map(|k| from + (to - from) * k as f64 / steps as f64)
            .collect()
    }
}
