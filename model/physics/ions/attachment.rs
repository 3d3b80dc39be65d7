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
    if number <= 0.0 || radius <= 0.0 {
        return (0.0, 0.0);
    }
    let x = charge * ELEMENTARY_CHARGE / (4.0 * PI * EPSILON_0 * radius * BOLTZMANN * t);
    let base = 4.0 * PI * number * radius;
    let (pos, neg) = coulomb_pair(x);
    (
        base * diffusion_coefficient(mu.0, t) * pos,
        base * diffusion_coefficient(mu.1, t) * neg,
    )
}

/// The Coulomb factors f(x) and f(-x) of [`coulomb_factor`] from one
/// exponential: f(-x) = f(x) + x (x e^x/(e^x - 1) both), so the repelled
/// sign's factor f(|x|) is computed and the attracted sign's is f(|x|) + |x|,
/// a sum of non-negative terms without cancellation.
pub fn coulomb_pair(x: f64) -> (f64, f64) {
    let repelled = coulomb_factor(x.abs());
    let attracted = repelled + x.abs();
    if x >= 0.0 {
        (repelled, attracted)
    } else {
        (attracted, repelled)
    }
}
