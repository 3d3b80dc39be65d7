//! The largest charged particles of the precipitating species, cell by
//! cell: their surface field against corona onset (for the
//! hydrometeor_corona criterion) and the corona and Rayleigh limits on
//! their charge (cores in [`crate::physics::initiation::hydrometeor`]).
//! Charge above a limit leaves the species: corona emits it as small ions
//! of the particles' sign, disrupting drops shed it on fine droplets (the
//! cloud carrier). Every move takes from one carrier what it gives another.

use crate::column::state::State;
use crate::physics::carriers::Carrier;
use crate::physics::charging::{rayleigh_limit, SharedCharge};
use crate::physics::constants::T_MELT;
use crate::physics::initiation::hydrometeor::{
    corona_limited_charge, surface_field, tail_diameter,
};
use crate::physics::microphysics::species::Species;
use crate::setup::experiment::Experiment;

/// The largest particle of one species in one cell.
struct Tail {
    species: Species,
    /// Radius (m) and charge (C) of the particle.
    radius: f64,
    charge: f64,
    /// Ambient onset field (V m-1) for its kind (drop or ice).
    onset: f64,
}

/// Precipitating species whose largest particles are examined.
const LARGE: [Species; 3] = [Species::Rain, Species::Snow, Species::Graupel];

/// The largest particle of `sp` in cell `k`, when it has at least one per m3.
fn tail(exp: &Experiment, state: &State, sp: Species, k: usize) -> Option<Tail> {
    let q = state.q[sp.index()][k];
    let rho = exp.base.centre.density[k];
    let f = exp.micro_params();
    let dist = f.exponential(sp)?;
    let shared = SharedCharge::of(dist, rho, q, state.charge[Carrier::of(sp).index()][k])?;
    let d = tail_diameter(shared.n0, shared.lambda)?;
    let c = &exp.criteria_thresholds;
    let p = exp.base.centre.pressure[k];
    let onset = if sp == Species::Rain {
        c.onset.drop(p)
    } else {
        c.onset.ice(p, state.temperature(exp, k) - T_MELT)
    };
    Some(Tail {
        species: sp,
        radius: 0.5 * d,
        charge: shared.at_diameter(d),
        onset,
    })
}

/// Largest ambient field (V m-1) on the faces of cell `k`.
fn ambient(state: &State, k: usize) -> f64 {
    state.field[k].abs().max(state.field[k + 1].abs())
}

/// Per cell, the largest surface field of the species' largest particles
/// over their corona-onset surface field, into `out` (1; 0 without particles).
pub fn corona_ratios(exp: &Experiment, state: &State, out: &mut [f64]) {
    let f = exp.criteria_thresholds.enhancement;
    for (k, r) in out.iter_mut().enumerate() {
        *r = 0.0;
        let e = ambient(state, k);
        for sp in LARGE {
            if let Some(t) = tail(exp, state, sp, k) {
                let ratio = surface_field(e, t.charge, t.radius, f) / (f * t.onset);
                *r = r.max(ratio);
            }
        }
    }
}

/// Applies the corona and Rayleigh limits to every cell; returns the charge
/// moved off the particles (C m-2) by corona and by drop disruption.
pub fn limit(exp: &Experiment, state: &mut State) -> (f64, f64) {
    let f = exp.criteria_thresholds.enhancement;
    let dz = exp.grid.dz;
    let (mut corona, mut disrupted) = (0.0, 0.0);
    for k in 0..exp.grid.len() {
        let e = ambient(state, k);
        for sp in LARGE {
            let Some(t) = tail(exp, state, sp, k) else {
                continue;
            };
            let q = t.charge.abs();
            if q == 0.0 {
                continue;
            }
            let corona_max = corona_limited_charge(e, t.radius, f, t.onset);
            let rayleigh_max = if t.species == Species::Rain {
                rayleigh_limit(t.radius)
            } else {
                f64::INFINITY
            };
            let allowed = corona_max.min(rayleigh_max);
            if q <= allowed {
                continue;
            }
            // Every particle's charge scales with the tail's (sharing by
            // surface area), so the species' density scales by allowed/q.
            let from = Carrier::of(t.species).index();
            let removed = state.charge[from][k] * (1.0 - allowed / q);
            let to = if corona_max <= rayleigh_max {
                corona += removed.abs() * dz;
                Carrier::Ions
            } else {
                disrupted += removed.abs() * dz;
                Carrier::Cloud
            };
            state.charge[from][k] -= removed;
            state.charge[to.index()][k] += removed;
        }
    }
    (corona, disrupted)
}
