//! Small ions over the column (the cores are [`crate::physics::ions`]):
//! the ion balance in every cell (production, recombination, attachment to
//! aerosol and to each hydrometeor species, whose charge the attached ions
//! change), then the drift of the ions in the field with point discharge at
//! the ground. Charge carried into the ground, out through the top and in
//! by point discharge is booked in the state's charge ledger.

use crate::column::state::State;
use crate::physics::carriers::Carrier;
use crate::physics::constants::{ELEMENTARY_CHARGE, RHO_WATER};
use crate::physics::ions::attachment::population_rates;
use crate::physics::ions::conduction::{drift, DriftColumn};
use crate::physics::ions::{balance_step, IonColumn};
use crate::physics::microphysics::dsd;
use crate::physics::microphysics::species::Species;
use crate::setup::experiment::Experiment;
use std::f64::consts::PI;

/// Smallest mixing ratio (kg kg-1) of a species that takes up ions.
const PRESENT: f64 = 1e-12;

/// Folds into n+ and n- the changes other processes made to the ion
/// carrier (charge released by evaporation, neutralised by flashes): a gain
/// of charge is new positive ions, a loss new negative ions.
pub fn reconcile(exp: &Experiment, state: &mut State) {
    if !exp.ions.enabled {
        return;
    }
    let c = &mut state.charge[Carrier::Ions.index()];
    let [np, nn] = &mut state.n_ion;
    for k in 0..c.len() {
        let delta = c[k] - ELEMENTARY_CHARGE * (np[k] - nn[k]);
        if delta > 0.0 {
            np[k] += delta / ELEMENTARY_CHARGE;
        } else if delta < 0.0 {
            nn[k] -= delta / ELEMENTARY_CHARGE;
        }
        c[k] = ELEMENTARY_CHARGE * (np[k] - nn[k]);
    }
}

/// Sets the ion carrier's charge density (C m-3) to e (n+ - n-) from the
/// ion numbers (m-3) after they have moved.
pub fn set_carrier(charge: &mut [f64], n_ion: &[Vec<f64>; 2]) {
    let [np, nn] = n_ion;
    for (c, (p, m)) in charge.iter_mut().zip(np.iter().zip(nn)) {
        *c = ELEMENTARY_CHARGE * (p - m);
    }
}

/// Number (m-3), mean radius (m) and mean charge (C) of the particles of
/// `sp` in cell `k`, when the species is present.
fn population(
    exp: &Experiment,
    ions: &IonColumn,
    state: &State,
    sp: Species,
    k: usize,
) -> Option<(f64, f64, f64)> {
    let q = state.q[sp.index()][k];
    if q <= PRESENT {
        return None;
    }
    let rho = exp.base.centre.density[k];
    let f = exp.micro_params();
    let (number, radius) = match sp {
        Species::Cloud => {
            let nc = ions.cloud_droplet_number;
            (nc, (3.0 * rho * q / (4.0 * PI * RHO_WATER * nc)).cbrt())
        }
        Species::Ice => {
            let n = state.n_ice[k];
            if n <= 0.0 {
                return None;
            }
            (rho * n, 0.5 * dsd::ice::diameter(q, n))
        }
        Species::Rain | Species::Snow | Species::Graupel => {
            let dist = f.exponential(sp)?;
            // Exponential N0 e^(-lambda D): N = N0/lambda, mean radius
            // 1/(2 lambda), so N <r> is the exact first moment the
            // diffusion rate integrates.
            let lambda = dist.slope(rho, q);
            (dist.n0 / lambda, 0.5 / lambda)
        }
        Species::Vapour => return None,
    };
    let charge = state.charge[Carrier::of(sp).index()][k] / number;
    Some((number, radius, charge))
}

/// The ion balance and the drift over one step of `dt` s.
pub fn step(exp: &Experiment, state: &mut State, dt: f64) {
    let ions = &exp.ions;
    if !ions.enabled {
        return;
    }
    // The ion carrier equals e (n+ - n-) at every step boundary (the
    // initial state and the reconcile that ends each step), so the step
    // starts from consistent ions.
    let e = ELEMENTARY_CHARGE;
    let n = exp.grid.len();
    for k in 0..n {
        let t = state.temperature(exp, k);
        let mu = (ions.mu_pos[k], ions.mu_neg[k]);
        let mut rates = [(0.0, 0.0); Species::HYDROMETEORS.len()];
        let (mut loss_pos, mut loss_neg) = (ions.aerosol_sink[k], ions.aerosol_sink[k]);
        for (i, sp) in Species::HYDROMETEORS.iter().enumerate() {
            if let Some((number, radius, charge)) = population(exp, ions, state, *sp, k) {
                rates[i] = population_rates(mu, t, number, radius, charge);
                loss_pos += rates[i].0;
                loss_neg += rates[i].1;
            }
        }
        let b = balance_step(
            state.n_ion[0][k],
            state.n_ion[1][k],
            ions.production[k],
            ions.recombination[k],
            loss_pos,
            loss_neg,
            dt,
        );
        // The attached ions, shared among the sinks in proportion to their
        // rates; what each sink gains the ions lose.
        let share = |r: (f64, f64)| {
            let p = if loss_pos > 0.0 {
                b.attached_pos * r.0 / loss_pos
            } else {
                0.0
            };
            let m = if loss_neg > 0.0 {
                b.attached_neg * r.1 / loss_neg
            } else {
                0.0
            };
            e * (p - m)
        };
        let dz = exp.grid.dz;
        let mut take = |c: &mut f64, gain: f64| {
            if gain * *c < 0.0 {
                state.ion_neutralised += gain.abs().min(c.abs()) * dz;
            }
            *c += gain;
        };
        for (i, sp) in Species::HYDROMETEORS.iter().enumerate() {
            if rates[i] != (0.0, 0.0) {
                take(
                    &mut state.charge[Carrier::of(*sp).index()][k],
                    share(rates[i]),
                );
            }
        }
        take(
            &mut state.charge[Carrier::Aerosol.index()][k],
            share((ions.aerosol_sink[k], ions.aerosol_sink[k])),
        );
        state.n_ion[0][k] = b.positive;
        state.n_ion[1][k] = b.negative;
    }
    let [np, nn] = &mut state.n_ion;
    let mut col = DriftColumn {
        n_pos: np,
        n_neg: nn,
        mu_pos: &ions.mu_pos,
        mu_neg: &ions.mu_neg,
        field: &mut state.field,
        flux_pos: &mut state.ion_scratch.flux_pos,
        flux_neg: &mut state.ion_scratch.flux_neg,
        current: &mut state.conduction_current,
    };
    let totals = drift(&mut col, exp.grid.dz, dt, ions.corona);
    let ledger = &mut state.charge_transport;
    ledger.conducted_to_ground += totals.into_ground;
    ledger.conducted_out_top += totals.out_top;
    ledger.corona += totals.corona;
    state.corona_current = totals.corona_current;
    set_carrier(&mut state.charge[Carrier::Ions.index()], &state.n_ion);
}
