//! Prescribed charge layers: shapes on the grid, initial density and growth.
//!
//! A layer's density is rho(z, t=0) = density * f(z) and charge keeps being
//! added at growth_rate * f(z), where f is the layer's shape factor (1 at the
//! nominal density). Shapes (no published source needed: these are
//! definitions of the teaching input, documented in docs/electrostatics.md):
//! - top hat: f = 1 on [center - thickness/2, center + thickness/2]; cells
//!   get the covered fraction, so the column charge is exactly
//!   density * thickness when the layer lies inside the grid;
//! - gaussian: f = exp(-(z - center)^2 / (2 s^2)), s = thickness/sqrt(2 pi),
//!   the same column charge as the top hat; cell averages by 16-interval
//!   Simpson quadrature;
//! - table: f linear between (height, factor) points, zero outside; cell
//!   averages by the same quadrature.

use crate::config::{LayerConfig, LayerShape};
use crate::error::ConfigIssue;
use crate::grid::Grid;

/// The summed layers on the grid (C m-3 and C m-3 s-1 at centres).
#[derive(Debug, Clone, PartialEq)]
pub struct PrescribedCharge {
    pub initial: Vec<f64>,
    pub growth: Vec<f64>,
    /// Column integral of `growth` (C m-2 s-1), for the charge budget.
    pub column_growth: f64,
}

const NANO: f64 = 1e-9;

/// Cell average of `f` over [lo, hi] by composite Simpson's rule, 16 intervals.
fn cell_average(f: &dyn Fn(f64) -> f64, lo: f64, hi: f64) -> f64 {
    let m = 16;
    let h = (hi - lo) / m as f64;
    let mut s = f(lo) + f(hi);
    for i in 1..m {
        s += f(lo + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
    }
    s * h / 3.0 / (hi - lo)
}

fn shape_on_grid(layer: &LayerConfig, grid: &Grid, key: &str) -> Result<Vec<f64>, ConfigIssue> {
    let faces = &grid.z_face;
    let n = grid.len();
    let need = |what: &str, v: Option<f64>| {
        v.ok_or_else(|| {
            ConfigIssue::new(
                format!("{key}.{what}"),
                format!("a {:?} layer needs `{what}`", layer.shape),
            )
        })
    };
    let f: Vec<f64> = match layer.shape {
        LayerShape::TopHat | LayerShape::Gaussian => {
            let c = need("center", layer.center)?;
            let d = need("thickness", layer.thickness)?;
            if layer.points.is_some() {
                return Err(ConfigIssue::new(
                    format!("{key}.points"),
                    "`points` belongs to shape = \"table\" only",
                ));
            }
            if layer.shape == LayerShape::TopHat {
                let (lo, hi) = (c - 0.5 * d, c + 0.5 * d);
                (0..n)
                    .map(|k| ((hi.min(faces[k + 1]) - lo.max(faces[k])) / grid.dz).max(0.0))
                    .collect()
            } else {
                let s = d / (2.0 * std::f64::consts::PI).sqrt();
                let g = move |z: f64| (-(z - c) * (z - c) / (2.0 * s * s)).exp();
                (0..n)
                    .map(|k| cell_average(&g, faces[k], faces[k + 1]))
                    .collect()
            }
        }
        LayerShape::Table => {
            if layer.center.is_some() || layer.thickness.is_some() {
                return Err(ConfigIssue::new(
                    key,
                    "a table layer takes its shape from `points`; remove `center` and `thickness`",
                ));
            }
            let pts = layer.points.as_ref().ok_or_else(|| {
                ConfigIssue::new(format!("{key}.points"), "a table layer needs `points`")
            })?;
            let bad = |m: String| {
                ConfigIssue::new(format!("{key}.points"), m).allowed("rows [height (m), factor (1)], at least 2, strictly increasing height, finite values")
            };
            if pts.len() < 2 {
                return Err(bad(format!("{} rows given", pts.len())));
            }
            for (i, p) in pts.iter().enumerate() {
                if p.len() != 2 || !p.iter().all(|v| v.is_finite()) {
                    return Err(bad(format!("row {} is not two finite numbers", i + 1))
                        .value(format!("{p:?}")));
                }
                if i > 0 && p[0] <= pts[i - 1][0] {
                    return Err(bad(format!("row {}: heights must increase", i + 1)));
                }
            }
            let pts = pts.clone();
            let f = move |z: f64| {
                if z < pts[0][0] || z > pts[pts.len() - 1][0] {
                    return 0.0;
                }
                let i = pts.partition_point(|p| p[0] <= z).clamp(1, pts.len() - 1);
                let w = (z - pts[i - 1][0]) / (pts[i][0] - pts[i - 1][0]);
                (1.0 - w) * pts[i - 1][1] + w * pts[i][1]
            };
            (0..n)
                .map(|k| cell_average(&f, faces[k], faces[k + 1]))
                .collect()
        }
    };
    if f.iter().all(|&x| x == 0.0) {
        return Err(ConfigIssue::new(
            key,
            format!("the layer lies outside the grid (0 to {} m)", grid.top()),
        ));
    }
    Ok(f)
}

impl PrescribedCharge {
    /// Puts the configured layers on the grid. Errors name the layer (1-based).
    pub fn new(layers: &[LayerConfig], grid: &Grid) -> Result<Self, ConfigIssue> {
        let n = grid.len();
        let mut initial = vec![0.0; n];
        let mut growth = vec![0.0; n];
        for (i, layer) in layers.iter().enumerate() {
            let key = format!("prescribed_charge.layers[{}]", i + 1);
            let f = shape_on_grid(layer, grid, &key)?;
            for k in 0..n {
                initial[k] += layer.density * NANO * f[k];
                growth[k] += layer.growth_rate * NANO * f[k];
            }
        }
        let column_growth = growth.iter().sum::<f64>() * grid.dz;
        Ok(PrescribedCharge {
            initial,
            growth,
            column_growth,
        })
    }

    /// Adds the growth over `dt` s to the prescribed carrier's density.
    pub fn grow(&self, rho: &mut [f64], dt: f64) {
        for (r, g) in rho.iter_mut().zip(&self.growth) {
            *r += g * dt;
        }
    }
}
