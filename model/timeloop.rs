//! The time loop. One step is the operator-split sequence of processes, in
//! the order the crate documentation lists; observers see the state at t = 0
//! and every output interval.

use crate::carriers::Carrier;
use crate::error::RunError;
use crate::experiment::Experiment;
use crate::microphysics::species::Species;
use crate::output::Observer;
use crate::state::State;
use crate::{breakdown, charging, discharge, electrostatics, kinematics, microphysics};

/// Advances the state by one step of `dt` seconds.
pub fn step(exp: &Experiment, state: &mut State, dt: f64) -> Result<(), RunError> {
    step_timed(exp, state, dt, &mut |_, _| {})
}

/// Names of the phases of a step, in order (for profiles).
pub const PHASES: [&str; 6] = [
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
    kinematics::apply_forcing(exp, state);
    kinematics::transport(exp, state, dt);
    mark(0);
    microphysics::step(exp, state, dt)?;
    mark(1);
    charging::step(exp, state, dt);
    mark(2);
    electrostatics::solve(exp, state);
    mark(3);
    breakdown::evaluate(exp, state);
    mark(4);
    discharge::step(exp, state, exp.schedule.time(state.step + 1));
    mark(5);
    state.step += 1;
    state.time = exp.schedule.time(state.step);
    Ok(())
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
    /// Largest |E_z| seen at any step (V m-1), its height (m) and time (s).
    pub peak_field: (f64, f64, f64),
    /// Largest ratio (or e-folding count) of each criterion over the run,
    /// in `Criterion::ALL` order.
    pub peak_ratio: [f64; 7],
    /// Flash counts by kind, in `FlashKind::ALL` order.
    pub flash_counts: [u64; 3],
    /// Time of the first flash (s).
    pub first_flash: Option<f64>,
    /// Charge lowered to ground (C m-2), signed.
    pub ground_charge: f64,
    /// Steps that ended with the trigger still met after the per-step flash
    /// bound, and the first such time (s).
    pub flash_bound_hits: (u64, Option<f64>),
    /// Surface precipitation accumulated (kg m-2).
    pub precipitation: f64,
    /// Steps in which transport sub-stepped, and the most sub-steps used.
    pub substeps: (u64, usize),
    /// Largest mean charge per precipitation particle seen (C, magnitude).
    pub max_particle_charge: f64,
    /// Cell-steps in which a species' mean particle charge exceeded the
    /// Rayleigh limit of its mean radius.
    pub rayleigh_exceeded: u64,
}

impl RunSummary {
    fn watch(&mut self, exp: &Experiment, state: &State) {
        for (k, e) in state.field.iter().enumerate() {
            if e.abs() > self.peak_field.0 {
                self.peak_field = (e.abs(), exp.grid.z_face[k], state.time);
            }
        }
        for (p, c) in self.peak_ratio.iter_mut().zip(&state.criteria) {
            *p = p.max(c.ratio);
        }
        if state
            .charge
            .iter()
            .skip(1)
            .any(|c| c.iter().any(|&x| x != 0.0))
        {
            let f = exp.micro_params();
            for (sp, dist) in [
                (Species::Rain, &f.rain),
                (Species::Snow, &f.snow),
                (Species::Graupel, &f.graupel),
            ] {
                let charge = &state.charge[Carrier::of(sp).index()];
                for (k, &c) in charge.iter().enumerate() {
                    let rho = exp.base.centre.density[k];
                    if let Some((q, r)) =
                        crate::charging::mean_particle_charge(dist, rho, state.q[sp.index()][k], c)
                    {
                        self.max_particle_charge = self.max_particle_charge.max(q.abs());
                        if q.abs() > crate::charging::rayleigh_limit(r) {
                            self.rayleigh_exceeded += 1;
                        }
                    }
                }
            }
        }
    }
}

/// Runs the experiment from its initial state. `on_step` is called after each
/// step with the step count (for a progress bar).
pub fn run(
    exp: &Experiment,
    observers: &mut [&mut dyn Observer],
    on_step: &mut dyn FnMut(u64),
) -> Result<RunSummary, RunError> {
    let mut state = State::initial(exp);
    let mut summary = RunSummary {
        steps: 0,
        records: 0,
        model_time: 0.0,
        peak_field: (0.0, f64::NAN, 0.0),
        peak_ratio: [0.0; 7],
        flash_counts: [0; 3],
        first_flash: None,
        ground_charge: 0.0,
        flash_bound_hits: (0, None),
        precipitation: 0.0,
        substeps: (0, 1),
        max_particle_charge: 0.0,
        rayleigh_exceeded: 0,
    };
    summary.watch(exp, &state);
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
        step(exp, &mut state, dt)?;
        summary.watch(exp, &state);
        if state.step % exp.schedule.output_every == 0 {
            emit(&state, observers)?;
        }
        on_step(state.step);
    }
    summary.steps = state.step;
    summary.records = records;
    summary.model_time = state.time;
    summary.flash_counts = state.ledger.counts;
    summary.first_flash = state.ledger.flashes.first().map(|f| f.time);
    summary.ground_charge = state.ledger.ground_charge;
    summary.flash_bound_hits = (state.ledger.bound_hits, state.ledger.first_bound_hit);
    summary.precipitation = state.water.precipitation;
    summary.substeps = state.substeps;
    for o in observers.iter_mut() {
        o.finish(exp, &state, &summary)?;
    }
    Ok(summary)
}
