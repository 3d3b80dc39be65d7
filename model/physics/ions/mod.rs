//! Small ions: the cluster ions that make clear air a weak conductor.
//!
//! Positive and negative small-ion number concentrations n+ and n- (m-3)
//! are produced in pairs by ionisation ([`ionisation`]), lost by ion-ion
//! recombination (coefficient alpha, [`recombination_tinsley_zhou_2006`]),
//! by attachment to aerosol particles and to cloud droplets and
//! hydrometeors ([`attachment`]), and drift in the field with their
//! mobilities ([`Mobility`]), which makes the conduction current
//! J = e (n+ mu+ + n- mu-) E = sigma E ([`conduction`]). Point discharge at
//! the ground injects ions when the surface field is strong ([`conduction::Corona`]).
//!
//! Sources are named beside each formula and listed in docs/references.md
//! ("Small ions and conduction"); docs/ions.md explains the choices.

pub mod attachment;
pub mod conduction;
pub mod ionisation;

use crate::physics::constants::ELEMENTARY_CHARGE;

/// Reference pressure (Pa) and temperature (K) of the mobilities at
/// standard conditions (common practice: 1013.25 hPa, 15 degC).
pub const MOBILITY_REFERENCE: (f64, f64) = (101_325.0, 288.15);

/// Temperature exponent of small-ion mobility at fixed pressure: 0.6 for
/// small ions of mobility about 1.5 cm2 V-1 s-1, against 1 in the Langevin
/// rule (Tammet 1998, J. Geophys. Res. 103, 13933, abstract; docs/references.md).
pub const MOBILITY_TEMPERATURE_EXPONENT: f64 = 0.6;

/// Small-ion mobilities at [`MOBILITY_REFERENCE`] conditions (m2 V-1 s-1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Mobility {
    pub positive: f64,
    pub negative: f64,
}

impl Default for Mobility {
    /// 1.4e-4 and 1.9e-4 m2 V-1 s-1, the values of global-circuit models
    /// (docs/references.md, "small-ion mobility"; from memory).
    fn default() -> Self {
        Mobility {
            positive: 1.4e-4,
            negative: 1.9e-4,
        }
    }
}

impl Mobility {
    /// Mobilities (m2 V-1 s-1) at pressure `p` (Pa) and temperature `t` (K):
    /// mu = mu0 (p0/p) (T/T0)^0.6, inverse in the gas density at fixed
    /// temperature (Langevin) with Tammet's (1998) temperature exponent.
    pub fn at(&self, p: f64, t: f64) -> (f64, f64) {
        let (p0, t0) = MOBILITY_REFERENCE;
        let f = (p0 / p) * (t / t0).powf(MOBILITY_TEMPERATURE_EXPONENT);
        (self.positive * f, self.negative * f)
    }
}

/// Ion-ion recombination coefficient alpha (m3 s-1) at temperature `t` (K)
/// and air number density `n_air` (m-3), height `z` (m) choosing the band:
/// alpha = A (300/T)^a + B_i (300/T)^b_i (N/N0)^c_i, the three-body plus
/// two-body fit of Tinsley & Zhou (2006), J. Geophys. Res. 111, D16205
/// (A = 6e-14 m3 s-1, a = 0.5, N0 = 2.69e25 m-3, bands below 10 km, 10-20 km
/// and above 20 km; coefficients in docs/references.md). Near the ground
/// it gives 1.67e-12 m3 s-1, the 1.6-1.7e-6 cm3 s-1 of laboratory work.
pub fn recombination_tinsley_zhou_2006(t: f64, n_air: f64, z: f64) -> f64 {
    const A: f64 = 6.0e-14;
    const N0: f64 = 2.69e25;
    // (B_i in m3 s-1, b_i, c_i) for z < 10 km, 10-20 km, above 20 km.
    const BANDS: [(f64, f64, f64); 3] = [
        (1.702e-12, -1.984, -0.451),
        (1.035e-12, 4.374, 0.769),
        (6.471e-12, -0.191, 0.901),
    ];
    let band = if z < 10_000.0 {
        BANDS[0]
    } else if z < 20_000.0 {
        BANDS[1]
    } else {
        BANDS[2]
    };
    let r = 300.0 / t;
    A * r.sqrt() + band.0 * r.powf(band.1) * (n_air / N0).powf(band.2)
}

/// Steady small-ion concentration (m-3) of clear air with equal positive and
/// negative ions: q = alpha n^2 + beta Z n, so
/// n = (-beta Z + sqrt((beta Z)^2 + 4 alpha q)) / (2 alpha)
/// (the ion balance equation, e.g. Hoppel et al. 1986, "Atmospheric
/// electricity in the planetary boundary layer", in The Earth's Electrical
/// Environment, National Academy Press; from memory). `sink` = beta Z (s-1).
pub fn steady_clear_air(q: f64, alpha: f64, sink: f64) -> f64 {
    if q <= 0.0 {
        return 0.0;
    }
    // Written without cancellation: 2q / (sink + sqrt(sink^2 + 4 alpha q)).
    2.0 * q / (sink + (sink * sink + 4.0 * alpha * q).sqrt())
}

/// The result of one step of the ion balance in a cell.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BalanceStep {
    /// New positive-ion concentration (m-3).
    pub positive: f64,
    /// New negative-ion concentration (m-3).
    pub negative: f64,
    /// Ion pairs recombined over the step (m-3).
    pub recombined: f64,
    /// Positive and negative ions taken up by the first-order sinks (m-3).
    pub attached_pos: f64,
    pub attached_neg: f64,
}

/// One step of dn+/dt = q - alpha n+ n- - L+ n+ and the same for n- (L the
/// first-order losses to aerosol and hydrometeors, s-1), implicit in the
/// new concentrations with the same recombined amount for both signs:
/// x (1 + L+ dt) = n+ + q dt - alpha dt x y and y (1 + L- dt) = n- + q dt -
/// alpha dt x y. Their difference makes y linear in x, which leaves one
/// quadratic; its positive root is taken in a form without cancellation.
/// Backward Euler: positive for any step, and a steady state of the
/// equations is a fixed point of the step exactly (so n = sqrt(q/alpha) in
/// clean air whatever dt). Recombination removes equal numbers of each
/// sign, so the only charge the step moves is the attached charge
/// e (L+ x - L- y) dt, which the caller gives to the particles.
pub fn balance_step(
    n_pos: f64,
    n_neg: f64,
    q: f64,
    alpha: f64,
    loss_pos: f64,
    loss_neg: f64,
    dt: f64,
) -> BalanceStep {
    let a = 1.0 + loss_pos * dt;
    let b = 1.0 + loss_neg * dt;
    let p = n_pos + q * dt;
    let m = n_neg + q * dt;
    let c = alpha * dt;
    let solve = |a: f64, b: f64, p: f64, m: f64| -> f64 {
        // x A = P - c x y, y B = M - c x y: y = (A x - P + M)/B, so
        // c A x^2 + (A B + c (M - P)) x - P B = 0.
        if p <= 0.0 {
            return 0.0;
        }
        if c == 0.0 {
            return p / a;
        }
        let lin = a * b + c * (m - p);
        let disc = (lin * lin + 4.0 * c * a * p * b).sqrt();
        if lin >= 0.0 {
            2.0 * p * b / (lin + disc)
        } else {
            (disc - lin) / (2.0 * c * a)
        }
    };
    let x = solve(a, b, p, m);
    let y = solve(b, a, m, p);
    let recombined = c * x * y;
    // The amounts booked are the ones applied, so charge closes to round-off.
    let positive = (p - recombined - (a - 1.0) * x).max(0.0);
    let negative = (m - recombined - (b - 1.0) * y).max(0.0);
    BalanceStep {
        positive,
        negative,
        recombined,
        attached_pos: (a - 1.0) * x,
        attached_neg: (b - 1.0) * y,
    }
}

/// Conductivity sigma = e (n+ mu+ + n- mu-) (S m-1).
pub fn conductivity(n_pos: f64, n_neg: f64, mu_pos: f64, mu_neg: f64) -> f64 {
    ELEMENTARY_CHARGE * (n_pos * mu_pos + n_neg * mu_neg)
}

/// The ion physics of one experiment on its grid, cell by cell (built from
/// the configuration by `crate::setup::resolve::ions`; the base state is
/// fixed, so these profiles are computed once).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct IonColumn {
    /// Whether small ions are prognostic (otherwise a passive reservoir).
    pub enabled: bool,
    /// Ion-pair production (m-3 s-1).
    pub production: Vec<f64>,
    /// Ion-ion recombination coefficient (m3 s-1).
    pub recombination: Vec<f64>,
    /// First-order loss to aerosol, beta Z (s-1).
    pub aerosol_sink: Vec<f64>,
    /// Mobilities (m2 V-1 s-1).
    pub mu_pos: Vec<f64>,
    pub mu_neg: Vec<f64>,
    /// Steady clear-air concentration of either sign (m-3): the initial state
    /// and the air that enters the column.
    pub environment: Vec<f64>,
    /// The same per kilogram of air (kg-1), as transport carries it.
    pub environment_specific: Vec<f64>,
    /// Energetic secondary-electron flux at centres (m-2 s-1).
    pub electron_flux: Vec<f64>,
    /// The same on faces (the seed of runaway avalanches): neighbouring
    /// centres averaged, the end values at the ground and the top.
    pub seed_on_faces: Vec<f64>,
    /// Cloud droplet number (m-3) for the droplets' radius.
    pub cloud_droplet_number: f64,
    /// Point discharge at the ground, when on.
    pub corona: Option<conduction::Corona>,
}

/// Energetic-electron flux at heights `z` (m) with pressure `p` (Pa) and
/// temperature `t` (K), and the same on the faces between them.
pub fn electron_flux_profiles(
    cosmic: &ionisation::CosmicRayProfile,
    z: &[f64],
    p: &[f64],
    t: &[f64],
    sea_level_flux: f64,
) -> (Vec<f64>, Vec<f64>) {
    let centres: Vec<f64> = (0..z.len())
        .map(|k| {
            ionisation::energetic_electron_flux(
                cosmic,
                z[k],
                p[k],
                t[k],
                MOBILITY_REFERENCE,
                sea_level_flux,
            )
        })
        .collect();
    let n = centres.len();
    let faces = (0..=n)
        .map(|j| match j {
            0 => centres[0],
            j if j == n => centres[n - 1],
            j => 0.5 * (centres[j - 1] + centres[j]),
        })
        .collect();
    (centres, faces)
}

/// Inputs of [`IonColumn::build`] other than the base state.
#[derive(Debug, Clone, PartialEq)]
pub struct IonInputs {
    pub mobility: Mobility,
    pub aerosol_number: f64,
    pub aerosol_scale_height: f64,
    pub aerosol_attachment: f64,
    pub cloud_droplet_number: f64,
    pub corona: Option<conduction::Corona>,
    pub seed_electron_flux: f64,
}

impl IonColumn {
    /// Profiles on cell centres at heights `z` (m) with base-state pressure
    /// `p` (Pa) and temperature `t` (K); `production` the ion-pair production
    /// per cell (m-3 s-1), `cosmic` the cosmic-ray profile for the electron flux.
    pub fn build(
        inputs: &IonInputs,
        z: &[f64],
        p: &[f64],
        t: &[f64],
        rho: &[f64],
        production: Vec<f64>,
        cosmic: &ionisation::CosmicRayProfile,
    ) -> Self {
        use crate::physics::constants::BOLTZMANN;
        let n = z.len();
        let (electron_flux, seed_on_faces) =
            electron_flux_profiles(cosmic, z, p, t, inputs.seed_electron_flux);
        let mut col = IonColumn {
            enabled: true,
            production,
            cloud_droplet_number: inputs.cloud_droplet_number,
            corona: inputs.corona,
            electron_flux,
            seed_on_faces,
            ..IonColumn::default()
        };
        for k in 0..n {
            let (mp, mn) = inputs.mobility.at(p[k], t[k]);
            col.mu_pos.push(mp);
            col.mu_neg.push(mn);
            let alpha = recombination_tinsley_zhou_2006(t[k], p[k] / (BOLTZMANN * t[k]), z[k]);
            col.recombination.push(alpha);
            let sink = inputs.aerosol_attachment
                * inputs.aerosol_number
                * (-z[k] / inputs.aerosol_scale_height).exp();
            col.aerosol_sink.push(sink);
            let env = steady_clear_air(col.production[k], alpha, sink);
            col.environment.push(env);
            col.environment_specific.push(env / rho[k]);
        }
        col
    }
}
