//! Built-in typical materials for `from_library`.
//!
//! These are rough typical values, written from memory, for first sketches
//! only: every entry says so in its `source`. Use the supplier's data sheet
//! for any number that matters.

/// One built-in material.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LibraryMaterial {
    /// The name used with `from_library`.
    pub name: &'static str,
    /// What it is.
    pub description: &'static str,
    /// Where the numbers come from.
    pub source: &'static str,
    /// Linear (or recoil) relative permeability, when the material is linear.
    pub relative_permeability: Option<f64>,
    /// B-H curve points (H in A/m, B in T), when the material is nonlinear.
    pub bh_curve: Option<(&'static [f64], &'static [f64])>,
    /// Remanence Br in T for magnets.
    pub remanence_t: Option<f64>,
}

const FROM_MEMORY: &str = "typical values from memory; use the supplier's sheet";

// Non-oriented silicon electrical steel, about 0.5 mm gauge: a generic
// curve of the usual shape (knee near 1.3-1.5 T).
const SILICON_STEEL_H: [f64; 11] = [
    0.0, 40.0, 60.0, 100.0, 200.0, 500.0, 1000.0, 2500.0, 5000.0, 10000.0, 50000.0,
];
const SILICON_STEEL_B: [f64; 11] = [0.0, 0.5, 0.8, 1.05, 1.25, 1.4, 1.48, 1.58, 1.67, 1.78, 2.02];

// Low-carbon solid steel (plunger and frame grades).
const LOW_CARBON_H: [f64; 11] = [
    0.0, 100.0, 200.0, 400.0, 800.0, 1600.0, 3200.0, 6400.0, 12800.0, 50000.0, 100000.0,
];
const LOW_CARBON_B: [f64; 11] = [0.0, 0.3, 0.7, 1.05, 1.3, 1.5, 1.65, 1.78, 1.9, 2.05, 2.15];

// Manganese-zinc power ferrite (initial μr about 2000, saturating near 0.5 T).
const FERRITE_H: [f64; 7] = [0.0, 10.0, 20.0, 50.0, 100.0, 300.0, 1000.0];
const FERRITE_B: [f64; 7] = [0.0, 0.025, 0.05, 0.2, 0.35, 0.45, 0.5];

/// The built-in materials.
pub const LIBRARY: &[LibraryMaterial] = &[
    LibraryMaterial {
        name: "silicon-steel",
        description: "non-oriented electrical steel, laminations",
        source: FROM_MEMORY,
        relative_permeability: None,
        bh_curve: Some((&SILICON_STEEL_H, &SILICON_STEEL_B)),
        remanence_t: None,
    },
    LibraryMaterial {
        name: "low-carbon-steel",
        description: "solid low-carbon steel for frames and plungers",
        source: FROM_MEMORY,
        relative_permeability: None,
        bh_curve: Some((&LOW_CARBON_H, &LOW_CARBON_B)),
        remanence_t: None,
    },
    LibraryMaterial {
        name: "mnzn-ferrite",
        description: "manganese-zinc power ferrite",
        source: FROM_MEMORY,
        relative_permeability: None,
        bh_curve: Some((&FERRITE_H, &FERRITE_B)),
        remanence_t: None,
    },
    LibraryMaterial {
        name: "ndfeb",
        description: "sintered neodymium-iron-boron magnet, mid grade",
        source: FROM_MEMORY,
        relative_permeability: Some(1.05),
        bh_curve: None,
        remanence_t: Some(1.2),
    },
    LibraryMaterial {
        name: "ferrite-magnet",
        description: "hard (strontium) ferrite magnet",
        source: FROM_MEMORY,
        relative_permeability: Some(1.1),
        bh_curve: None,
        remanence_t: Some(0.4),
    },
    LibraryMaterial {
        name: "copper",
        description: "copper conductor (magnetically like air)",
        source: "non-magnetic metal: μr = 1 to within 1e-5",
        relative_permeability: Some(1.0),
        bh_curve: None,
        remanence_t: None,
    },
    LibraryMaterial {
        name: "aluminium",
        description: "aluminium conductor (magnetically like air)",
        source: "non-magnetic metal: μr = 1 to within 1e-4",
        relative_permeability: Some(1.0),
        bh_curve: None,
        remanence_t: None,
    },
];

/// The built-in material called `name`, if there is one.
pub fn library_material(name: &str) -> Option<&'static LibraryMaterial> {
    LIBRARY.iter().find(|m| m.name == name)
}

/// All built-in materials, for listings.
pub fn library_materials() -> &'static [LibraryMaterial] {
    LIBRARY
}

#[cfg(test)]
mod tests {
    use super::*;

    const MU0: f64 = 4e-7 * std::f64::consts::PI;

    #[test]
    fn library_curves_obey_the_format_rules() {
        for m in LIBRARY {
            assert!(
                m.relative_permeability.is_some() != m.bh_curve.is_some(),
                "{}",
                m.name
            );
            if let Some((h, b)) = m.bh_curve {
                assert_eq!(h.len(), b.len(), "{}", m.name);
                assert_eq!((h[0], b[0]), (0.0, 0.0), "{}", m.name);
                for k in 1..h.len() {
                    assert!(h[k] > h[k - 1] && b[k] > b[k - 1], "{} point {k}", m.name);
                    // Any ferromagnet's differential permeability stays above μ0
                    // (B = μ0 (H + M) with M non-decreasing): common practice, no source.
                    assert!(
                        (b[k] - b[k - 1]) / (h[k] - h[k - 1]) > MU0,
                        "{} segment {k}",
                        m.name
                    );
                }
            }
        }
    }
}
