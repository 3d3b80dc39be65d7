//! Streamer zone and leader stem.
//!
//! Positive streamers propagate where the ambient field exceeds their
//! stability field E_s+ delta (4.5-5 kV/cm at sea level; Allen & Ghaffar
//! 1995; Francisco et al. 2021 simulate 4.675 kV/cm). A leader forms when
//! the streamers that share a common stem carry enough charge to heat it:
//! about 1 uC (Gallimberti 1979, J. Phys. Colloq. 40; Bazelyan & Raizer
//! 2000, Lightning Physics and Lightning Protection; from memory, low
//! confidence). The charge a streamer zone of extent L holds is taken as
//! that of a sphere of diameter L whose surface field is the stability
//! field, Q = pi eps0 E_s L^2 (a modelling choice: the zone keeps its
//! internal field near E_s). L is the resolved extent of the zone, from the
//! crossings of the stability field interpolated linearly between faces.

use crate::physics::constants::EPSILON_0;
use std::f64::consts::PI;

/// Charge (C) held by a streamer zone of extent `length` (m) at stability
/// field `stability` (V m-1): pi eps0 E_s L^2.
pub fn zone_charge(length: f64, stability: f64) -> f64 {
    PI * EPSILON_0 * stability * length * length
}

/// The longest zone where |E| exceeds `threshold` (both on faces at heights
/// `z`): its extent (m), the face nearest its middle, and whether it
/// satisfies `accept(first_face, last_face)`. Crossings are interpolated
/// linearly between faces, so a zone above threshold at one face only
/// still has a length.
pub fn longest_zone(
    e: &[f64],
    threshold: &[f64],
    z: &[f64],
    accept: &dyn Fn(usize, usize) -> bool,
) -> (f64, usize) {
    let n = e.len();
    let over = |k: usize| e[k].abs() - threshold[k];
    let crossing = |a: usize, b: usize| {
        // Height where over() = 0 between faces a (below 0) and b (above 0).
        let (oa, ob) = (over(a), over(b));
        z[a] + (z[b] - z[a]) * (-oa) / (ob - oa)
    };
    let (mut best, mut face) = (0.0, 0);
    let mut k = 0;
    while k < n {
        if over(k) < 0.0 {
            k += 1;
            continue;
        }
        let start = k;
        while k + 1 < n && over(k + 1) >= 0.0 {
            k += 1;
        }
        let end = k;
        if accept(start, end) {
            let bottom = if start > 0 {
                crossing(start - 1, start)
            } else {
                z[0]
            };
            let top = if end + 1 < n {
                crossing(end + 1, end)
            } else {
                z[n - 1]
            };
            let length = top - bottom;
            if length > best {
                best = length;
                face = (start + end) / 2;
            }
        }
        k += 1;
    }
    (best, face)
}
