//! Lightning initiation: the physics behind the hypotheses of what starts a
//! flash, as cores the breakdown criteria and the discharge use.
//!
//! - [`hydrometeor`]: the field at the surface of the largest charged,
//!   polarised particles against the corona-onset field of the air; corona
//!   and Rayleigh charge limits.
//! - [`runaway`]: relativistic runaway electron avalanches with their
//!   cosmic-ray seed: the avalanche growth rate inside its validity range,
//!   the multiplication over each stretch above threshold and the runaway
//!   electron flux that leaves it.
//! - [`leader`]: the streamer zone and the charge a leader stem needs.
//!
//! docs/criteria.md explains each hypothesis, its numbers and which parts
//! are modelling choices.

pub mod hydrometeor;
pub mod leader;
pub mod runaway;
