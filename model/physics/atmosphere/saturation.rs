//! Saturation vapour pressure over plane liquid water and ice.
//!
//! Murphy, D. M. and Koop, T. (2005): Review of the vapour pressures of ice
//! and supercooled water for atmospheric applications. Q. J. R. Meteorol.
//! Soc. 131, 1539-1565. Ice: their Eq. (7), valid for T > 110 K. Liquid
//! (including supercooled): their Eq. (10), valid for 123 K < T < 332 K.
//! Temperatures in K, pressures in Pa.

use crate::physics::lanes::{Lane, Mask};

/// Lower validity limit of the liquid formula, Murphy & Koop (2005) Eq. (10) (K).
pub const LIQUID_T_MIN: f64 = 123.0;
/// Upper validity limit of the liquid formula, Murphy & Koop (2005) Eq. (10) (K).
pub const LIQUID_T_MAX: f64 = 332.0;

/// Saturation vapour pressure over plane liquid water e_w (Pa) at temperature
/// `t` (K). Murphy & Koop (2005), Eq. (10).
pub fn murphy_koop_2005_liquid(t: f64) -> f64 {
    ln_liquid(t, t.ln()).exp()
}

/// Saturation vapour pressure over plane hexagonal ice e_i (Pa) at temperature
/// `t` (K). Murphy & Koop (2005), Eq. (7).
pub fn murphy_koop_2005_ice(t: f64) -> f64 {
    ln_ice(t, t.ln()).exp()
}

/// Both vapour pressures (e_w, e_i) (Pa) at `t` (K), sharing ln T; equal bit
/// for bit to the two functions above.
pub fn murphy_koop_2005_both(t: f64) -> (f64, f64) {
    let ln_t = t.ln();
    (ln_liquid(t, ln_t).exp(), ln_ice(t, ln_t).exp())
}

/// ln e_w, Murphy & Koop (2005) Eq. (10), with `ln_t` = ln T.
fn ln_liquid(t: f64, ln_t: f64) -> f64 {
    54.842763 - 6763.22 / t - 4.210 * ln_t
        + 0.000367 * t
        + (0.0415 * (t - 218.8)).tanh() * (53.878 - 1331.22 / t - 9.44523 * ln_t + 0.014025 * t)
}

/// ln e_i, Murphy & Koop (2005) Eq. (7), with `ln_t` = ln T.
fn ln_ice(t: f64, ln_t: f64) -> f64 {
    9.550426 - 5723.265 / t + 3.53068 * ln_t - 0.00728332 * t
}

/// Water-vapour mixing ratio r = eps e / (p - e) (kg kg-1) for vapour
/// pressure `e` and total pressure `p` (both Pa); the definition of the
/// mixing ratio with Dalton's law (e.g. Wallace & Hobbs 2006, Eq. 3.59).
/// Returns `None` when `e >= p` (no physical mixing ratio).
pub fn mixing_ratio(e: f64, p: f64) -> Option<f64> {
    if e < p {
        Some(crate::physics::constants::EPSILON * e / (p - e))
    } else {
        None
    }
}

/// Virtual temperature T_v = T (1 + r/eps)/(1 + r) (K) of moist air at
/// temperature `t` (K) with vapour mixing ratio `r` (kg kg-1); Wallace &
/// Hobbs (2006), Eq. 3.16 rewritten for the mixing ratio.
pub fn virtual_temperature(t: f64, r: f64) -> f64 {
    t * (1.0 + r / crate::physics::constants::EPSILON) / (1.0 + r)
}

/// Spacing of the vapour-pressure table (K).
const TABLE_STEP: f64 = 0.1;
/// 1/6, for the cubic Lagrange weights.
const SIXTH: f64 = 1.0 / 6.0;
/// Number of table nodes: LIQUID_T_MIN to LIQUID_T_MAX inclusive.
const TABLE_LEN: usize = ((LIQUID_T_MAX - LIQUID_T_MIN) / TABLE_STEP) as usize + 1;

/// (e_w, e_i) at the nodes LIQUID_T_MIN + i TABLE_STEP, built on first use.
#[inline]
fn table() -> &'static [(f64, f64)] {
    static TABLE: std::sync::OnceLock<Vec<(f64, f64)>> = std::sync::OnceLock::new();
    TABLE.get_or_init(|| {
        (0..TABLE_LEN)
            .map(|i| murphy_koop_2005_both(LIQUID_T_MIN + i as f64 * TABLE_STEP))
            .collect()
    })
}

/// Both Murphy & Koop (2005) vapour pressures (e_w, e_i) (Pa) at `t` (K),
/// interpolated from a table at 0.1 K spacing by the cubic Lagrange
/// polynomial through the four nearest nodes (lookup tables of e_s are
/// common practice in cloud models; they replace a logarithm, a hyperbolic
/// tangent and two exponentials per call).
///
/// Accuracy: the interpolation error of a cubic through equally spaced nodes
/// is at most (9/16)/24 h^4 max|f''''| (e.g. Abramowitz & Stegun 1964,
/// Eq. 25.2.4 remainder term, from memory); with e ~ exp(a T) and
/// a = L/(R_v T^2) (Clausius-Clapeyron), 0.41 K-1 at 123 K and below 0.15 K-1
/// above 200 K, that is at most 7e-8 of e at h = 0.1 K and below 1e-9 at
/// tropospheric temperatures, far below the 0.05 % scatter of the data behind
/// the formulas. The tests compare the table with the formulas over the whole
/// range. Outside LIQUID_T_MIN + h .. LIQUID_T_MAX - 2h the formulas are
/// evaluated directly.
#[inline]
pub fn saturation_pressures(t: f64) -> (f64, f64) {
    let (ew, ei, _) = saturation_pressures_and_liquid_slope(t);
    (ew, ei)
}

/// (e_w, e_i, de_w/dT) (Pa, Pa, Pa K-1) from one pass over the table: the
/// values of [`saturation_pressures`] and the exact temperature derivative
/// of the liquid pressure's interpolating cubic, so that Newton iterations
/// on it (the saturation adjustment) converge quadratically. Outside the
/// table: the formulas and a central difference of the liquid one.
#[inline]
pub fn saturation_pressures_and_liquid_slope(t: f64) -> (f64, f64, f64) {
    match table_position(t) {
        Some((i, u)) => {
            let n = &table()[i - 1..i + 3];
            interpolate([n[0], n[1], n[2], n[3]], u)
        }
        None => {
            let h = 1e-4;
            let (ew, ei) = murphy_koop_2005_both(t);
            (
                ew,
                ei,
                (murphy_koop_2005_liquid(t + h) - murphy_koop_2005_liquid(t - h)) / (2.0 * h),
            )
        }
    }
}

/// [`saturation_pressures_and_liquid_slope`] for each lane of `t`: the
/// table's interpolation with the lanes side by side (the same operations,
/// so each lane has the bits of the one-cell function). A group with a lane
/// outside the table takes the one-cell function lane by lane.
#[inline(always)]
pub fn saturation_pressures_and_liquid_slope_of<T: Lane>(t: T) -> (T, T, T) {
    let x = (t - LIQUID_T_MIN) * (1.0 / TABLE_STEP);
    let inside = x.ge(T::splat(1.0)) & x.lt(T::splat((TABLE_LEN - 2) as f64));
    if !inside.all() {
        return T::map3(t, saturation_pressures_and_liquid_slope);
    }
    // As in `table_position`: the interval's index and the position in it.
    let index = |l: usize| x.lane(l) as usize;
    let u = x - T::from_lanes(|l| index(l) as f64);
    let table = table();
    // Written out: `array::from_fn` over eight-lane gathers was not inlined.
    let node = |j: usize| {
        (
            T::from_lanes(|l| table[index(l) - 1 + j].0),
            T::from_lanes(|l| table[index(l) - 1 + j].1),
        )
    };
    let nodes: [(T, T); 4] = [node(0), node(1), node(2), node(3)];
    interpolate(nodes, u)
}

/// Cubic Lagrange interpolation of (e_w, e_i) between the second and the
/// third of four table `nodes` at the fraction `u`, with the derivative of
/// e_w (Pa, Pa, Pa K-1).
#[inline(always)]
fn interpolate<T: Lane>(nodes: [(T, T); 4], u: T) -> (T, T, T) {
    let w = lagrange_weights(u);
    // d w / d u of the weights above.
    let uu = u * 3.0 * u;
    let dw = [
        -(uu - u * 6.0 + 2.0) * SIXTH,
        (uu - u * 4.0 - 1.0) * 0.5,
        -(uu - u * 2.0 - 2.0) * 0.5,
        (uu - 1.0) * SIXTH,
    ];
    let (mut ew, mut ei, mut de) = (T::splat(0.0), T::splat(0.0), T::splat(0.0));
    for ((wj, dwj), (ewj, eij)) in w.iter().zip(&dw).zip(nodes) {
        ew += *wj * ewj;
        ei += *wj * eij;
        de += *dwj * ewj;
    }
    (ew, ei, de * (1.0 / TABLE_STEP))
}

/// Weights of the cubic Lagrange polynomial through the nodes at -1, 0, 1, 2
/// (in units of the spacing) for the point u in [0, 1).
#[inline(always)]
fn lagrange_weights<T: Lane>(u: T) -> [T; 4] {
    let (um, u1, u2) = (u + 1.0, u - 1.0, u - 2.0);
    [
        -u * u1 * u2 * SIXTH,
        um * u1 * u2 * 0.5,
        -um * u * u2 * 0.5,
        um * u * u1 * SIXTH,
    ]
}

/// Table interval index i (nodes i-1..i+2 exist) and position u in [0, 1)
/// of temperature `t` (K), or `None` outside the interior of the table.
#[inline]
fn table_position(t: f64) -> Option<(usize, f64)> {
    let x = (t - LIQUID_T_MIN) * (1.0 / TABLE_STEP);
    // NaN fails this test too and takes the direct path.
    if x >= 1.0 && x < (TABLE_LEN - 2) as f64 {
        let i = x as usize;
        Some((i, x - i as f64))
    } else {
        None
    }
}
