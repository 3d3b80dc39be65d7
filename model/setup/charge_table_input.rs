//! Reading a charge table (`charging.scheme = "table"`): a CSV with the
//! header `temperature_degC,liquid_water_g_m3,charge_fC` or
//! `temperature_degC,rime_accretion_rate_g_m2_s,charge_fC` and one row per
//! grid point, in any order; `#` lines and blank lines are skipped. The
//! points must fill a rectangular grid (every temperature with every
//! second-axis value, once), every value finite, temperatures within
//! -60 to 0 degC, the second axis within 0 to 50. Errors name the file,
//! the line and the column; they never quote the file's contents.

use crate::error::ConfigIssue;
use crate::physics::charging::table::{Axis, ChargeTable};
use std::path::Path;

/// Largest table file read (bytes).
pub const MAX_TABLE_BYTES: u64 = 16 * 1024 * 1024;

const KEY: &str = "charging.table_file";

/// The header names a table may have (units in the names).
const LIQUID: [&str; 3] = ["temperature_degC", "liquid_water_g_m3", "charge_fC"];
const RIME: [&str; 3] = [
    "temperature_degC",
    "rime_accretion_rate_g_m2_s",
    "charge_fC",
];

/// A table file as read: the header's names, the rows, and the table they
/// make.
pub type TableFile = (Vec<String>, Vec<Vec<f64>>, ChargeTable);

/// Reads and checks the table at `path`.
pub fn read(path: &Path) -> Result<TableFile, ConfigIssue> {
    let shown = format!("\"{}\"", path.display());
    let fail = |m: String| ConfigIssue::new(KEY, m).value(shown.clone());
    let meta = std::fs::metadata(path).map_err(|e| fail(format!("cannot read the table: {e}")))?;
    if !meta.is_file() || meta.len() > MAX_TABLE_BYTES {
        return Err(fail(format!(
            "the table must be a regular file of at most {MAX_TABLE_BYTES} bytes"
        )));
    }
    let text =
        std::fs::read_to_string(path).map_err(|e| fail(format!("cannot read the table: {e}")))?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    let mut lines = text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'));
    let (_, header) = lines
        .next()
        .ok_or_else(|| fail("the table is empty".into()))?;
    let names: Vec<String> = header.split(',').map(|x| x.trim().to_string()).collect();
    let mut rows = Vec::new();
    let mut places = Vec::new();
    for (i, line) in lines {
        let at = format!("{}:{}", path.display(), i + 1);
        let mut row = Vec::new();
        for (c, f) in line.split(',').map(str::trim).enumerate() {
            // The field itself is never quoted: errors show no file contents.
            row.push(
                f.parse::<f64>()
                    .map_err(|_| fail(format!("{at}, column {}: not a number", c + 1)))?,
            );
        }
        rows.push(row);
        places.push(at);
    }
    let table = build(&names, &rows, &|i| places[i].clone(), &fail)?;
    Ok((names, rows, table))
}

/// The table of inline `charging.table_columns` and `charging.table_rows`
/// (as a stored configuration holds them).
pub fn from_rows(columns: &[String], rows: &[Vec<f64>]) -> Result<ChargeTable, ConfigIssue> {
    let fail = |m: String| ConfigIssue::new("charging.table_rows", m);
    build(columns, rows, &|i| format!("row {}", i + 1), &fail)
}

/// Checks the header, every value and the grid; `place(i)` names row i.
fn build(
    names: &[String],
    rows: &[Vec<f64>],
    place: &dyn Fn(usize) -> String,
    fail: &dyn Fn(String) -> ConfigIssue,
) -> Result<ChargeTable, ConfigIssue> {
    let axis = if names == LIQUID {
        Axis::LiquidWater
    } else if names == RIME {
        Axis::RimeAccretionRate
    } else {
        return Err(fail(format!(
            "the header must be {} or {} (units in the names)",
            LIQUID.join(","),
            RIME.join(",")
        )));
    };
    let ranges = [(-60.0, 0.0), (0.0, 50.0), (-1.0e4, 1.0e4)];
    let mut points = Vec::new();
    for (i, r) in rows.iter().enumerate() {
        if r.len() != 3 {
            return Err(fail(format!(
                "{}: expected 3 values, found {}",
                place(i),
                r.len()
            )));
        }
        for (c, &v) in r.iter().enumerate() {
            if !v.is_finite() {
                return Err(fail(format!(
                    "{}, column {} ({}): not a finite number",
                    place(i),
                    c + 1,
                    names[c]
                )));
            }
            let (lo, hi) = ranges[c];
            if !(lo..=hi).contains(&v) {
                return Err(fail(format!(
                    "{}, column {} ({}): out of range [{lo}, {hi}]",
                    place(i),
                    c + 1,
                    names[c]
                ))
                .allowed(format!("[{lo}, {hi}]")));
            }
        }
        points.push((i, [r[0], r[1], r[2]]));
    }
    let axis_values = |c: usize| {
        let mut v: Vec<f64> = points.iter().map(|p| p.1[c]).collect();
        v.sort_by(f64::total_cmp);
        v.dedup();
        v
    };
    let (t, x) = (axis_values(0), axis_values(1));
    if t.len() < 2 || x.len() < 2 {
        return Err(fail(
            "the table needs at least two temperatures and two values of the second axis".into(),
        ));
    }
    let mut q = vec![f64::NAN; t.len() * x.len()];
    for (i, [tv, xv, qv]) in &points {
        let a = t.partition_point(|&v| v < *tv);
        let b = x.partition_point(|&v| v < *xv);
        let cell = &mut q[a * x.len() + b];
        if !cell.is_nan() {
            return Err(fail(format!("{}: this point appears twice", place(*i))));
        }
        *cell = *qv;
    }
    if let Some(k) = q.iter().position(|v| v.is_nan()) {
        return Err(fail(format!(
            "the grid is not complete: no value at {} degC and {} (every temperature needs every second-axis value)",
            t[k / x.len()],
            x[k % x.len()]
        )));
    }
    Ok(ChargeTable { axis, t, x, q })
}
