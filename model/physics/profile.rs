//! Shapes of the experiment's inputs: tables of (x, y) points and the
//! vertical layer shapes shared by the updraft, prescribed charge and
//! prescribed hydrometeors. These are definitions of the experiment, not
//! published parameterisations, and are documented in
//! docs/configuration.md.

/// A table of (x, y) points: at least two rows, all finite, x strictly
/// increasing. Built only through [`Table::new`], so every table in the
/// model has been checked the same way.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    points: Vec<[f64; 2]>,
}

/// Why rows do not form a [`Table`] (rows are counted from 1).
#[derive(Debug, Clone, PartialEq)]
pub enum TableError {
    /// Fewer than two rows.
    TooFewRows(usize),
    /// A row that is not two finite numbers.
    NotTwoFinite { row: usize, values: Vec<f64> },
    /// A row whose first column does not exceed the previous row's.
    NotIncreasing { row: usize },
}

impl std::fmt::Display for TableError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            TableError::TooFewRows(n) => write!(f, "{n} rows given"),
            TableError::NotTwoFinite { row, .. } => {
                write!(f, "row {row} is not two finite numbers")
            }
            TableError::NotIncreasing { row } => {
                write!(f, "row {row}: the first column must increase")
            }
        }
    }
}

impl Table {
    /// Checks `rows` and builds the table.
    pub fn new(rows: &[Vec<f64>]) -> Result<Self, TableError> {
        if rows.len() < 2 {
            return Err(TableError::TooFewRows(rows.len()));
        }
        let mut points = Vec::with_capacity(rows.len());
        for (i, r) in rows.iter().enumerate() {
            if r.len() != 2 || !r.iter().all(|v| v.is_finite()) {
                return Err(TableError::NotTwoFinite {
                    row: i + 1,
                    values: r.clone(),
                });
            }
            if i > 0 && r[0] <= rows[i - 1][0] {
                return Err(TableError::NotIncreasing { row: i + 1 });
            }
            points.push([r[0], r[1]]);
        }
        Ok(Table { points })
    }

    /// The checked points.
    pub fn points(&self) -> &[[f64; 2]] {
        &self.points
    }

    /// Linear interpolation at `x`; beyond the ends `outside`, or the end
    /// values when it is `None`. Exact at the points: `(1 - w) a + w b` with
    /// w = 0 or 1 returns a or b to the last bit.
    pub fn lookup(&self, x: f64, outside: Option<f64>) -> f64 {
        let points = &self.points;
        let n = points.len();
        if x <= points[0][0] || x >= points[n - 1][0] {
            let end = if x <= points[0][0] {
                points[0]
            } else {
                points[n - 1]
            };
            return match outside {
                Some(v) if x != end[0] => v,
                _ => end[1],
            };
        }
        let i = points.partition_point(|p| p[0] <= x).clamp(1, n - 1);
        let (a, b) = (points[i - 1], points[i]);
        let w = (x - a[0]) / (b[0] - a[0]);
        (1.0 - w) * a[1] + w * b[1]
    }
}

/// Vertical shape f(z) (1) of an imposed layer.
///
/// - top hat: 1 on [center - thickness/2, center + thickness/2], 0 outside;
/// - gaussian: exp(-(z - center)^2 / (2 s^2)) with s = thickness/sqrt(2 pi),
///   so the layer holds the same column amount as the top hat;
/// - table: linear between the points, 0 outside.
#[derive(Debug, Clone, PartialEq)]
pub enum LayerShape {
    TopHat { center: f64, thickness: f64 },
    Gaussian { center: f64, thickness: f64 },
    Table(Table),
}

impl LayerShape {
    /// The shape factor at height `z` (m).
    pub fn factor(&self, z: f64) -> f64 {
        match self {
            LayerShape::TopHat { center, thickness } => {
                let half = 0.5 * thickness;
                if (z - center).abs() <= half {
                    1.0
                } else {
                    0.0
                }
            }
            LayerShape::Gaussian { center, thickness } => gaussian(z, *center, *thickness),
            LayerShape::Table(t) => t.lookup(z, Some(0.0)),
        }
    }

    /// The mean of the shape over the cell [lo, hi] (m) of thickness `dz`
    /// (m): exact for the top hat (the covered fraction), composite Simpson's
    /// rule with 16 intervals for the smooth shapes.
    pub fn cell_average(&self, lo: f64, hi: f64, dz: f64) -> f64 {
        match self {
            LayerShape::TopHat { center, thickness } => {
                let (a, b) = (center - 0.5 * thickness, center + 0.5 * thickness);
                ((b.min(hi) - a.max(lo)) / dz).max(0.0)
            }
            _ => simpson_average(&|z| self.factor(z), lo, hi),
        }
    }
}

/// Gaussian layer exp(-(z - c)^2 / (2 s^2)), s = thickness/sqrt(2 pi) (1).
pub fn gaussian(z: f64, center: f64, thickness: f64) -> f64 {
    let s = thickness / (2.0 * std::f64::consts::PI).sqrt();
    (-(z - center) * (z - center) / (2.0 * s * s)).exp()
}

/// Cell average of `f` over [lo, hi] by composite Simpson's rule, 16 intervals.
fn simpson_average(f: &dyn Fn(f64) -> f64, lo: f64, hi: f64) -> f64 {
    let m = 16;
    let h = (hi - lo) / m as f64;
    let mut s = f(lo) + f(hi);
    for i in 1..m {
        s += f(lo + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
    }
    s * h / 3.0 / (hi - lo)
}
