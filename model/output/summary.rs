//! The run summary: peaks, flash counts and budgets a finished run reports.

use crate::column::state::State;
use crate::physics::breakdown::Criterion;
use crate::physics::carriers::Carrier;
use crate::physics::microphysics::species::Species;
use crate::setup::experiment::Experiment;

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
    pub peak_ratio: [f64; Criterion::COUNT],
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
    /// Largest surface precipitation rate of any step (kg m-2 s-1).
    pub peak_precip_rate: f64,
    /// Cell-steps (times collision kinds) in which the charge-per-collision
    /// cap bound.
    pub charging_cap_hits: u64,
    /// Steps in which transport sub-stepped, and the most sub-steps used.
    pub substeps: (u64, usize),
    /// Largest mean charge per precipitation particle seen (C, magnitude).
    pub max_particle_charge: f64,
    /// Cell-steps in which a species' mean particle charge exceeded the
    /// Rayleigh limit of its mean radius.
    pub rayleigh_exceeded: u64,
}

impl RunSummary {
    /// Takes the peaks of one more state into the summary.
    pub fn watch(&mut self, exp: &Experiment, state: &State) {
        self.peak_precip_rate = self.peak_precip_rate.max(state.precip_rate);
        for (k, e) in state.field.iter().enumerate() {
            if e.abs() > self.peak_field.0 {
                self.peak_field = (e.abs(), exp.grid.z_face[k], state.time);
            }
        }
        for (p, c) in self.peak_ratio.iter_mut().zip(&state.criteria_status) {
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
                    if let Some((q, r)) = crate::physics::charging::mean_particle_charge(
                        dist,
                        rho,
                        state.q[sp.index()][k],
                        c,
                    ) {
                        self.max_particle_charge = self.max_particle_charge.max(q.abs());
                        if q.abs() > crate::physics::charging::rayleigh_limit(r) {
                            self.rayleigh_exceeded += 1;
                        }
                    }
                }
            }
        }
    }
}
