//! Bidirectional channel growth.
//!
//! Rule (docs/discharge.md): from the initiation face both ends grow cell by
//! cell. An end moves to the next face when the field there still points the
//! way it did at initiation and is at least the propagation field
//! (E_z sign0 >= E_prop), the threshold-based propagation of Helsdon, Wu &
//! Farley (1992) and Mansell et al. (2002) (from memory). The two ends are a
//! bidirectional leader: the end the field points to is positive, the other
//! negative; the propagation field is the negative end's and the positive
//! end needs only 1/`negative_factor` of it
//! (negative streamers and leaders need more field than positive ones; the
//! stability fields are 7.5-12.5 against 4.5-5 kV/cm at sea level, Raizer
//! 1991, via secondary sources). With `follow_charge`
//! an end also keeps going while the next cell holds charge of the polarity
//! that end seeks with |rho| >= rho_min, so a channel penetrates the charge
//! regions that drive it, as in the charge-density rule of Ziegler & MacGorman
//! (1994) (from memory). For E_z < 0 at initiation (positive charge above,
//! negative below) the upper end seeks positive and the lower end negative
//! charge; for E_z > 0 the reverse.

/// The channel as a range of faces `bottom..=top` (cells `bottom..top`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Channel {
    pub bottom: usize,
    pub top: usize,
}

/// Inputs of the channel rule, all on the grid.
pub struct ChannelInputs<'a> {
    /// Field on faces (V m-1).
    pub field: &'a [f64],
    /// Propagation field on faces (V m-1, positive).
    pub propagation: &'a [f64],
    /// Total charge density at centres (C m-3).
    pub charge: &'a [f64],
    /// Minimum |rho| followed (C m-3), or `None` when not following charge.
    pub follow_min: Option<f64>,
    /// Factor on the propagation field for the negative end (1; 1 symmetric).
    pub negative_factor: f64,
}

/// Grows the channel from face `start`. Returns `None` when the field at the
/// start is zero (no direction to grow in).
pub fn grow(inp: &ChannelInputs, start: usize) -> Option<Channel> {
    let sign0 = inp.field[start].signum();
    if inp.field[start] == 0.0 {
        return None;
    }
    let n_faces = inp.field.len();
    let seeks = |cell: usize, sign: f64| match inp.follow_min {
        Some(min) => inp.charge[cell] * sign >= min && min.is_finite(),
        None => false,
    };
    // With E_z > 0 the upper end is the positive one; the propagation field
    // is the negative end's, the positive end needs 1/factor of it.
    let easy = 1.0 / inp.negative_factor;
    let (up, down) = if sign0 > 0.0 {
        (easy, 1.0)
    } else {
        (1.0, easy)
    };
    let field_ok = |face: usize, f: f64| inp.field[face] * sign0 >= f * inp.propagation[face];
    let mut top = start;
    // Upper end seeks charge of sign -sign0.
    while top + 1 < n_faces && (field_ok(top + 1, up) || seeks(top, -sign0)) {
        top += 1;
    }
    let mut bottom = start;
    while bottom > 0 && (field_ok(bottom - 1, down) || seeks(bottom - 1, sign0)) {
        bottom -= 1;
    }
    Some(Channel { bottom, top })
}
