//! Progress of long runs, for the caller to display. The solver prints
//! nothing itself: a command-line tool draws bars, an embedding program
//! may log, and the default ([`Silent`]) ignores it all.

/// A mesh-and-solve run's current phase.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum Phase {
    /// Meshing the model (round 0 is the first mesh, later rounds are
    /// adaptive remeshes).
    Meshing {
        /// Adaptation round, 0 first.
        round: u32,
    },
    /// The Newton iteration on this round's mesh.
    Solving {
        /// Adaptation round, 0 first.
        round: u32,
        /// Triangles of the model's part of the mesh.
        triangles: usize,
    },
}

/// One finished Newton step.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct NewtonStep {
    /// 1 for the first step.
    pub iteration: usize,
    /// ‖R‖/‖R₀‖ after the step.
    pub relative_residual: f64,
    /// The residual at which the iteration stops.
    pub tolerance: f64,
}

/// Receives progress. `Sync`, because sweeps solve steps on several threads.
pub trait Progress: Sync {
    /// A new phase begins.
    fn phase(&self, phase: Phase) {
        let _ = phase;
    }
    /// A Newton step has finished.
    fn newton_step(&self, step: NewtonStep) {
        let _ = step;
    }
}

/// Ignores all progress.
#[derive(Clone, Copy, Debug, Default)]
pub struct Silent;

impl Progress for Silent {}
