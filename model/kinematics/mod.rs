//! Kinematics: the prescribed updraft w(z, t), advection of every advected
//! field by it, and sedimentation of hydrometeors with their fall speeds.
//! Arrives with the issue "Kinematic column: prescribed updraft, transport
//! and sedimentation, bulk mixed-phase microphysics".
//!
//! STUB: not implemented yet. This step leaves the state unchanged; the issue
//! named above replaces it with the real process, and no later issue may
//! leave it empty.

use crate::experiment::Experiment;
use crate::state::State;

/// Forcing: sets the prescribed updraft for time \`_state.time\` (stub).
pub fn apply_forcing(_exp: &Experiment, _state: &mut State) {}

/// Transport: advection, then sedimentation, over one step of \`_dt\` s (stub).
pub fn transport(_exp: &Experiment, _state: &mut State, _dt: f64) {}
