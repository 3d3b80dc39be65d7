//! The largest charged particles of the precipitating species, cell by
//! cell: their surface field against corona onset (for the
//! hydrometeor_corona criterion) and the corona and Rayleigh limits on
//! their charge (cores in [`crate::physics::initiation::hydrometeor`]).
//! Charge above a limit leaves the species: corona emits it as small ions
//! of the particles' sign, disrupting drops shed it on fine droplets (the
//! cloud carrier). Every move takes from one carrier what it gives another.

use crate::column::state::State;
use crate::physics::carriers::Carrier;
use crate::physics::charging::{
    charge_at_diameter_of, rayleigh_limit, surface_density_of, SHARED_MIN,
};
use crate::physics::constants::T_MELT;
use crate::physics::initiation::hydrometeor::{
    corona_limited_density, holds_a_particle_of, surface_field_of_density, tail_diameter_of,
};
use crate::physics::lanes::{with_avx2, Cells, CellsMask, Lane, Mask, WIDTH};
use crate::physics::microphysics::species::Species;
use crate::setup::experiment::Experiment;

/// The charged particles of one species in a group of [`WIDTH`] cells
/// ([`crate::physics::lanes`]). With the charge shared by surface area
/// ([`crate::physics::charging::SharedCharge`]) every particle of a species has the same surface
/// charge density, so the corona test of the largest particle needs no
/// diameter; only the Rayleigh limit does.
struct Tails {
    /// Lanes where the species has at least one particle per m3 (so that
    /// its largest particle exists; q above `SHARED_MIN`).
    present: CellsMask,
    /// Surface charge density (C m-2), [`crate::physics::charging::SharedCharge::surface_density`].
    sigma: Cells,
    /// Ambient onset field (V m-1) for its kind (drop or ice).
    onset: Cells,
    /// For rain, the Rayleigh share: the largest drop's Rayleigh limit over
    /// its charge (1; infinite for the ice species).
    rayleigh_share: Cells,
}

/// Precipitating species whose largest particles are examined.
const LARGE: [Species; 3] = [Species::Rain, Species::Snow, Species::Graupel];

/// The particles of `sp` in the cells `cell(0..WIDTH)`: the formulas of
/// [`crate::physics::charging::SharedCharge`] and of the hydrometeor criteria lane by lane.
#[inline(always)]
fn tails(exp: &Experiment, state: &State, sp: Species, cell: impl Fn(usize) -> usize) -> Tails {
    let f = exp.micro_params();
    let dist = f.exponential(sp).expect("LARGE holds exponential species");
    let each = |x: &[f64]| Cells::from_lanes(|i| x[cell(i)]);
    let q = each(&state.q[sp.index()]);
    let zero = Cells::splat(0.0);
    let inf = Cells::splat(f64::INFINITY);
    let massive = q.gt(Cells::splat(SHARED_MIN));
    if !massive.any() {
        return Tails {
            present: massive,
            sigma: zero,
            onset: inf,
            rayleigh_share: inf,
        };
    }
    let rho = each(&exp.base.centre.density);
    let density = each(&state.charge[Carrier::of(sp).index()]);
    let lambda = dist.slope_of(rho, Cells::select(massive, q, Cells::splat(1.0)));
    let n0 = dist.n0;
    let present = massive & holds_a_particle_of(n0, lambda);
    let sigma = surface_density_of(density, lambda, n0);
    let c = &exp.criteria_thresholds;
    let (onset, rayleigh_share) = if sp == Species::Rain {
        let d = tail_diameter_of(n0, lambda);
        let charge = charge_at_diameter_of(density, lambda, n0, d).abs();
        let onset = Cells::from_lanes(|i| c.onset.drop(exp.base.centre.pressure[cell(i)]));
        (onset, rayleigh_limit(d * 0.5) / charge)
    } else {
        let onset = Cells::from_lanes(|i| {
            let k = cell(i);
            let t = state.temperature(exp, k) - T_MELT;
            c.onset.ice(exp.base.centre.pressure[k], t)
        });
        (onset, inf)
    };
    Tails {
        present,
        sigma,
        onset,
        rayleigh_share,
    }
}

/// Largest ambient field (V m-1) on the faces of cell `k`.
fn ambient(state: &State, k: usize) -> f64 {
    state.field[k].abs().max(state.field[k + 1].abs())
}

with_avx2! {
    /// Per cell, the largest surface field of the species' largest particles
    /// over their corona-onset surface field, into `out` (1; 0 without
    /// particles), a group of cells side by side (an AVX2 build is chosen at run
    /// time).
    pub fn corona_ratios(exp: &Experiment, state: &State, out: &mut [f64]) {
        let f = exp.criteria_thresholds.enhancement;
        let n = out.len();
        for first in (0..n).step_by(WIDTH) {
            // A short last group repeats its last cell; those lanes are dropped.
            let cell = |i: usize| (first + i).min(n - 1);
            let e = Cells::from_lanes(|i| ambient(state, cell(i)));
            let mut r = Cells::splat(0.0);
            for sp in LARGE {
                let t = tails(exp, state, sp, cell);
                if t.present.any() {
                    let ratio = surface_field_of_density(e, t.sigma, f) / (t.onset * f);
                    r = Cells::select(t.present, r.max(ratio), r);
                }
            }
            for (i, o) in out[first..(first + WIDTH).min(n)].iter_mut().enumerate() {
                *o = r.lane(i);
            }
        }
    }
}

with_avx2! {
    /// Applies the corona and Rayleigh limits to every cell; returns the charge
    /// moved off the particles (C m-2) by corona and by drop disruption. The
    /// shares are found a group of cells side by side; charge moves cell by
    /// cell.
    pub fn limit(exp: &Experiment, state: &mut State) -> (f64, f64) {
        let f = exp.criteria_thresholds.enhancement;
        let dz = exp.grid.dz;
        let n = exp.grid.len();
        let (mut corona, mut disrupted) = (0.0, 0.0);
        for first in (0..n).step_by(WIDTH) {
            let cell = |i: usize| (first + i).min(n - 1);
            let e = Cells::from_lanes(|i| ambient(state, cell(i)));
            for sp in LARGE {
                // Each species moves only its own carrier's charge (to the ions
                // or the cloud), so its shares do not depend on the others'.
                let t = tails(exp, state, sp, cell);
                let sigma = t.sigma.abs();
                let acting = t.present & sigma.ne(Cells::splat(0.0));
                if !acting.any() {
                    continue;
                }
                // The share of its charge the largest particle may keep under
                // each limit; every particle's charge scales with the tail's
                // (sharing by surface area), so the species' density scales by
                // the smaller share. Corona limits the surface charge density,
                // the same for every size (corona_limited_density); the
                // Rayleigh limit (drops only) needs the largest drop's radius.
                let corona_share = corona_limited_density(e, f, t.onset) / sigma;
                let share = corona_share.min(t.rayleigh_share);
                let cut = acting & share.lt(Cells::splat(1.0));
                if !cut.any() {
                    continue;
                }
                for i in 0..WIDTH.min(n - first) {
                    if !cut.get(i) {
                        continue;
                    }
                    let k = first + i;
                    let from = Carrier::of(sp).index();
                    let removed = state.charge[from][k] * (1.0 - share.lane(i));
                    let to = if corona_share.lane(i) <= t.rayleigh_share.lane(i) {
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
        }
        (corona, disrupted)
    }
}
