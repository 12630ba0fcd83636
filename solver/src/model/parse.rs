//! First pass: read every table of the model into raw values, checking keys,
//! types and the range of each value on its own. Cross-references and
//! geometry are checked afterwards, in `validate`.

use fluxwright_mesher::Point;

use super::error::ErrorKind;
use super::library::{library_material, library_materials};
use super::read::{Ctx, Field, Reported, Section, Span};
use super::suggest;
use super::types::{BhCurve, ForceMethod, LengthUnit, OutlineSpec, Permeability, Symmetry};
use super::FileLoader;

pub(crate) const ROOT_KEYS: &[&str] = &[
    "model",
    "mesh",
    "materials",
    "windings",
    "shape",
    "outer",
    "edge",
    "probe",
    "profile",
    "loop",
    "force",
    "torque",
    "sweep",
];
const MODEL_KEYS: &[&str] = &["title", "symmetry", "depth", "length_unit", "element_order"];
const MESH_KEYS: &[&str] = &["max_size", "min_angle", "growth", "adapt", "target_error"];
const MATERIAL_KEYS: &[&str] = &[
    "relative_permeability",
    "bh_curve",
    "bh_curve_file",
    "stacking_factor",
    "remanence",
    "from_library",
];
const BH_KEYS: &[&str] = &["h", "b"];
const WINDING_KEYS: &[&str] = &["turns", "current"];
pub(crate) const OUTLINE_KEYS: &[&str] = &["rectangle", "circle", "polygon", "sector"];
const SHAPE_OTHER_KEYS: &[&str] = &[
    "name",
    "material",
    "mesh_size",
    "winding",
    "direction",
    "current",
    "magnetization_angle",
    "translate",
    "rotate",
    "rotate_about",
    "repeat",
];
const RECTANGLE_KEYS: &[&str] = &["min", "max"];
const CIRCLE_KEYS: &[&str] = &["center", "radius"];
const SECTOR_KEYS: &[&str] = &[
    "center",
    "inner_radius",
    "outer_radius",
    "start_angle",
    "end_angle",
];
const REPEAT_KEYS: &[&str] = &["count", "angle", "center", "alternate"];
const OUTER_KEYS: &[&str] = &["shape", "condition", "field"];
const EDGE_KEYS: &[&str] = &["from", "to", "condition", "partner"];
const PARTNER_KEYS: &[&str] = &["from", "to"];
const PROBE_KEYS: &[&str] = &["name", "at"];
const PROFILE_KEYS: &[&str] = &["name", "from", "to", "samples"];
const FORCE_KEYS: &[&str] = &["name", "shapes", "method"];
const TORQUE_KEYS: &[&str] = &["name", "shapes", "center"];
const SWEEP_KEYS: &[&str] = &["current", "move", "turn"];
const SWEEP_CURRENT_KEYS: &[&str] = &["winding", "from", "to", "steps"];
const SWEEP_MOVE_KEYS: &[&str] = &["shapes", "along", "from", "to", "steps"];
const SWEEP_TURN_KEYS: &[&str] = &["shapes", "center", "from", "to", "steps"];

/// Most copies a `repeat` may make (keeps a typo from exhausting memory).
pub(crate) const MAX_REPEAT: i64 = 10_000;
/// Most samples a profile may ask for.
const MAX_SAMPLES: i64 = 1_000_000;
/// Most sweep steps.
const MAX_STEPS: i64 = 100_000;
/// Most adaptive refinement rounds.
const MAX_ADAPT: i64 = 100;

const MU0: f64 = 4e-7 * std::f64::consts::PI;

/// `[model]` values (before defaults that need the shapes).
pub(crate) struct RawHeader {
    pub title: Option<String>,
    pub symmetry: Symmetry,
    pub depth: Option<(f64, Span)>,
    pub length_unit: LengthUnit,
    pub element_order: u8,
}

/// `[mesh]` values as given.
#[derive(Default)]
pub(crate) struct RawMesh {
    pub max_size: Option<f64>,
    pub min_angle: Option<f64>,
    pub growth: Option<f64>,
    pub adapt: Option<u32>,
    pub target_error: Option<f64>,
}

pub(crate) struct RawMaterial {
    pub name: String,
    pub span: Span,
    pub permeability: Permeability,
    pub stacking_factor: f64,
    pub remanence: Option<f64>,
    pub from_library: Option<String>,
}

pub(crate) struct RawWinding {
    pub name: String,
    pub span: Span,
    pub turns: f64,
    pub current: Option<f64>,
}

pub(crate) struct RawRepeat {
    pub count: usize,
    pub angle: f64,
    pub center: Point,
    pub alternate: bool,
    pub span: Span,
}

/// A name with where it was written.
pub(crate) type NameRef = (String, Span);

pub(crate) struct RawShape {
    /// 1-based index of the table.
    pub index: usize,
    pub label: String,
    pub span: Span,
    pub name: String,
    pub name_span: Span,
    pub spec: OutlineSpec,
    pub material: Option<NameRef>,
    pub mesh_size: Option<f64>,
    pub winding: Option<NameRef>,
    pub current: Option<f64>,
    pub direction: f64,
    pub magnetization_angle: Option<(f64, Span)>,
    pub translate: Option<Point>,
    pub rotate: Option<f64>,
    pub rotate_about: Point,
    pub repeat: Option<RawRepeat>,
}

pub(crate) enum RawCondition {
    Open,
    ZeroPotential,
    FluxNormal,
    UniformField,
}

pub(crate) struct RawOuter {
    pub spec: Option<OutlineSpec>,
    pub span: Span,
    pub condition: RawCondition,
    pub field: Option<Point>,
}

pub(crate) enum RawEdgeKind {
    ZeroPotential,
    FluxNormal,
    Periodic([Point; 2]),
    AntiPeriodic([Point; 2]),
}

pub(crate) struct RawEdge {
    pub label: String,
    pub span: Span,
    pub from: Point,
    pub to: Point,
    pub kind: RawEdgeKind,
    pub partner_span: Span,
}

pub(crate) struct RawProbe {
    pub name: NameRef,
    pub at: Point,
}

pub(crate) struct RawProfile {
    pub name: NameRef,
    pub from: Point,
    pub to: Point,
    pub samples: usize,
}

pub(crate) struct RawLoop {
    pub name: NameRef,
    pub spec: OutlineSpec,
}

pub(crate) struct RawForce {
    pub name: NameRef,
    pub label: String,
    pub shapes: Vec<NameRef>,
    pub method: ForceMethod,
}

pub(crate) struct RawTorque {
    pub name: NameRef,
    pub label: String,
    pub shapes: Vec<NameRef>,
    pub center: Point,
}

pub(crate) enum RawSweep {
    Current {
        winding: NameRef,
        from: f64,
        to: f64,
        steps: usize,
    },
    Move {
        shapes: Vec<NameRef>,
        along: Point,
        from: f64,
        to: f64,
        steps: usize,
    },
    Turn {
        shapes: Vec<NameRef>,
        center: Point,
        from: f64,
        to: f64,
        steps: usize,
    },
}

/// Everything read in the first pass. Items that failed are left out (their
/// errors are in the context), so later checks do not repeat them.
pub(crate) struct RawModel {
    pub header: RawHeader,
    pub mesh: RawMesh,
    pub materials: Vec<RawMaterial>,
    pub windings: Vec<RawWinding>,
    pub shapes: Vec<RawShape>,
    /// Number of `[[shape]]` tables, good or bad.
    pub shape_tables: usize,
    pub outer: RawOuter,
    pub edges: Vec<RawEdge>,
    pub probes: Vec<RawProbe>,
    pub profiles: Vec<RawProfile>,
    pub loops: Vec<RawLoop>,
    pub forces: Vec<RawForce>,
    pub torques: Vec<RawTorque>,
    pub sweep: Option<(RawSweep, Span)>,
    /// Names declared under [materials], [windings] and in [[shape]] tables,
    /// good or bad: a reference to a bad one is not reported again.
    pub declared_materials: Vec<String>,
    pub declared_windings: Vec<String>,
    pub declared_shapes: Vec<String>,
}

/// Turn "a bad value was reported" into "no value", for optional keys.
fn ok<T>(f: Field<T>) -> Option<T> {
    f.ok().flatten()
}

pub(crate) fn read_model(
    ctx: &mut Ctx<'_>,
    root: &Section<'_>,
    loader: &dyn FileLoader,
) -> RawModel {
    ctx.check_keys(root, ROOT_KEYS);
    let header = read_header(ctx, root);
    let mesh = read_mesh(ctx, root);
    let materials = read_materials(ctx, root, loader);
    let windings = read_windings(ctx, root);
    let shape_sections = ctx.sections(root, "shape");
    // A `shape` key of the wrong type counts as a table, so that it is not
    // also reported as "no shapes".
    let shape_tables = shape_sections
        .len()
        .max(usize::from(root.table.contains_key("shape")));
    let declared_shapes = shape_sections
        .iter()
        .enumerate()
        .map(|(i, s)| {
            s.as_ref()
                .and_then(|s| s.table.get("name"))
                .and_then(|n| n.as_str())
                .map_or_else(|| format!("shape-{}", i + 1), str::to_string)
        })
        .collect();
    let declared = |key: &str| -> Vec<String> {
        root.table
            .get(key)
            .and_then(|i| i.as_table_like())
            .map_or_else(Vec::new, |t| t.iter().map(|(k, _)| k.to_string()).collect())
    };
    let (declared_materials, declared_windings) = (declared("materials"), declared("windings"));
    let shapes = shape_sections
        .into_iter()
        .enumerate()
        .filter_map(|(i, s)| s.and_then(|s| read_shape(ctx, s, i + 1)))
        .collect();
    let outer = read_outer(ctx, root);
    let edges = ctx
        .sections(root, "edge")
        .into_iter()
        .flatten()
        .filter_map(|s| read_edge(ctx, &s))
        .collect();
    let probes = read_named(ctx, root, "probe", read_probe);
    let profiles = read_named(ctx, root, "profile", read_profile);
    let loops = read_named(ctx, root, "loop", read_loop);
    let forces = read_named(ctx, root, "force", read_force);
    let torques = read_named(ctx, root, "torque", read_torque);
    let sweep = read_sweep(ctx, root);
    RawModel {
        header,
        mesh,
        materials,
        windings,
        shapes,
        shape_tables,
        outer,
        edges,
        probes,
        profiles,
        loops,
        forces,
        torques,
        sweep,
        declared_materials,
        declared_windings,
        declared_shapes,
    }
}

/// Read an array of named tables with `f`, giving default names `KEY-N`.
fn read_named<T>(
    ctx: &mut Ctx<'_>,
    root: &Section<'_>,
    key: &str,
    f: fn(&mut Ctx<'_>, &Section<'_>, NameRef) -> Option<T>,
) -> Vec<T> {
    let mut out = Vec::new();
    for (i, sec) in ctx.sections(root, key).into_iter().enumerate() {
        let Some(mut sec) = sec else { continue };
        let name = match ctx.string(&sec, "name") {
            Ok(Some(n)) => {
                let span = ctx.span_of(&sec, "name");
                if check_name(ctx, n, &span, &format!("[[{key}]] #{}", i + 1)).is_err() {
                    continue;
                }
                (n.to_string(), span)
            }
            Ok(None) => (format!("{key}-{}", i + 1), sec.span.clone()),
            Err(_) => continue,
        };
        sec.label = format!("[[{key}]] `{}`", name.0);
        if let Some(t) = f(ctx, &sec, name) {
            out.push(t);
        }
    }
    out
}

/// Names become results keys and file names: keep them printable and free
/// of path separators and the `[` `]` used for repeat copies.
fn check_name(ctx: &mut Ctx<'_>, name: &str, span: &Span, owner: &str) -> Result<(), Reported> {
    if name.trim().is_empty() {
        return Err(ctx.error(
            ErrorKind::OutOfRange,
            span,
            format!("the name of {owner} is empty; give it a name"),
        ));
    }
    if let Some(c) = name
        .chars()
        .find(|c| c.is_control() || matches!(c, '/' | '\\' | '[' | ']' | '"'))
    {
        return Err(ctx.error(
            ErrorKind::OutOfRange,
            span,
            format!("the name `{}` of {owner} contains {c:?}; use letters, digits, spaces, `-`, `_` or `.`", name.escape_debug()),
        ));
    }
    Ok(())
}

fn read_header(ctx: &mut Ctx<'_>, root: &Section<'_>) -> RawHeader {
    let mut header = RawHeader {
        title: None,
        symmetry: Symmetry::Planar,
        depth: None,
        length_unit: LengthUnit::Millimetre,
        element_order: 2,
    };
    let Some(sec) = ok(ctx.section(root, "model", "[model]".into())) else {
        return header;
    };
    ctx.check_keys(&sec, MODEL_KEYS);
    header.title = ok(ctx.string(&sec, "title")).map(str::to_string);
    if let Some(s) = ok(ctx.choice(&sec, "symmetry", &["planar", "axisymmetric"])) {
        header.symmetry = if s == "planar" {
            Symmetry::Planar
        } else {
            Symmetry::Axisymmetric
        };
    }
    let units: Vec<&str> = LengthUnit::ALL.iter().map(|(_, s)| *s).collect();
    if let Some(u) = ok(ctx.choice(&sec, "length_unit", &units)) {
        if let Some((unit, _)) = LengthUnit::ALL.iter().find(|(_, s)| *s == u) {
            header.length_unit = *unit;
        }
    }
    if let Some(d) = ok(ctx.number_where(
        &sec,
        "depth",
        |d| d > 0.0,
        "must be > 0 (the out-of-plane length)",
    )) {
        header.depth = Some((d, ctx.span_of(&sec, "depth")));
    }
    if let Some(order) = ok(ctx.integer(&sec, "element_order", 1, 2)) {
        header.element_order = order as u8;
    }
    header
}

fn read_mesh(ctx: &mut Ctx<'_>, root: &Section<'_>) -> RawMesh {
    let Some(sec) = ok(ctx.section(root, "mesh", "[mesh]".into())) else {
        return RawMesh::default();
    };
    ctx.check_keys(&sec, MESH_KEYS);
    RawMesh {
        max_size: ok(ctx.number_where(&sec, "max_size", |x| x > 0.0, "must be > 0")),
        // Refinement to a minimum angle is guaranteed to end only up to about
        // 20.7° (Ruppert) and works in practice to about 33-34°.
        min_angle: ok(ctx.number_where(
            &sec,
            "min_angle",
            |x| x > 0.0 && x <= 34.0,
            "must be in (0, 34] degrees (above about 34° refinement may never end)",
        )),
        growth: ok(ctx.number_where(
            &sec,
            "growth",
            |x| x > 1.0,
            "must be > 1 (a ratio of sizes per element)",
        )),
        adapt: ok(ctx.integer(&sec, "adapt", 0, MAX_ADAPT)).map(|n| n as u32),
        target_error: ok(ctx.number_where(
            &sec,
            "target_error",
            |x| x > 0.0 && x < 1.0,
            "must be in (0, 1) (a relative energy error)",
        )),
    }
}

fn read_materials(
    ctx: &mut Ctx<'_>,
    root: &Section<'_>,
    loader: &dyn FileLoader,
) -> Vec<RawMaterial> {
    let Some(all) = ok(ctx.section(root, "materials", "[materials]".into())) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    let names: Vec<&str> = all.table.iter().map(|(k, _)| k).collect();
    for name in names {
        let label = format!("[materials.{name}]");
        let sec = match ctx.section(&all, name, label.clone()) {
            Ok(Some(s)) => s,
            _ => continue,
        };
        if check_name(ctx, name, &sec.span, "a material").is_err() {
            continue;
        }
        if name == "air" {
            ctx.error(
                ErrorKind::DuplicateName,
                &sec.span,
                "[materials.air]: `air` is built in (μr = 1); give your material another name",
            );
            continue;
        }
        if let Some(m) = read_material(ctx, &sec, name, loader) {
            out.push(m);
        }
    }
    out
}

fn read_material(
    ctx: &mut Ctx<'_>,
    sec: &Section<'_>,
    name: &str,
    loader: &dyn FileLoader,
) -> Option<RawMaterial> {
    let unknown_keys = ctx.check_keys(sec, MATERIAL_KEYS);
    let mut bad = false;
    let library = match ctx.string(sec, "from_library") {
        Ok(Some(lib)) => match library_material(lib) {
            Some(m) => Some(m),
            None => {
                let span = ctx.span_of(sec, "from_library");
                let names: Vec<&str> = library_materials().iter().map(|m| m.name).collect();
                let hint = suggest::did_you_mean(lib, names.iter().copied());
                ctx.error(
                    ErrorKind::UndefinedName,
                    &span,
                    format!(
                        "{}: `from_library = \"{lib}\"` is not a built-in material{hint} (built in: {})",
                        sec.label,
                        names.join(", ")
                    ),
                );
                return None;
            }
        },
        Ok(None) => None,
        Err(_) => return None,
    };

    let given: Vec<&str> = ["relative_permeability", "bh_curve", "bh_curve_file"]
        .into_iter()
        .filter(|k| sec.table.contains_key(k))
        .collect();
    if given.len() > 1 {
        let span = ctx.span_of(sec, given[1]);
        ctx.error(
            ErrorKind::Conflict,
            &span,
            format!(
                "{} gives both `{}` and `{}`; a material has exactly one of relative_permeability, bh_curve or bh_curve_file",
                sec.label, given[0], given[1]
            ),
        );
        return None;
    }

    let mut permeability = library.map(|m| match (m.relative_permeability, m.bh_curve) {
        (_, Some((h, b))) => Permeability::Curve(BhCurve {
            h_a_per_m: h.to_vec(),
            b_t: b.to_vec(),
        }),
        (mu, None) => Permeability::Linear {
            relative: mu.unwrap_or(1.0),
        },
    });
    match ctx.number_where(
        sec,
        "relative_permeability",
        |x| x >= 1.0,
        "must be ≥ 1 (air is 1; diamagnetic values below 1 are not supported)",
    ) {
        Ok(Some(mu)) => permeability = Some(Permeability::Linear { relative: mu }),
        Ok(None) => {}
        Err(_) => bad = true,
    }
    if sec.table.contains_key("bh_curve") {
        match read_bh_inline(ctx, sec) {
            Some(c) => permeability = Some(Permeability::Curve(c)),
            None => bad = true,
        }
    }
    match ctx.string(sec, "bh_curve_file") {
        Ok(Some(path)) => {
            let span = ctx.span_of(sec, "bh_curve_file");
            match read_bh_file(ctx, sec, path, &span, loader) {
                Some(c) => permeability = Some(Permeability::Curve(c)),
                None => bad = true,
            }
        }
        Ok(None) => {}
        Err(_) => bad = true,
    }
    let stacking_factor = match ctx.number_where(
        sec,
        "stacking_factor",
        |f| f > 0.0 && f <= 1.0,
        "must be in (0, 1] (the iron fraction of a lamination stack)",
    ) {
        Ok(f) => f.unwrap_or(1.0),
        Err(_) => {
            bad = true;
            1.0
        }
    };
    let remanence = match ctx.number_where(
        sec,
        "remanence",
        |b| b > 0.0,
        "must be > 0 T (set the direction with the shape's `magnetization_angle`)",
    ) {
        Ok(b) => b.or(library.and_then(|m| m.remanence_t)),
        Err(_) => {
            bad = true;
            None
        }
    };
    if bad {
        return None;
    }
    let Some(permeability) = permeability else {
        if unknown_keys > 0 {
            // Most likely a misspelt permeability key, already reported.
            return None;
        }
        ctx.error(
            ErrorKind::Conflict,
            &sec.span,
            format!(
                "{} has no permeability: give one of `relative_permeability` (linear, ≥ 1), `bh_curve = {{ h = [...], b = [...] }}`, `bh_curve_file` or `from_library`",
                sec.label
            ),
        );
        return None;
    };
    if remanence.is_some() && matches!(permeability, Permeability::Curve(_)) {
        let span = ctx.span_of(sec, "remanence");
        ctx.error(
            ErrorKind::Conflict,
            &span,
            format!(
                "{}: a magnet (`remanence`) is modelled with a linear recoil permeability; replace the B-H curve by `relative_permeability` (typically 1.05 for NdFeB)",
                sec.label
            ),
        );
        return None;
    }
    Some(RawMaterial {
        name: name.to_string(),
        span: sec.span.clone(),
        permeability,
        stacking_factor,
        remanence,
        from_library: library.map(|m| m.name.to_string()),
    })
}

fn read_bh_inline(ctx: &mut Ctx<'_>, sec: &Section<'_>) -> Option<BhCurve> {
    let curve = ok(ctx.section(sec, "bh_curve", format!("`bh_curve` of {}", sec.label)))?;
    ctx.check_keys(&curve, BH_KEYS);
    let h = ctx.numbers(&curve, "h");
    let b = ctx.numbers(&curve, "b");
    let (h, b) = match (h, b) {
        (Ok(Some(h)), Ok(Some(b))) => (h, b),
        (h, b) => {
            for (key, f) in [
                ("h", h.is_ok_and(|x| x.is_none())),
                ("b", b.is_ok_and(|x| x.is_none())),
            ] {
                if f {
                    ctx.missing(
                        &curve,
                        key,
                        if key == "h" {
                            " (H values in A/m)"
                        } else {
                            " (B values in T)"
                        },
                    );
                }
            }
            return None;
        }
    };
    match check_bh(&h, &b) {
        Ok(()) => Some(BhCurve {
            h_a_per_m: h,
            b_t: b,
        }),
        Err(why) => {
            ctx.error(
                ErrorKind::BhCurve,
                &curve.span,
                format!("the B-H curve of {} {why}", sec.label),
            );
            None
        }
    }
}

fn read_bh_file(
    ctx: &mut Ctx<'_>,
    sec: &Section<'_>,
    path: &str,
    span: &Span,
    loader: &dyn FileLoader,
) -> Option<BhCurve> {
    let text = match loader.read_to_string(path) {
        Ok(t) => t,
        Err(why) => {
            ctx.error(
                ErrorKind::File,
                span,
                format!(
                    "{}: cannot read `bh_curve_file` \"{path}\": {why}",
                    sec.label
                ),
            );
            return None;
        }
    };
    let (h, b) = match parse_bh_csv(&text) {
        Ok(hb) => hb,
        Err(why) => {
            ctx.error(
                ErrorKind::File,
                span,
                format!("{}: `bh_curve_file` \"{path}\" {why}", sec.label),
            );
            return None;
        }
    };
    match check_bh(&h, &b) {
        Ok(()) => Some(BhCurve {
            h_a_per_m: h,
            b_t: b,
        }),
        Err(why) => {
            ctx.error(
                ErrorKind::BhCurve,
                span,
                format!("the B-H curve in \"{path}\" ({}) {why}", sec.label),
            );
            None
        }
    }
}

/// Parse a CSV of H (A/m), B (T) pairs. Separators: comma, semicolon, tab
/// or spaces. A first line that is not numeric is a header; blank lines and
/// lines starting with `#` are skipped.
pub(crate) fn parse_bh_csv(text: &str) -> Result<(Vec<f64>, Vec<f64>), String> {
    let (mut h, mut b) = (Vec::new(), Vec::new());
    let mut first_content = true;
    for (i, line) in text.lines().enumerate() {
        let line = line.trim().trim_start_matches('\u{feff}');
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let fields: Vec<&str> = line
            .split(|c: char| c == ',' || c == ';' || c.is_whitespace())
            .filter(|f| !f.is_empty())
            .collect();
        let numbers: Option<Vec<f64>> = fields.iter().map(|f| f.parse::<f64>().ok()).collect();
        let is_first = std::mem::replace(&mut first_content, false);
        match numbers {
            Some(v) if v.len() == 2 => {
                if !v.iter().all(|x| x.is_finite()) {
                    return Err(format!("line {}: H and B must be finite numbers", i + 1));
                }
                h.push(v[0]);
                b.push(v[1]);
            }
            None if is_first => {} // header
            _ => {
                return Err(format!(
                    "line {}: expected two numbers `H, B`, found \"{line}\"",
                    i + 1
                ))
            }
        }
    }
    Ok((h, b))
}

/// The format's rules for a B-H curve, as "must ..." text on failure.
pub(crate) fn check_bh(h: &[f64], b: &[f64]) -> Result<(), String> {
    if h.len() != b.len() {
        return Err(format!(
            "has {} H values but {} B values; give one B per H",
            h.len(),
            b.len()
        ));
    }
    if h.len() < 2 {
        return Err(format!(
            "has {} point(s); give at least 2 (starting at H = 0, B = 0)",
            h.len()
        ));
    }
    if h[0] != 0.0 || b[0] != 0.0 {
        return Err(format!(
            "must start at H = 0, B = 0, but starts at H = {}, B = {}",
            h[0], b[0]
        ));
    }
    for k in 1..h.len() {
        if h[k] <= h[k - 1] {
            return Err(format!(
                "must be strictly increasing in H, but point {} has H = {} after H = {}",
                k + 1,
                h[k],
                h[k - 1]
            ));
        }
        if b[k] <= b[k - 1] {
            return Err(format!(
                "must be strictly increasing in B, but point {} has B = {} after B = {}",
                k + 1,
                b[k],
                b[k - 1]
            ));
        }
        // B ≥ μ0 H holds for any material with μr ≥ 1; failing it usually
        // means H in kA/m or Oe, or B in mT or G.
        if b[k] < MU0 * h[k] * (1.0 - 1e-9) {
            return Err(format!(
                "has B/H below μ0 at point {} (H = {} A/m, B = {} T), i.e. μr < 1; check the units (H in A/m, B in T)",
                k + 1,
                h[k],
                b[k]
            ));
        }
    }
    Ok(())
}

fn read_windings(ctx: &mut Ctx<'_>, root: &Section<'_>) -> Vec<RawWinding> {
    let Some(all) = ok(ctx.section(root, "windings", "[windings]".into())) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    let names: Vec<&str> = all.table.iter().map(|(k, _)| k).collect();
    for name in names {
        let sec = match ctx.section(&all, name, format!("[windings.{name}]")) {
            Ok(Some(s)) => s,
            _ => continue,
        };
        if check_name(ctx, name, &sec.span, "a winding").is_err() {
            continue;
        }
        ctx.check_keys(&sec, WINDING_KEYS);
        let turns = ctx.number_where(&sec, "turns", |n| n > 0.0, "must be > 0 (the series turns)");
        let current = ctx.number(&sec, "current");
        match (turns, current) {
            (Ok(Some(turns)), Ok(current)) => out.push(RawWinding {
                name: name.to_string(),
                span: sec.span.clone(),
                turns,
                current,
            }),
            (Ok(None), _) => {
                ctx.missing(&sec, "turns", " (the series turns, > 0)");
            }
            _ => {}
        }
    }
    out
}

/// Exactly one outline key of `sec`, read into a spec. `what` names the
/// owner in messages.
pub(crate) fn read_outline(ctx: &mut Ctx<'_>, sec: &Section<'_>) -> Field<OutlineSpec> {
    let present: Vec<&str> = OUTLINE_KEYS
        .iter()
        .copied()
        .filter(|k| sec.table.contains_key(k))
        .collect();
    match present.len() {
        0 => return Ok(None),
        1 => {}
        _ => {
            let span = ctx.span_of(sec, present[1]);
            return Err(ctx.error(
                ErrorKind::Conflict,
                &span,
                format!(
                    "{} has both `{}` and `{}`; give exactly one outline (rectangle, circle, polygon or sector)",
                    sec.label, present[0], present[1]
                ),
            ));
        }
    }
    let key = present[0];
    if key == "polygon" {
        let Some(points) = ctx.points(sec, "polygon")? else {
            return Ok(None);
        };
        if points.len() < 3 {
            let span = ctx.span_of(sec, "polygon");
            return Err(ctx.error(
                ErrorKind::Geometry,
                &span,
                format!(
                    "the polygon of {} has {} corner(s); a polygon needs at least 3",
                    sec.label,
                    points.len()
                ),
            ));
        }
        return Ok(Some(OutlineSpec::Polygon(points)));
    }
    let Some(sub) = ctx.section(sec, key, format!("`{key}` of {}", sec.label))? else {
        return Ok(None);
    };
    let need_point = |ctx: &mut Ctx<'_>, k: &str| -> Result<Point, Reported> {
        match ctx.point(&sub, k)? {
            Some(p) => Ok(p),
            None => Err(ctx.missing(&sub, k, " = [x, y]")),
        }
    };
    match key {
        "rectangle" => {
            ctx.check_keys(&sub, RECTANGLE_KEYS);
            let min = need_point(ctx, "min");
            let max = need_point(ctx, "max");
            let (min, max) = (min?, max?);
            if !(max[0] > min[0] && max[1] > min[1]) {
                return Err(ctx.error(
                    ErrorKind::Geometry,
                    &sub.span,
                    format!(
                        "the rectangle of {} has no area: `max` {:?} must be above and right of `min` {:?}",
                        sec.label, max, min
                    ),
                ));
            }
            Ok(Some(OutlineSpec::Rectangle { min, max }))
        }
        "circle" => {
            ctx.check_keys(&sub, CIRCLE_KEYS);
            let center = need_point(ctx, "center");
            let radius = match ctx.number_where(&sub, "radius", |r| r > 0.0, "must be > 0") {
                Ok(Some(r)) => Ok(r),
                Ok(None) => Err(ctx.missing(&sub, "radius", " (> 0)")),
                Err(e) => Err(e),
            };
            Ok(Some(OutlineSpec::Circle {
                center: center?,
                radius: radius?,
            }))
        }
        _ => {
            ctx.check_keys(&sub, SECTOR_KEYS);
            let center = need_point(ctx, "center");
            let inner = ctx.number_where(&sub, "inner_radius", |r| r >= 0.0, "must be ≥ 0");
            let outer = match ctx.number_where(&sub, "outer_radius", |r| r > 0.0, "must be > 0") {
                Ok(Some(r)) => Ok(r),
                Ok(None) => Err(ctx.missing(&sub, "outer_radius", " (> 0)")),
                Err(e) => Err(e),
            };
            let start = ctx.number(&sub, "start_angle");
            let end = ctx.number(&sub, "end_angle");
            let (center, outer_radius) = (center?, outer?);
            let inner_radius = inner?.unwrap_or(0.0);
            let start_angle_deg = start?.unwrap_or(0.0);
            let end_angle_deg = end?.unwrap_or(start_angle_deg + 360.0);
            if outer_radius <= inner_radius {
                return Err(ctx.error(
                    ErrorKind::Geometry,
                    &sub.span,
                    format!(
                        "the sector of {} has outer_radius {outer_radius} not above inner_radius {inner_radius}",
                        sec.label
                    ),
                ));
            }
            let sweep = end_angle_deg - start_angle_deg;
            if !(sweep > 0.0 && sweep <= 360.0 + 1e-9) {
                return Err(ctx.error(
                    ErrorKind::Geometry,
                    &sub.span,
                    format!(
                        "the sector of {} runs from {start_angle_deg}° to {end_angle_deg}°; `end_angle` must be above `start_angle` by at most 360°",
                        sec.label
                    ),
                ));
            }
            Ok(Some(OutlineSpec::Sector {
                center,
                inner_radius,
                outer_radius,
                start_angle_deg,
                end_angle_deg: start_angle_deg + sweep.min(360.0),
            }))
        }
    }
}

fn read_shape(ctx: &mut Ctx<'_>, mut sec: Section<'_>, index: usize) -> Option<RawShape> {
    sec.label = format!("shape #{index}");
    let (name, name_span) = match ctx.string(&sec, "name") {
        Ok(Some(n)) => {
            let span = ctx.span_of(&sec, "name");
            if check_name(ctx, n, &span, &format!("shape #{index}")).is_err() {
                return None;
            }
            sec.label = format!("shape `{n}`");
            (n.to_string(), span)
        }
        Ok(None) => (format!("shape-{index}"), sec.span.clone()),
        Err(_) => return None,
    };
    let allowed: Vec<&str> = OUTLINE_KEYS
        .iter()
        .chain(SHAPE_OTHER_KEYS)
        .copied()
        .collect();
    ctx.check_keys(&sec, &allowed);
    let mut bad = false;
    let spec = match read_outline(ctx, &sec) {
        Ok(Some(s)) => Some(s),
        Ok(None) => {
            if !OUTLINE_KEYS.iter().any(|k| sec.table.contains_key(k)) {
                ctx.error(
                    ErrorKind::MissingKey,
                    &sec.span,
                    format!("{} has no outline; give one of `rectangle`, `circle`, `polygon` or `sector`", sec.label),
                );
            }
            None
        }
        Err(_) => None,
    };
    let name_ref = |ctx: &mut Ctx<'_>, key: &str, bad: &mut bool| match ctx.string(&sec, key) {
        Ok(Some(s)) => Some((s.to_string(), ctx.span_of(&sec, key))),
        Ok(None) => None,
        Err(_) => {
            *bad = true;
            None
        }
    };
    let material = name_ref(ctx, "material", &mut bad);
    let winding = name_ref(ctx, "winding", &mut bad);
    let take = |f: Field<f64>, bad: &mut bool| match f {
        Ok(x) => x,
        Err(_) => {
            *bad = true;
            None
        }
    };
    let mesh_size = take(
        ctx.number_where(&sec, "mesh_size", |h| h > 0.0, "must be > 0"),
        &mut bad,
    );
    let current = take(ctx.number(&sec, "current"), &mut bad);
    let direction = take(
        ctx.number_where(
            &sec,
            "direction",
            |d| d == 1.0 || d == -1.0,
            "must be +1 (current out of the page, along +z or +φ) or -1 (into the page)",
        ),
        &mut bad,
    )
    .unwrap_or(1.0);
    let magnetization_angle = take(ctx.number(&sec, "magnetization_angle"), &mut bad)
        .map(|a| (a, ctx.span_of(&sec, "magnetization_angle")));
    let rotate = take(ctx.number(&sec, "rotate"), &mut bad);
    let translate = match ctx.point(&sec, "translate") {
        Ok(p) => p,
        Err(_) => {
            bad = true;
            None
        }
    };
    let rotate_about = match ctx.point(&sec, "rotate_about") {
        Ok(p) => p.unwrap_or([0.0, 0.0]),
        Err(_) => {
            bad = true;
            [0.0, 0.0]
        }
    };
    if winding.is_some() && current.is_some() {
        let span = ctx.span_of(&sec, "current");
        ctx.error(
            ErrorKind::Conflict,
            &span,
            format!(
                "{} has both `winding` and `current`; use `winding` for turns of a coil or `current` for a solid conductor, not both",
                sec.label
            ),
        );
        bad = true;
    }
    let repeat = match read_repeat(ctx, &sec) {
        Ok(r) => r,
        Err(_) => {
            bad = true;
            None
        }
    };
    if bad {
        return None;
    }
    Some(RawShape {
        index,
        label: sec.label.clone(),
        span: sec.span.clone(),
        name,
        name_span,
        spec: spec?,
        material,
        mesh_size,
        winding,
        current,
        direction,
        magnetization_angle,
        translate,
        rotate,
        rotate_about,
        repeat,
    })
}

fn read_repeat(ctx: &mut Ctx<'_>, sec: &Section<'_>) -> Field<RawRepeat> {
    let Some(rep) = ctx.section(sec, "repeat", format!("`repeat` of {}", sec.label))? else {
        return Ok(None);
    };
    ctx.check_keys(&rep, REPEAT_KEYS);
    let count = ctx.integer(&rep, "count", 1, MAX_REPEAT);
    let angle = ctx.number(&rep, "angle");
    let center = ctx.point(&rep, "center");
    let alternate = ctx.boolean(&rep, "alternate");
    let Some(count) = count? else {
        return Err(ctx.missing(
            &rep,
            "count",
            " (the number of copies, counting the original)",
        ));
    };
    let count = count as usize;
    let angle = angle?.unwrap_or(360.0 / count as f64);
    Ok(Some(RawRepeat {
        count,
        angle,
        center: center?.unwrap_or([0.0, 0.0]),
        alternate: alternate?.unwrap_or(false),
        span: rep.span.clone(),
    }))
}

fn read_outer(ctx: &mut Ctx<'_>, root: &Section<'_>) -> RawOuter {
    let mut outer = RawOuter {
        spec: None,
        span: None,
        condition: RawCondition::Open,
        field: None,
    };
    let Some(sec) = ok(ctx.section(root, "outer", "[outer]".into())) else {
        return outer;
    };
    outer.span = sec.span.clone();
    ctx.check_keys(&sec, OUTER_KEYS);
    if let Some(shape) = ok(ctx.section(&sec, "shape", "`shape` of [outer]".into())) {
        ctx.check_keys(&shape, OUTLINE_KEYS);
        match read_outline(ctx, &shape) {
            Ok(Some(spec)) => {
                outer.spec = Some(spec);
                outer.span = shape.span.clone();
            }
            Ok(None) => {
                if shape.table.is_empty()
                    || !OUTLINE_KEYS.iter().any(|k| shape.table.contains_key(k))
                {
                    ctx.error(
                        ErrorKind::MissingKey,
                        &shape.span,
                        "`shape` of [outer] has no outline; give one of `rectangle`, `circle`, `polygon` or `sector`",
                    );
                }
            }
            Err(_) => {}
        }
    }
    let condition = ok(ctx.choice(
        &sec,
        "condition",
        &["open", "zero-potential", "flux-normal", "uniform-field"],
    ));
    outer.condition = match condition {
        Some("zero-potential") => RawCondition::ZeroPotential,
        Some("flux-normal") => RawCondition::FluxNormal,
        Some("uniform-field") => RawCondition::UniformField,
        _ => RawCondition::Open,
    };
    outer.field = ok(ctx.point(&sec, "field"));
    match (
        &outer.condition,
        outer.field.is_some(),
        sec.table.contains_key("field"),
    ) {
        (RawCondition::UniformField, false, false) => {
            ctx.missing(
                &sec,
                "field",
                " = [bx, by] (the applied flux density in T) for condition = \"uniform-field\"",
            );
        }
        (RawCondition::UniformField, _, _) => {}
        (_, _, true) => {
            let span = ctx.span_of(&sec, "field");
            ctx.error(
                ErrorKind::Conflict,
                &span,
                "`field` in [outer] is used only with condition = \"uniform-field\"; set that condition or remove `field`",
            );
        }
        _ => {}
    }
    outer
}

fn read_edge(ctx: &mut Ctx<'_>, sec: &Section<'_>) -> Option<RawEdge> {
    ctx.check_keys(sec, EDGE_KEYS);
    let from = ctx.point(sec, "from");
    let to = ctx.point(sec, "to");
    let condition = ctx.choice(
        sec,
        "condition",
        &["zero-potential", "flux-normal", "periodic", "anti-periodic"],
    );
    let mut missing = false;
    for (key, f) in [
        ("from", from.is_ok_and(|p| p.is_none())),
        ("to", to.is_ok_and(|p| p.is_none())),
    ] {
        if f {
            ctx.missing(
                sec,
                key,
                " = [x, y] (an end of a straight stretch of the outer edge)",
            );
            missing = true;
        }
    }
    let condition = match condition {
        Ok(Some(c)) => Some(c),
        Ok(None) => {
            ctx.missing(
                sec,
                "condition",
                " (\"zero-potential\", \"flux-normal\", \"periodic\" or \"anti-periodic\")",
            );
            None
        }
        Err(_) => None,
    };
    let partner = match ctx.section(sec, "partner", format!("`partner` of {}", sec.label)) {
        Ok(Some(p)) => {
            ctx.check_keys(&p, PARTNER_KEYS);
            let pf = ctx.point(&p, "from");
            let pt = ctx.point(&p, "to");
            match (pf, pt) {
                (Ok(Some(a)), Ok(Some(b))) => Some(Some([a, b])),
                (Ok(None), _) | (_, Ok(None)) => {
                    ctx.missing(
                        &p,
                        if p.table.contains_key("from") {
                            "to"
                        } else {
                            "from"
                        },
                        " = [x, y]",
                    );
                    Some(None)
                }
                _ => Some(None),
            }
        }
        Ok(None) => None,
        Err(_) => Some(None),
    };
    let partner_span = ctx.span_of(sec, "partner");
    let (from, to, condition) = (ok(from)?, ok(to)?, condition?);
    if missing {
        return None;
    }
    let kind = match (condition, partner) {
        ("periodic" | "anti-periodic", None) => {
            ctx.missing(
                sec,
                "partner",
                &format!(" = {{ from = [x, y], to = [x, y] }} (the stretch matched to this one) for condition = \"{condition}\""),
            );
            return None;
        }
        ("periodic", Some(p)) => RawEdgeKind::Periodic(p?),
        ("anti-periodic", Some(p)) => RawEdgeKind::AntiPeriodic(p?),
        (_, Some(_)) => {
            ctx.error(
                ErrorKind::Conflict,
                &partner_span,
                format!("`partner` in {} is used only with \"periodic\" or \"anti-periodic\"; remove it", sec.label),
            );
            return None;
        }
        ("zero-potential", None) => RawEdgeKind::ZeroPotential,
        _ => RawEdgeKind::FluxNormal,
    };
    Some(RawEdge {
        label: sec.label.clone(),
        span: sec.span.clone(),
        from,
        to,
        kind,
        partner_span,
    })
}

fn required_point(ctx: &mut Ctx<'_>, sec: &Section<'_>, key: &str) -> Option<Point> {
    match ctx.point(sec, key) {
        Ok(Some(p)) => Some(p),
        Ok(None) => {
            ctx.missing(sec, key, " = [x, y]");
            None
        }
        Err(_) => None,
    }
}

fn read_probe(ctx: &mut Ctx<'_>, sec: &Section<'_>, name: NameRef) -> Option<RawProbe> {
    ctx.check_keys(sec, PROBE_KEYS);
    Some(RawProbe {
        name,
        at: required_point(ctx, sec, "at")?,
    })
}

fn read_profile(ctx: &mut Ctx<'_>, sec: &Section<'_>, name: NameRef) -> Option<RawProfile> {
    ctx.check_keys(sec, PROFILE_KEYS);
    let from = required_point(ctx, sec, "from");
    let to = required_point(ctx, sec, "to");
    let samples = ctx.integer(sec, "samples", 2, MAX_SAMPLES);
    let (from, to) = (from?, to?);
    let samples = samples.ok()?.unwrap_or(201) as usize;
    if from == to {
        let span = ctx.span_of(sec, "to");
        ctx.error(
            ErrorKind::Geometry,
            &span,
            format!(
                "{} starts and ends at the same point; give a line",
                sec.label
            ),
        );
        return None;
    }
    Some(RawProfile {
        name,
        from,
        to,
        samples,
    })
}

fn read_loop(ctx: &mut Ctx<'_>, sec: &Section<'_>, name: NameRef) -> Option<RawLoop> {
    let allowed: Vec<&str> = ["name"].iter().chain(OUTLINE_KEYS).copied().collect();
    ctx.check_keys(sec, &allowed);
    match read_outline(ctx, sec) {
        Ok(Some(spec)) => Some(RawLoop { name, spec }),
        Ok(None) => {
            ctx.error(
                ErrorKind::MissingKey,
                &sec.span,
                format!(
                    "{} has no outline; give one of `rectangle`, `circle`, `polygon` or `sector`",
                    sec.label
                ),
            );
            None
        }
        Err(_) => None,
    }
}

fn required_names(ctx: &mut Ctx<'_>, sec: &Section<'_>, key: &str) -> Option<Vec<NameRef>> {
    match ctx.strings(sec, key) {
        Ok(Some(v)) if !v.is_empty() => {
            Some(v.into_iter().map(|(s, sp)| (s.to_string(), sp)).collect())
        }
        Ok(Some(_)) => {
            let span = ctx.span_of(sec, key);
            ctx.error(
                ErrorKind::MissingKey,
                &span,
                format!("`{key}` in {} is empty; name at least one shape", sec.label),
            );
            None
        }
        Ok(None) => {
            ctx.missing(sec, key, " = [\"shape name\", ...]");
            None
        }
        Err(_) => None,
    }
}

fn read_force(ctx: &mut Ctx<'_>, sec: &Section<'_>, name: NameRef) -> Option<RawForce> {
    ctx.check_keys(sec, FORCE_KEYS);
    let shapes = required_names(ctx, sec, "shapes");
    let method = match ctx.choice(sec, "method", &["stress-tensor", "virtual-work"]) {
        Ok(Some("virtual-work")) => ForceMethod::VirtualWork,
        Ok(_) => ForceMethod::StressTensor,
        Err(_) => return None,
    };
    Some(RawForce {
        name,
        label: sec.label.clone(),
        shapes: shapes?,
        method,
    })
}

fn read_torque(ctx: &mut Ctx<'_>, sec: &Section<'_>, name: NameRef) -> Option<RawTorque> {
    ctx.check_keys(sec, TORQUE_KEYS);
    let shapes = required_names(ctx, sec, "shapes");
    let center = ctx.point(sec, "center").ok()?.unwrap_or([0.0, 0.0]);
    Some(RawTorque {
        name,
        label: sec.label.clone(),
        shapes: shapes?,
        center,
    })
}

fn read_sweep(ctx: &mut Ctx<'_>, root: &Section<'_>) -> Option<(RawSweep, Span)> {
    let sec = ok(ctx.section(root, "sweep", "[sweep]".into()))?;
    ctx.check_keys(&sec, SWEEP_KEYS);
    let present: Vec<&str> = SWEEP_KEYS
        .iter()
        .copied()
        .filter(|k| sec.table.contains_key(k))
        .collect();
    if present.len() != 1 {
        let what = if present.is_empty() {
            "[sweep] sweeps nothing; give exactly one of `current`, `move` or `turn`".to_string()
        } else {
            format!(
                "[sweep] gives {}; give exactly one of `current`, `move` or `turn`",
                present.join(" and ")
            )
        };
        ctx.error(ErrorKind::Conflict, &sec.span, what);
        return None;
    }
    let key = present[0];
    let sub = ok(ctx.section(&sec, key, format!("`{key}` of [sweep]")))?;
    let allowed = match key {
        "current" => SWEEP_CURRENT_KEYS,
        "move" => SWEEP_MOVE_KEYS,
        _ => SWEEP_TURN_KEYS,
    };
    ctx.check_keys(&sub, allowed);
    let need_number = |ctx: &mut Ctx<'_>, k: &str| match ctx.number(&sub, k) {
        Ok(Some(x)) => Some(x),
        Ok(None) => {
            ctx.missing(&sub, k, "");
            None
        }
        Err(_) => None,
    };
    let from = need_number(ctx, "from");
    let to = need_number(ctx, "to");
    let steps = match ctx.integer(&sub, "steps", 1, MAX_STEPS) {
        Ok(Some(n)) => Some(n as usize),
        Ok(None) => {
            ctx.missing(&sub, "steps", " (the number of steps, ≥ 1)");
            None
        }
        Err(_) => None,
    };
    let sweep = match key {
        "current" => {
            let winding = match ctx.string(&sub, "winding") {
                Ok(Some(w)) => Some((w.to_string(), ctx.span_of(&sub, "winding"))),
                Ok(None) => {
                    ctx.missing(
                        &sub,
                        "winding",
                        " (the name of the winding whose current is swept)",
                    );
                    None
                }
                Err(_) => None,
            };
            RawSweep::Current {
                winding: winding?,
                from: from?,
                to: to?,
                steps: steps?,
            }
        }
        "move" => {
            let shapes = required_names(ctx, &sub, "shapes");
            let along = required_point(ctx, &sub, "along");
            let along = along?;
            if along[0].hypot(along[1]) == 0.0 {
                let span = ctx.span_of(&sub, "along");
                ctx.error(
                    ErrorKind::OutOfRange,
                    &span,
                    "`along` of [sweep] move is [0, 0]; give a direction [dx, dy]",
                );
                return None;
            }
            RawSweep::Move {
                shapes: shapes?,
                along,
                from: from?,
                to: to?,
                steps: steps?,
            }
        }
        _ => {
            let shapes = required_names(ctx, &sub, "shapes");
            let center = ctx.point(&sub, "center").ok()?.unwrap_or([0.0, 0.0]);
            RawSweep::Turn {
                shapes: shapes?,
                center,
                from: from?,
                to: to?,
                steps: steps?,
            }
        }
    };
    Some((sweep, sub.span.clone()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_with_header_comments_and_separators() {
        let text = "H (A/m), B (T)\n# measured\n0, 0\n100;0.5\n\n200\t0.9\n";
        let (h, b) = parse_bh_csv(text).expect("valid CSV");
        assert_eq!(h, vec![0.0, 100.0, 200.0]);
        assert_eq!(b, vec![0.0, 0.5, 0.9]);
    }

    #[test]
    fn csv_reports_the_bad_line() {
        let err = parse_bh_csv("0,0\n100,abc\n").expect_err("line 2 is bad");
        assert!(err.contains("line 2"), "{err}");
    }

    #[test]
    fn bh_rules() {
        assert!(check_bh(&[0.0, 100.0], &[0.0, 1.0]).is_ok());
        assert!(check_bh(&[0.0, 100.0], &[0.0])
            .unwrap_err()
            .contains("2 H values but 1 B"));
        assert!(check_bh(&[0.0], &[0.0]).unwrap_err().contains("at least 2"));
        assert!(check_bh(&[10.0, 100.0], &[0.0, 1.0])
            .unwrap_err()
            .contains("start at H = 0"));
        assert!(check_bh(&[0.0, 100.0, 100.0], &[0.0, 1.0, 1.1])
            .unwrap_err()
            .contains("increasing in H"));
        assert!(check_bh(&[0.0, 100.0, 200.0], &[0.0, 1.0, 1.0])
            .unwrap_err()
            .contains("increasing in B"));
        // B = 1 mT at H = 1000 A/m is μr ≈ 0.8: below μ0 (μ0·1000 A/m = 1.2566 mT).
        assert!(check_bh(&[0.0, 1000.0], &[0.0, 0.001])
            .unwrap_err()
            .contains("below μ0"));
    }
}
