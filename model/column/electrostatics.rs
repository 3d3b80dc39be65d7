//! The field of the column's charge, every step.

use crate::column::state::State;
use crate::physics::electrostatics::column_charge;
use crate::setup::experiment::Experiment;

/// Sums the carriers into the total charge, solves for potential and field,
/// and updates the charge and energy diagnostics.
pub fn solve(exp: &Experiment, state: &mut State) {
    state.sum_charge();
    exp.field_solver
        .solve(&state.charge_total, &mut state.potential, &mut state.field);
    state.column_charge = column_charge(&state.charge_total, exp.grid.dz);
    state.field_energy = exp.field_solver.energy(
        &state.charge_total,
        &state.potential,
        &state.field,
        exp.grid.dz,
    );
}

/// Sums the carriers into the total charge and solves for the field alone,
/// with the bits [`solve`] gives it. For the solve inside a step whose
/// potential, column charge and energy the next [`solve`] replaces before
/// anything reads them (the field the small ions' second half-step drifts
/// in): the finite column's direct sums then skip the potential, half their
/// work. The potential and the diagnostics are stale until that [`solve`].
pub fn solve_field(exp: &Experiment, state: &mut State) {
    state.sum_charge();
    exp.field_solver
        .solve_field(&state.charge_total, &mut state.potential, &mut state.field);
}
