//! The time loop: the initial state, then steps ([`crate::column::step`]);
//! observers see the state at t = 0 and every output interval, and the run
//! summary ([`crate::output::summary::RunSummary`]) watches every step.

use crate::column::state::State;
use crate::column::step::step_observed;
use crate::error::RunError;
use crate::output::summary::RunSummary;
use crate::output::Observer;
use crate::setup::experiment::Experiment;

/// Where a run is, reported after every step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Progress {
    /// Steps taken.
    pub step: u64,
    /// Model time (s).
    pub time: f64,
    /// Flashes so far.
    pub flashes: usize,
}

/// Runs the experiment from its initial state. `on_step` is called after each
/// step with its progress (for a progress bar).
pub fn run(
    exp: &Experiment,
    observers: &mut [&mut dyn Observer],
    on_step: &mut dyn FnMut(Progress),
) -> Result<RunSummary, RunError> {
    let mut state = State::initial(exp);
    let mut summary = RunSummary::new();
    for o in observers.iter_mut() {
        o.begin(exp)?;
    }
    // What the summary and the observers' `stepped` watch: the initial
    // state (it may hold charge), the end of every step, and inside a step
    // the state just before a flash and the end of each piece of a split
    // step (docs/numerics.md), where the field peaks.
    let watch = |summary: &mut RunSummary, observers: &mut [&mut dyn Observer], s: &State| {
        summary.watch(exp, s);
        for o in observers.iter_mut() {
            o.stepped(exp, s);
        }
    };
    watch(&mut summary, observers, &state);
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
        step_observed(exp, &mut state, dt, &mut |peak: &State| {
            watch(&mut summary, observers, peak)
        })?;
        watch(&mut summary, observers, &state);
        if state.step % exp.schedule.output_every == 0 {
            emit(&state, observers)?;
            // Every observer has taken the flashes so far: memory stays
            // bounded however many flashes a run makes.
            state.ledger.flashes.clear();
        }
        on_step(Progress {
            step: state.step,
            time: state.time,
            flashes: state.ledger.total,
        });
    }
    summary.steps = state.step;
    summary.records = records;
    summary.model_time = state.time;
    summary.flash_counts = state.ledger.counts;
    summary.first_flash = state.ledger.first_time;
    summary.ground_charge = state.ledger.ground_charge;
    summary.conduction = crate::output::summary::Conduction {
        into_ground: state.charge_transport.conducted_to_ground,
        out_top: state.charge_transport.conducted_out_top,
        corona: state.charge_transport.corona,
        neutralised: state.ion_neutralised,
    };
    summary.flash_bound_hits = (state.ledger.bound_hits, state.ledger.first_bound_hit);
    summary.channels_at_model_top = state.ledger.at_model_top;
    summary.precipitation = state.water.precipitation;
    summary.substeps = state.substeps;
    summary.charging_cap_hits = state.charging_cap_hits;
    for o in observers.iter_mut() {
        o.finish(exp, &state, &summary)?;
    }
    Ok(summary)
}
