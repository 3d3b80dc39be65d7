//! Bulk rates of rebounding collisions (m-3 s-1) between the species the
//! microphysics assumes (docs/charging.md):
//!
//! - monodisperse crystals (number n per m3, diameter d) with an exponential
//!   collector N0 exp(-lambda D): the collision integral
//!   (pi/4) integral (D + d)^2 |dV| N(D) dD n
//!   = (pi/4) n |dV| N0 (2/lambda^3 + 2 d/lambda^2 + d^2/lambda)   (exact);
//! - two exponential species x, y (Lin et al. 1983 form, mean speed difference):
//!   (pi/2) N0x N0y |dV| [1/(lx^3 ly) + 1/(lx^2 ly^2) + 1/(lx ly^3)]  (exact for
//!   a constant |dV|).
//!
//! Multiplied by the separation efficiency 1 - E_coll, the fraction of
//! collisions that rebound (docs/references.md, "Non-inductive charging").

use std::f64::consts::PI;

/// Crystal-collector collisions (m-3 s-1).
pub fn crystals_on_exponential(n: f64, d: f64, dv: f64, n0: f64, lambda: f64) -> f64 {
    if n <= 0.0 || !lambda.is_finite() {
        return 0.0;
    }
    0.25 * PI
        * n
        * dv.abs()
        * n0
        * (2.0 / lambda.powi(3) + 2.0 * d / (lambda * lambda) + d * d / lambda)
}

/// Collisions between two exponential species (m-3 s-1).
pub fn exponential_pair(n0x: f64, lx: f64, n0y: f64, ly: f64, dv: f64) -> f64 {
    if !lx.is_finite() || !ly.is_finite() {
        return 0.0;
    }
    0.5 * PI
        * n0x
        * n0y
        * dv.abs()
        * (1.0 / (lx.powi(3) * ly) + 1.0 / (lx * lx * ly * ly) + 1.0 / (lx * ly.powi(3)))
}
