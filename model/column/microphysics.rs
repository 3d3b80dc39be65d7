//! Microphysics over the column: the bulk cell step
//! ([`crate::physics::microphysics::step_cell`]) in every cell, with the
//! charge that follows the mass, or the imposed profiles of the prescribed
//! mode.

use crate::column::state::State;
use crate::error::RunError;
use crate::physics::charging::follow_mass;
use crate::physics::microphysics::rates::CellState;
use crate::physics::microphysics::species::Species;
use crate::physics::microphysics::{step_cell, CellReport, Mode};
use crate::setup::experiment::Experiment;

/// Imposes the prescribed hydrometeor layers at time `t` (s).
pub fn impose(exp: &Experiment, state: &mut State, t: f64) {
    exp.prescribed_hydrometeors
        .impose(&exp.grid.z, &mut state.q, &mut state.n_ice, t);
}

/// Microphysics over one step of `dt` s.
pub fn step(exp: &Experiment, state: &mut State, dt: f64) -> Result<(), RunError> {
    match exp.microphysics {
        Mode::Off => Ok(()),
        Mode::Prescribed => {
            impose(exp, state, state.time + dt);
            Ok(())
        }
        Mode::Bulk => {
            let params = exp.micro_params();
            let mut report = CellReport::default();
            for (k, &env) in exp.cell_env.iter().enumerate() {
                let pi = env.exner;
                let mut cell = CellState {
                    q: Species::ALL.map(|sp| state.q[sp.index()][k]),
                    n_ice: state.n_ice[k],
                    t: state.potential_temperature[k] * pi,
                };
                step_cell(&mut cell, env, params, dt, &mut report).map_err(|message| {
                    RunError::Numerics {
                        time: state.time,
                        message: format!("{message} (cell {k}, z = {} m)", exp.grid.z[k]),
                    }
                })?;
                state.water.clip_created += report.created * env.rho * exp.grid.dz;
                follow_mass::apply(&report, &cell.q, &mut state.charge, k);
                for sp in Species::ALL {
                    state.q[sp.index()][k] = cell.q[sp.index()];
                }
                state.n_ice[k] = cell.n_ice;
                state.potential_temperature[k] = cell.t / pi;
            }
            Ok(())
        }
    }
}
