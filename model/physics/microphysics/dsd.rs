//! Size distributions and fall speeds of the precipitating species.
//!
//! Rain, snow and graupel have inverse-exponential size distributions
//! N(D) = N0 exp(-lambda D) (Marshall & Palmer 1948; as in Lin, Farley &
//! Orville 1983, JCAM 22, 1065, hereafter LFO83, Eqs. 1-3) with fixed
//! intercept N0 (m-4) and particle density rho_p (kg m-3), so the slope
//! follows from the mixing ratio q (kg kg-1) and air density rho (kg m-3):
//!   lambda = (pi rho_p N0 / (rho q))^(1/4)            (m-1).
//! Fall speeds (m s-1, D in m) at sea-level density, times an air-density
//! correction (rho0/rho)^x, rho0 = 1.225 kg m-3:
//! - rain: Atlas, Srivastava & Sekhon (1973), Rev. Geophys. 11, 1:
//!   V = 9.65 - 10.3 exp(-600 D) (from memory; checked against Gunn & Kinzer
//!   1949 in the tests); x = 0.4 (Foote & du Toit 1969, JAM 8);
//! - snow: V = 4.836 D^0.25, LFO83 Table 1 (152.93 cm^0.75 s-1); x = 0.5 (LFO83);
//! - graupel: V = 124.1 D^0.66, i.e. 1.3 D_mm^0.66, Locatelli & Hobbs (1974),
//!   JGR 79, lump graupel (from memory); x = 0.5;
//! - cloud ice (monodisperse, not exponential): V = 3.29 (rho q_i)^0.16,
//!   Heymsfield & Donner (1990), JAS 47 (from memory); x = 0.5.
//!
//! The mass-weighted mean over the exponential distribution is a closed
//! form: for V = a D^b, V_m = a Gamma(4+b)/(6 lambda^b). The rain form is
//! negative below
//! D0 = ln(10.3/9.65)/600 = 0.109 mm, where the speed is taken as zero; its
//! moments are then upper incomplete gamma integrals from D0, also closed
//! forms (see [`tail_moment`]).

use crate::physics::constants::{RHO_AIR_SEA_LEVEL, RHO_ICE, RHO_WATER};
use crate::physics::lanes::{Lane, Mask};

/// Gamma function for x > 0 by the Lanczos approximation (g = 7, 9 terms;
/// Press et al., Numerical Recipes, 3rd ed., sec. 6.1), relative accuracy
/// about 1e-15.
pub fn gamma(x: f64) -> f64 {
    const G: f64 = 7.0;
    const C: [f64; 9] = [
        0.999_999_999_999_809_9,
        676.520_368_121_885_1,
        -1_259.139_216_722_402_8,
        771.323_428_777_653_1,
        -176.615_029_162_140_6,
        12.507_343_278_686_905,
        -0.138_571_095_265_720_12,
        9.984_369_578_019_572e-6,
        1.505_632_735_149_311_6e-7,
    ];
    if x < 0.5 {
        return std::f64::consts::PI / ((std::f64::consts::PI * x).sin() * gamma(1.0 - x));
    }
    let x = x - 1.0;
    let mut a = C[0];
    let t = x + G + 0.5;
    for (i, c) in C.iter().enumerate().skip(1) {
        a += c / (x + i as f64);
    }
    (2.0 * std::f64::consts::PI).sqrt() * t.powf(x + 0.5) * (-t).exp() * a
}

/// Integral of D^m exp(-k D) dD from `d0` to infinity for integer m: the
/// upper incomplete gamma function of integer order, Gamma(m+1, k d0)/k^(m+1)
/// = m! exp(-k d0) sum_j (k d0)^j / j! / k^(m+1) (repeated integration by
/// parts; Abramowitz & Stegun 1964, Eq. 6.5.13, equation number from memory).
pub fn tail_moment(m: u32, k: f64, d0: f64) -> f64 {
    (-k * d0).exp() * tail_polynomial(m, k, d0)
}

/// `tail_moment` without its factor exp(-k d0) (m^(m+1)). Orders 0-3 in
/// closed form; higher orders by the recursion of integration by parts,
/// P_m = (d0^m + m P_(m-1))/k, run upward from P_3 as a loop (the same
/// operations in the same order as the recursive call, which computed 1/k
/// again at every level and was not inlined: 1.6 % of the demo's
/// instructions).
fn tail_polynomial<T: Lane>(m: u32, k: T, d0: f64) -> T {
    let r = T::splat(1.0) / k;
    match m {
        0 => r,
        1 => r * (r + d0),
        2 => r * (r * 2.0 * (r + d0) + d0 * d0),
        _ => {
            let mut p = r * (r * 3.0 * (r * 2.0 * (r + d0) + d0 * d0) + d0 * d0 * d0);
            for j in 4..=m {
                p = r * (p * f64::from(j) + d0.powi(j as i32));
            }
            p
        }
    }
}

/// Fall-speed law of a species.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FallLaw {
    /// V = a D^b (SI).
    Power { a: f64, b: f64 },
    /// V = alpha - beta exp(-c D) (Atlas et al. 1973 form).
    Exponential { alpha: f64, beta: f64, c: f64 },
}

impl FallLaw {
    /// Speed of one particle of diameter `d` (m) at sea-level density.
    pub fn speed(&self, d: f64) -> f64 {
        match *self {
            FallLaw::Power { a, b } => a * d.powf(b),
            FallLaw::Exponential { alpha, beta, c } => (alpha - beta * (-c * d).exp()).max(0.0),
        }
    }
}

/// An exponential size distribution with its fall law.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Exponential {
    /// Intercept N0 (m-4).
    pub n0: f64,
    /// Particle density (kg m-3).
    pub rho_p: f64,
    pub fall: FallLaw,
    /// Exponent x of the air-density correction (rho0/rho)^x.
    pub density_exponent: f64,
    /// Constants of the species, computed once (see `SpeciesConstants`).
    k: SpeciesConstants,
}

/// Products of the species' constants that every integral below needs.
#[derive(Debug, Clone, Copy, PartialEq)]
struct SpeciesConstants {
    /// pi rho_p N0 (kg m-7): lambda^4 = this / (rho q).
    mass_per_slope: f64,
    /// a Gamma(3+b) and a Gamma(4+b)/6 of the power fall law (zero for the
    /// rain form).
    a_gammas: [f64; 2],
    /// Exponent b' of the power law used for ventilation.
    b_vent: f64,
    /// 0.31 Sc^(1/3) Gamma((b'+5)/2) a'^(1/2) of the ventilation integral.
    vent: f64,
    /// Diameter D0 (m) below which the rain form is negative (zero otherwise).
    d0: f64,
}

/// The powers of a species' slope that its integrals need, computed once per
/// rate evaluation: the slope itself, lambda^b' of the ventilation power law
/// and, for the rain form, exp(-lambda D0). `None` from
/// [`Exponential::slope_powers`] stands for "no mass".
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SlopePowers<T = f64> {
    /// lambda (m-1).
    pub lambda: T,
    /// lambda^b' (m^-b') for power-law species (NaN for the rain form,
    /// whose ventilation integral computes it when needed).
    lambda_b: T,
    /// exp(-lambda D0) (1); 1 for power laws.
    tail: T,
}

impl Exponential {
    /// A species with intercept `n0` (m-4), particle density `rho_p`
    /// (kg m-3), fall law and density-correction exponent.
    pub fn new(n0: f64, rho_p: f64, fall: FallLaw, density_exponent: f64) -> Self {
        let (a_gammas, d0) = match fall {
            FallLaw::Power { a, b } => ([a * gamma(3.0 + b), a * gamma(4.0 + b) / 6.0], 0.0),
            FallLaw::Exponential { alpha, beta, c } => ([0.0; 2], (beta / alpha).ln() / c),
        };
        let (a_vent, b_vent) = match fall {
            FallLaw::Power { a, b } => (a, b),
            FallLaw::Exponential { .. } => RAIN_VENTILATION_LAW,
        };
        Exponential {
            n0,
            rho_p,
            fall,
            density_exponent,
            k: SpeciesConstants {
                mass_per_slope: std::f64::consts::PI * rho_p * n0,
                a_gammas,
                b_vent,
                vent: 0.31 * SCHMIDT_CBRT * gamma(0.5 * (b_vent + 5.0)) * a_vent.sqrt(),
                d0,
            },
        }
    }
}

/// Rain after LFO83 (N0 = 8e6 m-4) with the Atlas et al. (1973) fall law.
pub fn rain(n0: f64) -> Exponential {
    let fall = FallLaw::Exponential {
        alpha: 9.65,
        beta: 10.3,
        c: 600.0,
    };
    Exponential::new(n0, RHO_WATER, fall, 0.4)
}

/// Snow after LFO83 (N0 = 3e6 m-4, 100 kg m-3, V = 4.836 D^0.25).
pub fn snow(n0: f64, rho_p: f64) -> Exponential {
    Exponential::new(n0, rho_p, FallLaw::Power { a: 4.836, b: 0.25 }, 0.5)
}

/// Graupel with Locatelli & Hobbs (1974) lump-graupel speeds.
pub fn graupel(n0: f64, rho_p: f64) -> Exponential {
    let fall = FallLaw::Power {
        a: 1.3 * 1000f64.powf(0.66),
        b: 0.66,
    };
    Exponential::new(n0, rho_p, fall, 0.5)
}

/// x^b for x > 0: two square roots when b = 1/4 (snow's exponent; exact to
/// rounding), otherwise exp(b ln x), which is within a few units in the last
/// place of `powf` and about half its cost.
#[inline(always)]
pub(crate) fn power<T: Lane>(x: T, b: f64) -> T {
    if b == 0.25 {
        x.sqrt().sqrt()
    } else {
        (x.ln() * b).exp()
    }
}

/// Cube root of the Schmidt number 0.6 of LFO83 (computed once: 0.6^(1/3)).
const SCHMIDT_CBRT: f64 = 0.843_432_665_301_749;

/// Power-law rain speed of LFO83 (V = 842 D^0.8), used only in the
/// ventilation term of rain evaporation, where LFO83 Eq. 52 needs a power law.
pub const RAIN_VENTILATION_LAW: (f64, f64) = (842.0, 0.8);

impl Exponential {
    /// Slope lambda (m-1); infinite when there is no mass.
    pub fn slope(&self, rho: f64, q: f64) -> f64 {
        if q <= 0.0 {
            return f64::INFINITY;
        }
        self.slope_of(rho, q)
    }

    /// [`Self::slope`] lane by lane for mixing ratios known to be positive.
    #[inline(always)]
    pub fn slope_of<T: Lane>(&self, rho: T, q: T) -> T {
        // x^(1/4) as two square roots: exact to rounding and cheaper than powf.
        (T::splat(self.k.mass_per_slope) / (rho * q)).sqrt().sqrt()
    }

    /// The slope and the powers of it that the integrals need, or `None`
    /// without mass. One `powf` per species and evaluation: the other powers
    /// follow by multiplication and square roots (lambda^(3+b) = lambda^3
    /// lambda^b, lambda^((b+5)/2) = lambda^2 (lambda lambda^b)^(1/2)).
    pub fn slope_powers(&self, rho: f64, q: f64) -> Option<SlopePowers> {
        if q <= 0.0 {
            return None;
        }
        Some(self.powers_of(rho, q))
    }

    /// [`Self::slope_powers`] for each lane, with whether the lane holds
    /// mass; lanes without mass get the powers of q = 1 kg kg-1, or ones
    /// when no lane holds mass (finite placeholders that the caller's mask
    /// discards).
    #[inline(always)]
    pub fn slope_powers_masked<T: Lane>(&self, rho: T, q: T) -> (T::Mask, SlopePowers<T>) {
        let present = q.gt(T::splat(0.0));
        if !present.any() {
            // No lane uses them: finite placeholders without the powers' cost.
            let one = T::splat(1.0);
            let placeholder = SlopePowers {
                lambda: one,
                lambda_b: one,
                tail: one,
            };
            return (present, placeholder);
        }
        let q = T::select(present, q, T::splat(1.0));
        (present, self.powers_of(rho, q))
    }

    /// The slope powers for q > 0.
    #[inline(always)]
    fn powers_of<T: Lane>(&self, rho: T, q: T) -> SlopePowers<T> {
        let lambda = self.slope_of(rho, q);
        let tail = match self.fall {
            FallLaw::Power { .. } => T::splat(1.0),
            FallLaw::Exponential { .. } => (-lambda * self.k.d0).exp(),
        };
        SlopePowers {
            lambda,
            // The rain form needs lambda^b' only for ventilation, which
            // computes it there (rain evaporates only in subsaturated air).
            lambda_b: match self.fall {
                FallLaw::Power { .. } => power(lambda, self.k.b_vent),
                FallLaw::Exponential { .. } => T::splat(f64::NAN),
            },
            tail,
        }
    }

    /// Air-density correction factor (rho0/rho)^x.
    pub fn correction(&self, rho: f64) -> f64 {
        (RHO_AIR_SEA_LEVEL / rho).powf(self.density_exponent)
    }

    /// Mass-weighted mean fall speed (m s-1).
    pub fn mass_weighted_speed(&self, rho: f64, q: f64) -> f64 {
        self.mass_weighted_speed_with(rho, q, self.correction(rho))
    }

    /// Mass-weighted mean fall speed (m s-1) with the density correction
    /// `correction` = [`Self::correction`]`(rho)` already known.
    pub fn mass_weighted_speed_with(&self, rho: f64, q: f64, correction: f64) -> f64 {
        self.slope_powers(rho, q)
            .map_or(0.0, |s| self.mass_weighted_speed_at(&s, correction))
    }

    /// Mass-weighted speed for known slope powers and density correction.
    #[inline(always)]
    pub fn mass_weighted_speed_at<T: Lane>(&self, s: &SlopePowers<T>, correction: T) -> T {
        let l = s.lambda;
        let v = match self.fall {
            FallLaw::Power { .. } => T::splat(self.k.a_gammas[1]) / s.lambda_b,
            FallLaw::Exponential { .. } => self.rain_moment(3, s) * (l * l) * (l * l) / 6.0,
        };
        v.max(T::splat(0.0)) * correction
    }

    /// For the rain form `V = alpha - beta exp(-c D)`, zero below D0: the
    /// integral of `D^m V(D) exp(-lambda D)` from D0, which is
    /// `alpha T_m(lambda) - beta T_m(lambda + c)` with the upper incomplete
    /// moments T_m of [`tail_moment`]. Their exponentials exp(-lambda D0) and
    /// exp(-(lambda + c) D0) = exp(-lambda D0) alpha/beta share one
    /// evaluation (`SlopePowers::tail`). Zero for power laws.
    #[inline(always)]
    fn rain_moment<T: Lane>(&self, m: u32, s: &SlopePowers<T>) -> T {
        match self.fall {
            FallLaw::Power { .. } => T::splat(0.0),
            FallLaw::Exponential { alpha, c, .. } => {
                let (l, d0) = (s.lambda, self.k.d0);
                s.tail * alpha * (tail_polynomial(m, l, d0) - tail_polynomial(m, l + c, d0))
            }
        }
    }

    /// Sweep-out integral (pi/4) integral D^2 V(D) N(D) dD (m-1 s-1), the
    /// continuous-collection kernel of LFO83 (e.g. their Eqs. 24, 40, 51)
    /// for efficiency 1, including the density correction.
    pub fn sweep(&self, rho: f64, q: f64) -> f64 {
        self.slope_powers(rho, q)
            .map_or(0.0, |s| self.sweep_at(&s, self.correction(rho)))
    }

    /// Sweep-out integral for known slope powers and density correction.
    #[inline(always)]
    pub fn sweep_at<T: Lane>(&self, s: &SlopePowers<T>, correction: T) -> T {
        let l = s.lambda;
        let integral = match self.fall {
            FallLaw::Power { .. } => T::splat(self.k.a_gammas[0]) / (l * l * l * s.lambda_b),
            FallLaw::Exponential { .. } => self.rain_moment(2, s),
        };
        integral * (0.25 * std::f64::consts::PI * self.n0) * correction
    }

    /// Mass of the particles that hit one small, slow target per second
    /// (kg s-1): (pi/4) integral D^2 V(D) (pi/6) rho_p D^3 N(D) dD with
    /// efficiency 1 and the density correction. Times the number of targets
    /// per kg of air it is LFO83's P_iacr (their Eq. 26 for a power fall law:
    /// pi^2 E n_i a rho_w Gamma(6+b)/(24 rho lambda^(6+b)); equation number
    /// from memory), the rain frozen by collisions with cloud ice.
    #[inline(always)]
    pub fn mass_sweep_at<T: Lane>(&self, s: &SlopePowers<T>, correction: T) -> T {
        let l = s.lambda;
        let integral = match self.fall {
            FallLaw::Power { a, b } => T::splat(a * gamma(6.0 + b)) / (l.powi(6) * s.lambda_b),
            FallLaw::Exponential { .. } => self.rain_moment(5, s),
        };
        integral
            * (std::f64::consts::PI * std::f64::consts::PI / 24.0 * self.n0 * self.rho_p)
            * correction
    }

    /// Ventilated diffusion integral of LFO83 Eq. 52 (m-2): 0.78/lambda^2 +
    /// 0.31 Sc^(1/3) Gamma((b'+5)/2) a'^(1/2) (rho0/rho)^(1/4) nu^(-1/2)
    /// lambda^(-(b'+5)/2), times N0, with kinematic viscosity `nu` (m2 s-1)
    /// and the species' ventilation power law V = a' D^b' ([`Self::power_law`]).
    pub fn ventilation(&self, rho: f64, q: f64, nu: f64) -> f64 {
        self.slope_powers(rho, q).map_or(0.0, |s| {
            self.ventilation_at(&s, (RHO_AIR_SEA_LEVEL / rho).sqrt().sqrt() / nu.sqrt())
        })
    }

    /// Ventilation integral for known slope powers, with
    /// `air` = (rho0/rho)^(1/4) / nu^(1/2) precomputed for the cell.
    #[inline(always)]
    pub fn ventilation_at<T: Lane>(&self, s: &SlopePowers<T>, air: T) -> T {
        let l2 = s.lambda * s.lambda;
        let lambda_b = match self.fall {
            FallLaw::Power { .. } => s.lambda_b,
            FallLaw::Exponential { .. } => power(s.lambda, self.k.b_vent),
        };
        (T::splat(0.78) / l2 + air * self.k.vent / (l2 * (s.lambda * lambda_b).sqrt())) * self.n0
    }

    /// The power law used for ventilation (LFO83 needs V = a D^b).
    pub fn power_law(&self) -> (f64, f64) {
        match self.fall {
            FallLaw::Power { a, b } => (a, b),
            FallLaw::Exponential { .. } => RAIN_VENTILATION_LAW,
        }
    }
}

/// Cloud-ice crystals: monodisperse spheres of solid-ice density.
pub mod ice {
    use super::*;

    /// Crystal diameter (m): d = (6 m / (pi rho_ice))^(1/3).
    pub fn diameter(q: f64, n: f64) -> f64 {
        if q <= 0.0 || n <= 0.0 {
            return 0.0;
        }
        diameter_of(q, n)
    }

    /// [`diameter`] lane by lane for mixing ratios and numbers known to be
    /// positive.
    #[inline(always)]
    pub fn diameter_of<T: Lane>(q: T, n: T) -> T {
        (q / n * 6.0 / (std::f64::consts::PI * RHO_ICE)).cbrt()
    }

    /// Mass-weighted fall speed (m s-1), Heymsfield & Donner (1990), with
    /// (rho0/rho)^0.5.
    pub fn speed(rho: f64, q: f64) -> f64 {
        if q <= 0.0 {
            return 0.0;
        }
        speed_of(rho, q)
    }

    /// [`speed`] lane by lane for mixing ratios known to be positive.
    #[inline(always)]
    pub fn speed_of<T: Lane>(rho: T, q: T) -> T {
        power(rho * q, 0.16) * 3.29 * (T::splat(RHO_AIR_SEA_LEVEL) / rho).sqrt()
    }
}
