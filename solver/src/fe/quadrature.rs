//! Symmetric quadrature rules on triangles.
//!
//! Points and weights of D. A. Dunavant, "High degree efficient symmetrical
//! Gaussian quadrature rules for the triangle", Int. J. Numer. Meth. Eng. 21
//! (1985) 1129–1148, Table I (values written from memory of that table, and
//! verified by the exactness test below: every monomial up to each rule's
//! degree is integrated to rounding error).
//!
//! Only rules with positive weights and interior points are offered (degrees
//! 1, 2, 4, 5, 6 and 8); a request for degree 3 or 7 gets the next higher
//! rule, because Dunavant's degree-3 and degree-7 rules have a negative
//! weight, which can make a nonlinear tangent matrix indefinite.

/// A quadrature rule on a triangle: barycentric points and weights that sum
/// to 1 (multiply by the triangle's area).
#[derive(Clone, Debug, PartialEq)]
pub struct TriangleRule {
    /// Exact for polynomials up to this total degree.
    pub degree: u32,
    /// Barycentric coordinates of the points.
    pub points: Vec<[f64; 3]>,
    /// Weights, summing to 1.
    pub weights: Vec<f64>,
}

/// One orbit of a symmetric rule.
enum Orbit {
    /// The centroid.
    Centroid(f64),
    /// The three points (a, b, b), (b, a, b), (b, b, a) with b = (1 − a)/2.
    Three(f64, f64),
    /// The six permutations of (a, b, 1 − a − b).
    Six(f64, f64, f64),
}

fn build(degree: u32, orbits: &[Orbit]) -> TriangleRule {
    let mut points = Vec::new();
    let mut weights = Vec::new();
    for orbit in orbits {
        match *orbit {
            Orbit::Centroid(w) => {
                points.push([1.0 / 3.0; 3]);
                weights.push(w);
            }
            Orbit::Three(a, w) => {
                let b = 0.5 * (1.0 - a);
                for p in [[a, b, b], [b, a, b], [b, b, a]] {
                    points.push(p);
                    weights.push(w);
                }
            }
            Orbit::Six(a, b, w) => {
                let c = 1.0 - a - b;
                for p in [
                    [a, b, c],
                    [a, c, b],
                    [b, a, c],
                    [b, c, a],
                    [c, a, b],
                    [c, b, a],
                ] {
                    points.push(p);
                    weights.push(w);
                }
            }
        }
    }
    TriangleRule {
        degree,
        points,
        weights,
    }
}

/// The Dunavant rule exact to at least `degree` (capped at 8).
pub fn dunavant(degree: u32) -> TriangleRule {
    use Orbit::*;
    match degree {
        0 | 1 => build(1, &[Centroid(1.0)]),
        2 => build(2, &[Three(2.0 / 3.0, 1.0 / 3.0)]),
        3 | 4 => build(
            4,
            &[
                Three(0.108_103_018_168_070, 0.223_381_589_678_011),
                Three(0.816_847_572_980_459, 0.109_951_743_655_322),
            ],
        ),
        5 => build(
            5,
            &[
                Centroid(0.225),
                Three(0.059_715_871_789_770, 0.132_394_152_788_506),
                Three(0.797_426_985_353_087, 0.125_939_180_544_827),
            ],
        ),
        6 => build(
            6,
            &[
                Three(0.501_426_509_658_179, 0.116_786_275_726_379),
                Three(0.873_821_971_016_996, 0.050_844_906_370_207),
                Six(
                    0.053_145_049_844_817,
                    0.310_352_451_033_784,
                    0.082_851_075_618_374,
                ),
            ],
        ),
        _ => build(
            8,
            &[
                Centroid(0.144_315_607_677_787),
                Three(0.081_414_823_414_554, 0.095_091_634_267_285),
                Three(0.658_861_384_496_480, 0.103_217_370_534_718),
                Three(0.898_905_543_365_938, 0.032_458_497_623_198),
                Six(
                    0.008_394_777_409_958,
                    0.263_112_829_634_638,
                    0.027_230_314_174_435,
                ),
            ],
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn factorial(n: u32) -> f64 {
        (1..=n).map(f64::from).product()
    }

    #[test]
    fn rules_integrate_monomials_exactly() {
        // ∫ λ1^i λ2^j dA over the reference triangle of area 1/2 is
        // i! j! / (i + j + 2)! (standard result, e.g. any FE textbook).
        for degree in [1, 2, 4, 5, 6, 8] {
            let rule = dunavant(degree);
            assert_eq!(rule.degree, degree);
            assert!((rule.weights.iter().sum::<f64>() - 1.0).abs() < 1e-14);
            assert!(rule.weights.iter().all(|&w| w > 0.0));
            assert!(rule.points.iter().all(|p| p.iter().all(|&l| l > 0.0)));
            for i in 0..=degree {
                for j in 0..=degree - i {
                    let q: f64 = rule
                        .points
                        .iter()
                        .zip(&rule.weights)
                        .map(|(p, w)| w * 0.5 * p[1].powi(i as i32) * p[2].powi(j as i32))
                        .sum();
                    let exact = factorial(i) * factorial(j) / factorial(i + j + 2);
                    assert!(
                        (q - exact).abs() < 2e-14,
                        "degree {degree}, x^{i} y^{j}: {q} vs {exact}"
                    );
                }
            }
        }
    }
}
