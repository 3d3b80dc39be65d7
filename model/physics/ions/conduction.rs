//! Conduction: small ions drifting in the field, and point discharge at the
//! ground.
//!
//! Ions of mobility mu drift at mu E (positive along the field, negative
//! against it), so across a face the charge flux is the conduction current
//! J = e (n+ mu+ + n- mu-) E = sigma E, each sign taken from its upwind
//! cell. Explicit drift would be unstable for steps longer than the
//! relaxation time eps0/sigma, so each face's flux is integrated with the
//! field that its own flux removes: for horizontally uniform layers moving
//! charge Q (C m-2) up across a face lowers the field there by Q/eps0
//! (Gauss's law), so dE/dt = -sigma E/eps0 at fixed sigma and the charge
//! crossing in a sub-step h is eps0 E (1 - exp(-sigma h/eps0)), exact for
//! that local relaxation and stable for any h. The ions move at most half
//! a cell per sub-step (drift Courant number 0.5: a cell losing through
//! both faces loses at most its content, so the ions stay non-negative), so
//! sub-steps are counted from the largest mu |E|. Against 0.125 the demo's
//! charge density differs by 1.3e-3 (relative L1 over the hour) at 100 m
//! and 2.6e-4 at 12.5 m, thirty times below the error of its time step
//! (docs/ions.md). The field so updated is a stand-in inside the
//! step; the column's solver recomputes the field from the charge after
//! (docs/ions.md).
//!
//! Point discharge: above a threshold surface field E_0 ground objects go
//! into corona and inject ions of the sign of the ground's induced charge at
//! the areal current density J = A (E^2 - E_0^2) sign(E) (the quadratic
//! current-field law of point discharge, Whipple & Scrase 1936; from memory;
//! docs/references.md). Injection never takes the surface field below the
//! threshold within a sub-step.

use crate::physics::constants::{ELEMENTARY_CHARGE, EPSILON_0};
use crate::physics::ions::attachment::coulomb_factor_nonnegative;
use crate::physics::lanes::{Cells, Lane, WIDTH};

/// Drift Courant number per sub-step (fraction of a cell).
pub const DRIFT_COURANT: f64 = 0.5;

/// Point discharge at the ground.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Corona {
    /// Onset field magnitude E_0 (V m-1).
    pub threshold: f64,
    /// Areal coefficient A (A m-2 per (V m-1)^2).
    pub coefficient: f64,
}

impl Corona {
    /// Corona current density (A m-2, positive up) for surface field `e` (V m-1).
    pub fn current(&self, e: f64) -> f64 {
        let excess = e * e - self.threshold * self.threshold;
        if excess <= 0.0 {
            0.0
        } else {
            self.coefficient * excess * e.signum()
        }
    }
}

/// The ion fields and their mobilities over the column.
pub struct DriftColumn<'a> {
    /// Positive and negative small ions at centres (m-3).
    pub n_pos: &'a mut [f64],
    pub n_neg: &'a mut [f64],
    /// Mobilities at centres (m2 V-1 s-1).
    pub mu_pos: &'a [f64],
    pub mu_neg: &'a [f64],
    /// E_z on faces (V m-1), relaxed in place as the ions move.
    pub field: &'a mut [f64],
    /// Work arrays on faces: the number fluxes of one sub-step.
    pub flux_pos: &'a mut [f64],
    pub flux_neg: &'a mut [f64],
    /// Mean conduction current density on faces over the step (A m-2, positive up).
    pub current: &'a mut [f64],
}

/// Charge moved across the column's boundaries in one call (C m-2).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct DriftTotals {
    /// Net charge carried down into the ground by conduction.
    pub into_ground: f64,
    /// Net charge carried up out through the model top.
    pub out_top: f64,
    /// Charge injected into the air by point discharge at the ground.
    pub corona: f64,
    /// Mean corona current density over the step (A m-2, positive up).
    pub corona_current: f64,
    /// Sub-steps taken.
    pub substeps: usize,
}

/// Sub-steps for the drift over `dt` (s) on spacing `dz` (m).
pub fn substeps(col: &DriftColumn, dz: f64, dt: f64) -> usize {
    let n = col.n_pos.len();
    // Branch-free maxima (the fields and mobilities are finite: the step's
    // guards stop a run first), so that the loop runs as vectors; a maximum
    // is exact whatever the order it is taken in.
    let larger = |a: f64, b: f64| if a > b { a } else { b };
    let cell = |k: usize| larger(col.mu_pos[k], col.mu_neg[k]);
    // The ground face and the top face touch one cell each.
    let mut fastest = larger(
        cell(0) * col.field[0].abs(),
        cell(n - 1) * col.field[n].abs(),
    );
    for (j, e) in col.field[1..n].iter().enumerate() {
        fastest = larger(fastest, larger(cell(j), cell(j + 1)) * e.abs());
    }
    ((fastest * dt / (DRIFT_COURANT * dz)).ceil() as usize).max(1)
}

crate::physics::lanes::with_avx2! {
    /// Drifts the ions for `dt` seconds. Ions enter through the top from
    /// air like the top cell's (zero gradient) and leave through it freely;
    /// the ground absorbs arriving ions and emits only by point discharge.
    /// The interior faces' fluxes are computed a group at a time
    /// (`face_fluxes` over [`Cells`]); an AVX2 build is chosen at run time.
    pub fn drift(col: &mut DriftColumn, dz: f64, dt: f64, corona: Option<Corona>) -> DriftTotals {
        let n = col.n_pos.len();
        let nsub = substeps(col, dz, dt);
        let h = dt / nsub as f64;
        let e_c = ELEMENTARY_CHARGE;
        let mut totals = DriftTotals {
            substeps: nsub,
            ..DriftTotals::default()
        };
        col.current.fill(0.0);
        for _ in 0..nsub {
            // Face j lies between cells j - 1 and j; below the ground there are
            // no ions, above the top air like the top cell's.
            let mut j = 0;
            while j <= n {
                if j >= 1 && j + WIDTH <= n {
                    let below = cells_from(col, j - 1);
                    let above = cells_from(col, j);
                    let e = Cells(
                        col.field[j..j + WIDTH]
                            .try_into()
                            .expect("a group of faces"),
                    );
                    let (fp, fnn) = face_fluxes(e, below, above, h);
                    col.flux_pos[j..j + WIDTH].copy_from_slice(&fp.0);
                    col.flux_neg[j..j + WIDTH].copy_from_slice(&fnn.0);
                    j += WIDTH;
                } else {
                    let below = if j == 0 {
                        [0.0; 4]
                    } else {
                        cell_of(col, j - 1)
                    };
                    let above = cell_of(col, j.min(n - 1));
                    let (fp, fnn) = face_fluxes(col.field[j], below, above, h);
                    col.flux_pos[j] = fp;
                    col.flux_neg[j] = fnn;
                    j += 1;
                }
            }
            for j in 0..=n {
                let charge = e_c * (col.flux_pos[j] - col.flux_neg[j]);
                col.field[j] -= charge / EPSILON_0;
                col.current[j] += charge;
            }
            for k in 0..n {
                col.n_pos[k] += (col.flux_pos[k] - col.flux_pos[k + 1]) / dz;
                col.n_neg[k] += (col.flux_neg[k] - col.flux_neg[k + 1]) / dz;
            }
            totals.into_ground -= e_c * (col.flux_pos[0] - col.flux_neg[0]);
            totals.out_top += e_c * (col.flux_pos[n] - col.flux_neg[n]);
            if let Some(c) = corona {
                let e = col.field[0];
                let j = c.current(e);
                if j != 0.0 {
                    // Never below the threshold within the sub-step.
                    let most = EPSILON_0 * (e.abs() - c.threshold);
                    let q = (j.abs() * h).min(most) * e.signum();
                    let ions = q.abs() / (e_c * dz);
                    if q > 0.0 {
                        col.n_pos[0] += ions;
                    } else {
                        col.n_neg[0] += ions;
                    }
                    col.field[0] -= q / EPSILON_0;
                    totals.corona += q;
                    col.current[0] += q;
                }
            }
        }
        for c in col.current.iter_mut() {
            *c /= dt;
        }
        totals.corona_current = totals.corona / dt;
        totals
    }
}

/// The fraction of a sub-step `h` over which a face's field acts when its
/// flux removes it at the relaxation rate x/h: h_eff/h = (1 - e^-x)/x for
/// x = sigma h/eps0 (1 where x <= 1e-12). Below x = 1/2 it is taken as
/// e^-x / B(x) with B(x) = x/(e^x - 1) from its Bernoulli series
/// ([`coulomb_factor_nonnegative`]), which loses nothing to the
/// cancellation in 1 - e^-x; above, 1 - e^-x >= 0.39 and the quotient is
/// direct. Dimensionless.
#[inline(always)]
pub fn relaxed_fraction<T: Lane>(x: T) -> T {
    let one = T::splat(1.0);
    let decay = (-x).exp();
    let small = x.lt(T::splat(0.5));
    let fraction = T::select(
        small,
        decay / coulomb_factor_nonnegative(x),
        (one - decay) / x,
    );
    T::select(x.gt(T::splat(1e-12)), fraction, one)
}

/// The number fluxes (m-2 per sub-step `h`) of positive and negative ions
/// through faces with field `e` (V m-1), from the cells below (`below`)
/// and above (`above`) each face, each given as (n+, mu+, n-, mu-) (m-3,
/// m2 V-1 s-1): each sign from its upwind cell, the field relaxing at the
/// conductivity of the ions crossing ([`relaxed_fraction`]). A face with
/// no field carries nothing.
#[inline(always)]
fn face_fluxes<T: Lane>(e: T, below: [T; 4], above: [T; 4], h: f64) -> (T, T) {
    let zero = T::splat(0.0);
    let upward = e.gt(zero);
    // Positive ions move with E, negative against it.
    let np = T::select(upward, below[0], above[0]);
    let mp = T::select(upward, below[1], above[1]);
    let nn = T::select(upward, above[2], below[2]);
    let mn = T::select(upward, above[3], below[3]);
    let (pos, neg) = (np * mp, nn * mn);
    let x = (pos + neg) * (ELEMENTARY_CHARGE * h / EPSILON_0);
    let h_eff = relaxed_fraction(x) * h;
    let moving = e.ne(zero);
    (
        T::select(moving, pos * e * h_eff, zero),
        T::select(moving, -(neg * e * h_eff), zero),
    )
}

/// (n+, mu+, n-, mu-) of cell `k`. A function, not a closure, so that it
/// takes on the target features of the drift's builds.
#[inline(always)]
fn cell_of(col: &DriftColumn, k: usize) -> [f64; 4] {
    [col.n_pos[k], col.mu_pos[k], col.n_neg[k], col.mu_neg[k]]
}

/// [`cell_of`] for the [`WIDTH`] cells from `first` on, side by side.
#[inline(always)]
fn cells_from(col: &DriftColumn, first: usize) -> [Cells; 4] {
    let at = |x: &[f64]| {
        Cells(
            x[first..first + WIDTH]
                .try_into()
                .expect("a group of cells"),
        )
    };
    [at(col.n_pos), at(col.mu_pos), at(col.n_neg), at(col.mu_neg)]
}
