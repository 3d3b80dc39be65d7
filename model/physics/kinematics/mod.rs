//! Kinematics cores: the prescribed updraft w(z, t) ([`updraft`]), advection of
//! every advected field by it ([`advection`]), the optional vertical eddy
//! diffusion ([`eddy_diffusion`]) and sedimentation of the falling species
//! with their fall speeds ([`sedimentation`]).
//!
//! Advected: potential temperature, every mixing ratio, the cloud-ice number
//! and the charge of every hydrometeor carrier as specific charge (C kg-1,
//! charge density / air density), so that advection conserves it. Inflow
//! through the ground (when w > 0 there) and the top (when w < 0 there)
//! brings base-state air: base potential temperature and vapour, no
//! hydrometeors, no charge. Prescribed charge stays in place.
//!
//! Sedimentation uses each species' mass-weighted fall speed for its mass and
//! for its charge (the number of cloud ice falls with the same speed:
//! monodisperse crystals). Charge rides with the mass-weighted speed so that
//! pure sedimentation keeps the specific charge of a falling population,
//! consistent with the charge-follows-mass rule of the charge transfers
//! (docs/references.md); a number-weighted speed would let charge lag
//! behind the mass that carries it.

pub mod advection;
pub mod eddy_diffusion;
pub mod entrainment;
pub mod sedimentation;
pub mod updraft;
