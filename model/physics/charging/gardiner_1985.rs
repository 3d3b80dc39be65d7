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

/// f(tau) of the formula (dimensionless).
pub fn f(tau: f64) -> f64 {
    -1.7e-5 * tau.powi(3) - 0.003 * tau * tau - 0.05 * tau + 0.13
}

/// Charge gained by the graupel per rebounding collision (C) at temperature
/// `t` (degC) with reversal temperature `t_r` (degC, negative), liquid water
/// content `lwc` (g m-3), crystal diameter `d` (m) and impact speed `v` (m s-1).
pub fn charge_per_collision(t: f64, t_r: f64, lwc: f64, d: f64, v: f64) -> f64 {
    let t = t.clamp(-30.0, 0.0);
    let d = d.clamp(10e-6, 1e-3);
    let v = v.clamp(1.0, 10.0);
    let dl = lwc.min(5.0) - 0.1;
    let tau = -21.0 / t_r * t;
    7.3 * d.powi(4) * v.powi(3) * dl * f(tau)
}
