//! Quadratic (P2) Lagrange triangle: nodes at the vertices `a, b, c` and at
//! the midpoints of the edges `a-b`, `b-c`, `c-a`, in that order (the order
//! of [`fluxwright_mesher::EdgeTopology::triangle_edges`]).
//!
//! N_k = λ_k(2λ_k − 1) at vertex k; N = 4λ_iλ_j at the midpoint of edge i-j.

/// Number of local nodes.
pub const NODES: usize = 6;

/// The vertex pairs of the three edge nodes.
pub const EDGES: [[usize; 2]; 3] = [[0, 1], [1, 2], [2, 0]];

/// Shape function values at barycentric point `l`.
pub fn values(l: [f64; 3]) -> [f64; 6] {
    let mut n = [0.0; 6];
    for k in 0..3 {
        n[k] = l[k] * (2.0 * l[k] - 1.0);
    }
    for (e, [i, j]) in EDGES.into_iter().enumerate() {
        n[3 + e] = 4.0 * l[i] * l[j];
    }
    n
}

/// Derivatives ∂N_a/∂λ_k at barycentric point `l`.
pub fn barycentric_derivatives(l: [f64; 3]) -> [[f64; 3]; 6] {
    let mut d = [[0.0; 3]; 6];
    for k in 0..3 {
        d[k][k] = 4.0 * l[k] - 1.0;
    }
    for (e, [i, j]) in EDGES.into_iter().enumerate() {
        d[3 + e][i] = 4.0 * l[j];
        d[3 + e][j] = 4.0 * l[i];
    }
    d
}
