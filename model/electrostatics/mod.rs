//! Poisson solve for potential and vertical field (planar layers or a
//! finite-radius column over conducting ground). Arrives with the
//! electrostatics issue.
//!
//! STUB: not implemented yet. This step leaves the state unchanged; the issue
//! named above replaces it with the real process, and no later issue may
//! leave it empty.

use crate::experiment::Experiment;
use crate::state::State;

/// Solves for potential and field from the current charge (stub).
pub fn solve(_exp: &Experiment, _state: &mut State) {}
