//! The time loop. One step is the operator-split sequence of processes, in
//! the order the crate documentation lists; observers see the state at t = 0
//! and every output interval.

use crate::error::RunError;
use crate::experiment::Experiment;
use crate::output::Observer;
use crate::state::State;
use crate::{breakdown, charging, discharge, electrostatics, kinematics, microphysics};

/// Advances the state by one step of `dt` seconds.
pub fn step(exp: &Experiment, state: &mut State, dt: f64) {
    kinematics::apply_forcing(exp, state);
    kinematics::transport(exp, state, dt);
    microphysics::step(exp, state, dt);
    charging::step(exp, state, dt);
    electrostatics::solve(exp, state);
    breakdown::evaluate(exp, state);
    discharge::step(exp, state);
    state.step += 1;
    state.time = exp.schedule.time(state.step);
}

/// What a finished run reports.
#[derive(Debug, Clone, PartialEq)]
pub struct RunSummary {
    /// Steps taken.
    pub steps: u64,
    /// Output records written (including the initial state).
    pub records: u64,
    /// Model time reached (s).
    pub model_time: f64,
}

/// Runs the experiment from its initial state. `on_step` is called after each
/// step with the step count (for a progress bar).
pub fn run(
    exp: &Experiment,
    observers: &mut [&mut dyn Observer],
    on_step: &mut dyn FnMut(u64),
) -> Result<RunSummary, RunError> {
    let mut state = State::initial(exp);
    for o in observers.iter_mut() {
        o.begin(exp)?;
    }
    let mut records = 0;
    let mut emit = |state: &State, observers: &mut [&mut dyn Observer]| -> Result<(), RunError> {
        for o in observers.iter_mut() {
            o.record(exp, state)?;
        }
        records += 1;
        Ok(())
    };
    emit(&state, observers)?;
    let dt = exp.schedule.dt;
    for _ in 0..exp.schedule.steps {
        step(exp, &mut state, dt);
        if state.step % exp.schedule.output_every == 0 {
            emit(&state, observers)?;
        }
        on_step(state.step);
    }
    let summary = RunSummary {
        steps: state.step,
        records,
        model_time: state.time,
    };
    for o in observers.iter_mut() {
        o.finish(exp, &summary)?;
    }
    Ok(summary)
}
