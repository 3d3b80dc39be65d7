//! Dependence of the charge per rebounding collision on crystal size and
//! impact speed: dq = B d^a V^b q(...) after Saunders, Keith & Mitzeva (1991),
//! JGR 96, 11007, with the coefficient table used by Saunders & Peck (1998)
//! (from memory; the table's continuity at its size breakpoints was
//! checked, see docs/references.md, "Non-inductive charging"). d is the crystal diameter (m), V the
//! impact speed (m s-1); the factor is dimensionless and multiplies the
//! charge q in fC given by the scheme.

use crate::physics::lanes::Lane;

/// Crystal diameters (m) and impact speeds (m s-1) the laboratory
/// experiments behind the table covered (from memory, docs/references.md):
/// outside, the factor is held at its value at the edge, never extrapolated.
pub const DIAMETER_RANGE: (f64, f64) = (10e-6, 1e-3);
pub const SPEED_RANGE: (f64, f64) = (1.0, 10.0);

/// Size/speed factor B d^a V^b for positive (`positive` true) or negative
/// charging of the graupel, with d and V held inside the laboratory ranges;
/// lane by lane ([`crate::physics::lanes`]), one cell when `T` is `f64`.
/// The two powers are one exponential, exp(a ln d + b ln V), within a few
/// units in the last place of two `powf` calls and cheaper.
#[inline(always)]
pub fn factor<T: Lane>(positive: T::Mask, d: T, v: T) -> T {
    let d = d
        .max(T::splat(DIAMETER_RANGE.0))
        .min(T::splat(DIAMETER_RANGE.1));
    let v = v.max(T::splat(SPEED_RANGE.0)).min(T::splat(SPEED_RANGE.1));
    let pick = |m: T::Mask, a: f64, b: T| T::select(m, T::splat(a), b);
    // Positive charging: three size ranges (breaks at 155 and 452 um);
    // negative: two (break at 253 um).
    let (p_small, p_mid) = (d.lt(T::splat(155e-6)), d.lt(T::splat(452e-6)));
    let n_small = d.lt(T::splat(253e-6));
    let b_pos = pick(p_small, 4.92e13, pick(p_mid, 4.04e6, T::splat(52.8)));
    let a_pos = pick(p_small, 3.76, pick(p_mid, 1.9, T::splat(0.44)));
    let b_neg = pick(n_small, 5.24e8, T::splat(24.0));
    let a_neg = pick(n_small, 2.54, T::splat(0.5));
    let b = T::select(positive, b_pos, b_neg);
    let a = T::select(positive, a_pos, a_neg);
    let speed_exponent = pick(positive, 2.5, T::splat(2.8));
    b * (a * d.ln() + speed_exponent * v.ln()).exp()
}
