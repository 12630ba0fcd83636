//! Degrees of freedom, the sparsity pattern and in-place assembly.
//!
//! The pattern of the reduced system (free unknowns only, after fixed values
//! and periodic partners are eliminated) is built once per mesh, together
//! with a scatter table that sends each entry of each element matrix to its
//! slot in the value array. Every Newton step then recomputes the element
//! matrices (in parallel, in chunks) and adds them into the slots: no
//! triplet list is rebuilt and no sparse matrix is reallocated.

use crate::boundary::{Constraints, DofTarget};
use crate::fe::quadrature::TriangleRule;
use crate::fe::{self, packed_len, ElementLoad, ElementOrder, Triangle, MAX_LOCAL};
use crate::problem::{Problem, SolveError};
use fluxwright_mesher::Mesh;
use rayon::prelude::*;

/// Numbering of the degrees of freedom: mesh nodes first, then (P2) one
/// mid-edge node per edge, numbered `nodes.len() + edge`.
#[derive(Clone, Debug, PartialEq)]
pub struct DofMap {
    /// Element order.
    pub order: ElementOrder,
    /// Number of dofs.
    pub n_dofs: usize,
    /// Number of mesh nodes (the first dofs).
    pub n_nodes: usize,
    /// Local-to-global dofs, `order.local_dofs()` per triangle.
    pub element_dofs: Vec<u32>,
    /// Position of every dof, m.
    pub coords: Vec<[f64; 2]>,
    /// Sorted edges (P2 only), for mid-edge lookups.
    edges: Vec<[u32; 2]>,
}

impl DofMap {
    /// Number the dofs of `mesh` for elements of `order`, with coordinates
    /// scaled by `length_scale_m`.
    pub fn new(mesh: &Mesh, order: ElementOrder, length_scale_m: f64) -> DofMap {
        let s = length_scale_m;
        let n_nodes = mesh.nodes.len();
        let mut coords: Vec<[f64; 2]> = mesh.nodes.iter().map(|p| [p[0] * s, p[1] * s]).collect();
        match order {
            ElementOrder::P1 => {
                let element_dofs = mesh.triangles.iter().flatten().copied().collect();
                DofMap {
                    order,
                    n_dofs: n_nodes,
                    n_nodes,
                    element_dofs,
                    coords,
                    edges: Vec::new(),
                }
            }
            ElementOrder::P2 => {
                let topo = mesh.edge_topology();
                for &[a, b] in &topo.edges {
                    let (p, q) = (coords[a as usize], coords[b as usize]);
                    coords.push([0.5 * (p[0] + q[0]), 0.5 * (p[1] + q[1])]);
                }
                let mut element_dofs = Vec::with_capacity(6 * mesh.triangles.len());
                for (tri, te) in mesh.triangles.iter().zip(&topo.triangle_edges) {
                    element_dofs.extend_from_slice(tri);
                    element_dofs.extend(te.iter().map(|&e| n_nodes as u32 + e));
                }
                DofMap {
                    order,
                    n_dofs: n_nodes + topo.edges.len(),
                    n_nodes,
                    element_dofs,
                    coords,
                    edges: topo.edges,
                }
            }
        }
    }

    /// The dofs of triangle `t`.
    pub fn element(&self, t: usize) -> &[u32] {
        let n = self.order.local_dofs();
        &self.element_dofs[t * n..(t + 1) * n]
    }

    /// The mid-edge dof of the edge between nodes `a` and `b` (P2), if that
    /// edge exists.
    pub fn edge_dof(&self, a: u32, b: u32) -> Option<u32> {
        let key = if a < b { [a, b] } else { [b, a] };
        self.edges
            .binary_search(&key)
            .ok()
            .map(|e| (self.n_nodes + e) as u32)
    }
}

/// The upper triangle (row ≤ column) of a symmetric n × n sparse matrix in
/// compressed sparse column form, rows sorted within each column, diagonal
/// always present.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SparsityPattern {
    /// Dimension.
    pub n: usize,
    /// Column starts, length n + 1.
    pub col_ptr: Vec<usize>,
    /// Row of each stored entry.
    pub row_idx: Vec<usize>,
}

impl SparsityPattern {
    /// Number of stored entries.
    pub fn nnz(&self) -> usize {
        self.row_idx.len()
    }

    /// Slot of entry (row, col), row ≤ col, if stored.
    pub fn position(&self, row: usize, col: usize) -> Option<usize> {
        let range = self.col_ptr[col]..self.col_ptr[col + 1];
        self.row_idx[range.clone()]
            .binary_search(&row)
            .ok()
            .map(|k| range.start + k)
    }

    /// y = A x with the symmetric matrix whose upper triangle holds `values`.
    pub fn sym_mul(&self, values: &[f64], x: &[f64], y: &mut [f64]) {
        y.fill(0.0);
        for col in 0..self.n {
            let range = self.col_ptr[col]..self.col_ptr[col + 1];
            for (&row, &v) in self.row_idx[range.clone()].iter().zip(&values[range]) {
                y[row] += v * x[col];
                if row != col {
                    y[col] += v * x[row];
                }
            }
        }
    }
}

/// The distinct Kelvin images named by the boundary conditions.
fn kelvin_images(problem: &Problem<'_>) -> Vec<crate::kelvin::KelvinMap> {
    let mut maps: Vec<crate::kelvin::KelvinMap> = Vec::new();
    let conditions = std::iter::once(&problem.boundary.default)
        .chain(problem.boundary.segments.iter().map(|(_, c)| c));
    for c in conditions {
        if let crate::problem::EdgeCondition::KelvinRim(map) = c {
            if !maps.iter().any(|m| m.region == map.region) {
                maps.push(*map);
            }
        }
    }
    maps
}

/// Elements per parallel work unit: large enough to amortise the task, small
/// enough that the element buffers stay in cache-friendly sizes.
const CHUNK: usize = 4096;

/// The reduced system of a problem: dofs, constraints, pattern and the
/// element-to-slot scatter table, built once; values recomputed on demand.
pub struct Assembler<'p> {
    problem: &'p Problem<'p>,
    /// The dofs.
    pub dofs: DofMap,
    /// The constraints.
    pub constraints: Constraints,
    /// The pattern of the reduced matrix.
    pub pattern: SparsityPattern,
    /// Per triangle: an index into `problem.regions`, or (≥ its length) into
    /// `image_props`.
    region_slot: Vec<u32>,
    /// Per triangle: the index of its Kelvin image in `images`, or u32::MAX.
    image_of: Vec<u32>,
    /// The Kelvin images of open boundaries.
    images: Vec<crate::kelvin::KelvinMap>,
    /// Axisymmetric image triangles: their material with the transformed
    /// reluctivity at the centroid (for post-processing only; the element
    /// matrices integrate it exactly).
    image_props: Vec<crate::problem::RegionProps>,
    image_rule: TriangleRule,
    /// Per element and packed local pair: the value slot, or u32::MAX.
    scatter: Vec<u32>,
    /// Per element and packed local pair: sign product × multiplicity.
    factor: Vec<i8>,
    rule: TriangleRule,
    source_rule: TriangleRule,
}

/// Call `visit(pair slot, row, col, factor)` for every pair of free dofs of
/// every triangle, where the pair slot is t · packed_len + packed_index(a, b)
/// for local dofs a ≤ b, row ≤ col are their reduced unknowns and the factor
/// is the product of their signs, doubled when two different local dofs are
/// the same unknown (a dof and its periodic partner).
fn for_each_pair(
    element_dofs: &[u32],
    n_loc: usize,
    free: &[(u32, i8)],
    mut visit: impl FnMut(usize, u32, u32, i8),
) {
    let n_pairs = packed_len(n_loc);
    for (t, d) in element_dofs.chunks_exact(n_loc).enumerate() {
        let local: [(u32, i8); MAX_LOCAL] = std::array::from_fn(|a| {
            if a < n_loc {
                free[d[a] as usize]
            } else {
                (u32::MAX, 0)
            }
        });
        let mut k = t * n_pairs;
        for a in 0..n_loc {
            let (i, si) = local[a];
            for (b, &(j, sj)) in local.iter().enumerate().take(n_loc).skip(a) {
                if i != u32::MAX && j != u32::MAX {
                    let twice = if b != a && i == j { 2 } else { 1 };
                    visit(k, i.min(j), i.max(j), si * sj * twice);
                }
                k += 1;
            }
        }
    }
}

/// The pattern of the reduced matrix and, for every local pair `k` of
/// triangle `t` (packed upper triangle), the slot its entry adds into
/// (`u32::MAX` for none) and its factor (±1, or ±2 for the off-diagonal
/// pair of a dof and its periodic partner meeting in one element).
///
/// The pairs are bucketed by column (a counting sort) and each short column
/// sorted by row: linear time, and every pair learns its slot on the way (a
/// global sort of the pair keys plus a search per pair took twice as long at
/// 2M P1 triangles).
fn build_pattern(
    n: usize,
    element_dofs: &[u32],
    n_loc: usize,
    free: &[(u32, i8)],
) -> (SparsityPattern, Vec<u32>, Vec<i8>) {
    let n_pairs = packed_len(n_loc);
    let n_tri = element_dofs.len() / n_loc;
    let mut scatter = vec![u32::MAX; n_tri * n_pairs];
    let mut factor = vec![0i8; n_tri * n_pairs];
    let mut count = vec![0usize; n + 1];
    for_each_pair(element_dofs, n_loc, free, |k, _, col, f| {
        count[col as usize + 1] += 1;
        factor[k] = f;
    });
    for c in 0..n {
        count[c + 1] += count[c];
    }
    // row << 32 | pair slot, in buckets of the column (one u64 sorts faster
    // than a pair).
    let mut bucket = vec![0u64; count[n]];
    let mut fill = count.clone();
    for_each_pair(element_dofs, n_loc, free, |k, row, col, _| {
        let c = col as usize;
        bucket[fill[c]] = (u64::from(row) << 32) | k as u64;
        fill[c] += 1;
    });
    drop(fill);
    let mut col_ptr = vec![0usize; n + 1];
    let mut row_idx = Vec::with_capacity(count[n] / 2 + n);
    for c in 0..n {
        let column = &mut bucket[count[c]..count[c + 1]];
        column.sort_unstable();
        let mut last = u32::MAX;
        for &key in column.iter() {
            let (row, slot) = ((key >> 32) as u32, key as u32);
            if row != last {
                row_idx.push(row as usize);
                last = row;
            }
            scatter[slot as usize] = (row_idx.len() - 1) as u32;
        }
        col_ptr[c + 1] = row_idx.len();
    }
    let pattern = SparsityPattern {
        n,
        col_ptr,
        row_idx,
    };
    (pattern, scatter, factor)
}

impl<'p> Assembler<'p> {
    /// Validate `problem`, number its dofs, resolve its constraints and
    /// build the pattern and scatter table.
    pub fn new(problem: &'p Problem<'p>) -> Result<Assembler<'p>, SolveError> {
        problem.validate()?;
        let mesh = problem.mesh;
        let dofs = DofMap::new(mesh, problem.order, problem.length_scale_m);
        let constraints = Constraints::new(problem, &dofs)?;
        let n_loc = problem.order.local_dofs();
        let n_tri = mesh.triangles.len();
        // validate() guarantees an entry per region, so regions is non-empty
        // whenever there is a triangle.
        let last = problem.regions.len().saturating_sub(1);
        let region_slot: Vec<u32> = mesh
            .regions
            .iter()
            .map(|&r| {
                if r == Mesh::OUTER_REGION {
                    last as u32
                } else {
                    r
                }
            })
            .collect();
        let images = kelvin_images(problem);
        let mut region_slot: Vec<u32> = region_slot;
        let mut image_of = vec![u32::MAX; n_tri];
        let mut image_props = Vec::new();
        for (k, map) in images.iter().enumerate() {
            let props = problem
                .region(map.region)
                .ok_or_else(|| SolveError::KelvinImage {
                    region: map.region,
                    reason: "the image region has no entry in `regions`".into(),
                })?;
            let mu_r = match props.material {
                crate::material::Material::Linear { mu_r }
                    if props.current_density_a_per_m2 == 0.0 =>
                {
                    mu_r
                }
                _ => {
                    return Err(SolveError::KelvinImage {
                        region: map.region,
                        reason: "the exterior must be a linear material without current".into(),
                    })
                }
            };
            for (t, &r) in mesh.regions.iter().enumerate() {
                if r != map.region {
                    continue;
                }
                image_of[t] = k as u32;
                if let crate::fe::Symmetry::Axisymmetric = problem.symmetry {
                    let [a, b, c] = mesh.triangles[t].map(|i| mesh.nodes[i as usize]);
                    let centroid = [(a[0] + b[0] + c[0]) / 3.0, (a[1] + b[1] + c[1]) / 3.0];
                    let factor = map
                        .axisymmetric_reluctivity_factor(centroid)
                        .max(f64::MIN_POSITIVE);
                    region_slot[t] = (problem.regions.len() + image_props.len()) as u32;
                    image_props.push(crate::problem::RegionProps {
                        material: crate::material::Material::Linear {
                            mu_r: mu_r / factor,
                        },
                        current_density_a_per_m2: 0.0,
                    });
                }
            }
        }
        // The reduced unknown and sign of every dof (u32::MAX: fixed).
        let free: Vec<(u32, i8)> = constraints
            .target
            .iter()
            .map(|t| match *t {
                DofTarget::Free { index, sign } => (index, sign as i8),
                DofTarget::Fixed(_) => (u32::MAX, 0),
            })
            .collect();
        let (pattern, scatter, factor) =
            build_pattern(constraints.n_free, &dofs.element_dofs, n_loc, &free);
        Ok(Assembler {
            problem,
            dofs,
            constraints,
            pattern,
            region_slot,
            image_of,
            images,
            image_props,
            image_rule: crate::kelvin::image_rule(
                &fe::element_rule(problem.order, problem.symmetry),
                problem.symmetry,
            ),
            scatter,
            factor,
            rule: fe::element_rule(problem.order, problem.symmetry),
            source_rule: fe::quadrature::dunavant(6),
        })
    }

    /// The problem.
    pub fn problem(&self) -> &'p Problem<'p> {
        self.problem
    }

    /// The straight-sided triangle `t` in metres.
    ///
    /// Computed on each call, from the scaled node positions, rather than
    /// stored: 104 bytes a triangle (200 MB at 2M triangles) is worth more
    /// than the few flops.
    pub fn triangle(&self, t: usize) -> Triangle {
        let nodes = self.problem.mesh.triangles[t];
        Triangle::new(nodes.map(|i| self.dofs.coords[i as usize]))
    }

    /// The region properties of triangle `t`.
    pub fn region_props(&self, t: usize) -> &crate::problem::RegionProps {
        let slot = self.region_slot[t] as usize;
        let n = self.problem.regions.len();
        if slot < n {
            &self.problem.regions[slot]
        } else {
            &self.image_props[slot - n]
        }
    }

    /// The Kelvin image (open boundary) triangle `t` belongs to, if any.
    pub fn kelvin_image(&self, t: usize) -> Option<&crate::kelvin::KelvinMap> {
        self.images.get(self.image_of[t] as usize)
    }

    /// The position of every reduced unknown, m: that of the first dof
    /// mapped to it (a periodic or Kelvin-rim pair takes its lower-numbered
    /// dof's; Kelvin image dofs lie in the image disc beside the model). For
    /// geometric fill-reducing orderings.
    pub fn unknown_points(&self) -> Vec<[f64; 2]> {
        let mut points = vec![[f64::NAN; 2]; self.constraints.n_free];
        let mut seen = vec![false; self.constraints.n_free];
        for (d, target) in self.constraints.target.iter().enumerate() {
            if let DofTarget::Free { index, .. } = *target {
                let i = index as usize;
                if !seen[i] {
                    seen[i] = true;
                    points[i] = self.dofs.coords[d];
                }
            }
        }
        points
    }

    /// A full dof vector with the fixed values in place and zero elsewhere.
    pub fn initial_potential(&self) -> Vec<f64> {
        let mut u = vec![0.0; self.dofs.n_dofs];
        self.constraints
            .expand(&vec![0.0; self.constraints.n_free], &mut u);
        u
    }

    /// The reduced residual at the full dof vector `u` (fixed values
    /// included) into `residual` (length n_free), and, when `values` is
    /// given, the reduced tangent matrix into it (length `pattern.nnz()`,
    /// overwritten).
    pub fn assemble(&self, u: &[f64], mut values: Option<&mut [f64]>, residual: &mut [f64]) {
        let n_loc = self.problem.order.local_dofs();
        let n_pairs = packed_len(n_loc);
        let n_tri = self.problem.mesh.triangles.len();
        residual.fill(0.0);
        if let Some(v) = values.as_deref_mut() {
            v.fill(0.0);
        }
        let want_tangent = values.is_some();
        let mut k_buf = vec![0.0; CHUNK * n_pairs];
        let mut r_buf = vec![0.0; CHUNK * n_loc];
        let source = self.problem.source.as_deref();
        let kind = fe::ElementKind {
            order: self.problem.order,
            symmetry: self.problem.symmetry,
            rule: &self.rule,
        };
        for start in (0..n_tri).step_by(CHUNK) {
            let end = (start + CHUNK).min(n_tri);
            let len = end - start;
            let kernel = |t: usize, r: &mut [f64], k: Option<&mut [f64]>| {
                let d = self.dofs.element(t);
                let mut ul = [0.0; MAX_LOCAL];
                for a in 0..n_loc {
                    ul[a] = u[d[a] as usize];
                }
                if let Some(map) = self.kelvin_image(t) {
                    let mu_r = match self.problem.region(map.region).map(|p| &p.material) {
                        Some(crate::material::Material::Linear { mu_r }) => *mu_r,
                        _ => 1.0,
                    };
                    let c = map.image_centre();
                    let sc = self.problem.length_scale_m;
                    crate::kelvin::element_system(
                        &self.triangle(t),
                        self.problem.order,
                        self.problem.symmetry,
                        &self.image_rule,
                        crate::material::NU0 / mu_r,
                        [c[0] * sc, c[1] * sc],
                        map.radius * sc,
                        &ul[..n_loc],
                        r,
                        k,
                    );
                    return;
                }
                let props = self.region_props(t);
                let load = ElementLoad {
                    material: &props.material,
                    current_density: props.current_density_a_per_m2,
                    source: source.map(|s| (s, &self.source_rule)),
                    length_scale_m: self.problem.length_scale_m,
                };
                fe::element_system(&self.triangle(t), &kind, &load, &ul, r, k);
            };
            let rs = &mut r_buf[..len * n_loc];
            if want_tangent {
                let ks = &mut k_buf[..len * n_pairs];
                rs.par_chunks_mut(n_loc)
                    .zip(ks.par_chunks_mut(n_pairs))
                    .enumerate()
                    .for_each(|(i, (r, k))| kernel(start + i, r, Some(k)));
            } else {
                rs.par_chunks_mut(n_loc)
                    .enumerate()
                    .for_each(|(i, r)| kernel(start + i, r, None));
            }
            for i in 0..len {
                let t = start + i;
                let d = self.dofs.element(t);
                for a in 0..n_loc {
                    if let DofTarget::Free { index, sign } = self.constraints.target[d[a] as usize]
                    {
                        residual[index as usize] += sign * r_buf[i * n_loc + a];
                    }
                }
                if let Some(v) = values.as_deref_mut() {
                    let sc = &self.scatter[t * n_pairs..(t + 1) * n_pairs];
                    let fa = &self.factor[t * n_pairs..(t + 1) * n_pairs];
                    let ke = &k_buf[i * n_pairs..(i + 1) * n_pairs];
                    for k in 0..n_pairs {
                        if sc[k] != u32::MAX {
                            v[sc[k] as usize] += f64::from(fa[k]) * ke[k];
                        }
                    }
                }
            }
        }
    }
}
