//! Sounding tables: a vertical coordinate (height or pressure), temperature
//! and a humidity variable (dew point or relative humidity), given inline in
//! the configuration or as a CSV file, validated and put on the model grid.
//!
//! Units of the table columns (also in docs/configuration.md):
//! `height` m above ground, `pressure` hPa, `temperature` degC,
//! `dew_point` degC, `relative_humidity` percent over liquid water.
//!
//! Pressure soundings are converted to heights with the hypsometric equation
//! (Wallace & Hobbs 2006, Eq. 3.29) using the layer-mean virtual temperature
//! (mean of the two levels, i.e. T_v linear in ln p), the first level being
//! the ground. Temperature and dew point (or relative humidity) are then
//! interpolated linearly in height. The tables are checked in
//! `crate::setup::sounding_input` before they reach this module.

use super::saturation::{mixing_ratio, murphy_koop_2005_liquid, virtual_temperature};
use crate::physics::constants::{G0, R_DRY, T_MELT};

/// Recognised column names, in the order vertical, temperature, humidity.
pub const TEMPERATURE_COLUMN: &str = "temperature";

named_choice! {
    /// The vertical coordinate of a sounding table (its first column's name).
    pub enum Vertical {
        Height = "height",
        Pressure = "pressure",
    }
}

named_choice! {
    /// The humidity column of a sounding table (its third column's name).
    pub enum Humidity {
        DewPoint = "dew_point",
        RelativeHumidity = "relative_humidity",
    }
}

/// A validated sounding on heights (m), with temperature (K) and a humidity
/// column that is interpolated in its own variable before conversion.
#[derive(Debug, Clone, PartialEq)]
pub struct Sounding {
    /// Level heights above ground (m), strictly increasing.
    pub height: Vec<f64>,
    /// Temperature (K).
    pub temperature: Vec<f64>,
    humidity_kind: Humidity,
    /// Dew point (K) or relative humidity (fraction), per `humidity_kind`.
    humidity: Vec<f64>,
    /// Pressure at the first level (Pa) when the sounding was given in pressure.
    pub surface_pressure_from_table: Option<f64>,
}

impl Sounding {
    /// The sounding of validated levels `rows` ([vertical, temperature,
    /// humidity] in the table units of the module documentation). Pressure
    /// levels are converted to heights; the only failure is a level whose
    /// vapour pressure exceeds the air pressure (its number, from 1).
    pub fn from_levels(
        vertical: Vertical,
        humidity_kind: Humidity,
        rows: &[Vec<f64>],
    ) -> Result<Self, usize> {
        let temperature: Vec<f64> = rows.iter().map(|r| r[1] + T_MELT).collect();
        let humidity: Vec<f64> = match humidity_kind {
            Humidity::DewPoint => rows.iter().map(|r| r[2] + T_MELT).collect(),
            Humidity::RelativeHumidity => rows.iter().map(|r| r[2] / 100.0).collect(),
        };
        let (height, surface_pressure_from_table) = match vertical {
            Vertical::Height => (rows.iter().map(|r| r[0]).collect(), None),
            Vertical::Pressure => {
                let p: Vec<f64> = rows.iter().map(|r| r[0] * 100.0).collect();
                let mut z = vec![0.0; rows.len()];
                let mut tv_prev = None;
                for i in 0..rows.len() {
                    let e = vapour_pressure(humidity_kind, temperature[i], humidity[i]);
                    let r = mixing_ratio(e, p[i]).ok_or(i + 1)?;
                    let tv = virtual_temperature(temperature[i], r);
                    if let Some(tv0) = tv_prev {
                        // Hypsometric equation, Wallace & Hobbs (2006) Eq. 3.29.
                        z[i] = z[i - 1] + R_DRY / G0 * 0.5 * (tv0 + tv) * (p[i - 1] / p[i]).ln();
                    }
                    tv_prev = Some(tv);
                }
                (z, Some(p[0]))
            }
        };
        Ok(Sounding {
            height,
            temperature,
            humidity_kind,
            humidity,
            surface_pressure_from_table,
        })
    }

    /// Whether the levels span `[0, top]` (m); `Err` gives the span (m).
    pub fn check_span(&self, top: f64) -> Result<(), (f64, f64)> {
        let lo = self.height[0];
        let hi = self.height[self.height.len() - 1];
        if lo > 0.0 || hi < top {
            return Err((lo, hi));
        }
        Ok(())
    }

    /// Temperature (K) and vapour pressure (Pa) at height `z` (m), linear
    /// interpolation in height of temperature and of the humidity column.
    pub fn at(&self, z: f64) -> (f64, f64) {
        let n = self.height.len();
        // Below the first level the clamp gives i = 1 and w clamps to 0.
        let i = self.height.partition_point(|&h| h <= z).clamp(1, n - 1);
        let (z0, z1) = (self.height[i - 1], self.height[i]);
        let w = ((z - z0) / (z1 - z0)).clamp(0.0, 1.0);
        // (1-w) a + w b is exact at both ends, so levels that coincide with
        // grid heights are reproduced to the last bit.
        let lerp = |a: &[f64]| (1.0 - w) * a[i - 1] + w * a[i];
        let t = lerp(&self.temperature);
        let h = lerp(&self.humidity);
        (t, vapour_pressure(self.humidity_kind, t, h))
    }
}

fn vapour_pressure(kind: Humidity, t: f64, h: f64) -> f64 {
    match kind {
        // Dew point is defined over liquid water (WMO convention), so e = e_w(T_d).
        Humidity::DewPoint => murphy_koop_2005_liquid(h),
        Humidity::RelativeHumidity => h * murphy_koop_2005_liquid(t),
    }
}
