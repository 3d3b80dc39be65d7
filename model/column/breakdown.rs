//! Breakdown and inception criteria on the column's field, every step.

use crate::column::particle_limits;
use crate::column::state::State;
use crate::physics::breakdown::Extras;
use crate::setup::experiment::Experiment;

/// Evaluates every criterion on the current field and the largest
/// particles' charges, and stores the result and the strongest runaway
/// avalanche in the state.
pub fn evaluate(exp: &Experiment, state: &mut State) {
    let mut sc = std::mem::take(&mut state.initiation_scratch);
    particle_limits::corona_ratios(exp, state, &mut sc.corona);
    let (status, avalanche) = exp.criteria_thresholds.evaluate(
        &state.field,
        &exp.grid.z_face,
        &exp.base.face.density,
        &Extras {
            corona: &sc.corona,
            seed: &exp.ions.seed_on_faces,
        },
    );
    state.criteria_status = status;
    state.avalanche = avalanche;
    state.initiation_scratch = sc;
}
