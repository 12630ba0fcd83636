//! Layered shapes inside an outer rectangle: `mesh` must return `Ok` or
//! `Err`, never panic or hang, and an `Ok` mesh must pass `Mesh::check` and
//! tile the outer rectangle.
//!
//! Coordinates are fractions of the outer rectangle quantised to 1/65536,
//! so that near-coincident edges, slivers and shapes poking out of the outer
//! edge are all reachable; outlines are built straight from segments, so
//! invalid ones reach the mesher's own validation. Sizes stay within 1/2000
//! of the extent and the triangle budget is 20 000, so one run is quick.
#![no_main]

use arbitrary::Arbitrary;
use fluxwright_mesher::{mesh, Loop, MeshInput, Outline, Segment, ShapeInput};
use libfuzzer_sys::fuzz_target;

#[derive(Arbitrary, Debug)]
enum Piece {
    Rectangle {
        corner: [u16; 2],
        size: [u16; 2],
        turn: u16,
    },
    Circle {
        center: [u16; 2],
        radius: u16,
    },
    Polygon {
        corners: Vec<[u16; 2]>,
    },
    /// An annular sector (or a disc sector with zero inner radius).
    Sector {
        center: [u16; 2],
        inner: u16,
        outer: u16,
        start: u16,
        sweep: u16,
    },
    /// A slot: two half circles joined by straight sides.
    Slot {
        center: [u16; 2],
        length: u16,
        radius: u16,
        turn: u16,
    },
    /// A disc with a round hole (two loops; the hole may be off-centre).
    Ring {
        center: [u16; 2],
        radius: u16,
        hole_offset: [i8; 2],
        hole_radius: u16,
    },
}

#[derive(Arbitrary, Debug)]
struct Case {
    /// Outer rectangle width and height, ratio up to about 1:16.
    aspect: u8,
    /// Largest size as a fraction of the extent.
    max_size: u8,
    min_angle: u8,
    growth: u8,
    chord: u8,
    pieces: Vec<(Piece, u8)>,
}

const EXTENT: f64 = 100.0;

fn frac(v: u16) -> f64 {
    v as f64 / 65536.0
}

/// A size from one byte: 1/2 down to 1/2000 of `EXTENT`, geometric.
fn size(b: u8) -> f64 {
    EXTENT * 0.5 * (1.0f64 / 1000.0).powf(b as f64 / 255.0)
}

fn line(from: [f64; 2], to: [f64; 2]) -> Segment {
    Segment::Line { from, to }
}

fn outline(piece: &Piece, w: f64, h: f64) -> Outline {
    // Points range a bit beyond the outer rectangle on every side.
    let at = |p: [u16; 2]| [(frac(p[0]) * 1.2 - 0.1) * w, (frac(p[1]) * 1.2 - 0.1) * h];
    let len = |v: u16| frac(v) * EXTENT;
    let angle = |v: u16| frac(v) * std::f64::consts::TAU;
    match piece {
        Piece::Rectangle { corner, size, turn } => {
            let a = at(*corner);
            let (sx, sy) = (len(size[0]), len(size[1]));
            let b = [a[0] + sx, a[1] + sy];
            let o = Outline {
                loops: vec![Loop {
                    segments: vec![
                        line(a, [b[0], a[1]]),
                        line([b[0], a[1]], b),
                        line(b, [a[0], b[1]]),
                        line([a[0], b[1]], a),
                    ],
                }],
            };
            o.rotated(angle(*turn).to_degrees(), a)
        }
        Piece::Circle { center, radius } => Outline {
            loops: vec![Loop {
                segments: vec![Segment::Arc {
                    center: at(*center),
                    radius: len(*radius),
                    start: 0.0,
                    sweep: std::f64::consts::TAU,
                }],
            }],
        },
        Piece::Polygon { corners } => {
            let pts: Vec<[f64; 2]> = corners.iter().take(12).map(|&p| at(p)).collect();
            let n = pts.len();
            Outline {
                loops: vec![Loop {
                    segments: (0..n).map(|i| line(pts[i], pts[(i + 1) % n])).collect(),
                }],
            }
        }
        Piece::Sector {
            center,
            inner,
            outer,
            start,
            sweep,
        } => {
            let (c, r0, r1) = (at(*center), len(*inner) * 0.5, len(*outer));
            let (a0, da) = (angle(*start), angle(*sweep).max(1e-9));
            let arc = |r: f64, s: f64, d: f64| Segment::Arc {
                center: c,
                radius: r,
                start: s,
                sweep: d,
            };
            let outer_arc = arc(r1, a0, da);
            let segments = if r0 > 0.0 {
                let inner_arc = arc(r0, a0 + da, -da);
                vec![
                    line(inner_arc.end_point(), outer_arc.start_point()),
                    outer_arc,
                    line(outer_arc.end_point(), inner_arc.start_point()),
                    inner_arc,
                ]
            } else {
                vec![
                    line(c, outer_arc.start_point()),
                    outer_arc,
                    line(outer_arc.end_point(), c),
                ]
            };
            Outline {
                loops: vec![Loop { segments }],
            }
        }
        Piece::Slot {
            center,
            length,
            radius,
            turn,
        } => {
            let c = at(*center);
            let (l, r) = (len(*length) * 0.5, len(*radius) * 0.5);
            let half = std::f64::consts::PI;
            let right = Segment::Arc {
                center: [c[0] + l, c[1]],
                radius: r,
                start: -half / 2.0,
                sweep: half,
            };
            let left = Segment::Arc {
                center: [c[0] - l, c[1]],
                radius: r,
                start: half / 2.0,
                sweep: half,
            };
            Outline {
                loops: vec![Loop {
                    segments: vec![
                        right,
                        line(right.end_point(), left.start_point()),
                        left,
                        line(left.end_point(), right.start_point()),
                    ],
                }],
            }
            .rotated(angle(*turn).to_degrees(), c)
        }
        Piece::Ring {
            center,
            radius,
            hole_offset,
            hole_radius,
        } => {
            let c = at(*center);
            let r = len(*radius) * 0.5;
            let hc = [
                c[0] + r * hole_offset[0] as f64 / 128.0,
                c[1] + r * hole_offset[1] as f64 / 128.0,
            ];
            let circle = |center: [f64; 2], radius: f64, sweep: f64| Loop {
                segments: vec![Segment::Arc {
                    center,
                    radius,
                    start: 0.0,
                    sweep,
                }],
            };
            Outline {
                loops: vec![
                    circle(c, r, std::f64::consts::TAU),
                    circle(hc, frac(*hole_radius) * r, -std::f64::consts::TAU),
                ],
            }
        }
    }
}

fuzz_target!(|case: Case| {
    let aspect = 16f64.powf(case.aspect as f64 / 255.0 - 0.5);
    let (w, h) = (EXTENT * aspect.sqrt(), EXTENT / aspect.sqrt());
    let Ok(outer) = Outline::rectangle([0.0, 0.0], [w, h]) else {
        return;
    };
    let mut input = MeshInput::new(outer, size(case.max_size));
    input.min_angle_deg = 10.0 + 23.0 * case.min_angle as f64 / 255.0;
    input.growth = 1.05 + case.growth as f64 / 255.0;
    input.chord_fraction = [2e-3, 1e-2, 5e-2, 1e-4][case.chord as usize % 4];
    input.max_triangles = 20_000;
    for (piece, s) in case.pieces.iter().take(6) {
        input.shapes.push(ShapeInput {
            outline: outline(piece, w, h),
            mesh_size: size(*s),
        });
    }
    if std::env::var_os("FUZZ_DUMP").is_some() {
        // For turning a found input into a unit test.
        eprintln!("{input:?}");
    }
    if let Ok(m) = mesh(&input) {
        if let Err(e) = m.check() {
            panic!("mesh() returned a mesh that fails its check: {e}");
        }
        // The triangles tile the outer rectangle (parts of shapes beyond it
        // are dropped), to rounding.
        let total: f64 = (0..m.triangles.len()).map(|t| m.triangle_area(t)).sum();
        assert!(
            (total - w * h).abs() <= 1e-9 * w * h,
            "triangles cover {total}, the outer rectangle {}",
            w * h
        );
    }
});
