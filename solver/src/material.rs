//! Magnetic materials: linear, nonlinear (B-H curve) and permanent magnets.
//!
//! # B-H curves
//!
//! A curve is stored as a monotone cubic Hermite interpolant of **H(B)**
//! (Fritsch & Carlson, SIAM J. Numer. Anal. 17 (1980) 238–246, with the
//! weighted harmonic-mean slopes of Fritsch & Butland, SIAM J. Sci. Stat.
//! Comput. 5 (1984) 300–304). We interpolate H(B) rather than B(H) because the
//! solver asks for the reluctivity ν(B²) = H/B and its derivative at every
//! quadrature point of every Newton step: with H(B) stored directly both are
//! closed-form and exactly consistent with each other, with no inner Newton
//! solve; the inverse of a monotone curve is monotone, so it describes the
//! same material. B(H) is available by inversion ([`BhCurve::b_of_h`]).
//!
//! The cubic ends with slope dH/dB = 1/μ0 at the last point and continues as
//! the straight line of slope 1/μ0 beyond it, so value and slope are
//! continuous there (a kink at the last point slows Newton's method).

use std::f64::consts::PI;

/// Permeability of free space, H/m (the pre-2019 exact value 4π·10⁻⁷; the
/// 2019 SI value differs by 5·10⁻¹⁰ relative).
pub const MU0: f64 = 4.0e-7 * PI;

/// Reluctivity of free space 1/μ0, m/H.
pub const NU0: f64 = 1.0 / MU0;

/// Errors in material data.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum MaterialError {
    /// The H and B lists have different lengths.
    #[error("B-H curve: {h} H values but {b} B values; give one H for each B")]
    LengthMismatch {
        /// Number of H values.
        h: usize,
        /// Number of B values.
        b: usize,
    },
    /// Too few points.
    #[error("B-H curve: needs at least one point besides (0, 0)")]
    TooFewPoints,
    /// A value is not finite or negative.
    #[error("B-H curve: point {index} (H = {h}, B = {b}) is not finite and ≥ 0")]
    BadValue {
        /// Index of the point in the list as given.
        index: usize,
        /// H at that point, A/m.
        h: f64,
        /// B at that point, T.
        b: f64,
    },
    /// The points are not strictly increasing in both H and B.
    #[error("B-H curve: point {index} (H = {h}, B = {b}) does not increase both H and B over the point before it")]
    NotIncreasing {
        /// Index of the point in the list as given.
        index: usize,
        /// H at that point, A/m.
        h: f64,
        /// B at that point, T.
        b: f64,
    },
    /// A curve with a point at H = 0 or B = 0 other than the origin.
    #[error("B-H curve: the first point must be (0, 0) or have both H > 0 and B > 0")]
    BadOrigin,
    /// A stacking factor outside (0, 1].
    #[error("stacking factor {0} is out of range: it must satisfy 0 < f ≤ 1")]
    StackingFactor(f64),
    /// A relative permeability that is not finite and > 0.
    #[error("relative permeability {0} is out of range: it must be finite and > 0")]
    Permeability(f64),
    /// A remanence or direction that is not finite.
    #[error("magnet remanence {remanence_t} T / direction {direction_rad} rad must be finite")]
    Magnet {
        /// Remanence, T.
        remanence_t: f64,
        /// Direction, radians.
        direction_rad: f64,
    },
}

/// A nonlinear B-H curve: a monotone C¹ cubic interpolant of H(B) through the
/// given points, ending with slope 1/μ0 and continued as a straight line of
/// slope 1/μ0 beyond the last point.
#[derive(Clone, Debug, PartialEq)]
pub struct BhCurve {
    /// Knots in B, T, starting at 0, strictly increasing.
    b: Vec<f64>,
    /// H at the knots, A/m.
    h: Vec<f64>,
    /// dH/dB at the knots, A/(m·T).
    slope: Vec<f64>,
    /// ∫₀^{B_k} H dB at the knots, J/m³.
    energy: Vec<f64>,
    /// Number of knots that came from the data (a synthetic continuation
    /// knot may follow).
    data_knots: usize,
}

/// Differential relative permeability above which the last data secant is
/// too steep for a monotone cubic to end with slope μ0 (the Fritsch-Carlson
/// limit: end slope ≤ 3 × secant).
const MAX_END_RATIO: f64 = 3.0;

/// Extra B, T, of the synthetic knot appended when the data stop before
/// saturation (see [`BhCurve::try_new`]).
const CONTINUATION_DB: f64 = 0.1;

impl BhCurve {
    /// Build a curve from points `(h[k], b[k])`, H in A/m and B in T, strictly
    /// increasing in both. The origin is added when absent.
    ///
    /// Slopes: interior knots take the Fritsch-Butland weighted harmonic mean
    /// of the neighbouring secants (always within the Fritsch-Carlson
    /// monotonicity region), the first knot takes the three-point end formula
    /// clamped to [½, 3] × the first secant (so ν(0) is finite and positive),
    /// the last takes 1/μ0.
    ///
    /// If the last data secant is steeper than differential μr = 3, no
    /// monotone cubic can end there with slope μ0; then one knot is appended
    /// 0.1 T further on with a secant of differential μr 2. That stretch is
    /// an extrapolation, like everything beyond the data: give data well into
    /// saturation for accurate results there.
    pub fn try_new(h: &[f64], b: &[f64]) -> Result<BhCurve, MaterialError> {
        if h.len() != b.len() {
            return Err(MaterialError::LengthMismatch {
                h: h.len(),
                b: b.len(),
            });
        }
        let mut hs = Vec::with_capacity(h.len() + 2);
        let mut bs = Vec::with_capacity(h.len() + 2);
        for (index, (&hk, &bk)) in h.iter().zip(b).enumerate() {
            if !(hk.is_finite() && bk.is_finite() && hk >= 0.0 && bk >= 0.0) {
                return Err(MaterialError::BadValue {
                    index,
                    h: hk,
                    b: bk,
                });
            }
            if index == 0 {
                if hk == 0.0 && bk == 0.0 {
                    hs.push(0.0);
                    bs.push(0.0);
                    continue;
                }
                if hk == 0.0 || bk == 0.0 {
                    return Err(MaterialError::BadOrigin);
                }
                hs.push(0.0);
                bs.push(0.0);
            }
            let (hp, bp) = (hs[hs.len() - 1], bs[bs.len() - 1]);
            if !(hk > hp && bk > bp) {
                return Err(MaterialError::NotIncreasing {
                    index,
                    h: hk,
                    b: bk,
                });
            }
            hs.push(hk);
            bs.push(bk);
        }
        if bs.len() < 2 {
            return Err(MaterialError::TooFewPoints);
        }
        let data_knots = bs.len();
        let n = bs.len();
        let last_secant = (hs[n - 1] - hs[n - 2]) / (bs[n - 1] - bs[n - 2]);
        if last_secant * MAX_END_RATIO < NU0 {
            let db = CONTINUATION_DB;
            bs.push(bs[n - 1] + db);
            hs.push(hs[n - 1] + 0.5 * NU0 * db);
        }
        Ok(Self::from_knots(bs, hs, data_knots))
    }

    fn from_knots(b: Vec<f64>, h: Vec<f64>, data_knots: usize) -> BhCurve {
        let n = b.len();
        let width: Vec<f64> = b.windows(2).map(|w| w[1] - w[0]).collect();
        let secant: Vec<f64> = (0..n - 1).map(|k| (h[k + 1] - h[k]) / width[k]).collect();
        let mut slope = vec![0.0; n];
        for k in 1..n - 1 {
            // Fritsch-Butland weighted harmonic mean (the secants are > 0).
            let (h0, h1) = (width[k - 1], width[k]);
            let w1 = 2.0 * h1 + h0;
            let w2 = h1 + 2.0 * h0;
            slope[k] = (w1 + w2) / (w1 / secant[k - 1] + w2 / secant[k]);
        }
        slope[0] = if n > 2 {
            let (h0, h1) = (width[0], width[1]);
            let three_point = ((2.0 * h0 + h1) * secant[0] - h0 * secant[1]) / (h0 + h1);
            three_point.clamp(0.5 * secant[0], 3.0 * secant[0])
        } else {
            secant[0]
        };
        slope[n - 1] = NU0;
        let mut curve = BhCurve {
            b,
            h,
            slope,
            energy: vec![0.0; n],
            data_knots,
        };
        for k in 1..n {
            curve.energy[k] = curve.energy[k - 1] + curve.segment_integral(k - 1, 1.0);
        }
        curve
    }

    /// The data knots `(H, B)` the curve passes through (origin included).
    pub fn points(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.h
            .iter()
            .copied()
            .zip(self.b.iter().copied())
            .take(self.data_knots)
    }

    /// B of the last data point, T (beyond it the curve is a straight line
    /// of slope μ0, or first a synthetic continuation knot, see
    /// [`BhCurve::try_new`]).
    pub fn last_data_b(&self) -> f64 {
        self.b[self.data_knots - 1]
    }

    /// The effective curve of a lamination stack with iron fill `f`: iron and
    /// the insulating gaps (air) carry the same H in parallel, so
    /// B_eff(H) = f·B(H) + (1 − f)·μ0·H. Applied at the knots and
    /// re-interpolated; the end slope stays μ0.
    pub fn laminated(&self, stacking_factor: f64) -> Result<BhCurve, MaterialError> {
        let f = stacking_factor;
        if !(f > 0.0 && f <= 1.0) {
            return Err(MaterialError::StackingFactor(f));
        }
        if f == 1.0 {
            return Ok(self.clone());
        }
        let (h, b): (Vec<f64>, Vec<f64>) = self
            .points()
            .skip(1)
            .map(|(h, b)| (h, f * b + (1.0 - f) * MU0 * h))
            .unzip();
        BhCurve::try_new(&h, &b)
    }

    fn locate(&self, b: f64) -> usize {
        // Index k of the segment [b_k, b_{k+1}) holding b; n-1 past the end.
        self.b.partition_point(|&x| x <= b).saturating_sub(1)
    }

    /// ∫ H dB over segment `k` from its start to local parameter `t ∈ [0,1]`.
    fn segment_integral(&self, k: usize, t: f64) -> f64 {
        let w = self.b[k + 1] - self.b[k];
        let (t2, t3, t4) = (t * t, t * t * t, t * t * t * t);
        let i00 = 0.5 * t4 - t3 + t;
        let i10 = 0.25 * t4 - 2.0 / 3.0 * t3 + 0.5 * t2;
        let i01 = -0.5 * t4 + t3;
        let i11 = 0.25 * t4 - t3 / 3.0;
        w * (i00 * self.h[k]
            + i10 * w * self.slope[k]
            + i01 * self.h[k + 1]
            + i11 * w * self.slope[k + 1])
    }

    /// H(B) and dH/dB at `b ≥ 0` (negative `b` is treated as |b|).
    pub fn h_and_slope(&self, b: f64) -> (f64, f64) {
        let b = b.abs();
        let n = self.b.len();
        let k = self.locate(b);
        if k >= n - 1 {
            return (self.h[n - 1] + NU0 * (b - self.b[n - 1]), NU0);
        }
        let w = self.b[k + 1] - self.b[k];
        let t = (b - self.b[k]) / w;
        let (t2, t3) = (t * t, t * t * t);
        let h00 = 2.0 * t3 - 3.0 * t2 + 1.0;
        let h10 = t3 - 2.0 * t2 + t;
        let h01 = -2.0 * t3 + 3.0 * t2;
        let h11 = t3 - t2;
        let (hk, hk1, dk, dk1) = (
            self.h[k],
            self.h[k + 1],
            self.slope[k] * w,
            self.slope[k + 1] * w,
        );
        let value = h00 * hk + h10 * dk + h01 * hk1 + h11 * dk1;
        let d00 = 6.0 * t2 - 6.0 * t;
        let d10 = 3.0 * t2 - 4.0 * t + 1.0;
        let d01 = -6.0 * t2 + 6.0 * t;
        let d11 = 3.0 * t2 - 2.0 * t;
        let deriv = (d00 * hk + d10 * dk + d01 * hk1 + d11 * dk1) / w;
        (value, deriv)
    }

    /// H at flux density `b`, A/m.
    pub fn h_of_b(&self, b: f64) -> f64 {
        self.h_and_slope(b).0
    }

    /// B at field strength `h ≥ 0`, T: the inverse of [`BhCurve::h_of_b`], by
    /// safeguarded Newton iteration (bisection when a step leaves the
    /// bracket).
    pub fn b_of_h(&self, h: f64) -> f64 {
        let h = h.abs();
        let n = self.b.len();
        if h >= self.h[n - 1] {
            return self.b[n - 1] + (h - self.h[n - 1]) * MU0;
        }
        let k = self.h.partition_point(|&x| x <= h).saturating_sub(1);
        let (mut lo, mut hi) = (self.b[k], self.b[k + 1]);
        let mut x = lo + (hi - lo) * (h - self.h[k]) / (self.h[k + 1] - self.h[k]);
        for _ in 0..100 {
            let (value, slope) = self.h_and_slope(x);
            let f = value - h;
            if f > 0.0 {
                hi = x;
            } else {
                lo = x;
            }
            let mut next = x - f / slope;
            if !(next > lo && next < hi) {
                next = 0.5 * (lo + hi);
            }
            if (next - x).abs() <= 1e-15 * (1.0 + x.abs()) {
                return next;
            }
            x = next;
        }
        x
    }

    /// Reluctivity ν = H/B, m/H, and its derivative dν/d(B²), at `b2` = B².
    ///
    /// ν(0) is the initial slope dH/dB at B = 0, finite. In the first
    /// segment H = d₀B + a₂B² + a₃B³, so ν and dν/dB² = (a₂ + 2a₃B)/(2B) are
    /// evaluated from these coefficients without cancellation. That
    /// derivative grows like 1/B as B → 0, but the solver only uses it as
    /// 2·dν/dB²·(B·u)(B·v), which stays bounded; at B = 0 exactly it is
    /// evaluated at B = 10⁻⁹·B₁ to stay finite.
    pub fn reluctivity(&self, b2: f64) -> (f64, f64) {
        let b = b2.max(0.0).sqrt();
        if b < self.b[1] {
            let w = self.b[1];
            let (h1, d0, d1) = (self.h[1], self.slope[0], self.slope[1]);
            // H(B) = d0 B + a2 B² + a3 B³ on [0, b1] (Hermite with H(0)=0).
            let a2 = (3.0 * h1 / w - 2.0 * d0 - d1) / w;
            let a3 = (d0 + d1 - 2.0 * h1 / w) / (w * w);
            let bs = b.max(1e-9 * w);
            let nu = d0 + a2 * b + a3 * b * b;
            return (nu, (a2 + 2.0 * a3 * bs) / (2.0 * bs));
        }
        let (h, dh) = self.h_and_slope(b);
        let nu = h / b;
        (nu, (dh * b - h) / (2.0 * b * b * b))
    }

    /// Stored energy density ∫₀^B H dB', J/m³ (exact integral of the cubic).
    pub fn energy_density(&self, b: f64) -> f64 {
        let b = b.abs();
        let n = self.b.len();
        let k = self.locate(b);
        if k >= n - 1 {
            let d = b - self.b[n - 1];
            return self.energy[n - 1] + self.h[n - 1] * d + 0.5 * NU0 * d * d;
        }
        let t = (b - self.b[k]) / (self.b[k + 1] - self.b[k]);
        self.energy[k] + self.segment_integral(k, t)
    }

    /// Co-energy density ∫₀^H B dH' = B·H − ∫H dB, J/m³, at flux density `b`.
    pub fn coenergy_density(&self, b: f64) -> f64 {
        b.abs() * self.h_of_b(b) - self.energy_density(b)
    }
}

/// A material as the solver sees it.
#[derive(Clone, Debug, PartialEq)]
pub enum Material {
    /// Linear, isotropic: B = μ0 μr H.
    Linear {
        /// Relative permeability.
        mu_r: f64,
    },
    /// Nonlinear, isotropic soft iron (lamination already folded in, see
    /// [`BhCurve::laminated`]).
    Curve(BhCurve),
    /// A permanent magnet on its linear recoil line: B = μ0 μr H + Br·m̂.
    Magnet {
        /// Remanence Br, T.
        remanence_t: f64,
        /// Recoil relative permeability.
        recoil_mu_r: f64,
        /// Direction of magnetization m̂ from +x (planar) or +r
        /// (axisymmetric), radians.
        direction_rad: f64,
    },
}

/// A material's constitutive law evaluated at one point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MaterialPoint {
    /// H, A/m.
    pub h: [f64; 2],
    /// Reluctivity ν, m/H.
    pub nu: f64,
    /// dν/d(B²) (zero for linear materials and magnets).
    pub dnu_db2: f64,
}

impl Material {
    /// Air (μr = 1).
    pub const AIR: Material = Material::Linear { mu_r: 1.0 };

    /// Check the parameters.
    pub fn validate(&self) -> Result<(), MaterialError> {
        match *self {
            Material::Linear { mu_r } => positive(mu_r),
            Material::Curve(_) => Ok(()),
            Material::Magnet {
                remanence_t,
                recoil_mu_r,
                direction_rad,
            } => {
                positive(recoil_mu_r)?;
                if remanence_t.is_finite() && direction_rad.is_finite() {
                    Ok(())
                } else {
                    Err(MaterialError::Magnet {
                        remanence_t,
                        direction_rad,
                    })
                }
            }
        }
    }

    /// The material of a lamination stack with iron fill `f` (0 < f ≤ 1):
    /// μ_eff = f·μr + (1 − f) for linear materials, [`BhCurve::laminated`]
    /// for curves. Magnets are not laminated and come back unchanged.
    pub fn laminated(self, stacking_factor: f64) -> Result<Material, MaterialError> {
        let f = stacking_factor;
        if !(f > 0.0 && f <= 1.0) {
            return Err(MaterialError::StackingFactor(f));
        }
        Ok(match self {
            Material::Linear { mu_r } => Material::Linear {
                mu_r: f * mu_r + (1.0 - f),
            },
            Material::Curve(c) => Material::Curve(c.laminated(f)?),
            m @ Material::Magnet { .. } => m,
        })
    }

    /// Whether ν depends on B.
    pub fn is_nonlinear(&self) -> bool {
        matches!(self, Material::Curve(_))
    }

    /// The remanence vector Br·m̂, T (zero except for magnets).
    pub fn remanence(&self) -> [f64; 2] {
        match *self {
            Material::Magnet {
                remanence_t,
                direction_rad,
                ..
            } => [
                remanence_t * direction_rad.cos(),
                remanence_t * direction_rad.sin(),
            ],
            _ => [0.0, 0.0],
        }
    }

    /// Evaluate H(B), ν and dν/dB² at flux density `b`.
    pub fn at(&self, b: [f64; 2]) -> MaterialPoint {
        match self {
            Material::Linear { mu_r } => {
                let nu = NU0 / mu_r;
                MaterialPoint {
                    h: [nu * b[0], nu * b[1]],
                    nu,
                    dnu_db2: 0.0,
                }
            }
            Material::Curve(c) => {
                let (nu, dnu_db2) = c.reluctivity(b[0] * b[0] + b[1] * b[1]);
                MaterialPoint {
                    h: [nu * b[0], nu * b[1]],
                    nu,
                    dnu_db2,
                }
            }
            Material::Magnet { recoil_mu_r, .. } => {
                let nu = NU0 / recoil_mu_r;
                let br = self.remanence();
                MaterialPoint {
                    h: [nu * (b[0] - br[0]), nu * (b[1] - br[1])],
                    nu,
                    dnu_db2: 0.0,
                }
            }
        }
    }

    /// Stored energy density ∫H·dB from the state H = 0, J/m³.
    pub fn energy_density(&self, b: [f64; 2]) -> f64 {
        match self {
            Material::Linear { mu_r } => 0.5 * NU0 / mu_r * (b[0] * b[0] + b[1] * b[1]),
            Material::Curve(c) => c.energy_density(b[0].hypot(b[1])),
            Material::Magnet { recoil_mu_r, .. } => {
                let br = self.remanence();
                let d = [b[0] - br[0], b[1] - br[1]];
                0.5 * NU0 / recoil_mu_r * (d[0] * d[0] + d[1] * d[1])
            }
        }
    }

    /// Co-energy density ∫B·dH = B·H − ∫H·dB, J/m³.
    pub fn coenergy_density(&self, b: [f64; 2]) -> f64 {
        let p = self.at(b);
        b[0] * p.h[0] + b[1] * p.h[1] - self.energy_density(b)
    }
}

fn positive(mu_r: f64) -> Result<(), MaterialError> {
    if mu_r.is_finite() && mu_r > 0.0 {
        Ok(())
    } else {
        Err(MaterialError::Permeability(mu_r))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A typical non-oriented electrical steel curve (values from memory of
    /// published M-19-like data; only its shape matters here).
    fn steel() -> BhCurve {
        let h = [
            0.0, 40.0, 60.0, 80.0, 100.0, 150.0, 200.0, 300.0, 500.0, 1000.0, 2500.0, 5000.0,
            10000.0, 30000.0, 100000.0,
        ];
        let b = [
            0.0, 0.3, 0.55, 0.8, 1.0, 1.2, 1.3, 1.4, 1.5, 1.6, 1.7, 1.8, 1.9, 2.05, 2.2,
        ];
        BhCurve::try_new(&h, &b).unwrap()
    }

    #[test]
    fn passes_through_points_and_is_monotone() {
        let c = steel();
        for (h, b) in c.points() {
            // Interpolation property: exact at the knots (up to rounding).
            assert!(
                (c.h_of_b(b) - h).abs() <= 1e-9 * (1.0 + h),
                "H({b}) = {} vs {h}",
                c.h_of_b(b)
            );
            assert!((c.b_of_h(h) - b).abs() <= 1e-12 * (1.0 + b));
        }
        let mut last = -1.0;
        for i in 0..=30000 {
            let b = 2.5 * i as f64 / 30000.0;
            let (h, slope) = c.h_and_slope(b);
            assert!(h > last || i == 0, "not increasing at B = {b}");
            assert!(slope > 0.0, "slope {slope} at B = {b}");
            last = h;
        }
    }

    #[test]
    fn continuous_value_and_slope_at_last_point() {
        let c = steel();
        let bn = c.last_data_b();
        let eps = 1e-7;
        let (h_lo, s_lo) = c.h_and_slope(bn - eps);
        let (h_hi, s_hi) = c.h_and_slope(bn + eps);
        assert!((h_hi - h_lo).abs() < 2.0 * eps * NU0 * 1.01);
        // Slope is 1/μ0 on both sides (differential μr = 1 in saturation).
        assert!((s_lo / NU0 - 1.0).abs() < 1e-5, "{s_lo}");
        assert!((s_hi / NU0 - 1.0).abs() < 1e-12);
        // B(H) past the end: slope μ0.
        let b1 = c.b_of_h(2e5);
        let b2 = c.b_of_h(3e5);
        assert!(((b2 - b1) / 1e5 / MU0 - 1.0).abs() < 1e-9);
    }

    #[test]
    fn reluctivity_derivative_matches_finite_differences() {
        let c = steel();
        for &b in &[1e-3, 0.1, 0.29, 0.31, 0.9, 1.45, 1.75, 2.0, 2.2, 2.5] {
            let b2 = b * b;
            let (nu, d) = c.reluctivity(b2);
            assert!((nu - c.h_of_b(b) / b).abs() <= 1e-9 * nu);
            let step = 1e-6 * b2;
            let fd = (c.reluctivity(b2 + step).0 - c.reluctivity(b2 - step).0) / (2.0 * step);
            let scale = d.abs().max(nu / b2 * 1e-6);
            assert!(
                (fd - d).abs() <= 1e-5 * scale,
                "B = {b}: dν/dB² {d} vs fd {fd}"
            );
        }
        // ν at B → 0 is finite and equals the initial slope.
        let (nu0, _) = c.reluctivity(0.0);
        assert!(nu0.is_finite() && nu0 > 0.0);
        assert!((c.reluctivity(1e-20).0 - nu0).abs() < 1e-6 * nu0);
    }

    #[test]
    fn energy_and_coenergy_integrate_the_curve() {
        let c = steel();
        // Trapezoidal integration of H dB on a fine grid as the reference.
        let b_end = 2.3;
        let n = 200_000;
        let mut w = 0.0;
        for i in 0..n {
            let (b0, b1) = (
                b_end * i as f64 / n as f64,
                b_end * (i + 1) as f64 / n as f64,
            );
            w += 0.5 * (c.h_of_b(b0) + c.h_of_b(b1)) * (b1 - b0);
        }
        assert!((c.energy_density(b_end) - w).abs() < 1e-6 * w);
        let h_end = c.h_of_b(b_end);
        assert!(
            (c.energy_density(b_end) + c.coenergy_density(b_end) - b_end * h_end).abs()
                < 1e-9 * b_end * h_end
        );
    }

    #[test]
    fn unsaturated_data_get_a_monotone_continuation() {
        // Data that stop at μr ≈ 1000: a continuation knot is appended.
        let c = BhCurve::try_new(&[100.0, 200.0], &[0.5, 0.75]).unwrap();
        assert!(c.b.len() == 4);
        let mut last = 0.0;
        for i in 1..=1000 {
            let b = 1.2 * i as f64 / 1000.0;
            let h = c.h_of_b(b);
            assert!(h > last);
            last = h;
        }
    }

    #[test]
    fn lamination_mixes_iron_and_air_in_parallel() {
        let c = steel();
        let f = 0.95;
        let l = c.laminated(f).unwrap();
        for (h, b) in c.points().skip(1) {
            // At equal H the stack carries f·B_iron + (1−f)·μ0·H.
            let expected = f * b + (1.0 - f) * MU0 * h;
            assert!((l.b_of_h(h) - expected).abs() < 1e-10);
        }
        assert!(c.laminated(0.0).is_err());
        assert_eq!(
            Material::Linear { mu_r: 1001.0 }.laminated(0.5).unwrap(),
            Material::Linear { mu_r: 501.0 }
        );
    }

    #[test]
    fn bad_curves_are_rejected_with_the_culprit() {
        assert_eq!(
            BhCurve::try_new(&[0.0, 10.0, 5.0], &[0.0, 1.0, 1.2]),
            Err(MaterialError::NotIncreasing {
                index: 2,
                h: 5.0,
                b: 1.2
            })
        );
        assert!(matches!(
            BhCurve::try_new(&[1.0], &[]),
            Err(MaterialError::LengthMismatch { .. })
        ));
        assert!(matches!(
            BhCurve::try_new(&[0.0], &[0.0]),
            Err(MaterialError::TooFewPoints)
        ));
        assert!(matches!(
            BhCurve::try_new(&[f64::NAN], &[1.0]),
            Err(MaterialError::BadValue { .. })
        ));
    }

    #[test]
    fn magnet_law_and_energy() {
        let m = Material::Magnet {
            remanence_t: 1.2,
            recoil_mu_r: 1.05,
            direction_rad: 0.0,
        };
        // At B = Br (closed circuit) H = 0 and the stored energy is zero.
        let p = m.at([1.2, 0.0]);
        assert!(p.h[0].abs() < 1e-9 && p.h[1] == 0.0);
        assert!(m.energy_density([1.2, 0.0]).abs() < 1e-9);
        // At B = 0 (short of the recoil line): H = −Br/(μ0 μr), the coercivity.
        let p = m.at([0.0, 0.0]);
        assert!((p.h[0] + 1.2 / (MU0 * 1.05)).abs() < 1e-6);
    }
}
