//! Charge sources: prescribed charge growth (implemented, [`prescribed`]) and
//! non-inductive and inductive charge separation between hydrometeors.
//!
//! STUB (hydrometeor charging): the published charging schemes arrive with the
//! issue "Charging schemes on hydrometeors"; until then only prescribed charge
//! changes here.

pub mod prescribed;

use crate::carriers::Carrier;
use crate::experiment::Experiment;
use crate::state::State;

/// Charge sources over one step of `dt` s.
pub fn step(exp: &Experiment, state: &mut State, dt: f64) {
    exp.prescribed
        .grow(&mut state.charge[Carrier::Prescribed.index()], dt);
}
