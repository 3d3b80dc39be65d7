//! The prescribed updraft w(z, t) (m s-1), a product of a vertical shape and a
//! time envelope plus a constant background vertical velocity:
//!
//!   w(z, t) = w_peak S(z) A(t) + w_background.
//!
//! Shapes: a half sine between a bottom and a top height,
//! S = sin(pi (z - z_bot)/(z_top - z_bot)) there and 0 elsewhere (the usual
//! idealised profile of kinematic column models), or a table of (height,
//! factor) points, linear between them and 0 outside. Envelopes: constant 1; a
//! single pulse rising as sin^2 over the growth time, 1 over the mature time,
//! falling as cos^2 over the decay time (smooth at the joins); or a table of
//! (time, factor) points, linear between and held at the end values outside.
//! These are definitions of the experiment, not published parameterisations.

use crate::physics::profile::Table;

/// Vertical shape S(z) (1).
#[derive(Debug, Clone, PartialEq)]
pub enum Shape {
    Sine { bottom: f64, top: f64 },
    Table(Table),
}

/// Time envelope A(t) (1).
#[derive(Debug, Clone, PartialEq)]
pub enum Envelope {
    Constant,
    Pulse {
        start: f64,
        growth: f64,
        mature: f64,
        decay: f64,
    },
    Table(Table),
}

/// The updraft.
#[derive(Debug, Clone, PartialEq)]
pub struct Updraft {
    pub shape: Shape,
    pub envelope: Envelope,
    /// Peak speed w_peak (m s-1).
    pub peak: f64,
    /// Constant background vertical velocity (m s-1), negative for subsidence.
    pub background: f64,
}

impl Shape {
    pub fn factor(&self, z: f64) -> f64 {
        match self {
            Shape::Sine { bottom, top } => {
                if z <= *bottom || z >= *top {
                    0.0
                } else {
                    (std::f64::consts::PI * (z - bottom) / (top - bottom)).sin()
                }
            }
            Shape::Table(p) => p.lookup(z, Some(0.0)),
        }
    }
}

impl Envelope {
    pub fn factor(&self, t: f64) -> f64 {
        use std::f64::consts::FRAC_PI_2;
        match self {
            Envelope::Constant => 1.0,
            Envelope::Pulse {
                start,
                growth,
                mature,
                decay,
            } => {
                let s = t - start;
                if s <= 0.0 {
                    0.0
                } else if s < *growth {
                    (FRAC_PI_2 * s / growth).sin().powi(2)
                } else if s <= growth + mature {
                    1.0
                } else if s < growth + mature + decay {
                    (FRAC_PI_2 * (s - growth - mature) / decay).cos().powi(2)
                } else {
                    0.0
                }
            }
            Envelope::Table(p) => p.lookup(t, None),
        }
    }
}

impl Updraft {
    /// No motion at all.
    pub fn still() -> Self {
        Updraft {
            shape: Shape::Sine {
                bottom: 0.0,
                top: 1.0,
            },
            envelope: Envelope::Constant,
            peak: 0.0,
            background: 0.0,
        }
    }

    /// w (m s-1) at height `z` (m) and time `t` (s).
    pub fn w(&self, z: f64, t: f64) -> f64 {
        self.peak * self.shape.factor(z) * self.envelope.factor(t) + self.background
    }

    /// The vertical shape factors at heights `z` (m), for [`Self::w_on`].
    pub fn shape_factors(&self, z: &[f64]) -> Vec<f64> {
        z.iter().map(|&z| self.shape.factor(z)).collect()
    }

    /// w (m s-1) at the heights whose `shape_factors` are given, at time `t`
    /// (s): the same arithmetic as [`Self::w`] with the shape precomputed.
    pub fn w_on(&self, shape_factors: &[f64], t: f64, w: &mut [f64]) {
        let envelope = self.envelope.factor(t);
        for (w, &shape) in w.iter_mut().zip(shape_factors) {
            *w = self.peak * shape * envelope + self.background;
        }
    }
}
