//! Pure process cores. Nothing here knows the column's [`State`], the
//! [`Experiment`] or the configuration types: a core takes cell values or
//! column slices and returns named rate structs (or fills output slices).
//! The column adapters in [`crate::column`] apply them over the grid, and
//! [`crate::setup`] builds their parameter structs from the configuration.
//! `tests/architecture.rs` enforces the rule on the source text.
//!
//! [`State`]: crate::column::state::State
//! [`Experiment`]: crate::setup::experiment::Experiment

pub mod atmosphere;
pub mod breakdown;
pub mod carriers;
pub mod charging;
pub mod constants;
pub mod discharge;
pub mod electrostatics;
pub mod initiation;
pub mod ions;
pub mod kinematics;
pub mod lanes;
pub mod microphysics;
pub mod profile;
