//! Hydrostatic integration of a temperature and humidity profile.
//!
//! dp/dz = -g p / (R_d T_v) (hydrostatic balance with the gas law for moist
//! air; e.g. Wallace & Hobbs 2006, Eqs. 3.17 and 3.23), g = g0 constant
//! (the model uses geometric height; the resulting error in g is 0.6 % at
//! 20 km, documented in docs/atmosphere.md). Between two sample heights T_v
//! is taken linear in z, for which the integral of dz/T_v is exact:
//! ln(T_v2/T_v1) dz / (T_v2 - T_v1). An isothermal or piecewise-linear dry
//! profile is therefore integrated to round-off.

use super::saturation::{mixing_ratio, virtual_temperature};
use crate::physics::constants::{G0, R_DRY};

/// Pressure and vapour mixing ratio at each sample height.
#[derive(Debug, Clone, PartialEq)]
pub struct HydrostaticProfile {
    /// Pressure (Pa).
    pub pressure: Vec<f64>,
    /// Water-vapour mixing ratio (kg kg-1).
    pub vapour: Vec<f64>,
}

/// Integrates upward from `p_surface` (Pa) at `z[0]`.
///
/// `z` (m, increasing), `t` (K) and `e` (vapour pressure, Pa) are given at the
/// same sample heights. Returns the index of the first sample where the vapour
/// pressure reaches the total pressure as the error.
pub fn integrate(
    z: &[f64],
    t: &[f64],
    e: &[f64],
    p_surface: f64,
) -> Result<HydrostaticProfile, usize> {
    let n = z.len();
    let mut pressure = vec![0.0; n];
    let mut vapour = vec![0.0; n];
    pressure[0] = p_surface;
    vapour[0] = mixing_ratio(e[0], p_surface).ok_or(0usize)?;
    for i in 1..n {
        let dz = z[i] - z[i - 1];
        let tv0 = virtual_temperature(t[i - 1], vapour[i - 1]);
        // The vapour mixing ratio at the new level depends (weakly) on the
        // pressure being computed; a few fixed-point passes converge to
        // round-off because d(T_v)/dp is tiny.
        let mut p = pressure[i - 1];
        let mut r = vapour[i - 1];
        for _ in 0..6 {
            let tv1 = virtual_temperature(t[i], r);
            let mean_inv_tv = if (tv1 - tv0).abs() > 1e-12 * tv0 {
                (tv1 / tv0).ln() / (tv1 - tv0)
            } else {
                1.0 / tv0
            };
            p = pressure[i - 1] * (-G0 / R_DRY * dz * mean_inv_tv).exp();
            r = mixing_ratio(e[i], p).ok_or(i)?;
        }
        pressure[i] = p;
        vapour[i] = r;
    }
    Ok(HydrostaticProfile { pressure, vapour })
}
