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

use crate::physics::lanes::{with_avx2, Cells, CellsMask, Lane, Mask, WIDTH};
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
        evaluate(&state, &self.env, self.params, &mut d, &mut w);
        dy.as_mut_slice()[..8].copy_from_slice(&d);
        dy.as_mut_slice()[8..].copy_from_slice(&w);
    }
}

/// The right-hand side of a cell's process ODE: the derivative `dy` of the
/// state (q_v..q_g, n_i, T) and the transfer rates `w` at state `y`.
#[inline(always)]
fn evaluate<T: Lane>(
    y: &[T; 8],
    env: &CellEnv<T>,
    params: &MicroParams,
    dy: &mut [T; 8],
    w: &mut [T; rates::N_TRANSFERS],
) {
    let s = cell_of(*y);
    let r = rates::rates_of(&s, env, params);
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
    rejected_trial: Option<f64>,
) -> Result<[f64; 8], String> {
    let tol = integrator::Tolerance {
        relative: p.rtol,
        absolute: p.atol,
    };
    let rhs = |y: &[f64; 8], dy: &mut [f64; 8], w: &mut [f64; rates::N_TRANSFERS]| {
        evaluate(y, &env, p, dy, w)
    };
    let fail = |why: String| {
        format!(
            "microphysics integration failed ({why}) at p = {:.0} Pa, T = {:.2} K; \
             microphysics.relative_tolerance and absolute_tolerance set how small its steps get",
            env.p, y0[7]
        )
    };
    let outcome = match p.integrator {
        Integrator::BogackiShampine1989 => {
            let pair = &integrator::BOGACKI_SHAMPINE_1989;
            integrator::integrate_from(pair, rhs, y0, first, dt, tol, rejected_trial)
        }
        Integrator::DormandPrince1980 => {
            let pair = &integrator::DORMAND_PRINCE_1980;
            integrator::integrate_from(pair, rhs, y0, first, dt, tol, rejected_trial)
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
            solver.integrate().map_err(|e| fail(format!("{e:?}")))?;
            let end = solver.y_out().last().copied().unwrap_or(start);
            let mut y = [0.0; 8];
            y.copy_from_slice(&end.as_slice()[..8]);
            report.transfers.copy_from_slice(&end.as_slice()[8..]);
            return Ok(y);
        }
    };
    let o = outcome.map_err(|e| {
        fail(match e {
            integrator::Failure::StepUnderflow { at } => {
                format!("its step fell below 1e-10 of the model step, {at:.3} s into it")
            }
            integrator::Failure::TooManySteps { at } => format!(
                "it needed more than {} steps, {at:.3} s into the model step",
                integrator::MAX_STEPS
            ),
        })
    })?;
    report.transfers = o.integrals;
    Ok(o.y)
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
    if prepare_cell(s, env, p, report) {
        let y0 = state_vector(s);
        let mut first = ([0.0; 8], [0.0; rates::N_TRANSFERS]);
        evaluate(&y0, &env, p, &mut first.0, &mut first.1);
        if first.1.iter().any(|&w| w != 0.0) {
            let y = integrate_cell(y0, first, env, p, dt, report, None)?;
            *s = cell_of(y);
        }
    }
    finish_cell(s, env, report)
}

/// The integrated variables of a cell: q_v..q_g, n_i, T.
fn state_vector(s: &CellState) -> [f64; 8] {
    [
        s.q[VAPOUR],
        s.q[CLOUD],
        s.q[RAIN],
        s.q[ICE],
        s.q[SNOW],
        s.q[GRAUPEL],
        s.n_ice,
        s.t,
    ]
}

/// The cell of integrated variables `y` ([`state_vector`]).
#[inline(always)]
fn cell_of<T: Copy>(y: [T; 8]) -> CellState<T> {
    CellState {
        q: [y[0], y[1], y[2], y[3], y[4], y[5]],
        n_ice: y[6],
        t: y[7],
    }
}

/// The part of a cell's step before the integration: the first saturation
/// adjustment, homogeneous freezing or melting, ice nucleation. Returns
/// whether any process rate can act, i.e. whether the rates must be
/// evaluated.
pub fn prepare_cell(
    s: &mut CellState,
    env: CellEnv,
    p: &MicroParams,
    report: &mut CellReport,
) -> bool {
    *report = CellReport::default();
    // Condensation first: transport has lifted the air and left it
    // supersaturated over liquid; ice nucleation (exponential in the ice
    // supersaturation) and deposition must see the vapour that the cloud
    // water leaves, not the transient excess, or their rates depend on the
    // step (docs/numerics.md).
    report.cloud_before_first_adjust = s.q[CLOUD];
    report.condensed_first = adjust::saturation_adjustment(s, env.p);
    prepare_adjusted(s, env, p, report)
}

/// The part of [`prepare_cell`] after its saturation adjustment (which
/// [`adjust_cells`] makes for groups of cells): freezing and melting,
/// nucleation, and whether the cell's rates can act.
pub fn prepare_adjusted(
    s: &mut CellState,
    env: CellEnv,
    p: &MicroParams,
    report: &mut CellReport,
) -> bool {
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
    has_condensate && !only_light_cloud
}

/// Which of a step's two saturation adjustments [`adjust_cells`] makes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Adjustment {
    /// At the start of the step, before the ice processes
    /// ([`prepare_cell`]); reported in `condensed_first`.
    First,
    /// At the end of the step ([`finish_cell`]); reported in `condensed`.
    Last,
}

with_avx2! {
    /// The saturation adjustment of every cell (`cells[k]` with its
    /// environment and report), [`WIDTH`] at a time
    /// ([`adjust::saturation_adjustment_of`]): each cell gets the bits the
    /// one-cell adjustment gives it. An AVX2 build is chosen at run time.
    pub fn adjust_cells(cells: &mut [(CellState, CellEnv, CellReport)], which: Adjustment) {
        let n = cells.len();
        for first in (0..n).step_by(WIDTH) {
            // A short last group repeats its last cell; those lanes are dropped.
            let lanes = |g: &dyn Fn(&(CellState, CellEnv, CellReport)) -> f64| {
                Cells::from_lanes(|i| g(&cells[(first + i).min(n - 1)]))
            };
            let (qv, qc, t, condensed) = adjust::saturation_adjustment_of(
                lanes(&|c| c.0.q[VAPOUR]),
                lanes(&|c| c.0.q[CLOUD]),
                lanes(&|c| c.0.t),
                lanes(&|c| c.1.p),
            );
            for (i, (s, _, report)) in cells[first..(first + WIDTH).min(n)].iter_mut().enumerate() {
                let before = s.q[CLOUD];
                match which {
                    Adjustment::First => {
                        report.cloud_before_first_adjust = before;
                        report.condensed_first = condensed.lane(i);
                    }
                    Adjustment::Last => {
                        report.cloud_before_adjust = before;
                        report.condensed = condensed.lane(i);
                    }
                }
                (s.q[VAPOUR], s.q[CLOUD], s.t) = (qv.lane(i), qc.lane(i), t.lane(i));
            }
        }
    }
}

/// Integrates the processes of the prepared cells `cells[k]` for k in
/// `which` (each cell with its environment and report) over `dt` s,
/// [`WIDTH`] at a time: the rates of a
/// group are evaluated side by side ([`crate::physics::lanes`]) and the group takes the
/// integrator's first trial step, the whole `dt`, together. A cell whose
/// trial is rejected (rare: about 3 % of the demo's integrations) goes on
/// on its own with the smaller step the integrator chooses from the
/// group's error estimate ([`integrator::integrate_from`]), as the
/// one-cell integration does after rejecting the same trial. Every cell
/// ends with what [`step_cell`] gives it, to
/// rounding (the group's exp, ln and cbrt are its own). A short last group
/// is filled with copies of its last cell, whose results are dropped.
pub fn integrate_cells(
    cells: &mut [(CellState, CellEnv, CellReport)],
    which: &[usize],
    p: &MicroParams,
    dt: f64,
) -> Result<(), (usize, String)> {
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx2") {
        // SAFETY: the processor has AVX2, the only requirement of the
        // function's target feature.
        return unsafe { integrate_cells_avx2(cells, which, p, dt) };
    }
    integrate_cells_with(cells, which, p, dt, evaluate::<Cells>)
}

/// The rates of a group ([`evaluate`]) compiled for AVX2.
///
/// # Safety
/// The processor must have AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn evaluate_avx2(
    y: &[Cells; 8],
    env: &CellEnv<Cells>,
    params: &MicroParams,
    dy: &mut [Cells; 8],
    w: &mut [Cells; rates::N_TRANSFERS],
) {
    evaluate(y, env, params, dy, w)
}

/// [`integrate_cells`] compiled for AVX2 (a group in two registers;
/// without fused multiply-add, so the bits are those of the portable build).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn integrate_cells_avx2(
    cells: &mut [(CellState, CellEnv, CellReport)],
    which: &[usize],
    p: &MicroParams,
    dt: f64,
) -> Result<(), (usize, String)> {
    // Closures do not take on the caller's target features, so the rate
    // function is called through its own AVX2 build.
    integrate_cells_with(cells, which, p, dt, |y, env, p, dy, w| {
        // SAFETY: this function runs only where the processor has AVX2.
        unsafe { evaluate_avx2(y, env, p, dy, w) }
    })
}

/// The grouped integration with the rate function `eval` ([`evaluate`] for
/// groups, in the build the processor allows).
#[inline(always)]
fn integrate_cells_with(
    cells: &mut [(CellState, CellEnv, CellReport)],
    which: &[usize],
    p: &MicroParams,
    dt: f64,
    eval: impl Fn(
        &[Cells; 8],
        &CellEnv<Cells>,
        &MicroParams,
        &mut [Cells; 8],
        &mut [Cells; rates::N_TRANSFERS],
    ),
) -> Result<(), (usize, String)> {
    let tol = integrator::Tolerance {
        relative: p.rtol,
        absolute: p.atol,
    };
    // Stage buffers, cleared once per call rather than per group, and only
    // for the pair in use (the unused pair's 17 KiB of clearing and copying
    // was 0.8 % of the demo's instructions).
    let zero = Cells::default();
    let mut bogacki_shampine = None;
    let mut dormand_prince = None;
    // Built on first use: `get_or_insert` would build the buffers for every
    // group, which is what this avoids.
    #[allow(clippy::unnecessary_lazy_evaluations)]
    for group in which.chunks(WIDTH) {
        let lane = |i: usize| group[i.min(group.len() - 1)];
        // Transposed with plain loops (`array::map` over eight lanes was not
        // inlined).
        let mut y0 = [Cells::default(); 8];
        for i in 0..WIDTH {
            let y = state_vector(&cells[lane(i)].0);
            for v in 0..8 {
                y0[v].0[i] = y[v];
            }
        }
        let env = CellEnv::gather(std::array::from_fn(|i| &cells[lane(i)].1));
        let mut first = (
            [Cells::default(); 8],
            [Cells::default(); rates::N_TRANSFERS],
        );
        eval(&y0, &env, p, &mut first.0, &mut first.1);
        let moving = first.1.iter().fold(CellsMask([0; WIDTH]), |m, &w| {
            m | Lane::ne(w, Cells::splat(0.0))
        });
        if !moving.any() {
            continue;
        }
        let rhs = |y: &[Cells; 8], dy: &mut [Cells; 8], w: &mut [Cells; rates::N_TRANSFERS]| {
            eval(y, &env, p, dy, w)
        };
        let (error, y, integrals) = match p.integrator {
            Integrator::BogackiShampine1989 => {
                let pair = &integrator::BOGACKI_SHAMPINE_1989;
                let stages = bogacki_shampine
                    .get_or_insert_with(|| ([[zero; 8]; 4], [[zero; rates::N_TRANSFERS]; 4]));
                integrator::whole_step(pair, rhs, y0, first, dt, tol, stages)
            }
            Integrator::DormandPrince1980 => {
                let pair = &integrator::DORMAND_PRINCE_1980;
                let stages = dormand_prince
                    .get_or_insert_with(|| ([[zero; 8]; 7], [[zero; rates::N_TRANSFERS]; 7]));
                integrator::whole_step(pair, rhs, y0, first, dt, tol, stages)
            }
            // The reference integrator takes every cell on its own.
            Integrator::OdeSolversDopri5 => (Cells::splat(f64::INFINITY), y0, first.1),
        };
        let accepted = error.le(Cells::splat(1.0));
        // The reference integrator repeats the whole step itself.
        let trial_taken = p.integrator != Integrator::OdeSolversDopri5;
        for (i, &k) in group.iter().enumerate() {
            if !moving.get(i) {
                continue;
            }
            let (cell, env, report) = &mut cells[k];
            // Lane i out of the group with plain loops: `array::map` here
            // was inlined in some builds and not in others (an unrelated
            // change of the crate once cost 1.6 % of the demo's
            // instructions in calls to it).
            if accepted.get(i) {
                *cell = cell_of(lane_of(&y, i));
                report.transfers = lane_of(&integrals, i);
            } else {
                let one = (lane_of(&first.0, i), lane_of(&first.1, i));
                let trial = trial_taken.then(|| error.0[i]);
                let end = integrate_cell(state_vector(cell), one, *env, p, dt, report, trial)
                    .map_err(|e| (k, e))?;
                *cell = cell_of(end);
            }
        }
    }
    Ok(())
}

/// Lane `i` of a group's values, one value per array element.
#[inline(always)]
fn lane_of<const N: usize>(group: &[Cells; N], i: usize) -> [f64; N] {
    let mut out = [0.0; N];
    for (o, g) in out.iter_mut().zip(group) {
        *o = g.0[i];
    }
    out
}

/// The part of a cell's step after the integration: removal of negative
/// values (booked in `report.created`), the final saturation adjustment and
/// the checks that the state is finite and inside the validity of the
/// saturation formulas.
pub fn finish_cell(s: &mut CellState, env: CellEnv, report: &mut CellReport) -> Result<(), String> {
    clip_cell(s, report);
    report.cloud_before_adjust = s.q[CLOUD];
    report.condensed = adjust::saturation_adjustment(s, env.p);
    check_cell(s, env)
}

/// The first part of [`finish_cell`]: negative mixing ratios clipped to
/// zero against the vapour (mass created, if the vapour goes negative, in
/// `report.created`), the crystal number with its ice.
pub fn clip_cell(s: &mut CellState, report: &mut CellReport) {
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
}

/// The last part of [`finish_cell`], after its saturation adjustment: the
/// cell's state must be finite and within the saturation formulas' range.
pub fn check_cell(s: &CellState, env: CellEnv) -> Result<(), String> {
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

#[cfg(test)]
mod tests {
    use super::*;

    /// The AVX2 build of the grouped integration (chosen at run time) and
    /// the portable build give the same bits: neither uses fused
    /// multiply-add, and IEEE 754 arithmetic is exact per lane whatever the
    /// vector width (common practice). Mixed-phase cells over 230-290 K.
    #[test]
    fn grouped_integration_gives_the_same_bits_on_every_instruction_set() {
        let p = MicroParams::default();
        let mut cells = Vec::new();
        for i in 0..37 {
            let x = i as f64 / 37.0;
            let (pressure, t) = (30_000.0 + 60_000.0 * x, 230.0 + 60.0 * x);
            let rho = pressure / (287.0 * t);
            let env = CellEnv::new(pressure, rho, &p);
            let (qsw, _) = rates::saturation_ratios(t, pressure);
            let mut s = CellState {
                q: [
                    qsw * (0.9 + 0.2 * ((7 * i) % 5) as f64 / 4.0),
                    1e-3 * ((3 * i) % 4) as f64 / 3.0,
                    2e-3 * ((5 * i) % 3) as f64 / 2.0,
                    1e-4 * (i % 2) as f64,
                    5e-4 * ((i + 1) % 3) as f64 / 2.0,
                    3e-3 * ((2 * i) % 5) as f64 / 4.0,
                ],
                n_ice: 1e5 * (i % 2) as f64,
                t,
            };
            let mut report = CellReport::default();
            if prepare_cell(&mut s, env, &p, &mut report) {
                cells.push((s, env, report));
            }
        }
        let which: Vec<usize> = (0..cells.len()).collect();
        assert!(which.len() > 20, "only {} cells integrate", which.len());
        let mut portable = cells.clone();
        integrate_cells_with(&mut portable, &which, &p, 2.0, evaluate::<Cells>).unwrap();
        let mut dispatched = cells.clone();
        integrate_cells(&mut dispatched, &which, &p, 2.0).unwrap();
        assert_eq!(portable, dispatched);
        assert_ne!(portable, cells, "the cells must change");
    }
}
