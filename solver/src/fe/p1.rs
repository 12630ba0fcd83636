//! Linear (P1) Lagrange triangle: one node per vertex, N_k = λ_k.

/// Number of local nodes.
pub const NODES: usize = 3;

/// Shape function values at barycentric point `l`.
pub fn values(l: [f64; 3]) -> [f64; 3] {
    l
}

/// Derivatives ∂N_a/∂λ_k (constant).
pub fn barycentric_derivatives() -> [[f64; 3]; 3] {
    [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]
}
