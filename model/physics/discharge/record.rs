//! Flash records.

/// Kind of flash. The discriminants are the CF `flag_values` of `flash_kind`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FlashKind {
    Intracloud = 1,
    NegativeGround = 2,
    PositiveGround = 3,
}

impl FlashKind {
    pub const ALL: [FlashKind; 3] = [
        FlashKind::Intracloud,
        FlashKind::NegativeGround,
        FlashKind::PositiveGround,
    ];

    /// Name used in CF `flag_meanings` and output variable names.
    pub fn name(self) -> &'static str {
        match self {
            FlashKind::Intracloud => "intracloud",
            FlashKind::NegativeGround => "negative_ground",
            FlashKind::PositiveGround => "positive_ground",
        }
    }

    /// Index into per-kind counters.
    pub fn index(self) -> usize {
        self as usize - 1
    }
}

/// One flash. Per-area quantities refer to a unit horizontal area (planar)
/// or to the column's cross-section (finite column; multiply by pi R^2 for
/// totals).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FlashRecord {
    /// Model time at the end of the step in which the flash happened (s).
    pub time: f64,
    pub kind: FlashKind,
    /// Initiation height (m): the face where the trigger ratio was largest.
    pub z_init: f64,
    /// Lower and upper channel ends (m).
    pub z_bottom: f64,
    pub z_top: f64,
    /// Charge neutralised of each polarity (C m-2): for an intracloud flash the
    /// positive and negative amounts are equal and this is that amount; for a
    /// ground flash the larger of the two.
    pub charge_neutralized: f64,
    /// Net charge lowered to ground (C m-2), signed: negative for a negative
    /// ground flash; zero for an intracloud flash.
    pub charge_to_ground: f64,
    /// Energy released (J m-2): the drop in electrostatic energy.
    pub energy: f64,
    /// The same energy from the charges moved and the potentials before and
    /// after, -1/2 sum dq (phi_before + phi_after) (J m-2): an independent
    /// check of `energy` (equal by Green's reciprocity).
    pub energy_from_charges: f64,
    /// Largest |E_z| on the channel's faces before and after (V m-1).
    pub field_before: f64,
    pub field_after: f64,
    /// Which criteria held at initiation, in `Criterion::ALL` order.
    pub criteria_met: [bool; crate::physics::breakdown::Criterion::COUNT],
    /// Each criterion's ratio at initiation (for avalanche multiplication
    /// the e-folding count), in `Criterion::ALL` order.
    pub criteria_ratio: [f64; crate::physics::breakdown::Criterion::COUNT],
    /// Lengths (m) of the channel's positive and negative ends from the
    /// initiation height (a ground connection counts in the lower end).
    pub positive_end: f64,
    pub negative_end: f64,
    /// Potential (V, ground at 0 V) a floating channel with zero net charge
    /// takes: the mean of the ambient potential over the channel's cells
    /// before the flash (Kasemir 1960, uniform capacitance per unit length;
    /// docs/discharge.md), whichever rule grew the channel. For a ground
    /// flash, the channel as grown before it was extended to the ground.
    pub channel_potential: f64,
    /// Charge centres of the flash (m): the centroids, over the cells the
    /// channel crossed, of the negative and of the positive charge it
    /// neutralised, weighted by the change of the charge density each
    /// cell saw (NaN when the flash neutralised none of that sign). This is
    /// what multi-station field-change and lightning-mapping analyses
    /// retrieve as a flash's charge sources (Krehbiel 1986, from memory;
    /// docs/discharge.md).
    pub z_negative_charge: f64,
    pub z_positive_charge: f64,
    /// Air temperature (K) at those heights (linear between cell centres;
    /// NaN with the height).
    pub t_negative_charge: f64,
    pub t_positive_charge: f64,
}
