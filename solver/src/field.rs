//! The solved field: B = ∇×A, H, μr, point probes, energy and co-energy.
//!
//! Points given to and returned by this module are in mesh units (the
//! model's length unit); field values are SI.

use crate::assembly::{Assembler, DofMap};
use crate::fe::{quadrature, CurlBasis, MAX_LOCAL};
use crate::linear::{FaerCholesky, SpdSolver};
use crate::material::NU0;
use crate::nonlinear::NewtonReport;
use crate::problem::SolveError;
use rayon::prelude::*;
use std::sync::{Mutex, OnceLock};

/// The field in one triangle at one point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PointField {
    /// The triangle holding the point.
    pub triangle: usize,
    /// Potential A_z or A_φ, Wb/m.
    pub potential: f64,
    /// Flux density, T: (Bx, By) planar, (Br, Bz) axisymmetric.
    pub b: [f64; 2],
    /// Field strength, A/m.
    pub h: [f64; 2],
}

impl PointField {
    /// |B|, T.
    pub fn b_magnitude(&self) -> f64 {
        self.b[0].hypot(self.b[1])
    }
}

/// Per-element summary at the centroid.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ElementField {
    /// Flux density, T.
    pub b: [f64; 2],
    /// Field strength, A/m.
    pub h: [f64; 2],
    /// |B|, T.
    pub b_magnitude: f64,
    /// Secant relative permeability ν0/ν (recoil μr for magnets).
    pub mu_r: f64,
}

/// A solved problem.
pub struct Solution<'p> {
    assembler: Assembler<'p>,
    potential: Vec<f64>,
    /// What the nonlinear iteration did.
    pub report: NewtonReport,
    locator: OnceLock<Locator>,
    tangent: Mutex<TangentCache>,
}

/// The tangent system at the solution, as far as the solve left it: the
/// assembled values, an analysed (and possibly factored) solver.
#[derive(Default)]
pub(crate) struct TangentCache {
    /// Tangent values at the final potential, in pattern order.
    pub values: Option<Vec<f64>>,
    /// A solver whose symbolic analysis is done for the pattern.
    pub solver: Option<Box<dyn SpdSolver>>,
    /// Whether `solver` holds the numeric factorisation of `values`.
    pub factored: bool,
}

/// What [`Solution::solve_tangent`] had to do besides the triangular solves.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct TangentWork {
    /// The tangent matrix was assembled (it was not kept from the solve).
    pub assembled: bool,
    /// A symbolic analysis was run (none was kept from the solve).
    pub analysed: bool,
    /// A numeric factorisation was run (the solve's last one was not at
    /// the final potential, as after a nonlinear solve).
    pub factored: bool,
}

impl std::fmt::Debug for Solution<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Solution")
            .field("dofs", &self.potential.len())
            .field("report", &self.report)
            .finish()
    }
}

impl<'p> Solution<'p> {
    pub(crate) fn new(
        assembler: Assembler<'p>,
        potential: Vec<f64>,
        report: NewtonReport,
    ) -> Solution<'p> {
        Solution {
            assembler,
            potential,
            report,
            locator: OnceLock::new(),
            tangent: Mutex::new(TangentCache::default()),
        }
    }

    /// Keep what the solve knows of the tangent at the final potential.
    pub(crate) fn set_tangent(&mut self, cache: TangentCache) {
        self.tangent = Mutex::new(cache);
    }

    /// Take the linear solver the solve kept (with its symbolic analysis),
    /// to start the next solve on the same mesh with
    /// [`crate::nonlinear::solve_from`]. Later tangent solves of this
    /// solution analyse afresh.
    pub fn take_solver(&self) -> Option<Box<dyn SpdSolver>> {
        let mut cache = match self.tangent.lock() {
            Ok(c) => c,
            Err(poisoned) => poisoned.into_inner(),
        };
        cache.factored = false;
        cache.solver.take()
    }

    /// Solve K_t x = b in place for each right-hand side, with K_t the
    /// reduced tangent matrix (Jacobian of the residual) at the solution;
    /// vectors are in reduced unknowns (length `assembler().constraints.n_free`).
    ///
    /// The first call reuses what the solve kept: after [`crate::nonlinear::solve`]
    /// of a linear problem the factorisation itself (no new factorisation),
    /// after a nonlinear one the symbolic analysis and the tangent values at
    /// the final iterate (one numeric factorisation). The factorisation is
    /// then kept for later calls, so it lives as long as the solution.
    pub fn solve_tangent(&self, rhs: &mut [Vec<f64>]) -> Result<TangentWork, SolveError> {
        let n = self.assembler.constraints.n_free;
        if let Some(bad) = rhs.iter().find(|r| r.len() != n) {
            return Err(crate::linear::LinearError::Size {
                expected: n,
                got: bad.len(),
            }
            .into());
        }
        let mut work = TangentWork::default();
        if n == 0 {
            return Ok(work);
        }
        // A poisoned lock only means another caller panicked mid-solve; the
        // cache is rebuilt from scratch in that case.
        let mut cache = match self.tangent.lock() {
            Ok(c) => c,
            Err(poisoned) => {
                let mut c = poisoned.into_inner();
                *c = TangentCache::default();
                c
            }
        };
        let cache = &mut *cache;
        if cache.values.is_none() {
            let mut values = vec![0.0; self.assembler.pattern.nnz()];
            let mut residual = vec![0.0; n];
            self.assembler
                .assemble(&self.potential, Some(&mut values), &mut residual);
            cache.values = Some(values);
            cache.factored = false;
            work.assembled = true;
        }
        let solver = match &mut cache.solver {
            Some(s) => s,
            empty => {
                let mut s: Box<dyn SpdSolver> = Box::new(FaerCholesky::default());
                s.analyze(&self.assembler.pattern)?;
                cache.factored = false;
                work.analysed = true;
                empty.insert(s)
            }
        };
        if !cache.factored {
            if let Some(values) = &cache.values {
                solver.factor(values)?;
            }
            cache.factored = true;
            work.factored = true;
        }
        for r in rhs.iter_mut() {
            solver.solve(r)?;
        }
        Ok(work)
    }

    /// The potential at every dof, Wb/m.
    pub fn potential(&self) -> &[f64] {
        &self.potential
    }

    /// The dof numbering.
    pub fn dofs(&self) -> &DofMap {
        &self.assembler.dofs
    }

    /// The assembled system (pattern, constraints, element access).
    pub fn assembler(&self) -> &Assembler<'p> {
        &self.assembler
    }

    fn local(&self, t: usize) -> [f64; MAX_LOCAL] {
        let mut ul = [0.0; MAX_LOCAL];
        for (a, &d) in self.assembler.dofs.element(t).iter().enumerate() {
            ul[a] = self.potential[d as usize];
        }
        ul
    }

    fn basis(&self, t: usize, l: [f64; 3]) -> CurlBasis {
        let p = self.assembler.problem();
        CurlBasis::at(&self.assembler.triangle(t), p.order, p.symmetry, l)
    }

    /// The field in triangle `t` at barycentric point `l`.
    pub fn field_in(&self, t: usize, l: [f64; 3]) -> PointField {
        let basis = self.basis(t, l);
        let ul = self.local(t);
        let b = basis.flux_density(&ul);
        let h = self.assembler.region_props(t).material.at(b).h;
        PointField {
            triangle: t,
            potential: basis.potential(&ul),
            b,
            h,
        }
    }

    /// The field at the centroid of every triangle.
    pub fn element_fields(&self) -> Vec<ElementField> {
        (0..self.assembler.dofs.element_dofs.len() / self.assembler.problem().order.local_dofs())
            .into_par_iter()
            .map(|t| {
                let f = self.field_in(t, [1.0 / 3.0; 3]);
                let m = self.assembler.region_props(t).material.at(f.b);
                ElementField {
                    b: f.b,
                    h: f.h,
                    b_magnitude: f.b_magnitude(),
                    mu_r: NU0 / m.nu,
                }
            })
            .collect()
    }

    /// The triangle holding point `p` (mesh units) and its barycentric
    /// coordinates, or `None` outside the mesh.
    pub fn locate(&self, p: [f64; 2]) -> Option<(usize, [f64; 3])> {
        let s = self.assembler.problem().length_scale_m;
        let q = [p[0] * s, p[1] * s];
        let locator = self.locator.get_or_init(|| Locator::new(&self.assembler));
        locator.locate(&self.assembler, q)
    }

    /// The triangles whose bounding boxes may overlap the box `[lo, hi]`
    /// (metres), each once, in increasing order (a superset: callers test
    /// the geometry themselves).
    pub(crate) fn triangles_near(&self, lo: [f64; 2], hi: [f64; 2]) -> Vec<usize> {
        let locator = self.locator.get_or_init(|| Locator::new(&self.assembler));
        let (a, b) = (locator.cell_of(lo), locator.cell_of(hi));
        let mut out = Vec::new();
        for j in a[1]..=b[1] {
            for i in a[0]..=b[0] {
                let c = j * locator.dims[0] + i;
                let range = locator.start[c] as usize..locator.start[c + 1] as usize;
                out.extend(locator.items[range].iter().map(|&t| t as usize));
            }
        }
        out.sort_unstable();
        out.dedup();
        out
    }

    /// The smaller side of a bucket of the point-location grid, m: boxes of
    /// about this size hold a handful of triangles.
    pub(crate) fn bucket_size(&self) -> f64 {
        let locator = self.locator.get_or_init(|| Locator::new(&self.assembler));
        locator.cell[0].min(locator.cell[1])
    }

    /// The field at point `p` (mesh units), or `None` outside the mesh.
    pub fn probe(&self, p: [f64; 2]) -> Option<PointField> {
        self.locate(p).map(|(t, l)| self.field_in(t, l))
    }

    fn integrate(
        &self,
        density: impl Fn(&crate::material::Material, [f64; 2]) -> f64 + Sync,
    ) -> f64 {
        let p = self.assembler.problem();
        let rule = crate::fe::element_rule(p.order, p.symmetry);
        let n_tri = p.mesh.triangles.len();
        (0..n_tri)
            .into_par_iter()
            .map(|t| {
                let ul = self.local(t);
                let tri = self.assembler.triangle(t);
                let material = &self.assembler.region_props(t).material;
                rule.points
                    .iter()
                    .zip(&rule.weights)
                    .map(|(l, w)| {
                        let basis = self.basis(t, *l);
                        w * tri.area
                            * basis.volume_factor
                            * density(material, basis.flux_density(&ul))
                    })
                    .sum::<f64>()
            })
            .collect::<Vec<f64>>()
            // Summed in element order: the same bits whatever the threads
            // (sweep shards must agree to the last digit).
            .iter()
            .sum()
    }

    /// Stored magnetic energy W = ∫∫₀^B H·dB dV, J (for the depth, or the
    /// full turn).
    pub fn energy(&self) -> f64 {
        self.integrate(|m, b| m.energy_density(b))
    }

    /// Co-energy W' = ∫∫₀^H B·dH dV, J.
    pub fn coenergy(&self) -> f64 {
        self.integrate(|m, b| m.coenergy_density(b))
    }

    /// ‖A − exact‖ in L²(Ω) over the mesh plane, (Wb/m)·m, with `exact` a
    /// function of position in mesh units (a verification aid; integrated
    /// with a degree-6 rule).
    pub fn potential_l2_error(&self, exact: impl Fn([f64; 2]) -> f64 + Sync) -> f64 {
        let p = self.assembler.problem();
        let rule = quadrature::dunavant(6);
        let s = p.length_scale_m;
        let n_tri = p.mesh.triangles.len();
        (0..n_tri)
            .into_par_iter()
            .map(|t| {
                let ul = self.local(t);
                let tri = self.assembler.triangle(t);
                rule.points
                    .iter()
                    .zip(&rule.weights)
                    .map(|(l, w)| {
                        let basis = self.basis(t, *l);
                        let e = basis.potential(&ul) - exact([basis.x[0] / s, basis.x[1] / s]);
                        w * tri.area * e * e
                    })
                    .sum::<f64>()
            })
            .collect::<Vec<f64>>()
            .iter()
            .sum::<f64>()
            .sqrt()
    }
}

/// A uniform grid of buckets over the mesh's bounding box, each listing the
/// triangles whose bounding boxes overlap it.
struct Locator {
    origin: [f64; 2],
    cell: [f64; 2],
    dims: [usize; 2],
    start: Vec<u32>,
    items: Vec<u32>,
}

impl Locator {
    fn new(asm: &Assembler<'_>) -> Locator {
        let n_tri = asm.problem().mesh.triangles.len();
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for t in 0..n_tri {
            for v in asm.triangle(t).vertices {
                for k in 0..2 {
                    lo[k] = lo[k].min(v[k]);
                    hi[k] = hi[k].max(v[k]);
                }
            }
        }
        // About one triangle per bucket.
        let side = (n_tri as f64).sqrt().ceil().max(1.0) as usize;
        let dims = [side, side];
        let cell = [
            ((hi[0] - lo[0]) / side as f64).max(f64::MIN_POSITIVE),
            ((hi[1] - lo[1]) / side as f64).max(f64::MIN_POSITIVE),
        ];
        let mut loc = Locator {
            origin: lo,
            cell,
            dims,
            start: Vec::new(),
            items: Vec::new(),
        };
        let mut count = vec![0u32; side * side + 1];
        let ranges: Vec<([usize; 2], [usize; 2])> = (0..n_tri)
            .map(|t| loc.cell_range(asm.triangle(t).vertices))
            .collect();
        for (a, b) in &ranges {
            for j in a[1]..=b[1] {
                for i in a[0]..=b[0] {
                    count[j * side + i + 1] += 1;
                }
            }
        }
        for k in 0..side * side {
            count[k + 1] += count[k];
        }
        let mut fill = count.clone();
        let mut items = vec![0u32; count[side * side] as usize];
        for (t, (a, b)) in ranges.iter().enumerate() {
            for j in a[1]..=b[1] {
                for i in a[0]..=b[0] {
                    let c = j * side + i;
                    items[fill[c] as usize] = t as u32;
                    fill[c] += 1;
                }
            }
        }
        loc.start = count;
        loc.items = items;
        loc
    }

    fn cell_of(&self, p: [f64; 2]) -> [usize; 2] {
        let mut c = [0; 2];
        for k in 0..2 {
            let f = ((p[k] - self.origin[k]) / self.cell[k]).floor();
            c[k] = (f.max(0.0) as usize).min(self.dims[k] - 1);
        }
        c
    }

    fn cell_range(&self, v: [[f64; 2]; 3]) -> ([usize; 2], [usize; 2]) {
        let lo = [
            v[0][0].min(v[1][0]).min(v[2][0]),
            v[0][1].min(v[1][1]).min(v[2][1]),
        ];
        let hi = [
            v[0][0].max(v[1][0]).max(v[2][0]),
            v[0][1].max(v[1][1]).max(v[2][1]),
        ];
        (self.cell_of(lo), self.cell_of(hi))
    }

    fn locate(&self, asm: &Assembler<'_>, p: [f64; 2]) -> Option<(usize, [f64; 3])> {
        for (k, &x) in p.iter().enumerate() {
            let span = self.cell[k] * self.dims[k] as f64;
            if x < self.origin[k] - 1e-9 * span || x > self.origin[k] + span * (1.0 + 1e-9) {
                return None;
            }
        }
        let c = self.cell_of(p);
        let bucket = c[1] * self.dims[0] + c[0];
        let mut best: Option<(usize, [f64; 3], f64)> = None;
        for &t in &self.items[self.start[bucket] as usize..self.start[bucket + 1] as usize] {
            let l = asm.triangle(t as usize).barycentric(p);
            let worst = l[0].min(l[1]).min(l[2]);
            if best.is_none_or(|(_, _, w)| worst > w) {
                best = Some((t as usize, l, worst));
            }
        }
        // Accept points on edges up to rounding.
        best.filter(|&(_, _, w)| w >= -1e-10)
            .map(|(t, l, _)| (t, l))
    }
}
