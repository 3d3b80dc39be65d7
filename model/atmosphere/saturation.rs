//! Saturation vapour pressure over plane liquid water and ice.
//!
//! Murphy, D. M. and Koop, T. (2005): Review of the vapour pressures of ice
//! and supercooled water for atmospheric applications. Q. J. R. Meteorol.
//! Soc. 131, 1539-1565. Ice: their Eq. (7), valid for T > 110 K. Liquid
//! (including supercooled): their Eq. (10), valid for 123 K < T < 332 K.
//! Temperatures in K, pressures in Pa.

/// Lower validity limit of the liquid formula, Murphy & Koop (2005) Eq. (10) (K).
pub const LIQUID_T_MIN: f64 = 123.0;
/// Upper validity limit of the liquid formula, Murphy & Koop (2005) Eq. (10) (K).
pub const LIQUID_T_MAX: f64 = 332.0;
/// Lower validity limit of the ice formula, Murphy & Koop (2005) Eq. (7) (K).
pub const ICE_T_MIN: f64 = 110.0;

/// Saturation vapour pressure over plane liquid water e_w (Pa) at temperature
/// `t` (K). Murphy & Koop (2005), Eq. (10).
pub fn murphy_koop_2005_liquid(t: f64) -> f64 {
    let ln_t = t.ln();
    let ln_e = 54.842763 - 6763.22 / t - 4.210 * ln_t
        + 0.000367 * t
        + (0.0415 * (t - 218.8)).tanh() * (53.878 - 1331.22 / t - 9.44523 * ln_t + 0.014025 * t);
    ln_e.exp()
}

/// Saturation vapour pressure over plane hexagonal ice e_i (Pa) at temperature
/// `t` (K). Murphy & Koop (2005), Eq. (7).
pub fn murphy_koop_2005_ice(t: f64) -> f64 {
    (9.550426 - 5723.265 / t + 3.53068 * t.ln() - 0.00728332 * t).exp()
}

/// Water-vapour mixing ratio r = eps e / (p - e) (kg kg-1) for vapour
/// pressure `e` and total pressure `p` (both Pa); the definition of the
/// mixing ratio with Dalton's law (e.g. Wallace & Hobbs 2006, Eq. 3.59).
/// Returns `None` when `e >= p` (no physical mixing ratio).
pub fn mixing_ratio(e: f64, p: f64) -> Option<f64> {
    if e < p {
        Some(crate::constants::EPSILON * e / (p - e))
    } else {
        None
    }
}

/// Virtual temperature T_v = T (1 + r/eps)/(1 + r) (K) of moist air at
/// temperature `t` (K) with vapour mixing ratio `r` (kg kg-1); Wallace &
/// Hobbs (2006), Eq. 3.16 rewritten for the mixing ratio.
pub fn virtual_temperature(t: f64, r: f64) -> f64 {
    t * (1.0 + r / crate::constants::EPSILON) / (1.0 + r)
}
