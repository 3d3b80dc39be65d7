//! Base-state atmosphere: temperature, pressure, density and vapour on the
//! grid's cell centres and faces, from one of three sources.
//!
//! Pressure is hydrostatic (see [`hydrostatic`]); density follows from the
//! gas law for moist air, rho = p / (R_d T_v). Relative humidity and dew point
//! are with respect to plane liquid water at all temperatures (WMO
//! convention), with saturation after Murphy & Koop (2005).

pub mod analytic;
pub mod hydrostatic;
pub mod saturation;
pub mod sounding;
pub mod standard_1976;

use crate::grid::Grid;
use crate::physics::constants::{CP_DRY, P_REF_THETA, R_DRY};
use analytic::AnalyticProfile;
use saturation::{murphy_koop_2005_liquid, virtual_temperature};
use sounding::Sounding;

/// Where the base state comes from (resolved from the configuration, SI units).
#[derive(Debug, Clone, PartialEq)]
pub enum BaseSource {
    /// U.S. Standard Atmosphere 1976, dry.
    Standard1976,
    /// Piecewise-linear temperature with a relative-humidity profile.
    Analytic(AnalyticProfile),
    /// A sounding table with the pressure (Pa) at the ground.
    Sounding {
        sounding: Sounding,
        surface_pressure: f64,
    },
}

/// Base-state fields at one set of heights.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Profile {
    /// Air temperature (K).
    pub temperature: Vec<f64>,
    /// Air pressure (Pa).
    pub pressure: Vec<f64>,
    /// Moist-air density (kg m-3).
    pub density: Vec<f64>,
    /// Water-vapour mixing ratio (kg kg-1).
    pub vapour: Vec<f64>,
    /// Dry potential temperature theta = T (p_ref/p)^(R_d/c_p) (K)
    /// (Poisson's equation; Wallace & Hobbs 2006, Eq. 3.54).
    pub potential_temperature: Vec<f64>,
}

impl Profile {
    fn push(&mut self, t: f64, p: f64, rho: f64, r: f64) {
        self.temperature.push(t);
        self.pressure.push(p);
        self.density.push(rho);
        self.vapour.push(r);
        self.potential_temperature.push(t * inverse_exner(p));
    }
}

/// Relative air density delta = rho / rho0 (1), rho0 = 1.2250 kg m-3 of the
/// U.S. Standard Atmosphere 1976 at sea level: the scaling of breakdown and
/// inception thresholds with air density.
pub fn relative_density(rho: f64) -> f64 {
    rho / crate::physics::constants::RHO_AIR_SEA_LEVEL
}

/// Exner function (p/p_ref)^(R_d/c_p) (1) at pressure `p` (Pa): T = theta
/// times it (Poisson's equation for dry adiabatic processes; Wallace & Hobbs
/// 2006, Eq. 3.54).
pub fn exner(p: f64) -> f64 {
    (p / P_REF_THETA).powf(R_DRY / CP_DRY)
}

/// The reciprocal of [`exner`], (p_ref/p)^(R_d/c_p) (1): theta = T times it.
/// Written as its own power (not 1/exner) so the base state's potential
/// temperature is the correctly rounded value of the formula.
pub fn inverse_exner(p: f64) -> f64 {
    (P_REF_THETA / p).powf(R_DRY / CP_DRY)
}

/// The base state on cell centres and faces.
#[derive(Debug, Clone, PartialEq)]
pub struct BaseState {
    pub centre: Profile,
    pub face: Profile,
}

impl BaseState {
    /// Evaluates the source on the grid. Errors are plain sentences; the
    /// configuration layer attaches the key they belong to.
    pub fn build(grid: &Grid, source: &BaseSource) -> Result<Self, String> {
        let zs = grid.half_levels();
        let (t, p, rho, r): (Vec<f64>, Vec<f64>, Vec<f64>, Vec<f64>) = match source {
            BaseSource::Standard1976 => {
                let mut out = (vec![], vec![], vec![], vec![]);
                for &z in &zs {
                    let s = standard_1976::us_standard_1976(z)
                        .ok_or_else(|| format!("height {z} m is above the 86 km top of the U.S. Standard Atmosphere 1976"))?;
                    out.0.push(s.temperature);
                    out.1.push(s.pressure);
                    out.2.push(s.density);
                    out.3.push(0.0);
                }
                out
            }
            BaseSource::Analytic(a) => {
                let t: Vec<f64> = zs.iter().map(|&z| a.temperature(z)).collect();
                check_temperatures(&zs, &t)?;
                let e: Vec<f64> = zs
                    .iter()
                    .zip(&t)
                    .map(|(&z, &tk)| a.relative_humidity(z) * murphy_koop_2005_liquid(tk))
                    .collect();
                moist_column(&zs, t, &e, a.surface_pressure)?
            }
            BaseSource::Sounding {
                sounding,
                surface_pressure,
            } => {
                let (t, e): (Vec<f64>, Vec<f64>) = zs.iter().map(|&z| sounding.at(z)).unzip();
                moist_column(&zs, t, &e, *surface_pressure)?
            }
        };
        let mut centre = Profile::default();
        let mut face = Profile::default();
        for i in 0..zs.len() {
            let target = if i % 2 == 0 { &mut face } else { &mut centre };
            target.push(t[i], p[i], rho[i], r[i]);
        }
        Ok(BaseState { centre, face })
    }
}

fn check_temperatures(zs: &[f64], t: &[f64]) -> Result<(), String> {
    for (&z, &tk) in zs.iter().zip(t) {
        if !(saturation::LIQUID_T_MIN..=saturation::LIQUID_T_MAX).contains(&tk) {
            return Err(format!(
                "temperature {tk:.2} K at {z} m is outside {}-{} K, the validity range of Murphy & Koop (2005)",
                saturation::LIQUID_T_MIN,
                saturation::LIQUID_T_MAX
            ));
        }
    }
    Ok(())
}

type Columns = (Vec<f64>, Vec<f64>, Vec<f64>, Vec<f64>);

fn moist_column(zs: &[f64], t: Vec<f64>, e: &[f64], p_surface: f64) -> Result<Columns, String> {
    let h = hydrostatic::integrate(zs, &t, e, p_surface)
        .map_err(|i| format!("vapour pressure reaches air pressure at {} m", zs[i]))?;
    let rho = (0..zs.len())
        .map(|i| h.pressure[i] / (R_DRY * virtual_temperature(t[i], h.vapour[i])))
        .collect();
    Ok((t, h.pressure, rho, h.vapour))
}
