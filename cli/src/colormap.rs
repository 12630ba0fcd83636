//! Our own sequential colour scale for |B|, built in CIELAB so that
//! lightness falls evenly from near-white (no field) to deep blue-violet
//! (strong field): equal steps of |B| look like equal steps of colour, the
//! picture still reads in grey, and air stays pale so outlines and flux
//! lines stand out. Hue turns from cream through green and teal to indigo.

/// Colour for `t` in [0, 1] as sRGB bytes.
pub fn flux_scale(t: f64) -> (u8, u8, u8) {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let lightness = 97.0 - 68.0 * t;
    let chroma = 4.0 + 44.0 * (0.9 * std::f64::consts::PI * t).sin().powf(0.7);
    let hue = (95.0 + 190.0 * t).to_radians();
    lab_to_srgb(lightness, chroma * hue.cos(), chroma * hue.sin())
}

/// CIELAB (D65 white) to sRGB bytes, clamped to the gamut (formulas of
/// IEC 61966-2-1 for sRGB and CIE 15 for L*a*b*).
fn lab_to_srgb(l: f64, a: f64, b: f64) -> (u8, u8, u8) {
    let fy = (l + 16.0) / 116.0;
    let fx = fy + a / 500.0;
    let fz = fy - b / 200.0;
    let inv = |f: f64| {
        if f > 6.0 / 29.0 {
            f * f * f
        } else {
            3.0 * (6.0f64 / 29.0).powi(2) * (f - 4.0 / 29.0)
        }
    };
    let (x, y, z) = (0.95047 * inv(fx), inv(fy), 1.08883 * inv(fz));
    let r = 3.2406 * x - 1.5372 * y - 0.4986 * z;
    let g = -0.9689 * x + 1.8758 * y + 0.0415 * z;
    let bl = 0.0557 * x - 0.2040 * y + 1.0570 * z;
    let gamma = |c: f64| {
        let c = c.clamp(0.0, 1.0);
        let v = if c <= 0.0031308 {
            12.92 * c
        } else {
            1.055 * c.powf(1.0 / 2.4) - 0.055
        };
        (v * 255.0).round() as u8
    };
    (gamma(r), gamma(g), gamma(bl))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative luminance per WCAG 2 / IEC 61966-2-1.
    fn luminance((r, g, b): (u8, u8, u8)) -> f64 {
        let lin = |c: u8| {
            let c = c as f64 / 255.0;
            if c <= 0.04045 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)
    }

    #[test]
    fn lightness_falls_monotonically_so_the_scale_reads_in_grey() {
        let mut last = 2.0;
        for k in 0..=100 {
            let y = luminance(flux_scale(k as f64 / 100.0));
            assert!(y < last, "luminance must fall at t = {}", k as f64 / 100.0);
            last = y;
        }
        // Near-white at zero field, dark at full scale.
        assert!(luminance(flux_scale(0.0)) > 0.85);
        assert!(luminance(flux_scale(1.0)) < 0.1);
    }

    #[test]
    fn white_point_maps_to_white() {
        // L* = 100, a* = b* = 0 is the D65 white (CIE 15).
        assert_eq!(lab_to_srgb(100.0, 0.0, 0.0), (255, 255, 255));
    }
}
