//! One step of the column: the operator-split sequence of processes, in the
//! order the crate documentation lists. Each line calls one process adapter.

use crate::column::guards::{self, Process};
use crate::column::state::State;
use crate::column::{
    breakdown, charging, discharge, electrostatics, ions, microphysics, particle_limits, transport,
};
use crate::error::RunError;
use crate::setup::experiment::Experiment;

/// Advances the state by one step of `dt` seconds.
pub fn step(exp: &Experiment, state: &mut State, dt: f64) -> Result<(), RunError> {
    step_timed(exp, state, dt, &mut |_, _| {})
}

/// Names of the phases of a step, in order (for profiles).
pub const PHASES: [&str; 7] = [
    "ions",
    "transport",
    "microphysics",
    "charging",
    "poisson",
    "criteria",
    "discharge",
];

/// [`step`], reporting the time each phase took to `lap(phase, elapsed)`.
pub fn step_timed(
    exp: &Experiment,
    state: &mut State,
    dt: f64,
    lap: &mut dyn FnMut(usize, std::time::Duration),
) -> Result<(), RunError> {
    let mut clock = std::time::Instant::now();
    let mut mark = |phase: usize| {
        let now = std::time::Instant::now();
        lap(phase, now - clock);
        clock = now;
    };
    // Splitting (docs/numerics.md): Lie (first-order) for transport and
    // microphysics, whose symmetric form was measured and did not pay;
    // symmetric (Strang) half-steps for the two charge processes that most
    // of the remaining time error came from: the small ions around the whole
    // step, and the charging around the microphysics (measured on the demo,
    // discharges off: charge-density error of the 2 s step 5.5 % -> 4.5 %,
    // field 2.8 % -> 2.0 %).
    // First half of the small ions: their drift uses the field solved at the
    // end of the last step, which matches the charge the step starts from.
    ions::step(exp, state, 0.5 * dt);
    if exp.config.breakdown.particle_charge_limits {
        let (corona, disrupted) = particle_limits::limit(exp, state);
        state.particle_corona += corona;
        state.particle_disruption += disrupted;
        ions::reconcile(exp, state);
    }
    mark(0);
    let precipitation = state.water.precipitation;
    transport::apply_forcing(exp, state);
    transport::transport(exp, state, dt)?;
    state.precip_rate = (state.water.precipitation - precipitation) / dt;
    guards::check(exp, state, Process::Transport)?;
    mark(1);
    charging::step(exp, state, 0.5 * dt, false);
    mark(3);
    microphysics::step(exp, state, dt)?;
    guards::check(exp, state, Process::Microphysics)?;
    mark(2);
    charging::step(exp, state, 0.5 * dt, true);
    guards::check(exp, state, Process::Charging)?;
    mark(3);
    electrostatics::solve(exp, state);
    mark(4);
    if exp.ions.enabled {
        // Second half of the small ions, in the field of the charge the
        // step has separated; then the field of the charge they leave.
        ions::reconcile(exp, state);
        ions::step(exp, state, 0.5 * dt);
        mark(0);
        electrostatics::solve(exp, state);
    }
    guards::check(exp, state, Process::FieldSolve)?;
    mark(4);
    breakdown::evaluate(exp, state);
    mark(5);
    let flashes = state.ledger.total;
    discharge::step(exp, state, exp.schedule.time(state.step + 1));
    let flashed = state.ledger.total != flashes;
    guards::check(exp, state, Process::Discharge { flashed })?;
    // Charge that evaporation and flashes gave the ion carrier becomes ions.
    ions::reconcile(exp, state);
    mark(6);
    state.step += 1;
    state.time = exp.schedule.time(state.step);
    Ok(())
}
