//! Charge sources: prescribed charge growth ([`prescribed`]), charge that
//! follows mass in the microphysics ([`follow_mass`], called from there),
//! non-inductive charge separation in rebounding graupel-ice, graupel-snow
//! and snow-ice collisions with a published scheme chosen in the
//! configuration ([`gardiner_1985`], [`saunders_peck_1998`]), and optional
//! inductive charging ([`inductive`]). Every separation adds to one species
//! what it takes from the other in the same cell, so it conserves charge to
//! round-off. Units: charge densities C m-3, rates C m-3 s-1.

pub mod collisions;
pub mod follow_mass;
pub mod gardiner_1985;
pub mod inductive;
pub mod prescribed;
pub mod riming_efficiency;
pub mod saunders_peck_1998;
pub mod size_speed;
pub mod table;

use crate::physics::carriers::Carrier;
use crate::physics::constants::T_MELT;
use crate::physics::microphysics::dsd;
use crate::physics::microphysics::params::MicroParams;
use crate::physics::microphysics::species::{CLOUD, GRAUPEL, ICE, RAIN, SNOW};
use crate::physics::microphysics::TINY;

named_scheme! {
    #[tag = "scheme"]
    /// The non-inductive charging scheme (`charging.scheme`), with the
    /// parameters that belong to it. A new scheme is one file in this folder,
    /// one variant here and its page in docs/charging.md.
    #[derive(Debug, Clone, PartialEq)]
    pub enum Scheme {
        /// No non-inductive charging.
        Off = "off",
        /// Gardiner et al. (1985), [`gardiner_1985`].
        Gardiner1985 = "gardiner_1985" {
            /// Reversal temperature T_r (degC).
            reversal_temperature: f64,
        },
        /// Saunders & Peck (1998), [`saunders_peck_1998`].
        SaundersPeck1998 = "saunders_peck_1998",
        /// The user's table of q over temperature and liquid water or rime
        /// accretion rate, [`table`].
        Table = "table" {
            /// CSV file, relative to the configuration file; read once and
            /// replaced by the inline columns and rows below in the
            /// resolved configuration (so an output file alone reproduces
            /// its run).
            #[serde(default, skip_serializing_if = "Option::is_none")]
            table_file: Option<String>,
            #[serde(default, skip_serializing_if = "Option::is_none")]
            table_columns: Option<Vec<String>>,
            #[serde(default, skip_serializing_if = "Option::is_none")]
            table_rows: Option<Vec<Vec<f64>>>,
        },
    }
}

/// Charging parameters (SI; temperatures in degC where noted).
#[derive(Debug, Clone, PartialEq)]
pub struct ChargingParams {
    pub scheme: Scheme,
    /// The table of `Scheme::Table`, read and checked by the setup.
    pub table: Option<std::sync::Arc<table::ChargeTable>>,
    /// Multiplier on the charge per collision (1).
    pub scale: f64,
    /// Largest |charge| per collision (C).
    pub cap: f64,
    /// Low-temperature taper: full charging down to `taper_start`, falling
    /// linearly to zero at `taper_end` (degC).
    pub taper_start: f64,
    pub taper_end: f64,
    pub inductive: bool,
    /// Inductive charging of rain as well as graupel.
    pub inductive_rain: bool,
    /// Non-inductive charging in graupel-snow collisions.
    pub graupel_snow: bool,
    pub cos_theta: f64,
    pub rebound_probability: f64,
    /// Collision efficiency of droplets on the rimer in the effective water
    /// content (Saunders & Peck 1998, table schemes on the RAR axis).
    pub riming_efficiency: riming_efficiency::RimingEfficiency,
}

/// The conditions of one rebounding collision.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Collision {
    /// Temperature (degC).
    pub t: f64,
    /// Cloud liquid water content (g m-3).
    pub lwc: f64,
    /// Crystal diameter (m).
    pub crystal: f64,
    /// Impact speed (m s-1).
    pub impact_speed: f64,
    /// Collector (rimer) speed (m s-1), the V of the rime accretion rate.
    pub collector_speed: f64,
    /// The droplets' collision efficiency on the collector (1): the
    /// effective water content is E LWC.
    pub efficiency: f64,
}

impl Collision {
    /// The rime accretion rate E LWC V (g m-2 s-1).
    pub fn rime_accretion_rate(&self) -> f64 {
        self.efficiency * self.lwc * self.collector_speed
    }
}

impl ChargingParams {
    /// Charge gained by the collector per rebounding collision (C).
    pub fn per_collision(&self, c: &Collision) -> f64 {
        self.per_collision_capped(c).0
    }

    /// [`Self::per_collision`] and whether the safety cap bound it.
    pub fn per_collision_capped(&self, c: &Collision) -> (f64, bool) {
        let t = c.t;
        if t >= 0.0 || t <= self.taper_end {
            return (0.0, false);
        }
        let raw = match self.scheme {
            Scheme::Off => 0.0,
            Scheme::Gardiner1985 {
                reversal_temperature,
            } => gardiner_1985::charge_per_collision(
                t,
                reversal_temperature,
                c.lwc,
                c.crystal,
                c.impact_speed,
            ),
            Scheme::SaundersPeck1998 => saunders_peck_1998::charge_per_collision(
                t,
                c.rime_accretion_rate(),
                c.crystal,
                c.impact_speed,
            ),
            Scheme::Table { .. } => self
                .table
                .as_ref()
                .map_or(0.0, |tab| tab.charge_per_collision(c)),
        };
        let taper = if t < self.taper_start {
            (t - self.taper_end) / (self.taper_start - self.taper_end)
        } else {
            1.0
        };
        let q = self.scale * raw * taper;
        (q.clamp(-self.cap, self.cap), q.abs() > self.cap)
    }
}

/// One cell's charging rates (C m-3 s-1; positive when the collector named
/// first gains positive charge).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct CellRates {
    pub graupel_ice: f64,
    pub graupel_snow: f64,
    pub snow_ice: f64,
    pub inductive_graupel: f64,
    pub inductive_rain: f64,
    /// How many of the cell's three collision kinds had their charge per
    /// collision bound by the safety cap.
    pub capped: u8,
}

/// What the charging of one cell needs (SI).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CellInputs {
    /// Air density (kg m-3).
    pub rho: f64,
    /// Temperature (degC).
    pub t: f64,
    /// Mixing ratios, `Species` order (kg kg-1).
    pub q: [f64; 6],
    /// Cloud-ice number (kg-1).
    pub n_ice: f64,
    /// Vertical field at the cell centre (V m-1), positive up.
    pub e_z: f64,
    /// Fall-speed density corrections of rain, snow and graupel (1).
    pub corrections: [f64; 3],
}

fn separate(charge: &mut [f64; Carrier::COUNT], gainer: Carrier, loser: Carrier, amount: f64) {
    charge[gainer.index()] += amount;
    charge[loser.index()] -= amount;
}

/// Separates charge in one cell over `dt` s: updates the cell's carrier
/// charge densities `charge` (C m-3, `Carrier::ALL` order) and returns the
/// rates. Non-inductive separation first, then inductive charging, which
/// sees the collector charge the first left behind.
pub fn charge_cell(
    p: &ChargingParams,
    f: &MicroParams,
    c: &CellInputs,
    charge: &mut [f64; Carrier::COUNT],
    dt: f64,
) -> CellRates {
    let rho = c.rho;
    let [cr, cs, cg] = c.corrections;
    let t = c.t;
    let q = |i: usize| c.q[i].max(0.0);
    let (qc, qr, qi, qs, qg) = (q(CLOUD), q(RAIN), q(ICE), q(SNOW), q(GRAUPEL));
    // Every mechanism below needs a collector (graupel, snow or rain);
    // without one the cell's rates are zero and nothing else is computed.
    // A collector below the microphysics' smallest present mixing ratio
    // (the traces eddy mixing carries out of the cloud) makes collisions
    // some fifteen orders of magnitude fewer than in the cloud and counts
    // as absent.
    if qg <= TINY && qs <= TINY && qr <= TINY {
        return CellRates::default();
    }
    let lwc = rho * qc * 1e3;
    // Slopes and their powers once per species: they give the speeds,
    // the collision kernels and the sweep-out rates below.
    let (sg, ss, sr) = (
        f.graupel.slope_powers(rho, qg),
        f.snow.slope_powers(rho, qs),
        f.rain.slope_powers(rho, qr),
    );
    let (vg, vs, vi) = (
        sg.map_or(0.0, |s| f.graupel.mass_weighted_speed_at(&s, cg)),
        ss.map_or(0.0, |s| f.snow.mass_weighted_speed_at(&s, cs)),
        dsd::ice::speed(rho, qi),
    );
    let slope = |s: Option<dsd::SlopePowers>| s.map_or(f64::INFINITY, |s| s.lambda);
    let (lg, ls) = (slope(sg), slope(ss));
    let n_ice = rho * c.n_ice;
    let d_ice = dsd::ice::diameter(qi, c.n_ice);
    // Rebounding collisions (m-3 s-1) times the charge per collision
    // (crystal size d, impact speed dv, collector speed v).
    let capped = std::cell::Cell::new(0u8);
    // Droplets' collision efficiency on each collector (its mass-weighted
    // mean diameter 4/lambda and speed), for the effective water content.
    let efficiency = |lambda: f64, v: f64| {
        p.riming_efficiency
            .of(f.droplet_diameter, 4.0 / lambda, v, rho)
    };
    let rate = |collisions: f64, d: f64, dv: f64, v: f64, e: f64| {
        let (q, cap) = p.per_collision_capped(&Collision {
            t,
            lwc,
            crystal: d,
            impact_speed: dv,
            collector_speed: v,
            efficiency: e,
        });
        if cap && collisions > 0.0 {
            capped.set(capped.get() + 1);
        }
        collisions * q
    };
    let mut out = CellRates::default();
    if t < 0.0 && !matches!(p.scheme, Scheme::Off) {
        // 1 - E_coll with the microphysics' efficiencies, t = T - T0 (K).
        let (e_snow, e_graupel) = crate::physics::microphysics::rates::collection_efficiencies(t);
        let (sep_g, sep_s) = (1.0 - e_graupel, 1.0 - e_snow);
        // Graupel's efficiency serves both of its collision kinds.
        let riming_graupel = if qg > 0.0 { efficiency(lg, vg) } else { 0.0 };
        if qg > 0.0 && qi > 0.0 {
            let dv = (vg - vi).abs();
            let n = collisions::crystals_on_exponential(n_ice, d_ice, dv, f.graupel.n0, lg);
            out.graupel_ice = rate(n * sep_g, d_ice, dv, vg, riming_graupel);
        }
        if p.graupel_snow && qg > 0.0 && qs > 0.0 {
            let dv = (vg - vs).abs();
            let n = collisions::exponential_pair(f.graupel.n0, lg, f.snow.n0, ls, dv);
            out.graupel_snow = rate(n * sep_g, 1.0 / ls, dv, vg, riming_graupel);
        }
        if qs > 0.0 && qi > 0.0 {
            let dv = (vs - vi).abs();
            let n = collisions::crystals_on_exponential(n_ice, d_ice, dv, f.snow.n0, ls);
            out.snow_ice = rate(n * sep_s, d_ice, dv, vs, efficiency(ls, vs));
        }
    }
    out.capped = capped.get();
    for (r, gainer, loser) in [
        (out.graupel_ice, Carrier::Graupel, Carrier::Ice),
        (out.graupel_snow, Carrier::Graupel, Carrier::Snow),
        (out.snow_ice, Carrier::Snow, Carrier::Ice),
    ] {
        separate(charge, gainer, loser, r * dt);
    }
    if p.inductive && qc > 0.0 {
        // The droplets of the microphysics (one droplet size in the model).
        let m_drop = f.droplet_mass();
        let drops = rho * qc / m_drop; // m-3
        for (carrier, dist, powers, correction) in [
            (Carrier::Graupel, &f.graupel, sg, cg),
            (Carrier::Rain, &f.rain, sr, cr),
        ] {
            let mut r = 0.0;
            let on = carrier == Carrier::Graupel || p.inductive_rain;
            if let Some(s) = powers.filter(|s| on && s.lambda.is_finite()) {
                let lam = s.lambda;
                let number = dist.n0 / lam; // collectors per m3
                let q_mean = charge[carrier.index()] / number;
                let rebounds = p.rebound_probability * drops * dist.sweep_at(&s, correction);
                r = rebounds
                    * inductive::charge_per_rebound(
                        f.droplet_diameter,
                        1.0 / lam,
                        c.e_z,
                        p.cos_theta,
                        q_mean,
                    );
                separate(charge, carrier, Carrier::Cloud, r * dt);
            }
            if carrier == Carrier::Graupel {
                out.inductive_graupel = r;
            } else {
                out.inductive_rain = r;
            }
        }
    }
    out
}

/// Temperature (degC) from potential temperature (K) and the Exner function (1).
pub fn celsius(theta: f64, exner: f64) -> f64 {
    theta * exner - T_MELT
}

/// Surface tension of water used for the Rayleigh limit (N m-1): 0.0728,
/// as in docs/references.md (IAPWS gives 0.07565 at 0 degC
/// and 0.07274 at 20 degC).
pub const SURFACE_TENSION: f64 = 0.0728;

/// Rayleigh charge limit of a drop of radius `r` (m): Q = 8 pi sqrt(eps0 gamma r^3)
/// (Rayleigh 1882; 6.38e-10 C for r = 1 mm, docs/references.md).
pub fn rayleigh_limit(r: f64) -> f64 {
    8.0 * std::f64::consts::PI
        * (crate::physics::constants::EPSILON_0 * SURFACE_TENSION * r.powi(3)).sqrt()
}

/// The charge density `charge` (C m-3) of an exponential species with
/// mixing ratio `q` shared over its particles: the slope lambda (m-1) and
/// intercept N0 (m-4) of N(D) = N0 exp(-lambda D) (Marshall & Palmer 1948,
/// J. Meteor. 5, 165), from which every per-particle diagnostic follows.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SharedCharge {
    /// Charge density (C m-3).
    pub density: f64,
    /// Slope of the size distribution (m-1).
    pub lambda: f64,
    /// Intercept of the size distribution (m-4).
    pub n0: f64,
}

impl SharedCharge {
    /// The sharing for a species holding `q` (kg kg-1) in air of density
    /// `rho` (kg m-3); `None` when the species is absent (q <= 1e-12).
    pub fn of(dist: &dsd::Exponential, rho: f64, q: f64, charge: f64) -> Option<Self> {
        if q <= 1e-12 {
            return None;
        }
        Some(SharedCharge {
            density: charge,
            lambda: dist.slope(rho, q),
            n0: dist.n0,
        })
    }

    /// Mean charge per particle (C): the density over the number
    /// concentration N0/lambda.
    pub fn mean(&self) -> f64 {
        self.density * self.lambda / self.n0
    }

    /// Mean radius (m), 1/(2 lambda).
    pub fn mean_radius(&self) -> f64 {
        0.5 / self.lambda
    }

    /// Charge (C) of a particle of diameter `d` (m) when the charge is
    /// shared in proportion to surface area:
    /// q(D) = charge D^2 / integral D^2 N(D) dD = charge D^2 lambda^3 / (2 N0)
    /// (the exponential's second moment 2 N0 / lambda^3, derived). Sharing by
    /// surface follows the diffusion-limited ion and contact charging the
    /// particles acquire (common practice for bulk models' size-resolved
    /// diagnostics); it gives the large particles the charge balloon-borne
    /// instruments measure on millimetre precipitation.
    pub fn at_diameter(&self, d: f64) -> f64 {
        self.density * d * d * self.lambda.powi(3) / (2.0 * self.n0)
    }

    /// Surface charge density (C m-2) of every particle: the charge of
    /// [`Self::at_diameter`] over the area pi D^2, density lambda^3/(2 pi N0),
    /// the same for every size (derived).
    pub fn surface_density(&self) -> f64 {
        self.density * self.lambda.powi(3) / (2.0 * std::f64::consts::PI * self.n0)
    }
}

/// Mean charge per particle (C) and mean radius (m) of an exponential
/// species holding charge density `charge` (C m-3) with mixing ratio `q`
/// ([`SharedCharge`]).
pub fn mean_particle_charge(
    dist: &dsd::Exponential,
    rho: f64,
    q: f64,
    charge: f64,
) -> Option<(f64, f64)> {
    SharedCharge::of(dist, rho, q, charge).map(|s| (s.mean(), s.mean_radius()))
}

/// Charge (C) of a particle of diameter `d` (m) of an exponential species
/// holding charge density `charge` (C m-3) with mixing ratio `q`, shared by
/// surface area ([`SharedCharge::at_diameter`]).
pub fn charge_at_diameter(
    dist: &dsd::Exponential,
    rho: f64,
    q: f64,
    charge: f64,
    d: f64,
) -> Option<f64> {
    SharedCharge::of(dist, rho, q, charge).map(|s| s.at_diameter(d))
}
