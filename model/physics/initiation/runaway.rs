//! Relativistic runaway electron avalanches with their seed.
//!
//! Above the runaway threshold E_th delta (Dwyer 2003) an energetic
//! electron multiplies as exp(integral dz/lambda). The e-folding length of
//! Coleman & Dwyer (2006), GRL 33, L11810, lambda = 7.3 MeV/(e E - 0.276
//! MeV/m delta), was fitted for fields of about 300 kV/m delta and above
//! (from memory, docs/references.md); its pole (276 kV/m) lies below the
//! threshold (284 kV/m), so used down to the threshold it would give
//! avalanches a finite length (912 m) exactly where they stop growing. Here
//! the fit is used from `fit_floor` (300 kV/m delta) up, and between the
//! threshold and that floor the growth rate 1/lambda rises linearly from
//! zero: continuous, zero at the threshold, the fit above (a modelling
//! choice for the gap the fit does not cover).
//!
//! The seed is the flux of energetic secondary cosmic-ray electrons at the
//! start of a stretch ([`crate::physics::ions::ionisation::energetic_electron_flux`]);
//! the runaway electron flux that leaves the stretch is the seed times the
//! multiplication, the source of the gamma-ray glows observed above
//! thunderstorms (a diagnostic here).

use crate::physics::atmosphere::relative_density;

/// Avalanche length parameters (SI).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Growth {
    /// 7.3 MeV per elementary charge (V).
    pub energy_scale: f64,
    /// 0.276 MeV/m per elementary charge at sea-level density (V m-1).
    pub friction_field: f64,
    /// Runaway threshold at sea-level density (V m-1).
    pub threshold: f64,
    /// Lowest field of the fit at sea-level density (V m-1).
    pub fit_floor: f64,
}

impl Default for Growth {
    fn default() -> Self {
        Growth {
            energy_scale: 7.3e6,
            friction_field: 2.76e5,
            threshold: 2.84e5,
            fit_floor: 3.0e5,
        }
    }
}

impl Growth {
    /// Avalanche growth rate 1/lambda (m-1) in field `e` (V m-1) at air
    /// density `rho` (kg m-3); zero at and below the threshold.
    pub fn rate(&self, e: f64, rho: f64) -> f64 {
        let delta = relative_density(rho);
        let e = e.abs();
        let threshold = self.threshold * delta;
        if e <= threshold {
            return 0.0;
        }
        let floor = self.fit_floor.max(self.threshold) * delta;
        let fit = |x: f64| {
            let excess = x - self.friction_field * delta;
            if excess > 0.0 {
                excess / self.energy_scale
            } else {
                0.0
            }
        };
        if e >= floor {
            fit(e)
        } else {
            fit(floor) * (e - threshold) / (floor - threshold)
        }
    }
}

/// The strongest avalanche of the column.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Avalanche {
    /// Largest e-folding count over a stretch (1).
    pub efolds: f64,
    /// Middle of that stretch (m), NaN without one.
    pub height: f64,
    /// Face nearest that middle.
    pub face: usize,
    /// Largest runaway electron flux leaving the end of a stretch
    /// (m-2 s-1), and the height of that end (m, NaN without one).
    pub flux: f64,
    pub flux_height: f64,
}

/// Walks the contiguous stretches of faces where |E| exceeds the threshold,
/// integrates 1/lambda over each (trapezoid rule between faces, exact for a
/// uniform field) and multiplies the seed flux at the stretch's start
/// (`seed` on faces, m-2 s-1) by exp(count). Electrons run away against the
/// field, so a stretch's far end is its top where E_z < 0 and its bottom
/// where E_z > 0.
pub fn avalanches(e: &[f64], z: &[f64], rho: &[f64], seed: &[f64], g: &Growth) -> Avalanche {
    let mut best = Avalanche {
        height: f64::NAN,
        flux_height: f64::NAN,
        ..Avalanche::default()
    };
    let n = e.len();
    let mut k = 0;
    while k < n {
        if g.rate(e[k], rho[k]) <= 0.0 {
            k += 1;
            continue;
        }
        let start = k;
        let mut count = 0.0;
        while k + 1 < n && g.rate(e[k + 1], rho[k + 1]) > 0.0 {
            count +=
                0.5 * (g.rate(e[k], rho[k]) + g.rate(e[k + 1], rho[k + 1])) * (z[k + 1] - z[k]);
            k += 1;
        }
        let end = k;
        if count > best.efolds {
            best.efolds = count;
            best.height = 0.5 * (z[start] + z[end]);
            best.face = (start + end) / 2;
        }
        // Upward runaway where the field points down (E_z < 0).
        let (from, to) = if e[start] < 0.0 {
            (start, end)
        } else {
            (end, start)
        };
        let flux = seed[from] * count.exp();
        if count > 0.0 && flux > best.flux {
            best.flux = flux;
            best.flux_height = z[to];
        }
        k += 1;
    }
    best
}
