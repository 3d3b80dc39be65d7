//! How much charge a flash removes from its channel.
//!
//! Only charge above the minimum density is touched: in each channel cell the
//! excess is w = sign(rho) max(|rho| - rho_min, 0). An intracloud channel is
//! a floating conductor with no net charge (Kasemir 1960, from memory), so
//! its positive and negative excesses are scaled to equal amounts before
//! removal; a ground channel is not balanced, and the net charge removed is
//! lowered to ground. The removal is rho -> rho - s w with
//! - fraction mode: s = the configured fraction;
//! - target-field mode: the smallest s in [0, 1] that brings the largest
//!   |E|/threshold on the channel's faces down to the target fraction. Poisson's
//!   equation is linear, so E(s) = E_before - s g with g the field of the
//!   charge distribution w: one extra solve, then each face k bounds s to an
//!   interval |E_k - s g_k| <= target thr_k, and the answer is the largest
//!   lower bound. When no s in [0, 1] reaches the target the largest
//!   |E|/threshold is minimised instead (it is convex and piecewise linear in s).

/// Fills `w` (C m-3, length n) with the removal pattern for `cells`; returns
/// (positive, negative) amounts per area (C m-2) after balancing. `balance`
/// is true for intracloud flashes.
pub fn excess_pattern(
    rho: &[f64],
    cells: std::ops::Range<usize>,
    rho_min: f64,
    balance: bool,
    dz: f64,
    w: &mut [f64],
) -> (f64, f64) {
    w.fill(0.0);
    let (mut pos, mut neg) = (0.0, 0.0);
    for k in cells.clone() {
        let ex = (rho[k].abs() - rho_min).max(0.0);
        w[k] = ex * rho[k].signum();
        if w[k] > 0.0 {
            pos += w[k] * dz;
        } else {
            neg -= w[k] * dz;
        }
    }
    if balance {
        let q = pos.min(neg);
        let (fp, fn_) = (
            if pos > 0.0 { q / pos } else { 0.0 },
            if neg > 0.0 { q / neg } else { 0.0 },
        );
        for k in cells {
            w[k] *= if w[k] > 0.0 { fp } else { fn_ };
        }
        (q, q)
    } else {
        (pos, neg)
    }
}

/// Largest |e_k - s g_k| / thr_k over `faces`.
fn worst(
    e: &[f64],
    g: &[f64],
    thr: &[f64],
    faces: &std::ops::RangeInclusive<usize>,
    s: f64,
) -> f64 {
    faces
        .clone()
        .map(|k| (e[k] - s * g[k]).abs() / thr[k])
        .fold(0.0, f64::max)
}

/// The scale s in [0, 1] of the target-field mode (see module docs).
pub fn target_scale(
    e: &[f64],
    g: &[f64],
    thr: &[f64],
    faces: std::ops::RangeInclusive<usize>,
    target: f64,
) -> f64 {
    let (mut lo, mut hi) = (0.0_f64, 1.0_f64);
    let mut feasible = true;
    for k in faces.clone() {
        let t = target * thr[k];
        if g[k] == 0.0 {
            if e[k].abs() > t {
                feasible = false;
            }
            continue;
        }
        let (a, b) = ((e[k] - t) / g[k], (e[k] + t) / g[k]);
        lo = lo.max(a.min(b));
        hi = hi.min(a.max(b));
    }
    if feasible && lo <= hi {
        return lo;
    }
    // Golden-section search of the convex worst ratio on [0, 1].
    let r = 0.5 * (5.0_f64.sqrt() - 1.0);
    let (mut a, mut b) = (0.0, 1.0);
    let mut c = b - r * (b - a);
    let mut d = a + r * (b - a);
    for _ in 0..80 {
        if worst(e, g, thr, &faces, c) < worst(e, g, thr, &faces, d) {
            b = d;
        } else {
            a = c;
        }
        c = b - r * (b - a);
        d = a + r * (b - a);
    }
    0.5 * (a + b)
}
