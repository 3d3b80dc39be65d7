//! Prescribed-hydrometeor mode: instead of the bulk scheme, the mixing ratio
//! (and for cloud ice the number) of chosen species is imposed as a sum of
//! layers, each a vertical shape times a time envelope:
//!   q(z, t) = sum over layers of q_layer f(z) A(t),
//! with f a layer shape of [`crate::physics::profile::LayerShape`] (top hat,
//! Gaussian or table), and A an envelope of [`crate::physics::kinematics::updraft::Envelope`]. A
//! species with at least one layer is imposed over the whole column after
//! transport each step (so its profile is exactly the formula); species
//! without layers are only transported. No phase changes, no latent heat.
//! Charge still moves with the hydrometeors (transport and sedimentation).

use super::species::Species;
use crate::physics::kinematics::updraft::Envelope;
use crate::physics::profile::LayerShape;

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

    /// Imposes every layered species at time `t` (s) on the mixing ratios
    /// `q` (kg kg-1, `Species` order) and the ice number `n_ice` (kg-1) at
    /// heights `z` (m).
    pub fn impose(&self, z: &[f64], q: &mut [Vec<f64>; 6], n_ice: &mut [f64], t: f64) {
        for sp in Species::HYDROMETEORS {
            for (k, &z) in z.iter().enumerate() {
                if let Some((qv, n)) = self.value(sp, z, t) {
                    q[sp.index()][k] = qv;
                    if sp == Species::Ice {
                        n_ice[k] = n;
                    }
                }
            }
        }
    }
}
