//! Second pass: resolve names, expand repeats, place shapes, fill the
//! defaults that depend on the geometry, and check everything that involves
//! more than one value.

use std::collections::HashMap;

use fluxwright_mesher::{Outline, Point};

use super::error::{ErrorKind, ModelError, ModelErrors};
use super::geometry::{
    bounding_box, inside_or_on, on_straight_edge, polygon_self_crossing, sample_points,
};
use super::parse::{self, NameRef, RawCondition, RawEdgeKind, RawModel, RawShape, RawSweep};
use super::read::{Ctx, Section, Span};
use super::suggest;
use super::types::*;
use super::{FileLoader, Model, ModelSource, DEFAULT_CHORD_FRACTION, DEFAULT_MAX_TRIANGLES};

/// Relative tolerance for "on the edge" tests, times the outer extent.
const EDGE_TOLERANCE: f64 = 1e-6;
/// Area of an equilateral triangle of unit edge (√3/4), for estimates.
const UNIT_TRIANGLE_AREA: f64 = 0.433_012_701_892_219_3;

pub(crate) fn build(
    text: &str,
    source: &ModelSource,
    loader: &dyn FileLoader,
) -> Result<Model, ModelErrors> {
    let mut ctx = Ctx::new(&source.name, text);
    let doc = match toml_edit::ImDocument::parse(text) {
        Ok(doc) => doc,
        Err(e) => {
            let message = e
                .message()
                .lines()
                .map(str::trim)
                .filter(|l| !l.is_empty())
                .collect::<Vec<_>>()
                .join("; ");
            let hint = if message.contains("invalid string") {
                "text values need quotes, as in symmetry = \"planar\""
            } else {
                "TOML is key = value lines under [table] and [[array]] headers"
            };
            ctx.error(
                ErrorKind::Syntax,
                &e.span(),
                format!("TOML syntax error: {message} ({hint})"),
            );
            return Err(ModelErrors { errors: ctx.errors });
        }
    };
    let root = Section {
        table: doc.as_table(),
        span: Some(0..0),
        label: "the top level".into(),
    };
    let raw = parse::read_model(&mut ctx, &root, loader);
    let model = resolve(&mut ctx, raw, source);
    match model {
        Some(model) if ctx.errors.is_empty() => Ok(Model {
            warnings: std::mem::take(&mut ctx.warnings),
            ..model
        }),
        _ => {
            let mut errors = std::mem::take(&mut ctx.errors);
            if errors.is_empty() {
                // Every failure path records an error; keep the promise of a
                // non-empty list even if one did not.
                errors.push(ModelError {
                    file: source.name.clone(),
                    line: None,
                    column: None,
                    kind: ErrorKind::Conflict,
                    what: "the model could not be read".into(),
                });
            }
            errors.sort_by_key(|e| (e.line.is_none(), e.line, e.column));
            Err(ModelErrors { errors })
        }
    }
}

/// The larger side of the shapes' bounding box (0 without shapes).
pub(crate) fn extent(shapes: &[Shape]) -> f64 {
    match bounding_box(shapes.iter().map(|s| &s.outline)) {
        Some((lo, hi)) => (hi[0] - lo[0]).max(hi[1] - lo[1]),
        None => 0.0,
    }
}

fn undefined(
    ctx: &mut Ctx<'_>,
    span: &Span,
    owner: &str,
    what: &str,
    name: &str,
    known: &[&str],
    advice: &str,
) {
    let hint = suggest::did_you_mean(name, known.iter().copied());
    let list = if known.is_empty() {
        "none".to_string()
    } else {
        known.join(", ")
    };
    ctx.error(
        ErrorKind::UndefinedName,
        span,
        format!("{owner}: {what} `{name}` is not defined{hint} (defined: {list}){advice}"),
    );
}

fn resolve(ctx: &mut Ctx<'_>, raw: RawModel, source: &ModelSource) -> Option<Model> {
    let header = &raw.header;
    let unit_to_m = header.length_unit.to_m();

    // Materials: air first.
    let mut materials = vec![Material {
        name: "air".into(),
        permeability: Permeability::Linear { relative: 1.0 },
        stacking_factor: 1.0,
        remanence_t: None,
        from_library: None,
        line: None,
    }];
    let mut material_spans: Vec<Span> = vec![None];
    for m in &raw.materials {
        materials.push(Material {
            name: m.name.clone(),
            permeability: m.permeability.clone(),
            stacking_factor: m.stacking_factor,
            remanence_t: m.remanence,
            from_library: m.from_library.clone(),
            line: ctx.line(&m.span),
        });
        material_spans.push(m.span.clone());
    }
    let windings: Vec<Winding> = raw
        .windings
        .iter()
        .map(|w| Winding {
            name: w.name.clone(),
            turns: w.turns,
            current_a: w.current.unwrap_or(0.0),
            line: ctx.line(&w.span),
        })
        .collect();

    // Shapes.
    let mut seen: HashMap<String, usize> = HashMap::new();
    for rs in &raw.shapes {
        if let Some(first) = seen.get(&rs.name) {
            ctx.error(
                ErrorKind::DuplicateName,
                &rs.name_span,
                format!("shape #{}: the name `{}` is already used by shape #{first}; shape names must be unique", rs.index, rs.name),
            );
        } else {
            seen.insert(rs.name.clone(), rs.index);
        }
    }
    let mut shapes = Vec::new();
    let mut shape_spans: Vec<Span> = Vec::new();
    for rs in &raw.shapes {
        for s in expand_shape(ctx, rs, &materials, &windings, &raw) {
            shapes.push(s);
            shape_spans.push(rs.span.clone());
        }
    }
    if raw.shape_tables == 0 {
        ctx.error(
            ErrorKind::MissingKey,
            &None,
            "the model has no shapes; add at least one [[shape]] with an outline (rectangle, circle, polygon or sector)",
        );
        return None;
    }
    if shapes.is_empty() {
        return None;
    }
    let shape_extent = extent(&shapes);
    let (bb_lo, bb_hi) = bounding_box(shapes.iter().map(|s| &s.outline))?;

    // Mesh settings.
    let mesh = MeshSettings {
        max_size: raw.mesh.max_size.unwrap_or(shape_extent / 10.0),
        min_angle_deg: raw.mesh.min_angle.unwrap_or(25.0),
        growth: raw.mesh.growth.unwrap_or(1.3),
        adapt: raw.mesh.adapt.unwrap_or(0),
        target_error: raw.mesh.target_error.unwrap_or(0.005),
        chord_fraction: DEFAULT_CHORD_FRACTION,
        max_triangles: default_max_triangles(header.element_order),
    };
    for s in shapes.iter_mut().filter(|s| s.mesh_size.is_nan()) {
        s.mesh_size = mesh.max_size;
    }

    // Model header checks that need the symmetry.
    let depth = match (header.symmetry, &header.depth) {
        (Symmetry::Axisymmetric, Some((_, span))) => {
            ctx.error(
                ErrorKind::Conflict,
                span,
                "[model] `depth` is for planar models only; an axisymmetric model covers the full turn. Remove `depth`",
            );
            1.0 / unit_to_m
        }
        (_, Some((d, _))) => *d,
        (_, None) => 1.0 / unit_to_m,
    };
    let axisymmetric = header.symmetry == Symmetry::Axisymmetric;

    // Outer.
    let (outer_spec, is_default) = match &raw.outer.spec {
        Some(spec) => (spec.clone(), false),
        None => (default_outer(header.symmetry, bb_lo, bb_hi), true),
    };
    let outer_label = if is_default {
        "the default outer circle"
    } else {
        "[outer] shape"
    };
    let outer_outline = outline_of(ctx, &outer_spec, &raw.outer.span, outer_label)?;
    let outer_bb = outer_outline.bounding_box();
    let outer_extent = (outer_bb.1[0] - outer_bb.0[0]).max(outer_bb.1[1] - outer_bb.0[1]);
    let tol = EDGE_TOLERANCE * outer_extent.max(shape_extent);
    if axisymmetric && !is_default && outer_bb.0[0] < -tol {
        ctx.error(
            ErrorKind::Geometry,
            &raw.outer.span,
            format!(
                "[outer] shape reaches x = {:.6}; an axisymmetric model lies in x = r ≥ 0 (the axis is x = 0)",
                outer_bb.0[0]
            ),
        );
    }
    let condition = match raw.outer.condition {
        RawCondition::Open => {
            if !open_outer_ok(&outer_spec, header.symmetry) {
                ctx.error(
                    ErrorKind::Conflict,
                    &raw.outer.span,
                    if axisymmetric {
                        "[outer] condition = \"open\" needs a half-disc centred on the axis (the exterior is mapped by a Kelvin transformation): use shape = { sector = { center = [0, y], outer_radius = R, start_angle = -90, end_angle = 90 } }, or another condition"
                    } else {
                        "[outer] condition = \"open\" needs a circular outer edge (the exterior is mapped by a Kelvin transformation): use shape = { circle = { center = [x, y], radius = R } } or a sector with inner_radius 0, or another condition"
                    },
                );
            }
            OuterCondition::Open
        }
        RawCondition::ZeroPotential => OuterCondition::ZeroPotential,
        RawCondition::FluxNormal => OuterCondition::FluxNormal,
        RawCondition::UniformField => OuterCondition::UniformField {
            field_t: raw.outer.field.unwrap_or([0.0, 0.0]),
        },
    };

    // Shapes against the outer and the axis.
    for (s, span) in shapes.iter().zip(&shape_spans) {
        if axisymmetric {
            let (lo, _) = s.outline.bounding_box();
            if lo[0] < -tol {
                ctx.error(
                    ErrorKind::Geometry,
                    span,
                    format!(
                        "shape `{}` reaches x = {:.6}; an axisymmetric model lies in x = r ≥ 0 (the axis is x = 0): move it right or cut it at the axis",
                        s.name, lo[0]
                    ),
                );
                continue;
            }
        }
        if let Some(p) = sample_points(&s.outline)
            .into_iter()
            .find(|&p| !inside_or_on(&outer_outline, p, tol))
        {
            ctx.error(
                ErrorKind::Geometry,
                span,
                format!(
                    "shape `{}` lies partly outside {outer_label} (for example at ({:.6}, {:.6})); enlarge the outer shape or move the shape",
                    s.name, p[0], p[1]
                ),
            );
        }
    }

    // Triangle budget: a rough count, area over an equilateral triangle of
    // the target size (overlaps counted twice, so it errs high), and at
    // least one triangle per boundary edge of that size (a triangulation of
    // n points has at least n − 2 triangles), which is what counts for thin
    // shapes. Checked here, before anything is allocated for the mesh.
    let count = |outline: &Outline, size: f64| {
        let area = outline.area() / (UNIT_TRIANGLE_AREA * size * size);
        area.max(perimeter(outline) / size)
    };
    let mut estimate = count(&outer_outline, mesh.max_size);
    let mut worst: Option<(f64, usize)> = None;
    for (i, s) in shapes.iter().enumerate() {
        let n = count(&s.outline, s.mesh_size);
        estimate += n;
        if worst.is_none_or(|(w, _)| n > w) {
            worst = Some((n, i));
        }
    }
    if estimate.is_nan() || estimate > mesh.max_triangles as f64 {
        let (span, culprit) = match worst {
            Some((n, i)) if n > 0.5 * estimate => (
                shape_spans[i].clone(),
                format!(
                    "shape `{}` with mesh_size {}",
                    shapes[i].name, shapes[i].mesh_size
                ),
            ),
            _ => (None, format!("[mesh] max_size {}", mesh.max_size)),
        };
        let bytes = estimate * solve_bytes_per_triangle(header.element_order);
        ctx.error(
            ErrorKind::OutOfRange,
            &span,
            format!(
                "the mesh would need about {estimate:.3e} triangles (limit {}) and about {} of memory to solve with element_order {}, mostly for {culprit}; use a larger size",
                mesh.max_triangles,
                format_bytes(bytes),
                header.element_order,
            ),
        );
    }

    // Edges.
    let mut edges = Vec::new();
    for e in &raw.edges {
        let mut good = check_stretch(ctx, &outer_outline, e.from, e.to, tol, &e.span, &e.label);
        let kind = match &e.kind {
            RawEdgeKind::ZeroPotential => EdgeKind::ZeroPotential,
            RawEdgeKind::FluxNormal => EdgeKind::FluxNormal,
            RawEdgeKind::Periodic(p) | RawEdgeKind::AntiPeriodic(p) => {
                let label = format!("`partner` of {}", e.label);
                good &= check_stretch(
                    ctx,
                    &outer_outline,
                    p[0],
                    p[1],
                    tol,
                    &e.partner_span,
                    &label,
                );
                let (l1, l2) = (dist(e.from, e.to), dist(p[0], p[1]));
                if good && (l1 - l2).abs() > 1e-6 * l1.max(l2) + tol {
                    ctx.error(
                        ErrorKind::Geometry,
                        &e.partner_span,
                        format!(
                            "{label} is {l2} long but the stretch it is matched to is {l1}; periodic stretches must have equal lengths"
                        ),
                    );
                }
                if matches!(e.kind, RawEdgeKind::Periodic(_)) {
                    EdgeKind::Periodic { partner: *p }
                } else {
                    EdgeKind::AntiPeriodic { partner: *p }
                }
            }
        };
        edges.push(EdgeCondition {
            from: e.from,
            to: e.to,
            kind,
        });
    }

    // Reports.
    let mut probes = Vec::new();
    check_unique(ctx, "[[probe]]", raw.probes.iter().map(|p| &p.name));
    for p in &raw.probes {
        if !inside_or_on(&outer_outline, p.at, tol) {
            outside_error(
                ctx,
                &p.name.1,
                &format!("[[probe]] `{}`", p.name.0),
                p.at,
                outer_label,
            );
        }
        probes.push(Probe {
            name: p.name.0.clone(),
            at: p.at,
        });
    }
    let mut profiles = Vec::new();
    check_unique(ctx, "[[profile]]", raw.profiles.iter().map(|p| &p.name));
    for p in &raw.profiles {
        for end in [p.from, p.to] {
            if !inside_or_on(&outer_outline, end, tol) {
                outside_error(
                    ctx,
                    &p.name.1,
                    &format!("[[profile]] `{}`", p.name.0),
                    end,
                    outer_label,
                );
                break;
            }
        }
        profiles.push(Profile {
            name: p.name.0.clone(),
            from: p.from,
            to: p.to,
            samples: p.samples,
        });
    }
    let mut loops = Vec::new();
    check_unique(ctx, "[[loop]]", raw.loops.iter().map(|l| &l.name));
    for l in &raw.loops {
        let label = format!("[[loop]] `{}`", l.name.0);
        let Some(outline) = outline_of(ctx, &l.spec, &l.name.1, &label) else {
            continue;
        };
        if let Some(p) = sample_points(&outline)
            .into_iter()
            .find(|&p| !inside_or_on(&outer_outline, p, tol))
        {
            outside_error(ctx, &l.name.1, &label, p, outer_label);
        }
        loops.push(AmpereLoop {
            name: l.name.0.clone(),
            spec: l.spec.clone(),
            outline,
        });
    }

    let shape_names: Vec<String> = {
        let mut v: Vec<String> = raw.shapes.iter().map(|s| s.name.clone()).collect();
        v.extend(
            shapes
                .iter()
                .filter(|s| s.copy.is_some())
                .map(|s| s.name.clone()),
        );
        v
    };
    let lookup = |ctx: &mut Ctx<'_>, owner: &str, names: &[NameRef]| -> Vec<usize> {
        let mut out = Vec::new();
        for (name, span) in names {
            let found = shapes_named(&shapes, name);
            let base = name.split('[').next().unwrap_or(name);
            let declared_but_bad = raw.declared_shapes.iter().any(|d| d == name || d == base);
            if found.is_empty() && !declared_but_bad {
                let known: Vec<&str> = shape_names.iter().map(String::as_str).collect();
                undefined(ctx, span, owner, "shape", name, &known, "");
            }
            for i in found {
                if !out.contains(&i) {
                    out.push(i);
                }
            }
        }
        out
    };
    check_unique(ctx, "[[force]]", raw.forces.iter().map(|f| &f.name));
    let forces: Vec<ForceRequest> = raw
        .forces
        .iter()
        .map(|f| ForceRequest {
            name: f.name.0.clone(),
            shapes: lookup(ctx, &f.label, &f.shapes),
            method: f.method,
        })
        .collect();
    check_unique(ctx, "[[torque]]", raw.torques.iter().map(|t| &t.name));
    let torques: Vec<TorqueRequest> = raw
        .torques
        .iter()
        .map(|t| TorqueRequest {
            name: t.name.0.clone(),
            shapes: lookup(ctx, &t.label, &t.shapes),
            center: t.center,
        })
        .collect();

    let winding_names: Vec<&str> = windings.iter().map(|w| w.name.as_str()).collect();
    let mut swept_winding = None;
    let sweep = match &raw.sweep {
        None => None,
        Some((
            RawSweep::Current {
                winding,
                from,
                to,
                steps,
            },
            _,
        )) => match windings.iter().position(|w| w.name == winding.0) {
            Some(i) => {
                swept_winding = Some(i);
                Some(Sweep::Current {
                    winding: i,
                    from: *from,
                    to: *to,
                    steps: *steps,
                })
            }
            None if raw.declared_windings.contains(&winding.0) => None,
            None => {
                undefined(
                    ctx,
                    &winding.1,
                    "[sweep] current",
                    "winding",
                    &winding.0,
                    &winding_names,
                    "; define it under [windings.NAME]",
                );
                None
            }
        },
        Some((
            RawSweep::Move {
                shapes: names,
                along,
                from,
                to,
                steps,
            },
            span,
        )) => {
            let moving = lookup(ctx, "[sweep] move", names);
            let len = along[0].hypot(along[1]);
            let unit = [along[0] / len, along[1] / len];
            for d in [*from, *to] {
                for &i in &moving {
                    let moved = shapes[i].outline.translated([unit[0] * d, unit[1] * d]);
                    check_moved(
                        ctx,
                        &moved,
                        &outer_outline,
                        tol,
                        span,
                        &shapes[i].name,
                        &format!("a move of {d}"),
                        outer_label,
                    );
                }
            }
            Some(Sweep::Move {
                shapes: moving,
                along: unit,
                from: *from,
                to: *to,
                steps: *steps,
            })
        }
        Some((
            RawSweep::Turn {
                shapes: names,
                center,
                from,
                to,
                steps,
            },
            span,
        )) => {
            let turning = lookup(ctx, "[sweep] turn", names);
            // The path of a rotation can leave the outer between its ends:
            // check up to 37 angles along it.
            let n = (*steps).min(36);
            for k in 0..=n {
                let a = from + (to - from) * k as f64 / n as f64;
                for &i in &turning {
                    let turned = shapes[i].outline.rotated(a, *center);
                    check_moved(
                        ctx,
                        &turned,
                        &outer_outline,
                        tol,
                        span,
                        &shapes[i].name,
                        &format!("a turn of {a}°"),
                        outer_label,
                    );
                }
            }
            Some(Sweep::Turn {
                shapes: turning,
                center: *center,
                from: *from,
                to: *to,
                steps: *steps,
            })
        }
    };

    warn_windings(
        ctx,
        &raw,
        &windings,
        &shapes,
        header.symmetry,
        swept_winding,
    );
    for (i, m) in materials.iter().enumerate().skip(1) {
        if !shapes.iter().any(|s| s.material == i) {
            ctx.warn(
                &material_spans[i],
                format!("material `{}` is not used by any shape", m.name),
            );
        }
    }
    for rs in &raw.shapes {
        if let (Some((_, span)), Some((name, _))) = (&rs.magnetization_angle, &rs.material) {
            if materials
                .iter()
                .any(|m| &m.name == name && m.remanence_t.is_none())
            {
                ctx.warn(
                    span,
                    format!("{}: `magnetization_angle` has no effect: material `{name}` has no `remanence`", rs.label),
                );
            }
        }
    }

    Some(Model {
        source: source.name.clone(),
        title: header
            .title
            .clone()
            .unwrap_or_else(|| source.stem().to_string()),
        symmetry: header.symmetry,
        length_unit: header.length_unit,
        depth,
        element_order: header.element_order,
        mesh,
        materials,
        windings,
        shapes,
        outer: Outer {
            spec: outer_spec,
            outline: outer_outline,
            is_default,
            condition,
        },
        edges,
        probes,
        profiles,
        loops,
        forces,
        torques,
        sweep,
        warnings: Vec::new(),
    })
}

/// Peak memory of mesh, assembly and sparse Cholesky factor per triangle,
/// bytes: measured on this solver (a 4.5 × 10⁵-triangle model, peak
/// resident size), 630 B for P1 and 2.5 kB for P2 elements. The factor's
/// fill grows a little faster than the mesh, so larger meshes need more.
fn solve_bytes_per_triangle(element_order: u8) -> f64 {
    if element_order >= 2 {
        2500.0
    } else {
        630.0
    }
}

/// The triangle limit of a model with this element order: the default
/// limit for P1 elements, and for P2 the count whose memory estimate is the
/// same (about 12.6 GB), so that a P2 model cannot ask for four times the
/// memory a P1 model may.
fn default_max_triangles(element_order: u8) -> usize {
    let budget = DEFAULT_MAX_TRIANGLES as f64 * solve_bytes_per_triangle(1);
    (budget / solve_bytes_per_triangle(element_order)) as usize
}

/// `bytes` as a short figure with a decimal unit (kB ... PB).
fn format_bytes(bytes: f64) -> String {
    let mut value = bytes;
    for unit in ["B", "kB", "MB", "GB", "TB"] {
        if !(value >= 1000.0) {
            return format!("{value:.1} {unit}");
        }
        value /= 1000.0;
    }
    format!("{value:.3e} PB")
}

/// Total length of an outline's loops.
fn perimeter(outline: &Outline) -> f64 {
    outline
        .loops
        .iter()
        .flat_map(|l| &l.segments)
        .map(|s| s.length())
        .sum()
}

fn dist(a: Point, b: Point) -> f64 {
    (a[0] - b[0]).hypot(a[1] - b[1])
}

pub(crate) fn shapes_named(shapes: &[Shape], name: &str) -> Vec<usize> {
    let exact: Vec<usize> = shapes
        .iter()
        .enumerate()
        .filter(|(_, s)| s.name == name)
        .map(|(i, _)| i)
        .collect();
    if !exact.is_empty() {
        return exact;
    }
    shapes
        .iter()
        .enumerate()
        .filter(|(_, s)| s.base_name == name)
        .map(|(i, _)| i)
        .collect()
}

/// The default outer: a circle three times the shapes' bounding circle
/// (planar), or a half-disc on the axis three times the shapes' reach from
/// the middle of their axial span (axisymmetric).
fn default_outer(symmetry: Symmetry, lo: Point, hi: Point) -> OutlineSpec {
    let half = [0.5 * (hi[0] - lo[0]), 0.5 * (hi[1] - lo[1])];
    match symmetry {
        Symmetry::Planar => {
            let center = [0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1])];
            OutlineSpec::Circle {
                center,
                radius: 3.0 * half[0].hypot(half[1]),
            }
        }
        Symmetry::Axisymmetric => {
            let center = [0.0, 0.5 * (lo[1] + hi[1])];
            let reach = hi[0].max(lo[0].abs()).hypot(half[1]);
            OutlineSpec::Sector {
                center,
                inner_radius: 0.0,
                outer_radius: 3.0 * reach,
                start_angle_deg: -90.0,
                end_angle_deg: 90.0,
            }
        }
    }
}

fn open_outer_ok(spec: &OutlineSpec, symmetry: Symmetry) -> bool {
    match (symmetry, spec) {
        (Symmetry::Planar, OutlineSpec::Circle { .. }) => true,
        (Symmetry::Planar, OutlineSpec::Sector { inner_radius, .. }) => *inner_radius == 0.0,
        (
            Symmetry::Axisymmetric,
            OutlineSpec::Sector {
                center,
                inner_radius,
                start_angle_deg,
                end_angle_deg,
                ..
            },
        ) => {
            let start = start_angle_deg.rem_euclid(360.0);
            center[0] == 0.0
                && *inner_radius == 0.0
                && (start - 270.0).abs() < 1e-9
                && (end_angle_deg - start_angle_deg - 180.0).abs() < 1e-9
        }
        _ => false,
    }
}

/// Build an outline from its spec, reporting why it is not a region.
fn outline_of(ctx: &mut Ctx<'_>, spec: &OutlineSpec, span: &Span, owner: &str) -> Option<Outline> {
    if let OutlineSpec::Polygon(points) = spec {
        if let Some(p) = polygon_self_crossing(points) {
            ctx.error(
                ErrorKind::Geometry,
                span,
                format!(
                    "the polygon of {owner} crosses or touches itself near ({:.6}, {:.6}); list its corners in order around the outline",
                    p[0], p[1]
                ),
            );
            return None;
        }
    }
    match spec.to_outline() {
        Ok(o) => Some(o),
        Err(e) => {
            ctx.error(
                ErrorKind::Geometry,
                span,
                format!("the {} of {owner} is not a valid region: {e}", spec.kind()),
            );
            None
        }
    }
}

/// The shapes of one `[[shape]]` table: translated, rotated, then repeated.
fn expand_shape(
    ctx: &mut Ctx<'_>,
    rs: &RawShape,
    materials: &[Material],
    windings: &[Winding],
    raw: &RawModel,
) -> Vec<Shape> {
    let material = match &rs.material {
        None => 0,
        Some((name, span)) => match materials.iter().position(|m| &m.name == name) {
            Some(i) => i,
            None => {
                if !raw.declared_materials.contains(name) {
                    let known: Vec<&str> = materials.iter().map(|m| m.name.as_str()).collect();
                    undefined(
                        ctx,
                        span,
                        &rs.label,
                        "material",
                        name,
                        &known,
                        "; define it under [materials.NAME]",
                    );
                }
                0
            }
        },
    };
    let excitation = match (&rs.winding, rs.current) {
        (Some((name, span)), _) => match windings.iter().position(|w| &w.name == name) {
            Some(i) => Excitation::Winding {
                winding: i,
                direction: rs.direction,
            },
            None => {
                if !raw.declared_windings.contains(name) {
                    let known: Vec<&str> = windings.iter().map(|w| w.name.as_str()).collect();
                    undefined(
                        ctx,
                        span,
                        &rs.label,
                        "winding",
                        name,
                        &known,
                        "; define it under [windings.NAME]",
                    );
                }
                Excitation::None
            }
        },
        (None, Some(amps)) => Excitation::Current {
            amps: rs.direction * amps,
        },
        (None, None) => Excitation::None,
    };
    let Some(base) = outline_of(ctx, &rs.spec, &rs.span, &rs.label) else {
        return Vec::new();
    };
    let mut placed = base;
    if let Some(t) = rs.translate {
        placed = placed.translated(t);
    }
    let rotate = rs.rotate.unwrap_or(0.0);
    if rs.rotate.is_some() {
        placed = placed.rotated(rotate, rs.rotate_about);
    }
    let line = ctx.line(&rs.span);
    let angle0 = rs.magnetization_angle.as_ref().map_or(0.0, |(a, _)| *a) + rotate;
    let one =
        |name: String, copy: Option<usize>, outline: Outline, flip: bool, extra_angle: f64| Shape {
            name,
            base_name: rs.name.clone(),
            copy,
            spec: rs.spec.clone(),
            outline,
            material,
            mesh_size: rs.mesh_size.unwrap_or(f64::NAN),
            excitation: match excitation {
                Excitation::Winding { winding, direction } if flip => Excitation::Winding {
                    winding,
                    direction: -direction,
                },
                Excitation::Current { amps } if flip => Excitation::Current { amps: -amps },
                ref e => e.clone(),
            },
            magnetization_angle_deg: angle0 + extra_angle + if flip { 180.0 } else { 0.0 },
            table_index: rs.index,
            line,
        };
    match &rs.repeat {
        None => vec![one(rs.name.clone(), None, placed, false, 0.0)],
        Some(rep) => {
            if rep.alternate
                && rep.count % 2 == 1
                && ((rep.count as f64 * rep.angle).abs() - 360.0).abs() < 1e-6
            {
                ctx.warn(
                    &rep.span,
                    format!(
                        "{}: `alternate` with an odd count ({}) around the full circle puts two like poles side by side",
                        rs.label, rep.count
                    ),
                );
            }
            if (rep.count as f64 - 1.0) * rep.angle.abs() >= 360.0 - 1e-9 && rep.count > 1 {
                ctx.warn(
                    &rep.span,
                    format!(
                        "{}: `repeat` goes round more than once, so copies overlap",
                        rs.label
                    ),
                );
            }
            (0..rep.count)
                .map(|k| {
                    let a = rep.angle * k as f64;
                    let outline = if k == 0 {
                        placed.clone()
                    } else {
                        placed.rotated(a, rep.center)
                    };
                    one(
                        format!("{}[{k}]", rs.name),
                        Some(k),
                        outline,
                        rep.alternate && k % 2 == 1,
                        a,
                    )
                })
                .collect()
        }
    }
}

fn check_stretch(
    ctx: &mut Ctx<'_>,
    outer: &Outline,
    a: Point,
    b: Point,
    tol: f64,
    span: &Span,
    label: &str,
) -> bool {
    if dist(a, b) <= tol {
        ctx.error(
            ErrorKind::Geometry,
            span,
            format!("{label}: `from` and `to` are the same point; give a stretch"),
        );
        return false;
    }
    if !on_straight_edge(outer, a, b, tol) {
        ctx.error(
            ErrorKind::Geometry,
            span,
            format!(
                "{label}: the stretch from ({}, {}) to ({}, {}) is not along a straight part of the outer edge",
                a[0], a[1], b[0], b[1]
            ),
        );
        return false;
    }
    true
}

fn outside_error(ctx: &mut Ctx<'_>, span: &Span, owner: &str, p: Point, outer_label: &str) {
    ctx.error(
        ErrorKind::Geometry,
        span,
        format!(
            "{owner} at ({:.6}, {:.6}) lies outside {outer_label}; move it inside",
            p[0], p[1]
        ),
    );
}

#[allow(clippy::too_many_arguments)]
fn check_moved(
    ctx: &mut Ctx<'_>,
    moved: &Outline,
    outer: &Outline,
    tol: f64,
    span: &Span,
    name: &str,
    how: &str,
    outer_label: &str,
) {
    if let Some(p) = sample_points(moved)
        .into_iter()
        .find(|&p| !inside_or_on(outer, p, tol))
    {
        ctx.error(
            ErrorKind::Geometry,
            span,
            format!(
                "[sweep]: {how} takes shape `{name}` outside {outer_label} (for example to ({:.6}, {:.6})); shorten the sweep or enlarge the outer shape",
                p[0], p[1]
            ),
        );
    }
}

fn check_unique<'a>(ctx: &mut Ctx<'_>, table: &str, names: impl Iterator<Item = &'a NameRef>) {
    let mut seen: HashMap<&str, ()> = HashMap::new();
    for (name, span) in names {
        if seen.insert(name.as_str(), ()).is_some() {
            ctx.error(
                ErrorKind::DuplicateName,
                span,
                format!("{table}: the name `{name}` is used twice; results are keyed by name, so make it unique"),
            );
        }
    }
}

fn warn_windings(
    ctx: &mut Ctx<'_>,
    raw: &RawModel,
    windings: &[Winding],
    shapes: &[Shape],
    symmetry: Symmetry,
    swept: Option<usize>,
) {
    for (i, (w, rw)) in windings.iter().zip(&raw.windings).enumerate() {
        let side = |d: f64| {
            shapes.iter().any(
                |s| matches!(s.excitation, Excitation::Winding { winding, direction } if winding == i && direction == d),
            )
        };
        let (go, ret) = (side(1.0), side(-1.0));
        if !go && !ret {
            ctx.warn(
                &rw.span,
                format!(
                    "winding `{}` is in no shape, so it links no flux; add `winding = \"{}\"` to the shapes holding its turns",
                    w.name, w.name
                ),
            );
        } else if symmetry == Symmetry::Planar && go != ret {
            let (has, lacks) = if go {
                ("go (+1)", "-1")
            } else {
                ("return (-1)", "+1")
            };
            ctx.warn(
                &rw.span,
                format!(
                    "planar winding `{}` has only a {has} side: its current returns outside the model. If the return side belongs to the device, add its shapes with direction = {lacks}",
                    w.name
                ),
            );
        }
        if rw.current.is_none() && swept != Some(i) {
            ctx.warn(
                &rw.span,
                format!("winding `{}` has no `current`; it carries 0 A", w.name),
            );
        }
    }
}
