//! Parameters of the bulk scheme (SI), each with its source. Built from the
//! `[microphysics]` configuration; `Default` gives the published values.

use super::dsd::{self, Exponential};

named_choice! {
    /// Ice-nucleation parameterisation (`microphysics.ice_nucleation`).
    pub enum Nucleation {
        /// Cooper (1986), in Precipitation Enhancement (AMS Meteor. Monogr. 43):
        /// N = 5 exp(0.304 (T0 - T)) m-3 (from memory).
        Cooper1986 = "cooper_1986",
        /// Meyers, DeMott & Cotton (1992), JAM 31: N = exp(-0.639 + 12.96 (S_i - 1))
        /// per litre (from memory).
        Meyers1992 = "meyers_1992",
        /// Fletcher (1962), The Physics of Rainclouds: N = 1e-2 exp(0.6 (T0 - T))
        /// m-3, as used by Rutledge & Hobbs (1983) (from memory).
        Fletcher1962 = "fletcher_1962",
    }
}

named_choice! {
    /// How the process rates are integrated over a step
    /// (`microphysics.integrator`; see [`super::integrator`]).
    pub enum Integrator {
        /// Bogacki & Shampine (1989) 3(2) pair, allocation-free.
        BogackiShampine1989 = "bogacki_shampine_1989",
        /// Dormand & Prince (1980) 5(4) pair, allocation-free.
        DormandPrince1980 = "dormand_prince_1980",
        /// The Dormand-Prince integrator of the `ode_solvers` crate: an
        /// independent implementation, kept as the reference.
        OdeSolversDopri5 = "ode_solvers_dopri5",
    }
}

/// All parameters of the scheme.
#[derive(Debug, Clone, PartialEq)]
pub struct MicroParams {
    pub rain: Exponential,
    pub snow: Exponential,
    pub graupel: Exponential,
    /// Kessler autoconversion rate k1 (s-1) and threshold q_c0 (kg kg-1):
    /// 1e-3 s-1 and 1e-3 kg kg-1 (Klemp & Wilhelmson 1978 form, from memory).
    pub autoconversion_rate: f64,
    pub autoconversion_threshold: f64,
    /// Ice -> snow threshold q_i0 (kg kg-1), 1e-3 (LFO83 Eq. 21).
    pub ice_to_snow_threshold: f64,
    /// Snow -> graupel threshold q_s0 (kg kg-1), 6e-4 (LFO83 Eq. 37).
    pub snow_to_graupel_threshold: f64,
    /// Bigg (1953) freezing constants of LFO83 Eq. 45: B' = 100 m-3 s-1, A' = 0.66 K-1.
    pub bigg_b: f64,
    pub bigg_a: f64,
    pub nucleation: Nucleation,
    /// Upper bound on active ice nuclei (m-3); 1e5 (100 per litre) by default
    /// (common practice, to keep exponential formulas finite at cold temperatures).
    pub max_nuclei: f64,
    /// Multiplier on the nucleus number (1 = the published formula).
    pub nuclei_scale: f64,
    /// Mass of a newly nucleated crystal (kg), 1e-12 (RH84, from memory).
    pub nucleated_mass: f64,
    /// Rime splintering (Hallett & Mossop 1974) on or off.
    pub rime_splintering: bool,
    /// Supercooled rain collected by graupel freezes on it (LFO83's PGACR
    /// term, within the wet-growth limit) on or off.
    pub rain_ice_collection: bool,
    /// Supercooled drops that collect cloud ice freeze (LFO83's P_iacr and
    /// P_raci, within the drops' heat balance) on or off.
    pub rain_ice_contact_freezing: bool,
    /// Immersion freezing of cloud droplets after Bigg (1953) on or off.
    pub droplet_freezing: bool,
    /// Cloud water held in equilibrium with the vapour inside the process
    /// integration ([`super::rates::cloud_equilibrium`]) on or off.
    pub cloud_equilibrium: bool,
    /// Splinters per kg of rime at the optimum temperature: 350 per mg = 3.5e8
    /// (Hallett & Mossop 1974, from memory).
    pub splinters_per_kg_rime: f64,
    /// Mass of a splinter (kg), 1e-12 (as nucleated crystals).
    pub splinter_mass: f64,
    /// Diameter of a cloud droplet (m), `microphysics.droplet_diameter`,
    /// default 20 um (a 10 um radius drop, common practice): its mass gives
    /// the crystal number homogeneous freezing forms
    /// ([`Self::droplet_mass`]) and the droplets of inductive charging, its
    /// size the droplets' collision efficiency on rimers and their Bigg
    /// freezing volume. One size for the microphysics and the charging; the
    /// small ions' attachment takes a droplet number instead
    /// (`ions.cloud_droplet_number`, docs/ions.md).
    pub droplet_diameter: f64,
    /// Integrator of the process rates.
    pub integrator: Integrator,
    /// Relative and absolute tolerances of the adaptive integrator.
    pub rtol: f64,
    pub atol: f64,
}

impl MicroParams {
    /// Mass of a cloud droplet (kg): (4/3) pi r^3 rho_w with r = d/2.
    pub fn droplet_mass(&self) -> f64 {
        let r = 0.5 * self.droplet_diameter;
        4.0 / 3.0 * std::f64::consts::PI * (r * r * r) * crate::physics::constants::RHO_WATER
    }

    /// Volume of a cloud droplet (m3): its mass over the density of water.
    pub fn droplet_volume(&self) -> f64 {
        self.droplet_mass() / crate::physics::constants::RHO_WATER
    }

    /// The exponential size distribution of a precipitating species (rain,
    /// snow, graupel); `None` for the others.
    pub fn exponential(
        &self,
        sp: crate::physics::microphysics::species::Species,
    ) -> Option<&Exponential> {
        use crate::physics::microphysics::species::Species;
        match sp {
            Species::Rain => Some(&self.rain),
            Species::Snow => Some(&self.snow),
            Species::Graupel => Some(&self.graupel),
            _ => None,
        }
    }
}

impl Default for MicroParams {
    fn default() -> Self {
        MicroParams {
            rain: dsd::rain(8.0e6),
            snow: dsd::snow(3.0e6, 100.0),
            graupel: dsd::graupel(4.0e6, 400.0),
            autoconversion_rate: 1.0e-3,
            autoconversion_threshold: 1.0e-3,
            ice_to_snow_threshold: 1.0e-3,
            snow_to_graupel_threshold: 6.0e-4,
            bigg_b: 100.0,
            bigg_a: 0.66,
            nucleation: Nucleation::Cooper1986,
            max_nuclei: 1.0e5,
            nuclei_scale: 1.0,
            nucleated_mass: 1.0e-12,
            rime_splintering: true,
            rain_ice_collection: true,
            rain_ice_contact_freezing: false,
            droplet_freezing: false,
            cloud_equilibrium: true,
            splinters_per_kg_rime: 3.5e8,
            splinter_mass: 1.0e-12,
            droplet_diameter: 2.0e-5,
            integrator: Integrator::BogackiShampine1989,
            rtol: 1.0e-4,
            atol: 1.0e-12,
        }
    }
}

impl MicroParams {
    /// Active ice nuclei (m-3) at temperature `t` (K) and ice saturation ratio `si`.
    pub fn nuclei(&self, t: f64, si: f64) -> f64 {
        let dt = crate::physics::constants::T_MELT - t;
        if dt <= 0.0 || si < 1.0 {
            return 0.0;
        }
        let n = match self.nucleation {
            Nucleation::Cooper1986 => 5.0 * (0.304 * dt).exp(),
            Nucleation::Meyers1992 => 1.0e3 * (-0.639 + 12.96 * (si - 1.0)).exp(),
            Nucleation::Fletcher1962 => 1.0e-2 * (0.6 * dt).exp(),
        };
        (self.nuclei_scale * n).min(self.max_nuclei)
    }
}
