//! Saturation vapour pressure against Murphy & Koop (2005).

mod common;
use common::*;

use stormcharge::physics::atmosphere::saturation::{
    murphy_koop_2005_both, murphy_koop_2005_ice, murphy_koop_2005_liquid, saturation_pressures,
};

/// Values at t (degC): (t, e_w Pa, e_i Pa or NaN). Source: Murphy & Koop 2005,
/// QJRMS 131, Eqs. (7) and (10), as tabulated in docs/references.md
/// ("Saturation vapour pressure").
const TABLE: [(f64, f64, f64); 8] = [
    (30.0, 4246.81, f64::NAN),
    (20.0, 2339.40, f64::NAN),
    (10.0, 1228.26, f64::NAN),
    (0.0, 611.213, 611.154),
    (-10.0, 286.453, 259.892),
    (-20.0, 125.504, 103.252),
    (-30.0, 50.936, 38.012),
    (-40.0, 18.912, 12.844),
];

#[test]
fn murphy_koop_2005_tabulated_values() {
    // Tolerance 1e-5 relative: the table gives 6 significant figures, except
    // 50.936/38.012/18.912/12.844 (5 figures: half a unit in the last place is
    // up to 4e-5 relative, so those rows are checked to that rounding).
    for (t, ew, ei) in TABLE {
        let tk = t + 273.15;
        let tol_w = if ew < 100.0 { 0.5e-3 / ew } else { 1e-5 };
        let got = murphy_koop_2005_liquid(tk);
        assert!(
            rel(got, ew) <= tol_w.max(1e-5),
            "liquid at {t} C: {got} vs {ew}"
        );
        if ei.is_finite() {
            let tol_i = if ei < 100.0 { 0.5e-3 / ei } else { 1e-5 };
            let got = murphy_koop_2005_ice(tk);
            assert!(
                rel(got, ei) <= tol_i.max(1e-5),
                "ice at {t} C: {got} vs {ei}"
            );
        }
    }
}

#[test]
fn triple_point_pressure() {
    // 611.657 Pa at 273.16 K (Guildner, Johnson & Jones 1976), reproduced by
    // both Murphy & Koop (2005) formulas; the quoted value has 6 figures.
    assert!(rel(murphy_koop_2005_liquid(273.16), 611.657) < 1e-5);
    assert!(rel(murphy_koop_2005_ice(273.16), 611.657) < 1e-5);
}

#[test]
fn ice_below_liquid_below_freezing() {
    // Below 0 degC the ice saturation pressure is lower than the liquid one
    // (a thermodynamic necessity: ice is the stable phase), checked every 0.1 K
    // down to the validity limit of the liquid formula (123 K).
    let mut t = 273.15 - 0.1;
    while t > 123.0 {
        assert!(
            murphy_koop_2005_ice(t) < murphy_koop_2005_liquid(t),
            "at {t} K"
        );
        t -= 0.1;
    }
}

#[test]
fn bolton_1980_agreement() {
    // Bolton (1980, MWR 108) e = 611.2 exp(17.67 t/(t + 243.5)) Pa, accurate to
    // 0.1 % for -30..35 degC; it and Murphy & Koop differ by at most 0.25 %
    // (docs/references.md), so agreement within 0.3 % is an independent check.
    for t in [-30.0, -15.0, 0.0, 15.0, 35.0_f64] {
        let bolton = 611.2 * (17.67 * t / (t + 243.5)).exp();
        assert!(
            rel(murphy_koop_2005_liquid(t + 273.15), bolton) < 3e-3,
            "{t} C"
        );
    }
}

#[test]
fn both_pressures_equal_the_single_formulas() {
    // The shared-logarithm form must be the same arithmetic as the two
    // separate formulas (bit for bit).
    let mut t = 123.0;
    while t < 332.0 {
        let (ew, ei) = murphy_koop_2005_both(t);
        assert_eq!(ew, murphy_koop_2005_liquid(t), "{t} K");
        assert_eq!(ei, murphy_koop_2005_ice(t), "{t} K");
        t += 0.37;
    }
}

#[test]
fn table_interpolation_within_its_error_bound() {
    // Cubic Lagrange interpolation through equally spaced nodes errs by at
    // most (9/16)/4! h^4 max|f''''| (the interpolation remainder, e.g.
    // Abramowitz & Stegun 1964, Eq. 25.2.4 form, from memory). For
    // e ~ exp(a T) with a = d ln e/dT = L/(R_v T^2) (Clausius-Clapeyron),
    // f''''/f ~ a^4; with h = 0.1 K the bound is 2.3e-6 a^4, evaluated here
    // with a from the Clausius-Clapeyron slope over ice (the larger) times
    // 1.1 for the variation of a over four nodes. Checked at points that do
    // not fall on nodes, across the whole table.
    let mut worst: f64 = 0.0;
    let mut t = 123.0;
    while t < 332.0 {
        let (ew, ei) = saturation_pressures(t);
        let a = 1.1 * 2.834e6 / (461.5 * t * t);
        let bound = 0.5625 / 24.0 * 1e-4 * a.powi(4) + 1e-14;
        let err_w = rel(ew, murphy_koop_2005_liquid(t));
        let err_i = rel(ei, murphy_koop_2005_ice(t));
        assert!(
            err_w <= bound && err_i <= bound,
            "{t} K: {err_w:e} {err_i:e} > {bound:e}"
        );
        if t > 200.0 {
            worst = worst.max(err_w).max(err_i);
        }
        t += 0.0137;
    }
    // Above 200 K (all tropospheric temperatures) the table is exact to 1e-9.
    assert!(worst < 1e-9, "worst {worst:e}");
}

#[test]
fn saturation_vapour_density_at_the_melting_point() {
    // The wet-growth heat balance uses the vapour density at a 0 degC
    // surface as a constant, e_w(273.15 K)/(R_v 273.15 K) with e_w = 611.2 Pa;
    // Murphy & Koop (2005) give 611.213 Pa there (table above): 611.2 is
    // that to four figures, 2.1e-5 relative off; checked to 5e-5, inside
    // the 8e-5 half-unit of four figures.
    use stormcharge::physics::constants::{RHO_VAPOUR_SAT_T0, R_VAPOUR, T_MELT};
    let from_equation = murphy_koop_2005_liquid(T_MELT) / (R_VAPOUR * T_MELT);
    assert!(
        rel(RHO_VAPOUR_SAT_T0, from_equation) < 5e-5,
        "{RHO_VAPOUR_SAT_T0} {from_equation}"
    );
}
