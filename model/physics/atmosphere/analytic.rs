//! Analytic base state: constant lapse rate to a tropopause, a second constant
//! lapse rate above, relative humidity linear in height from the surface to the
//! tropopause and constant above. This is the textbook piecewise-polytropic
//! atmosphere (the form of the U.S. Standard Atmosphere's lower layers) with a
//! humidity profile of the user's choosing; no coefficient here is published,
//! every number comes from the configuration.

/// Parameters in SI units (converted from the configuration's input units).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AnalyticProfile {
    /// Surface air temperature (K).
    pub surface_temperature: f64,
    /// Surface pressure (Pa).
    pub surface_pressure: f64,
    /// Relative humidity over liquid water at the surface (fraction, 0-1).
    pub surface_rh: f64,
    /// Relative humidity over liquid water at and above the tropopause (fraction).
    pub tropopause_rh: f64,
    /// Tropospheric lapse rate -dT/dz (K m-1), positive when T falls with height.
    pub lapse_rate: f64,
    /// Tropopause height above ground (m).
    pub tropopause_height: f64,
    /// Stratospheric lapse rate -dT/dz (K m-1), negative for warming with height.
    pub stratosphere_lapse_rate: f64,
}

impl AnalyticProfile {
    /// Temperature (K) at height `z` (m).
    pub fn temperature(&self, z: f64) -> f64 {
        if z <= self.tropopause_height {
            self.surface_temperature - self.lapse_rate * z
        } else {
            let t_tp = self.surface_temperature - self.lapse_rate * self.tropopause_height;
            t_tp - self.stratosphere_lapse_rate * (z - self.tropopause_height)
        }
    }

    /// Relative humidity over liquid (fraction) at height `z` (m).
    pub fn relative_humidity(&self, z: f64) -> f64 {
        if z >= self.tropopause_height {
            self.tropopause_rh
        } else {
            let w = z / self.tropopause_height;
            (1.0 - w) * self.surface_rh + w * self.tropopause_rh
        }
    }
}
