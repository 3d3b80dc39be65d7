//! The column: the prognostic [`state::State`], its initial value, and one
//! step of the model ([`step::step`]). Each process has a small adapter here
//! that applies its physics core ([`crate::physics`]) over the grid and books
//! what moved in the state's ledgers.

pub mod breakdown;
pub mod charging;
pub mod discharge;
pub mod electrostatics;
pub mod guards;
pub mod initial;
pub mod ions;
pub mod microphysics;
pub mod particle_limits;
pub mod state;
pub mod step;
pub mod transport;
pub mod work;
