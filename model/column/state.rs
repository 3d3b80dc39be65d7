//! The prognostic state of the column and the diagnostics each step leaves
//! behind. Later processes add their fields here.

use crate::column::work::{ChargingRates, FlashScratch, MicroScratch, TransportScratch};
use crate::physics::breakdown::{Criterion, CriterionStatus};
use crate::physics::discharge::FlashLedger;

/// Everything that changes during a run. Units SI.
#[derive(Debug, Clone, PartialEq)]
pub struct State {
    /// Steps taken so far.
    pub step: u64,
    /// Model time since `time.start` (s).
    pub time: f64,
    /// Potential temperature at cell centres (K): the thermodynamic variable
    /// that is conserved under dry adiabatic transport.
    pub potential_temperature: Vec<f64>,
    /// Mixing ratios at cell centres (kg kg-1), indexed by `Species::index`
    /// (vapour, cloud, rain, ice, snow, graupel).
    pub q: [Vec<f64>; 6],
    /// Cloud-ice number at cell centres (kg-1).
    pub n_ice: Vec<f64>,
    /// Vertical air velocity on faces (m s-1), positive up.
    pub w: Vec<f64>,
    /// Mass-weighted fall speeds at centres (m s-1, positive down) of rain,
    /// ice, snow and graupel (`Species::FALLING` order).
    pub fall_speed: [Vec<f64>; 4],
    /// Surface precipitation rate over the last step (kg m-2 s-1).
    pub precip_rate: f64,
    /// Water budget terms accumulated since the start.
    pub water: WaterLedger,
    /// Charge moved by transport since the start.
    pub charge_transport: ChargeLedger,
    /// Charging rates of the last step.
    pub charging_rates: ChargingRates,
    /// Cell-steps and collision kinds in which the safety cap on the charge
    /// per collision bound (a diagnostic: a cap that binds in a normal storm
    /// would be shaping the result).
    pub charging_cap_hits: u64,
    /// Column charge at the start (C m-2), for the charge budget.
    pub initial_column_charge: f64,
    /// Steps in which transport had to sub-step, and the largest number of sub-steps.
    pub substeps: (u64, usize),
    /// Work arrays of the transport (allocated once).
    pub transport_scratch: TransportScratch,
    /// Work arrays of the microphysics (allocated once).
    pub micro_scratch: MicroScratch,
    /// Charge density of each carrier at centres (C m-3), indexed by [`crate::physics::carriers::Carrier::index`].
    pub charge: Vec<Vec<f64>>,
    /// Total charge density at centres (C m-3): the sum over carriers.
    pub charge_total: Vec<f64>,
    /// Electric potential at centres (V).
    pub potential: Vec<f64>,
    /// Vertical electric field E_z on faces (V m-1), positive upward.
    pub field: Vec<f64>,
    /// Column-integrated charge (C m-2).
    pub column_charge: f64,
    /// Field energy per unit area (J m-2).
    pub field_energy: f64,
    /// Status of every breakdown criterion, in `Criterion::ALL` order.
    pub criteria_status: [CriterionStatus; Criterion::COUNT],
    /// Flashes so far and their running totals.
    pub ledger: FlashLedger,
    /// Work arrays for flashes (allocated once).
    pub flash_scratch: FlashScratch,
    /// Positive and negative small ions at centres (m-3); empty when ions
    /// are off.
    pub n_ion: [Vec<f64>; 2],
    /// Mean conduction current density on faces over the last step (A m-2,
    /// positive up; ion drift and point discharge).
    pub conduction_current: Vec<f64>,
    /// Mean point-discharge current density at the ground over the last step
    /// (A m-2, positive up).
    pub corona_current: f64,
    /// Work arrays of the ion drift (allocated once).
    pub ion_scratch: IonScratch,
    /// Hydrometeor and aerosol charge neutralised by the capture of small
    /// ions of the opposite sign since the start (C m-2, a gross
    /// diagnostic: the storm's charge lost to the conducting air inside it).
    pub ion_neutralised: f64,
    /// The strongest runaway avalanche of the last evaluation.
    pub avalanche: crate::physics::initiation::runaway::Avalanche,
    /// Work arrays of the criteria (allocated once).
    pub initiation_scratch: InitiationScratch,
    /// Time since when the trigger has held without a break (s), if it holds.
    pub trigger_since: Option<f64>,
    /// Model time (s) and trigger margin (`Criteria::margin`) at the end of
    /// the step or piece before the latest one, for placing the next
    /// flash's start inside a step.
    pub trigger_before: Option<(f64, f64)>,
    /// Particle charge moved off by corona and by drop disruption since the
    /// start (C m-2, gross).
    pub particle_corona: f64,
    pub particle_disruption: f64,
}

/// Work array of the criteria: the corona ratio per cell.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct InitiationScratch {
    pub(crate) corona: Vec<f64>,
}

/// Work arrays of the ion drift: number fluxes on faces.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct IonScratch {
    pub(crate) flux_pos: Vec<f64>,
    pub(crate) flux_neg: Vec<f64>,
    /// Attachment rates (s-1) of positive and negative ions to each
    /// hydrometeor species (`Species::HYDROMETEORS` order) in each cell.
    pub(crate) attachment: Vec<[(f64, f64); 5]>,
}

/// Water entering and leaving the column (kg m-2, accumulated).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct WaterLedger {
    /// Total water entered through the ground face by advection.
    pub advected_in_bottom: f64,
    /// Total water left through the model top by advection.
    pub advected_out_top: f64,
    /// Total water gained through the column's sides (the exchange implied by
    /// a height-dependent mass flux; negative: lost).
    pub lateral: f64,
    /// Precipitation that reached the ground.
    pub precipitation: f64,
    /// Mass created by removing negative values that the vapour could not
    /// pay for (normally zero).
    pub clip_created: f64,
}

/// Charge moved by transport (C m-2, accumulated).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ChargeLedger {
    /// Net charge gained through the column boundaries and sides by advection.
    pub advected_in: f64,
    /// Charge carried to the ground by precipitation.
    pub precipitated: f64,
    /// Charge added by prescribed sources (layer growth).
    pub added: f64,
    /// Net charge carried into the ground by ion conduction.
    pub conducted_to_ground: f64,
    /// Net charge carried out through the model top by ion conduction.
    pub conducted_out_top: f64,
    /// Charge put into the air by point discharge at the ground.
    pub corona: f64,
}

impl State {
    /// Air temperature (K) of cell `k`: T = theta Pi, with the base state's
    /// Exner function Pi = (p/p_ref)^(R_d/c_p) held per cell in
    /// `exp.cell_env` (the inverse of Poisson's equation).
    pub fn temperature(&self, exp: &crate::setup::experiment::Experiment, k: usize) -> f64 {
        self.potential_temperature[k] * exp.cell_env[k].exner
    }

    /// Air temperatures (K) of every cell, for diagnostics between steps.
    pub fn temperatures(&self, exp: &crate::setup::experiment::Experiment) -> Vec<f64> {
        (0..self.potential_temperature.len())
            .map(|k| self.temperature(exp, k))
            .collect()
    }

    /// Charge budget residual (C m-2): the column charge minus everything
    /// that should have made it: start, sources, advection and point
    /// discharge in; precipitation, flashes to ground and conduction through
    /// the ground and the top out. Zero to round-off.
    pub fn charge_budget_residual(&self) -> f64 {
        let t = &self.charge_transport;
        self.column_charge
            - (self.initial_column_charge + t.added + t.advected_in + t.corona
                - t.precipitated
                - t.conducted_to_ground
                - t.conducted_out_top
                - self.ledger.ground_charge)
    }

    /// Total charge density = sum over carriers.
    pub fn sum_charge(&mut self) {
        self.charge_total.fill(0.0);
        for carrier in &self.charge {
            for (t, c) in self.charge_total.iter_mut().zip(carrier) {
                *t += c;
            }
        }
    }
}
