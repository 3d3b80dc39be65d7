//! Saunders & Peck (1998), JGR 103, 13949: the sign of graupel charging in
//! rebounding graupel-ice collisions is set by the rime accretion rate
//! RAR = EW V (g m-2 s-1; EW effective liquid water content, g m-3; V the
//! graupel speed, m s-1) against a critical rate RAR_c(T) (their abstract:
//! negative graupel charging at low RAR as warm as -2 degC). Coefficients as
//! collected in docs/references.md, "Non-inductive charging" (recalled; values checked there):
//!
//!   RAR_c(T) = 1 + 7.9262e-2 T + 4.4847e-2 T^2 + 7.4754e-3 T^3
//!              + 5.4686e-4 T^4 + 1.6737e-5 T^5 + 1.7613e-7 T^6,  -23.7 <= T <= 0
//!   RAR_c = 3.4 below -23.7 degC (the polynomial is never extrapolated: it
//!   turns negative near -33 degC),
//!   q+ = 6.74 (RAR - RAR_c) fC                                for RAR > RAR_c,
//!   q- = 3.9 (RAR_c - 0.1) {4 [(RAR - (RAR_c + 0.1)/2)/(RAR_c - 0.1)]^2 - 1} fC
//!                                                             for 0.1 < RAR < RAR_c,
//!   0 below RAR = 0.1,
//! and the charge per collision dq = B d^a V^b q ([`super::size_speed`]).
//! T in degC. Laboratory ranges used as clamps: T from -30 to 0 degC (no
//! clamp needed above: no charging is applied warmer than 0 degC), RAR up to
//! 10 g m-2 s-1, crystal diameter 10 um to 1 mm, impact speed 1 to 10 m s-1.

/// Critical rime accretion rate (g m-2 s-1) at temperature `t` (degC).
pub fn critical_rar(t: f64) -> f64 {
    if t < -23.7 {
        return 3.4;
    }
    let t = t.min(0.0);
    let c = [
        1.0, 7.9262e-2, 4.4847e-2, 7.4754e-3, 5.4686e-4, 1.6737e-5, 1.7613e-7,
    ];
    c.iter().rev().fold(0.0, |acc, &ci| acc * t + ci)
}

/// Charge (fC) before the size/speed factor, at temperature `t` (degC) and
/// rime accretion rate `rar` (g m-2 s-1).
pub fn charge_fc(t: f64, rar: f64) -> f64 {
    let rc = critical_rar(t);
    if rar > rc {
        6.74 * (rar - rc)
    } else if rar > 0.1 {
        let x = (rar - 0.5 * (rc + 0.1)) / (rc - 0.1);
        3.9 * (rc - 0.1) * (4.0 * x * x - 1.0)
    } else {
        0.0
    }
}

/// Charge gained by the graupel per rebounding collision (C).
pub fn charge_per_collision(t: f64, rar: f64, d: f64, v: f64) -> f64 {
    let t = t.clamp(-30.0, 0.0);
    let rar = rar.clamp(0.0, 10.0);
    let d = d.clamp(10e-6, 1e-3);
    let v = v.clamp(1.0, 10.0);
    let q = charge_fc(t, rar);
    super::size_speed::factor(q > 0.0, d, v) * q * 1e-15
}
