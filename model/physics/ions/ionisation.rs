//! Ion-pair production q(z) (m-3 s-1): galactic cosmic rays as a function
//! of height, geomagnetic latitude and the phase of the solar cycle, an
//! optional radioactive source over land, and the flux of energetic
//! secondary electrons that seeds runaway avalanches.
//!
//! Cosmic rays: the parameterisation of Slyunyaev, Mareev & Zhidkov (2015),
//! J. Geophys. Res. Atmos. 120, 7060-7082 (their appendix, built on the
//! form of Heaps 1978, Planet. Space Sci. 26, 513). The production
//! normalised to a reference air density is a chain of six knots
//! (Z_i, Q_i), i = 0..5, whose heights and values depend on the geomagnetic
//! latitude lambda and the solar-cycle phase xi (0 at solar minimum, 1 at
//! maximum) through K_i = A_i - a_i xi, Z_i = H_i + (B_i - b_i xi) s_i^g_i,
//! Q_i = (C_i - c_i xi) + (D_i - d_i xi) s_i^h_i with
//! s_i = sin(min(|lambda|, K_i)) / sin K_i; between the knots the profile is
//! exponential (ground to Z_1), a parabola (Z_1-Z_2), power-law caps rising
//! to the maximum at Z_3 and falling to Z_4, and a cubic to the constant
//! above Z_5, joined with continuous values and slopes. The actual rate is
//! the normalised one times p T_q / (p_q T) with T_q = 297.15 K and
//! p_q = 98658.55 Pa. Coefficients in [`SLYUNYAEV_2015`] (docs/references.md
//! for their status).

/// The coefficients of one knot of the Slyunyaev et al. (2015)
/// parameterisation: angles in degrees, heights in km, rates in m-3 s-1
/// (normalised to the reference density), exponents dimensionless.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Knot {
    pub a_upper: f64,
    pub a_lower: f64,
    pub h: f64,
    pub b_upper: f64,
    pub b_lower: f64,
    pub c_upper: f64,
    pub c_lower: f64,
    pub d_upper: f64,
    pub d_lower: f64,
    pub g: f64,
    pub h_exp: f64,
}

const fn knot(k: [f64; 11]) -> Knot {
    Knot {
        a_upper: k[0],
        a_lower: k[1],
        h: k[2],
        b_upper: k[3],
        b_lower: k[4],
        c_upper: k[5],
        c_lower: k[6],
        d_upper: k[7],
        d_lower: k[8],
        g: k[9],
        h_exp: k[10],
    }
}

/// Table of Slyunyaev et al. (2015): per knot A, a (deg), H, B, b (km),
/// C, c, D, d (1e6 m-3 s-1 below written out), g, h.
pub const SLYUNYAEV_2015: [Knot; 6] = [
    knot([
        49.0, 8.0, 0.0, 0.0, 0.0, 1.4e6, 0.1e6, 0.8e6, 0.1e6, 0.0, 1.7,
    ]),
    knot([
        49.0, 8.0, 5.0, 0.0, 0.0, 15.0e6, 0.5e6, 10.0e6, 2.5e6, 0.0, 1.7,
    ]),
    knot([
        57.0, 8.0, 10.0, 5.0, 0.0, 64.0e6, 2.0e6, 236.0e6, 83.0e6, 4.0, 3.9,
    ]),
    knot([
        63.0, 10.0, 16.0, 21.0, 14.0, 93.0e6, 5.0e6, 402.0e6, 225.0e6, 6.0, 3.2,
    ]),
    knot([
        63.0, 10.0, 23.0, 14.0, 9.0, 74.0e6, 3.0e6, 421.0e6, 236.0e6, 5.0, 3.4,
    ]),
    knot([
        63.0, 9.0, 37.0, 0.0, 0.0, 45.0e6, 2.0e6, 450.0e6, 243.0e6, 0.0, 4.0,
    ]),
];

/// Reference temperature (K) and pressure (Pa) of the normalised rates.
pub const REFERENCE_AIR: (f64, f64) = (297.15, 98_658.55);

/// The cosmic-ray profile for one latitude and solar phase: the six knots'
/// heights (km) and normalised rates (m-3 s-1), and the slopes the joins
/// need.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CosmicRayProfile {
    z: [f64; 6],
    q: [f64; 6],
    /// Slope at Z_1 (exponential below), at Z_2 (the parabola's end) and at
    /// Z_4 (the cubic's start), per km.
    p1: f64,
    p2: f64,
    p4: f64,
}

impl CosmicRayProfile {
    /// The profile at geomagnetic latitude `latitude` (degrees) and solar
    /// phase `xi` in [0, 1] (0 minimum, 1 maximum of the solar cycle).
    pub fn new(latitude: f64, xi: f64) -> Self {
        let lam = latitude.abs().to_radians();
        let mut z = [0.0; 6];
        let mut q = [0.0; 6];
        for (i, k) in SLYUNYAEV_2015.iter().enumerate() {
            let big_k = (k.a_upper - k.a_lower * xi).to_radians();
            let s = lam.min(big_k).sin() / big_k.sin();
            z[i] = if i == 0 {
                0.0
            } else {
                k.h + (k.b_upper - k.b_lower * xi) * s.powf(k.g)
            };
            q[i] = (k.c_upper - k.c_lower * xi) + (k.d_upper - k.d_lower * xi) * s.powf(k.h_exp);
        }
        let p1 = q[1] * (q[1] / q[0]).ln() / z[1];
        let p2 = 2.0 * (q[2] - q[1]) / (z[2] - z[1]) - p1;
        let p4 = if z[5] != z[4] {
            3.0 * (q[4] - q[5]) / (z[5] - z[4])
        } else {
            0.0
        };
        CosmicRayProfile { z, q, p1, p2, p4 }
    }

    /// Ion-pair production normalised to the reference air (m-3 s-1) at
    /// height `z_km` (km).
    pub fn normalised(&self, z_km: f64) -> f64 {
        let (z, q) = (&self.z, &self.q);
        if z_km < z[1] {
            // Exponential from the ground value to Q_1.
            q[0] * (q[1] / q[0]).powf(z_km / z[1])
        } else if z_km < z[2] {
            // Parabola: value Q_1 and slope P_1 at Z_1, value Q_2 at Z_2.
            let d = z[2] - z[1];
            let curv = ((q[2] - q[1]) - self.p1 * d) / (d * d);
            let u = z_km - z[1];
            q[1] + self.p1 * u + curv * u * u
        } else if z_km < z[3] {
            // Rising cap to the maximum Q_3, slope P_2 at Z_2.
            let d = z[3] - z[2];
            let k = self.p2 * d / (q[3] - q[2]);
            q[3] - (q[3] - q[2]) * ((z[3] - z_km) / d).powf(k)
        } else if z_km < z[4] {
            // Falling cap from the maximum, slope -P_4 at Z_4.
            let d = z[4] - z[3];
            let k = self.p4 * d / (q[3] - q[4]);
            q[3] - (q[3] - q[4]) * ((z_km - z[3]) / d).powf(k)
        } else if z_km < z[5] {
            let d = z[5] - z[4];
            q[5] + (q[4] - q[5]) * ((z[5] - z_km) / d).powi(3)
        } else {
            q[5]
        }
    }

    /// Ion-pair production (m-3 s-1) at height `z` (m) in air at pressure
    /// `p` (Pa) and temperature `t` (K): the normalised rate times the air's
    /// density relative to the reference.
    pub fn rate(&self, z: f64, p: f64, t: f64) -> f64 {
        let (tq, pq) = REFERENCE_AIR;
        self.normalised(z / 1000.0) * p * tq / (pq * t)
    }
}

/// Ion-pair production by radioactivity over land (m-3 s-1) at height `z`
/// (m): `surface` e^(-z/`scale_height`). Radon and its daughters exhaled by
/// the soil, mixed through the boundary layer, add several ion pairs per
/// cm3 per second near the ground over land (docs/references.md, "surface
/// radioactivity", from memory); the exponential decrease is a modelling
/// choice.
pub fn radioactivity(z: f64, surface: f64, scale_height: f64) -> f64 {
    if surface <= 0.0 {
        0.0
    } else {
        surface * (-z / scale_height).exp()
    }
}

/// Omnidirectional flux of secondary cosmic-ray electrons above about
/// 1 MeV (m-2 s-1) at height `z`: `sea_level_flux` times the cosmic-ray
/// ionisation at z over its value at the ground, so it carries the same
/// latitude and solar modulation (a modelling choice: the electrons are part
/// of the same cascade; docs/ions.md). The seed of runaway avalanches.
pub fn energetic_electron_flux(
    profile: &CosmicRayProfile,
    z: f64,
    p: f64,
    t: f64,
    surface: (f64, f64),
    sea_level_flux: f64,
) -> f64 {
    let q0 = profile.rate(0.0, surface.0, surface.1);
    if q0 <= 0.0 {
        0.0
    } else {
        sea_level_flux * profile.rate(z, p, t) / q0
    }
}
