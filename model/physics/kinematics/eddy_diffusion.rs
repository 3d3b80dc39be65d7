//! Vertical turbulent (eddy) diffusion of the column's specific quantities
//! with a constant eddy diffusivity K (m2 s-1): the first-order (K-theory)
//! closure of the turbulent flux, w'x' = -K dx/dz (the gradient-transport
//! hypothesis of Boussinesq 1877 and Taylor 1915; e.g. Stull 1988, An
//! Introduction to Boundary Layer Meteorology, sec. 6.4, from memory),
//!
//!   d(rho x)/dt = d/dz (rho K d(x - x_env)/dz),
//!
//! for a specific quantity x (a mixing ratio, a number or a charge per kg of
//! air) whose environment profile x_env is held by the base state (zero for
//! hydrometeors and charge). Mixing the departure from the base state, not
//! x itself, keeps the base state's own stratification of potential
//! temperature and vapour in place (common practice in cloud models, whose
//! subgrid mixing acts on perturbations of a base state in hydrostatic
//! balance).
//!
//! Why a one-dimensional column needs it: where a species' fall speed
//! balances the updraft its particles converge from above and below, and
//! without a physical spreading mechanism the layer they collect in thins
//! to the grid spacing, so its peak grows with resolution (docs/numerics.md
//! measures it). Turbulence inside the cloud spreads such a layer over a
//! physical thickness set by K.
//!
//! Discretisation: conservative flux form on the cell faces,
//! F = rho_face K (x_above - x_below)/dz, no turbulent flux through the
//! ground and the model top, integrated by backward Euler over the step:
//! unconditionally stable, and the matrix is an M-matrix, so a non-negative
//! field stays non-negative; the column integral of rho x is conserved to
//! round-off (what one face takes from a cell it gives to the next). The
//! tridiagonal system (Thomas algorithm; e.g. Press et al. 2007, Numerical
//! Recipes, sec. 2.4) has the same matrix for every field of a step, so it
//! is factorised once and each field costs one forward and one back sweep.

/// The factorised backward-Euler diffusion matrix of one step.
#[derive(Debug, Clone, PartialEq)]
pub struct Diffusion {
    /// Sub-diagonal a_k of each row (coupling to the cell below).
    lower: Vec<f64>,
    /// Modified super-diagonal c'_k of the Thomas algorithm.
    upper: Vec<f64>,
    /// 1 / (b_k - a_k c'_(k-1)) of the forward sweep.
    pivot: Vec<f64>,
    /// The diffusivity and step the matrix was factorised for.
    factorised_for: Option<(f64, f64)>,
}

impl Diffusion {
    /// Work space for `n` cells.
    pub fn new(n: usize) -> Self {
        Diffusion {
            lower: vec![0.0; n],
            upper: vec![0.0; n],
            pivot: vec![0.0; n],
            factorised_for: None,
        }
    }

    /// Factorises the matrix ([`Self::factorise`]) unless it already is for
    /// this diffusivity and step: the densities and the spacing of a run are
    /// fixed, so a run with a constant step factorises once.
    pub fn prepare(&mut self, k: f64, rho: &[f64], rho_face: &[f64], dz: f64, dt: f64) {
        if self.factorised_for != Some((k, dt)) {
            self.factorise(k, rho, rho_face, dz, dt);
        }
    }

    /// Factorises the matrix for diffusivity `k` (m2 s-1), cell densities
    /// `rho` (n), face densities `rho_face` (n + 1), spacing `dz` (m) and
    /// step `dt` (s).
    pub fn factorise(&mut self, k: f64, rho: &[f64], rho_face: &[f64], dz: f64, dt: f64) {
        let n = rho.len();
        // Row k of (I - dt L): a_k x_(k-1) + b_k x_k + c_k x_(k+1), with
        // a_k = -dt rho_face(k) K / (rho_k dz^2) and c_k likewise on the face
        // above; the ground and top faces carry no flux.
        let mut previous_upper = 0.0;
        for i in 0..n {
            let per_cell = dt * k / (rho[i] * dz * dz);
            let a = if i > 0 { -per_cell * rho_face[i] } else { 0.0 };
            let c = if i + 1 < n {
                -per_cell * rho_face[i + 1]
            } else {
                0.0
            };
            let b = 1.0 - a - c;
            let pivot = 1.0 / (b - a * previous_upper);
            self.lower[i] = a;
            self.pivot[i] = pivot;
            self.upper[i] = c * pivot;
            previous_upper = self.upper[i];
        }
        self.factorised_for = Some((k, dt));
    }

    /// Diffuses the specific quantity `x` over the factorised step, its
    /// departure from `env` when given (the environment's profile of x).
    pub fn apply(&self, x: &mut [f64], env: Option<&[f64]>) {
        self.apply_all(std::iter::once((x, env)));
    }

    /// [`Self::apply`] over any number of fields, each with its optional
    /// environment profile, four at a time: the forward and back sweeps of
    /// the Thomas algorithm are chains from cell to cell, so sweeping
    /// several fields in one pass lets the processor overlap their chains.
    /// Each field gets the bits it gets alone.
    pub fn apply_all<'a>(&self, fields: impl Iterator<Item = (&'a mut [f64], Option<&'a [f64]>)>) {
        let mut fields = fields.fuse();
        loop {
            match (fields.next(), fields.next(), fields.next(), fields.next()) {
                (Some(a), Some(b), Some(c), Some(d)) => self.apply_together([a, b, c, d]),
                (Some(a), Some(b), Some(c), None) => self.apply_together([a, b, c]),
                (Some(a), Some(b), None, _) => self.apply_together([a, b]),
                (Some(a), None, _, _) => self.apply_together([a]),
                _ => return,
            }
        }
    }

    /// One pass of the sweeps over `W` fields.
    fn apply_together<const W: usize>(&self, mut xs: [(&mut [f64], Option<&[f64]>); W]) {
        let n = self.pivot.len();
        for (x, env) in xs.iter_mut() {
            debug_assert_eq!(x.len(), n);
            if let Some(e) = env {
                for (v, e) in x.iter_mut().zip(e.iter()) {
                    *v -= e;
                }
            }
        }
        // Forward sweep, then back substitution, in place.
        let mut previous = [0.0; W];
        for i in 0..n {
            let (lower, pivot) = (self.lower[i], self.pivot[i]);
            for ((x, _), p) in xs.iter_mut().zip(&mut previous) {
                x[i] = (x[i] - lower * *p) * pivot;
                *p = x[i];
            }
        }
        for i in (0..n.saturating_sub(1)).rev() {
            let upper = self.upper[i];
            for (x, _) in xs.iter_mut() {
                x[i] -= upper * x[i + 1];
            }
        }
        for (x, env) in xs.iter_mut() {
            if let Some(e) = env {
                for (v, e) in x.iter_mut().zip(e.iter()) {
                    *v += e;
                }
            }
        }
    }
}
