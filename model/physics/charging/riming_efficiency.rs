//! Collision efficiency of cloud droplets on a rimer: the effective water
//! content EW = E LWC of the rime accretion rate RAR = EW V (Saunders &
//! Peck 1998 define RAR with the effective, not the total, liquid water).
//!
//! Langmuir (1948), J. Meteor. 5, 175-192: a sphere of radius R moving at V
//! through air of viscosity mu sweeps droplets of diameter d and density
//! rho_w with an efficiency set by the inertia (Stokes) parameter
//!
//! ```text
//! K = rho_w d^2 V / (18 mu R)                                  (1)
//! ```
//!
//! in potential flow (large Reynolds number Re = rho_a V 2R / mu)
//!
//! ```text
//! E_pot = (K / (K + 0.5))^2          K >= 0.2;  0 for K <= 1/12,   (2)
//! ```
//!
//! in viscous flow (small Re)
//!
//! ```text
//! E_vis = [1 + 0.75 ln(2K) / (K - 1.214)]^-2   K > 1.214; 0 below,  (3)
//! ```
//!
//! and in between E = (E_vis + E_pot Re/60) / (1 + Re/60). The forms and
//! constants were read in a secondary source (a public aerosol-scrubbing
//! code citing the potential- and viscous-flow limits), not re-read in
//! Langmuir's paper; docs/references.md gives the status. Between K = 1/12
//! and 0.2, where Langmuir's critical value cuts off potential-flow
//! impaction, E_pot is ramped linearly to zero (as in that source; a
//! modelling choice). Interception (droplet radius against collector size,
//! 1 % here) is neglected.
//!
//! Typical values (air 0.6 kg m-3, mu 1.718e-5 Pa s): a 2 mm graupel at
//! 5 m/s collects 20 um droplets with E = 0.81 (K = 6.5, Re = 349); a
//! 0.5 mm graupel at 2 m/s with 0.74; 10 um droplets on that graupel with
//! 0.43 (tests/literature_charging.rs checks the limits of the forms).

use crate::physics::lanes::{Lane, Mask};

named_choice! {
    /// How the effective water content of the rime accretion rate is
    /// formed (`charging.riming_efficiency`).
    pub enum RimingEfficiency {
        /// E from [`langmuir_1948`] for the collector's mass-weighted mean
        /// diameter and speed and the cloud droplets' diameter.
        Langmuir1948 = "langmuir_1948",
        /// E = 1: the liquid water content itself (as before this key).
        Unity = "unity",
    }
}

impl RimingEfficiency {
    /// The efficiency (1) this choice gives droplets of diameter `droplet`
    /// (m) on a collector of diameter `collector` (m) moving at `speed`
    /// (m s-1) through air of density `rho_air` (kg m-3), with the
    /// microphysics' air viscosity.
    pub fn of(self, droplet: f64, collector: f64, speed: f64, rho_air: f64) -> f64 {
        self.of_lanes(droplet, collector, speed, rho_air)
    }

    /// [`Self::of`] lane by lane ([`crate::physics::lanes`]).
    #[inline(always)]
    pub fn of_lanes<T: Lane>(self, droplet: f64, collector: T, speed: T, rho_air: T) -> T {
        match self {
            RimingEfficiency::Unity => T::splat(1.0),
            RimingEfficiency::Langmuir1948 => langmuir_1948_of(
                droplet,
                collector,
                speed,
                rho_air,
                crate::physics::microphysics::rates::MU_AIR,
            ),
        }
    }
}

/// Efficiency (1) with which a sphere of diameter `collector` (m) falling at
/// `speed` (m s-1) relative to the droplets collects droplets of diameter
/// `droplet` (m), in air of density `rho_air` (kg m-3) and dynamic
/// viscosity `mu` (Pa s); Langmuir (1948) as in the module documentation.
pub fn langmuir_1948(droplet: f64, collector: f64, speed: f64, rho_air: f64, mu: f64) -> f64 {
    langmuir_1948_of(droplet, collector, speed, rho_air, mu)
}

/// [`langmuir_1948`] lane by lane for a droplet diameter common to all
/// lanes; zero in lanes without a moving collector.
#[inline(always)]
pub fn langmuir_1948_of<T: Lane>(droplet: f64, collector: T, speed: T, rho_air: T, mu: f64) -> T {
    let zero = T::splat(0.0);
    let moving = collector.gt(zero) & speed.gt(zero);
    // Also false for a NaN diameter.
    let droplets = droplet > 0.0;
    if !droplets || !moving.any() {
        return zero;
    }
    let k = speed * (crate::physics::constants::RHO_WATER * droplet * droplet)
        / (collector * (9.0 * mu));
    let reynolds = rho_air * speed * collector / mu;
    let ratio = k / (k + 0.5);
    let e = ratio * ratio;
    // Langmuir's critical value cuts potential-flow impaction off at
    // K = 1/12; between it and 0.2 the efficiency is ramped to zero.
    let ramp = e * (k - 1.0 / 12.0) / (0.2 - 1.0 / 12.0);
    let e_pot = T::select(
        k.le(T::splat(1.0 / 12.0)),
        zero,
        T::select(k.lt(T::splat(0.2)), ramp, e),
    );
    let viscous = k.gt(T::splat(1.214));
    let e_vis = if viscous.any() {
        let x = (k * 2.0).ln() * 0.75 / (k - 1.214) + 1.0;
        T::select(viscous, T::splat(1.0) / (x * x), zero)
    } else {
        zero
    };
    let w = reynolds / 60.0;
    let e = (e_vis + e_pot * w) / (w + 1.0);
    T::select(moving, e.max(zero).min(T::splat(1.0)), zero)
}
