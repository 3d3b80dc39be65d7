//! Planar (horizontally infinite layers) electrostatics.
//!
//! Gauss's law dE_z/dz = rho/eps0 with E_z = -dphi/dz (Poisson's equation
//! d2phi/dz2 = -rho/eps0) over a conducting ground at 0 V. The charge
//! density is a cell average, taken uniform within each cell. The field is
//! found in flux form, integrating Gauss's law over each cell,
//! `E[k+1] - E[k] = rho[k] dz / eps0` (faces k, k+1 of cell k),
//! the second-order finite-volume form of Poisson's equation, which gives the
//! balloon-sounding inversion rho = eps0 dE/dz back exactly (Marshall & Rust
//! 1991). Inside a cell E_z is then linear, so the potential follows by exact
//! integration of -E_z: at the centre of cell k
//! `phi_c[k] = phi_f[k] - dz (3 E[k] + E[k+1]) / 8`,
//! and at the next face `phi_f[k+1] = phi_f[k] - dz (E[k] + E[k+1]) / 2`.
//! The one free constant, E at the ground, comes from the top boundary:
//! - field-free top: E(top) = 0, so all flux ends on the ground;
//! - conductor at potential V: the integral of E_z from ground to top is -V
//!   (trapezoid rule, exact for the piecewise-linear field).
//!
//! The result is the exact solution for cell-uniform charge: a uniform charge
//! between conductors (quadratic potential) is reproduced to round-off. Each
//! solve is two O(n) sweeps without allocation.

use crate::grid::Grid;
use crate::physics::constants::EPSILON_0;

/// Top boundary condition.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Top {
    FieldFree,
    /// Conductor at the given potential (V).
    Conductor(f64),
}

/// Planar solver (nothing to precompute beyond the spacing).
#[derive(Debug, Clone)]
pub struct PlanarSolver {
    dz: f64,
    top: Top,
}

impl PlanarSolver {
    pub fn new(grid: &Grid, top: Top) -> Self {
        PlanarSolver { dz: grid.dz, top }
    }

    /// Solves for `phi` (V, centres) and `e` (V m-1, faces) given `rho` (C m-3, centres).
    pub fn solve(&self, rho: &[f64], phi: &mut [f64], e: &mut [f64]) {
        let n = rho.len();
        let h = self.dz;
        // Gauss's law upward from a provisional E = 0 at the ground.
        e[0] = 0.0;
        for k in 0..n {
            e[k + 1] = e[k] + rho[k] * h / EPSILON_0;
        }
        let e0 = match self.top {
            Top::FieldFree => -e[n],
            Top::Conductor(v) => {
                // h * sum over cells of (E_k + E_k+1)/2 = -V with E = e0 + provisional.
                let trapezoid: f64 = e.windows(2).map(|w| 0.5 * (w[0] + w[1])).sum();
                (-v / h - trapezoid) / n as f64
            }
        };
        for x in e.iter_mut() {
            *x += e0;
        }
        let mut phi_face = 0.0;
        for k in 0..n {
            phi[k] = phi_face - h * (3.0 * e[k] + e[k + 1]) / 8.0;
            phi_face -= h * 0.5 * (e[k] + e[k + 1]);
        }
    }

    /// Cell-average potential (V) of cell k from its centre value: with E
    /// linear in the cell, the average lies rho dz^2 / (24 eps0) below the
    /// centre value.
    pub fn cell_mean_potential(&self, phi_centre: f64, rho: f64) -> f64 {
        phi_centre - rho * self.dz * self.dz / (24.0 * EPSILON_0)
    }
}
