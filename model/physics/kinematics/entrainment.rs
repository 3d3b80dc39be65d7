//! Lateral exchange of the column with its environment: an entraining plume
//! of radius R around the prescribed updraft.
//!
//! A one-dimensional column with a height-dependent mass flux M = rho w
//! (kg m-2 s-1) at fixed density must exchange air through its sides:
//! where M grows with height (dM/dz > 0) air enters, where it shrinks air
//! leaves (continuity; the "dynamic" entrainment and detrainment of
//! one-and-a-half-dimensional cloud models, Asai & Kasahara 1967, JAS 24,
//! 487). On top of that the rising air mixes turbulently with its
//! surroundings: the entraining plume of Morton, Taylor & Turner (1956, Proc.
//! R. Soc. A 234, 1) takes in environmental air at a fractional rate
//! epsilon = (1/M) dM/dz = 2 alpha / R per metre of rise; for cumulus
//! columns the empirical epsilon = 0.2/R of Stommel (1947, J. Meteor. 4, 91)
//! has long been used (Simpson & Wiggert 1969, MWR 97, 471; the relation as
//! quoted in later applications of that model, docs/references.md). With the
//! column's density fixed, turbulent entrainment is balanced by an equal
//! detrainment of column air.
//!
//! The tracer equation of an entraining column (Squires & Turner 1962,
//! Tellus 14, 422, in their notation for a plume) then reads
//!
//!   dq/dt = -w dq/dz - r (q - q_env),  r = [max(dM/dz, 0) + epsilon |M|] / rho (s-1),
//!
//! for every specific quantity q (potential temperature, mixing ratios,
//! crystal number, specific charge), with the environment's value q_env
//! (base-state potential temperature and vapour; no hydrometeors, no charge,
//! no net charge of the environment's ions). Detrained air leaves with the
//! column's own values and changes no specific quantity. The advection
//! (`super::advection`, advective form) carries the -w dq/dz part and books
//! the continuity exchange at the local value; [`relax`] then replaces the
//! entering air's value by the environment's, exactly over a sub-step:
//! q <- q_env + (q - q_env) exp(-r dt).

named_choice! {
    /// Lateral exchange scheme (`column.entrainment`).
    pub enum Entrainment {
        /// Closed column: the sides exchange air only at the column's own values.
        Off = "off",
        /// Entraining plume of radius `column.radius` (module documentation).
        EntrainingPlume = "entraining_plume",
    }
}

/// The exchange rate r (s-1) of cell `k` from the face mass fluxes `m`
/// (n + 1 values, kg m-2 s-1), cell densities `rho` (kg m-3), spacing `dz`
/// (m) and the turbulent fractional rate `epsilon` = coefficient/R (m-1).
pub fn exchange_rate(m: &[f64], rho: &[f64], dz: f64, epsilon: f64, k: usize) -> f64 {
    let dynamic = ((m[k + 1] - m[k]) / dz).max(0.0);
    let turbulent = epsilon * 0.5 * (m[k].abs() + m[k + 1].abs());
    (dynamic + turbulent) / rho[k]
}

/// The fraction exp(-r dt) of each cell's departure from the environment
/// that survives a sub-step of `dt` s ([`exchange_rate`] for the arguments).
pub fn survival(m: &[f64], rho: &[f64], dz: f64, epsilon: f64, dt: f64, factor: &mut [f64]) {
    for (k, f) in factor.iter_mut().enumerate() {
        *f = (-exchange_rate(m, rho, dz, epsilon, k) * dt).exp();
    }
}

/// The environment's value of a relaxed quantity.
#[derive(Debug, Clone, Copy)]
pub enum Env<'a> {
    Uniform(f64),
    Profile(&'a [f64]),
}

/// Relaxes `q` toward the environment's values over a sub-step whose
/// survival fractions are `factor` ([`survival`]):
/// q <- q_env + (q - q_env) factor. Returns the change of the column integral
/// of `weight * q` (`weight` per cell: rho dz, kg m-2, for any specific
/// quantity, a mixing ratio or a charge per unit mass of air; the change is
/// then in kg m-2 times q's unit).
pub fn relax(q: &mut [f64], env: Env<'_>, factor: &[f64], weight: &[f64]) -> f64 {
    let mut change = 0.0;
    for k in 0..q.len() {
        let e = match env {
            Env::Uniform(v) => v,
            Env::Profile(p) => p[k],
        };
        let before = q[k];
        if before == e || factor[k] == 1.0 {
            continue;
        }
        q[k] = e + (before - e) * factor[k];
        change += weight[k] * (q[k] - before);
    }
    change
}
