//! Dependence of the charge per rebounding collision on crystal size and
//! impact speed: dq = B d^a V^b q(...) after Saunders, Keith & Mitzeva (1991),
//! JGR 96, 11007, with the coefficient table used by Saunders & Peck (1998)
//! (from memory; the table's continuity at its size breakpoints was
//! checked, see docs/references.md, "Non-inductive charging"). d is the crystal diameter (m), V the
//! impact speed (m s-1); the factor is dimensionless and multiplies the
//! charge q in fC given by the scheme.

/// Crystal diameters (m) and impact speeds (m s-1) the laboratory
/// experiments behind the table covered (from memory, docs/references.md):
/// outside, the factor is held at its value at the edge, never extrapolated.
pub const DIAMETER_RANGE: (f64, f64) = (10e-6, 1e-3);
pub const SPEED_RANGE: (f64, f64) = (1.0, 10.0);

/// Size/speed factor B d^a V^b for positive (`positive = true`) or negative
/// charging of the graupel, with d and V held inside the laboratory ranges.
pub fn factor(positive: bool, d: f64, v: f64) -> f64 {
    let d = d.clamp(DIAMETER_RANGE.0, DIAMETER_RANGE.1);
    let v = v.clamp(SPEED_RANGE.0, SPEED_RANGE.1);
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
