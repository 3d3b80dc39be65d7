//! Process rates of the bulk mixed-phase scheme for one cell.
//!
//! Every mass transfer is a named field of [`Rates`] (kg kg-1 s-1, >= 0 unless
//! stated), so charge can follow each transfer from its source species to its
//! destination. Symbols and defaults follow Lin, Farley & Orville (1983),
//! JCAM 22, 1065-1092 (LFO83) and Rutledge & Hobbs (1984), JAS 41, 2949
//! (RH84); equation numbers are given where the rate is implemented.
//! Thermodynamic coefficients (LFO83 Table 2, from memory): thermal
//! conductivity of air K_a = 2.43e-2 J m-1 s-1 K-1, diffusivity of vapour
//! psi = 2.26e-5 m2 s-1, dynamic viscosity mu = 1.718e-5 kg m-1 s-1,
//! Schmidt number 0.6.

use super::dsd::{self, Exponential};
use super::params::MicroParams;
use super::species::Species;
use crate::physics::atmosphere::saturation::saturation_pressures_and_liquid_slope;
use crate::physics::constants::{
    CP_DRY, C_ICE, C_WATER, EPSILON, L_FUSION, L_SUBLIMATION, L_VAPORISATION, RHO_VAPOUR_SAT_T0,
    RHO_WATER, R_VAPOUR, T_MELT,
};
use crate::physics::microphysics::species::{CLOUD, GRAUPEL, ICE, RAIN, SNOW, VAPOUR};

/// Thermal conductivity of air K_a (J m-1 s-1 K-1), LFO83.
pub const K_AIR: f64 = 2.43e-2;
/// Diffusivity of water vapour in air psi (m2 s-1), LFO83.
pub const PSI_VAPOUR: f64 = 2.26e-5;
/// Dynamic viscosity of air mu (kg m-1 s-1), LFO83.
pub const MU_AIR: f64 = 1.718e-5;

/// Cell-local inputs that stay fixed during a run (the base state does not
/// change), with the factors that depend only on them computed once per
/// experiment (`Experiment::cell_env`).
#[derive(Debug, Clone, Copy)]
pub struct CellEnv {
    /// Air pressure (Pa).
    pub p: f64,
    /// Air density (kg m-3) and its reciprocal (m3 kg-1).
    pub rho: f64,
    pub inv_rho: f64,
    /// Air-density corrections of the rain, snow and graupel fall speeds (1).
    pub corrections: [f64; 3],
    /// (rho0/rho)^(1/4) / nu^(1/2) of the ventilation terms (s^(1/2) m-1).
    air: f64,
    /// Exner function (p/p_ref)^(R_d/c_p) (1), turning potential temperature
    /// into temperature.
    pub exner: f64,
}

impl CellEnv {
    /// The environment of a cell at pressure `p` (Pa) and density `rho` (kg m-3).
    pub fn new(p: f64, rho: f64, params: &MicroParams) -> Self {
        CellEnv {
            p,
            rho,
            inv_rho: 1.0 / rho,
            corrections: [
                params.rain.correction(rho),
                params.snow.correction(rho),
                params.graupel.correction(rho),
            ],
            air: (crate::physics::constants::RHO_AIR_SEA_LEVEL / rho)
                .sqrt()
                .sqrt()
                / (MU_AIR / rho).sqrt(),
            exner: crate::physics::atmosphere::exner(p),
        }
    }
}

/// One cell's microphysical variables.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct CellState {
    /// Mixing ratios (kg kg-1) in `Species` order.
    pub q: [f64; 6],
    /// Cloud-ice number (kg-1).
    pub n_ice: f64,
    /// Temperature (K).
    pub t: f64,
}

/// Every mass transfer (kg kg-1 s-1). Names say source -> destination.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Rates {
    /// cloud -> rain: autoconversion, Kessler (1969) in the form of Klemp &
    /// Wilhelmson (1978), k1 (q_c - q_c0).
    pub cloud_to_rain_autoconversion: f64,
    /// cloud -> rain: accretion by rain, LFO83 Eq. 51 with the Atlas et al.
    /// (1973) fall law; collection efficiency 1.
    pub cloud_to_rain_accretion: f64,
    /// rain -> vapour: evaporation, LFO83 Eq. 52 (only when subsaturated).
    pub rain_to_vapour: f64,
    /// vapour -> ice: depositional growth of the monodisperse crystals,
    /// dm/dt = 4 pi C (S_i - 1)/(A + B) with C = d/2 (diffusion-growth
    /// equation, e.g. Rogers & Yau 1989, Eq. 9.4, from memory); negative:
    /// sublimation.
    pub vapour_to_ice: f64,
    /// vapour -> snow: deposition (negative: sublimation), LFO83 Eq. 31 form.
    pub vapour_to_snow: f64,
    /// vapour -> graupel: deposition (negative: sublimation), LFO83 Eq. 46 form.
    pub vapour_to_graupel: f64,
    /// ice -> snow: conversion, LFO83 Eq. 21: 1e-3 exp(0.025 (T - T0)) (q_i - q_i0).
    pub ice_to_snow: f64,
    /// cloud -> snow: riming below 0 degC, LFO83 Eq. 24 (above 0 degC the
    /// collected water is shed as rain: see `cloud_to_rain_shedding`).
    pub cloud_to_snow: f64,
    /// cloud -> graupel: riming below 0 degC, LFO83 Eq. 40 form.
    pub cloud_to_graupel: f64,
    /// cloud -> rain: water collected by snow and graupel above 0 degC, shed;
    /// below 0 degC the cloud water graupel collects beyond its wet-growth
    /// capacity ([`wet_growth_capacity`]).
    pub cloud_to_rain_shedding: f64,
    /// cloud -> ice: rime-splinter mass (Hallett & Mossop 1974), taken from
    /// the riming.
    pub cloud_to_ice_splinters: f64,
    /// snow -> graupel: conversion of riming snow, LFO83 Eq. 37 form,
    /// 1e-3 exp(0.09 (T - T0)) (q_s - q_s0), only where snow rimes.
    pub snow_to_graupel: f64,
    /// ice -> snow: collection of ice by snow, LFO83 Eq. 22, E = exp(0.025 (T - T0)).
    pub ice_to_snow_collection: f64,
    /// ice -> graupel: collection of ice by graupel, LFO83 Eq. 41 form,
    /// E = exp(0.09 (T - T0)).
    pub ice_to_graupel: f64,
    /// snow -> graupel: collection of snow by graupel, LFO83 Eq. 42,
    /// E = exp(0.09 (T - T0)).
    pub snow_to_graupel_collection: f64,
    /// rain -> graupel: immersion freezing after Bigg (1953), LFO83 Eq. 45.
    pub rain_to_graupel: f64,
    /// rain -> graupel: supercooled rain collected by graupel, which freezes
    /// on it (LFO83's PGACR term; their Eq. 42 kernel with rain in place of
    /// snow): pi^2 E N0r N0g |Vg - Vr| (rho_w/rho) [5/(lr^6 lg) +
    /// 2/(lr^5 lg^2) + 0.5/(lr^4 lg^3)], E = 1 (LFO83), limited with the
    /// riming by the heat balance of wet growth ([`wet_growth_capacity`]).
    pub rain_to_graupel_collection: f64,
    /// rain -> graupel: drops frozen by collisions with cloud ice (LFO83's
    /// P_iacr, their Eq. 26: every drop that collects a crystal freezes, the
    /// rate n_i (pi/4) integral D^2 V (pi/6) rho_w D^3 N dD), no faster than
    /// the drops can lose the latent heat: the heat balance of Musil (1970)
    /// applied to the rain population with its surface at 0 degC
    /// ([`wet_growth_capacity`] with rain's ventilation). That bound fades
    /// to zero at 0 degC in saturated air, so the rate is continuous where
    /// melting takes over.
    pub rain_to_graupel_ice_contact: f64,
    /// ice -> graupel: crystals collected by rain (LFO83's P_raci, their
    /// Eq. 25: E q_i (pi/4) integral D^2 V N dD, E = 1), which end in the
    /// frozen drops.
    pub ice_to_graupel_by_rain: f64,
    /// cloud -> ice: immersion freezing of the cloud droplets after Bigg
    /// (1953), the rain law of LFO83 Eq. 45 for droplets of one size:
    /// q_c B' [exp(A' (T0 - T)) - 1] (pi/6) d^3, each frozen droplet a new
    /// crystal (optional, `microphysics.droplet_freezing`).
    pub cloud_to_ice_freezing: f64,
    /// snow -> rain: melting, LFO83 Eq. 32 (conduction term).
    pub snow_to_rain: f64,
    /// graupel -> rain: melting, LFO83 Eq. 47 (conduction term).
    pub graupel_to_rain: f64,
    /// vapour -> cloud: condensation (negative: evaporation) that keeps
    /// the vapour at liquid saturation while cloud water exists, the
    /// equilibrium the saturation adjustment assumes, held inside the
    /// integration ([`cloud_equilibrium`]).
    pub vapour_to_cloud: f64,
    /// Rime-splinter number production (kg-1 s-1), Hallett & Mossop (1974).
    pub splinter_number: f64,
    /// Crystals made by droplet freezing (kg-1 s-1): `cloud_to_ice_freezing`
    /// over the droplet mass.
    pub frozen_droplet_number: f64,
}

/// Vapour pressure (Pa) from mixing ratio and pressure, e = r p/(eps + r),
/// the inverse of the mixing-ratio definition (Wallace & Hobbs 2006, Eq. 3.59).
pub fn vapour_pressure(qv: f64, p: f64) -> f64 {
    qv.max(0.0) * p / (EPSILON + qv.max(0.0))
}

/// Saturation mixing ratios over liquid and ice (kg kg-1): r_s = eps e_s/(p - e_s)
/// (definition of the mixing ratio, Wallace & Hobbs 2006, Eq. 3.59) with
/// Murphy & Koop (2005) e_s from their table (`saturation_pressures`). e_s is capped at p/2, which only matters for
/// temperatures far outside the troposphere's (it keeps r_s finite if an
/// integration stage strays there; such states are rejected afterwards).
pub fn saturation_ratios(t: f64, p: f64) -> (f64, f64) {
    let (qsw, qsi, _) = saturation_ratios_and_slope(t, p);
    (qsw, qsi)
}

/// [`saturation_ratios`] and dq_sw/dT (K-1) at constant pressure,
/// eps p (de_w/dT)/(p - e_w)^2 (the derivative of the same definition),
/// zero where e_w is capped at p/2.
pub fn saturation_ratios_and_slope(t: f64, p: f64) -> (f64, f64, f64) {
    let (ew, ei, dew) = saturation_pressures_and_liquid_slope(t);
    let slope = if ew < 0.5 * p {
        let inv = 1.0 / (p - ew);
        EPSILON * p * inv * inv * dew
    } else {
        0.0
    };
    let (ew, ei) = (ew.min(0.5 * p), ei.min(0.5 * p));
    (EPSILON * ew / (p - ew), EPSILON * ei / (p - ei), slope)
}

/// Hallett & Mossop (1974) splinter efficiency: 0 warmer than -3 degC and
/// colder than -8 degC, rising linearly to 1 at -5 degC (the triangular form
/// used by e.g. Cotton et al. 1986, JCAM 25; from memory).
pub fn splinter_efficiency(t: f64) -> f64 {
    let tc = t - T_MELT;
    if (-5.0..=-3.0).contains(&tc) {
        (-3.0 - tc) / 2.0
    } else if (-8.0..-5.0).contains(&tc) {
        (tc + 8.0) / 3.0
    } else {
        0.0
    }
}

/// The temperature-dependent collection efficiencies of ice particles of
/// LFO83: exp(0.025 dT) for snow (their Eq. 22) and exp(0.09 dT) for graupel
/// (their Eq. 41 form), dT = T - T0 (K). Computed from one exponential as
/// b^5 and b^18 with b = exp(0.005 dT) (exact identities; the repeated
/// products add a few units in the last place).
pub fn collection_efficiencies(dtc: f64) -> (f64, f64) {
    let b = (0.005 * dtc).exp();
    let b2 = b * b;
    let b4 = b2 * b2;
    let b16 = (b4 * b4) * (b4 * b4);
    (b4 * b, b16 * b2)
}

/// 5/(ls^6 lg) + 2/(ls^5 lg^2) + 0.5/(ls^4 lg^3) of LFO83 Eq. 42 (m^7) for
/// slopes `ls` and `lg` (m-1), with two reciprocals instead of three
/// divisions.
fn slope_sum(ls: f64, lg: f64) -> f64 {
    let (a, b) = (1.0 / ls, 1.0 / lg);
    let a2 = a * a;
    a2 * a2 * b * (5.0 * a2 + 2.0 * a * b + 0.5 * b * b)
}

/// Liquid water (kg kg-1 s-1) that graupel can freeze: the heat-balance
/// (wet-growth) limit of Musil (1970), JAS 27, 1139, in the form of LFO83's
/// PGWET (their Eq. 43, equation number from memory). With the particle
/// surface at 0 degC, the latent heat of the freezing water (L_f less the
/// sensible heat C_w (T0 - T) the supercooled water takes up) must leave by
/// conduction to the air, by evaporation into it and into the collected ice:
///
/// ```text
/// [2 pi N0 vent (K_a (T0 - T) + L_v psi (rho_vs(T0) - rho_v))/rho
///  + C_i (T0 - T) (ice and snow collected)] / (L_f - C_w (T0 - T)),
/// ```
///
/// `ventilation` the species' N0 (0.78/lambda^2 + ...) of LFO83 Eq. 46
/// (m-2), `ice_collected` the collected ice and snow (kg kg-1 s-1, with the
/// dry-growth efficiencies). Zero at 0 degC in air saturated there, so
/// freezing of collected water fades continuously into the shedding above
/// 0 degC. Liquid collected beyond it is shed as rain (LFO83).
pub fn wet_growth_capacity(t: f64, qv: f64, rho: f64, ventilation: f64, ice_collected: f64) -> f64 {
    let dt = T_MELT - t;
    let heat = 2.0
        * std::f64::consts::PI
        * ventilation
        * (K_AIR * dt + L_VAPORISATION * PSI_VAPOUR * (RHO_VAPOUR_SAT_T0 - rho * qv))
        / rho
        + C_ICE * dt * ice_collected;
    (heat / (L_FUSION - C_WATER * dt)).max(0.0)
}

/// All process rates for one cell.
pub fn rates(s: &CellState, env: CellEnv, p: &MicroParams) -> Rates {
    let mut r = Rates::default();
    let q = |i: usize| s.q[i].max(0.0);
    let (qv, qc, qr, qi, qs, qg) = (q(VAPOUR), q(CLOUD), q(RAIN), q(ICE), q(SNOW), q(GRAUPEL));
    let t = s.t;
    let rho = env.rho;
    let cold = t < T_MELT;
    let (qsw, qsi, qsw_slope) = saturation_ratios_and_slope(t, env.p);
    let (rain, snow, graupel): (&Exponential, &Exponential, &Exponential) =
        (&p.rain, &p.snow, &p.graupel);
    // Slopes and their powers once per evaluation: they feed every integral
    // below (and powf dominates the cost of this function).
    let (lr, ls, lg) = (
        rain.slope_powers(rho, qr),
        snow.slope_powers(rho, qs),
        graupel.slope_powers(rho, qg),
    );
    let [cr, cs, cg] = env.corrections;
    let air = env.air;

    // Warm rain.
    r.cloud_to_rain_autoconversion =
        p.autoconversion_rate * (qc - p.autoconversion_threshold).max(0.0);
    r.cloud_to_rain_accretion = lr.map_or(0.0, |l| rain.sweep_at(&l, cr)) * qc;
    // Reciprocals shared by several rates keep the divisions few.
    let inv_t2 = 1.0 / (t * t);
    let inv_rho = env.inv_rho;
    let sw = qv / qsw;
    if let (true, Some(l)) = (sw < 1.0, lr) {
        // LFO83 Eq. 52: A' = L_v^2/(K_a R_v T^2), B' = 1/(rho q_sw psi).
        let ab = L_VAPORISATION * L_VAPORISATION / (K_AIR * R_VAPOUR) * inv_t2
            + inv_rho / (qsw * PSI_VAPOUR);
        r.rain_to_vapour =
            2.0 * std::f64::consts::PI * (1.0 - sw) * rain.ventilation_at(&l, air) * inv_rho / ab;
    }

    // Vapour and ice: A'' = L_s^2/(K_a R_v T^2), B'' = 1/(rho q_si psi).
    let si = qv / qsi;
    let ab_ice =
        L_SUBLIMATION * L_SUBLIMATION / (K_AIR * R_VAPOUR) * inv_t2 + inv_rho / (qsi * PSI_VAPOUR);
    let inv_ab_ice = 1.0 / ab_ice;
    if qi > 0.0 && s.n_ice > 0.0 && (cold || si < 1.0) {
        let c = 0.5 * dsd::ice::diameter(qi, s.n_ice);
        r.vapour_to_ice = s.n_ice * 4.0 * std::f64::consts::PI * c * (si - 1.0) * inv_ab_ice;
    }
    for (rate, dist, l) in [
        (&mut r.vapour_to_snow, &snow, ls),
        (&mut r.vapour_to_graupel, &graupel, lg),
    ] {
        if let (true, Some(l)) = (cold || si < 1.0, l) {
            *rate = 2.0
                * std::f64::consts::PI
                * (si - 1.0)
                * dist.ventilation_at(&l, air)
                * inv_rho
                * inv_ab_ice;
        }
    }

    // Riming and collection.
    let snow_sweep = ls.map_or(0.0, |l| snow.sweep_at(&l, cs));
    let graupel_sweep = lg.map_or(0.0, |l| graupel.sweep_at(&l, cg));
    let by_snow = snow_sweep * qc;
    let mut by_graupel = graupel_sweep * qc;
    if cold {
        let dtc = t - T_MELT;
        let (e_snow, e_graupel) = collection_efficiencies(dtc);
        r.ice_to_snow = 1e-3 * e_snow * (qi - p.ice_to_snow_threshold).max(0.0);
        r.ice_to_snow_collection = snow_sweep * e_snow * qi;
        r.ice_to_graupel = graupel_sweep * e_graupel * qi;
        // Graupel's mass-weighted speed, for both of its collections below.
        let vg = lg.map_or(0.0, |l| graupel.mass_weighted_speed_at(&l, cg));
        if let (Some(ls), Some(lg)) = (ls, lg) {
            // LFO83 Eq. 42: pi^2 E N0g N0s |Vg - Vs| (rho_s/rho)
            //   [5/(ls^6 lg) + 2/(ls^5 lg^2) + 0.5/(ls^4 lg^3)].
            let dv = (vg - snow.mass_weighted_speed_at(&ls, cs)).abs();
            r.snow_to_graupel_collection = std::f64::consts::PI.powi(2)
                * e_graupel
                * graupel.n0
                * snow.n0
                * dv
                * (snow.rho_p * inv_rho)
                * slope_sum(ls.lambda, lg.lambda);
        }
        if let Some(lg) = lg {
            // Supercooled rain collected by graupel (LFO83 PGACR), then the
            // heat balance of wet growth on everything liquid graupel collects.
            if let (true, Some(lr)) = (p.rain_ice_collection, lr) {
                let dv = (vg - rain.mass_weighted_speed_at(&lr, cr)).abs();
                r.rain_to_graupel_collection = std::f64::consts::PI.powi(2)
                    * graupel.n0
                    * rain.n0
                    * dv
                    * (RHO_WATER * inv_rho)
                    * slope_sum(lr.lambda, lg.lambda);
            }
            let liquid = by_graupel + r.rain_to_graupel_collection;
            if liquid > 0.0 {
                let capacity = wet_growth_capacity(
                    t,
                    qv,
                    rho,
                    graupel.ventilation_at(&lg, air),
                    r.ice_to_graupel + r.snow_to_graupel_collection,
                );
                if liquid > capacity {
                    // Wet growth: what cannot freeze is shed (collected
                    // cloud water) or not kept (rain).
                    let f = capacity / liquid;
                    r.cloud_to_rain_shedding = by_graupel * (1.0 - f);
                    by_graupel *= f;
                    r.rain_to_graupel_collection *= f;
                }
            }
        }
        if p.rime_splintering {
            let f = splinter_efficiency(t);
            r.splinter_number = p.splinters_per_kg_rime * f * (by_snow + by_graupel);
            r.cloud_to_ice_splinters =
                (r.splinter_number * p.splinter_mass).min(by_snow + by_graupel);
        }
        let share = if by_snow + by_graupel > 0.0 {
            r.cloud_to_ice_splinters / (by_snow + by_graupel)
        } else {
            0.0
        };
        r.cloud_to_snow = by_snow * (1.0 - share);
        r.cloud_to_graupel = by_graupel * (1.0 - share);
        if by_snow > 0.0 {
            r.snow_to_graupel = 1e-3 * e_graupel * (qs - p.snow_to_graupel_threshold).max(0.0);
        }
        let crystals = s.n_ice > 0.0 && qi > 0.0;
        if let (true, Some(l)) = (p.rain_ice_contact_freezing && crystals, lr) {
            // LFO83 P_raci and P_iacr: drops collect crystals and freeze,
            // within the heat the drops can give off (Musil 1970).
            r.ice_to_graupel_by_rain = rain.sweep_at(&l, cr) * qi;
            let contact = s.n_ice * rain.mass_sweep_at(&l, cr);
            let capacity = wet_growth_capacity(
                t,
                qv,
                rho,
                rain.ventilation_at(&l, air),
                r.ice_to_graupel_by_rain,
            );
            r.rain_to_graupel_ice_contact = contact.min(capacity);
        }
        // The supercooling factor exp(A' (T0 - T)) - 1 of Bigg's (1953)
        // freezing probability B' [exp(A' (T0 - T)) - 1] per unit volume and
        // time, shared by rain and droplets and evaluated only when one of
        // them freezes by it.
        let freezing_droplets = p.droplet_freezing && qc > 0.0;
        let bigg = if lr.is_some() || freezing_droplets {
            (p.bigg_a * (T_MELT - t)).exp() - 1.0
        } else {
            0.0
        };
        if freezing_droplets {
            // A droplet of volume v freezes with probability B' bigg v per second.
            r.cloud_to_ice_freezing = qc * p.bigg_b * bigg * p.droplet_volume();
            r.frozen_droplet_number = r.cloud_to_ice_freezing / p.droplet_mass();
        }
        if let Some(lr) = lr {
            // LFO83 Eq. 45 (Bigg 1953): 20 pi^2 B' N0r (rho_w/rho) [exp(A'(T0-T)) - 1] / lambda_r^7.
            r.rain_to_graupel = 20.0
                * std::f64::consts::PI.powi(2)
                * p.bigg_b
                * rain.n0
                * (RHO_WATER * inv_rho)
                * bigg
                / lr.lambda.powi(7);
        }
    } else {
        r.cloud_to_rain_shedding = by_snow + by_graupel;
        // LFO83 Eqs. 32 and 47, conduction term: 2 pi K_a (T - T0) N0 [ventilation] / (rho L_f).
        for (rate, dist, l) in [
            (&mut r.snow_to_rain, &snow, ls),
            (&mut r.graupel_to_rain, &graupel, lg),
        ] {
            if let Some(l) = l {
                *rate = 2.0 * std::f64::consts::PI * K_AIR / L_FUSION
                    * (t - T_MELT)
                    * dist.ventilation_at(&l, air)
                    * inv_rho;
            }
        }
    }
    r.limit_sinks(&[qv, qc, qr, qi, qs, qg]);
    if p.cloud_equilibrium && qc > 0.0 {
        r.vapour_to_cloud = cloud_equilibrium(&r, qsw_slope, qc);
    }
    r
}

/// Condensation rate C (kg kg-1 s-1; negative: evaporation) that keeps
/// q_v = q_sw(T) at constant pressure while the other processes `r`
/// change vapour and temperature: with V and Theta their vapour and
/// temperature tendencies and s = dq_sw/dT (`slope`, K-1, from
/// [`saturation_ratios_and_slope`]),
/// V - C = s (Theta + L_v C / c_p), so C = (V - s Theta) / (1 + s L_v / c_p).
/// The bulk scheme's premise is that cloud water is in equilibrium with the
/// vapour (the saturation adjustment, Soong & Ogura 1973); differentiating
/// that constraint in time (index reduction of the algebraic condition,
/// Hairer & Wanner 1996, Solving ODEs II, ch. VII, from memory) holds it
/// inside the integration too. Without it, deposition on ice drew the
/// vapour below liquid saturation for a whole step and the cloud water
/// refilled it only at the step's end, so the Wegener-Bergeron-Findeisen
/// transfer of cloud water to ice depended on the step wherever the
/// crystals' deposition time was not long against it (docs/numerics.md).
/// Evaporation is limited, with the cloud's other sinks, to q_c per
/// [`SINK_TIMESCALE`] (`qc`, kg kg-1).
pub fn cloud_equilibrium(r: &Rates, slope: f64, qc: f64) -> f64 {
    let (vapour, heat) = r.vapour_and_heat(0.0);
    let theta = heat * (1.0 / CP_DRY);
    let c = (vapour - slope * theta) / (1.0 + slope * L_VAPORISATION / CP_DRY);
    if c < 0.0 {
        let room = (qc / SINK_TIMESCALE - r.cloud_sinks()).max(0.0);
        c.max(-room)
    } else {
        c
    }
}

/// Number of mass transfers in [`TRANSFER_PAIRS`].
pub const N_TRANSFERS: usize = 23;

/// Source and destination of every transfer, in [`Rates::transfer_rates`] order;
/// deposition is listed as vapour -> species.
pub const TRANSFER_PAIRS: [(Species, Species); N_TRANSFERS] = {
    use Species::*;
    [
        (Cloud, Rain),
        (Cloud, Rain),
        (Rain, Vapour),
        (Vapour, Ice),
        (Vapour, Snow),
        (Vapour, Graupel),
        (Ice, Snow),
        (Cloud, Snow),
        (Cloud, Graupel),
        (Cloud, Rain),
        (Cloud, Ice),
        (Snow, Graupel),
        (Ice, Snow),
        (Ice, Graupel),
        (Snow, Graupel),
        (Rain, Graupel),
        (Rain, Graupel),
        (Rain, Graupel),
        (Ice, Graupel),
        (Cloud, Ice),
        (Snow, Rain),
        (Graupel, Rain),
        (Vapour, Cloud),
    ]
};

impl Rates {
    /// Every mass transfer rate, in [`TRANSFER_PAIRS`] order; deposition is
    /// negative when it is sublimation.
    pub fn transfer_rates(&self) -> [f64; N_TRANSFERS] {
        [
            self.cloud_to_rain_autoconversion,
            self.cloud_to_rain_accretion,
            self.rain_to_vapour,
            self.vapour_to_ice,
            self.vapour_to_snow,
            self.vapour_to_graupel,
            self.ice_to_snow,
            self.cloud_to_snow,
            self.cloud_to_graupel,
            self.cloud_to_rain_shedding,
            self.cloud_to_ice_splinters,
            self.snow_to_graupel,
            self.ice_to_snow_collection,
            self.ice_to_graupel,
            self.snow_to_graupel_collection,
            self.rain_to_graupel,
            self.rain_to_graupel_collection,
            self.rain_to_graupel_ice_contact,
            self.ice_to_graupel_by_rain,
            self.cloud_to_ice_freezing,
            self.snow_to_rain,
            self.graupel_to_rain,
            self.vapour_to_cloud,
        ]
    }

    /// The vapour tendency (kg kg-1 s-1) and the latent heating (J kg-1
    /// s-1) of the rates with the condensation `cloud` (kg kg-1 s-1) in
    /// place of `vapour_to_cloud`: shared by [`tendencies`] and
    /// [`cloud_equilibrium`] (which passes 0, the other processes alone).
    fn vapour_and_heat(&self, cloud: f64) -> (f64, f64) {
        let dep = self.vapour_to_ice + self.vapour_to_snow + self.vapour_to_graupel;
        (
            -dep + self.rain_to_vapour - cloud,
            L_SUBLIMATION * dep - L_VAPORISATION * (self.rain_to_vapour - cloud)
                + L_FUSION * (self.freezing() - self.melting()),
        )
    }

    /// Mass frozen per time (kg kg-1 s-1): liquid that becomes ice.
    fn freezing(&self) -> f64 {
        self.cloud_to_snow
            + self.cloud_to_graupel
            + self.cloud_to_ice_splinters
            + self.rain_to_graupel
            + self.rain_to_graupel_collection
            + self.rain_to_graupel_ice_contact
            + self.cloud_to_ice_freezing
    }

    /// Mass melted per time (kg kg-1 s-1).
    fn melting(&self) -> f64 {
        self.snow_to_rain + self.graupel_to_rain
    }

    /// The cloud water's sinks other than evaporation (kg kg-1 s-1).
    fn cloud_sinks(&self) -> f64 {
        self.cloud_to_rain_autoconversion
            + self.cloud_to_rain_accretion
            + self.cloud_to_snow
            + self.cloud_to_graupel
            + self.cloud_to_rain_shedding
            + self.cloud_to_ice_splinters
            + self.cloud_to_ice_freezing
    }
}

/// Tendencies of one cell from its rates: d q / dt (kg kg-1 s-1, `Species`
/// order), d n_ice / dt (kg-1 s-1) and d T / dt (K s-1) from the latent heats.
pub fn tendencies(s: &CellState, r: &Rates) -> ([f64; 6], f64, f64) {
    let (dv, heat) = r.vapour_and_heat(r.vapour_to_cloud);
    let dc = r.vapour_to_cloud - r.cloud_sinks();
    let dr = r.cloud_to_rain_autoconversion + r.cloud_to_rain_accretion + r.cloud_to_rain_shedding
        - r.rain_to_vapour
        - r.rain_to_graupel
        - r.rain_to_graupel_collection
        - r.rain_to_graupel_ice_contact
        + r.snow_to_rain
        + r.graupel_to_rain;
    let di = r.vapour_to_ice + r.cloud_to_ice_splinters + r.cloud_to_ice_freezing
        - r.ice_to_snow
        - r.ice_to_snow_collection
        - r.ice_to_graupel
        - r.ice_to_graupel_by_rain;
    let ds = r.vapour_to_snow + r.ice_to_snow + r.ice_to_snow_collection + r.cloud_to_snow
        - r.snow_to_graupel
        - r.snow_to_graupel_collection
        - r.snow_to_rain;
    let dg = r.vapour_to_graupel
        + r.cloud_to_graupel
        + r.ice_to_graupel
        + r.snow_to_graupel
        + r.snow_to_graupel_collection
        + r.rain_to_graupel
        + r.rain_to_graupel_collection
        + r.rain_to_graupel_ice_contact
        + r.ice_to_graupel_by_rain
        - r.graupel_to_rain;
    // Crystals are lost in proportion to the mass lost by conversion,
    // collection and sublimation; splinters add crystals.
    let qi = s.q[ICE];
    let mut dn = r.splinter_number + r.frozen_droplet_number;
    if qi > 0.0 {
        let lost = r.ice_to_snow
            + r.ice_to_snow_collection
            + r.ice_to_graupel
            + r.ice_to_graupel_by_rain
            + (-r.vapour_to_ice).max(0.0);
        dn -= s.n_ice / qi * lost;
    }
    ([dv, dc, dr, di, ds, dg], dn, heat * (1.0 / CP_DRY))
}

/// Shortest time (s) in which the sinks of a species may empty it. Rates such
/// as rain evaporation (proportional to q^(1/2) through the size
/// distribution) do not vanish fast enough as q -> 0 for an ODE solver; the
/// sinks of each species are therefore scaled down, together, so that they
/// never exceed q / SINK_TIMESCALE. This is the usual sink limiter of bulk
/// schemes (common practice), written as a rate limit so the integration stays
/// smooth; it only acts on species that would be exhausted within a second.
pub const SINK_TIMESCALE: f64 = 1.0;

impl Rates {
    /// Applies the sink limiter to mixing ratios `q` (Species order).
    pub fn limit_sinks(&mut self, q: &[f64; 6]) {
        let q = q.map(|x| x.max(0.0));
        let scale = |sink: f64, q: f64| {
            let cap = q / SINK_TIMESCALE;
            if sink > cap {
                cap / sink
            } else {
                1.0
            }
        };
        // Vapour: deposition (positive parts).
        let dep = self.vapour_to_ice.max(0.0)
            + self.vapour_to_snow.max(0.0)
            + self.vapour_to_graupel.max(0.0);
        let f = scale(dep, q[VAPOUR]);
        for r in [
            &mut self.vapour_to_ice,
            &mut self.vapour_to_snow,
            &mut self.vapour_to_graupel,
        ] {
            if *r > 0.0 {
                *r *= f;
            }
        }
        // Cloud water.
        let sinks = self.cloud_to_rain_autoconversion
            + self.cloud_to_rain_accretion
            + self.cloud_to_snow
            + self.cloud_to_graupel
            + self.cloud_to_rain_shedding
            + self.cloud_to_ice_splinters
            + self.cloud_to_ice_freezing;
        let f = scale(sinks, q[CLOUD]);
        if f < 1.0 {
            self.cloud_to_ice_freezing *= f;
            self.frozen_droplet_number *= f;
            self.cloud_to_rain_autoconversion *= f;
            self.cloud_to_rain_accretion *= f;
            self.cloud_to_snow *= f;
            self.cloud_to_graupel *= f;
            self.cloud_to_rain_shedding *= f;
            self.cloud_to_ice_splinters *= f;
            self.splinter_number *= f;
        }
        // Rain.
        let f = scale(
            self.rain_to_vapour
                + self.rain_to_graupel
                + self.rain_to_graupel_collection
                + self.rain_to_graupel_ice_contact,
            q[RAIN],
        );
        self.rain_to_vapour *= f;
        self.rain_to_graupel *= f;
        self.rain_to_graupel_collection *= f;
        self.rain_to_graupel_ice_contact *= f;
        // Ice (sublimation is the negative part of vapour_to_ice).
        let sinks = self.ice_to_snow
            + self.ice_to_snow_collection
            + self.ice_to_graupel
            + self.ice_to_graupel_by_rain
            + (-self.vapour_to_ice).max(0.0);
        let f = scale(sinks, q[ICE]);
        if f < 1.0 {
            self.ice_to_snow *= f;
            self.ice_to_snow_collection *= f;
            self.ice_to_graupel *= f;
            self.ice_to_graupel_by_rain *= f;
            if self.vapour_to_ice < 0.0 {
                self.vapour_to_ice *= f;
            }
        }
        // Snow.
        let sinks = self.snow_to_graupel
            + self.snow_to_graupel_collection
            + self.snow_to_rain
            + (-self.vapour_to_snow).max(0.0);
        let f = scale(sinks, q[SNOW]);
        if f < 1.0 {
            self.snow_to_graupel *= f;
            self.snow_to_graupel_collection *= f;
            self.snow_to_rain *= f;
            if self.vapour_to_snow < 0.0 {
                self.vapour_to_snow *= f;
            }
        }
        // Graupel.
        let f = scale(
            self.graupel_to_rain + (-self.vapour_to_graupel).max(0.0),
            q[GRAUPEL],
        );
        self.graupel_to_rain *= f;
        if self.vapour_to_graupel < 0.0 {
            self.vapour_to_graupel *= f;
        }
    }
}
