//! Relativistic runaway electron avalanche length and multiplication.
//!
//! Coleman, L. M. and Dwyer, J. R. (2006), Propagation speed of runaway
//! electron avalanches, GRL 33, L11810: the avalanche e-folding length
//! lambda = 7.3 MeV / (e E - 0.276 MeV/m * delta), valid for roughly
//! 0.3-3 MV/m at sea-level density (coefficients from memory, as collected in
//! docs/references.md). With E in V m-1 the energy gain e E in eV
//! m-1 equals E numerically, so lambda (m) = scale / (|E| - friction * delta)
//! with scale = 7.3e6 V and friction = 2.76e5 V m-1.
//! The number of e-foldings over a stretch is the integral of dz/lambda.

use crate::physics::atmosphere::relative_density;

/// Parameters of the avalanche length (SI).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AvalancheParams {
    /// Energy scale per elementary charge (V): 7.3 MeV / e.
    pub energy_scale: f64,
    /// Friction field at sea-level density (V m-1): 0.276 MeV/m / e.
    pub friction_field: f64,
}

impl Default for AvalancheParams {
    fn default() -> Self {
        AvalancheParams {
            energy_scale: 7.3e6,
            friction_field: 2.76e5,
        }
    }
}

impl AvalancheParams {
    /// Avalanche e-folding length (m) in field `e` (V m-1) at air density
    /// `rho` (kg m-3); infinite where the field does not exceed the friction.
    pub fn length(&self, e: f64, rho: f64) -> f64 {
        let excess = e.abs() - self.friction_field * relative_density(rho);
        if excess > 0.0 {
            self.energy_scale / excess
        } else {
            f64::INFINITY
        }
    }
}

/// Largest e-folding count over contiguous runs of faces where |E| exceeds
/// `threshold`, and the middle height of that run. The integral of dz/lambda
/// is taken by the trapezoid rule between neighbouring faces that are both
/// above threshold (exact for a uniform field).
pub fn max_efoldings(
    e: &[f64],
    z: &[f64],
    rho: &[f64],
    threshold: &[f64],
    p: &AvalancheParams,
) -> (f64, f64) {
    let (mut best, mut best_height) = (0.0, f64::NAN);
    let mut count = 0.0;
    let mut start: Option<usize> = None;
    for k in 0..e.len() {
        let above = e[k].abs() > threshold[k];
        if above {
            match start {
                None => {
                    start = Some(k);
                    count = 0.0;
                }
                Some(_) => {
                    let inv =
                        0.5 * (1.0 / p.length(e[k - 1], rho[k - 1]) + 1.0 / p.length(e[k], rho[k]));
                    count += inv * (z[k] - z[k - 1]);
                }
            }
            if let Some(s) = start {
                if count > best {
                    best = count;
                    best_height = 0.5 * (z[s] + z[k]);
                }
            }
        } else {
            start = None;
        }
    }
    (best, best_height)
}
