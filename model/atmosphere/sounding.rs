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
//! interpolated linearly in height.

use super::saturation::{
    mixing_ratio, murphy_koop_2005_liquid, virtual_temperature, LIQUID_T_MAX, LIQUID_T_MIN,
};
use crate::constants::{G0, R_DRY, T_MELT};
use crate::error::ConfigIssue;

/// Recognised column names, in the order vertical, temperature, humidity.
pub const VERTICAL_COLUMNS: [&str; 2] = ["height", "pressure"];
pub const TEMPERATURE_COLUMN: &str = "temperature";
pub const HUMIDITY_COLUMNS: [&str; 2] = ["dew_point", "relative_humidity"];

#[derive(Debug, Clone, Copy, PartialEq)]
enum Vertical {
    Height,
    Pressure,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Humidity {
    DewPoint,
    RelativeHumidity,
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

fn fmt_allowed(lo: f64, hi: f64) -> String {
    format!("[{lo}, {hi}]")
}

impl Sounding {
    /// Validates a table. `key` names the configuration key that held it, for errors.
    pub fn from_table(
        columns: &[String],
        rows: &[Vec<f64>],
        key: &str,
    ) -> Result<Self, Vec<ConfigIssue>> {
        let col_err = |msg: String| {
            vec![ConfigIssue::new(key.replace("rows", "columns"), msg)
                .value(format!("{columns:?}"))
                .allowed(format!(
                    "three names: one of {VERTICAL_COLUMNS:?}, then \"{TEMPERATURE_COLUMN}\", then one of {HUMIDITY_COLUMNS:?}"
                ))]
        };
        if columns.len() != 3 {
            return Err(col_err(format!(
                "expected 3 columns, found {}",
                columns.len()
            )));
        }
        let vertical = match columns[0].as_str() {
            "height" => Vertical::Height,
            "pressure" => Vertical::Pressure,
            other => return Err(col_err(format!("unknown vertical column \"{other}\""))),
        };
        if columns[1] != TEMPERATURE_COLUMN {
            return Err(col_err(format!(
                "second column must be \"{TEMPERATURE_COLUMN}\", found \"{}\"",
                columns[1]
            )));
        }
        let humidity_kind = match columns[2].as_str() {
            "dew_point" => Humidity::DewPoint,
            "relative_humidity" => Humidity::RelativeHumidity,
            other => return Err(col_err(format!("unknown humidity column \"{other}\""))),
        };

        let mut issues = Vec::new();
        if rows.len() < 2 {
            issues.push(ConfigIssue::new(
                key,
                format!("a sounding needs at least 2 levels, found {}", rows.len()),
            ));
            return Err(issues);
        }
        let t_lo = LIQUID_T_MIN - T_MELT;
        let t_hi = LIQUID_T_MAX - T_MELT;
        for (i, row) in rows.iter().enumerate() {
            let level = i + 1;
            if row.len() != 3 {
                issues.push(
                    ConfigIssue::new(
                        key,
                        format!(
                            "level {level} has {} values, expected 3: a missing value",
                            row.len()
                        ),
                    )
                    .value(format!("{row:?}")),
                );
                continue;
            }
            for (c, v) in row.iter().enumerate() {
                if !v.is_finite() {
                    issues.push(
                        ConfigIssue::new(
                            key,
                            format!("level {level}, column \"{}\": missing value", columns[c]),
                        )
                        .value(format!("{v}")),
                    );
                }
            }
            let [vert, t, h] = [row[0], row[1], row[2]];
            let check =
                |issues: &mut Vec<ConfigIssue>, col: &str, v: f64, unit: &str, lo: f64, hi: f64| {
                    if v.is_finite() && !(lo..=hi).contains(&v) {
                        issues.push(
                            ConfigIssue::new(
                                key,
                                format!("level {level}, column \"{col}\" out of range"),
                            )
                            .value(format!("{v}"))
                            .unit(unit)
                            .allowed(fmt_allowed(lo, hi)),
                        );
                    }
                };
            match vertical {
                Vertical::Height => check(&mut issues, "height", vert, "m", -500.0, 100_000.0),
                Vertical::Pressure => check(&mut issues, "pressure", vert, "hPa", 1.0, 1100.0),
            }
            // Murphy & Koop (2005) liquid formula validity bounds the temperatures.
            check(&mut issues, "temperature", t, "degC", t_lo, t_hi);
            match humidity_kind {
                Humidity::DewPoint => {
                    check(&mut issues, "dew_point", h, "degC", t_lo, t_hi);
                    if h.is_finite() && t.is_finite() && h > t + 1e-9 {
                        issues.push(
                            ConfigIssue::new(key, format!("level {level}: dew point {h} degC exceeds temperature {t} degC"))
                                .value(format!("{row:?}")),
                        );
                    }
                }
                Humidity::RelativeHumidity => {
                    check(&mut issues, "relative_humidity", h, "%", 0.0, 100.0)
                }
            }
        }
        if !issues.is_empty() {
            return Err(issues);
        }
        for i in 1..rows.len() {
            let (a, b) = (rows[i - 1][0], rows[i][0]);
            let ok = match vertical {
                Vertical::Height => b > a,
                Vertical::Pressure => b < a,
            };
            if !ok {
                let dir = match vertical {
                    Vertical::Height => "strictly increasing height",
                    Vertical::Pressure => "strictly decreasing pressure",
                };
                issues.push(ConfigIssue::new(
                    key,
                    format!(
                        "levels {} and {} are not monotonic: the table must have {dir}",
                        i,
                        i + 1
                    ),
                ));
            }
        }
        if !issues.is_empty() {
            return Err(issues);
        }

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
                    let r = mixing_ratio(e, p[i]).ok_or_else(|| {
                        vec![ConfigIssue::new(
                            key,
                            format!("level {}: vapour pressure exceeds air pressure", i + 1),
                        )]
                    })?;
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

    /// Checks that the levels span `[0, top]` (m).
    pub fn check_span(&self, top: f64, key: &str) -> Result<(), ConfigIssue> {
        let lo = self.height[0];
        let hi = self.height[self.height.len() - 1];
        if lo > 0.0 || hi < top {
            return Err(ConfigIssue::new(
                key,
                format!("the sounding spans {lo:.1} m to {hi:.1} m above ground but the grid spans 0 m to {top} m; extend the sounding or lower grid.top"),
            ));
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

/// Reads a sounding CSV: a header line of column names, then one level per
/// line; blank lines and lines starting with `#` are skipped. An empty field,
/// `NA` or `nan` is a missing value, reported by the validation.
pub fn read_csv(
    path: &std::path::Path,
    key: &str,
) -> Result<(Vec<String>, Vec<Vec<f64>>), ConfigIssue> {
    let text = std::fs::read_to_string(path).map_err(|e| {
        ConfigIssue::new(key, format!("cannot read sounding file: {e}"))
            .value(format!("\"{}\"", path.display()))
    })?;
    let mut lines = text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'));
    let (_, header) = lines.next().ok_or_else(|| {
        ConfigIssue::new(key, "sounding file is empty").value(format!("\"{}\"", path.display()))
    })?;
    let columns: Vec<String> = header.split(',').map(|s| s.trim().to_string()).collect();
    let mut rows = Vec::new();
    for (lineno, line) in lines {
        let mut row = Vec::new();
        for field in line.split(',') {
            let f = field.trim();
            let v = if f.is_empty() || f.eq_ignore_ascii_case("na") || f.eq_ignore_ascii_case("nan")
            {
                f64::NAN
            } else {
                f.parse::<f64>().map_err(|_| {
                    ConfigIssue::new(
                        key,
                        format!("{}:{}: \"{f}\" is not a number", path.display(), lineno + 1),
                    )
                })?
            };
            row.push(v);
        }
        rows.push(row);
    }
    Ok((columns, rows))
}
