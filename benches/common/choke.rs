//! The invented gapped E-core choke of `examples/gapped_choke.toml` (40
//! turns, saturating silicon steel, 1 mm gap), shared by the sweep and
//! scaling benches, with every mesh size scaled.

/// The model file: `title`, mesh sizes × `scale`, P`order` elements, the
/// winding at `current_a`, and `extra` tables (probes, a sweep) appended.
pub fn choke_toml(title: &str, scale: f64, order: u8, current_a: f64, extra: &str) -> String {
    let s = |v: f64| v * scale;
    format!(
        r#"
[model]
title = "{title}"
symmetry = "planar"
length_unit = "mm"
depth = 30
element_order = {order}

[mesh]
max_size = {max}
growth = 1.3

[materials.lamination]
from_library = "silicon-steel"
stacking_factor = 0.96

[materials.copper]
from_library = "copper"

[windings.main]
turns = 40
current = {current_a}

[[shape]]
name = "core"
rectangle = {{ min = [0, 0], max = [60, 50] }}
material = "lamination"
mesh_size = {core}

[[shape]]
name = "window_left"
rectangle = {{ min = [10, 10], max = [20, 40] }}

[[shape]]
name = "window_right"
rectangle = {{ min = [40, 10], max = [50, 40] }}

[[shape]]
name = "gap"
rectangle = {{ min = [20, 24.5], max = [40, 25.5] }}
mesh_size = {gap}

[[shape]]
name = "coil_go"
rectangle = {{ min = [11, 11], max = [19, 39] }}
material = "copper"
winding = "main"
direction = 1

[[shape]]
name = "coil_return"
rectangle = {{ min = [41, 11], max = [49, 39] }}
material = "copper"
winding = "main"
direction = -1

[outer]
shape = {{ rectangle = {{ min = [-30, -30], max = [90, 80] }} }}
condition = "zero-potential"
{extra}"#,
        max = s(8.0),
        core = s(2.5),
        gap = s(0.5),
    )
}
