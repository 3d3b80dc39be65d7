//! Inductive charging of a collector (graupel or rain) by cloud droplets
//! that touch and rebound from it in the vertical field (docs/references.md,
//! "Inductive charging"; form recalled from Sartor 1967 and Ziegler et al.
//! 1991, derived there):
//!
//! `dq = (pi^3/2) eps0 D_c^2 E_z <cos theta> - (pi^2/6) (D_c/D)^2 Q` (C per rebound),
//!
//! D_c the droplet diameter, D the collector diameter (here the mean 1/lambda
//! of the size distribution), E_z the vertical field (V m-1, positive up), Q
//! the collector's mean charge (C); an upward field charges the collector
//! positively and so reinforces the field. The rate of rebounds is the
//! rebound probability times the rate at which the collectors sweep out
//! droplets. The mean contact angle term `<cos theta>` (0.1-0.3) and the
//! rebound probability (1e-3 to 1e-1) are uncertain and are configuration
//! keys; Jennings (1975), QJRMS 101, measured 0.1-0.25 fC per event at
//! 5-15 kV/m.

use crate::physics::constants::EPSILON_0;
use std::f64::consts::PI;

/// Charge per rebound (C).
pub fn charge_per_rebound(d_c: f64, d: f64, e_z: f64, cos_theta: f64, q_mean: f64) -> f64 {
    0.5 * PI.powi(3) * EPSILON_0 * d_c * d_c * e_z * cos_theta
        - PI * PI / 6.0 * (d_c / d).powi(2) * q_mean
}
