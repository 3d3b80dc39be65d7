//! A table-driven non-inductive scheme: the charge q (fC) of the form
//! dq = B d^a V^b q of Saunders, Keith & Mitzeva (1991) given on a grid of
//! temperature x liquid water content (g m-3) or temperature x rime
//! accretion rate (g m-2 s-1), read from the user's CSV (digitised
//! laboratory data such as Takahashi 1978 or Saunders et al. 1991, or newer
//! work). Between grid points q is bilinear; outside the grid it is held at
//! the edge values (the table's laboratory range is not extrapolated). The
//! size and speed dependence is the Saunders et al. (1991) factor of
//! [`super::size_speed`] for the sign of q, so a table of SP98's q over
//! temperature x rime accretion rate reproduces that scheme (tested).
//! Reading and checking the file: `crate::setup::charge_table_input`.

/// What the table's second axis is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Axis {
    /// Cloud liquid water content (g m-3).
    LiquidWater,
    /// Rime accretion rate EW V (g m-2 s-1), with EW the liquid water
    /// content times the collection efficiency.
    RimeAccretionRate,
}

/// A rectangular table q(T, x).
#[derive(Debug, Clone, PartialEq)]
pub struct ChargeTable {
    pub axis: Axis,
    /// Temperatures (degC), strictly increasing.
    pub t: Vec<f64>,
    /// Second-axis values, strictly increasing.
    pub x: Vec<f64>,
    /// q (fC) at (`t[i]`, `x[j]`) stored at `i * x.len() + j`.
    pub q: Vec<f64>,
}

/// Position of `v` in the increasing grid `g`: the cell index and the weight
/// of its upper end, held at the edges.
fn locate(g: &[f64], v: f64) -> (usize, f64) {
    let n = g.len();
    if v <= g[0] {
        return (0, 0.0);
    }
    if v >= g[n - 1] {
        return (n - 2, 1.0);
    }
    let i = g.partition_point(|&a| a <= v).clamp(1, n - 1) - 1;
    (i, (v - g[i]) / (g[i + 1] - g[i]))
}

impl ChargeTable {
    /// q (fC) at temperature `t` (degC) and second-axis value `x`, bilinear.
    pub fn charge_fc(&self, t: f64, x: f64) -> f64 {
        let m = self.x.len();
        let (i, wt) = locate(&self.t, t);
        let (j, wx) = locate(&self.x, x);
        let at = |a: usize, b: usize| self.q[a * m + b];
        let lo = (1.0 - wx) * at(i, j) + wx * at(i, j + 1);
        let hi = (1.0 - wx) * at(i + 1, j) + wx * at(i + 1, j + 1);
        (1.0 - wt) * lo + wt * hi
    }

    /// Charge gained by the collector per rebounding collision (C): the
    /// table read at the collision's temperature and liquid water content
    /// (or rime accretion rate E LWC V), with the laboratory ranges of the
    /// size/speed factor as in [`super::saunders_peck_1998`].
    pub fn charge_per_collision(&self, c: &super::Collision) -> f64 {
        let x = match self.axis {
            Axis::LiquidWater => c.lwc,
            Axis::RimeAccretionRate => c.rime_accretion_rate(),
        };
        let (t, d, dv) = (c.t, c.crystal, c.impact_speed);
        let q = self.charge_fc(t, x);
        let d = d.clamp(10e-6, 1e-3);
        let dv = dv.clamp(1.0, 10.0);
        super::size_speed::factor(q > 0.0, d, dv) * q * 1e-15
    }
}
