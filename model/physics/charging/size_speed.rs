//! Dependence of the charge per rebounding collision on crystal size and
//! impact speed: dq = B d^a V^b q(...) after Saunders, Keith & Mitzeva (1991),
//! JGR 96, 11007, with the coefficient table used by Saunders & Peck (1998)
//! (from memory; the table's continuity at its size breakpoints was
//! checked, see docs/references.md, "Non-inductive charging"). d is the crystal diameter (m), V the
//! impact speed (m s-1); the factor is dimensionless and multiplies the
//! charge q in fC given by the scheme.

/// Size/speed factor B d^a V^b for positive (`positive = true`) or negative
/// charging of the graupel.
pub fn factor(positive: bool, d: f64, v: f64) -> f64 {
    let (b, a, bexp) = if positive {
        if d < 155e-6 {
            (4.92e13, 3.76, 2.5)
        } else if d < 452e-6 {
            (4.04e6, 1.9, 2.5)
        } else {
            (52.8, 0.44, 2.5)
        }
    } else if d < 253e-6 {
        (5.24e8, 2.54, 2.8)
    } else {
        (24.0, 0.5, 2.8)
    };
    b * d.powf(a) * v.powf(bexp)
}
