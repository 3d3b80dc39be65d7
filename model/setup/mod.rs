//! From a configuration file to a resolved [`experiment::Experiment`]:
//! the key table and its checks ([`config`]), the resolution of every
//! section into the parameter structs of the physics cores ([`resolve`],
//! [`sounding_input`]), and the experiment that holds them. This is the
//! only place where configuration types meet physics types.

pub mod charge_table_input;
pub mod config;
pub mod experiment;
pub mod resolve;
pub mod sounding_input;
