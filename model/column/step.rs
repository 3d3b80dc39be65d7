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
    step_timed(exp, state, dt, None, &mut |_| {})
}

/// [`step`], showing `watch` the state where the field peaks before a
/// flash: the end of each piece but the last when the step is split to start
/// a flash inside it, and the state just before a flash starts (criteria
/// evaluated, no charge yet removed).
pub fn step_observed(
    exp: &Experiment,
    state: &mut State,
    dt: f64,
    watch: &mut dyn FnMut(&State),
) -> Result<(), RunError> {
    step_timed(exp, state, dt, None, watch)
}

/// Most pieces one step is split into to place flashes inside it.
pub const MAX_PIECES: usize = 8;

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

/// [`step_observed`], reporting the time each phase took to
/// `lap(phase, elapsed)` when `lap` is given (without it the clock is not
/// read: at eight readings a step it cost about 1.5 % of a run).
///
/// A flash starts when its trigger is reached, not at the end of the step in
/// which it is (that would delay it by a random fraction of the step, an
/// error of first order in the step whose constant changes from flash to
/// flash: docs/numerics.md). Before each piece [`discharge::next_piece`]
/// says how far to go: the rest of the step, or up to the time the trigger
/// is due. The pieces run the same sequence of processes; only the last
/// advances the step counter.
pub fn step_timed(
    exp: &Experiment,
    state: &mut State,
    dt: f64,
    mut lap: Option<&mut dyn FnMut(usize, std::time::Duration)>,
    watch: &mut dyn FnMut(&State),
) -> Result<(), RunError> {
    let mut left = dt;
    for _ in 1..MAX_PIECES {
        let piece = discharge::next_piece(exp, state, left);
        if piece >= left {
            break;
        }
        advance(exp, state, piece, false, reborrow(&mut lap), watch)?;
        watch(state);
        left -= piece;
    }
    advance(exp, state, left, true, lap, watch)
}

/// The phase clock of [`step_timed`] for one call, leaving it for the next.
fn reborrow<'b>(
    lap: &'b mut Option<&mut dyn FnMut(usize, std::time::Duration)>,
) -> Option<&'b mut dyn FnMut(usize, std::time::Duration)> {
    match lap {
        Some(l) => Some(&mut **l),
        None => None,
    }
}

/// The processes over `dt` s; `ends_step` when this ends the model step
/// (otherwise it is a piece of a split step).
fn advance(
    exp: &Experiment,
    state: &mut State,
    dt: f64,
    ends_step: bool,
    mut lap: Option<&mut dyn FnMut(usize, std::time::Duration)>,
    watch: &mut dyn FnMut(&State),
) -> Result<(), RunError> {
    let trigger = exp.criteria_thresholds.trigger;
    let before = (
        state.time,
        exp.criteria_thresholds
            .margin(trigger, &state.criteria_status[trigger.index()]),
    );
    let end_time = if ends_step {
        exp.schedule.time(state.step + 1)
    } else {
        state.time + dt
    };
    let mut clock = lap.is_some().then(std::time::Instant::now);
    let mut mark = |phase: usize| {
        if let (Some(lap), Some(clock)) = (reborrow(&mut lap), clock.as_mut()) {
            let now = std::time::Instant::now();
            lap(phase, now - *clock);
            *clock = now;
        }
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
        // What the limits take off the particles goes to the ion carrier;
        // transport folds it into the ion numbers before it moves them.
        let (corona, disrupted) = particle_limits::limit(exp, state);
        state.particle_corona += corona;
        state.particle_disruption += disrupted;
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
    if exp.ions.enabled {
        // Second half of the small ions, in the field of the charge the
        // step has separated (the field alone: the solve after the ions
        // replaces the potential and the diagnostics before anything reads
        // them); then the field of the charge they leave.
        electrostatics::solve_field(exp, state);
        mark(4);
        ions::step(exp, state, 0.5 * dt);
        mark(0);
    }
    electrostatics::solve(exp, state);
    guards::check(exp, state, Process::FieldSolve)?;
    mark(4);
    breakdown::evaluate(exp, state);
    mark(5);
    if exp.discharge_params.enabled && state.criteria_status[trigger.index()].met {
        // The peak of the sawtooth: what the flashes about to start remove.
        watch(state);
    }
    let flashes = state.ledger.total;
    discharge::step(exp, state, end_time);
    let flashed = state.ledger.total != flashes;
    guards::check(exp, state, Process::Discharge { flashed })?;
    // Charge that evaporation and flashes gave the ion carrier becomes ions
    // now, so the ion numbers the observers record hold it.
    ions::reconcile(exp, state);
    mark(6);
    if ends_step {
        state.step += 1;
    }
    state.time = end_time;
    state.trigger_before = Some(before);
    Ok(())
}
