//! Meshing throughput (triangles per second) on a device-like model: an
//! E-shaped iron core with an I-shaped armature across a 1 mm air gap, two
//! coil sides in the windows, and a surrounding air box (all dimensions in
//! mm, invented for this benchmark). Sizes scale together to give about
//! 10k, 100k and 1M triangles.
//!
//! `cargo bench --bench mesh` runs the criterion groups. With
//! `FLUXWRIGHT_MESH_PEER=<triangles>` set it instead meshes once at about
//! that many triangles, repeats five times and prints one JSON line (used by
//! `benches/peer_mesh.py`).

use std::time::Instant;

use criterion::{BenchmarkId, Criterion, Throughput};
use fluxwright_mesher::{mesh, Mesh, MeshInput, Outline, ShapeInput};

/// The model at size scale `s` (mesh sizes: iron and coils 2s, air 8s).
fn device(s: f64) -> MeshInput {
    let outer = Outline::rectangle([-100.0, -80.0], [100.0, 80.0]).expect("air box");
    let core = Outline::polygon(&[
        [-30.0, 0.0],
        [30.0, 0.0],
        [30.0, 40.0],
        [22.0, 40.0],
        [22.0, 6.0],
        [8.0, 6.0],
        [8.0, 40.0],
        [-8.0, 40.0],
        [-8.0, 6.0],
        [-22.0, 6.0],
        [-22.0, 40.0],
        [-30.0, 40.0],
    ])
    .expect("E core");
    let armature = Outline::rectangle([-30.0, 41.0], [30.0, 47.0]).expect("armature");
    let coil_left = Outline::rectangle([-20.0, 8.0], [-10.0, 38.0]).expect("coil");
    let coil_right = Outline::rectangle([10.0, 8.0], [20.0, 38.0]).expect("coil");
    let mut input = MeshInput::new(outer, 8.0 * s);
    input.shapes = vec![
        ShapeInput {
            outline: core,
            mesh_size: 2.0 * s,
        },
        ShapeInput {
            outline: armature,
            mesh_size: 2.0 * s,
        },
        ShapeInput {
            outline: coil_left,
            mesh_size: 2.0 * s,
        },
        ShapeInput {
            outline: coil_right,
            mesh_size: 2.0 * s,
        },
    ];
    input.growth = 1.3;
    input.min_angle_deg = 25.0;
    input.max_triangles = 20_000_000;
    input
}

fn run(s: f64) -> Mesh {
    mesh(&device(s)).expect("device model meshes")
}

/// The size scale that gives about `target` triangles (the count goes as
/// 1/s² away from the fixed gap refinement; two secant steps suffice).
fn scale_for(target: usize) -> f64 {
    let mut s = 1.0;
    for _ in 0..4 {
        let n = run(s).triangles.len() as f64;
        s *= (n / target as f64).sqrt();
    }
    s
}

fn peer_mode(target: usize) {
    let s = scale_for(target);
    let mut times = Vec::new();
    let mut last = None;
    for _ in 0..5 {
        let t = Instant::now();
        let m = run(s);
        times.push(t.elapsed().as_secs_f64());
        last = Some(m);
    }
    times.sort_by(f64::total_cmp);
    let m = last.expect("ran");
    let q = m.quality();
    println!(
        "{{\"triangles\": {}, \"nodes\": {}, \"median_seconds\": {:.4}, \"min_angle_deg\": {:.3}, \"scale\": {:.6}, \"max_size\": {:.6}, \"inner_size\": {:.6}}}",
        m.triangles.len(),
        m.nodes.len(),
        times[2],
        q.min_angle_deg,
        s,
        8.0 * s,
        2.0 * s
    );
}

fn main() {
    if let Some(target) = std::env::var("FLUXWRIGHT_MESH_PEER")
        .ok()
        .and_then(|v| v.parse().ok())
    {
        peer_mode(target);
        return;
    }
    let mut c = Criterion::default().configure_from_args();
    let mut group = c.benchmark_group("mesh_device");
    for target in [10_000usize, 100_000, 1_000_000] {
        let s = scale_for(target);
        let n = run(s).triangles.len();
        group.throughput(Throughput::Elements(n as u64));
        if target >= 1_000_000 {
            group.sample_size(10);
        } else {
            group.sample_size(20);
        }
        group.bench_with_input(BenchmarkId::new("triangles", n), &s, |b, &s| {
            b.iter(|| run(s))
        });
    }
    group.finish();
    c.final_summary();
}
