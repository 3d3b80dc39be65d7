//! Non-inductive and inductive charge separation between hydrometeors, one
//! file per published scheme. Arrives with the charging-schemes issue.
//!
//! STUB: not implemented yet. This step leaves the state unchanged; the issue
//! named above replaces it with the real process, and no later issue may
//! leave it empty.

use crate::experiment::Experiment;
use crate::state::State;

/// Charge separation over one step of \`_dt\` s (stub).
pub fn step(_exp: &Experiment, _state: &mut State, _dt: f64) {}
