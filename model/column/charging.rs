//! Charge sources over the column: prescribed growth, then the charging
//! core ([`crate::physics::charging::charge_cell`]) cell by cell.

use crate::column::state::State;
use crate::physics::carriers::Carrier;
use crate::physics::charging::{celsius, charge_cell, CellInputs, Scheme};
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
    let f = exp.micro_params();
    for (k, env) in exp.cell_env.iter().enumerate() {
        let inputs = CellInputs {
            rho: exp.base.centre.density[k],
            t: celsius(state.potential_temperature[k], env.exner),
            q: std::array::from_fn(|i| state.q[i][k]),
            n_ice: state.n_ice[k],
            e_z: 0.5 * (state.field[k] + state.field[k + 1]),
            corrections: env.corrections,
        };
        let mut cell: [f64; Carrier::COUNT] = std::array::from_fn(|i| state.charge[i][k]);
        let rates = charge_cell(p, f, &inputs, &mut cell, dt);
        for (carrier, c) in state.charge.iter_mut().zip(cell) {
            carrier[k] = c;
        }
        if record {
            state.charging_rates.set(k, rates);
            state.charging_cap_hits += u64::from(rates.capped);
        }
    }
}
