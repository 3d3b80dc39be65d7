//! Charge carriers: every species that can hold charge has a charge density
//! (C m-3) in the state; the total charge density is their sum. The
//! prescribed charge of the configuration stays where it is put; the
//! hydrometeor carriers move with their species (advection and
//! sedimentation).

use crate::physics::microphysics::species::Species;

named_choice! {
    /// One charge carrier; its name is used in output variables
    /// (`charge_density_<name>`), its index in the state's charge arrays.
    pub enum Carrier {
        /// Charge put into the column by prescription (`[[prescribed_charge.layers]]`).
        Prescribed = "prescribed",
        Cloud = "cloud",
        Rain = "rain",
        Ice = "ice",
        Snow = "snow",
        Graupel = "graupel",
        /// Small ions: with `ions.enabled` the net charge e (n+ - n-) of the
        /// prognostic ion fields (which drift in the field); otherwise a
        /// passive reservoir. Takes the charge released by evaporating or
        /// sublimating hydrometeors and by species that vanish. Moves with the air.
        Ions = "ions",
        /// Aerosol particles that took up small ions (large ions); move with
        /// the air and do not drift.
        Aerosol = "aerosol",
    }
}

impl Carrier {
    /// What carries the charge, in words (output metadata).
    pub fn long_name(self) -> &'static str {
        match self {
            Carrier::Prescribed => "the prescribed charge layers",
            Carrier::Cloud => "cloud droplets",
            Carrier::Rain => "rain",
            Carrier::Ice => "cloud ice",
            Carrier::Snow => "snow",
            Carrier::Graupel => "graupel",
            Carrier::Ions => "small ions",
            Carrier::Aerosol => "aerosol particles (large ions)",
        }
    }

    /// Whether the air carries this charge along (everything but the
    /// prescribed charge, which stays where it is put).
    pub fn advected(self) -> bool {
        self != Carrier::Prescribed
    }

    /// The carrier of a species' charge (vapour: the ion reservoir).
    pub fn of(species: Species) -> Carrier {
        match species {
            Species::Vapour => Carrier::Ions,
            Species::Cloud => Carrier::Cloud,
            Species::Rain => Carrier::Rain,
            Species::Ice => Carrier::Ice,
            Species::Snow => Carrier::Snow,
            Species::Graupel => Carrier::Graupel,
        }
    }

    /// The hydrometeor species that carries this charge, if any.
    pub fn species(self) -> Option<Species> {
        match self {
            Carrier::Prescribed | Carrier::Ions | Carrier::Aerosol => None,
            Carrier::Cloud => Some(Species::Cloud),
            Carrier::Rain => Some(Species::Rain),
            Carrier::Ice => Some(Species::Ice),
            Carrier::Snow => Some(Species::Snow),
            Carrier::Graupel => Some(Species::Graupel),
        }
    }
}
