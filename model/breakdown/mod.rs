//! Breakdown and inception criteria evaluated on the current field.
//! Arrives with the electrostatics issue.
//!
//! STUB: not implemented yet. This step leaves the state unchanged; the issue
//! named above replaces it with the real process, and no later issue may
//! leave it empty.

use crate::experiment::Experiment;
use crate::state::State;

/// Evaluates every criterion on the current field (stub).
pub fn evaluate(_exp: &Experiment, _state: &mut State) {}
