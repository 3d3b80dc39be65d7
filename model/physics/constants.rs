//! Physical constants, each with its value, unit and source.
//!
//! Everything inside the model is SI. The dry-air gas constant is derived from
//! the U.S. Standard Atmosphere 1976 values of the universal gas constant and
//! the mean molar mass of air, so the standard-atmosphere base state and the
//! gas law used elsewhere agree exactly.

/// Standard gravitational acceleration g0 (m s-2). U.S. Standard Atmosphere
/// 1976 (NOAA/NASA/USAF, 1976), Table 2; also the CGPM 1901 conventional value.
pub const G0: f64 = 9.80665;

/// Universal gas constant R* (J K-1 mol-1) as adopted by the U.S. Standard
/// Atmosphere 1976 (its value, not CODATA's 8.314462618), Table 2.
pub const R_STAR_1976: f64 = 8.31432;

/// Mean molar mass of dry air M0 (kg mol-1). U.S. Standard Atmosphere 1976, Table 2.
pub const M0_AIR: f64 = 28.9644e-3;

/// Specific gas constant of dry air R_d = R*/M0 (J kg-1 K-1), derived
/// from the two constants above (287.053).
pub const R_DRY: f64 = R_STAR_1976 / M0_AIR;

/// Specific gas constant of water vapour R_v (J kg-1 K-1): R*/M_w with
/// M_w = 18.01528 g mol-1 (CODATA molar mass of H2O), 461.52 to four figures.
pub const R_VAPOUR: f64 = 461.52;

/// Ratio of gas constants epsilon = R_d/R_v (dimensionless), about 0.622.
pub const EPSILON: f64 = R_DRY / R_VAPOUR;

/// Specific heat of dry air at constant pressure c_p = 7/2 R_d (J kg-1 K-1):
/// ideal diatomic gas, derived (1004.69).
pub const CP_DRY: f64 = 3.5 * R_DRY;

/// Reference pressure for potential temperature (Pa), 1000 hPa (common practice).
pub const P_REF_THETA: f64 = 1.0e5;

/// Melting point of ice at standard pressure T0 (K), SI conventional value.
pub const T_MELT: f64 = 273.15;

/// Vacuum permittivity eps0 (F m-1). CODATA 2022 recommended value.
pub const EPSILON_0: f64 = 8.854_187_818_8e-12;

/// Sea-level air density of the U.S. Standard Atmosphere 1976 (kg m-3),
/// Table I; used for the relative air density delta = rho/rho0 that scales
/// breakdown thresholds.
pub const RHO_AIR_SEA_LEVEL: f64 = 1.2250;

/// Latent heat of vaporisation at 0 degC L_v (J kg-1); approximately
/// constant over the troposphere (docs/references.md, verified, approximate).
pub const L_VAPORISATION: f64 = 2.501e6;

/// Latent heat of fusion at 0 degC L_f (J kg-1) (docs/references.md).
pub const L_FUSION: f64 = 3.337e5;

/// Latent heat of sublimation at 0 degC L_s = L_v + L_f (J kg-1), 2.834e6.
pub const L_SUBLIMATION: f64 = L_VAPORISATION + L_FUSION;

/// Specific heat of liquid water at 0 degC C_w (J kg-1 K-1), 4218
/// (handbook value, docs/references.md; from memory).
pub const C_WATER: f64 = 4218.0;

/// Specific heat of ice at 0 degC C_i (J kg-1 K-1), 2106 (handbook value,
/// docs/references.md; from memory).
pub const C_ICE: f64 = 2106.0;

/// Saturation vapour density over water at 0 degC (kg m-3): e_s(T0)/(R_v T0)
/// with e_s(T0) = 611.2 Pa (Murphy & Koop 2005 at 273.15 K, 611.2 Pa to four
/// figures). The surface of a graupel particle in wet growth is at 0 degC.
pub const RHO_VAPOUR_SAT_T0: f64 = 611.2 / (R_VAPOUR * T_MELT);

/// Density of liquid water (kg m-3), common practice.
pub const RHO_WATER: f64 = 1000.0;

/// Density of solid ice (kg m-3), 916.7 at 0 degC (docs/references.md, from memory).
pub const RHO_ICE: f64 = 916.7;

/// Elementary charge e (C), exact in the SI since 2019.
pub const ELEMENTARY_CHARGE: f64 = 1.602_176_634e-19;

/// Boltzmann constant k_B (J K-1), exact in the SI since 2019.
pub const BOLTZMANN: f64 = 1.380_649e-23;
