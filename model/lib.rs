//! # stormcharge
//!
//! A one-dimensional (vertical column) time-stepping model of thunderstorm
//! electrification for storm modellers, atmospheric-electricity researchers
//! and instructors. It is a research and teaching model, not a
//! lightning-safety or forecasting tool.
//!
//! ## One step, in order (operator splitting; docs/numerics.md)
//! 1. [`column::ions::step`] over half the step: small ions (production,
//!    recombination, attachment, drift), then the particle charge limits;
//! 2. [`column::transport::apply_forcing`]: the prescribed updraft w(z, t);
//! 3. [`column::transport::transport`]: advection by w, then sedimentation (charge rides along);
//! 4. [`column::charging::step`] over half the step: charge separation;
//! 5. [`column::microphysics::step`]: mass conversions, charge moved in proportion to mass;
//! 6. [`column::charging::step`] over the other half;
//! 7. [`column::electrostatics::solve`]: potential and field; then the second
//!    half-step of the ions and the field of the charge they leave;
//! 8. [`column::breakdown::evaluate`]: breakdown and inception criteria;
//! 9. [`column::discharge::step`]: flashes while the trigger holds;
//! 10. output through [`output::Observer`]s at the output interval.
//!
//! See [`column::step::step`], which reads like this list. Each of those is
//! an adapter that applies a pure process core of [`physics`] over the
//! column; [`setup`] turns a configuration file into the
//! [`setup::experiment::Experiment`] that holds the cores' parameters.
//! Around the model: [`timeloop`] (a whole run), [`convergence`] (the
//! same experiment at finer steps and grids), [`analysis`] (charge
//! regions and structure classes), [`sweep`] (parameter sweeps), [`plot`]
//! (pictures), [`mod@bench`] (throughput figures).
//!
//! ## Conventions
//! - SI units everywhere inside; conversion only at input (configuration) and output.
//! - Heights are geometric, in m above ground, positive up; the grid is uniform
//!   ([`grid::Grid`]): scalars at cell centres, fluxes and the vertical field on faces.
//! - The vertical electric field E_z is positive when it points up.
//! - Charge densities in C m-3, per-area charges in C m-2.

// Configuration errors carry key, value, unit, range and line for the user;
// they are built once on a cold path, so their size does not matter.
#![allow(clippy::result_large_err)]

#[macro_use]
mod choice;

pub mod analysis;
pub mod bench;
pub mod cli;
pub mod column;
pub mod convergence;
pub mod error;
pub mod grid;
pub mod output;
pub mod physics;
pub mod plot;
pub mod setup;
pub mod sweep;
pub mod timeloop;
pub mod workers;
