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
use crate::physics::lanes::{Lane, Mask};
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

/// The conditions of one rebounding collision, for one cell (`T` = `f64`)
/// or several side by side ([`crate::physics::lanes`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Collision<T = f64> {
    /// Temperature (degC).
    pub t: T,
    /// Cloud liquid water content (g m-3).
    pub lwc: T,
    /// Crystal diameter (m).
    pub crystal: T,
    /// Impact speed (m s-1).
    pub impact_speed: T,
    /// Collector (rimer) speed (m s-1), the V of the rime accretion rate.
    pub collector_speed: T,
    /// The droplets' collision efficiency on the collector (1): the
    /// effective water content is E LWC.
    pub efficiency: T,
}

impl<T: Lane> Collision<T> {
    /// The rime accretion rate E LWC V (g m-2 s-1).
    pub fn rime_accretion_rate(&self) -> T {
        self.efficiency * self.lwc * self.collector_speed
    }

    /// The collision of lane `i`.
    fn lane(&self, i: usize) -> Collision {
        Collision {
            t: self.t.lane(i),
            lwc: self.lwc.lane(i),
            crystal: self.crystal.lane(i),
            impact_speed: self.impact_speed.lane(i),
            collector_speed: self.collector_speed.lane(i),
            efficiency: self.efficiency.lane(i),
        }
    }
}

impl ChargingParams {
    /// Charge gained by the collector per rebounding collision (C).
    pub fn per_collision(&self, c: &Collision) -> f64 {
        self.per_collision_capped(c).0
    }

    /// [`Self::per_collision`] and whether the safety cap bound it.
    pub fn per_collision_capped(&self, c: &Collision) -> (f64, bool) {
        self.per_collision_capped_of(c)
    }

    /// [`Self::per_collision_capped`] lane by lane: the scheme's charge,
    /// scaled, tapered between `taper_start` and `taper_end` and bound by
    /// the cap; zero at 0 degC and warmer and at `taper_end` and colder.
    #[inline(always)]
    pub fn per_collision_capped_of<T: Lane>(&self, c: &Collision<T>) -> (T, T::Mask) {
        let zero = T::splat(0.0);
        let t = c.t;
        let raw = match self.scheme {
            Scheme::Off => zero,
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
            // A table is read lane by lane: its lookups do not vectorise.
            Scheme::Table { .. } => self.table.as_ref().map_or(zero, |tab| {
                T::from_lanes(|i| tab.charge_per_collision(&c.lane(i)))
            }),
        };
        let ramp = (t - self.taper_end) / (self.taper_start - self.taper_end);
        let taper = T::select(t.lt(T::splat(self.taper_start)), ramp, T::splat(1.0));
        let charging = t.lt(zero) & t.gt(T::splat(self.taper_end));
        let q = T::select(charging, raw * self.scale * taper, zero);
        let capped = q.abs().gt(T::splat(self.cap));
        (q.max(T::splat(-self.cap)).min(T::splat(self.cap)), capped)
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

/// What the charging of one cell (`T` = `f64`) or of several side by side
/// needs (SI).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CellInputs<T = f64> {
    /// Air density (kg m-3).
    pub rho: T,
    /// Temperature (degC).
    pub t: T,
    /// Mixing ratios, `Species` order (kg kg-1).
    pub q: [T; 6],
    /// Cloud-ice number (kg-1).
    pub n_ice: T,
    /// Vertical field at the cell centre (V m-1), positive up.
    pub e_z: T,
    /// Fall-speed density corrections of rain, snow and graupel (1).
    pub corrections: [T; 3],
}

/// The non-inductive separation rates of one cell or of several side by
/// side (C m-3 s-1, positive when the collector named first gains
/// positive charge).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Separation<T> {
    pub graupel_ice: T,
    pub graupel_snow: T,
    pub snow_ice: T,
    /// How many of the three collision kinds had their charge per
    /// collision bound by the safety cap (a count held as a number).
    pub capped: T,
}

impl<T: Lane> Separation<T> {
    /// The rates of lane `i`.
    pub fn lane(&self, i: usize) -> Separation<f64> {
        Separation {
            graupel_ice: self.graupel_ice.lane(i),
            graupel_snow: self.graupel_snow.lane(i),
            snow_ice: self.snow_ice.lane(i),
            capped: self.capped.lane(i),
        }
    }
}

fn separate(charge: &mut [f64; Carrier::COUNT], gainer: Carrier, loser: Carrier, amount: f64) {
    charge[gainer.index()] += amount;
    charge[loser.index()] -= amount;
}

/// Whether a cell holds a collector (graupel, snow or rain). Every charging
/// mechanism needs one. A collector below the microphysics' smallest
/// present mixing ratio (the traces eddy mixing carries out of the cloud)
/// makes collisions some fifteen orders of magnitude fewer than in the
/// cloud and counts as absent.
fn has_collector<T: Lane>(c: &CellInputs<T>) -> T::Mask {
    let tiny = T::splat(TINY);
    c.q[GRAUPEL].gt(tiny) | c.q[SNOW].gt(tiny) | c.q[RAIN].gt(tiny)
}

/// The non-inductive separation rates (C m-3 s-1) of the rebounding
/// graupel-ice, graupel-snow and snow-ice collisions of one cell or of
/// several side by side ([`crate::physics::lanes`]): the bulk collision
/// rates ([`collisions`]) times the rebounding fraction 1 - E_coll times
/// the scheme's charge per collision ([`ChargingParams::per_collision_capped`]).
/// Zero warmer than 0 degC and without a collector. A block is skipped
/// only when no lane needs it.
#[inline(always)]
pub fn separation_rates_of<T: Lane>(
    p: &ChargingParams,
    f: &MicroParams,
    c: &CellInputs<T>,
) -> Separation<T> {
    let zero = T::splat(0.0);
    let mut out = Separation::<T>::default();
    let t = c.t;
    let cold = t.lt(zero) & has_collector(c);
    if matches!(p.scheme, Scheme::Off) || !cold.any() {
        return out;
    }
    let rho = c.rho;
    let [_, cs, cg] = c.corrections;
    let q = |i: usize| c.q[i].max(zero);
    let (qc, qi, qs, qg) = (q(CLOUD), q(ICE), q(SNOW), q(GRAUPEL));
    let lwc = rho * qc * 1e3;
    // Slopes and their powers once per species: they give the speeds,
    // the collision kernels and the sweep-out rates below.
    let (has_g, sg) = f.graupel.slope_powers_masked(rho, qg);
    let (has_s, ss) = f.snow.slope_powers_masked(rho, qs);
    let has_i = qi.gt(zero);
    let vg = T::select(has_g, f.graupel.mass_weighted_speed_at(&sg, cg), zero);
    let vs = T::select(has_s, f.snow.mass_weighted_speed_at(&ss, cs), zero);
    let one = T::splat(1.0);
    let qi_or_one = T::select(has_i, qi, one);
    let vi = T::select(has_i, dsd::ice::speed_of(rho, qi_or_one), zero);
    let (lg, ls) = (sg.lambda, ss.lambda);
    let n_ice = rho * c.n_ice;
    let crystals = has_i & c.n_ice.gt(zero);
    let d_ice = T::select(
        crystals,
        dsd::ice::diameter_of(qi_or_one, T::select(crystals, c.n_ice, one)),
        zero,
    );
    // 1 - E_coll with the microphysics' efficiencies, t = T - T0 (K).
    let (e_snow, e_graupel) = crate::physics::microphysics::rates::collection_efficiencies(t);
    let (sep_g, sep_s) = (one - e_graupel, one - e_snow);
    // Droplets' collision efficiency on each collector (its mass-weighted
    // mean diameter 4/lambda and speed), for the effective water content.
    // Graupel's efficiency serves both of its collision kinds.
    let riming_graupel = riming_efficiency_of(p, f, has_g, lg, vg, rho);
    // Rebounding collisions (m-3 s-1) times the charge per collision
    // (crystal size d, impact speed dv, collector speed v).
    let collision = |d: T, dv: T, v: T, e: T| Collision {
        t,
        lwc,
        crystal: d,
        impact_speed: dv,
        collector_speed: v,
        efficiency: e,
    };
    let mut capped = zero;
    let graupel_ice = cold & has_g & crystals;
    if graupel_ice.any() {
        let dv = (vg - vi).abs();
        let n = collisions::crystals_on_exponential(n_ice, d_ice, dv, f.graupel.n0, lg);
        let c = collision(d_ice, dv, vg, riming_graupel);
        out.graupel_ice = rate_of(p, graupel_ice, n * sep_g, &c, &mut capped);
    }
    let graupel_snow = cold & has_g & has_s;
    if p.graupel_snow && graupel_snow.any() {
        let dv = (vg - vs).abs();
        let n = collisions::exponential_pair(f.graupel.n0, lg, f.snow.n0, ls, dv);
        let c = collision(one / ls, dv, vg, riming_graupel);
        out.graupel_snow = rate_of(p, graupel_snow, n * sep_g, &c, &mut capped);
    }
    let snow_ice = cold & has_s & crystals;
    if snow_ice.any() {
        let dv = (vs - vi).abs();
        let n = collisions::crystals_on_exponential(n_ice, d_ice, dv, f.snow.n0, ls);
        let c = collision(
            d_ice,
            dv,
            vs,
            riming_efficiency_of(p, f, has_s, ls, vs, rho),
        );
        out.snow_ice = rate_of(p, snow_ice, n * sep_s, &c, &mut capped);
    }
    out.capped = capped;
    out
}

/// The droplets' collision efficiency (1) on a collector of slope `lambda`
/// (m-1: mass-weighted mean diameter 4/lambda) moving at `v` (m s-1), in
/// the lanes `present` (zero elsewhere). A function, not a closure, so that
/// it is compiled with the caller's instruction set.
#[inline(always)]
fn riming_efficiency_of<T: Lane>(
    p: &ChargingParams,
    f: &MicroParams,
    present: T::Mask,
    lambda: T,
    v: T,
    rho: T,
) -> T {
    let zero = T::splat(0.0);
    if !present.any() {
        return zero;
    }
    let e = p
        .riming_efficiency
        .of_lanes(f.droplet_diameter, T::splat(4.0) / lambda, v, rho);
    T::select(present, e, zero)
}

/// The separation rate (C m-3 s-1) of `collisions` (m-3 s-1) rebounding
/// collisions under conditions `c` in the lanes `m` (zero elsewhere); adds
/// one to `capped` in the lanes where collisions happen and the cap bound.
#[inline(always)]
fn rate_of<T: Lane>(
    p: &ChargingParams,
    m: T::Mask,
    collisions: T,
    c: &Collision<T>,
    capped: &mut T,
) -> T {
    let zero = T::splat(0.0);
    let (q, cap) = p.per_collision_capped_of(c);
    *capped += T::select(m & cap & collisions.gt(zero), T::splat(1.0), zero);
    T::select(m, collisions * q, zero)
}

/// Separates charge in one cell over `dt` s: applies its non-inductive
/// rates `s` ([`separation_rates_of`], evaluated for its group) to its
/// carrier charge densities `charge` (C m-3, `Carrier::ALL` order), then
/// its inductive charging, which sees the collector charge the first left
/// behind; returns all its rates.
pub fn apply_separation(
    p: &ChargingParams,
    f: &MicroParams,
    c: &CellInputs,
    s: &Separation<f64>,
    charge: &mut [f64; Carrier::COUNT],
    dt: f64,
) -> CellRates {
    // Without a collector nothing charges (and nothing is touched).
    if !has_collector(c) {
        return CellRates::default();
    }
    let mut out = CellRates {
        graupel_ice: s.graupel_ice,
        graupel_snow: s.graupel_snow,
        snow_ice: s.snow_ice,
        capped: s.capped as u8,
        ..CellRates::default()
    };
    for (r, gainer, loser) in [
        (out.graupel_ice, Carrier::Graupel, Carrier::Ice),
        (out.graupel_snow, Carrier::Graupel, Carrier::Snow),
        (out.snow_ice, Carrier::Snow, Carrier::Ice),
    ] {
        separate(charge, gainer, loser, r * dt);
    }
    let rho = c.rho;
    let qc = c.q[CLOUD].max(0.0);
    if p.inductive && qc > 0.0 {
        let [cr, _, cg] = c.corrections;
        // The droplets of the microphysics (one droplet size in the model).
        let m_drop = f.droplet_mass();
        let drops = rho * qc / m_drop; // m-3
        for (carrier, dist, q, correction) in [
            (Carrier::Graupel, &f.graupel, c.q[GRAUPEL], cg),
            (Carrier::Rain, &f.rain, c.q[RAIN], cr),
        ] {
            let mut r = 0.0;
            let on = carrier == Carrier::Graupel || p.inductive_rain;
            let powers = if on {
                dist.slope_powers(rho, q.max(0.0))
            } else {
                None
            };
            if let Some(s) = powers.filter(|s| s.lambda.is_finite()) {
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
/// Lane by lane ([`crate::physics::lanes`]) for groups of drops.
#[inline(always)]
pub fn rayleigh_limit<T: Lane>(r: T) -> T {
    let tension = crate::physics::constants::EPSILON_0 * SURFACE_TENSION;
    (r.powi(3) * tension).sqrt() * (8.0 * std::f64::consts::PI)
}

/// Smallest mixing ratio (kg kg-1) whose charge is shared over particles
/// ([`SharedCharge`]); at or below it a species counts as absent for the
/// per-particle diagnostics and limits (a modelling choice).
pub const SHARED_MIN: f64 = 1e-12;

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
    /// `rho` (kg m-3); `None` when the species is absent (q at or below
    /// [`SHARED_MIN`]).
    pub fn of(dist: &dsd::Exponential, rho: f64, q: f64, charge: f64) -> Option<Self> {
        if q <= SHARED_MIN {
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
        charge_at_diameter_of(self.density, self.lambda, self.n0, d)
    }

    /// Surface charge density (C m-2) of every particle: the charge of
    /// [`Self::at_diameter`] over the area pi D^2, density lambda^3/(2 pi N0),
    /// the same for every size (derived).
    pub fn surface_density(&self) -> f64 {
        surface_density_of(self.density, self.lambda, self.n0)
    }
}

/// [`SharedCharge::at_diameter`] lane by lane ([`crate::physics::lanes`]):
/// charge density `density` (C m-3), slope `lambda` (m-1), intercept `n0`
/// (m-4), diameter `d` (m).
#[inline(always)]
pub fn charge_at_diameter_of<T: Lane>(density: T, lambda: T, n0: f64, d: T) -> T {
    density * d * d * lambda.powi(3) / (2.0 * n0)
}

/// [`SharedCharge::surface_density`] lane by lane.
#[inline(always)]
pub fn surface_density_of<T: Lane>(density: T, lambda: T, n0: f64) -> T {
    density * lambda.powi(3) / (2.0 * std::f64::consts::PI * n0)
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
