//! Attachment of small ions to particles.
//!
//! An ion diffusing to a sphere of radius r is collected at the rate
//! 4 pi D r per unit ion concentration (diffusion-limited collection,
//! Smoluchowski), D = mu k T / e the ion's diffusion coefficient (Einstein
//! relation). A charge Q on the sphere repels ions of its own sign and
//! attracts the others; with the ion's potential energy at the surface in
//! units of k T, x = +-Q e / (4 pi eps0 r k T) (plus for ions of Q's sign),
//! the rate becomes 4 pi D r x / (e^x - 1) (Pruppacher & Klett 1997,
//! Microphysics of Clouds and Precipitation, ch. 18, diffusion charging of
//! a charged drop; from memory; docs/references.md). For large attracting
//! charge it tends to mu |Q| / eps0 per particle, the conduction-limited
//! rate of Whipple & Chalmers (1944) (derived: Gauss's law over the
//! sphere), and repelled ions are not collected. The ambient field's own
//! contribution (Whipple-Chalmers charging by ion flow) is neglected: a
//! modelling choice stated in docs/ions.md.
//!
//! Aerosol particles collect ions with a fixed combination coefficient beta
//! (m3 s-1; of order 1e-5 cm3 s-1 near sea level, AMS Glossary of
//! Meteorology, "combination coefficient").

use crate::physics::constants::{BOLTZMANN, ELEMENTARY_CHARGE, EPSILON_0};
use crate::physics::lanes::{Lane, Mask};
use std::f64::consts::PI;

/// Diffusion coefficient (m2 s-1) of an ion of mobility `mu` (m2 V-1 s-1)
/// at temperature `t` (K): D = mu k T / e (Einstein relation).
pub fn diffusion_coefficient(mu: f64, t: f64) -> f64 {
    mu * BOLTZMANN * t / ELEMENTARY_CHARGE
}

/// The Coulomb factor x / (e^x - 1) (1 at x = 0), evaluated without
/// overflow or cancellation.
pub fn coulomb_factor(x: f64) -> f64 {
    if x.abs() < 1e-8 {
        1.0 - 0.5 * x
    } else if x > 700.0 {
        x * (-x).exp()
    } else if x < -700.0 {
        -x
    } else {
        x / x.exp_m1()
    }
}

/// x / (e^x - 1) for x >= 0 lane by lane, without `expm1`: below 1/2 its
/// Taylor series, the generating function of the Bernoulli numbers
/// x/(e^x - 1) = sum B_n x^n / n! (Abramowitz & Stegun 1964, Eq. 23.1.1;
/// B_2..B_16 = 1/6, -1/30, 1/42, -1/30, 5/66, -691/2730, 7/6, -3617/510,
/// from memory, checked against [`coulomb_factor`] by the test
/// `coulomb_factor_of_groups_within_rounding`), to x^16 (truncation below
/// 1e-17 there); above, x / (e^x - 1) with e^x - 1 >= 0.64 (so the
/// subtraction loses at most two bits); above 700, x e^-x.
#[inline(always)]
pub fn coulomb_factor_nonnegative<T: Lane>(a: T) -> T {
    let z = a * a;
    let mut series = T::splat(-3617.0 / 10_670_622_842_880_000.0);
    for c in [
        1.0 / 74_724_249_600.0,
        -691.0 / 1_307_674_368_000.0,
        1.0 / 47_900_160.0,
        -1.0 / 1_209_600.0,
        1.0 / 30_240.0,
        -1.0 / 720.0,
        1.0 / 12.0,
    ] {
        series = series * z + c;
    }
    let series = series * z - a * 0.5 + 1.0;
    let small = a.lt(T::splat(0.5));
    if !(!small).any() {
        return series;
    }
    let large = a.gt(T::splat(700.0));
    // Clamped so that no lane overflows; each branch is kept only where it
    // applies.
    let moderate = a.min(T::splat(700.0));
    let direct = moderate / (moderate.exp() - 1.0);
    let beyond = if large.any() {
        T::select(large, a * (-a).exp(), direct)
    } else {
        direct
    };
    T::select(small, series, beyond)
}

/// The Coulomb factors f(x) and f(-x) of [`coulomb_factor`] (for the
/// positive and the negative ions, x the positive ion's potential energy
/// in units of k T), lane by lane, from one exponential: f(-x) = f(x) + x
/// (x e^x/(e^x - 1) both), so the repelled sign's factor f(|x|) is computed
/// and the attracted sign's is f(|x|) + |x|, a sum of non-negative terms
/// without cancellation.
#[inline(always)]
pub fn coulomb_pair_of<T: Lane>(x: T) -> (T, T) {
    let a = x.abs();
    let repelled = coulomb_factor_nonnegative(a);
    let attracted = repelled + a;
    let positive_charge = x.ge(T::splat(0.0));
    (
        T::select(positive_charge, repelled, attracted),
        T::select(positive_charge, attracted, repelled),
    )
}

/// [`population_rates`] lane by lane (each lane a population; a lane with
/// no particles or no radius gets zero), with the Coulomb factors of
/// [`coulomb_pair_of`].
#[inline(always)]
pub fn population_rates_of<T: Lane>(mu: (T, T), t: T, number: T, radius: T, charge: T) -> (T, T) {
    let zero = T::splat(0.0);
    let some = number.gt(zero) & radius.gt(zero);
    let x = charge * ELEMENTARY_CHARGE / (radius * (4.0 * PI * EPSILON_0) * BOLTZMANN * t);
    let base = number * (4.0 * PI) * radius;
    let (pos, neg) = coulomb_pair_of(x);
    let diffusion = |mu: T| mu * BOLTZMANN * t / ELEMENTARY_CHARGE;
    (
        T::select(some, base * diffusion(mu.0) * pos, zero),
        T::select(some, base * diffusion(mu.1) * neg, zero),
    )
}

/// Attachment rates (s-1) of positive and negative ions to a population of
/// `number` spheres per m3 of radius `radius` (m) each holding charge
/// `charge` (C), for ions of mobilities `mu` (m2 V-1 s-1) at temperature
/// `t` (K): K = 4 pi D N r x/(e^x - 1) with x = +-Q e/(4 pi eps0 r k T).
pub fn population_rates(
    mu: (f64, f64),
    t: f64,
    number: f64,
    radius: f64,
    charge: f64,
) -> (f64, f64) {
    population_rates_of(mu, t, number, radius, charge)
}
