//! Sounding input: reading a CSV file, checking a sounding table (columns,
//! ranges, missing values, monotonic levels) with errors that name the key,
//! and resolving `[atmosphere.sounding]` into the base-state source.

use crate::error::{ConfigError, ConfigIssue};
use crate::physics::atmosphere::saturation::{LIQUID_T_MAX, LIQUID_T_MIN};
use crate::physics::atmosphere::sounding::{Humidity, Sounding, Vertical, TEMPERATURE_COLUMN};
use crate::physics::atmosphere::BaseSource;
use crate::physics::constants::T_MELT;
use crate::setup::config::{schema, Config};
use std::path::Path;

fn fmt_allowed(lo: f64, hi: f64) -> String {
    let r = |x: f64| (x * 100.0).round() / 100.0;
    format!("[{}, {}]", r(lo), r(hi))
}

/// Most problems listed for one sounding: past that they are counted.
const MAX_LISTED: usize = 8;

/// Checks a sounding table and builds the sounding. `key` names the
/// configuration key that held it, for errors; levels are named "level N".
pub fn sounding_from_table(
    columns: &[String],
    rows: &[Vec<f64>],
    key: &str,
) -> Result<Sounding, Vec<ConfigIssue>> {
    sounding_from_table_at(columns, rows, key, &|level| format!("level {level}"))
}

/// [`sounding_from_table`] with `place(level)` naming level `level` (from 1)
/// in messages: "FILE:LINE" for a CSV file.
pub fn sounding_from_table_at(
    columns: &[String],
    rows: &[Vec<f64>],
    key: &str,
    place: &dyn Fn(usize) -> String,
) -> Result<Sounding, Vec<ConfigIssue>> {
    let col_err = |msg: String| {
        vec![ConfigIssue::new(key.replace("rows", "columns"), msg)
            .value(format!("{columns:?}"))
            .allowed(format!(
                "three names: one of {:?}, then \"{TEMPERATURE_COLUMN}\", then one of {:?}",
                Vertical::NAMES,
                Humidity::NAMES
            ))]
    };
    if columns.len() != 3 {
        return Err(col_err(format!(
            "expected 3 columns, found {}",
            columns.len()
        )));
    }
    let Some(&vertical) = Vertical::ALL.iter().find(|v| v.name() == columns[0]) else {
        return Err(col_err(format!(
            "unknown vertical column \"{}\"",
            columns[0]
        )));
    };
    if columns[1] != TEMPERATURE_COLUMN {
        return Err(col_err(format!(
            "second column must be \"{TEMPERATURE_COLUMN}\", found \"{}\"",
            columns[1]
        )));
    }
    let Some(&humidity_kind) = Humidity::ALL.iter().find(|h| h.name() == columns[2]) else {
        return Err(col_err(format!(
            "unknown humidity column \"{}\"",
            columns[2]
        )));
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
    // A table in kelvin: one message, not one per value.
    for (c, name) in columns.iter().enumerate().skip(1) {
        let is_temperature = c == 1 || humidity_kind == Humidity::DewPoint;
        let values: Vec<(usize, f64)> = rows
            .iter()
            .enumerate()
            .filter_map(|(i, r)| r.get(c).map(|v| (i + 1, *v)))
            .filter(|(_, v)| v.is_finite())
            .collect();
        if is_temperature && !values.is_empty() && values.iter().all(|(_, v)| *v > 150.0) {
            let (level, v) = values[0];
            issues.push(
                ConfigIssue::new(
                    key,
                    format!(
                        "column \"{name}\" looks like kelvin (every value above 150, the first {v} at {}); give degC (subtract 273.15)",
                        place(level)
                    ),
                )
                .unit("degC"),
            );
        }
    }
    if !issues.is_empty() {
        return Err(issues);
    }
    for (i, row) in rows.iter().enumerate() {
        let level = i + 1;
        let at = place(level);
        if issues.len() >= MAX_LISTED {
            let rest = rows.len() - i;
            issues.push(ConfigIssue::new(
                key,
                format!("the checks stopped here; {rest} more levels were not checked"),
            ));
            break;
        }
        if row.len() != 3 {
            issues.push(
                ConfigIssue::new(
                    key,
                    format!("{at} has {} values, expected 3: a missing value", row.len()),
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
                        if v.is_nan() {
                            format!("{at}, column \"{}\": missing value", columns[c])
                        } else {
                            format!("{at}, column \"{}\": not a finite number", columns[c])
                        },
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
                        ConfigIssue::new(key, format!("{at}, column \"{col}\" out of range"))
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
                        ConfigIssue::new(
                            key,
                            format!("{at}: dew point {h} degC exceeds temperature {t} degC"),
                        )
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
                    "{} and {} are not monotonic: the table must have {dir}",
                    place(i),
                    place(i + 1)
                ),
            ));
        }
    }
    if !issues.is_empty() {
        return Err(issues);
    }
    Sounding::from_levels(vertical, humidity_kind, rows).map_err(|level| {
        vec![ConfigIssue::new(
            key,
            format!("{}: vapour pressure exceeds air pressure", place(level)),
        )]
    })
}

/// Reads the sounding (inline or from CSV), validates it, and rewrites the
/// configuration so the rows are inline and the file key is gone.
pub fn resolve(
    config: &mut Config,
    base_dir: &Path,
    top: f64,
    origin: &str,
    inputs: &mut Vec<std::path::PathBuf>,
) -> Result<BaseSource, ConfigError> {
    let s = &mut config.atmosphere.sounding;
    let many = |issues: Vec<ConfigIssue>| ConfigError {
        origin: origin.to_string(),
        issues,
    };
    let one = |issue: ConfigIssue| many(vec![issue]);
    let mut file_lines: Option<(String, Vec<usize>)> = None;
    let (columns, rows, key) = match (&s.file, &s.rows) {
        (Some(_), Some(_)) => {
            return Err(one(ConfigIssue::new(
                "atmosphere.sounding.file",
                "give either `file` or `rows`, not both",
            )))
        }
        (Some(file), None) => {
            if s.columns.is_some() {
                return Err(one(ConfigIssue::new(
                    "atmosphere.sounding.columns",
                    "with `file`, the CSV header names the columns; remove `columns`",
                )));
            }
            let path = base_dir.join(file);
            let (c, r, lines) = read_csv(&path, "atmosphere.sounding.file").map_err(one)?;
            file_lines = Some((path.display().to_string(), lines));
            inputs.push(path);
            (c, r, "atmosphere.sounding.file")
        }
        (None, Some(rows)) => {
            let columns = s.columns.clone().ok_or_else(|| {
                one(ConfigIssue::new(
                    "atmosphere.sounding.columns",
                    "inline `rows` need `columns` naming them",
                ))
            })?;
            (columns, rows.clone(), "atmosphere.sounding.rows")
        }
        (None, None) => {
            return Err(one(ConfigIssue::new(
                "atmosphere.sounding",
                "atmosphere.profile = \"sounding\" needs `rows` (with `columns`) or `file`",
            )))
        }
    };
    let place = |level: usize| match &file_lines {
        Some((file, lines)) => format!("{file}:{}", lines[level - 1]),
        None => format!("level {level}"),
    };
    let sounding = sounding_from_table_at(&columns, &rows, key, &place).map_err(many)?;
    sounding.check_span(top).map_err(|(lo, hi)| {
        one(ConfigIssue::new(
            key,
            format!("the sounding spans {lo:.1} m to {hi:.1} m above ground but the grid spans 0 m to {top} m; extend the sounding or lower grid.top"),
        ))
    })?;
    let surface_pressure = match (sounding.surface_pressure_from_table, s.surface_pressure) {
        (Some(_), Some(p)) => {
            return Err(one(ConfigIssue::new(
                "atmosphere.sounding.surface_pressure",
                "a pressure sounding's first level is the ground; remove surface_pressure",
            )
            .value(format!("{p}"))
            .unit("Pa")))
        }
        (Some(p), None) | (None, Some(p)) => p,
        (None, None) => {
            return Err(one(ConfigIssue::new(
                "atmosphere.sounding.surface_pressure",
                "a height sounding needs the pressure at the ground",
            )
            .unit("Pa")
            .allowed(
                schema::find("atmosphere.sounding.surface_pressure")
                    .map_or(String::new(), |k| k.kind.allowed()),
            )))
        }
    };
    s.file = None;
    s.columns = Some(columns);
    s.rows = Some(rows);
    Ok(BaseSource::Sounding {
        sounding,
        surface_pressure,
    })
}

/// A sounding CSV as read: the column names, the rows, and the file line
/// of each row (for messages).
pub type CsvSounding = (Vec<String>, Vec<Vec<f64>>, Vec<usize>);

/// Largest sounding file read (bytes): a million levels of a few numbers.
pub const MAX_SOUNDING_BYTES: u64 = 16 * 1024 * 1024;

/// Reads a sounding CSV: a header line of column names, then one level per
/// line; blank lines and lines starting with `#` are skipped. An empty field,
/// `NA` or `nan` is a missing value, reported by the validation.
pub fn read_csv(path: &std::path::Path, key: &str) -> Result<CsvSounding, ConfigIssue> {
    let shown = format!("\"{}\"", path.display());
    // Only a regular file of bounded size is read: a device or a pipe could
    // hand out data for ever or block.
    let meta = std::fs::metadata(path).map_err(|e| {
        ConfigIssue::new(key, format!("cannot read sounding file: {e}")).value(shown.clone())
    })?;
    if !meta.is_file() {
        return Err(ConfigIssue::new(
            key,
            "the sounding file is not a regular file (a device, pipe or directory)",
        )
        .value(shown));
    }
    if meta.len() > MAX_SOUNDING_BYTES {
        return Err(ConfigIssue::new(
            key,
            format!(
                "the sounding file holds {} bytes; at most {MAX_SOUNDING_BYTES} are read",
                meta.len()
            ),
        )
        .value(shown));
    }
    let text = std::fs::read_to_string(path).map_err(|e| {
        ConfigIssue::new(key, format!("cannot read sounding file: {e}")).value(shown.clone())
    })?;
    // A byte-order mark (as some spreadsheet programs write) is not part of
    // the first column's name.
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    let mut lines = text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'));
    let (_, header) = lines.next().ok_or_else(|| {
        ConfigIssue::new(key, "sounding file is empty").value(format!("\"{}\"", path.display()))
    })?;
    let columns: Vec<String> = header.split(',').map(|s| s.trim().to_string()).collect();
    let mut rows = Vec::new();
    let mut line_numbers = Vec::new();
    for (lineno, line) in lines {
        line_numbers.push(lineno + 1);
        let mut row = Vec::new();
        for (column, field) in line.split(',').enumerate() {
            let f = field.trim();
            let v = if f.is_empty() || f.eq_ignore_ascii_case("na") || f.eq_ignore_ascii_case("nan")
            {
                f64::NAN
            } else {
                f.parse::<f64>().map_err(|_| {
                    ConfigIssue::new(
                        key,
                        // The field itself is not echoed: an error never
                        // prints the contents of a file.
                        format!(
                            "{}:{}: field {} is not a number",
                            path.display(),
                            lineno + 1,
                            column + 1
                        ),
                    )
                })?
            };
            row.push(v);
        }
        rows.push(row);
    }
    Ok((columns, rows, line_numbers))
}
