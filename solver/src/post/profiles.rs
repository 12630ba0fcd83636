//! B and H sampled along a straight line.
//!
//! Samples are equally spaced from `from` to `to` inclusive (model units).
//! A point on an edge between two triangles takes the field of one of them
//! (the one holding it most surely, see [`Solution::locate`]): where the
//! line runs along or across a material interface, the sample there shows
//! one side's value.

use crate::field::Solution;
use std::fmt::Write as _;

/// The field at one sample point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SampleField {
    /// Flux density, T: (Bx, By) planar, (Br, Bz) axisymmetric.
    pub b: [f64; 2],
    /// |B|, T.
    pub b_magnitude: f64,
    /// Field strength, A/m.
    pub h: [f64; 2],
}

/// One sample of a profile.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ProfileSample {
    /// Distance from the start point, model units.
    pub position: f64,
    /// The point, model units.
    pub point: [f64; 2],
    /// The field, or `None` where the point lies outside the mesh.
    pub field: Option<SampleField>,
}

impl ProfileSample {
    /// Whether the point lies in the mesh.
    pub fn inside(&self) -> bool {
        self.field.is_some()
    }
}

/// `samples` equally spaced samples from `from` to `to` (model units),
/// both ends included; one sample gives just `from`, none gives nothing.
pub fn sample_line(
    solution: &Solution,
    from: [f64; 2],
    to: [f64; 2],
    samples: usize,
) -> Vec<ProfileSample> {
    let d = [to[0] - from[0], to[1] - from[1]];
    let length = d[0].hypot(d[1]);
    (0..samples)
        .map(|k| {
            let s = if samples > 1 {
                k as f64 / (samples - 1) as f64
            } else {
                0.0
            };
            let point = [from[0] + s * d[0], from[1] + s * d[1]];
            let field = solution.probe(point).map(|f| SampleField {
                b: f.b,
                b_magnitude: f.b_magnitude(),
                h: f.h,
            });
            ProfileSample {
                position: s * length,
                point,
                field,
            }
        })
        .collect()
}

/// The profile as CSV text with the header `position,Bx,By,|B|,Hx,Hy`
/// (position in model units, B in T, H in A/m; axisymmetric x is r and y
/// is z). Samples outside the mesh keep their position and leave the field
/// columns empty.
pub fn profile_csv(samples: &[ProfileSample]) -> String {
    let mut out = String::from("position,Bx,By,|B|,Hx,Hy\n");
    for s in samples {
        // Writing to a String cannot fail.
        let _ = match s.field {
            Some(f) => writeln!(
                out,
                "{},{},{},{},{},{}",
                s.position, f.b[0], f.b[1], f.b_magnitude, f.h[0], f.h[1]
            ),
            None => writeln!(out, "{},,,,,", s.position),
        };
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_leaves_outside_samples_blank() {
        let samples = [
            ProfileSample {
                position: 0.0,
                point: [0.0, 0.0],
                field: Some(SampleField {
                    b: [3.0, 4.0],
                    b_magnitude: 5.0,
                    h: [1.0, 2.0],
                }),
            },
            ProfileSample {
                position: 2.5,
                point: [2.5, 0.0],
                field: None,
            },
        ];
        assert_eq!(
            profile_csv(&samples),
            "position,Bx,By,|B|,Hx,Hy\n0,3,4,5,1,2\n2.5,,,,,\n"
        );
    }
}
