//! Small ions over the column (the cores are [`crate::physics::ions`]):
//! the ion balance in every cell (production, recombination, attachment to
//! aerosol and to each hydrometeor species, whose charge the attached ions
//! change), then the drift of the ions in the field with point discharge at
//! the ground. Charge carried into the ground, out through the top and in
//! by point discharge is booked in the state's charge ledger.

use crate::column::state::State;
use crate::physics::carriers::Carrier;
use crate::physics::constants::{ELEMENTARY_CHARGE, RHO_WATER};
use crate::physics::ions::attachment::population_rates_of;
use crate::physics::ions::balance_step;
use crate::physics::ions::conduction::{drift, DriftColumn};
use crate::physics::lanes::{with_avx2, Cells, Lane, Mask, WIDTH};
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

with_avx2! {
    /// The attachment rates (s-1) of positive and negative ions to every
    /// hydrometeor population of every cell (`out[k]`, `Species::HYDROMETEORS`
    /// order; zero where a species is absent), a group of cells side by side
    /// ([`crate::physics::lanes`]): each population's number, mean radius and
    /// mean charge, then [`population_rates_of`]. An AVX2 build is chosen at
    /// run time.
    fn attachment_rates(exp: &Experiment, state: &State, out: &mut [[(f64, f64); 5]]) {
        let ions = &exp.ions;
        let f = exp.micro_params();
        let n = out.len();
        let zero = Cells::splat(0.0);
        for first in (0..n).step_by(WIDTH) {
            // A short last group repeats its last cell; those lanes are dropped.
            let cell = |i: usize| (first + i).min(n - 1);
            let each = |x: &[f64]| Cells::from_lanes(|i| x[cell(i)]);
            let t = Cells::from_lanes(|i| state.temperature(exp, cell(i)));
            let rho = each(&exp.base.centre.density);
            let mu = (each(&ions.mu_pos), each(&ions.mu_neg));
            let n_ice = each(&state.n_ice);
            for (s, sp) in Species::HYDROMETEORS.iter().enumerate() {
                let q = each(&state.q[sp.index()]);
                let mut some = q.gt(Cells::splat(PRESENT));
                if *sp == Species::Ice {
                    some = some & n_ice.gt(zero);
                }
                let (pos, neg) = if some.any() {
                    // Lanes without particles take a harmless stand-in
                    // (their rates are dropped below), so that no lane
                    // leaves the range of the vector forms of ln, exp and
                    // the cube root and sends the group to the scalar ones.
                    let one = Cells::splat(1.0);
                    let q = Cells::select(some, q, one);
                    let (number, radius) = match sp {
                        Species::Cloud => {
                            let nc = ions.cloud_droplet_number;
                            let volume = rho * 3.0 * q / (4.0 * PI * RHO_WATER * nc);
                            (Cells::splat(nc), volume.cbrt())
                        }
                        Species::Ice => {
                            let n_ice = Cells::select(some, n_ice, one);
                            (rho * n_ice, dsd::ice::diameter_of(q, n_ice) * 0.5)
                        }
                        Species::Rain | Species::Snow | Species::Graupel => {
                            let dist = match sp {
                                Species::Rain => &f.rain,
                                Species::Snow => &f.snow,
                                _ => &f.graupel,
                            };
                            // Exponential N0 e^(-lambda D): N = N0/lambda, mean
                            // radius 1/(2 lambda), so N <r> is the exact first
                            // moment the diffusion rate integrates.
                            let lambda = dist.slope_of(rho, q);
                            (Cells::splat(dist.n0) / lambda, Cells::splat(0.5) / lambda)
                        }
                        Species::Vapour => unreachable!("the hydrometeors hold no vapour"),
                    };
                    let charge = Cells::select(
                        some,
                        each(&state.charge[Carrier::of(*sp).index()]),
                        zero,
                    ) / number;
                    let (pos, neg) = population_rates_of(mu, t, number, radius, charge);
                    (
                        Cells::select(some, pos, zero),
                        Cells::select(some, neg, zero),
                    )
                } else {
                    (zero, zero)
                };
                for (i, o) in out[first..(first + WIDTH).min(n)].iter_mut().enumerate() {
                    o[s] = (pos.0[i], neg.0[i]);
                }
            }
        }
    }
}

/// The ion balance and the drift over one step of `dt` s.
pub fn step(exp: &Experiment, state: &mut State, dt: f64) {
    let ions = &exp.ions;
    if !ions.enabled {
        return;
    }
    // The step moves the ions as numbers and sets the carrier from them at
    // its end, so the charge other processes handed the carrier (released
    // by evaporation, corona of particles) is folded into the numbers
    // first, as transport does (DEVELOPERS.md, "The step").
    reconcile(exp, state);
    let e = ELEMENTARY_CHARGE;
    let mut attachment = std::mem::take(&mut state.ion_scratch.attachment);
    attachment_rates(exp, state, &mut attachment);
    for (k, rates) in attachment.iter().enumerate() {
        let (mut loss_pos, mut loss_neg) = (ions.aerosol_sink[k], ions.aerosol_sink[k]);
        for r in rates {
            loss_pos += r.0;
            loss_neg += r.1;
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
    state.ion_scratch.attachment = attachment;
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
