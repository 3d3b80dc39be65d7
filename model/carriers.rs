//! Charge carriers: every species that can hold charge has a charge density
//! (C m-3) in the state; the total charge density is their sum. For now there
//! is one carrier, the prescribed charge of the configuration; the
//! microphysics adds cloud water, rain, ice, snow, graupel and small ions.

/// One charge carrier.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Carrier {
    /// Charge put into the column by prescription (`[[prescribed_charge.layers]]`).
    Prescribed,
}

impl Carrier {
    /// Every carrier, in state order.
    pub const ALL: [Carrier; 1] = [Carrier::Prescribed];

    /// Name used in output variables (`charge_density_<name>`).
    pub fn name(self) -> &'static str {
        match self {
            Carrier::Prescribed => "prescribed",
        }
    }

    /// Index into the state's charge arrays.
    pub fn index(self) -> usize {
        self as usize
    }
}
