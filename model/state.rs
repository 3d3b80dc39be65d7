//! The prognostic state of the column. Later processes add their fields here
//! (hydrometeor mixing ratios and numbers, charge per carrier, field).

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
}

impl State {
    /// The initial state: the base state at rest.
    pub fn initial(exp: &Experiment) -> Self {
        State {
            step: 0,
            time: 0.0,
            potential_temperature: exp.base.centre.potential_temperature.clone(),
            vapour: exp.base.centre.vapour.clone(),
        }
    }
}
