//! Charge sources over the column: prescribed growth, then the charging
//! core ([`crate::physics::charging`]): the non-inductive separation rates
//! a group of cells side by side ([`crate::physics::lanes`]), then each cell's
//! separation and inductive charging on its own.

use crate::column::state::State;
use crate::physics::carriers::Carrier;
use crate::physics::charging::{
    apply_separation, celsius, separation_rates_of, CellInputs, CellRates, Scheme, Separation,
};
use crate::physics::lanes::{with_avx2, Cells, Lane, WIDTH};
use crate::setup::experiment::Experiment;

/// Charge sources over `dt` s (half a step in the symmetric splitting of
/// `column::step`). With `record`, the charging rates and the cells where
/// the cap bound are kept as the step's diagnostics (one record per step:
/// the evaluation after the microphysics).
pub fn step(exp: &Experiment, state: &mut State, dt: f64, record: bool) {
    exp.prescribed
        .grow(&mut state.charge[Carrier::Prescribed.index()], dt);
    state.charge_transport.added += exp.prescribed.column_growth * dt;
    let p = &exp.charging_params;
    if matches!(p.scheme, Scheme::Off) && !p.inductive {
        return;
    }
    separate(exp, state, dt, record)
}

with_avx2! {
    /// [`separate_with`] in the build the processor allows.
    fn separate(exp: &Experiment, state: &mut State, dt: f64, record: bool) => separate_with
}

/// The charging of every cell: the rates of a group of [`WIDTH`] cells
/// evaluated together, then applied cell by cell. A short last group
/// repeats its last cell; those lanes are dropped.
#[inline(always)]
fn separate_with(exp: &Experiment, state: &mut State, dt: f64, record: bool) {
    let p = &exp.charging_params;
    let f = exp.micro_params();
    let n = exp.cell_env.len();
    let inputs = |state: &State, k: usize| {
        let env = &exp.cell_env[k];
        CellInputs {
            rho: exp.base.centre.density[k],
            t: celsius(state.potential_temperature[k], env.exner),
            q: std::array::from_fn(|i| state.q[i][k]),
            n_ice: state.n_ice[k],
            e_z: 0.5 * (state.field[k] + state.field[k + 1]),
            corrections: env.corrections,
        }
    };
    for first in (0..n).step_by(WIDTH) {
        let cell = |i: usize| (first + i).min(n - 1);
        let each = |x: &[f64]| Cells::from_lanes(|i| x[cell(i)]);
        let group = CellInputs::<Cells> {
            rho: each(&exp.base.centre.density),
            t: Cells::from_lanes(|i| {
                celsius(
                    state.potential_temperature[cell(i)],
                    exp.cell_env[cell(i)].exner,
                )
            }),
            q: std::array::from_fn(|s| each(&state.q[s])),
            n_ice: each(&state.n_ice),
            e_z: Cells::from_lanes(|i| 0.5 * (state.field[cell(i)] + state.field[cell(i) + 1])),
            corrections: std::array::from_fn(|s| {
                Cells::from_lanes(|i| exp.cell_env[cell(i)].corrections[s])
            }),
        };
        let separation = separation_rates_of(p, f, &group);
        for i in 0..WIDTH.min(n - first) {
            let k = first + i;
            let s = separation.lane(i);
            let idle = s == Separation::default();
            if idle && !p.inductive {
                // Nothing separates here: the charges stay as they are.
                if record {
                    state.charging_rates.set(k, CellRates::default());
                }
                continue;
            }
            let c = inputs(state, k);
            let mut charge: [f64; Carrier::COUNT] = std::array::from_fn(|j| state.charge[j][k]);
            let rates = apply_separation(p, f, &c, &s, &mut charge, dt);
            for (carrier, q) in state.charge.iter_mut().zip(charge) {
                carrier[k] = q;
            }
            if record {
                state.charging_rates.set(k, rates);
                state.charging_cap_hits += u64::from(rates.capped);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::microphysics::species::{CLOUD, GRAUPEL, ICE, RAIN, SNOW};

    /// The AVX2 build of the grouped charging (chosen at run time) and the
    /// portable build give the same bits: neither uses fused multiply-add,
    /// and IEEE 754 arithmetic is exact per lane whatever the vector width
    /// (common practice). The demo's column with charge carriers of every
    /// mix, inductive charging on.
    #[test]
    fn grouped_charging_gives_the_same_bits_on_every_instruction_set() {
        let exp = Experiment::from_text(
            crate::setup::config::DEMO_TOML,
            "test",
            &["charging.inductive=true".into()],
            std::path::Path::new("."),
        )
        .unwrap();
        let mut state = State::initial(&exp);
        let n = exp.grid.len();
        for k in 0..n {
            let x = k as f64 / n as f64;
            let some = |m: usize, amount: f64| amount * ((k * m) % 4) as f64 / 3.0;
            state.q[CLOUD][k] = some(3, 2e-3);
            state.q[RAIN][k] = some(5, 1e-3);
            state.q[ICE][k] = some(7, 1e-4);
            state.q[SNOW][k] = some(2, 5e-4);
            state.q[GRAUPEL][k] = some(1, 3e-3);
            state.n_ice[k] = 1e5 * ((k % 3) as f64);
            state.field[k] = 5e4 * (x - 0.5);
        }
        let mut portable = state.clone();
        separate_with(&exp, &mut portable, 2.0, true);
        let mut dispatched = state.clone();
        step(&exp, &mut dispatched, 2.0, true);
        assert_eq!(portable.charge, dispatched.charge);
        assert_ne!(portable.charge, state.charge, "the charges must change");
    }
}
