//! Bulk mixed-phase microphysics: conversions between vapour, cloud water,
//! rain, ice, snow and graupel, with charge moved in proportion to mass.
//! Arrives with the kinematic-column issue.
//!
//! STUB: not implemented yet. This step leaves the state unchanged; the issue
//! named above replaces it with the real process, and no later issue may
//! leave it empty.

use crate::experiment::Experiment;
use crate::state::State;

/// Microphysical source terms over one step of \`_dt\` s (stub).
pub fn step(_exp: &Experiment, _state: &mut State, _dt: f64) {}
