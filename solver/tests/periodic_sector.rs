//! A rotor-like quarter model with periodic / anti-periodic radii against
//! the same device modelled whole: the mesher puts identical nodes on the
//! two radii (so the solver can tie them), and by the rotational symmetry of
//! the full device the field in the quarter equals the field of the whole
//! (the full 360° model is the reference).

use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::{nonlinear, study};

/// Iron ring 5..25 mm, one radially magnetized arc magnet 26..30 mm over
/// 20°..70° (a 1 mm gap: arcs of two shapes on one circle currently stall
/// the mesher), air to r = 40 mm where A = 0. `quarter` models 0°..90° with
/// the radii tied by `condition`; otherwise the whole device with four
/// magnets (`alternate` flips every other one: four poles).
fn model_text(quarter: bool, alternate: bool) -> String {
    let (sweep, repeat) = if quarter {
        (90, String::new())
    } else {
        (
            360,
            format!(
                "repeat = {{ count = 4, angle = 90, center = [0, 0], alternate = {alternate} }}"
            ),
        )
    };
    let edges = if quarter {
        let condition = if alternate {
            "anti-periodic"
        } else {
            "periodic"
        };
        format!(
            r#"
            [[edge]]
            from = [0, 0]
            to = [40, 0]
            condition = "{condition}"
            partner = {{ from = [0, 0], to = [0, 40] }}
            "#
        )
    } else {
        String::new()
    };
    format!(
        r#"
        [model]
        element_order = 2
        depth = 30
        [mesh]
        max_size = 4
        [materials.iron]
        relative_permeability = 1000
        [materials.magnet]
        relative_permeability = 1.05
        remanence = 1.2
        [[shape]]
        name = "iron"
        sector = {{ center = [0, 0], inner_radius = 5, outer_radius = 25, start_angle = 0, end_angle = {sweep} }}
        material = "iron"
        mesh_size = 2
        [[shape]]
        name = "magnet"
        sector = {{ center = [0, 0], inner_radius = 26, outer_radius = 30, start_angle = 20, end_angle = 70 }}
        material = "magnet"
        magnetization_angle = 45
        mesh_size = 1
        {repeat}
        [outer]
        shape = {{ sector = {{ center = [0, 0], inner_radius = 0, outer_radius = 40, start_angle = 0, end_angle = {sweep} }} }}
        condition = "zero-potential"
        {edges}
        [[probe]]
        name = "gap"
        at = [21.92031, 22.70]
        [[probe]]
        name = "iron"
        at = [12.99038, 7.5]
        [[probe]]
        name = "edge_gap"
        at = [31.0, 1.0]
        "#
    )
}

/// Solve and return the |B| probes (gap, iron, edge_gap) and the mesh.
fn solve(text: &str) -> ([f64; 3], fluxwright_mesher::Mesh) {
    let model =
        Model::from_toml_str(text, &ModelSource::new("periodic_sector.toml")).expect("valid model");
    let mesh = study::mesh_for(&model).expect("meshes").mesh;
    mesh.check().expect("valid mesh");
    let setup = study::problem(&model, &mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    let results = study::results(&model, &mesh, &setup, &solution, 0.0);
    assert!(results.solve.converged, "{:?}", results.solve);
    let b = |name: &str| results.probes[name].b_magnitude_t;
    ([b("gap"), b("iron"), b("edge_gap")], mesh)
}

/// Nodes on outer segment `segment` of the mesh.
fn nodes_on(mesh: &fluxwright_mesher::Mesh, segment: u32) -> Vec<[f64; 2]> {
    let mut ids: Vec<u32> = mesh
        .boundary
        .iter()
        .filter(|e| e.segment == segment)
        .flat_map(|e| e.nodes)
        .collect();
    ids.sort_unstable();
    ids.dedup();
    ids.into_iter().map(|i| mesh.nodes[i as usize]).collect()
}

fn check_quarter_against_whole(alternate: bool) {
    let (quarter, mesh) = solve(&model_text(true, alternate));
    // (b) The sector outline's segments: 0 is the radius along +x (centre
    // outwards), 2 the radius along +y (inwards). A 90° rotation about the
    // origin carries every node of the first onto a node of the second.
    let (a, b) = (nodes_on(&mesh, 0), nodes_on(&mesh, 2));
    assert_eq!(a.len(), b.len(), "node counts on the two radii");
    assert!(a.len() >= 12, "radius cut into {} nodes", a.len());
    for p in &a {
        let image = [-p[1], p[0]];
        let d = b
            .iter()
            .map(|q| (q[0] - image[0]).hypot(q[1] - image[1]))
            .fold(f64::INFINITY, f64::min);
        assert!(
            d <= 1e-9 * 40.0,
            "node {p:?}: image {image:?} is {d} from the partner's nodes"
        );
    }
    // (c) The whole device is the reference: by symmetry its field in the
    // first quadrant is the quarter model's (periodic: repeats every 90°;
    // alternate magnets: repeats with a sign flip, |B| the same).
    let (whole, _) = solve(&model_text(false, alternate));
    for (k, name) in ["gap", "iron", "edge_gap"].iter().enumerate() {
        let rel = (quarter[k] - whole[k]).abs() / whole[k];
        assert!(
            rel < 0.01,
            "{name}: quarter |B| = {} T, whole = {} T ({:.3} %)",
            quarter[k],
            whole[k],
            100.0 * rel
        );
        // A magnet of Br = 1.2 T drives at most about Br through the iron
        // and gap (common practice, no source): rules out a dead field.
        assert!(
            whole[k] > 1e-3 && whole[k] < 1.5,
            "{name}: |B| = {}",
            whole[k]
        );
    }
}

#[test]
fn periodic_quarter_matches_the_whole_device() {
    check_quarter_against_whole(false);
}

#[test]
fn anti_periodic_quarter_matches_the_whole_four_pole_device() {
    check_quarter_against_whole(true);
}
