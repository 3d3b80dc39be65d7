//! Uniform vertical grid from the ground (z = 0) to the model top.
//!
//! Cell k spans the faces `z_face[k]` and `z_face[k+1]`; its centre is
//! `z[k] = (k + 1/2) dz`. Scalars live at centres, vertical fluxes (and the
//! vertical electric field) on faces. Heights are geometric, in metres above
//! ground level.

/// The column's vertical grid (all heights in m above ground).
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    /// Cell thickness dz (m).
    pub dz: f64,
    /// Cell centres (m), length `n`.
    pub z: Vec<f64>,
    /// Cell faces (m), length `n + 1`, from 0 to the model top.
    pub z_face: Vec<f64>,
}

impl Grid {
    /// Builds a grid of `n` cells of thickness `dz` (m). Heights are computed as
    /// `k * dz` rather than by accumulation so they carry no drift.
    pub fn uniform(n: usize, dz: f64) -> Self {
        let z_face = (0..=n).map(|k| k as f64 * dz).collect();
        let z = (0..n).map(|k| (k as f64 + 0.5) * dz).collect();
        Grid { dz, z, z_face }
    }

    /// Number of cells.
    pub fn len(&self) -> usize {
        self.z.len()
    }

    /// True when the grid has no cells (never for a validated configuration).
    pub fn is_empty(&self) -> bool {
        self.z.is_empty()
    }

    /// Model top (m).
    pub fn top(&self) -> f64 {
        self.z_face[self.z_face.len() - 1]
    }

    /// Centres and faces interleaved bottom to top (`2n + 1` heights, spacing dz/2):
    /// the sample points of the hydrostatic integration.
    pub fn half_levels(&self) -> Vec<f64> {
        let n = self.len();
        (0..=2 * n).map(|k| k as f64 * 0.5 * self.dz).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn faces_bracket_centres() {
        let g = Grid::uniform(200, 100.0);
        assert_eq!(g.len(), 200);
        assert_eq!(g.z_face.len(), 201);
        assert_eq!(g.top(), 20_000.0);
        for k in 0..g.len() {
            assert!(g.z_face[k] < g.z[k] && g.z[k] < g.z_face[k + 1]);
        }
        let h = g.half_levels();
        assert_eq!(h.len(), 401);
        assert_eq!(h[1], g.z[0]);
        assert_eq!(h[400], g.top());
    }
}
