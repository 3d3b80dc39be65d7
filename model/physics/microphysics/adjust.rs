//! Instantaneous adjustments applied outside the ODE integration: saturation
//! adjustment of cloud water, homogeneous freezing of cloud water below
//! -40 degC, melting of cloud ice above 0 degC and ice nucleation.

use super::params::MicroParams;
use super::rates::{saturation_ratios, CellState};
use crate::physics::constants::{CP_DRY, EPSILON, L_FUSION, L_SUBLIMATION, L_VAPORISATION, T_MELT};
use crate::physics::lanes::{Lane, Mask};
use crate::physics::microphysics::species::{CLOUD, ICE, VAPOUR};

/// Temperature of homogeneous freezing of cloud droplets (K): -40 degC
/// (common practice; e.g. Pruppacher & Klett 1997, ch. 7).
pub const T_HOMOGENEOUS: f64 = T_MELT - 40.0;

/// L_v / c_p (K per kg kg-1), the warming per unit condensate.
const L_OVER_CP: f64 = L_VAPORISATION / CP_DRY;

/// Saturation adjustment (condensation/evaporation of cloud water with latent
/// heating) at pressure `p` (Pa): finds the condensate c such that
/// q_v - c = q_sw(T + L_v c / c_p), by Newton's method on that equation (the
/// classic isobaric adjustment, e.g. Soong & Ogura 1973, JAS 30, here with
/// Murphy & Koop 2005 saturation, tabulated as in `saturation_ratios`, whose
/// exact derivative gives the Newton slope). Evaporation is limited to the
/// cloud water present. Conserves q_v + q_c and the liquid-water static
/// energy c_p T - L_v q_c exactly. Returns the condensate formed (kg kg-1).
pub fn saturation_adjustment(s: &mut CellState, p: f64) -> f64 {
    let (qv, qc, t, c) = saturation_adjustment_of(s.q[VAPOUR], s.q[CLOUD], s.t, p);
    (s.q[VAPOUR], s.q[CLOUD], s.t) = (qv, qc, t);
    c
}

/// [`saturation_adjustment`] lane by lane ([`crate::physics::lanes`]):
/// from vapour `qv0`, cloud water `qc0` (kg kg-1) and temperature `t0` (K)
/// at pressure `p` (Pa), the adjusted (q_v, q_c, T) and the condensate
/// formed. Each lane takes the one-cell function's operations in its order
/// (its Newton iterations stop where that cell's would; the saturation
/// table gives the same bits lane by lane), so a lane's result is the
/// one-cell result bit for bit.
#[inline(always)]
pub fn saturation_adjustment_of<T: Lane>(qv0: T, qc0: T, t0: T, p: T) -> (T, T, T, T) {
    let zero = T::splat(0.0);
    // f(c) and f'(c) come from a function, not a closure, so that they are
    // compiled with the caller's instruction set.
    let mut fd = adjustment_residual(zero, qv0, t0, p);
    let subsaturated = fd.0.le(zero);
    // Subsaturated without cloud to evaporate: nothing changes.
    let unchanged = subsaturated & qc0.le(zero);
    if unchanged.all() {
        return (qv0, qc0, t0, zero);
    }
    // Subsaturated air that stays subsaturated (or just saturated) with all
    // its cloud water evaporated: f decreases with c, so the root lies at or
    // below -qc0 and the clipped result below is -qc0 itself. The Newton
    // iterations would reach the same value; skipping them matters where
    // eddy mixing carries traces of cloud water into clear air.
    let maybe_dry = subsaturated & !unchanged;
    let dries = if maybe_dry.any() {
        maybe_dry & adjustment_residual(-qc0, qv0, t0, p).0.le(zero)
    } else {
        maybe_dry
    };
    // Newton converges quadratically: the error after a step of size d is
    // about |f''/(2 f')| d^2, with f''/(2 f') of order 1e2 kg kg-1 (r_s'' (L_v/c_p)^2
    // over 2 |f'|, from Clausius-Clapeyron) for tropospheric states, so after
    // a step below 1e-11 kg kg-1 the remaining error (< 1e-19 kg kg-1) is
    // below the rounding of q_v and no further evaluation is needed.
    let mut c = zero;
    let mut iterating = !(unchanged | dries);
    for _ in 0..30 {
        if !iterating.any() {
            break;
        }
        let step = fd.0 / fd.1;
        c = T::select(iterating, c - step, c);
        iterating = iterating & !step.abs().lt(T::splat(1e-11));
        if iterating.any() {
            fd = adjustment_residual(c, qv0, t0, p);
        }
    }
    // Cannot evaporate more cloud than exists (all of it where it dries).
    let c = T::select(dries, -qc0, c.max(-qc0));
    let keep = |x: T, adjusted: T| T::select(unchanged, x, adjusted);
    (
        keep(qv0, qv0 - c),
        keep(qc0, qc0 + c),
        keep(t0, t0 + c * L_OVER_CP),
        keep(zero, c),
    )
}

/// f(c) = q_v0 - c - r_s(T0 + L_v c / c_p, p) of the saturation adjustment
/// and its derivative f'(c), lane by lane; r_s = eps e/(p - e), so
/// dr_s/dT = eps p/(p - e)^2 de/dT (zero where e is capped at p/2, as in
/// `saturation_ratios`).
#[inline(always)]
fn adjustment_residual<T: Lane>(c: T, qv0: T, t0: T, p: T) -> (T, T) {
    let t = t0 + c * L_OVER_CP;
    let (e, _, de) =
        crate::physics::atmosphere::saturation::saturation_pressures_and_liquid_slope_of(t);
    let half_p = p * 0.5;
    let below = e.lt(half_p);
    let (e, de) = (
        T::select(below, e, half_p),
        T::select(below, de, T::splat(0.0)),
    );
    let inv = T::splat(1.0) / (p - e);
    let r = e * EPSILON * inv;
    let dr = p * EPSILON * inv * inv * de;
    (qv0 - c - r, T::splat(-1.0) - dr * L_OVER_CP)
}

/// Homogeneous freezing of cloud water below -40 degC and melting of cloud
/// ice above 0 degC, both instantaneous (common practice in bulk schemes;
/// LFO83 treat cloud-ice melting the same way) and both limited by the heat
/// they exchange: melting takes no more ice than the heat above 0 degC can
/// melt, and freezing no more water than the supercooling below -40 degC can
/// take up, c_p (T_h - T)/L_f, so that neither carries the cell across its
/// own threshold (isobaric energy balance, first law; this model's
/// assumption, the form an instantaneous threshold process takes when its
/// latent heat is kept). LFO83 freeze all cloud water at once; that warms a
/// cell at the -40 degC level above it (by 0.33 K per g/kg), the cloud water
/// arriving next stays liquid until the cell has cooled again, and the cell
/// that holds the level freezes on and off at a rhythm set by the step
/// (docs/numerics.md). Frozen droplets become crystals of
/// [`MicroParams::droplet_mass`]; melted ice becomes cloud water.
pub fn freeze_or_melt(s: &mut CellState, p: &MicroParams) {
    if s.t < T_HOMOGENEOUS && s.q[CLOUD] > 0.0 {
        let qc = s.q[CLOUD].min(CP_DRY * (T_HOMOGENEOUS - s.t) / L_FUSION);
        s.q[CLOUD] -= qc;
        s.q[ICE] += qc;
        s.n_ice += qc / p.droplet_mass();
        s.t += L_FUSION * qc / CP_DRY;
    } else if s.t > T_MELT && s.q[ICE] > 0.0 {
        // Melt only as much as the heat above 0 degC allows.
        let melt = s.q[ICE].min(CP_DRY * (s.t - T_MELT) / L_FUSION);
        let frac = melt / s.q[ICE];
        s.q[ICE] -= melt;
        s.n_ice *= 1.0 - frac;
        s.q[CLOUD] += melt;
        s.t -= L_FUSION * melt / CP_DRY;
    }
}

/// Ice nucleation: raises the crystal number toward the active-nucleus
/// number of the chosen parameterisation (per kg of air: N / rho), each new
/// crystal taking `nucleated_mass` from the vapour (deposition heating).
/// Returns the mass nucleated (kg kg-1).
pub fn nucleate(s: &mut CellState, p_air: f64, rho: f64, p: &MicroParams) -> f64 {
    // No nuclei are active at or above 0 degC (`MicroParams::nuclei`).
    if s.t >= T_MELT {
        return 0.0;
    }
    let (_, qsi) = saturation_ratios(s.t, p_air);
    let si = s.q[VAPOUR] / qsi;
    let target = p.nuclei(s.t, si) / rho;
    let new = (target - s.n_ice).max(0.0);
    if new <= 0.0 {
        return 0.0;
    }
    // Never take the vapour below ice saturation.
    let mass = (new * p.nucleated_mass).min((s.q[VAPOUR] - qsi).max(0.0));
    if mass <= 0.0 {
        return 0.0;
    }
    s.n_ice += mass / p.nucleated_mass;
    s.q[VAPOUR] -= mass;
    s.q[ICE] += mass;
    s.t += L_SUBLIMATION * mass / CP_DRY;
    mass
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cell(t: f64, qc: f64) -> CellState {
        CellState {
            q: [1e-4, qc, 0.0, 0.0, 0.0, 0.0],
            n_ice: 0.0,
            t,
        }
    }

    #[test]
    fn homogeneous_freezing_keeps_its_latent_heat_below_the_threshold() {
        // First law at constant pressure: c_p dT = L_f dq_frozen. Cloud water
        // at -45 degC freezes entirely (1 g/kg releases 0.33 K of heat, far
        // less than the 5 K of supercooling); at -40.1 degC only what warms
        // the cell to -40 degC freezes, the rest stays liquid at the threshold.
        let p = MicroParams::default();
        let mut cold = cell(T_HOMOGENEOUS - 5.0, 1e-3);
        freeze_or_melt(&mut cold, &p);
        assert_eq!(cold.q[CLOUD], 0.0);
        assert!((cold.t - (T_HOMOGENEOUS - 5.0 + L_FUSION * 1e-3 / CP_DRY)).abs() < 1e-12);
        let mut edge = cell(T_HOMOGENEOUS - 0.1, 1e-3);
        let h0 = CP_DRY * edge.t - L_FUSION * (edge.q[ICE]);
        freeze_or_melt(&mut edge, &p);
        let frozen = 0.1 * CP_DRY / L_FUSION;
        assert!((edge.q[ICE] - frozen).abs() < 1e-15, "{}", edge.q[ICE]);
        assert!((edge.q[CLOUD] - (1e-3 - frozen)).abs() < 1e-15);
        assert!((edge.t - T_HOMOGENEOUS).abs() < 1e-9, "{}", edge.t);
        // The enthalpy c_p T - L_f q_ice is conserved, and so is the water.
        let h1 = CP_DRY * edge.t - L_FUSION * edge.q[ICE];
        assert!((h1 - h0).abs() < 1e-9 * h0.abs());
        assert!((edge.q[CLOUD] + edge.q[ICE] - 1e-3).abs() < 1e-18);
        // At the threshold itself nothing freezes.
        let mut at = cell(T_HOMOGENEOUS, 1e-3);
        freeze_or_melt(&mut at, &p);
        assert_eq!(at.q[CLOUD], 1e-3);
    }
}
