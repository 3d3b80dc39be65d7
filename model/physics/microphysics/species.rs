//! Water species and their order in the state.

/// Vapour and the five hydrometeor classes of the bulk scheme.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Species {
    Vapour,
    Cloud,
    Rain,
    Ice,
    Snow,
    Graupel,
}

impl Species {
    pub const ALL: [Species; 6] = [
        Species::Vapour,
        Species::Cloud,
        Species::Rain,
        Species::Ice,
        Species::Snow,
        Species::Graupel,
    ];
    /// The hydrometeors (everything but vapour).
    pub const HYDROMETEORS: [Species; 5] = [
        Species::Cloud,
        Species::Rain,
        Species::Ice,
        Species::Snow,
        Species::Graupel,
    ];
    /// The species that fall.
    pub const FALLING: [Species; 4] =
        [Species::Rain, Species::Ice, Species::Snow, Species::Graupel];

    pub fn index(self) -> usize {
        self as usize
    }

    /// Short name used in output variables (`q_<name>`).
    pub fn name(self) -> &'static str {
        match self {
            Species::Vapour => "vapour",
            Species::Cloud => "cloud",
            Species::Rain => "rain",
            Species::Ice => "ice",
            Species::Snow => "snow",
            Species::Graupel => "graupel",
        }
    }

    /// Long name for output metadata.
    pub fn long_name(self) -> &'static str {
        match self {
            Species::Vapour => "water vapour",
            Species::Cloud => "cloud liquid water",
            Species::Rain => "rain",
            Species::Ice => "cloud ice",
            Species::Snow => "snow",
            Species::Graupel => "graupel",
        }
    }
}
