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
use crate::physics::atmosphere::saturation::saturation_pressures_and_liquid_slope_of;
use crate::physics::constants::{
    CP_DRY, C_ICE, C_WATER, EPSILON, L_FUSION, L_SUBLIMATION, L_VAPORISATION, RHO_VAPOUR_SAT_T0,
    RHO_WATER, R_VAPOUR, T_MELT,
};
use crate::physics::lanes::{Cells, Lane, Mask, WIDTH};
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
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct CellEnv<T = f64> {
    /// Air pressure (Pa).
    pub p: T,
    /// Air density (kg m-3) and its reciprocal (m3 kg-1).
    pub rho: T,
    pub inv_rho: T,
    /// Air-density corrections of the rain, snow and graupel fall speeds (1).
    pub corrections: [T; 3],
    /// (rho0/rho)^(1/4) / nu^(1/2) of the ventilation terms (s^(1/2) m-1).
    air: T,
    /// Exner function (p/p_ref)^(R_d/c_p) (1), turning potential temperature
    /// into temperature.
    pub exner: T,
}

impl CellEnv<Cells> {
    /// The environments of [`WIDTH`] cells side by side.
    pub fn gather(envs: [&CellEnv; WIDTH]) -> Self {
        let each = |f: &dyn Fn(&CellEnv) -> f64| Cells::from_lanes(|i| f(envs[i]));
        CellEnv {
            p: each(&|e| e.p),
            rho: each(&|e| e.rho),
            inv_rho: each(&|e| e.inv_rho),
            corrections: [0, 1, 2].map(|i| each(&|e| e.corrections[i])),
            air: each(&|e| e.air),
            exner: each(&|e| e.exner),
        }
    }
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
pub struct CellState<T = f64> {
    /// Mixing ratios (kg kg-1) in `Species` order.
    pub q: [T; 6],
    /// Cloud-ice number (kg-1).
    pub n_ice: T,
    /// Temperature (K).
    pub t: T,
}

/// Every mass transfer (kg kg-1 s-1). Names say source -> destination.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Rates<T = f64> {
    /// cloud -> rain: autoconversion, Kessler (1969) in the form of Klemp &
    /// Wilhelmson (1978), k1 (q_c - q_c0).
    pub cloud_to_rain_autoconversion: T,
    /// cloud -> rain: accretion by rain, LFO83 Eq. 51 with the Atlas et al.
    /// (1973) fall law; collection efficiency 1.
    pub cloud_to_rain_accretion: T,
    /// rain -> vapour: evaporation, LFO83 Eq. 52 (only when subsaturated).
    pub rain_to_vapour: T,
    /// vapour -> ice: depositional growth of the monodisperse crystals,
    /// dm/dt = 4 pi C (S_i - 1)/(A + B) with C = d/2 (diffusion-growth
    /// equation, e.g. Rogers & Yau 1989, Eq. 9.4, from memory); negative:
    /// sublimation.
    pub vapour_to_ice: T,
    /// vapour -> snow: deposition (negative: sublimation), LFO83 Eq. 31 form.
    pub vapour_to_snow: T,
    /// vapour -> graupel: deposition (negative: sublimation), LFO83 Eq. 46 form.
    pub vapour_to_graupel: T,
    /// ice -> snow: conversion, LFO83 Eq. 21: 1e-3 exp(0.025 (T - T0)) (q_i - q_i0).
    pub ice_to_snow: T,
    /// cloud -> snow: riming below 0 degC, LFO83 Eq. 24 (above 0 degC the
    /// collected water is shed as rain: see `cloud_to_rain_shedding`).
    pub cloud_to_snow: T,
    /// cloud -> graupel: riming below 0 degC, LFO83 Eq. 40 form.
    pub cloud_to_graupel: T,
    /// cloud -> rain: water collected by snow and graupel above 0 degC, shed;
    /// below 0 degC the cloud water graupel collects beyond its wet-growth
    /// capacity ([`wet_growth_capacity`]).
    pub cloud_to_rain_shedding: T,
    /// cloud -> ice: rime-splinter mass (Hallett & Mossop 1974), taken from
    /// the riming.
    pub cloud_to_ice_splinters: T,
    /// snow -> graupel: conversion of riming snow, LFO83 Eq. 37 form,
    /// 1e-3 exp(0.09 (T - T0)) (q_s - q_s0), only where snow rimes.
    pub snow_to_graupel: T,
    /// ice -> snow: collection of ice by snow, LFO83 Eq. 22, E = exp(0.025 (T - T0)).
    pub ice_to_snow_collection: T,
    /// ice -> graupel: collection of ice by graupel, LFO83 Eq. 41 form,
    /// E = exp(0.09 (T - T0)).
    pub ice_to_graupel: T,
    /// snow -> graupel: collection of snow by graupel, LFO83 Eq. 42,
    /// E = exp(0.09 (T - T0)).
    pub snow_to_graupel_collection: T,
    /// rain -> graupel: immersion freezing after Bigg (1953), LFO83 Eq. 45.
    pub rain_to_graupel: T,
    /// rain -> graupel: supercooled rain collected by graupel, which freezes
    /// on it (LFO83's PGACR term; their Eq. 42 kernel with rain in place of
    /// snow): pi^2 E N0r N0g |Vg - Vr| (rho_w/rho) [5/(lr^6 lg) +
    /// 2/(lr^5 lg^2) + 0.5/(lr^4 lg^3)], E = 1 (LFO83), limited with the
    /// riming by the heat balance of wet growth ([`wet_growth_capacity`]).
    pub rain_to_graupel_collection: T,
    /// rain -> graupel: drops frozen by collisions with cloud ice (LFO83's
    /// P_iacr, their Eq. 26: every drop that collects a crystal freezes, the
    /// rate n_i (pi/4) integral D^2 V (pi/6) rho_w D^3 N dD), no faster than
    /// the drops can lose the latent heat: the heat balance of Musil (1970)
    /// applied to the rain population with its surface at 0 degC
    /// ([`wet_growth_capacity`] with rain's ventilation). That bound fades
    /// to zero at 0 degC in saturated air, so the rate is continuous where
    /// melting takes over.
    pub rain_to_graupel_ice_contact: T,
    /// ice -> graupel: crystals collected by rain (LFO83's P_raci, their
    /// Eq. 25: E q_i (pi/4) integral D^2 V N dD, E = 1), which end in the
    /// frozen drops.
    pub ice_to_graupel_by_rain: T,
    /// cloud -> ice: immersion freezing of the cloud droplets after Bigg
    /// (1953), the rain law of LFO83 Eq. 45 for droplets of one size:
    /// q_c B' [exp(A' (T0 - T)) - 1] (pi/6) d^3, each frozen droplet a new
    /// crystal (optional, `microphysics.droplet_freezing`).
    pub cloud_to_ice_freezing: T,
    /// snow -> rain: melting, LFO83 Eq. 32 (conduction term).
    pub snow_to_rain: T,
    /// graupel -> rain: melting, LFO83 Eq. 47 (conduction term).
    pub graupel_to_rain: T,
    /// vapour -> cloud: condensation (negative: evaporation) that keeps
    /// the vapour at liquid saturation while cloud water exists, the
    /// equilibrium the saturation adjustment assumes, held inside the
    /// integration ([`cloud_equilibrium`]).
    pub vapour_to_cloud: T,
    /// Rime-splinter number production (kg-1 s-1), Hallett & Mossop (1974).
    pub splinter_number: T,
    /// Crystals made by droplet freezing (kg-1 s-1): `cloud_to_ice_freezing`
    /// over the droplet mass.
    pub frozen_droplet_number: T,
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
    saturation_ratios_and_slope_of(t, p)
}

/// [`saturation_ratios_and_slope`] for each lane (the same bits).
#[inline(always)]
fn saturation_ratios_and_slope_of<T: Lane>(t: T, p: T) -> (T, T, T) {
    let (ew, ei, dew) = saturation_pressures_and_liquid_slope_of(t);
    let half = p * 0.5;
    let inv = T::splat(1.0) / (p - ew);
    let slope = T::select(ew.lt(half), p * EPSILON * inv * inv * dew, T::splat(0.0));
    let (ew, ei) = (ew.min(half), ei.min(half));
    (ew * EPSILON / (p - ew), ei * EPSILON / (p - ei), slope)
}

/// Hallett & Mossop (1974) splinter efficiency: 0 warmer than -3 degC and
/// colder than -8 degC, rising linearly to 1 at -5 degC (the triangular form
/// used by e.g. Cotton et al. 1986, JCAM 25; from memory).
#[inline(always)]
pub fn splinter_efficiency<T: Lane>(t: T) -> T {
    let tc = t - T_MELT;
    let upper = tc.ge(T::splat(-5.0)) & tc.le(T::splat(-3.0));
    let lower = tc.ge(T::splat(-8.0)) & tc.lt(T::splat(-5.0));
    T::select(
        upper,
        (T::splat(-3.0) - tc) / 2.0,
        T::select(lower, (tc + 8.0) / 3.0, T::splat(0.0)),
    )
}

/// The temperature-dependent collection efficiencies of ice particles of
/// LFO83: exp(0.025 dT) for snow (their Eq. 22) and exp(0.09 dT) for graupel
/// (their Eq. 41 form), dT = T - T0 (K). Computed from one exponential as
/// b^5 and b^18 with b = exp(0.005 dT) (exact identities; the repeated
/// products add a few units in the last place).
#[inline(always)]
pub fn collection_efficiencies<T: Lane>(dtc: T) -> (T, T) {
    let b = (dtc * 0.005).exp();
    let b2 = b * b;
    let b4 = b2 * b2;
    let b16 = (b4 * b4) * (b4 * b4);
    (b4 * b, b16 * b2)
}

/// 5/(ls^6 lg) + 2/(ls^5 lg^2) + 0.5/(ls^4 lg^3) of LFO83 Eq. 42 (m^7) for
/// slopes `ls` and `lg` (m-1), with two reciprocals instead of three
/// divisions.
#[inline(always)]
fn slope_sum<T: Lane>(ls: T, lg: T) -> T {
    let (a, b) = (T::splat(1.0) / ls, T::splat(1.0) / lg);
    let a2 = a * a;
    a2 * a2 * b * (a2 * 5.0 + a * 2.0 * b + b * 0.5 * b)
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
#[inline(always)]
pub fn wet_growth_capacity<T: Lane>(t: T, qv: T, rho: T, ventilation: T, ice_collected: T) -> T {
    let dt = T::splat(T_MELT) - t;
    let heat = ventilation
        * (2.0 * std::f64::consts::PI)
        * (dt * K_AIR + (T::splat(RHO_VAPOUR_SAT_T0) - rho * qv) * (L_VAPORISATION * PSI_VAPOUR))
        / rho
        + dt * C_ICE * ice_collected;
    (heat / (T::splat(L_FUSION) - dt * C_WATER)).max(T::splat(0.0))
}

/// All process rates for one cell.
pub fn rates(s: &CellState, env: CellEnv, p: &MicroParams) -> Rates {
    rates_of(s, &env, p)
}

/// All process rates for one cell (`T = f64`) or for a group of cells side
/// by side (`T = `[`Cells`]): lane by lane the same arithmetic, so the same
/// bits apart from exp, ln and cbrt (`crate::physics::lanes`). Where a rate
/// applies only under a condition (a species present, the air below 0 degC,
/// subsaturation), it is computed for every lane and kept where the
/// condition holds; a block is skipped when it holds in no lane.
#[inline(always)]
pub fn rates_of<T: Lane>(s: &CellState<T>, env: &CellEnv<T>, p: &MicroParams) -> Rates<T> {
    let mut r = Rates::<T>::default();
    let zero = T::splat(0.0);
    let q = |i: usize| s.q[i].max(zero);
    let (qv, qc, qr, qi, qs, qg) = (q(VAPOUR), q(CLOUD), q(RAIN), q(ICE), q(SNOW), q(GRAUPEL));
    let t = s.t;
    let rho = env.rho;
    let cold = t.lt(T::splat(T_MELT));
    let (qsw, qsi, qsw_slope) = saturation_ratios_and_slope_of(t, env.p);
    let (rain, snow, graupel): (&Exponential, &Exponential, &Exponential) =
        (&p.rain, &p.snow, &p.graupel);
    // Slopes and their powers once per evaluation: they feed every integral
    // below (and powf dominates the cost of this function). Each comes with
    // whether its species holds mass.
    let ((has_r, lr), (has_s, ls), (has_g, lg)) = (
        rain.slope_powers_masked(rho, qr),
        snow.slope_powers_masked(rho, qs),
        graupel.slope_powers_masked(rho, qg),
    );
    let [cr, cs, cg] = env.corrections;
    let air = env.air;

    // Warm rain.
    r.cloud_to_rain_autoconversion =
        (qc - p.autoconversion_threshold).max(zero) * p.autoconversion_rate;
    r.cloud_to_rain_accretion = T::select(has_r, rain.sweep_at(&lr, cr), zero) * qc;
    // Reciprocals shared by several rates keep the divisions few.
    let inv_t2 = T::splat(1.0) / (t * t);
    let inv_rho = env.inv_rho;
    let sw = qv / qsw;
    let evaporating = sw.lt(T::splat(1.0)) & has_r;
    if evaporating.any() {
        // LFO83 Eq. 52: A' = L_v^2/(K_a R_v T^2), B' = 1/(rho q_sw psi).
        let ab = inv_t2 * (L_VAPORISATION * L_VAPORISATION / (K_AIR * R_VAPOUR))
            + inv_rho / (qsw * PSI_VAPOUR);
        let rate = (T::splat(1.0) - sw)
            * (2.0 * std::f64::consts::PI)
            * rain.ventilation_at(&lr, air)
            * inv_rho
            / ab;
        r.rain_to_vapour = T::select(evaporating, rate, zero);
    }

    // Vapour and ice: A'' = L_s^2/(K_a R_v T^2), B'' = 1/(rho q_si psi).
    let si = qv / qsi;
    let ab_ice = inv_t2 * (L_SUBLIMATION * L_SUBLIMATION / (K_AIR * R_VAPOUR))
        + inv_rho / (qsi * PSI_VAPOUR);
    let inv_ab_ice = T::splat(1.0) / ab_ice;
    let depositing = cold | si.lt(T::splat(1.0));
    let crystals = qi.gt(zero) & s.n_ice.gt(zero);
    if (crystals & depositing).any() {
        let c = dsd::ice::diameter_of(qi, s.n_ice) * 0.5;
        let rate = s.n_ice * 4.0 * std::f64::consts::PI * c * (si - 1.0) * inv_ab_ice;
        r.vapour_to_ice = T::select(crystals & depositing, rate, zero);
    }
    for (rate, dist, l, has) in [
        (&mut r.vapour_to_snow, &snow, &ls, has_s),
        (&mut r.vapour_to_graupel, &graupel, &lg, has_g),
    ] {
        if (depositing & has).any() {
            let v = (si - 1.0)
                * (2.0 * std::f64::consts::PI)
                * dist.ventilation_at(l, air)
                * inv_rho
                * inv_ab_ice;
            *rate = T::select(depositing & has, v, zero);
        }
    }

    // Riming and collection.
    let snow_sweep = T::select(has_s, snow.sweep_at(&ls, cs), zero);
    let graupel_sweep = T::select(has_g, graupel.sweep_at(&lg, cg), zero);
    let by_snow = snow_sweep * qc;
    let by_graupel = graupel_sweep * qc;
    if cold.any() {
        // The rates below 0 degC (lanes where `cold` holds; the others keep
        // what `r` holds): collection, riming with wet growth and shedding,
        // rime splinters, conversions, contact and immersion freezing.
        let keep = |field: &mut T, value: T| *field = T::select(cold, value, *field);
        let dtc = t - T_MELT;
        let (e_snow, e_graupel) = collection_efficiencies(dtc);
        keep(
            &mut r.ice_to_snow,
            e_snow * 1e-3 * (qi - p.ice_to_snow_threshold).max(zero),
        );
        keep(&mut r.ice_to_snow_collection, snow_sweep * e_snow * qi);
        let ice_to_graupel = graupel_sweep * e_graupel * qi;
        keep(&mut r.ice_to_graupel, ice_to_graupel);
        // Graupel's mass-weighted speed, for both of its collections below.
        let vg = T::select(has_g, graupel.mass_weighted_speed_at(&lg, cg), zero);
        let mut snow_to_graupel_collection = zero;
        if (has_s & has_g).any() {
            // LFO83 Eq. 42: pi^2 E N0g N0s |Vg - Vs| (rho_s/rho)
            //   [5/(ls^6 lg) + 2/(ls^5 lg^2) + 0.5/(ls^4 lg^3)].
            let dv = (vg - snow.mass_weighted_speed_at(&ls, cs)).abs();
            let v = e_graupel
                * std::f64::consts::PI.powi(2)
                * graupel.n0
                * snow.n0
                * dv
                * (inv_rho * snow.rho_p)
                * slope_sum(ls.lambda, lg.lambda);
            snow_to_graupel_collection = T::select(has_s & has_g, v, zero);
            keep(
                &mut r.snow_to_graupel_collection,
                snow_to_graupel_collection,
            );
        }
        let mut by_graupel = by_graupel;
        if has_g.any() {
            // Supercooled rain collected by graupel (LFO83 PGACR), then the
            // heat balance of wet growth on everything liquid graupel collects.
            let mut rain_collected = zero;
            if p.rain_ice_collection && (has_r & has_g).any() {
                let dv = (vg - rain.mass_weighted_speed_at(&lr, cr)).abs();
                let v = dv
                    * (std::f64::consts::PI.powi(2) * graupel.n0 * rain.n0)
                    * (inv_rho * RHO_WATER)
                    * slope_sum(lr.lambda, lg.lambda);
                rain_collected = T::select(has_r & has_g, v, zero);
            }
            let liquid = by_graupel + rain_collected;
            let wetting = has_g & liquid.gt(zero);
            if wetting.any() {
                let capacity = wet_growth_capacity(
                    t,
                    qv,
                    rho,
                    graupel.ventilation_at(&lg, air),
                    ice_to_graupel + snow_to_graupel_collection,
                );
                // Wet growth: what cannot freeze is shed (collected cloud
                // water) or not kept (rain).
                let wet = wetting & liquid.gt(capacity);
                if wet.any() {
                    let f = capacity / liquid;
                    keep(
                        &mut r.cloud_to_rain_shedding,
                        T::select(wet, by_graupel * (T::splat(1.0) - f), zero),
                    );
                    by_graupel = T::select(wet, by_graupel * f, by_graupel);
                    rain_collected = T::select(wet, rain_collected * f, rain_collected);
                }
            }
            keep(&mut r.rain_to_graupel_collection, rain_collected);
        }
        let rimed = by_snow + by_graupel;
        if p.rime_splintering {
            let f = splinter_efficiency(t);
            let number = f * p.splinters_per_kg_rime * rimed;
            keep(&mut r.splinter_number, number);
            keep(
                &mut r.cloud_to_ice_splinters,
                (number * p.splinter_mass).min(rimed),
            );
        }
        let share = T::select(rimed.gt(zero), r.cloud_to_ice_splinters / rimed, zero);
        keep(&mut r.cloud_to_snow, by_snow * (T::splat(1.0) - share));
        keep(
            &mut r.cloud_to_graupel,
            by_graupel * (T::splat(1.0) - share),
        );
        let riming_snow = cold & by_snow.gt(zero);
        if riming_snow.any() {
            let v = e_graupel * 1e-3 * (qs - p.snow_to_graupel_threshold).max(zero);
            r.snow_to_graupel = T::select(riming_snow, v, r.snow_to_graupel);
        }
        let crystals = s.n_ice.gt(zero) & qi.gt(zero);
        let contact = cold & crystals & has_r;
        if p.rain_ice_contact_freezing && contact.any() {
            // LFO83 P_raci and P_iacr: drops collect crystals and freeze,
            // within the heat the drops can give off (Musil 1970).
            let by_rain = rain.sweep_at(&lr, cr) * qi;
            let frozen = s.n_ice * rain.mass_sweep_at(&lr, cr);
            let capacity = wet_growth_capacity(t, qv, rho, rain.ventilation_at(&lr, air), by_rain);
            r.ice_to_graupel_by_rain = T::select(contact, by_rain, r.ice_to_graupel_by_rain);
            r.rain_to_graupel_ice_contact =
                T::select(contact, frozen.min(capacity), r.rain_to_graupel_ice_contact);
        }
        // The supercooling factor exp(A' (T0 - T)) - 1 of Bigg's (1953)
        // freezing probability B' [exp(A' (T0 - T)) - 1] per unit volume and
        // time, shared by rain and droplets and evaluated only when one of
        // them freezes by it.
        let freezing_droplets = if p.droplet_freezing {
            cold & qc.gt(zero)
        } else {
            cold & !cold
        };
        let rain_freezing = cold & has_r;
        if (freezing_droplets | rain_freezing).any() {
            let bigg = ((T::splat(T_MELT) - t) * p.bigg_a).exp() - 1.0;
            if freezing_droplets.any() {
                // A droplet of volume v freezes with probability B' bigg v per second.
                let v = qc * p.bigg_b * bigg * p.droplet_volume();
                r.cloud_to_ice_freezing = T::select(freezing_droplets, v, r.cloud_to_ice_freezing);
                r.frozen_droplet_number = T::select(
                    freezing_droplets,
                    v / p.droplet_mass(),
                    r.frozen_droplet_number,
                );
            }
            if rain_freezing.any() {
                // LFO83 Eq. 45 (Bigg 1953): 20 pi^2 B' N0r (rho_w/rho) [exp(A'(T0-T)) - 1] / lambda_r^7.
                let v = (inv_rho * RHO_WATER)
                    * (20.0 * std::f64::consts::PI.powi(2) * p.bigg_b * rain.n0)
                    * bigg
                    / lr.lambda.powi(7);
                r.rain_to_graupel = T::select(rain_freezing, v, r.rain_to_graupel);
            }
        }
    }
    let warm = !cold;
    if warm.any() {
        r.cloud_to_rain_shedding = T::select(warm, by_snow + by_graupel, r.cloud_to_rain_shedding);
        // LFO83 Eqs. 32 and 47, conduction term: 2 pi K_a (T - T0) N0 [ventilation] / (rho L_f).
        for (rate, dist, l, has) in [
            (&mut r.snow_to_rain, &snow, &ls, has_s),
            (&mut r.graupel_to_rain, &graupel, &lg, has_g),
        ] {
            if (warm & has).any() {
                let v = (t - T_MELT)
                    * (2.0 * std::f64::consts::PI * K_AIR / L_FUSION)
                    * dist.ventilation_at(l, air)
                    * inv_rho;
                *rate = T::select(warm & has, v, zero);
            }
        }
    }
    r.limit_sinks(&[qv, qc, qr, qi, qs, qg]);
    if p.cloud_equilibrium {
        let cloudy = qc.gt(zero);
        if cloudy.any() {
            r.vapour_to_cloud = T::select(cloudy, cloud_equilibrium(&r, qsw_slope, qc), zero);
        }
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
#[inline(always)]
pub fn cloud_equilibrium<T: Lane>(r: &Rates<T>, slope: T, qc: T) -> T {
    let (vapour, heat) = r.vapour_and_heat(T::splat(0.0));
    let theta = heat * (1.0 / CP_DRY);
    let c = (vapour - slope * theta) / (slope * L_VAPORISATION / CP_DRY + 1.0);
    let room = (qc / SINK_TIMESCALE - r.cloud_sinks()).max(T::splat(0.0));
    T::select(c.lt(T::splat(0.0)), c.max(-room), c)
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

impl<T: Lane> Rates<T> {
    /// Every mass transfer rate, in [`TRANSFER_PAIRS`] order; deposition is
    /// negative when it is sublimation.
    #[inline(always)]
    pub fn transfer_rates(&self) -> [T; N_TRANSFERS] {
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
    #[inline(always)]
    fn vapour_and_heat(&self, cloud: T) -> (T, T) {
        let dep = self.vapour_to_ice + self.vapour_to_snow + self.vapour_to_graupel;
        (
            -dep + self.rain_to_vapour - cloud,
            dep * L_SUBLIMATION - (self.rain_to_vapour - cloud) * L_VAPORISATION
                + (self.freezing() - self.melting()) * L_FUSION,
        )
    }

    /// Mass frozen per time (kg kg-1 s-1): liquid that becomes ice.
    #[inline(always)]
    fn freezing(&self) -> T {
        self.cloud_to_snow
            + self.cloud_to_graupel
            + self.cloud_to_ice_splinters
            + self.rain_to_graupel
            + self.rain_to_graupel_collection
            + self.rain_to_graupel_ice_contact
            + self.cloud_to_ice_freezing
    }

    /// Mass melted per time (kg kg-1 s-1).
    #[inline(always)]
    fn melting(&self) -> T {
        self.snow_to_rain + self.graupel_to_rain
    }

    /// The cloud water's sinks other than evaporation (kg kg-1 s-1).
    #[inline(always)]
    fn cloud_sinks(&self) -> T {
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
#[inline(always)]
pub fn tendencies<T: Lane>(s: &CellState<T>, r: &Rates<T>) -> ([T; 6], T, T) {
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
    let dn = r.splinter_number + r.frozen_droplet_number;
    let lost = r.ice_to_snow
        + r.ice_to_snow_collection
        + r.ice_to_graupel
        + r.ice_to_graupel_by_rain
        + (-r.vapour_to_ice).max(T::splat(0.0));
    let dn = T::select(qi.gt(T::splat(0.0)), dn - s.n_ice / qi * lost, dn);
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

impl<T: Lane> Rates<T> {
    /// Applies the sink limiter to mixing ratios `q` (Species order). A
    /// factor of 1 leaves a rate's bits unchanged, so the factors are
    /// applied without testing them.
    #[inline(always)]
    pub fn limit_sinks(&mut self, q: &[T; 6]) {
        let zero = T::splat(0.0);
        // A plain loop: `array::map` is not always inlined.
        let mut clipped = *q;
        for x in clipped.iter_mut() {
            *x = x.max(zero);
        }
        let q = clipped;
        let scale = |sink: T, q: T| {
            let cap = q / SINK_TIMESCALE;
            T::select(sink.gt(cap), cap / sink, T::splat(1.0))
        };
        // Vapour: deposition (positive parts).
        let dep = self.vapour_to_ice.max(zero)
            + self.vapour_to_snow.max(zero)
            + self.vapour_to_graupel.max(zero);
        let f = scale(dep, q[VAPOUR]);
        for r in [
            &mut self.vapour_to_ice,
            &mut self.vapour_to_snow,
            &mut self.vapour_to_graupel,
        ] {
            *r = T::select(r.gt(zero), *r * f, *r);
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
        for r in [
            &mut self.cloud_to_ice_freezing,
            &mut self.frozen_droplet_number,
            &mut self.cloud_to_rain_autoconversion,
            &mut self.cloud_to_rain_accretion,
            &mut self.cloud_to_snow,
            &mut self.cloud_to_graupel,
            &mut self.cloud_to_rain_shedding,
            &mut self.cloud_to_ice_splinters,
            &mut self.splinter_number,
        ] {
            *r *= f;
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
            + (-self.vapour_to_ice).max(zero);
        let f = scale(sinks, q[ICE]);
        self.ice_to_snow *= f;
        self.ice_to_snow_collection *= f;
        self.ice_to_graupel *= f;
        self.ice_to_graupel_by_rain *= f;
        scale_sublimation(&mut self.vapour_to_ice, f);
        // Snow.
        let sinks = self.snow_to_graupel
            + self.snow_to_graupel_collection
            + self.snow_to_rain
            + (-self.vapour_to_snow).max(zero);
        let f = scale(sinks, q[SNOW]);
        self.snow_to_graupel *= f;
        self.snow_to_graupel_collection *= f;
        self.snow_to_rain *= f;
        scale_sublimation(&mut self.vapour_to_snow, f);
        // Graupel.
        let f = scale(
            self.graupel_to_rain + (-self.vapour_to_graupel).max(zero),
            q[GRAUPEL],
        );
        self.graupel_to_rain *= f;
        scale_sublimation(&mut self.vapour_to_graupel, f);
    }
}

/// Scales a deposition rate `r` by the sink factor `f` of its species
/// where it is negative (sublimation, a sink of the species); deposition
/// is scaled with the vapour's sinks instead.
#[inline(always)]
fn scale_sublimation<T: Lane>(r: &mut T, f: T) {
    *r = T::select(r.lt(T::splat(0.0)), *r * f, *r);
}
