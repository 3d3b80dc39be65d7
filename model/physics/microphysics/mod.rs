//! Bulk mixed-phase microphysics: single-moment mixing ratios of cloud
//! water, rain, cloud ice, snow and graupel, with a predicted cloud-ice number.
//!
//! Each step and cell, in order: instantaneous homogeneous freezing below
//! -40 degC or melting of cloud ice above 0 degC (each limited by its latent
//! heat), ice nucleation
//! ([`adjust`]); the process rates of [`rates`] integrated over the step on
//! (q_v, q_c, q_r, q_i, q_s, q_g, n_i, T) with the configured adaptive
//! Runge-Kutta pair ([`integrator`], or the `ode_solvers` Dormand-Prince
//! integrator as reference); mass-neutral removal of negative values (a
//! negative hydrometeor is set to zero and the same mass taken from the
//! vapour; only if the vapour cannot give it is mass created, and that is
//! booked); finally saturation adjustment of cloud water. Cells where no rate
//! can act skip the integration. Every process, its equation, source and
//! units: docs/microphysics.md.
//!
//! With `microphysics.scheme = "prescribed"` the hydrometeor profiles are
//! imposed instead ([`prescribed`]); with `"off"` nothing happens here.

pub mod adjust;
pub mod dsd;
pub mod integrator;
pub mod params;
pub mod prescribed;
pub mod rates;
pub mod species;

use crate::physics::microphysics::species::{CLOUD, GRAUPEL, ICE, RAIN, SNOW, VAPOUR};
use ode_solvers::{Dopri5, OutputType, SVector, System};
use params::{Integrator, MicroParams};
use rates::{CellEnv, CellState};

named_choice! {
    /// Which microphysics runs (`microphysics.scheme`). The bulk scheme's
    /// parameters are the experiment's [`MicroParams`], which every mode also
    /// uses for size distributions and fall speeds; the prescribed mode's
    /// layers are [`prescribed::PrescribedHydrometeors`].
    pub enum Mode {
        Bulk = "bulk",
        Prescribed = "prescribed",
        Off = "off",
    }
}

/// State of the ode_solvers reference integration: the 8 cell variables,
/// then the time integrals of the N_TRANSFERS mass transfers as extra
/// variables (that crate has no quadrature outside the error control).
const NV: usize = 8 + rates::N_TRANSFERS;
type ReferenceVector = SVector<f64, NV>;

/// The cell's process ODE in the form ode_solvers integrates.
struct CellOde<'a> {
    env: CellEnv,
    params: &'a MicroParams,
}

impl System<f64, ReferenceVector> for CellOde<'_> {
    fn system(&self, _t: f64, y: &ReferenceVector, dy: &mut ReferenceVector) {
        let mut state = [0.0; 8];
        state.copy_from_slice(&y.as_slice()[..8]);
        let (mut d, mut w) = ([0.0; 8], [0.0; rates::N_TRANSFERS]);
        evaluate(&state, self.env, self.params, &mut d, &mut w);
        dy.as_mut_slice()[..8].copy_from_slice(&d);
        dy.as_mut_slice()[8..].copy_from_slice(&w);
    }
}

/// The right-hand side of a cell's process ODE: the derivative `dy` of the
/// state (q_v..q_g, n_i, T) and the transfer rates `w` at state `y`.
fn evaluate(
    y: &[f64; 8],
    env: CellEnv,
    params: &MicroParams,
    dy: &mut [f64; 8],
    w: &mut [f64; rates::N_TRANSFERS],
) {
    let s = CellState {
        q: [y[0], y[1], y[2], y[3], y[4], y[5]],
        n_ice: y[6],
        t: y[7],
    };
    let r = rates::rates(&s, env, params);
    let (dq, dn, dt) = rates::tendencies(&s, &r);
    dy[..6].copy_from_slice(&dq);
    dy[6] = dn;
    dy[7] = dt;
    *w = r.transfer_rates();
}

/// Smallest mixing ratio treated as present (kg kg-1), by the
/// microphysics and the charging alike.
pub const TINY: f64 = 1e-14;

/// What one cell's step did, for the charge that follows the mass.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct CellReport {
    /// Mass created by clipping (kg kg-1), normally zero.
    pub created: f64,
    /// Cloud water frozen homogeneously (kg kg-1), out of what the first
    /// saturation adjustment left (`cloud_before_first_adjust +
    /// condensed_first`).
    pub frozen: f64,
    /// Cloud ice melted instantaneously (kg kg-1) out of `ice_before_melt`.
    pub melted: f64,
    pub ice_before_melt: f64,
    /// Mixing ratios entering the integration (kg kg-1).
    pub q_start: [f64; 6],
    /// Time integrals of the transfers, in `rates::TRANSFER_PAIRS` order (kg kg-1).
    pub transfers: [f64; rates::N_TRANSFERS],
    /// Cloud water before the first saturation adjustment (at the start of
    /// the step) and the condensate it formed (negative: evaporated) (kg kg-1).
    pub cloud_before_first_adjust: f64,
    pub condensed_first: f64,
    /// Cloud water before the final saturation adjustment and the condensate it
    /// formed (negative: evaporated) (kg kg-1).
    pub cloud_before_adjust: f64,
    pub condensed: f64,
}

/// Integrates the process ODE of one cell from `y0` (with its rates `first`)
/// over `dt` s with the configured integrator: returns the end state and
/// writes the time integrals of the transfers (kg kg-1) into `report`.
fn integrate_cell(
    y0: [f64; 8],
    first: ([f64; 8], [f64; rates::N_TRANSFERS]),
    env: CellEnv,
    p: &MicroParams,
    dt: f64,
    report: &mut CellReport,
) -> Result<[f64; 8], String> {
    let tol = integrator::Tolerance {
        relative: p.rtol,
        absolute: p.atol,
    };
    let rhs = |y: &[f64; 8], dy: &mut [f64; 8], w: &mut [f64; rates::N_TRANSFERS]| {
        evaluate(y, env, p, dy, w)
    };
    let fail = |e: &dyn std::fmt::Debug| {
        format!(
            "microphysics integration failed ({e:?}) at p = {:.0} Pa, T = {:.2} K",
            env.p, y0[7]
        )
    };
    match p.integrator {
        Integrator::BogackiShampine1989 => {
            integrator::integrate(&integrator::BOGACKI_SHAMPINE_1989, rhs, y0, first, dt, tol)
                .map(|o| {
                    report.transfers = o.integrals;
                    o.y
                })
                .map_err(|e| fail(&e))
        }
        Integrator::DormandPrince1980 => {
            integrator::integrate(&integrator::DORMAND_PRINCE_1980, rhs, y0, first, dt, tol)
                .map(|o| {
                    report.transfers = o.integrals;
                    o.y
                })
                .map_err(|e| fail(&e))
        }
        Integrator::OdeSolversDopri5 => {
            let mut init = [0.0; NV];
            init[..8].copy_from_slice(&y0);
            let start = ReferenceVector::from_column_slice(&init);
            // Sparse output (every accepted step, the last at t = dt): the
            // dense output of ode_solvers 0.6 with an output increment equal
            // to the whole interval returns an extrapolated, wrong end value
            // (measured). The first trial step is the whole step, as in
            // `integrator`.
            let mut solver = Dopri5::from_param(
                CellOde { env, params: p },
                0.0,
                dt,
                dt,
                start,
                p.rtol,
                p.atol,
                0.9,
                0.04,
                0.2,
                10.0,
                dt,
                dt,
                100_000,
                1000,
                OutputType::Sparse,
            );
            solver.integrate().map_err(|e| fail(&e))?;
            let end = solver.y_out().last().copied().unwrap_or(start);
            let mut y = [0.0; 8];
            y.copy_from_slice(&end.as_slice()[..8]);
            report.transfers.copy_from_slice(&end.as_slice()[8..]);
            Ok(y)
        }
    }
}

/// Integrates one cell's processes over `dt` s and reports the transfers in
/// `report` (overwritten; passed in so the hot loop reuses one).
pub fn step_cell(
    s: &mut CellState,
    env: CellEnv,
    p: &MicroParams,
    dt: f64,
    report: &mut CellReport,
) -> Result<(), String> {
    *report = CellReport::default();
    // Condensation first: transport has lifted the air and left it
    // supersaturated over liquid; ice nucleation (exponential in the ice
    // supersaturation) and deposition must see the vapour that the cloud
    // water leaves, not the transient excess, or their rates depend on the
    // step (docs/numerics.md).
    report.cloud_before_first_adjust = s.q[CLOUD];
    report.condensed_first = adjust::saturation_adjustment(s, env.p);
    let (qc0, qi0) = (s.q[CLOUD], s.q[ICE]);
    adjust::freeze_or_melt(s, p);
    if s.q[CLOUD] < qc0 {
        report.frozen = qc0 - s.q[CLOUD];
    }
    if s.q[ICE] < qi0 {
        report.melted = qi0 - s.q[ICE];
        report.ice_before_melt = qi0;
    }
    adjust::nucleate(s, env.p, env.rho, p);
    report.q_start = s.q;
    // The process ODE is autonomous: if every rate vanishes at the start the
    // state cannot change, so the integration is skipped (e.g. warm cloud
    // below the autoconversion threshold with no precipitation). The rates
    // evaluated for this test are the first stage of the integration.
    // Without precipitation or ice, cloud water below the autoconversion
    // threshold is the only condensate and every rate is zero (each other
    // process needs rain, ice, snow or graupel), so the evaluation is skipped
    // (tests/analytic_microphysics.rs, light_cloud_alone_has_no_process_rates, guards
    // this against a process added later).
    let has_condensate = s.q[CLOUD..].iter().any(|&x| x > TINY);
    let only_light_cloud =
        s.q[RAIN..].iter().all(|&x| x <= 0.0) && s.q[CLOUD] <= p.autoconversion_threshold;
    if has_condensate && !only_light_cloud {
        let y0 = [
            s.q[VAPOUR],
            s.q[CLOUD],
            s.q[RAIN],
            s.q[ICE],
            s.q[SNOW],
            s.q[GRAUPEL],
            s.n_ice,
            s.t,
        ];
        let mut first = ([0.0; 8], [0.0; rates::N_TRANSFERS]);
        evaluate(&y0, env, p, &mut first.0, &mut first.1);
        if first.1.iter().any(|&w| w != 0.0) {
            let y = integrate_cell(y0, first, env, p, dt, report)?;
            *s = CellState {
                q: [y[0], y[1], y[2], y[3], y[4], y[5]],
                n_ice: y[6],
                t: y[7],
            };
        }
    }
    let mut created = 0.0;
    for i in 1..6 {
        if s.q[i] < 0.0 {
            s.q[VAPOUR] += s.q[i];
            s.q[i] = 0.0;
        }
    }
    if s.q[VAPOUR] < 0.0 {
        created = -s.q[VAPOUR];
        s.q[VAPOUR] = 0.0;
    }
    if s.q[ICE] <= 0.0 || s.n_ice < 0.0 {
        s.n_ice = 0.0;
    }
    report.created = created;
    report.cloud_before_adjust = s.q[CLOUD];
    report.condensed = adjust::saturation_adjustment(s, env.p);
    // A state that is not finite, or a temperature outside the validity of
    // the saturation formulas, means the integration has gone wrong; stop
    // with a message that says which.
    if let Some(i) = s.q.iter().position(|x| !x.is_finite()) {
        return Err(format!(
            "mixing ratio {i} (vapour, cloud, rain, ice, snow, graupel order) is {} at p = {:.0} Pa",
            s.q[i], env.p
        ));
    }
    let (lo, hi) = (
        crate::physics::atmosphere::saturation::LIQUID_T_MIN,
        crate::physics::atmosphere::saturation::LIQUID_T_MAX,
    );
    if !(lo..=hi).contains(&s.t) {
        return Err(format!(
            "temperature {:.3} K left the validity range [{lo}, {hi}] K of the Murphy & Koop (2005) saturation formulas at p = {:.0} Pa",
            s.t, env.p
        ));
    }
    Ok(())
}
