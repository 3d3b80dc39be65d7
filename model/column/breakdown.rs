//! Breakdown and inception criteria on the column's field, every step.

use crate::column::state::State;
use crate::setup::experiment::Experiment;

/// Evaluates every criterion on the current field and stores the result in the state.
pub fn evaluate(exp: &Experiment, state: &mut State) {
    state.criteria_status =
        exp.criteria_thresholds
            .evaluate(&state.field, &exp.grid.z_face, &exp.base.face.density);
}
