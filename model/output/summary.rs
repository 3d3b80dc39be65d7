//! The run summary: peaks, flash counts and budgets a finished run reports.

use crate::column::state::State;
use crate::physics::breakdown::Criterion;
use crate::physics::carriers::Carrier;
use crate::physics::charging::{rayleigh_limit, SharedCharge};
use crate::physics::initiation::hydrometeor::tail_diameter;
use crate::physics::microphysics::species::Species;
use crate::setup::experiment::Experiment;

/// Condensate mixing ratio (kg kg-1) that counts as cloud for the cloud-top
/// height: 0.01 g/kg, a modelling choice of this project (about the
/// smallest ice content aircraft probes report as cloud).
pub const CLOUD_TOP_CONDENSATE: f64 = 1e-5;

/// Diameter (m) of the particle whose charge the summary reports: 2.5 mm,
/// millimetre precipitation like that whose charges Marshall & Winn (1982,
/// J. Geophys. Res.) measured from balloons (docs/references.md).
///
/// The charge is taken only in cells whose largest particle per cubic metre
/// ([`tail_diameter`], the one the corona criteria use) is at least this
/// large, a choice of this project: in thinner populations the
/// exponential's tail holds no particle of that size to carry the charge
/// the sharing gives it, and the maximum came from such cells (the demo's
/// 2.5 mm drops carried 7.2 pC in thin rain at the end of the hour against
/// 1.1 pC where a cubic metre held one; its 2.5 mm graupel 81 pC either
/// way; 2026-12-04, docs/charging.md).
pub const SIZE_DIAGNOSTIC_DIAMETER: f64 = 2.5e-3;

/// The bookkeeping of the flashes-per-window peak.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
struct FlashWindow {
    /// Index of the current 10-minute window (model time / 600 s).
    index: u64,
    /// Flashes counted in it so far.
    count: u64,
    /// Ledger total at the last watched state.
    seen: usize,
}

/// Charge moved by the conducting air over a run (C m-2).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Conduction {
    pub into_ground: f64,
    pub out_top: f64,
    pub corona: f64,
    pub neutralised: f64,
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
    /// at the ends of steps and at every flash's initiation, in
    /// `Criterion::ALL` order.
    pub peak_ratio: [f64; Criterion::COUNT],
    /// Flash counts by kind, in `FlashKind::ALL` order.
    pub flash_counts: [u64; 3],
    /// Time of the first flash (s).
    pub first_flash: Option<f64>,
    /// Charge lowered to ground (C m-2), signed.
    pub ground_charge: f64,
    /// Conduction (C m-2): net charge carried into the ground and out
    /// through the top by drifting ions, charge put into the air by point
    /// discharge, and hydrometeor and aerosol charge neutralised by ion capture.
    pub conduction: Conduction,
    /// Steps that ended with the trigger still met after the per-step flash
    /// bound, and the first such time (s).
    pub flash_bound_hits: (u64, Option<f64>),
    /// Flashes whose channel reached the model top.
    pub channels_at_model_top: u64,
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
    /// Largest charge of a 2.5 mm rain drop and a 2.5 mm graupel particle
    /// (C, magnitude), the charge density shared over the size distribution
    /// by surface area ([`SharedCharge::at_diameter`]).
    pub max_charge_2p5mm: [f64; 2],
    /// Highest cloud top of the run (m): the highest cell holding at least
    /// [`CLOUD_TOP_CONDENSATE`] of condensate.
    pub max_cloud_top: f64,
    /// Most flashes in one 10-minute window of model time (aligned to
    /// multiples of 600 s), and the bookkeeping that finds it.
    pub max_flashes_per_10_min: u64,
    window: FlashWindow,
}

impl Default for RunSummary {
    fn default() -> Self {
        Self::new()
    }
}

impl RunSummary {
    /// A summary before the first step.
    pub fn new() -> Self {
        RunSummary {
            steps: 0,
            records: 0,
            model_time: 0.0,
            peak_field: (0.0, f64::NAN, 0.0),
            peak_ratio: [0.0; Criterion::COUNT],
            flash_counts: [0; 3],
            first_flash: None,
            ground_charge: 0.0,
            conduction: Conduction::default(),
            flash_bound_hits: (0, None),
            channels_at_model_top: 0,
            precipitation: 0.0,
            peak_precip_rate: 0.0,
            charging_cap_hits: 0,
            max_charge_2p5mm: [0.0; 2],
            max_cloud_top: 0.0,
            max_flashes_per_10_min: 0,
            window: FlashWindow::default(),
            substeps: (0, 1),
            max_particle_charge: 0.0,
            rayleigh_exceeded: 0,
        }
    }

    /// The flash rate (per minute) that the continental relation of Price &
    /// Rind (1992, JGR 97, 9919), F = 3.44e-5 H^4.9 with H the cloud-top
    /// height in km (coefficients from memory; the fifth-power dependence
    /// on storm height goes back to Vonnegut 1963 and Williams 1985), gives
    /// for this run's highest cloud top.
    pub fn price_rind_1992_rate(&self) -> f64 {
        3.44e-5 * (self.max_cloud_top / 1e3).powf(4.9)
    }

    /// Takes the peaks of one more state into the summary.
    pub fn watch(&mut self, exp: &Experiment, state: &State) {
        // Flashes per 10-minute window of model time.
        let bin = (state.time / 600.0).floor() as u64;
        let w = &mut self.window;
        if bin != w.index {
            w.index = bin;
            w.count = 0;
        }
        w.count += (state.ledger.total - w.seen) as u64;
        w.seen = state.ledger.total;
        self.max_flashes_per_10_min = self.max_flashes_per_10_min.max(w.count);
        for k in (0..exp.grid.len()).rev() {
            let condensate: f64 = Species::HYDROMETEORS
                .iter()
                .map(|sp| state.q[sp.index()][k])
                .sum();
            if condensate >= CLOUD_TOP_CONDENSATE {
                self.max_cloud_top = self.max_cloud_top.max(exp.grid.z[k]);
                break;
            }
        }
        self.peak_precip_rate = self.peak_precip_rate.max(state.precip_rate);
        for (k, e) in state.field.iter().enumerate() {
            if e.abs() > self.peak_field.0 {
                self.peak_field = (e.abs(), exp.grid.z_face[k], state.time);
            }
        }
        for (p, c) in self.peak_ratio.iter_mut().zip(&state.criteria_status) {
            *p = p.max(c.ratio);
        }
        // The criteria at each flash's initiation: the state holds them as
        // they are after the step's flashes, so a trigger that fired would
        // otherwise never show the value it reached. (The flashes since the
        // last output record are kept; taking their maximum again is
        // harmless.)
        for f in &state.ledger.flashes {
            for (p, r) in self.peak_ratio.iter_mut().zip(&f.criteria_ratio) {
                *p = p.max(*r);
            }
        }
        if state
            .charge
            .iter()
            .skip(1)
            .any(|c| c.iter().any(|&x| x != 0.0))
        {
            let f = exp.micro_params();
            // Slot of the 2.5 mm diagnostic: rain and graupel only.
            for (sp, dist, slot) in [
                (Species::Rain, &f.rain, Some(0)),
                (Species::Snow, &f.snow, None),
                (Species::Graupel, &f.graupel, Some(1)),
            ] {
                let charge = &state.charge[Carrier::of(sp).index()];
                for (k, &c) in charge.iter().enumerate() {
                    let rho = exp.base.centre.density[k];
                    let Some(shared) = SharedCharge::of(dist, rho, state.q[sp.index()][k], c)
                    else {
                        continue;
                    };
                    if let Some(i) = slot {
                        let big = shared.at_diameter(SIZE_DIAGNOSTIC_DIAMETER).abs();
                        // The largest particle (a logarithm) only where the
                        // value would raise the maximum.
                        if big > self.max_charge_2p5mm[i]
                            && tail_diameter(shared.n0, shared.lambda)
                                .is_some_and(|d| d >= SIZE_DIAGNOSTIC_DIAMETER)
                        {
                            self.max_charge_2p5mm[i] = big;
                        }
                    }
                    let q = shared.mean().abs();
                    self.max_particle_charge = self.max_particle_charge.max(q);
                    if q > rayleigh_limit(shared.mean_radius()) {
                        self.rayleigh_exceeded += 1;
                    }
                }
            }
        }
    }
}
