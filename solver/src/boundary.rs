//! Boundary conditions as constraints on the degrees of freedom.
//!
//! Every degree of freedom ends up either *fixed* to a value (zero-potential,
//! uniform-field, the symmetry axis) or *free* as ± one unknown of the
//! reduced system: periodic and anti-periodic partners are eliminated by
//! expressing each constrained ("slave") dof as ± its partner ("master"), so
//! the reduced matrix stays symmetric positive definite and needs no
//! multipliers. Flux-normal is the natural condition and needs nothing.
//!
//! When nothing fixes the additive constant of the potential (every edge
//! flux-normal or periodic, no anti-periodic pair), one dof is pinned to 0,
//! which changes no flux density.
//!
//! **The open boundary** ([`EdgeCondition::KelvinRim`], built by
//! [`crate::kelvin`]): the image disc of the exterior carries its own nodes;
//! each of its rim dofs (vertices and, for P2, midpoints) is a slave of the
//! outer circle's dof at the same place (up to the image's offset), exactly
//! like a periodic pair. In planar problems the node at the image centre (the
//! image of infinity) is fixed to 0: A(∞) = 0, or, with a net current, the
//! return path at infinity (see [`crate::kelvin`]). In axisymmetric ones the
//! image's diameter lies on the axis and is fixed like the axis.

use crate::assembly::DofMap;
use crate::fe::Symmetry;
use crate::problem::{EdgeCondition, Problem, SolveError};
use std::collections::BTreeMap;

/// What a degree of freedom is in the reduced system.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum DofTarget {
    /// u = sign · x_index for reduced unknown `index`.
    Free {
        /// Index into the reduced unknowns.
        index: u32,
        /// +1 or −1.
        sign: f64,
    },
    /// u is this value, Wb/m.
    Fixed(f64),
}

/// The constraints of a problem: one target per dof.
#[derive(Clone, Debug, PartialEq)]
pub struct Constraints {
    /// Target of each dof.
    pub target: Vec<DofTarget>,
    /// Number of reduced unknowns.
    pub n_free: usize,
    /// Whether a dof had to be pinned to 0 because nothing else fixed the
    /// additive constant of the potential (all edges flux-normal or
    /// periodic).
    pub pinned: bool,
}

#[derive(Clone, Copy, Debug)]
enum Raw {
    Free,
    Fixed(f64),
    Link(u32, f64),
}

impl Constraints {
    /// Build the constraints of `problem` on the dofs of `dofs`.
    pub fn new(problem: &Problem<'_>, dofs: &DofMap) -> Result<Constraints, SolveError> {
        let mesh = problem.mesh;
        let mut raw = vec![Raw::Free; dofs.n_dofs];
        // Dofs used by no triangle do not take part; fix them to keep the
        // reduced matrix nonsingular.
        let mut used = vec![false; dofs.n_dofs];
        for &d in &dofs.element_dofs {
            used[d as usize] = true;
        }
        for (d, u) in used.iter().enumerate() {
            if !u {
                raw[d] = Raw::Fixed(0.0);
            }
        }
        let mut by_segment: BTreeMap<u32, Vec<[u32; 2]>> = BTreeMap::new();
        for e in &mesh.boundary {
            by_segment.entry(e.segment).or_default().push(e.nodes);
        }
        for (s, c) in &problem.boundary.segments {
            for seg in std::iter::once(*s).chain(partner(c)) {
                if !by_segment.contains_key(&seg) {
                    return Err(SolveError::UnknownSegment { segment: seg });
                }
            }
        }
        // A periodic partner takes its values from the pair, not from the
        // default condition (an explicit condition on it still holds).
        let partners: std::collections::HashSet<u32> = problem
            .boundary
            .segments
            .iter()
            .filter_map(|(_, c)| partner(c))
            .collect();
        let mut pairs = Vec::new();
        let mut rims = Vec::new();
        for (&segment, edges) in &by_segment {
            let explicit = problem.boundary.segments.iter().any(|(s, _)| *s == segment);
            if partners.contains(&segment) && !explicit {
                continue;
            }
            let condition = problem.boundary.condition(segment);
            match condition {
                EdgeCondition::ZeroPotential => {
                    for d in edge_dofs(dofs, edges) {
                        raw[d as usize] = Raw::Fixed(0.0);
                    }
                }
                EdgeCondition::UniformField { b } => {
                    if matches!(problem.symmetry, Symmetry::Axisymmetric) && b[0] != 0.0 {
                        return Err(SolveError::RadialUniformField { bx: b[0] });
                    }
                    for d in edge_dofs(dofs, edges) {
                        let p = dofs.coords[d as usize];
                        let value = match problem.symmetry {
                            // A = bx·y − by·x gives (∂A/∂y, −∂A/∂x) = (bx, by).
                            Symmetry::Planar { .. } => b[0] * p[1] - b[1] * p[0],
                            // rA_φ = Bz r²/2.
                            Symmetry::Axisymmetric => 0.5 * b[1] * p[0],
                        };
                        raw[d as usize] = Raw::Fixed(value);
                    }
                }
                EdgeCondition::FluxNormal => {}
                EdgeCondition::Periodic { partner } => pairs.push((segment, partner, 1.0)),
                EdgeCondition::AntiPeriodic { partner } => pairs.push((segment, partner, -1.0)),
                EdgeCondition::KelvinRim(map) => rims.push((segment, map)),
            }
        }
        if matches!(problem.symmetry, Symmetry::Axisymmetric) {
            // A_φ = 0 on the axis (regularity of the field there).
            let tol = 1e-9 * problem.extent() * problem.length_scale_m;
            for (d, p) in dofs.coords.iter().enumerate() {
                if p[0].abs() <= tol {
                    raw[d] = Raw::Fixed(0.0);
                }
            }
        }
        tie_kelvin_rims(problem, dofs, &by_segment, &rims, &mut raw)?;
        for &(segment, partner, sign) in &pairs {
            let Some(master_edges) = by_segment.get(&partner) else {
                return Err(SolveError::UnknownSegment { segment: partner });
            };
            let links = match_segments(problem, dofs, &by_segment[&segment], master_edges)
                .map_err(|reason| SolveError::PeriodicMismatch {
                    segment,
                    partner,
                    reason,
                })?;
            for (slave, master) in links {
                if let Raw::Free = raw[slave as usize] {
                    raw[slave as usize] = Raw::Link(master, sign);
                }
            }
        }
        Ok(resolve(&raw, problem, dofs))
    }

    /// Number of fixed dofs.
    pub fn n_fixed(&self) -> usize {
        self.target
            .iter()
            .filter(|t| matches!(t, DofTarget::Fixed(_)))
            .count()
    }

    /// Full dof vector from reduced unknowns `x`.
    pub fn expand(&self, x: &[f64], u: &mut [f64]) {
        for (ui, t) in u.iter_mut().zip(&self.target) {
            *ui = match *t {
                DofTarget::Free { index, sign } => sign * x[index as usize],
                DofTarget::Fixed(v) => v,
            };
        }
    }
}

/// Tie every dof of each image rim to the outer circle's dof at its
/// position − offset, and (planar) fix the image centre to 0.
fn tie_kelvin_rims(
    problem: &Problem<'_>,
    dofs: &DofMap,
    by_segment: &BTreeMap<u32, Vec<[u32; 2]>>,
    rims: &[(u32, crate::kelvin::KelvinMap)],
    raw: &mut [Raw],
) -> Result<(), SolveError> {
    if rims.is_empty() {
        return Ok(());
    }
    let s = problem.length_scale_m;
    let nodes = &problem.mesh.nodes;
    let rim_segments: std::collections::HashSet<u32> = rims.iter().map(|r| r.0).collect();
    // Candidate partners: nodes on the other outer edges, sorted by x.
    let mut candidates: Vec<(f64, u32)> = by_segment
        .iter()
        .filter(|(seg, _)| !rim_segments.contains(seg))
        .flat_map(|(_, edges)| edges.iter().flatten())
        .map(|&n| (nodes[n as usize][0], n))
        .collect();
    candidates.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    candidates.dedup_by_key(|c| c.1);
    for &(segment, map) in rims {
        let err = |reason: String| SolveError::KelvinImage {
            region: map.region,
            reason,
        };
        if !(map.radius.is_finite() && map.radius > 0.0) {
            return Err(err(format!("radius {} is not finite and > 0", map.radius)));
        }
        let tol = 1e-9 * (map.radius + map.centre[0].abs().max(map.centre[1].abs()));
        let partner_of = |n: u32| -> Result<u32, SolveError> {
            let p = nodes[n as usize];
            let want = [p[0] - map.offset[0], p[1] - map.offset[1]];
            let lo = candidates.partition_point(|c| c.0 < want[0] - tol);
            candidates[lo..]
                .iter()
                .take_while(|c| c.0 <= want[0] + tol)
                .find(|c| (nodes[c.1 as usize][1] - want[1]).abs() <= tol)
                .map(|c| c.1)
                .ok_or_else(|| {
                    err(format!(
                        "rim node at {p:?} (segment {segment}) has no outer-edge node at {want:?}"
                    ))
                })
        };
        for &[a, b] in &by_segment[&segment] {
            let (pa, pb) = (partner_of(a)?, partner_of(b)?);
            let mut links = vec![(a, pa), (b, pb)];
            if let Some(e) = dofs.edge_dof(a, b) {
                let f = dofs.edge_dof(pa, pb).ok_or_else(|| {
                    err(format!(
                        "the outer circle has no edge between nodes {pa} and {pb}"
                    ))
                })?;
                links.push((e, f));
            }
            for (slave, master) in links {
                if let Raw::Free = raw[slave as usize] {
                    raw[slave as usize] = Raw::Link(master, 1.0);
                }
            }
        }
        if let Symmetry::Planar { .. } = problem.symmetry {
            let c = map.image_centre();
            let c = [c[0] * s, c[1] * s];
            let tol_m = tol * s;
            let centre = (0..dofs.n_nodes)
                .find(|&d| {
                    let p = dofs.coords[d];
                    (p[0] - c[0]).abs() <= tol_m && (p[1] - c[1]).abs() <= tol_m
                })
                .ok_or_else(|| {
                    err("no mesh node at the image centre (the image of infinity)".into())
                })?;
            if let Raw::Free = raw[centre] {
                raw[centre] = Raw::Fixed(0.0);
            }
        }
    }
    Ok(())
}

fn partner(c: &EdgeCondition) -> Option<u32> {
    match *c {
        EdgeCondition::Periodic { partner } | EdgeCondition::AntiPeriodic { partner } => {
            Some(partner)
        }
        _ => None,
    }
}

/// All dofs on the given boundary edges (vertices and, for P2, midpoints).
fn edge_dofs<'a>(dofs: &'a DofMap, edges: &'a [[u32; 2]]) -> impl Iterator<Item = u32> + 'a {
    edges.iter().flat_map(move |&[a, b]| {
        [Some(a), Some(b), dofs.edge_dof(a, b)]
            .into_iter()
            .flatten()
    })
}

/// Ends of the chain formed by a segment's edges (each `[from, to]`, in
/// counter-clockwise order).
fn chain_ends(edges: &[[u32; 2]]) -> Result<(u32, u32), String> {
    let froms: std::collections::HashSet<u32> = edges.iter().map(|e| e[0]).collect();
    let tos: std::collections::HashSet<u32> = edges.iter().map(|e| e[1]).collect();
    let start: Vec<u32> = froms.difference(&tos).copied().collect();
    let end: Vec<u32> = tos.difference(&froms).copied().collect();
    match (start.as_slice(), end.as_slice()) {
        ([s], [e]) => Ok((*s, *e)),
        _ => Err("a periodic segment must be one open chain of edges (not a closed loop)".into()),
    }
}

/// Pairs (slave dof, master dof) matching the nodes of two segments by the
/// rigid motion carrying the slave's ends onto the master's ends: first in
/// reverse order (the usual case: two sides of a sector or the left and
/// right of a strip, traversed in opposite directions around the outline),
/// then in the same order.
fn match_segments(
    problem: &Problem<'_>,
    dofs: &DofMap,
    slave: &[[u32; 2]],
    master: &[[u32; 2]],
) -> Result<Vec<(u32, u32)>, String> {
    let nodes = &problem.mesh.nodes;
    let (a, b) = chain_ends(slave)?;
    let (c, d) = chain_ends(master)?;
    if slave.len() != master.len() {
        return Err(format!(
            "{} mesh edges against {} on the partner: the meshes of the two stretches must match",
            slave.len(),
            master.len()
        ));
    }
    let p = |i: u32| nodes[i as usize];
    let length = dist(p(a), p(b));
    let tol = 1e-6 * length.max(dist(p(c), p(d)));
    let mut slave_nodes: Vec<u32> = slave.iter().flat_map(|e| *e).collect();
    slave_nodes.sort_unstable();
    slave_nodes.dedup();
    let mut master_nodes: Vec<u32> = master.iter().flat_map(|e| *e).collect();
    master_nodes.sort_unstable();
    master_nodes.dedup();
    let mut last_reason = String::new();
    for (to_a, to_b) in [(d, c), (c, d)] {
        if (dist(p(to_a), p(to_b)) - length).abs() > tol {
            last_reason = "the two stretches differ in length".into();
            continue;
        }
        let (pa, pb, qa, qb) = (p(a), p(b), p(to_a), p(to_b));
        let theta = (qb[1] - qa[1]).atan2(qb[0] - qa[0]) - (pb[1] - pa[1]).atan2(pb[0] - pa[0]);
        let (sn, cs) = theta.sin_cos();
        let map = |x: [f64; 2]| {
            let r = [x[0] - pa[0], x[1] - pa[1]];
            [qa[0] + cs * r[0] - sn * r[1], qa[1] + sn * r[0] + cs * r[1]]
        };
        let mut node_map = std::collections::HashMap::new();
        let mut ok = true;
        for &s in &slave_nodes {
            let image = map(p(s));
            match master_nodes.iter().find(|&&m| dist(p(m), image) <= tol) {
                Some(&m) => {
                    node_map.insert(s, m);
                }
                None => {
                    last_reason = format!("node at {:?} has no partner node at {:?}", p(s), image);
                    ok = false;
                    break;
                }
            }
        }
        if !ok {
            continue;
        }
        let mut links: Vec<(u32, u32)> = node_map.iter().map(|(&s, &m)| (s, m)).collect();
        for &[s0, s1] in slave {
            if let (Some(e), Some(f)) = (
                dofs.edge_dof(s0, s1),
                dofs.edge_dof(node_map[&s0], node_map[&s1]),
            ) {
                links.push((e, f));
            }
        }
        links.sort_unstable();
        return Ok(links);
    }
    Err(last_reason)
}

fn dist(a: [f64; 2], b: [f64; 2]) -> f64 {
    (a[0] - b[0]).hypot(a[1] - b[1])
}

/// Follow links to their roots and number the free roots.
fn resolve(raw: &[Raw], problem: &Problem<'_>, dofs: &DofMap) -> Constraints {
    let n = raw.len();
    // (root, sign) or fixed value for every dof.
    let mut resolved: Vec<Option<Result<(u32, f64), f64>>> = vec![None; n];
    let mut anti = false;
    for start in 0..n {
        let mut chain = Vec::new();
        let mut d = start as u32;
        let mut sign = 1.0;
        let outcome = loop {
            if let Some(r) = resolved[d as usize] {
                break r.map(|(root, s)| (root, s * sign)).map_err(|v| v * sign);
            }
            if chain.iter().any(|&(c, _)| c == d) {
                // A cycle: consistent (+) leaves d free, inconsistent (−)
                // forces 0.
                let s_at_d = chain
                    .iter()
                    .find(|&&(c, _)| c == d)
                    .map_or(1.0, |&(_, s)| s);
                break if sign == s_at_d {
                    Ok((d, s_at_d))
                } else {
                    Err(0.0)
                };
            }
            chain.push((d, sign));
            match raw[d as usize] {
                Raw::Free => break Ok((d, sign)),
                Raw::Fixed(v) => break Err(v * sign),
                Raw::Link(m, s) => {
                    if s < 0.0 && m != d {
                        anti = true;
                    }
                    sign *= s;
                    d = m;
                }
            }
        };
        // outcome is relative to `start`; store each chain member's own.
        for &(c, s) in &chain {
            if resolved[c as usize].is_none() {
                resolved[c as usize] = Some(match outcome {
                    Ok((root, total)) => Ok((root, total * s)),
                    Err(v) => Err(v * s),
                });
            }
        }
    }
    let mut index_of = vec![u32::MAX; n];
    let mut target = Vec::with_capacity(n);
    let mut n_free = 0u32;
    let any_fixed = resolved.iter().any(|r| matches!(r, Some(Err(_))));
    let pin = if any_fixed || anti {
        None
    } else {
        // Pin the root nearest the origin of r (axisymmetric) or the first.
        match problem.symmetry {
            Symmetry::Planar { .. } => resolved.iter().find_map(|r| match r {
                Some(Ok((root, _))) => Some(*root),
                _ => None,
            }),
            Symmetry::Axisymmetric => (0..n as u32)
                .filter(|&d| matches!(resolved[d as usize], Some(Ok((root, _))) if root == d))
                .min_by(|&x, &y| dofs.coords[x as usize][0].total_cmp(&dofs.coords[y as usize][0])),
        }
    };
    for r in &resolved {
        target.push(match r.unwrap_or(Err(0.0)) {
            Err(v) => DofTarget::Fixed(v),
            Ok((root, _)) if Some(root) == pin => DofTarget::Fixed(0.0),
            Ok((root, sign)) => {
                let slot = &mut index_of[root as usize];
                if *slot == u32::MAX {
                    *slot = n_free;
                    n_free += 1;
                }
                DofTarget::Free { index: *slot, sign }
            }
        });
    }
    Constraints {
        target,
        n_free: n_free as usize,
        pinned: pin.is_some(),
    }
}
