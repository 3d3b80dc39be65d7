//! Charge carriers: every species that can hold charge has a charge density
//! (C m-3) in the state; the total charge density is their sum. The
//! prescribed charge of the configuration stays where it is put; the
//! hydrometeor carriers move with their species (advection and
//! sedimentation).

use crate::microphysics::species::Species;

/// One charge carrier.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Carrier {
    /// Charge put into the column by prescription (`[[prescribed_charge.layers]]`).
    Prescribed,
    Cloud,
    Rain,
    Ice,
    Snow,
    Graupel,
}

impl Carrier {
    /// Every carrier, in state order.
    pub const ALL: [Carrier; 6] = [
        Carrier::Prescribed,
        Carrier::Cloud,
        Carrier::Rain,
        Carrier::Ice,
        Carrier::Snow,
        Carrier::Graupel,
    ];

    /// Name used in output variables (`charge_density_<name>`).
    pub fn name(self) -> &'static str {
        match self {
            Carrier::Prescribed => "prescribed",
            Carrier::Cloud => "cloud",
            Carrier::Rain => "rain",
            Carrier::Ice => "ice",
            Carrier::Snow => "snow",
            Carrier::Graupel => "graupel",
        }
    }

    /// Index into the state's charge arrays.
    pub fn index(self) -> usize {
        self as usize
    }

    /// The hydrometeor species that carries this charge, if any.
    pub fn species(self) -> Option<Species> {
        match self {
            Carrier::Prescribed => None,
            Carrier::Cloud => Some(Species::Cloud),
            Carrier::Rain => Some(Species::Rain),
            Carrier::Ice => Some(Species::Ice),
            Carrier::Snow => Some(Species::Snow),
            Carrier::Graupel => Some(Species::Graupel),
        }
    }
}
