//! Electrostatics of the column: potential and vertical field from the total
//! charge density, every step.
//!
//! Conventions: charge density rho (C m-3) is a cell average at centres; the
//! potential phi (V) is at centres; the vertical field E_z = -dphi/dz (V m-1)
//! is on faces and positive when it points up. The ground (z = 0) is a
//! conductor at 0 V. Two geometries:
//!
//! - [`planar`]: horizontally infinite layers, Poisson's equation
//!   d2phi/dz2 = -rho/eps0 in flux (finite-volume) form, exact for
//!   cell-uniform charge;
//! - [`mod@column`]: charge confined to a vertical cylinder over conducting ground
//!   (image charges), exact on-axis field and potential of uniformly charged
//!   cylinder segments, precomputed as matrices.
//!
//! Diagnostics: column charge per area (C m-2), for the finite column the
//! total charge (C), and the electrostatic energy per area (J m-2): the field
//! energy for planar layers, the charge-potential energy with the axial
//! potential for the finite column (see [`FieldSolver::energy`]).

pub mod column;
pub mod planar;

use crate::physics::constants::EPSILON_0;

/// The field solver of the experiment, with its precomputed parts (built
/// by `crate::setup::resolve::field_solver`).
#[derive(Debug, Clone)]
pub enum FieldSolver {
    Planar(planar::PlanarSolver),
    Column(column::ColumnSolver),
}

impl FieldSolver {
    /// Potential at centres and field on faces from the charge density at centres.
    pub fn solve(&self, rho: &[f64], phi: &mut [f64], e: &mut [f64]) {
        match self {
            FieldSolver::Planar(s) => s.solve(rho, phi, e),
            FieldSolver::Column(s) => s.solve(rho, phi, e),
        }
    }

    /// The field of [`FieldSolver::solve`] with the same bits, for a solve
    /// whose potential nothing reads: the finite column's direct sums then
    /// skip the potential (`phi` keeps its old values, stale until the next
    /// [`FieldSolver::solve`]); the planar and FFT solves fill both.
    pub fn solve_field(&self, rho: &[f64], phi: &mut [f64], e: &mut [f64]) {
        match self {
            FieldSolver::Planar(s) => s.solve(rho, phi, e),
            FieldSolver::Column(s) => s.solve_field(rho, phi, e),
        }
    }

    /// Horizontal area of the charged column (m2), when finite.
    pub fn column_area(&self) -> Option<f64> {
        match self {
            FieldSolver::Planar(_) => None,
            FieldSolver::Column(s) => Some(std::f64::consts::PI * s.radius * s.radius),
        }
    }

    /// Potential (V) to pair with the charge of cell `k` in charge-potential
    /// energy sums: the exact cell mean for the planar solution, the axial
    /// centre value for the finite column (its stand-in for the mean over the
    /// cylinder, see [`mod@column`]).
    pub fn pairing_potential(&self, phi: &[f64], rho: &[f64], k: usize) -> f64 {
        match self {
            FieldSolver::Planar(s) => s.cell_mean_potential(phi[k], rho[k]),
            FieldSolver::Column(_) => phi[k],
        }
    }

    /// Electrostatic energy per unit horizontal area (J m-2). Planar: the
    /// field energy (eps0/2) integral E_z^2 dz, exact for the discrete field.
    /// Finite column: (1/2) sum rho phi dz with the axial potential, the
    /// charge-potential form of the energy (Jackson, Classical
    /// Electrodynamics, Eq. 1.53; equation number from memory) with the axial
    /// potential standing in for the mean over the cross-section, which it
    /// overestimates.
    pub fn energy(&self, rho: &[f64], phi: &[f64], e: &[f64], dz: f64) -> f64 {
        match self {
            FieldSolver::Planar(_) => field_energy(e, dz),
            FieldSolver::Column(_) => {
                0.5 * dz * rho.iter().zip(phi).map(|(r, p)| r * p).sum::<f64>()
            }
        }
    }
}

/// Column-integrated charge per area, sum of rho dz (C m-2).
pub fn column_charge(rho: &[f64], dz: f64) -> f64 {
    rho.iter().sum::<f64>() * dz
}

/// Field energy per unit area W = (eps0/2) integral E_z^2 dz (J m-2), from the
/// energy density u = eps0 E^2/2 (e.g. Griffiths, Introduction to
/// Electrodynamics, Eq. 2.45; equation number from memory). Within a cell of
/// uniform charge E_z is linear between its face values, for which
/// integral E^2 dz = dz (E_a^2 + E_a E_b + E_b^2)/3 exactly.
pub fn field_energy(e: &[f64], dz: f64) -> f64 {
    let sum: f64 = e
        .windows(2)
        .map(|w| w[0] * w[0] + w[0] * w[1] + w[1] * w[1])
        .sum();
    0.5 * EPSILON_0 * dz * sum / 3.0
}
