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

/// Potential (V) a floating channel with zero net charge takes in the
/// ambient potential `potential` (V, at cell centres): the mean over its
/// cells, with the capacitance per unit length taken uniform along it
/// (Kasemir 1960, from memory; [`extend_equipotential`] keeps the same
/// mean as a running sum while it grows).
pub fn floating_potential(potential: &[f64], channel: Channel) -> f64 {
    let cells = &potential[channel.bottom..channel.top];
    cells.iter().sum::<f64>() / cells.len().max(1) as f64
}

/// Inputs of the equipotential (potential-driven) extension.
pub struct EquipotentialInputs<'a> {
    /// Ambient electric potential at cell centres (V), ground at 0 V.
    pub potential: &'a [f64],
    /// Sign of the field E_z at the initiation face.
    pub sign0: f64,
    /// Potential difference between channel and ambient air that the
    /// negative end needs to advance (V, >= 0).
    pub margin: f64,
    /// The positive end needs `margin / negative_factor` (1; 1 symmetric).
    pub negative_factor: f64,
}

/// Extends a channel as a floating, equipotential conductor with zero net
/// charge (the bidirectional leader of Kasemir 1960, from memory).
///
/// A thin conductor in an ambient potential phi_a(z) takes the potential
/// phi_c and carries the induced line charge lambda(z) = C' (phi_c - phi_a(z)).
/// With a capacitance per unit length C' taken uniform along the channel (the
/// slender-conductor approximation, C' = 2 pi eps0 / ln(L/a), varies only
/// logarithmically; a modelling simplification) the zero net charge of a
/// floating channel gives phi_c = mean of phi_a over the channel. Where
/// phi_a > phi_c the induced charge is negative (the negative end), where
/// phi_a < phi_c positive. An end advances one cell while the induced charge
/// the next cell would carry has that end's polarity and the potential
/// difference exceeds the end's margin: |phi_c - phi_a| > margin for the
/// negative end, margin / `negative_factor` for the positive end; phi_c is
/// updated as the channel grows (running mean), the two ends advancing in
/// turn. An end can so cross air whose field is far below any breakdown
/// value as long as the channel's potential differs enough from the air's:
/// the mechanism by which a stepped leader carries a cloud's potential to
/// ground.
///
/// The channel starts as `initial` (the local-field rule's channel, so that
/// the leader forms where the field supports breakdown and the extension
/// does not depend on the grid through a one-cell seed) and only grows.
/// With E_z < 0 at initiation the potential rises upward, so the upper end
/// is the negative end; with E_z > 0 the lower one.
pub fn extend_equipotential(inp: &EquipotentialInputs, initial: Channel) -> Channel {
    let n_cells = inp.potential.len();
    let Channel {
        mut bottom,
        mut top,
    } = initial;
    if top <= bottom {
        return initial;
    }
    let rising = -inp.sign0;
    let easy = inp.margin / inp.negative_factor;
    let (up_margin, down_margin) = if inp.sign0 > 0.0 {
        (easy, inp.margin)
    } else {
        (inp.margin, easy)
    };
    let mut sum: f64 = inp.potential[bottom..top].iter().sum();
    loop {
        let mut moved = false;
        if top < n_cells {
            let mean = sum / (top - bottom) as f64;
            if rising * (inp.potential[top] - mean) > up_margin {
                sum += inp.potential[top];
                top += 1;
                moved = true;
            }
        }
        if bottom > 0 {
            let mean = sum / (top - bottom) as f64;
            if rising * (mean - inp.potential[bottom - 1]) > down_margin {
                bottom -= 1;
                sum += inp.potential[bottom];
                moved = true;
            }
        }
        if !moved {
            break;
        }
    }
    Channel { bottom, top }
}
