//! Vertical advection by the prescribed updraft.
//!
//! Advective form, dq/dt = -w dq/dz, for mixing ratios and specific
//! quantities, written so that mass bookkeeping is exact: with the face mass
//! flux M = rho w (kg m-2 s-1) and face values q_f,
//!
//!   q_k <- q_k - dt/(rho_k dz) [ M_{k+1/2} (q_f,{k+1/2} - q_k) - M_{k-1/2} (q_f,{k-1/2} - q_k) ].
//!
//! This equals the flux form -d(M q)/dz plus q dM/dz; the second term is the
//! exchange through the column's sides that a one-dimensional column with a
//! height-dependent M implies (air entering where M grows with height,
//! leaving where it shrinks), at the local q. Each part is booked in
//! [`Budget`], so the column's mass changes by exactly
//! inflow - outflow + lateral exchange.
//!
//! Face values are second order and flux limited: the upwind value plus the
//! Lax-Wendroff correction 0.5 (1 - C) phi(r) (q_downwind - q_upwind) with the
//! monotonised-central limiter phi(r) = max(0, min(2r, (1+r)/2, 2)) (van Leer
//! 1977, J. Comput. Phys. 23, 276; the TVD framework of Sweby 1984, SIAM J.
//! Numer. Anal. 21, 995). Next to the boundaries the face value is the upwind
//! value (first order). With the Courant number below 1/2 this is monotone
//! and positive definite; [`substeps`] picks the number of sub-steps.

use crate::physics::lanes::{Cells, Lane, WIDTH};

/// Mass bookkeeping of one advected field (kg m-2 for mixing ratios; the
/// field's unit times kg m-2 in general).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Budget {
    /// Entered through the ground face (negative if it left there).
    pub bottom: f64,
    /// Left through the model top (negative if it entered there).
    pub top: f64,
    /// Gained through the sides (negative: lost), the q dM/dz term.
    pub lateral: f64,
}

impl Budget {
    pub fn add(&mut self, other: &Budget) {
        self.bottom += other.bottom;
        self.top += other.top;
        self.lateral += other.lateral;
    }

    /// Net gain of the column.
    pub fn net(&self) -> f64 {
        self.bottom - self.top + self.lateral
    }
}

/// Largest Courant number allowed per sub-step.
pub const MAX_COURANT: f64 = 0.5;

/// Number of sub-steps so that |M| dt_sub/(rho dz) <= MAX_COURANT everywhere.
pub fn substeps(mass_flux: &[f64], rho: &[f64], dz: f64, dt: f64) -> usize {
    let n = rho.len();
    let mut c: f64 = 0.0;
    for (j, m) in mass_flux.iter().enumerate() {
        // The receiving cell's density (both neighbours for interior faces).
        let lo = if j > 0 { rho[j - 1] } else { rho[0] };
        let hi = if j < n { rho[j] } else { rho[n - 1] };
        c = c.max(m.abs() * dt / (lo.min(hi) * dz));
    }
    (c / MAX_COURANT).ceil().max(1.0) as usize
}

/// The parts of [`advect`] that depend only on the flow, shared by every
/// advected field of a sub-step: the Courant number of each face (from its
/// upwind cell) and dt/(rho dz) of each cell.
#[derive(Debug, Clone, PartialEq)]
pub struct FlowFactors {
    /// |M| dt/(rho_upwind dz) on the n+1 faces (1).
    courant: Vec<f64>,
    /// dt/(rho dz) of the n cells (s m2 kg-1).
    per_flux: Vec<f64>,
}

impl FlowFactors {
    /// Work space for `n` cells.
    pub fn new(n: usize) -> Self {
        FlowFactors {
            courant: vec![0.0; n + 1],
            per_flux: vec![0.0; n],
        }
    }

    /// Fills the factors for face mass fluxes `m` (kg m-2 s-1), densities
    /// `rho` (kg m-3), spacing `dz` (m) and step `dt` (s).
    pub fn update(&mut self, m: &[f64], rho: &[f64], dz: f64, dt: f64) {
        let n = rho.len();
        for (j, c) in self.courant.iter_mut().enumerate() {
            let mj = m[j];
            *c = if mj >= 0.0 {
                if j == 0 {
                    0.0
                } else {
                    mj * dt / (rho[j - 1] * dz)
                }
            } else if j == n {
                0.0
            } else {
                -mj * dt / (rho[j] * dz)
            };
        }
        for (f, r) in self.per_flux.iter_mut().zip(rho) {
            *f = dt / (r * dz);
        }
    }
}

/// One advection step of `dt` s. `m` holds rho w on the n+1 faces (kg m-2
/// s-1), `rho` the cell densities (kg m-3); `inflow` the values that enter
/// through the bottom and top faces when the flow is inward there. `faces`
/// is work space of length n+1. Returns the budget of the step.
pub fn advect(
    q: &mut [f64],
    m: &[f64],
    rho: &[f64],
    dz: f64,
    dt: f64,
    inflow: (f64, f64),
    faces: &mut [f64],
) -> Budget {
    let mut flow = FlowFactors::new(q.len());
    flow.update(m, rho, dz, dt);
    advect_with(q, m, &flow, dt, inflow, faces)
}

crate::physics::lanes::with_avx2! {
    /// [`advect`] with the flow's factors computed beforehand (once per
    /// sub-step for all fields; no allocation). The interior faces are
    /// computed a group at a time (`interior_faces_of`) with the same
    /// operations in the same order as one at a time, so the bits do not
    /// depend on the grouping; an AVX2 build is chosen at run time.
    pub fn advect_with(
        q: &mut [f64],
        m: &[f64],
        flow: &FlowFactors,
        dt: f64,
        inflow: (f64, f64),
        faces: &mut [f64],
    ) -> Budget {
        let n = q.len();
        // Only the support of the field (and one cell around it) can
        // change: a face between two zero cells carries zero, so a zero cell
        // with zero faces stays exactly zero. Hydrometeors and their charges
        // fill part of the column; skipping the rest changes no result.
        let first = q.iter().position(|&x| x != 0.0);
        let last = q.iter().rposition(|&x| x != 0.0);
        let (lo, hi) = match (first, last) {
            (Some(a), Some(b)) => (a, b),
            _ => (n, 0),
        };
        let lo = if inflow.0 != 0.0 { 0 } else { lo };
        let hi = if inflow.1 != 0.0 { n - 1 } else { hi };
        if lo > hi {
            return Budget::default();
        }
        let (k0, k1) = (lo.saturating_sub(1), (hi + 1).min(n - 1));
        let mut j = k0;
        while j <= k1 + 1 {
            // Faces 2..=n-2 have both neighbours the limited flux reads on
            // either side; a group of them at a time where they are all
            // interior.
            if j >= 2 && j + WIDTH - 1 <= (k1 + 1).min(n.saturating_sub(2)) {
                let f: Cells = interior_faces_of(q, m, &flow.courant, j);
                faces[j..j + WIDTH].copy_from_slice(&f.0);
                j += WIDTH;
            } else {
                faces[j] = face_value(q, m, flow, inflow, j);
                j += 1;
            }
        }
        let mut b = Budget {
            bottom: if k0 == 0 { dt * m[0] * faces[0] } else { 0.0 },
            top: if k1 + 1 == n {
                dt * m[n] * faces[n]
            } else {
                0.0
            },
            lateral: 0.0,
        };
        for k in k0..=k1 {
            b.lateral += dt * q[k] * (m[k + 1] - m[k]);
            q[k] -= flow.per_flux[k]
                * (m[k + 1] * (faces[k + 1] - q[k]) - m[k] * (faces[k] - q[k]));
        }
        b
    }
}

/// The value carried through face `j` (0..=n) of field `q` by the mass
/// flux `m[j]`: the inflow at an inflow boundary, the upwind cell next to
/// the boundaries (first order there), elsewhere the upwind cell with the
/// limited (monotonised-central) correction toward the downwind one.
#[inline(always)]
fn face_value(q: &[f64], m: &[f64], flow: &FlowFactors, inflow: (f64, f64), j: usize) -> f64 {
    let n = q.len();
    if m[j] >= 0.0 {
        // Upward: upwind cell j-1.
        if j == 0 {
            inflow.0
        } else if j == n || j == 1 {
            q[j - 1]
        } else {
            limited(q[j - 1], q[j], q[j - 2], flow.courant[j])
        }
    } else if j == n {
        inflow.1
    } else if j == 0 || j == n - 1 {
        q[j]
    } else {
        limited(q[j], q[j - 1], q[j + 1], flow.courant[j])
    }
}

/// The limited face value from the upwind cell `up`, the downwind cell
/// `down`, the cell beyond the upwind one `far` and the face's Courant
/// number `c`: up + (1 - c)/2 phi(r) (down - up), r = (up - far)/(down - up)
/// (the upwind cell where down = up).
#[inline(always)]
pub(crate) fn limited<T: Lane>(up: T, down: T, far: T, c: T) -> T {
    let delta = down - up;
    let ratio = (up - far) / delta;
    let face = up + (T::splat(1.0) - c) * 0.5 * limiter(ratio) * delta;
    T::select(delta.ne(T::splat(0.0)), face, up)
}

/// The monotonised-central flux limiter phi(r) = max(0, min(2r, (1+r)/2, 2))
/// of van Leer (1977, J. Comput. Phys. 23, 276), dimensionless, lane by
/// lane; a NaN passes through (shared by advection and sedimentation
/// through [`limited`]).
#[inline(always)]
fn limiter<T: Lane>(r: T) -> T {
    let x = (r * 2.0).min((r + 1.0) * 0.5);
    let (zero, two) = (T::splat(0.0), T::splat(2.0));
    T::select(x.lt(zero), zero, T::select(x.gt(two), two, x))
}

/// The faces j..j+WIDTH, all interior (2 <= j, j + WIDTH - 1 <= n - 2),
/// side by side: the upward and the downward limited values, each kept
/// where the flux has that direction.
#[inline(always)]
fn interior_faces_of<T: Lane>(q: &[f64], m: &[f64], courant: &[f64], j: usize) -> T {
    let at = |offset: usize| T::from_lanes(|i| q[j + i + offset - 2]);
    let (far_below, below, above, far_above) = (at(0), at(1), at(2), at(3));
    let c = T::from_lanes(|i| courant[j + i]);
    let upward = T::from_lanes(|i| m[j + i]).ge(T::splat(0.0));
    let rising = limited(below, above, far_below, c);
    let sinking = limited(above, below, far_above, c);
    T::select(upward, rising, sinking)
}
