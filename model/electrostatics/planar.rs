//! Planar (horizontally infinite) Poisson solve.
//!
//! d2phi/dz2 = -rho/eps0 (Gauss's law with E_z = -dphi/dz), discretised with
//! the second-order three-point Laplacian at cell centres:
//! (phi[k+1] - 2 phi[k] + phi[k-1]) / dz^2 = -rho[k] / eps0.
//! The boundaries lie half a cell from the first and last centre. There the
//! boundary derivative comes from the quadratic through the boundary value and
//! the two nearest centres (a one-sided second-order formula, exact for
//! quadratics), so a uniform charge between conductors is solved exactly:
//!   ground (z = 0, phi = 0):   dphi/dz = (-8/3 phi_b + 3 phi[0] - phi[1]/3) / dz
//!   top conductor (phi = V):   dphi/dz = ( 8/3 V - 3 phi[n-1] + phi[n-2]/3) / dz
//!   field-free top:            E_z(top) = 0 (all flux ends on the ground).
//! Cell equations are written in flux form, E[k+1] - E[k] = rho[k] dz/eps0,
//! so Gauss's law holds cell by cell to round-off. The tridiagonal matrix is
//! constant: its Thomas-algorithm factors are computed once, and each solve is
//! one forward and one backward sweep (O(n), no allocation).

use crate::constants::EPSILON_0;
use crate::grid::Grid;

/// Top boundary condition.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Top {
    FieldFree,
    /// Conductor at the given potential (V).
    Conductor(f64),
}

/// Precomputed planar solver.
#[derive(Debug, Clone)]
pub struct PlanarSolver {
    dz: f64,
    top: Top,
    /// Sub-diagonal a[k] (coefficient of phi[k-1]) and super-diagonal c[k].
    a: Vec<f64>,
    c: Vec<f64>,
    /// Thomas factors: modified super-diagonal and inverse pivots.
    c_star: Vec<f64>,
    inv_pivot: Vec<f64>,
}

impl PlanarSolver {
    pub fn new(grid: &Grid, top: Top) -> Self {
        let n = grid.len();
        assert!(n >= 2, "planar solver needs at least two cells");
        // Row k: a[k] phi[k-1] + b[k] phi[k] + c[k] phi[k+1] = rhs[k], from
        // E[k+1] - E[k] = rho[k] dz / eps0 multiplied by dz.
        let mut a = vec![-1.0; n];
        let mut b = vec![2.0; n];
        let mut c = vec![-1.0; n];
        a[0] = 0.0;
        b[0] = 4.0;
        c[0] = -4.0 / 3.0;
        c[n - 1] = 0.0;
        match top {
            Top::Conductor(_) => {
                b[n - 1] = 4.0;
                a[n - 1] = -4.0 / 3.0;
            }
            Top::FieldFree => {
                b[n - 1] = 1.0;
                a[n - 1] = -1.0;
            }
        }
        let mut c_star = vec![0.0; n];
        let mut inv_pivot = vec![0.0; n];
        inv_pivot[0] = 1.0 / b[0];
        c_star[0] = c[0] * inv_pivot[0];
        for k in 1..n {
            let pivot = b[k] - a[k] * c_star[k - 1];
            inv_pivot[k] = 1.0 / pivot;
            c_star[k] = c[k] * inv_pivot[k];
        }
        PlanarSolver {
            dz: grid.dz,
            top,
            a,
            c,
            c_star,
            inv_pivot,
        }
    }

    /// Solves for `phi` (V, centres) and `e` (V m-1, faces) given `rho` (C m-3, centres).
    pub fn solve(&self, rho: &[f64], phi: &mut [f64], e: &mut [f64]) {
        let n = rho.len();
        let h = self.dz;
        let s = h * h / EPSILON_0;
        // Forward sweep (phi holds the modified right-hand side).
        for k in 0..n {
            let mut rhs = rho[k] * s;
            if k == n - 1 {
                if let Top::Conductor(v) = self.top {
                    rhs += 8.0 / 3.0 * v;
                }
            }
            let prev = if k > 0 { self.a[k] * phi[k - 1] } else { 0.0 };
            phi[k] = (rhs - prev) * self.inv_pivot[k];
        }
        // Back substitution.
        for k in (0..n - 1).rev() {
            phi[k] -= self.c_star[k] * phi[k + 1];
        }
        debug_assert!(self.c[n - 1] == 0.0);
        // Field on faces, E = -dphi/dz, with the same boundary formulas.
        e[0] = -(3.0 * phi[0] - phi[1] / 3.0) / h;
        for k in 1..n {
            e[k] = -(phi[k] - phi[k - 1]) / h;
        }
        e[n] = match self.top {
            Top::FieldFree => 0.0,
            Top::Conductor(v) => -(8.0 / 3.0 * v - 3.0 * phi[n - 1] + phi[n - 2] / 3.0) / h,
        };
    }
}
