//! Prescribed charge layers: shapes on the grid, initial density and growth.
//!
//! A layer's density is rho(z, t=0) = density * f(z) and charge keeps being
//! added at growth_rate * f(z), where f is the layer's shape factor
//! ([`crate::physics::profile::LayerShape`], 1 at the nominal density). No
//! published source is needed: these are definitions of the teaching input,
//! documented in docs/electrostatics.md. Cells get the shape's cell average:
//! the covered fraction for a top hat, so the column charge is exactly
//! density * thickness when the layer lies inside the grid; 16-interval
//! Simpson quadrature for the Gaussian (same column charge as the top hat)
//! and the table.

use crate::grid::Grid;
use crate::physics::profile::LayerShape;

/// One layer: its shape, density (C m-3) and growth rate (C m-3 s-1).
#[derive(Debug, Clone, PartialEq)]
pub struct ChargeLayer {
    pub shape: LayerShape,
    pub density: f64,
    pub growth_rate: f64,
}

/// The summed layers on the grid (C m-3 and C m-3 s-1 at centres).
#[derive(Debug, Clone, PartialEq)]
pub struct PrescribedCharge {
    pub initial: Vec<f64>,
    pub growth: Vec<f64>,
    /// Column integral of `growth` (C m-2 s-1), for the charge budget.
    pub column_growth: f64,
}

impl PrescribedCharge {
    /// Puts the layers on the grid. A layer that lies wholly outside the
    /// grid is an error: its position in `layers` (from 0) is returned.
    pub fn new(layers: &[ChargeLayer], grid: &Grid) -> Result<Self, usize> {
        let n = grid.len();
        let faces = &grid.z_face;
        let mut initial = vec![0.0; n];
        let mut growth = vec![0.0; n];
        for (i, layer) in layers.iter().enumerate() {
            let f: Vec<f64> = (0..n)
                .map(|k| layer.shape.cell_average(faces[k], faces[k + 1], grid.dz))
                .collect();
            if f.iter().all(|&x| x == 0.0) {
                return Err(i);
            }
            for k in 0..n {
                initial[k] += layer.density * f[k];
                growth[k] += layer.growth_rate * f[k];
            }
        }
        let column_growth = growth.iter().sum::<f64>() * grid.dz;
        Ok(PrescribedCharge {
            initial,
            growth,
            column_growth,
        })
    }

    /// No prescribed charge.
    pub fn none(n: usize) -> Self {
        PrescribedCharge {
            initial: vec![0.0; n],
            growth: vec![0.0; n],
            column_growth: 0.0,
        }
    }

    /// Adds the growth over `dt` s to the prescribed carrier's density.
    pub fn grow(&self, rho: &mut [f64], dt: f64) {
        for (r, g) in rho.iter_mut().zip(&self.growth) {
            *r += g * dt;
        }
    }
}
