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

use crate::physics::lanes::Lane;
use std::f64::consts::PI;

/// Crystal-collector collisions (m-3 s-1), lane by lane
/// ([`crate::physics::lanes`]), for lanes with crystals (n > 0) and a
/// collector (finite lambda); the caller masks the others.
#[inline(always)]
pub fn crystals_on_exponential<T: Lane>(n: T, d: T, dv: T, n0: f64, lambda: T) -> T {
    n * (0.25 * PI)
        * dv.abs()
        * n0
        * (T::splat(2.0) / lambda.powi(3) + d * 2.0 / (lambda * lambda) + d * d / lambda)
}

/// Collisions between two exponential species (m-3 s-1), lane by lane, for
/// lanes holding both (finite slopes); the caller masks the others.
#[inline(always)]
pub fn exponential_pair<T: Lane>(n0x: f64, lx: T, n0y: f64, ly: T, dv: T) -> T {
    dv.abs()
        * (0.5 * PI * n0x * n0y)
        * (T::splat(1.0) / (lx.powi(3) * ly)
            + T::splat(1.0) / (lx * lx * ly * ly)
            + T::splat(1.0) / (lx * ly.powi(3)))
}
