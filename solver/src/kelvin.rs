//! The open boundary by the Kelvin transformation.
//!
//! # The map
//!
//! The exterior |x − c| > R of the outer circle (centre c, radius R) is
//! carried by the inversion x' = c' + R²(x − c)/|x − c|² onto a disc of the
//! same radius, centred at c' = c + `offset` beside the model (the image of
//! infinity is c'). Points of the circle stay where they are (up to the
//! offset), so the image disc is meshed with its rim nodes at exactly the
//! model's rim nodes and each rim degree of freedom is tied to its partner,
//! like a periodic pair: one unknown per pair, no multipliers.
//!
//! # Planar: the plain ν0 problem
//!
//! The energy per depth ½∫ν0 |∇A|² dA is a Dirichlet integral, invariant
//! under the (anti-)conformal inversion, so with A'(x') = A(x) the image
//! carries the ordinary air problem. A decaying field has A → const at
//! infinity when the net current is zero; A' is then harmonic at c' and
//! A'(c') = 0 fixes that constant (A(∞) = 0). With a net current I the
//! potential grows like −μ0I/2π·ln|x − c| and A' has a logarithmic
//! singularity at c': fixing the node at c' to 0 makes that node the return
//! path of the current at infinity (the discrete solution there is the
//! discrete Green's function of a point sink), which gives B everywhere; the
//! additive constant of A and the (really infinite) energy per length then
//! depend on the mesh near c' and mean nothing.
//!
//! # Axisymmetric: a transformed reluctivity
//!
//! With ψ = rA_φ, B = ∇ψ × φ̂ / r, so W = ½∫ν0|B|² 2πr dA = π∫ν0 |∇ψ|²/r dA.
//! The outer edge is a half-circle centred on the axis at c = (0, z0); the
//! inversion keeps the axis and gives r = R² r'/ρ'² with ρ' = |x' − c'|.
//! The Dirichlet integral being invariant, W = π∫ν0 (ρ'²/R²) |∇'ψ|²/r' dA'.
//! Writing ψ = r'A' (A' the image's own azimuthal potential, whose curl B'
//! is the ordinary axisymmetric one, |B'| = |∇'ψ|/r'):
//!
//! W = ½∫ ν0 (ρ'/R)² |B'|² 2πr' dA',
//!
//! the standard axisymmetric form with reluctivity ν' = ν0 (ρ'/R)² (μ'r =
//! (R/ρ')²). On the rim ρ' = R and r' = r, so A' = A and the tie is plain
//! equality; the image's diameter lies on the axis, where A' = 0. The same
//! result, a permeability growing as (R/ρ')² in the transformed exterior, is
//! given by E. M. Freeman and D. A. Lowther, "An open boundary technique for
//! axisymmetric and three dimensional magnetic and electric field problems",
//! IEEE Trans. Magn. 25 (1989) 4135–4137 (cited from memory; the derivation
//! above stands on its own). The dipole far field (ψ ∝ sin²θ/ρ) becomes
//! A' ∝ sinθ near c': bounded, and the weight (ρ'/R)² makes its energy
//! finite. The element matrices of the image integrate ν' exactly at the
//! quadrature points (a rule two degrees higher than the interior's).
//!
//! # Fields outside the circle
//!
//! [`KelvinMap::to_image`] gives the image point of an exterior point and
//! [`KelvinMap::exterior_flux_density`] turns the image's B' there into the
//! physical B: from ∇A = (R²/ρ²)(I − 2ûûᵀ)∇'A' (the Jacobian of the
//! inversion, û the unit vector from c),
//! B = s (2ûûᵀ − I) B' with s = (R/ρ)² planar and (R/ρ)⁴ axisymmetric (the
//! extra r'/r = (R/ρ)² comes from B = ∇ψ×φ̂/r).

use crate::fe::quadrature::TriangleRule;
use crate::fe::{CurlBasis, ElementOrder, Symmetry, Triangle, MAX_LOCAL};
use crate::problem::{BoundarySpec, EdgeCondition};
use fluxwright_mesher::{BoundaryEdge, Mesh, MeshError, Outline, Point, Segment};

/// How far the image disc's centre sits from the outer circle's centre, in
/// radii: the two discs are then 0.5 R apart and the combined mesh is one
/// valid mesh.
pub const IMAGE_OFFSET_RADII: f64 = 2.5;

/// The inversion of the exterior of the outer circle onto the image disc.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct KelvinMap {
    /// Centre of the outer circle, mesh units.
    pub centre: [f64; 2],
    /// Radius of the outer circle (and of the image disc), mesh units.
    pub radius: f64,
    /// The image disc's centre is `centre + offset`, mesh units.
    pub offset: [f64; 2],
    /// Region id of the image's triangles.
    pub region: u32,
}

impl KelvinMap {
    /// Centre of the image disc (the image of infinity), mesh units.
    pub fn image_centre(&self) -> [f64; 2] {
        [
            self.centre[0] + self.offset[0],
            self.centre[1] + self.offset[1],
        ]
    }

    /// The image point of `p` (mesh units), or `None` inside the circle (where
    /// the model itself holds the field).
    pub fn to_image(&self, p: [f64; 2]) -> Option<[f64; 2]> {
        let u = [p[0] - self.centre[0], p[1] - self.centre[1]];
        let d2 = u[0] * u[0] + u[1] * u[1];
        if !(d2 >= self.radius * self.radius) || !d2.is_finite() {
            return None;
        }
        let k = self.radius * self.radius / d2;
        let c = self.image_centre();
        Some([c[0] + k * u[0], c[1] + k * u[1]])
    }

    /// The exterior point whose image is `q` (mesh units), or `None` at the
    /// image centre (infinity) and outside the image disc.
    pub fn from_image(&self, q: [f64; 2]) -> Option<[f64; 2]> {
        let c = self.image_centre();
        let v = [q[0] - c[0], q[1] - c[1]];
        let d2 = v[0] * v[0] + v[1] * v[1];
        if !(d2 > 0.0 && d2 <= self.radius * self.radius) {
            return None;
        }
        let k = self.radius * self.radius / d2;
        Some([self.centre[0] + k * v[0], self.centre[1] + k * v[1]])
    }

    /// The physical flux density at exterior point `p` (mesh units) from the
    /// image's flux density `b_image` at `to_image(p)` (see the module doc).
    pub fn exterior_flux_density(
        &self,
        p: [f64; 2],
        b_image: [f64; 2],
        symmetry: Symmetry,
    ) -> [f64; 2] {
        let u = [p[0] - self.centre[0], p[1] - self.centre[1]];
        let rho = u[0].hypot(u[1]);
        if !(rho > 0.0) {
            return [0.0, 0.0];
        }
        let uh = [u[0] / rho, u[1] / rho];
        let ratio2 = (self.radius / rho).powi(2);
        let s = match symmetry {
            Symmetry::Planar { .. } => ratio2,
            Symmetry::Axisymmetric => ratio2 * ratio2,
        };
        let dot = uh[0] * b_image[0] + uh[1] * b_image[1];
        [
            s * (2.0 * dot * uh[0] - b_image[0]),
            s * (2.0 * dot * uh[1] - b_image[1]),
        ]
    }

    /// ν'/ν at image point `q` (mesh units) for an axisymmetric problem:
    /// (ρ'/R)².
    pub fn axisymmetric_reluctivity_factor(&self, q: [f64; 2]) -> f64 {
        let c = self.image_centre();
        ((q[0] - c[0]).powi(2) + (q[1] - c[1]).powi(2)) / (self.radius * self.radius)
    }
}

/// Why an open boundary cannot be built.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum KelvinError {
    /// The outer outline is not a circle or a sector with inner radius 0.
    #[error("open boundary: {0}")]
    Outline(String),
    /// The model mesh has no usable nodes on the outer circle.
    #[error("open boundary: the mesh of the outer circle {0}")]
    Rim(String),
    /// The image disc could not be meshed.
    #[error("open boundary: meshing the image of the exterior failed: {0}")]
    Mesh(#[from] MeshError),
}

/// The plan of the exterior of one model: the map and the numbering of the
/// image's boundary segments. Derived from the outer outline alone, so the
/// mesh step ([`Exterior::attach`]) and the problem step agree without
/// passing anything but the mesh.
#[derive(Clone, Debug, PartialEq)]
pub struct Exterior {
    /// The inversion.
    pub map: KelvinMap,
    /// Segment indices of the outer outline that lie on the circle.
    pub arc_segments: Vec<u32>,
    /// Segment index of the image's rim (one index for all its edges).
    pub rim_segment: u32,
    /// For a sector: (model side, image side) segment pairs, the side at the
    /// start angle first. The image side continues the model side's ray to
    /// infinity and takes its condition. Empty for a full circle.
    pub sides: Vec<(u32, u32)>,
    /// Angular sweep of the arc, radians (2π for a circle).
    pub sweep: f64,
    /// Whether the problem is axisymmetric.
    pub axisymmetric: bool,
}

impl Exterior {
    /// The exterior of `outline` (a circle, or a sector with inner radius 0;
    /// axisymmetric: the half-disc from −90° to 90° centred on the axis),
    /// with image region id `region`.
    pub fn plan(
        outline: &Outline,
        axisymmetric: bool,
        region: u32,
    ) -> Result<Exterior, KelvinError> {
        let [lp] = outline.loops.as_slice() else {
            return Err(KelvinError::Outline(
                "the outer edge must be one closed loop (a circle or a sector)".into(),
            ));
        };
        let n_segments: u32 = outline.loops.iter().map(|l| l.segments.len() as u32).sum();
        let (centre, radius, sweep, arc_segments, sides) = match lp.segments.as_slice() {
            [Segment::Arc {
                center,
                radius,
                sweep,
                ..
            }] if (sweep.abs() - std::f64::consts::TAU).abs() < 1e-9 => {
                (*center, *radius, std::f64::consts::TAU, vec![0], Vec::new())
            }
            [Segment::Line { from, to: _ }, Segment::Arc {
                center,
                radius,
                sweep,
                ..
            }, Segment::Line { from: _, to }]
                if *sweep > 0.0
                    && dist(*from, *center) <= 1e-9 * radius
                    && dist(*to, *center) <= 1e-9 * radius =>
            {
                (
                    *center,
                    *radius,
                    *sweep,
                    vec![1],
                    vec![(0, n_segments + 1), (2, n_segments + 2)],
                )
            }
            _ => {
                return Err(KelvinError::Outline(
                    "the outer edge must be a circle or a sector with inner radius 0".into(),
                ))
            }
        };
        if axisymmetric {
            let on_axis = centre[0].abs() <= 1e-9 * radius;
            let half = (sweep - std::f64::consts::PI).abs() < 1e-9;
            if !(on_axis && half && sides.len() == 2) {
                return Err(KelvinError::Outline(
                    "an axisymmetric open edge must be the half-circle from −90° to 90° centred on the axis".into(),
                ));
            }
        }
        let offset = if axisymmetric {
            // Along the axis, so the image's diameter is on the axis too.
            [0.0, IMAGE_OFFSET_RADII * radius]
        } else {
            [IMAGE_OFFSET_RADII * radius, 0.0]
        };
        Ok(Exterior {
            map: KelvinMap {
                centre,
                radius,
                offset,
                region,
            },
            arc_segments,
            rim_segment: n_segments,
            sides,
            sweep,
            axisymmetric,
        })
    }

    /// The boundary conditions that realise the open edge, to append to
    /// `boundary` (which holds the model's own): the circle's segments are
    /// left natural (the tie to the image carries them), the image rim is
    /// tied, and each image side takes the condition of the model side it
    /// continues (a periodic partner becomes the partner's image side).
    pub fn conditions(&self, boundary: &BoundarySpec) -> Vec<(u32, EdgeCondition)> {
        let mut out: Vec<(u32, EdgeCondition)> = self
            .arc_segments
            .iter()
            .map(|&s| (s, EdgeCondition::FluxNormal))
            .collect();
        out.push((self.rim_segment, EdgeCondition::KelvinRim(self.map)));
        let image_of = |s: u32| self.sides.iter().find(|(m, _)| *m == s).map(|(_, i)| *i);
        for &(model_side, image_side) in &self.sides {
            let explicit = boundary.segments.iter().any(|(s, _)| *s == model_side);
            let is_partner = boundary.segments.iter().any(|(_, c)| {
                matches!(c, EdgeCondition::Periodic { partner } | EdgeCondition::AntiPeriodic { partner } if *partner == model_side)
            });
            if is_partner && !explicit {
                // Left to the pair, as on the model side.
                continue;
            }
            let c = match boundary.condition(model_side) {
                EdgeCondition::Periodic { partner } => match image_of(partner) {
                    Some(p) => EdgeCondition::Periodic { partner: p },
                    None => EdgeCondition::ZeroPotential,
                },
                EdgeCondition::AntiPeriodic { partner } => match image_of(partner) {
                    Some(p) => EdgeCondition::AntiPeriodic { partner: p },
                    None => EdgeCondition::ZeroPotential,
                },
                EdgeCondition::FluxNormal => EdgeCondition::FluxNormal,
                // A = 0 along the ray (and on the axis in axisymmetry).
                _ => EdgeCondition::ZeroPotential,
            };
            out.push((image_side, c));
        }
        out
    }

    /// Whether `mesh` already holds this image (a triangle of its region).
    pub fn is_attached(&self, mesh: &Mesh) -> bool {
        mesh.regions.contains(&self.map.region)
    }

    /// Mesh the image of the exterior and append it to `mesh` (nodes,
    /// triangles and boundary edges after the model's). Its rim nodes are the
    /// model's rim nodes moved by the offset; it grades from the rim spacing
    /// by `growth` up to `max_size`.
    pub fn attach(
        &self,
        mesh: &mut Mesh,
        growth: f64,
        max_size: f64,
        min_angle_deg: f64,
    ) -> Result<(), KelvinError> {
        let rim = self.model_rim(mesh)?;
        let d = self.map.offset;
        let points: Vec<Point> = rim
            .iter()
            .map(|&i| {
                let p = mesh.nodes[i as usize];
                [p[0] + d[0], p[1] + d[1]]
            })
            .collect();
        let centre = self.map.image_centre();
        let image = if self.sides.is_empty() {
            let mut disc = fluxwright_mesher::mesh_disc_with_fixed_rim(
                centre,
                self.map.radius,
                &points,
                growth,
                max_size,
                min_angle_deg,
            )?;
            for e in &mut disc.boundary {
                e.segment = self.rim_segment;
            }
            put_node_at(&mut disc, centre);
            disc
        } else {
            sector_mesh(
                centre,
                self.map.radius,
                &points,
                self.sweep,
                growth,
                max_size,
                [self.sides[0].1, self.rim_segment, self.sides[1].1],
            )
        };
        let base = mesh.nodes.len() as u32;
        mesh.nodes.extend_from_slice(&image.nodes);
        mesh.triangles
            .extend(image.triangles.iter().map(|t| t.map(|i| i + base)));
        mesh.regions
            .extend(std::iter::repeat_n(self.map.region, image.triangles.len()));
        mesh.boundary
            .extend(image.boundary.iter().map(|e| BoundaryEdge {
                nodes: e.nodes.map(|i| i + base),
                segment: e.segment,
            }));
        mesh.report.complete &= image.report.complete;
        if self.axisymmetric {
            // The sector's ends on the axis come out at x = R cos 90° ≈ 1e-16 R:
            // put the image's axis nodes exactly on it, where the field
            // evaluation treats r = 0 as the axis.
            let tol = 1e-9 * self.map.radius;
            for p in &mut mesh.nodes[base as usize..] {
                if p[0].abs() <= tol {
                    p[0] = 0.0;
                }
            }
        }
        Ok(())
    }

    /// The model's rim nodes in counter-clockwise order (for a sector, from
    /// the start angle to the end angle, both ends included).
    fn model_rim(&self, mesh: &mut Mesh) -> Result<Vec<u32>, KelvinError> {
        let edges: Vec<[u32; 2]> = mesh
            .boundary
            .iter()
            .filter(|e| self.arc_segments.contains(&e.segment))
            .map(|e| e.nodes)
            .collect();
        if edges.len() < 3 {
            return Err(KelvinError::Rim(format!(
                "has {} edges; at least 3 are needed",
                edges.len()
            )));
        }
        // Refinement may have split a chord of the circle at its midpoint,
        // off the arc by the sagitta: put every rim node back on the circle
        // (the inversion fixes only points of the circle itself).
        let c = self.map.centre;
        let radius = self.map.radius;
        let mut moved = Vec::new();
        for i in edges.iter().flatten().copied() {
            let p = mesh.nodes[i as usize];
            let r = dist(p, c);
            if (r - radius).abs() > 0.05 * radius {
                return Err(KelvinError::Rim(format!(
                    "has a node at {p:?}, at distance {r} from the centre instead of {radius}"
                )));
            }
            if r != radius {
                let k = radius / r;
                mesh.nodes[i as usize] = [c[0] + k * (p[0] - c[0]), c[1] + k * (p[1] - c[1])];
                moved.push(i);
            }
        }
        if !moved.is_empty() {
            let moved: std::collections::HashSet<u32> = moved.into_iter().collect();
            for t in 0..mesh.triangles.len() {
                if mesh.triangles[t].iter().any(|i| moved.contains(i))
                    && !(mesh.triangle_area(t) > 0.0)
                {
                    return Err(KelvinError::Rim(format!(
                        "cannot be put back on the circle: triangle {t} would fold over"
                    )));
                }
            }
        }
        let next: std::collections::HashMap<u32, u32> =
            edges.iter().map(|e| (e[0], e[1])).collect();
        let tos: std::collections::HashSet<u32> = edges.iter().map(|e| e[1]).collect();
        let start = if self.sides.is_empty() {
            edges[0][0]
        } else {
            let starts: Vec<u32> = edges
                .iter()
                .map(|e| e[0])
                .filter(|a| !tos.contains(a))
                .collect();
            match starts.as_slice() {
                [s] => *s,
                _ => return Err(KelvinError::Rim("is not one open chain of edges".into())),
            }
        };
        let mut chain = vec![start];
        let mut at = start;
        while let Some(&b) = next.get(&at) {
            if b == start {
                break;
            }
            chain.push(b);
            at = b;
            if chain.len() > edges.len() + 1 {
                return Err(KelvinError::Rim("does not form a simple chain".into()));
            }
        }
        let expected = if self.sides.is_empty() {
            edges.len()
        } else {
            edges.len() + 1
        };
        if chain.len() != expected {
            return Err(KelvinError::Rim(format!(
                "breaks into pieces ({} of {} nodes in one chain)",
                chain.len(),
                expected
            )));
        }
        Ok(chain)
    }
}

fn dist(a: [f64; 2], b: [f64; 2]) -> f64 {
    (a[0] - b[0]).hypot(a[1] - b[1])
}

fn signed_area(a: Point, b: Point, c: Point) -> f64 {
    0.5 * ((b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]))
}

fn min_angle_deg(a: Point, b: Point, c: Point) -> f64 {
    let ang = |p: Point, q: Point, r: Point| {
        let u = [q[0] - p[0], q[1] - p[1]];
        let v = [r[0] - p[0], r[1] - p[1]];
        (u[0] * v[1] - u[1] * v[0])
            .abs()
            .atan2(u[0] * v[0] + u[1] * v[1])
    };
    ang(a, b, c)
        .min(ang(b, c, a))
        .min(ang(c, a, b))
        .to_degrees()
}

/// Make sure a node sits exactly at `p` (the image of infinity, where the
/// planar potential is fixed): move the nearest interior node there if that
/// keeps every triangle around it reasonable, else split the triangle
/// holding `p`.
fn put_node_at(mesh: &mut Mesh, p: Point) {
    let on_boundary: std::collections::HashSet<u32> =
        mesh.boundary.iter().flat_map(|e| e.nodes).collect();
    let nearest = (0..mesh.nodes.len() as u32)
        .filter(|i| !on_boundary.contains(i))
        .min_by(|&a, &b| {
            dist(mesh.nodes[a as usize], p).total_cmp(&dist(mesh.nodes[b as usize], p))
        });
    if let Some(n) = nearest {
        let old = mesh.nodes[n as usize];
        mesh.nodes[n as usize] = p;
        let ok = mesh.triangles.iter().filter(|t| t.contains(&n)).all(|t| {
            let [a, b, c] = t.map(|i| mesh.nodes[i as usize]);
            signed_area(a, b, c) > 0.0 && min_angle_deg(a, b, c) >= 12.0
        });
        if ok {
            return;
        }
        mesh.nodes[n as usize] = old;
    }
    // Split the triangle holding p (p is strictly inside one triangle or on
    // an edge; on an edge both neighbours are split in two).
    let holds = |nodes: &[Point], t: &[u32; 3]| {
        let [a, b, c] = t.map(|i| nodes[i as usize]);
        [
            signed_area(p, b, c),
            signed_area(a, p, c),
            signed_area(a, b, p),
        ]
    };
    let Some(t) = (0..mesh.triangles.len()).find(|&t| {
        holds(&mesh.nodes, &mesh.triangles[t])
            .iter()
            .all(|&s| s >= 0.0)
    }) else {
        return;
    };
    let tri = mesh.triangles[t];
    let s = holds(&mesh.nodes, &tri);
    let new = mesh.nodes.len() as u32;
    mesh.nodes.push(p);
    let region = mesh.regions[t];
    let zero = s
        .iter()
        .position(|&x| x <= 1e-14 * mesh.triangle_area(t).abs());
    match zero {
        None => {
            let [a, b, c] = tri;
            mesh.triangles[t] = [a, b, new];
            mesh.triangles.push([b, c, new]);
            mesh.triangles.push([c, a, new]);
            mesh.regions.extend([region, region]);
        }
        Some(k) => {
            // p on the edge opposite corner k.
            let (a, b, c) = (tri[(k + 1) % 3], tri[(k + 2) % 3], tri[k]);
            mesh.triangles[t] = [a, new, c];
            mesh.triangles.push([new, b, c]);
            mesh.regions.push(region);
            if let Some(u) = (0..mesh.triangles.len()).find(|&u| {
                u != t && {
                    let q = mesh.triangles[u];
                    (0..3).any(|j| q[j] == b && q[(j + 1) % 3] == a)
                }
            }) {
                let q = mesh.triangles[u];
                let j = (0..3).find(|&j| q[j] == b).unwrap_or(0);
                let d = q[(j + 2) % 3];
                mesh.triangles[u] = [b, new, d];
                mesh.triangles.push([new, a, d]);
                mesh.regions.push(mesh.regions[u]);
            }
        }
    }
}

/// A graded mesh of the sector of centre `c`, radius `radius` and sweep
/// `sweep` whose arc nodes are `rim` (counter-clockwise, both ends
/// included): rings of evenly spaced nodes, each ring's spacing `growth`
/// times the last (at most `max_size`), zipped to their neighbours, and a
/// fan to the apex. Boundary segments: `segments` = [start side, arc, end
/// side]; the regions are [`Mesh::OUTER_REGION`] (the caller sets them).
fn sector_mesh(
    c: Point,
    radius: f64,
    rim: &[Point],
    sweep: f64,
    growth: f64,
    max_size: f64,
    segments: [u32; 3],
) -> Mesh {
    let n = rim.len() - 1;
    let e0 = [(rim[0][0] - c[0]) / radius, (rim[0][1] - c[1]) / radius];
    let e1 = [(rim[n][0] - c[0]) / radius, (rim[n][1] - c[1]) / radius];
    let alpha0 = e0[1].atan2(e0[0]);
    let min_segments = (sweep / (std::f64::consts::PI / 3.0)).ceil().max(1.0) as usize;
    let mut nodes: Vec<Point> = rim.to_vec();
    let mut rings: Vec<Vec<u32>> = vec![(0..=n as u32).collect()];
    let mut h = radius * sweep / n as f64;
    let mut rho = radius;
    loop {
        let h_next = (h * growth).min(max_size).max(h);
        let next = rho - 0.866 * 0.5 * (h + h_next);
        if next < 0.75 * h_next {
            break;
        }
        let m = ((sweep * next / h_next).ceil() as usize).max(min_segments);
        let mut ring = Vec::with_capacity(m + 1);
        for j in 0..=m {
            let dir = if j == 0 {
                e0
            } else if j == m {
                e1
            } else {
                let a = alpha0 + sweep * j as f64 / m as f64;
                [a.cos(), a.sin()]
            };
            ring.push(nodes.len() as u32);
            nodes.push([c[0] + next * dir[0], c[1] + next * dir[1]]);
        }
        rings.push(ring);
        rho = next;
        h = h_next;
    }
    let apex = nodes.len() as u32;
    nodes.push(c);
    let angle_of = |i: u32| {
        let p = nodes[i as usize];
        let a = (p[1] - c[1]).atan2(p[0] - c[0]) - alpha0;
        // Measured from the start ray, in [0, sweep] up to rounding.
        let a = a.rem_euclid(std::f64::consts::TAU);
        if a > 0.5 * (sweep + std::f64::consts::TAU) {
            a - std::f64::consts::TAU
        } else {
            a
        }
    };
    let mut triangles = Vec::new();
    for w in rings.windows(2) {
        let (outer, inner) = (&w[0], &w[1]);
        // Angles by position in the ring: the ends are exactly the rays.
        let ao: Vec<f64> = outer
            .iter()
            .enumerate()
            .map(|(k, &i)| {
                if k == 0 {
                    0.0
                } else if k + 1 == outer.len() {
                    sweep
                } else {
                    angle_of(i)
                }
            })
            .collect();
        let ai: Vec<f64> = (0..inner.len())
            .map(|k| sweep * k as f64 / (inner.len() - 1) as f64)
            .collect();
        let (mut i, mut j) = (0, 0);
        while i + 1 < outer.len() || j + 1 < inner.len() {
            let advance_outer = if j + 1 == inner.len() {
                true
            } else if i + 1 == outer.len() {
                false
            } else {
                ao[i] + ao[i + 1] < ai[j] + ai[j + 1]
            };
            if advance_outer {
                triangles.push([outer[i], outer[i + 1], inner[j]]);
                i += 1;
            } else {
                triangles.push([outer[i], inner[j + 1], inner[j]]);
                j += 1;
            }
        }
    }
    let last = &rings[rings.len() - 1];
    for k in 0..last.len() - 1 {
        triangles.push([apex, last[k], last[k + 1]]);
    }
    let mut boundary = Vec::new();
    let [start_side, arc, end_side] = segments;
    let firsts: Vec<u32> = rings.iter().map(|r| r[0]).collect();
    let lasts: Vec<u32> = rings.iter().map(|r| r[r.len() - 1]).collect();
    // Start side, outwards from the apex (the sector lies to its left).
    let mut up = vec![apex];
    up.extend(firsts.iter().rev());
    for w in up.windows(2) {
        boundary.push(BoundaryEdge {
            nodes: [w[0], w[1]],
            segment: start_side,
        });
    }
    for k in 0..n as u32 {
        boundary.push(BoundaryEdge {
            nodes: [k, k + 1],
            segment: arc,
        });
    }
    let mut down: Vec<u32> = lasts.clone();
    down.push(apex);
    for w in down.windows(2) {
        boundary.push(BoundaryEdge {
            nodes: [w[0], w[1]],
            segment: end_side,
        });
    }
    let n_tri = triangles.len();
    Mesh {
        nodes,
        triangles,
        regions: vec![Mesh::OUTER_REGION; n_tri],
        boundary,
        report: fluxwright_mesher::RefinementReport {
            complete: true,
            ..Default::default()
        },
    }
}

/// The quadrature rule for the image's elements: axisymmetric integrands
/// carry the extra (ρ'/R)², two degrees more than `base`.
pub(crate) fn image_rule(base: &TriangleRule, symmetry: Symmetry) -> TriangleRule {
    match symmetry {
        Symmetry::Planar { .. } => base.clone(),
        Symmetry::Axisymmetric => crate::fe::quadrature::dunavant(base.degree + 2),
    }
}

/// Residual and packed upper tangent of one image element: linear, no
/// source, reluctivity `nu` times (ρ'/R)² in axisymmetry (`centre_m`,
/// `radius_m`: the image disc in metres).
#[allow(clippy::too_many_arguments)]
pub(crate) fn element_system(
    tri: &Triangle,
    order: ElementOrder,
    symmetry: Symmetry,
    rule: &TriangleRule,
    nu: f64,
    centre_m: [f64; 2],
    radius_m: f64,
    u: &[f64],
    residual: &mut [f64],
    tangent: Option<&mut [f64]>,
) {
    let n = order.local_dofs();
    let mut k = [0.0; MAX_LOCAL * MAX_LOCAL];
    for (l, w) in rule.points.iter().zip(&rule.weights) {
        let basis = CurlBasis::at(tri, order, symmetry, *l);
        let factor = match symmetry {
            Symmetry::Planar { .. } => 1.0,
            Symmetry::Axisymmetric => {
                let x = basis.x;
                ((x[0] - centre_m[0]).powi(2) + (x[1] - centre_m[1]).powi(2))
                    / (radius_m * radius_m)
            }
        };
        let weight = w * tri.area * basis.volume_factor * nu * factor;
        for a in 0..n {
            let ca = basis.curl[a];
            for b in a..n {
                let cb = basis.curl[b];
                k[a * MAX_LOCAL + b] += weight * (ca[0] * cb[0] + ca[1] * cb[1]);
            }
        }
    }
    for a in 0..n {
        residual[a] = (0..n)
            .map(|b| k[a.min(b) * MAX_LOCAL + a.max(b)] * u[b])
            .sum();
    }
    if let Some(t) = tangent {
        let mut idx = 0;
        for a in 0..n {
            for b in a..n {
                t[idx] = k[a * MAX_LOCAL + b];
                idx += 1;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn map() -> KelvinMap {
        KelvinMap {
            centre: [1.0, -2.0],
            radius: 3.0,
            offset: [7.5, 0.0],
            region: 4,
        }
    }

    #[test]
    fn inversion_round_trips_and_fixes_the_circle() {
        let m = map();
        let p = [6.0, 1.5];
        let q = m.to_image(p).expect("outside");
        let back = m.from_image(q).expect("inside the image");
        assert!(dist(back, p) < 1e-12);
        // |x − c|·|x' − c'| = R² (definition of the inversion).
        assert!((dist(p, m.centre) * dist(q, m.image_centre()) - 9.0).abs() < 1e-12);
        let on = [1.0, 1.0];
        let q = m.to_image(on).expect("on the circle");
        assert!(dist(q, [on[0] + 7.5, on[1]]) < 1e-12);
        assert!(m.to_image([1.5, -2.0]).is_none());
    }

    #[test]
    fn sector_mesh_is_valid_and_keeps_the_rim() {
        let c = [0.0, 5.0];
        let rim: Vec<Point> = (0..=40)
            .map(|k| {
                let a = -std::f64::consts::FRAC_PI_2 + std::f64::consts::PI * k as f64 / 40.0;
                [2.0 * a.cos(), 5.0 + 2.0 * a.sin()]
            })
            .collect();
        let m = sector_mesh(c, 2.0, &rim, std::f64::consts::PI, 1.3, 0.5, [10, 11, 12]);
        m.check().expect("valid mesh");
        assert_eq!(&m.nodes[..41], rim.as_slice());
        let area: f64 = (0..m.triangles.len()).map(|t| m.triangle_area(t)).sum();
        // The triangles tile the inscribed half 40-gon: 40 isosceles
        // triangles of apex angle π/40, area ½R² sin(π/40) each (elementary
        // geometry).
        let polygon = 40.0 * 0.5 * 4.0 * (std::f64::consts::PI / 40.0).sin();
        assert!(
            (area - polygon).abs() < 1e-12 * polygon,
            "{area} vs {polygon}"
        );
        assert!(m.quality().min_angle_deg > 20.0, "{:?}", m.quality());
    }
}
