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

/// Reads and checks the table at `path`.
pub fn read(path: &Path) -> Result<ChargeTable, ConfigIssue> {
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
    let names: Vec<&str> = header.split(',').map(str::trim).collect();
    let axis = match names.as_slice() {
        ["temperature_degC", "liquid_water_g_m3", "charge_fC"] => Axis::LiquidWater,
        ["temperature_degC", "rime_accretion_rate_g_m2_s", "charge_fC"] => {
            Axis::RimeAccretionRate
        }
        _ => {
            return Err(fail(
                "the header must be temperature_degC,liquid_water_g_m3,charge_fC or temperature_degC,rime_accretion_rate_g_m2_s,charge_fC (units in the names)".into(),
            ))
        }
    };
    let ranges = [(-60.0, 0.0), (0.0, 50.0), (-1.0e4, 1.0e4)];
    let mut points = Vec::new();
    for (i, line) in lines {
        let at = |col: usize| format!("{}:{}, column {col}", path.display(), i + 1);
        let fields: Vec<&str> = line.split(',').map(str::trim).collect();
        if fields.len() != 3 {
            return Err(fail(format!(
                "{}: expected 3 values, found {}",
                at(1),
                fields.len()
            )));
        }
        let mut row = [0.0; 3];
        for (c, f) in fields.iter().enumerate() {
            let v: f64 = f
                .parse()
                .map_err(|_| fail(format!("{} ({}): not a number", at(c + 1), names[c])))?;
            if !v.is_finite() {
                return Err(fail(format!(
                    "{} ({}): not a finite number",
                    at(c + 1),
                    names[c]
                )));
            }
            let (lo, hi) = ranges[c];
            if !(lo..=hi).contains(&v) {
                return Err(fail(format!(
                    "{} ({}): out of range [{lo}, {hi}]",
                    at(c + 1),
                    names[c]
                ))
                .allowed(format!("[{lo}, {hi}]")));
            }
            row[c] = v;
        }
        points.push((i + 1, row));
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
    for (line, [tv, xv, qv]) in &points {
        let i = t.partition_point(|&a| a < *tv);
        let j = x.partition_point(|&a| a < *xv);
        let cell = &mut q[i * x.len() + j];
        if !cell.is_nan() {
            return Err(fail(format!(
                "{}:{line}: this point appears twice",
                path.display()
            )));
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
