//! Parameterised discharges: trigger, bidirectional channel, charge
//! neutralisation, intracloud and ground flashes, flash records.
//!
//! After each Poisson solve, while the trigger criterion holds (and the
//! optional gates allow), a flash starts at the face where the trigger ratio
//! is largest ([`crate::breakdown::CriterionStatus::face`]). Its channel grows
//! both ways ([`channel`]), charge in the channel is reduced
//! ([`neutralization`]), each carrier losing in proportion to its share of the
//! cell's charge of that sign (common practice), the field is solved again
//! and the flash is recorded ([`record`]). A channel whose lower end reaches
//! `ground_connection_height` becomes a ground flash; the net charge it
//! removes is booked as charge lowered to ground. Threshold-triggered,
//! bidirectional, charge-neutralising parameterisations of this family go
//! back to Rawlins (1982), Helsdon, Wu & Farley (1992), Ziegler & MacGorman
//! (1994), Solomon & Baker (1994, one-dimensional) and Mansell et al. (2002);
//! the rule here is our own combination, described in docs/discharge.md.

pub mod channel;
pub mod neutralization;
pub mod record;

use crate::breakdown::{Criteria, Criterion};
use crate::config::{DischargeConfig, NeutralizationMode, PropagationMode};
use crate::experiment::Experiment;
use crate::state::State;
use channel::{Channel, ChannelInputs};
use record::{FlashKind, FlashRecord};

const NANO: f64 = 1e-9;

/// How the channel charge is reduced.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Neutralization {
    /// Remove this fraction of the excess.
    Fraction(f64),
    /// Bring the largest |E|/threshold in the channel to this fraction.
    TargetField(f64),
}

/// Discharge parameters resolved on the grid (SI).
#[derive(Debug, Clone, PartialEq)]
pub struct DischargeParams {
    pub enabled: bool,
    pub max_per_step: u32,
    /// Minimum time between flashes (s).
    pub min_interval: f64,
    pub require_hydrometeor_breakdown: bool,
    /// Propagation field on faces (V m-1).
    pub propagation: Vec<f64>,
    /// Minimum charge density (C m-3) followed by channels and left in place.
    pub min_charge_density: f64,
    pub follow_charge: bool,
    pub neutralization: Neutralization,
    /// Ground connection height (m).
    pub ground_height: f64,
}

/// Index of the threshold profile a trigger is measured against (the
/// avalanche-count trigger uses the runaway threshold that bounds its stretches).
pub fn trigger_threshold(trigger: Criterion) -> usize {
    match trigger {
        Criterion::AvalancheMultiplication => Criterion::RunawayAvalanche as usize,
        c => c as usize,
    }
}

impl DischargeParams {
    pub fn new(cfg: &DischargeConfig, criteria: &Criteria, face_density: &[f64]) -> Self {
        let thr = &criteria.thresholds[trigger_threshold(criteria.trigger)];
        let propagation = match cfg.propagation {
            PropagationMode::FractionOfTrigger => {
                thr.iter().map(|t| cfg.propagation_fraction * t).collect()
            }
            PropagationMode::Absolute => face_density
                .iter()
                .map(|&rho| {
                    let delta = if cfg.propagation_density_scaled {
                        crate::breakdown::thresholds::relative_density(rho)
                    } else {
                        1.0
                    };
                    cfg.propagation_field * delta
                })
                .collect(),
        };
        DischargeParams {
            enabled: cfg.enabled,
            max_per_step: cfg.max_flashes_per_step,
            min_interval: cfg.min_interval,
            require_hydrometeor_breakdown: cfg.require_hydrometeor_breakdown,
            propagation,
            min_charge_density: cfg.min_charge_density * NANO,
            follow_charge: cfg.follow_charge,
            neutralization: match cfg.neutralization {
                NeutralizationMode::Fraction => {
                    Neutralization::Fraction(cfg.neutralization_fraction)
                }
                NeutralizationMode::TargetField => Neutralization::TargetField(cfg.target_fraction),
            },
            ground_height: cfg.ground_connection_height,
        }
    }
}

/// Work arrays for flashes, allocated once with the state.
#[derive(Debug, Clone, PartialEq)]
pub struct Scratch {
    w: Vec<f64>,
    g_phi: Vec<f64>,
    g_e: Vec<f64>,
    phi_before: Vec<f64>,
    rho_before: Vec<f64>,
}

impl Scratch {
    fn empty() -> Self {
        Scratch {
            w: Vec::new(),
            g_phi: Vec::new(),
            g_e: Vec::new(),
            phi_before: Vec::new(),
            rho_before: Vec::new(),
        }
    }

    pub fn new(n: usize) -> Self {
        Scratch {
            w: vec![0.0; n],
            g_phi: vec![0.0; n],
            g_e: vec![0.0; n + 1],
            phi_before: vec![0.0; n],
            rho_before: vec![0.0; n],
        }
    }
}

/// Flash bookkeeping carried in the state.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct FlashLedger {
    /// Every flash so far, in order.
    pub flashes: Vec<FlashRecord>,
    /// Cumulative charge lowered to ground (C m-2), signed.
    pub ground_charge: f64,
    /// Cumulative flash counts by kind, in `FlashKind::ALL` order.
    pub counts: [u64; 3],
    /// Steps at which the per-step flash bound was reached with the trigger still met.
    pub bound_hits: u64,
    /// Model time of the first such step (s).
    pub first_bound_hit: Option<f64>,
}

/// Runs flashes while the trigger holds, up to the per-step bound. `time` is
/// the model time at the end of the current step (s).
pub fn step(exp: &Experiment, state: &mut State, time: f64) {
    let p = &exp.discharge;
    if !p.enabled {
        return;
    }
    let trigger = exp.criteria.trigger as usize;
    for _ in 0..p.max_per_step {
        let status = state.criteria[trigger];
        if !status.met {
            return;
        }
        if let Some(last) = state.ledger.flashes.last() {
            if time - last.time < p.min_interval {
                return;
            }
        }
        let start = status.face;
        if p.require_hydrometeor_breakdown {
            let thr = &exp.criteria.thresholds[Criterion::HydrometeorBreakdown as usize];
            if state.field[start].abs() < thr[start] {
                return;
            }
        }
        let Some(rec) = flash(exp, state, start, time) else {
            return;
        };
        let ledger = &mut state.ledger;
        ledger.ground_charge += rec.charge_to_ground;
        ledger.counts[rec.kind.index()] += 1;
        ledger.flashes.push(rec);
        crate::breakdown::evaluate(exp, state);
    }
    if state.criteria[trigger].met {
        state.ledger.bound_hits += 1;
        state.ledger.first_bound_hit.get_or_insert(time);
    }
}

fn max_abs(e: &[f64], faces: std::ops::RangeInclusive<usize>) -> f64 {
    faces.map(|k| e[k].abs()).fold(0.0, f64::max)
}

/// One flash from face `start`; the state's field is re-solved. Returns `None`
/// (and changes nothing) when no channel forms or it holds no charge to remove.
pub fn flash(exp: &Experiment, state: &mut State, start: usize, time: f64) -> Option<FlashRecord> {
    // The work arrays leave the state for the duration (moving Vecs does not
    // allocate) so the state can be re-solved while they are in use.
    let mut sc = std::mem::replace(&mut state.scratch, Scratch::empty());
    let rec = flash_with(exp, state, &mut sc, start, time);
    state.scratch = sc;
    rec
}

fn flash_with(
    exp: &Experiment,
    state: &mut State,
    sc: &mut Scratch,
    start: usize,
    time: f64,
) -> Option<FlashRecord> {
    let p = &exp.discharge;
    let grid = &exp.grid;
    let dz = grid.dz;
    let criteria_met = state.criteria.map(|c| c.met);
    let Channel { mut bottom, top } = channel::grow(
        &ChannelInputs {
            field: &state.field,
            propagation: &p.propagation,
            charge: &state.charge_total,
            follow_min: p.follow_charge.then_some(p.min_charge_density),
        },
        start,
    )?;
    let ground = grid.z_face[bottom] <= p.ground_height;
    if ground {
        bottom = 0;
    }
    if top == bottom {
        return None;
    }
    let faces = bottom..=top;
    let (pos, neg) = neutralization::excess_pattern(
        &state.charge_total,
        bottom..top,
        p.min_charge_density,
        !ground,
        dz,
        &mut sc.w,
    );
    if pos + neg == 0.0 {
        return None;
    }
    sc.phi_before.copy_from_slice(&state.potential);
    sc.rho_before.copy_from_slice(&state.charge_total);
    let energy_before = state.field_energy;
    let field_before = max_abs(&state.field, faces.clone());
    let s = match p.neutralization {
        Neutralization::Fraction(f) => f,
        Neutralization::TargetField(target) => {
            exp.field_solver.solve(&sc.w, &mut sc.g_phi, &mut sc.g_e);
            let thr = &exp.criteria.thresholds[trigger_threshold(exp.criteria.trigger)];
            neutralization::target_scale(&state.field, &sc.g_e, thr, faces.clone(), target)
        }
    };

    // Remove s w from each cell, shared among carriers of the cell's sign.
    for k in bottom..top {
        let wk = sc.w[k];
        if wk == 0.0 {
            continue;
        }
        let sign = wk.signum();
        let same: f64 = state.charge.iter().map(|c| (c[k] * sign).max(0.0)).sum();
        for carrier in state.charge.iter_mut() {
            let share = (carrier[k] * sign).max(0.0) / same;
            carrier[k] -= s * wk * share;
        }
    }
    crate::electrostatics::solve(exp, state);

    let mut net_change = 0.0;
    let mut energy_from_charges = 0.0;
    for k in bottom..top {
        let d = state.charge_total[k] - sc.rho_before[k];
        net_change += d * dz;
        let before = exp
            .field_solver
            .pairing_potential(&sc.phi_before, &sc.rho_before, k);
        let after = exp
            .field_solver
            .pairing_potential(&state.potential, &state.charge_total, k);
        energy_from_charges -= 0.5 * d * (before + after) * dz;
    }
    let charge_to_ground = if ground { -net_change } else { 0.0 };
    let kind = match (ground, charge_to_ground < 0.0) {
        (false, _) => FlashKind::Intracloud,
        (true, true) => FlashKind::NegativeGround,
        (true, false) => FlashKind::PositiveGround,
    };
    Some(FlashRecord {
        time,
        kind,
        z_init: grid.z_face[start],
        z_bottom: grid.z_face[bottom],
        z_top: grid.z_face[top],
        charge_neutralized: s * pos.max(neg),
        charge_to_ground,
        energy: energy_before - state.field_energy,
        energy_from_charges,
        field_before,
        field_after: max_abs(&state.field, faces),
        criteria_met,
    })
}
