//! Prescribed-hydrometeor mode: instead of the bulk scheme, the mixing ratio
//! (and for cloud ice the number) of chosen species is imposed as a sum of
//! layers, each a vertical shape times a time envelope:
//!   q(z, t) = sum over layers of q_layer f(z) A(t),
//! with f a Gaussian exp(-(z - c)^2/(2 s^2)), s = thickness/sqrt(2 pi), or a
//! table, and A an envelope of [`crate::kinematics::updraft::Envelope`]. A
//! species with at least one layer is imposed over the whole column after
//! transport each step (so its profile is exactly the formula); species
//! without layers are only transported. No phase changes, no latent heat.
//! Charge still moves with the hydrometeors (transport and sedimentation).

use super::species::Species;
use crate::experiment::Experiment;
use crate::kinematics::updraft::{table_lookup, Envelope};
use crate::state::State;

/// Vertical shape of a layer.
#[derive(Debug, Clone, PartialEq)]
pub enum LayerShape {
    Gaussian { center: f64, thickness: f64 },
    Table(Vec<[f64; 2]>),
}

impl LayerShape {
    pub fn factor(&self, z: f64) -> f64 {
        match self {
            LayerShape::Gaussian { center, thickness } => {
                let s = thickness / (2.0 * std::f64::consts::PI).sqrt();
                (-(z - center) * (z - center) / (2.0 * s * s)).exp()
            }
            LayerShape::Table(p) => table_lookup(p, z, Some(0.0)),
        }
    }
}

/// One imposed layer.
#[derive(Debug, Clone, PartialEq)]
pub struct HydroLayer {
    pub species: Species,
    pub shape: LayerShape,
    pub envelope: Envelope,
    /// Peak mixing ratio (kg kg-1).
    pub mixing_ratio: f64,
    /// Peak number (kg-1), cloud ice only.
    pub number: f64,
}

/// All layers.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PrescribedHydrometeors {
    pub layers: Vec<HydroLayer>,
}

impl PrescribedHydrometeors {
    /// The imposed mixing ratio (kg kg-1) and ice number (kg-1) of `species`
    /// at (z, t), or `None` when the species is not imposed.
    pub fn value(&self, species: Species, z: f64, t: f64) -> Option<(f64, f64)> {
        let mut any = false;
        let (mut q, mut n) = (0.0, 0.0);
        for l in self.layers.iter().filter(|l| l.species == species) {
            any = true;
            let a = l.shape.factor(z) * l.envelope.factor(t);
            q += l.mixing_ratio * a;
            n += l.number * a;
        }
        any.then_some((q, n))
    }

    /// Imposes every layered species on the state at time `t` (s).
    pub fn impose(&self, exp: &Experiment, state: &mut State, t: f64) {
        for sp in Species::HYDROMETEORS {
            for (k, &z) in exp.grid.z.iter().enumerate() {
                if let Some((q, n)) = self.value(sp, z, t) {
                    state.q[sp.index()][k] = q;
                    if sp == Species::Ice {
                        state.n_ice[k] = n;
                    }
                }
            }
        }
    }
}
