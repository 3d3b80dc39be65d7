//! Parameterised discharges: trigger, bidirectional channel, charge
//! neutralisation, intracloud and ground flashes. Arrives with the
//! discharge issue.
//!
//! STUB: not implemented yet. This step leaves the state unchanged; the issue
//! named above replaces it with the real process, and no later issue may
//! leave it empty.

use crate::experiment::Experiment;
use crate::state::State;

/// Runs flashes while the trigger criterion holds (stub).
pub fn step(_exp: &Experiment, _state: &mut State) {}
