//! The U.S. Standard Atmosphere 1976 (NOAA, NASA, USAF; Washington DC, 1976),
//! lower atmosphere from 0 to 86 km geometric height (84.852 km geopotential),
//! identical to the ICAO Standard Atmosphere below 32 km.
//!
//! The standard defines temperature as piecewise linear in geopotential
//! height H and pressure by exact integration of the hydrostatic equation
//! with constant g0 in H (its Eqs. 33a and 33b). Geometric height Z
//! converts by H = r0 Z / (r0 + Z) (Eq. 18) with the effective earth radius
//! r0 = 6 356 766 m. Density follows from the gas law with the standard's
//! R* and M0 (Eq. 42). Layer base pressures are computed here by the same
//! recursion the standard uses, not copied from its tables.

use crate::physics::constants::{G0, M0_AIR, R_STAR_1976};

/// Effective earth radius r0 (m), U.S. Standard Atmosphere 1976, Table 2.
pub const EARTH_RADIUS_R0: f64 = 6_356_766.0;
/// Sea-level temperature T0 (K), U.S. Standard Atmosphere 1976.
pub const T_SEA_LEVEL: f64 = 288.15;
/// Sea-level pressure P0 (Pa), U.S. Standard Atmosphere 1976.
pub const P_SEA_LEVEL: f64 = 101_325.0;
/// Highest geometric height (m) covered: the top of the seventh layer,
/// 84.852 km geopotential.
pub const TOP_GEOMETRIC: f64 = 86_000.0;

/// Layer bases (geopotential m) and lapse rates dT/dH (K m-1),
/// U.S. Standard Atmosphere 1976, Table 4.
const LAYERS: [(f64, f64); 7] = [
    (0.0, -6.5e-3),
    (11_000.0, 0.0),
    (20_000.0, 1.0e-3),
    (32_000.0, 2.8e-3),
    (47_000.0, 0.0),
    (51_000.0, -2.8e-3),
    (71_000.0, -2.0e-3),
];
const H_TOP: f64 = 84_852.0;

/// Temperature (K), pressure (Pa) and density (kg m-3) at one height.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StandardState {
    pub temperature: f64,
    pub pressure: f64,
    pub density: f64,
}

/// Geopotential height H (m') for geometric height `z` (m), Eq. 18.
pub fn geopotential_height(z: f64) -> f64 {
    EARTH_RADIUS_R0 * z / (EARTH_RADIUS_R0 + z)
}

/// The standard atmosphere at geometric height `z` (m). Returns `None`
/// outside 0 <= z <= 86 km (the model's grid validation prevents that).
pub fn us_standard_1976(z: f64) -> Option<StandardState> {
    if !(0.0..=TOP_GEOMETRIC).contains(&z) {
        return None;
    }
    let h = geopotential_height(z).min(H_TOP);
    let gmr = G0 * M0_AIR / R_STAR_1976; // K m-1, 0.0341632
    let (mut t_b, mut p_b) = (T_SEA_LEVEL, P_SEA_LEVEL);
    for (i, &(h_b, lapse)) in LAYERS.iter().enumerate() {
        let h_next = LAYERS.get(i + 1).map_or(H_TOP, |l| l.0);
        let top = h.min(h_next);
        let dh = top - h_b;
        let t = t_b + lapse * dh;
        let p = if lapse == 0.0 {
            p_b * (-gmr * dh / t_b).exp() // Eq. 33b
        } else {
            p_b * (t_b / t).powf(gmr / lapse) // Eq. 33a
        };
        if h <= h_next {
            let density = p * M0_AIR / (R_STAR_1976 * t); // Eq. 42
            return Some(StandardState {
                temperature: t,
                pressure: p,
                density,
            });
        }
        t_b = t;
        p_b = p;
    }
    None
}
