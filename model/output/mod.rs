//! Output as observers. The NetCDF writer is one implementation, the in-memory
//! recorder used by tests another. Every output variable (name, CF standard
//! name, units, long name, dimensions, how to fill it) is registered once, in
//! [`VARIABLES`].

pub mod memory;
pub mod netcdf_writer;

use crate::constants::{CP_DRY, P_REF_THETA, R_DRY};
use crate::error::RunError;
use crate::experiment::Experiment;
use crate::state::State;
use crate::timeloop::RunSummary;

/// Receives the state at output times.
pub trait Observer {
    /// Called once before the first record.
    fn begin(&mut self, exp: &Experiment) -> Result<(), RunError>;
    /// Called at t = 0 and every output interval.
    fn record(&mut self, exp: &Experiment, state: &State) -> Result<(), RunError>;
    /// Called once after a successful run.
    fn finish(&mut self, exp: &Experiment, summary: &RunSummary) -> Result<(), RunError>;
}

/// Dimensions of an output variable (besides the unlimited `time`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Placement {
    /// (time, z): cell centres.
    Centre,
    /// (time, z_face): cell faces.
    Face,
}

/// One output variable.
pub struct OutputVar {
    pub name: &'static str,
    /// CF standard name, when the CF table has one.
    pub standard_name: Option<&'static str>,
    pub long_name: &'static str,
    /// UDUNITS units.
    pub units: &'static str,
    pub placement: Placement,
    /// Writes the values into `out` (length n or n + 1 by placement).
    pub fill: fn(&Experiment, &State, &mut [f64]),
}

fn fill_pressure(exp: &Experiment, _s: &State, out: &mut [f64]) {
    out.copy_from_slice(&exp.base.centre.pressure);
}

/// T = theta (p/p_ref)^(R_d/c_p), the inverse of Poisson's equation.
fn fill_temperature(exp: &Experiment, s: &State, out: &mut [f64]) {
    for (k, o) in out.iter_mut().enumerate() {
        *o = s.potential_temperature[k]
            * (exp.base.centre.pressure[k] / P_REF_THETA).powf(R_DRY / CP_DRY);
    }
}

fn fill_density(exp: &Experiment, _s: &State, out: &mut [f64]) {
    out.copy_from_slice(&exp.base.centre.density);
}

fn fill_vapour(_exp: &Experiment, s: &State, out: &mut [f64]) {
    out.copy_from_slice(&s.vapour);
}

fn fill_theta(_exp: &Experiment, s: &State, out: &mut [f64]) {
    out.copy_from_slice(&s.potential_temperature);
}

/// Every output variable, in file order.
pub const VARIABLES: &[OutputVar] = &[
    OutputVar {
        name: "air_pressure",
        standard_name: Some("air_pressure"),
        long_name: "air pressure (hydrostatic base state)",
        units: "Pa",
        placement: Placement::Centre,
        fill: fill_pressure,
    },
    OutputVar {
        name: "air_temperature",
        standard_name: Some("air_temperature"),
        long_name: "air temperature",
        units: "K",
        placement: Placement::Centre,
        fill: fill_temperature,
    },
    OutputVar {
        name: "air_density",
        standard_name: Some("air_density"),
        long_name: "moist air density (base state)",
        units: "kg m-3",
        placement: Placement::Centre,
        fill: fill_density,
    },
    OutputVar {
        name: "humidity_mixing_ratio",
        standard_name: Some("humidity_mixing_ratio"),
        long_name: "water vapour mixing ratio",
        units: "kg kg-1",
        placement: Placement::Centre,
        fill: fill_vapour,
    },
    OutputVar {
        name: "air_potential_temperature",
        standard_name: Some("air_potential_temperature"),
        long_name: "dry potential temperature referred to 1000 hPa",
        units: "K",
        placement: Placement::Centre,
        fill: fill_theta,
    },
];

/// Number of values a variable holds per record.
pub fn record_len(exp: &Experiment, var: &OutputVar) -> usize {
    match var.placement {
        Placement::Centre => exp.grid.len(),
        Placement::Face => exp.grid.len() + 1,
    }
}
