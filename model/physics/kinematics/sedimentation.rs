//! Sedimentation in flux form with first-order upwind (from above) fluxes:
//! the flux through the bottom face of cell k is F_k = rho_k q_k V_k (kg m-2
//! s-1, downward), and
//!
//!   rho_k q_k <- rho_k q_k + dt/dz (F_{k+1} - F_k),   F_n = 0 at the top.
//!
//! This is the first-order upwind scheme (Courant, Isaacson & Rees 1952,
//! Comm. Pure Appl. Math. 5, 243; from memory) in conservative form, the
//! usual sedimentation scheme of bulk models (common practice).
//! Upwind sedimentation is positive definite and monotone for V dt/dz <= 1
//! and moves a constant-speed profile's centre of mass by exactly V t
//! (nothing is lost but what leaves through the ground). The flux through the
//! ground face is the surface precipitation. Sub-steps keep the Courant number
//! below [`MAX_COURANT`].

/// Largest sedimentation Courant number per sub-step.
pub const MAX_COURANT: f64 = 0.9;

/// Sub-steps needed for fall speeds `v` (m s-1, positive downward) over `dt`.
pub fn substeps(v: &[f64], dz: f64, dt: f64) -> usize {
    let vmax = v.iter().fold(0.0_f64, |a, &b| a.max(b));
    ((vmax * dt / dz) / MAX_COURANT).ceil().max(1.0) as usize
}

/// One upwind step for a density-like field `d` (e.g. rho q in kg m-3, or a
/// charge density in C m-3) falling at `v` (m s-1, cell centres, >= 0).
/// Returns what left through the ground per unit area (field unit times m).
pub fn settle(d: &mut [f64], v: &[f64], dz: f64, dt: f64) -> f64 {
    let n = d.len();
    let out = d[0] * v[0] * dt;
    for k in 0..n {
        let incoming = if k + 1 < n { d[k + 1] * v[k + 1] } else { 0.0 };
        d[k] += dt / dz * (incoming - d[k] * v[k]);
    }
    out
}
