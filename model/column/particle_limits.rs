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
    corona_limited_density, holds_a_particle, surface_field_of_density, tail_diameter,
};
use crate::physics::microphysics::species::Species;
use crate::setup::experiment::Experiment;

/// The charged particles of one species in one cell.
struct Tail {
    species: Species,
    /// The shared charge: density (C m-3), slope and intercept. Its surface
    /// charge density is the same for every particle
    /// ([`SharedCharge::surface_density`]), so the corona test of the
    /// largest particle needs no diameter; only the Rayleigh limit does.
    shared: SharedCharge,
    /// Ambient onset field (V m-1) for its kind (drop or ice).
    onset: f64,
    /// Diameter (m) of the largest drop (one per m3), for rain only: the
    /// Rayleigh limit needs it, the corona test does not.
    largest_drop: Option<f64>,
}

/// Precipitating species whose largest particles are examined.
const LARGE: [Species; 3] = [Species::Rain, Species::Snow, Species::Graupel];

/// The particles of `sp` in cell `k`, when the species has at least one
/// particle per m3 (so that its largest particle exists).
fn tail(exp: &Experiment, state: &State, sp: Species, k: usize) -> Option<Tail> {
    let q = state.q[sp.index()][k];
    let rho = exp.base.centre.density[k];
    let f = exp.micro_params();
    let dist = f.exponential(sp)?;
    let shared = SharedCharge::of(dist, rho, q, state.charge[Carrier::of(sp).index()][k])?;
    // The largest particle must exist; for rain its diameter is found once here.
    let largest_drop = if sp == Species::Rain {
        Some(tail_diameter(shared.n0, shared.lambda)?)
    } else if holds_a_particle(shared.n0, shared.lambda) {
        None
    } else {
        return None;
    };
    let c = &exp.criteria_thresholds;
    let p = exp.base.centre.pressure[k];
    let onset = if sp == Species::Rain {
        c.onset.drop(p)
    } else {
        c.onset.ice(p, state.temperature(exp, k) - T_MELT)
    };
    Some(Tail {
        species: sp,
        shared,
        onset,
        largest_drop,
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
                let ratio =
                    surface_field_of_density(e, t.shared.surface_density(), f) / (f * t.onset);
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
            let sigma = t.shared.surface_density().abs();
            if sigma == 0.0 {
                continue;
            }
            // The share of its charge the largest particle may keep under
            // each limit; every particle's charge scales with the tail's
            // (sharing by surface area), so the species' density scales by
            // the smaller share. Corona limits the surface charge density,
            // the same for every size; the Rayleigh limit (drops only)
            // needs the largest drop's radius.
            let corona_share = corona_limited_density(e, f, t.onset) / sigma;
            let rayleigh_share = match t.largest_drop {
                Some(d) => rayleigh_limit(0.5 * d) / t.shared.at_diameter(d).abs(),
                None => f64::INFINITY,
            };
            let share = corona_share.min(rayleigh_share);
            if share >= 1.0 {
                continue;
            }
            let from = Carrier::of(t.species).index();
            let removed = state.charge[from][k] * (1.0 - share);
            let to = if corona_share <= rayleigh_share {
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
