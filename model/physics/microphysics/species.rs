//! Water species and their order in the state.

named_choice! {
    /// Vapour and the five hydrometeor classes of the bulk scheme, in state
    /// order. The name is used in output variables (`q_<name>`) and in
    /// `hydrometeors.layers.species`.
    pub enum Species {
        Vapour = "vapour",
        Cloud = "cloud",
        Rain = "rain",
        Ice = "ice",
        Snow = "snow",
        Graupel = "graupel",
    }
}

/// Positions in mixing-ratio arrays ordered like [`Species::ALL`], for the
/// cell-level code that holds them as `[f64; 6]`.
pub const VAPOUR: usize = Species::Vapour as usize;
pub const CLOUD: usize = Species::Cloud as usize;
pub const RAIN: usize = Species::Rain as usize;
pub const ICE: usize = Species::Ice as usize;
pub const SNOW: usize = Species::Snow as usize;
pub const GRAUPEL: usize = Species::Graupel as usize;

impl Species {
    /// The names of the hydrometeors (everything but vapour).
    pub const HYDROMETEOR_NAMES: &'static [&'static str] = Species::NAMES.split_at(1).1;
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
