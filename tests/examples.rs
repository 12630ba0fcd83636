//! The models in `examples/` solve, and each gives one number that an
//! outside reference confirms (the source is named beside each check).
//!
//! The examples are meshed for pictures; here their mesh sizes are scaled
//! up (coarser) so that each solve takes a fraction of a second. The
//! tolerances allow for that coarser mesh and say why.

use fluxwright::solver::field::Solution;
use fluxwright::solver::model::{Model, ModelSource};
use fluxwright::solver::{nonlinear, study};
use std::f64::consts::PI;

const MU0: f64 = 4.0e-7 * PI;

const GAPPED_CHOKE: &str = include_str!("../examples/gapped_choke.toml");
const PLUNGER_ACTUATOR: &str = include_str!("../examples/plunger_actuator.toml");
const ROTOR_SECTOR: &str = include_str!("../examples/rotor_sector.toml");
const BUSBARS: &str = include_str!("../examples/busbars.toml");
const MAGNETIC_SHIELD: &str = include_str!("../examples/magnetic_shield.toml");
const HOLDING_MAGNET: &str = include_str!("../examples/holding_magnet.toml");

/// `text` with every `max_size = X` and `mesh_size = X` line multiplied by
/// `factor` (the examples write each such key on a line of its own).
fn coarsen(text: &str, factor: f64) -> String {
    let mut out = String::new();
    for line in text.lines() {
        let scaled = ["max_size", "mesh_size"].iter().find_map(|key| {
            let value = line.strip_prefix(key)?.trim().strip_prefix('=')?;
            let size: f64 = value.trim().parse().ok()?;
            Some(format!("{key} = {}", size * factor))
        });
        out.push_str(scaled.as_deref().unwrap_or(line));
        out.push('\n');
    }
    out
}

/// `text` with the one line `from` replaced by `to` (panics if `from` is
/// not exactly one line of it, so an edited example cannot silently slip
/// past the test).
fn replace_line(text: &str, from: &str, to: &str) -> String {
    assert_eq!(
        text.lines().filter(|l| *l == from).count(),
        1,
        "the example no longer has the line `{from}`"
    );
    text.lines()
        .map(|l| if l == from { to } else { l })
        .collect::<Vec<_>>()
        .join("\n")
}

/// Mesh (with the open boundary's exterior where there is one), solve, and
/// hand the solved pieces to `inspect`.
fn solve<R>(
    name: &str,
    text: &str,
    inspect: impl FnOnce(&Model, &Solution, &study::SolveResults) -> R,
) -> R {
    let model = Model::from_toml_str(text, &ModelSource::new(name)).expect("valid model");
    let mesh = study::mesh_for(&model).expect("meshes").mesh;
    mesh.check().expect("valid mesh");
    let setup = study::problem(&model, &mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    let results = study::results(&model, &mesh, &setup, &solution, 0.0);
    assert!(
        results.solve.converged,
        "{name}: did not converge: {:?}",
        results.solve
    );
    inspect(&model, &solution, &results)
}

/// B at a point (model units), T.
fn b_at(solution: &Solution, p: [f64; 2]) -> [f64; 2] {
    solution
        .probe(p)
        .unwrap_or_else(|| panic!("{p:?} is outside the mesh"))
        .b
}

fn relative_error(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

#[test]
fn gapped_choke_follows_the_magnetic_circuit_at_low_current() {
    // 3 A instead of the nominal 20 A: the iron stays near 0.15 T, far
    // below the knee, so the magnetic circuit with a constant μr applies.
    let text = replace_line(GAPPED_CHOKE, "current = 20", "current = 3");
    let text = coarsen(&text, 1.6);
    solve("gapped_choke.toml", &text, |_, _, r| {
        let (n, i) = (40.0, 3.0);
        let (gap, iron_path, area) = (1e-3, 0.130, 20e-3 * 30e-3);
        // μr of the iron at its working point, from B and H in an outer leg
        // (the material law there, whatever the curve's shape).
        let leg = &r.probes["outer_leg"];
        let mu_r = leg.b_magnitude_t / (MU0 * leg.h_a_per_m[1].abs());
        assert!(mu_r > 2000.0, "iron μr {mu_r}");
        // Magnetic circuit (e.g. Hughes, Electrical and Electronic
        // Technology, ch. "Magnetic circuits"; any textbook): the centre
        // leg's gap g in series with the iron path l_iron (130 mm: centre
        // leg and yokes, each outer leg carrying half the flux in half the
        // area), ampere-turns N I across g + l_iron/μr.
        let reluctance_length = gap + iron_path / mu_r;
        let b_circuit = MU0 * n * i / reluctance_length;
        let b_gap = r.probes["gap_centre"].b_t[1];
        // In the middle of a gap 20 times wider than long, B is the
        // circuit's value: fringing changes the flux near the gap's ends,
        // not at its centre.
        assert!(
            relative_error(b_gap, b_circuit) < 0.02,
            "B in the gap {b_gap} T vs magnetic circuit {b_circuit} T"
        );
        // L = N² μ0 A / (g + l_iron/μr), same source. The solved L must be
        // larger: the circuit leaves out the fringing flux around the gap
        // and the leakage flux in the windows, both extra permeance in
        // parallel. How much larger: the fringing factor for a square leg,
        // F = 1 + (g/√A) ln(2G/g) with G the window height (McLyman,
        // Transformer and Inductor Design Handbook, ch. on gapped
        // inductors; from memory), is 1.167 here; a planar section fringes
        // only on the two window sides of the leg, so it must stay below
        // that.
        let l_circuit = n * n * MU0 * area / reluctance_length;
        let fringing_square_leg = 1.0 + gap / area.sqrt() * (2.0f64 * 30e-3 / gap).ln();
        let l = r.windings["main"]
            .inductance_h
            .expect("current is not zero");
        let ratio = l / l_circuit;
        println!("choke: B gap {b_gap} T vs {b_circuit} T; L {l} H = {ratio} × {l_circuit} H");
        assert!(
            ratio > 1.0 && ratio < fringing_square_leg,
            "L {l} H is {ratio} × the magnetic circuit's {l_circuit} H (bound {fringing_square_leg})"
        );
    });
}

/// Text of the plunger example with the plunger moved up by `dz` mm
/// (towards the stop; the air layer of the working gap follows its face).
fn plunger_moved(dz: f64) -> String {
    let text = replace_line(
        PLUNGER_ACTUATOR,
        "rectangle = { min = [0, -30], max = [6, 10] }",
        &format!(
            "rectangle = {{ min = [0, {}], max = [6, {}] }}",
            -30.0 + dz,
            10.0 + dz
        ),
    );
    let text = replace_line(
        &text,
        "rectangle = { min = [0, 10], max = [6, 11] }",
        &format!("rectangle = {{ min = [0, {}], max = [6, 11] }}", 10.0 + dz),
    );
    coarsen(&text, 1.6)
}

#[test]
fn plunger_force_matches_the_coenergy_derivative_and_the_pole_face_pull() {
    let (force, face_pull) = solve("plunger_actuator.toml", &plunger_moved(0.0), |_, s, r| {
        // Maxwell's pull on the pole face, ∫ B²/(2μ0) dA over the plunger's
        // end (r ≤ 6 mm) on the mid-plane of the gap.
        let steps = 200;
        let dr = 6e-3 / steps as f64;
        let pull: f64 = (0..steps)
            .map(|k| {
                let radius = (k as f64 + 0.5) * dr;
                let b = b_at(s, [radius * 1e3, 10.5]);
                (b[1] * b[1] - b[0] * b[0]) / (2.0 * MU0) * 2.0 * PI * radius * dr
            })
            .sum();
        (r.forces["pull_on_plunger"].force_n[1], pull)
    });
    // Force at constant current is the derivative of the co-energy with
    // the position, F = ∂W'/∂z (e.g. Fitzgerald, Kingsley, Umans, Electric
    // Machinery, ch. "Electromechanical energy conversion"): two more
    // solves with the plunger 0.1 mm up and down, each meshed anew.
    let dz = 0.1;
    let coenergy = |d: f64| {
        solve("plunger_actuator.toml", &plunger_moved(d), |_, _, r| {
            r.coenergy_j
        })
    };
    let by_energy = (coenergy(dz) - coenergy(-dz)) / (2.0 * dz * 1e-3);
    println!(
        "plunger: force {force} N, co-energy derivative {by_energy} N, face pull {face_pull} N"
    );
    // 2 %: the two meshes differ (remeshing noise in W') and the central
    // difference carries an error of order (dz/gap)² ≈ 1 %.
    assert!(
        relative_error(force, by_energy) < 0.02,
        "force {force} N vs co-energy derivative {by_energy} N"
    );
    // Maxwell's pull over the face alone misses the fringing flux that
    // pulls on the plunger's rim and side near the gap: the whole force is
    // larger, by the share of flux that fringes (the flux around a 1 mm
    // gap at the edge of a 6 mm face: up to a quarter, common practice, no
    // source).
    assert!(
        force > face_pull && force < 1.25 * face_pull,
        "force {force} N vs face pull {face_pull} N"
    );
}

#[test]
fn rotor_sector_flux_per_pole_and_anti_periodic_edges() {
    let text = coarsen(ROTOR_SECTOR, 1.5);
    solve("rotor_sector.toml", &text, |_, s, _| {
        // Flux per pole: ∫ B_r r dθ over the 90° pole at mid-gap, for the
        // 40 mm stack.
        let (r_gap, depth) = (30.5e-3, 40e-3);
        let steps = 900;
        let dtheta = 0.5 * PI / steps as f64;
        let flux: f64 = (0..steps)
            .map(|k| {
                let t = (k as f64 + 0.5) * dtheta;
                let b = b_at(s, [r_gap * 1e3 * t.cos(), r_gap * 1e3 * t.sin()]);
                (b[0] * t.cos() + b[1] * t.sin()) * r_gap * dtheta
            })
            .sum::<f64>()
            * depth;
        // Magnetic circuit of a surface magnet (e.g. Hendershot & Miller,
        // Design of Brushless Permanent-Magnet Machines, ch. on the
        // magnetic circuit; from memory): B_g = Br / (1 + μrec kc g / lm)
        // with magnet length lm = 4 mm, gap g = 1 mm, Carter's factor kc
        // for the 2 mm slot openings (Carter 1901, as in any machine design
        // text: kc = τ/(τ − γ g), γ = (4/π)[u atan u − ln √(1 + u²)],
        // u = opening / 2g), over the magnet's 50° arc; the parallel
        // magnetization gives a radial share of sin(25°)/(25° in rad).
        let (br, mu_rec, lm, g) = (1.2, 1.05, 4e-3, 1e-3);
        let u: f64 = 2e-3 / (2.0 * g);
        let gamma = 4.0 / PI * (u * u.atan() - (1.0 + u * u).sqrt().ln());
        let slot_pitch = 31e-3 * 2.0 * PI / 12.0;
        let carter = slot_pitch / (slot_pitch - gamma * g);
        let b_gap = br / (1.0 + mu_rec * carter * g / lm);
        let half_arc = 25f64.to_radians();
        let estimate = b_gap * r_gap * 2.0 * half_arc * depth * half_arc.sin() / half_arc;
        println!(
            "rotor: flux per pole {flux} Wb vs estimate {estimate} Wb (B_g {b_gap} T, kc {carter})"
        );
        // 10 %: the estimate leaves out the leakage between neighbouring
        // magnets and the drop in the iron (both lower the flux), and the
        // flux fringing past the magnet's ends (counted here, as the
        // integral runs over the whole pole): common practice, no source.
        assert!(
            relative_error(flux, estimate) < 0.10,
            "flux per pole {flux} Wb vs magnetic circuit {estimate} Wb"
        );
        // The anti-periodic edges: the field on the 90° radius is the field
        // on the 0° radius turned by 90° and reversed, B(0, r) = (B_y,
        // −B_x)(r, 0), checked in the rotor and stator iron (in the air
        // between the poles the field is near zero). The component across the edge follows from A along
        // it, which the tie makes exact; the one along the edge comes from
        // the elements on each side, equal up to the mesh's error.
        for radius in [12.0, 20.0, 45.0, 50.0, 54.0] {
            let b0 = b_at(s, [radius, 0.0]);
            let b90 = b_at(s, [0.0, radius]);
            let scale = b0[0].hypot(b0[1]);
            assert!(scale > 0.05, "r = {radius}: |B| {scale} T");
            assert!(
                (b90[0] - b0[1]).abs() < 1e-6 * scale,
                "r = {radius}: across the edges {} vs {}",
                b90[0],
                b0[1]
            );
            assert!(
                (b90[1] + b0[0]).abs() < 0.05 * scale,
                "r = {radius}: along the edges {} vs {}",
                b90[1],
                -b0[0]
            );
        }
    });
}

#[test]
fn busbar_forces_follow_the_law_of_parallel_currents() {
    let text = coarsen(BUSBARS, 1.6);
    solve("busbars.toml", &text, |_, _, r| {
        // Bars as (x range in m, current in A); each is 50 mm tall,
        // y from −25 mm to 25 mm.
        let bars = [
            ("L1", [-45e-3, -35e-3], 25000.0),
            ("L2", [-5e-3, 5e-3], -12500.0),
            ("L3", [35e-3, 45e-3], -12500.0),
        ];
        // Points at the centres of a 10 × 50 grid of cells over a bar.
        let cells = |x: [f64; 2]| -> Vec<[f64; 2]> {
            let (nx, ny) = (10, 50);
            (0..nx)
                .flat_map(|i| {
                    (0..ny).map(move |j| {
                        [
                            x[0] + (i as f64 + 0.5) * (x[1] - x[0]) / nx as f64,
                            -25e-3 + (j as f64 + 0.5) * 50e-3 / ny as f64,
                        ]
                    })
                })
                .collect()
        };
        for (k, (name, x, current)) in bars.iter().enumerate() {
            // Ampère's force law between long parallel filaments, F/l =
            // μ0 I1 I2 / (2π d), attracting for currents in the same
            // direction (e.g. Griffiths, Introduction to Electrodynamics,
            // 4th ed., ex. 5.7 and §5.2), summed over filaments that fill
            // each bar evenly (DC: uniform current density). The midpoint
            // rule on 500 cells a bar leaves an error of about 1e-4.
            let mine = cells(*x);
            let mut want = 0.0;
            for (j, (_, other_x, other_current)) in bars.iter().enumerate() {
                if j == k {
                    continue;
                }
                let theirs = cells(*other_x);
                let mut mean = 0.0;
                for p in &mine {
                    for q in &theirs {
                        let (dx, dy) = (p[0] - q[0], p[1] - q[1]);
                        mean += dx / (dx * dx + dy * dy);
                    }
                }
                mean /= (mine.len() * theirs.len()) as f64;
                want -= MU0 * current * other_current / (2.0 * PI) * mean;
            }
            let got = r.forces[&format!("on_{name}")].force_n;
            println!("busbars: {name} {got:?} N vs {want} N");
            // 0.5 % of L1's force: the stress tensor on a coarse mesh
            // (it comes within 1e-4 of the sum here).
            let scale = 2000.0;
            assert!(
                (got[0] - want).abs() < 0.005 * scale,
                "{name}: Fx {} N vs {want} N",
                got[0]
            );
            assert!(got[1].abs() < 0.01 * scale, "{name}: Fy {} N", got[1]);
        }
        // The bars' shape matters: for L3 the filament law between bar
        // centres gives exactly zero (pushed off by L1 at 80 mm as hard as
        // pulled in by L2 at 40 mm); the solved force must not be.
        assert!(
            r.forces["on_L3"].force_n[0] > 50.0,
            "{:?}",
            r.forces["on_L3"]
        );
    });
}

#[test]
fn cylindrical_shield_matches_the_shielding_factor() {
    let text = coarsen(MAGNETIC_SHIELD, 1.5);
    solve("magnetic_shield.toml", &text, |_, _, r| {
        let (mu_r, a, b, b0): (f64, f64, f64, f64) = (2000.0, 40e-3, 42e-3, 1e-3);
        // A long cylindrical shell of permeability μr, radii a < b, across
        // a uniform field B0: the field inside is uniform and
        // B_in / B0 = 4 μr b² / ((μr + 1)² b² − (μr − 1)² a²), the 2D
        // counterpart of the spherical shell of Jackson, Classical
        // Electrodynamics, 3rd ed., §5.12, found the same way with
        // potentials (D r + E / r) cos θ in each region (written from
        // memory; it gives 1 for μr = 1, and 4μr/(μr + 1)² for a → 0, a
        // hole in a solid cylinder).
        let want =
            b0 * 4.0 * mu_r * b * b / ((mu_r + 1.0).powi(2) * b * b - (mu_r - 1.0).powi(2) * a * a);
        assert!(want < b0 / 40.0, "the formula's shielding factor");
        println!("shield: centre {:?} T vs {want} T", r.probes["centre"].b_t);
        // 0.6 %: the applied field is set on a circle 20 b away, which
        // shifts the inside field by about (b / 20 b)² = 0.25 %; the rest
        // is the mesh of the 2 mm wall.
        for name in ["centre", "inside_off_centre"] {
            let got = r.probes[name].b_t;
            assert!(
                relative_error(got[0], want) < 0.006,
                "{name}: Bx {} T vs {want} T",
                got[0]
            );
            assert!(got[1].abs() < 0.01 * want, "{name}: By {} T", got[1]);
        }
    });
}

#[test]
fn holding_magnet_loop_and_pole_face_pull() {
    let text = coarsen(HOLDING_MAGNET, 1.5);
    solve("holding_magnet.toml", &text, |_, _, r| {
        // Ampère's law with no current anywhere: ∮H·dl = 0 around the
        // magnet circuit, the magnet's negative H balancing the gaps' and
        // the steel's. The mismatch is relative to ∮|H·t| dl.
        let l = &r.loops["through_magnet_and_plate"];
        assert_eq!(l.enclosed_current_a, 0.0);
        assert!(
            l.relative_mismatch < 5e-3,
            "∮H·dl = {} A, mismatch {}",
            l.h_line_integral_a,
            l.relative_mismatch
        );
        // Maxwell's pull on the two pole faces (10 mm × 40 mm each),
        // F = B² A / (2 μ0) (e.g. Hughes, Electrical and Electronic
        // Technology, ch. on electromagnets; any textbook), with B in the
        // gap over each pole's centre. 3 %: B is not quite even across a
        // face, and the flux fringing past the faces pulls a little too.
        let face = 10e-3 * 40e-3;
        let pull: f64 = ["gap_left_pole", "gap_right_pole"]
            .iter()
            .map(|p| r.probes[*p].b_magnitude_t.powi(2) / (2.0 * MU0) * face)
            .sum();
        let force = r.forces["holding_force"].force_n;
        println!(
            "holding magnet: force {force:?} N vs pull {pull} N, loop {} A, mismatch {}",
            l.h_line_integral_a, l.relative_mismatch
        );
        assert!(
            relative_error(-force[1], pull) < 0.03,
            "holding force {} N vs pole-face pull {pull} N",
            -force[1]
        );
        assert!(force[0].abs() < 0.01 * pull, "sideways {} N", force[0]);
        // With no current anywhere, ∫B·H dV = 0 over all space (H is curl
        // free and B solenoidal; a standard vector identity, from memory),
        // and W + W′ = ∫B·H dV, so the co-energy is minus the energy. The
        // discrete solution keeps it to the Newton tolerance.
        assert!(
            (r.energy_j + r.coenergy_j).abs() < 1e-6 * r.energy_j,
            "energy {} J, co-energy {} J",
            r.energy_j,
            r.coenergy_j
        );
    });
}
