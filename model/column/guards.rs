//! Guards that stop a run whose state has left the numbers or the physics,
//! so that no broken run ends with a file marked complete. After every
//! process of a step the fields that process wrote are checked:
//!
//! - every value finite (potential temperature, mixing ratios, crystal
//!   number, charge of every carrier, potential, field, field energy);
//! - every hydrometeor mixing ratio at most [`MAX_MIXING_RATIO`];
//! - at the end of a step (after the flashes), |E_z| at most the
//!   conventional breakdown field of the air at that height: air cannot hold
//!   a larger field, it breaks down within microseconds (AMS Glossary,
//!   "electrical breakdown"), much faster than any step of this model.
//!
//! The error names the quantity, the height, the time and the process that
//! produced the value. Checks are a scan of each array (`all(is_finite)`);
//! the search for the first bad cell runs only when one fails.

use crate::column::state::State;
use crate::error::RunError;
use crate::physics::breakdown::Criterion;
use crate::physics::carriers::Carrier;
use crate::physics::microphysics::species::Species;
use crate::setup::experiment::Experiment;

/// Largest mixing ratio of any hydrometeor (kg kg-1): twice what the largest
/// condensed water content measured in storms (about 20 g m-3, Science 180,
/// 1274, 1973; docs/references.md) amounts to at the lowest tropospheric air
/// density of about 0.4 kg m-3 (50 g kg-1).
pub const MAX_MIXING_RATIO: f64 = 0.1;

/// The processes of a step, as named in a guard's message.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Process {
    Transport,
    Microphysics,
    Charging,
    FieldSolve,
    /// The end of the step; `flashed` says whether any flash changed the
    /// charges and re-solved the field since the field-solve check.
    Discharge {
        flashed: bool,
    },
}

impl Process {
    fn name(self) -> &'static str {
        match self {
            Process::Transport => "transport",
            Process::Microphysics => "microphysics",
            Process::Charging => "charging",
            Process::FieldSolve => "the field solve",
            Process::Discharge { .. } => "the end of the step (after any flashes)",
        }
    }
}

fn stop(state: &State, process: Process, message: String) -> RunError {
    RunError::Stopped {
        time: state.time,
        process: process.name(),
        message,
    }
}

/// Whether every value is finite. A value is not finite exactly when all
/// its exponent bits are set (IEEE 754-2008 binary64); an OR of that
/// test over the slice has no early exit, so the compiler vectorises it,
/// which the short-circuiting `all(is_finite)` prevents. The guards scan
/// every array after every process, so this is a measurable share of a
/// step.
fn all_finite(values: &[f64]) -> bool {
    const EXPONENT: u64 = 0x7ff0_0000_0000_0000;
    !values
        .iter()
        .fold(false, |bad, x| bad | (x.to_bits() & EXPONENT == EXPONENT))
}

/// Whether any value exceeds `ceiling` (no early exit, as [`all_finite`]).
fn any_above(values: &[f64], ceiling: f64) -> bool {
    values.iter().fold(false, |above, &x| above | (x > ceiling))
}

/// The first non-finite value of `values` (at heights `z`), as an error.
fn finite(
    values: &[f64],
    z: &[f64],
    what: &dyn Fn() -> String,
    state: &State,
    process: Process,
) -> Result<(), RunError> {
    if all_finite(values) {
        return Ok(());
    }
    let what = what();
    let k = values.iter().position(|x| !x.is_finite()).unwrap_or(0);
    Err(stop(
        state,
        process,
        format!(
            "{what} = {} at z = {:.0} m is not a finite number",
            values[k],
            z.get(k).copied().unwrap_or(f64::NAN)
        ),
    ))
}

fn water(exp: &Experiment, state: &State, process: Process) -> Result<(), RunError> {
    let z = &exp.grid.z;
    finite(
        &state.potential_temperature,
        z,
        &|| "potential temperature".into(),
        state,
        process,
    )?;
    for sp in Species::ALL {
        let q = &state.q[sp.index()];
        finite(q, z, &|| format!("q_{}", sp.name()), state, process)?;
        if sp != Species::Vapour && any_above(q, MAX_MIXING_RATIO) {
            if let Some(k) = q.iter().position(|&x| x > MAX_MIXING_RATIO) {
                return Err(stop(
                    state,
                    process,
                    format!(
                        "q_{} = {:.3} g/kg at z = {:.0} m exceeds the physical ceiling of {} g/kg",
                        sp.name(),
                        q[k] * 1e3,
                        z[k],
                        MAX_MIXING_RATIO * 1e3
                    ),
                ));
            }
        }
    }
    finite(
        &state.n_ice,
        z,
        &|| "cloud-ice number".into(),
        state,
        process,
    )
}

fn charges(exp: &Experiment, state: &State, process: Process) -> Result<(), RunError> {
    for c in Carrier::ALL {
        finite(
            &state.charge[c.index()],
            &exp.grid.z,
            &|| format!("charge density of {}", c.name()),
            state,
            process,
        )?;
    }
    Ok(())
}

fn field(exp: &Experiment, state: &State, process: Process) -> Result<(), RunError> {
    finite(
        &state.potential,
        &exp.grid.z,
        &|| "potential".into(),
        state,
        process,
    )?;
    finite(
        &state.field,
        &exp.grid.z_face,
        &|| "field E_z".into(),
        state,
        process,
    )?;
    finite(
        std::slice::from_ref(&state.field_energy),
        &[f64::NAN],
        &|| "field energy".into(),
        state,
        process,
    )
}

/// Checks what `process` wrote.
pub fn check(exp: &Experiment, state: &State, process: Process) -> Result<(), RunError> {
    match process {
        Process::Transport | Process::Microphysics => {
            water(exp, state, process)?;
            charges(exp, state, process)
        }
        Process::Charging => charges(exp, state, process),
        Process::FieldSolve => field(exp, state, process),
        Process::Discharge { flashed } => {
            // Without a flash the charges and field are those the charging
            // and field-solve checks already passed.
            if flashed {
                charges(exp, state, process)?;
                field(exp, state, process)?;
            }
            let c = Criterion::ConventionalBreakdown;
            let status = state.criteria_status[c.index()];
            if status.ratio > 1.0 {
                let k = status.face;
                let threshold = exp.criteria_thresholds.thresholds[c.index()][k];
                let flashes = if exp.discharge_params.enabled {
                    "flashes did not bring it down"
                } else {
                    "discharges are disabled (discharge.enabled = false)"
                };
                return Err(stop(
                    state,
                    process,
                    format!(
                        "|E_z| = {:.4e} V/m at z = {:.0} m exceeds the conventional breakdown field of the air there ({:.4e} V/m), which air cannot hold; {flashes}",
                        state.field[k].abs(),
                        exp.grid.z_face[k],
                        threshold
                    ),
                ));
            }
            Ok(())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finiteness_follows_ieee_754() {
        // IEEE 754-2008: infinities and NaNs are the values with every
        // exponent bit set; the largest finite value and subnormals are finite.
        for x in [0.0, -0.0, f64::MAX, f64::MIN, f64::MIN_POSITIVE, 5e-324] {
            assert!(all_finite(&[1.0, x, 2.0]), "{x:e}");
        }
        for x in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, -f64::NAN] {
            assert!(!all_finite(&[1.0, 2.0, x, 3.0]), "{x:e}");
        }
        assert!(all_finite(&[]));
        assert!(any_above(&[0.0, 0.2, 0.0], 0.1));
        assert!(!any_above(&[0.0, 0.1, f64::NAN], 0.1));
    }
}
