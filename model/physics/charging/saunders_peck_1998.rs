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

use crate::physics::lanes::Lane;

/// Critical rime accretion rate (g m-2 s-1) at temperature `t` (degC),
/// lane by lane ([`crate::physics::lanes`]).
#[inline(always)]
pub fn critical_rar<T: Lane>(t: T) -> T {
    let tc = t.min(T::splat(0.0));
    let c = [
        1.0, 7.9262e-2, 4.4847e-2, 7.4754e-3, 5.4686e-4, 1.6737e-5, 1.7613e-7,
    ];
    let poly = c.iter().rev().fold(T::splat(0.0), |acc, &ci| acc * tc + ci);
    T::select(t.lt(T::splat(-23.7)), T::splat(3.4), poly)
}

/// Charge (fC) before the size/speed factor, at temperature `t` (degC) and
/// rime accretion rate `rar` (g m-2 s-1), lane by lane.
#[inline(always)]
pub fn charge_fc<T: Lane>(t: T, rar: T) -> T {
    let rc = critical_rar(t);
    let positive = (rar - rc) * 6.74;
    let x = (rar - (rc + 0.1) * 0.5) / (rc - 0.1);
    let negative = (rc - 0.1) * 3.9 * (x * x * 4.0 - 1.0);
    T::select(
        rar.gt(rc),
        positive,
        T::select(rar.gt(T::splat(0.1)), negative, T::splat(0.0)),
    )
}

/// Charge gained by the graupel per rebounding collision (C), lane by lane.
#[inline(always)]
pub fn charge_per_collision<T: Lane>(t: T, rar: T, d: T, v: T) -> T {
    let t = t.max(T::splat(-30.0)).min(T::splat(0.0));
    let rar = rar.max(T::splat(0.0)).min(T::splat(10.0));
    let q = charge_fc(t, rar);
    // The size/speed factor holds d and V inside their laboratory ranges.
    super::size_speed::factor(q.gt(T::splat(0.0)), d, v) * q * 1e-15
}
