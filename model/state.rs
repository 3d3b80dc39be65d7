//! The prognostic state of the column and the diagnostics each step leaves
//! behind. Later processes add their fields here.

use crate::breakdown::CriterionStatus;
use crate::carriers::Carrier;
use crate::discharge::{FlashLedger, Scratch};
use crate::experiment::Experiment;

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
    /// Water-vapour mixing ratio at cell centres (kg kg-1).
    pub vapour: Vec<f64>,
    /// Charge density of each carrier at centres (C m-3), indexed by [`Carrier::index`].
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
    pub criteria: [CriterionStatus; 7],
    /// Flashes so far and their running totals.
    pub ledger: FlashLedger,
    /// Work arrays for flashes (allocated once).
    pub scratch: Scratch,
}

impl State {
    /// The initial state: the base state at rest, prescribed charge in place,
    /// and the field it makes.
    pub fn initial(exp: &Experiment) -> Self {
        let n = exp.grid.len();
        let mut charge = vec![vec![0.0; n]; Carrier::ALL.len()];
        charge[Carrier::Prescribed.index()].copy_from_slice(&exp.prescribed.initial);
        let mut s = State {
            step: 0,
            time: 0.0,
            potential_temperature: exp.base.centre.potential_temperature.clone(),
            vapour: exp.base.centre.vapour.clone(),
            charge,
            charge_total: vec![0.0; n],
            potential: vec![0.0; n],
            field: vec![0.0; n + 1],
            column_charge: 0.0,
            field_energy: 0.0,
            criteria: [CriterionStatus::default(); 7],
            ledger: FlashLedger::default(),
            scratch: Scratch::new(n),
        };
        crate::electrostatics::solve(exp, &mut s);
        crate::breakdown::evaluate(exp, &mut s);
        s
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
