//! Allocation-free embedded Runge-Kutta integration of one cell's process
//! ODE over one model step.
//!
//! The cell state (six mixing ratios, ice number, temperature) is integrated
//! with error control; the time integrals of the mass transfers, which feed
//! nothing back, are quadratures with the same weights as the state, so the
//! change of every mixing ratio equals the sum of its transfers to round-off
//! and charge can follow each transfer exactly.
//!
//! Two pairs are available, both first-same-as-last (the last stage of an
//! accepted step is the first of the next, and the first stage of the whole
//! integration is the rate evaluation the caller already made to decide
//! whether anything happens):
//! - Bogacki, P. and Shampine, L. F. (1989): A 3(2) pair of Runge-Kutta
//!   formulas. Appl. Math. Lett. 2, 321-325 (4 stages, 3 new evaluations per
//!   step);
//! - Dormand, J. R. and Prince, P. J. (1980): A family of embedded Runge-Kutta
//!   formulae. J. Comput. Appl. Math. 6, 19-26, the 5(4) pair "RK5(4)7M"
//!   (7 stages, 6 new evaluations per step).
//!
//! Step-size control is the standard one of Hairer, Norsett & Wanner (1993),
//! Solving Ordinary Differential Equations I, 2nd ed., Sec. II.4: the error
//! estimate is the root mean square over the state of e_i / (atol + rtol
//! max(|y0_i|, |y1_i|)); a step is accepted when it is at most 1, and the next
//! step is h min(10, max(0.2, 0.9 err^(-1/(q+1)))) with q the lower order of
//! the pair. The first trial step is the whole interval. Everything lives in
//! fixed-size arrays on the stack: no allocation per cell or step.

use crate::physics::lanes::Lane;

/// An explicit embedded Runge-Kutta pair of `S` stages with the
/// first-same-as-last property (its last row of `a` equals `b`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EmbeddedPair<const S: usize> {
    /// Name of the method as published.
    pub name: &'static str,
    /// Runge-Kutta matrix, row i holding a_ij for j < i (row 0 unused).
    a: [[f64; S]; S],
    /// Weights of the propagated (higher-order) solution.
    b: [f64; S],
    /// Differences b - b_hat to the embedded lower-order weights.
    e: [f64; S],
    /// Lower order q of the pair; the step controller uses 1/(q+1).
    lower_order: u32,
}

/// Bogacki & Shampine (1989), orders 3 and 2.
pub const BOGACKI_SHAMPINE_1989: EmbeddedPair<4> = EmbeddedPair {
    name: "bogacki_shampine_1989",
    a: [
        [0.0; 4],
        [0.5, 0.0, 0.0, 0.0],
        [0.0, 0.75, 0.0, 0.0],
        [2.0 / 9.0, 1.0 / 3.0, 4.0 / 9.0, 0.0],
    ],
    b: [2.0 / 9.0, 1.0 / 3.0, 4.0 / 9.0, 0.0],
    e: [
        2.0 / 9.0 - 7.0 / 24.0,
        1.0 / 3.0 - 0.25,
        4.0 / 9.0 - 1.0 / 3.0,
        -0.125,
    ],
    lower_order: 2,
};

/// The fifth-order weights of Dormand & Prince (1980), which are also the
/// last stage's row of the tableau (first same as last).
const DORMAND_PRINCE_1980_B: [f64; 7] = [
    35.0 / 384.0,
    0.0,
    500.0 / 1113.0,
    125.0 / 192.0,
    -2187.0 / 6784.0,
    11.0 / 84.0,
    0.0,
];

/// Dormand & Prince (1980), orders 5 and 4.
pub const DORMAND_PRINCE_1980: EmbeddedPair<7> = EmbeddedPair {
    name: "dormand_prince_1980",
    a: [
        [0.0; 7],
        [1.0 / 5.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0],
        [3.0 / 40.0, 9.0 / 40.0, 0.0, 0.0, 0.0, 0.0, 0.0],
        [44.0 / 45.0, -56.0 / 15.0, 32.0 / 9.0, 0.0, 0.0, 0.0, 0.0],
        [
            19372.0 / 6561.0,
            -25360.0 / 2187.0,
            64448.0 / 6561.0,
            -212.0 / 729.0,
            0.0,
            0.0,
            0.0,
        ],
        [
            9017.0 / 3168.0,
            -355.0 / 33.0,
            46732.0 / 5247.0,
            49.0 / 176.0,
            -5103.0 / 18656.0,
            0.0,
            0.0,
        ],
        DORMAND_PRINCE_1980_B,
    ],
    b: DORMAND_PRINCE_1980_B,
    // b - b_hat with b_hat = (5179/57600, 0, 7571/16695, 393/640,
    // -92097/339200, 187/2100, 1/40).
    e: [
        71.0 / 57600.0,
        0.0,
        -71.0 / 16695.0,
        71.0 / 1920.0,
        -17253.0 / 339200.0,
        22.0 / 525.0,
        -1.0 / 40.0,
    ],
    lower_order: 4,
};

/// Error tolerances of the step control.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerance {
    pub relative: f64,
    pub absolute: f64,
}

/// Result of one integration: the state and the transfer integrals at the
/// end, and the steps it took.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Outcome<const N: usize, const M: usize> {
    pub y: [f64; N],
    /// Time integrals of the `M` quadrature rates over the interval.
    pub integrals: [f64; M],
    pub accepted: u32,
    pub rejected: u32,
}

/// Why an integration stopped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Failure {
    /// The step size fell below 1e-10 of the interval at time `at` (s).
    StepUnderflow { at: f64 },
    /// More than `MAX_STEPS` steps were needed.
    TooManySteps { at: f64 },
}

/// Upper bound on steps per integration; far above any physical need.
pub const MAX_STEPS: u32 = 100_000;

/// The stages of one trial step of size `h` from `y` (`k[0]`, `w[0]`: the
/// derivative and quadrature rates at `y`, already known): fills the other
/// stages and returns the new state (the last stage's point, first same as
/// last) and the error norm. Written over [`Lane`] so that a group of cells
/// takes the step together, each lane with the bits of its own scalar step.
#[inline(always)]
fn attempt<T: Lane, const S: usize, const N: usize, const M: usize>(
    pair: &EmbeddedPair<S>,
    f: &mut impl FnMut(&[T; N], &mut [T; N], &mut [T; M]),
    y: &[T; N],
    k: &mut [[T; N]; S],
    w: &mut [[T; M]; S],
    h: f64,
    tol: Tolerance,
) -> ([T; N], T) {
    let mut stage = *y;
    for s in 1..S {
        stage = *y;
        for (j, kj) in k.iter().enumerate().take(s) {
            let a = h * pair.a[s][j];
            if a != 0.0 {
                for i in 0..N {
                    stage[i] += kj[i] * a;
                }
            }
        }
        let (ks, ws) = (&mut k[s], &mut w[s]);
        f(&stage, ks, ws);
    }
    let mut sum = T::splat(0.0);
    for i in 0..N {
        let mut est = T::splat(0.0);
        for (j, kj) in k.iter().enumerate() {
            est += kj[i] * pair.e[j];
        }
        let scale = y[i].abs().max(stage[i].abs()) * tol.relative + tol.absolute;
        let r = est * h / scale;
        sum += r * r;
    }
    (stage, (sum / N as f64).sqrt())
}

/// Adds the quadrature of the rates `w` over an accepted step of size `h`
/// to `integrals`.
#[inline(always)]
fn accumulate<T: Lane, const S: usize, const M: usize>(
    pair: &EmbeddedPair<S>,
    w: &[[T; M]; S],
    h: f64,
    integrals: &mut [T; M],
) {
    for (j, wj) in w.iter().enumerate() {
        let c = h * pair.b[j];
        if c != 0.0 {
            for (acc, wm) in integrals.iter_mut().zip(wj) {
                *acc += *wm * c;
            }
        }
    }
}

/// The stage derivatives and quadrature rates of an `S`-stage pair, kept by
/// the caller of [`whole_step`] across groups so they are not cleared for
/// each (every stage is written before it is read).
pub type Stages<T, const N: usize, const M: usize, const S: usize> = ([[T; N]; S], [[T; M]; S]);

/// The first trial step of [`integrate`] (the whole `span` at once) for a
/// group of cells side by side: each lane's error norm (the step is
/// accepted where it is at most 1), the end state and the transfer
/// integrals. A lane that was not accepted goes on on its own from that
/// error ([`integrate_from`]); an accepted lane's results are those
/// [`integrate`] returns for that cell (to rounding: a group's exp, ln and
/// cbrt are its own).
#[inline(always)]
pub fn whole_step<T: Lane, const S: usize, const N: usize, const M: usize>(
    pair: &EmbeddedPair<S>,
    mut f: impl FnMut(&[T; N], &mut [T; N], &mut [T; M]),
    y0: [T; N],
    first: ([T; N], [T; M]),
    span: f64,
    tol: Tolerance,
    stages: &mut Stages<T, N, M, S>,
) -> (T, [T; N], [T; M]) {
    let (k, w) = stages;
    (k[0], w[0]) = first;
    let (y, err) = attempt(pair, &mut f, &y0, k, w, span, tol);
    let mut integrals = [T::splat(0.0); M];
    accumulate(pair, w, span, &mut integrals);
    (err, y, integrals)
}

/// Integrates the autonomous system `f` over `span` from `y0`.
///
/// `f(y, dy, w)` writes the derivative `dy` of the state and the `M`
/// quadrature rates `w` at state `y`; `first` is `(dy, w)` at `y0`, already
/// evaluated by the caller.
#[inline]
pub fn integrate<const S: usize, const N: usize, const M: usize>(
    pair: &EmbeddedPair<S>,
    f: impl FnMut(&[f64; N], &mut [f64; N], &mut [f64; M]),
    y0: [f64; N],
    first: ([f64; N], [f64; M]),
    span: f64,
    tol: Tolerance,
) -> Result<Outcome<N, M>, Failure> {
    integrate_from(pair, f, y0, first, span, tol, None)
}

/// The step factor after an attempt with error norm `err` (NaN, a stage
/// that left the physical range, shrinks the step most), at most 1 after a
/// rejection.
fn step_factor(err: f64, exponent: f64, accepted: bool) -> f64 {
    let factor = if err.is_nan() {
        0.2
    } else if err == 0.0 {
        10.0
    } else {
        (0.9 * err.powf(-exponent)).clamp(0.2, 10.0)
    };
    if accepted {
        factor
    } else {
        factor.min(1.0)
    }
}

/// [`integrate`], or, with `rejected_trial` = the error norm of a first
/// trial (the whole `span`, taken by [`whole_step`] in a group) that was
/// rejected, the same integration going on from that rejection with the
/// step it chooses instead of repeating the trial.
#[inline(always)]
pub fn integrate_from<const S: usize, const N: usize, const M: usize>(
    pair: &EmbeddedPair<S>,
    mut f: impl FnMut(&[f64; N], &mut [f64; N], &mut [f64; M]),
    y0: [f64; N],
    first: ([f64; N], [f64; M]),
    span: f64,
    tol: Tolerance,
    rejected_trial: Option<f64>,
) -> Result<Outcome<N, M>, Failure> {
    let mut k = [[0.0; N]; S];
    let mut w = [[0.0; M]; S];
    (k[0], w[0]) = first;
    let mut out = Outcome {
        y: y0,
        integrals: [0.0; M],
        accepted: 0,
        rejected: 0,
    };
    let mut x = 0.0;
    let mut h = span;
    let exponent = 1.0 / (pair.lower_order as f64 + 1.0);
    if let Some(err) = rejected_trial {
        // The whole-span trial was taken and rejected elsewhere.
        out.rejected = 1;
        h *= step_factor(err, exponent, false);
    }
    loop {
        if out.accepted + out.rejected >= MAX_STEPS {
            return Err(Failure::TooManySteps { at: x });
        }
        if h < 1e-10 * span {
            return Err(Failure::StepUnderflow { at: x });
        }
        let last = x + 1.01 * h >= span;
        if last {
            h = span - x;
        }
        // First same as last: the last stage was evaluated at the new solution.
        let (y_new, err) = attempt(pair, &mut f, &out.y, &mut k, &mut w, h, tol);
        let accept = err <= 1.0;
        if accept {
            accumulate(pair, &w, h, &mut out.integrals);
            out.y = y_new;
            x += h;
            out.accepted += 1;
            k[0] = k[S - 1];
            w[0] = w[S - 1];
            if last {
                return Ok(out);
            }
        } else {
            out.rejected += 1;
        }
        h *= step_factor(err, exponent, accept);
    }
}
