//! Microphysics over the column: the bulk cell step
//! ([`crate::physics::microphysics::step_cell`], here in its three parts
//! with the integrations grouped) in every cell, with the
//! charge that follows the mass, or the imposed profiles of the prescribed
//! mode.

use crate::column::state::State;
use crate::error::RunError;
use crate::physics::charging::follow_mass;
use crate::physics::microphysics::rates::CellState;
use crate::physics::microphysics::species::Species;
use crate::physics::microphysics::{
    adjust_cells, check_cell, clip_cell, integrate_cells, prepare_adjusted, Adjustment, CellReport,
    Mode,
};
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
            let time = state.time;
            let fail = |k: usize, message: String| RunError::Numerics {
                time,
                message: format!("{message} (cell {k}, z = {} m)", exp.grid.z[k]),
            };
            // Passes over the column: each cell's state; the first
            // saturation adjustment of all cells, in groups side by side;
            // each cell's preparation; the integration of the cells whose
            // rates act, in groups; each cell's clipping; the last
            // adjustment, in groups; each cell's check; the charge that
            // follows the mass, in groups. The cells are independent, so
            // the result is that of one cell after another.
            let scratch = &mut state.micro_scratch;
            scratch.cells.clear();
            scratch.moving.clear();
            for (k, &env) in exp.cell_env.iter().enumerate() {
                // A plain loop: `array::map` is not always inlined.
                let mut q = [0.0; 6];
                for (v, sp) in q.iter_mut().zip(Species::ALL) {
                    *v = state.q[sp.index()][k];
                }
                let cell = CellState {
                    q,
                    n_ice: state.n_ice[k],
                    t: state.potential_temperature[k] * env.exner,
                };
                scratch.cells.push((cell, env, CellReport::default()));
            }
            adjust_cells(&mut scratch.cells, Adjustment::First);
            for (k, (cell, env, report)) in scratch.cells.iter_mut().enumerate() {
                if prepare_adjusted(cell, *env, params, report) {
                    scratch.moving.push(k);
                }
            }
            integrate_cells(&mut scratch.cells, &scratch.moving, params, dt)
                .map_err(|(k, message)| fail(k, message))?;
            for (cell, _, report) in scratch.cells.iter_mut() {
                clip_cell(cell, report);
            }
            adjust_cells(&mut scratch.cells, Adjustment::Last);
            for (k, (cell, env, report)) in scratch.cells.iter().enumerate() {
                check_cell(cell, *env).map_err(|message| fail(k, message))?;
                state.water.clip_created += report.created * env.rho * exp.grid.dz;
                for sp in Species::ALL {
                    state.q[sp.index()][k] = cell.q[sp.index()];
                }
                state.n_ice[k] = cell.n_ice;
                state.potential_temperature[k] = cell.t / env.exner;
            }
            // The charge that follows the mass, in groups of cells.
            follow_mass::apply_column(&scratch.cells, &mut state.charge);
            Ok(())
        }
    }
}
