//! Gardiner, Lamb, Pitter, Hallett & Saunders (1985), JGR 90, 6079: charge
//! gained by graupel per rebounding ice-crystal collision (recalled, as
//! collected in docs/references.md, "Non-inductive charging"; the sign root was checked there):
//!
//!   dq = 7.3 d^4 dV^3 dL f(tau)   (C),
//!   f(tau) = -1.7e-5 tau^3 - 0.003 tau^2 - 0.05 tau + 0.13,
//!   tau = (-21 / T_r) T,
//!
//! with d the crystal diameter (m), dV the impact speed (m s-1),
//! dL = LWC - 0.1 (g m-3; LWC the cloud liquid water content), T the
//! temperature and T_r the reversal temperature (degC). f changes sign at
//! tau = -21.27, i.e. within 1.3 % of T_r; graupel charges positively warmer
//! than T_r and negatively colder, both reversed below LWC = 0.1 g m-3.
//! Worked example (docs/references.md): d = 100 um, dV = 3, dL = 1, tau = -10:
//! 6.8 fC. Clamps (laboratory ranges, from memory): T from -30 to 0 degC,
//! d 10 um to 1 mm, dV 1 to 10 m s-1, LWC up to 5 g m-3.

use crate::physics::lanes::Lane;

/// f(tau) of the formula (dimensionless), lane by lane
/// ([`crate::physics::lanes`]).
#[inline(always)]
pub fn f<T: Lane>(tau: T) -> T {
    tau.powi(3) * -1.7e-5 - tau * 0.003 * tau - tau * 0.05 + 0.13
}

/// Charge gained by the graupel per rebounding collision (C) at temperature
/// `t` (degC) with reversal temperature `t_r` (degC, negative), liquid water
/// content `lwc` (g m-3), crystal diameter `d` (m) and impact speed `v`
/// (m s-1), lane by lane.
#[inline(always)]
pub fn charge_per_collision<T: Lane>(t: T, t_r: f64, lwc: T, d: T, v: T) -> T {
    let clamp = |x: T, lo: f64, hi: f64| x.max(T::splat(lo)).min(T::splat(hi));
    let t = clamp(t, -30.0, 0.0);
    let d = clamp(d, 10e-6, 1e-3);
    let v = clamp(v, 1.0, 10.0);
    let dl = lwc.min(T::splat(5.0)) - 0.1;
    let tau = t * (-21.0 / t_r);
    d.powi(4) * 7.3 * v.powi(3) * dl * f(tau)
}
