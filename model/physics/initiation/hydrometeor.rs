//! The field at the surface of the largest charged hydrometeors.
//!
//! A conducting sphere of radius r holding charge Q in a uniform ambient
//! field E has the surface field 3 E cos(theta) + Q/(4 pi eps0 r^2)
//! (superposition of the polarised sphere and its own charge; Jackson,
//! Classical Electrodynamics, sec. 2.5 and Gauss's law; analytic), largest
//! at the pole where the two add: f |E| + |Q|/(4 pi eps0 r^2), f = 3 for a
//! sphere (`breakdown.hydrometeor_enhancement`; elongated drops and ice
//! enhance more). The particle is the largest of its species in a cubic
//! metre of cloud (the diameter above which the exponential distribution
//! holds one particle per m3), holding the charge the surface-area sharing
//! of the species' charge density gives it
//! ([`crate::physics::charging::SharedCharge`]).
//!
//! Corona onset: falling drops go into corona at an ambient vertical field
//! of 9.0 +- 0.5 kV/cm at 1000 mb and 5.5 +- 1.0 kV/cm at 500 mb (Griffiths
//! & Latham 1972, J. Meteor. Soc. Japan 50, 416); taken linear in pressure
//! through those two points, and compared with the particle's surface field
//! over its enhancement (the laboratory fields are ambient fields around
//! drops, so the onset surface field is f times them). Ice particles a few
//! millimetres long give corona currents of 0.1 uA at about 4 kV/cm in
//! mid-cloud conditions, drastically reduced below about -18 degC (Griffiths
//! & Latham 1974, QJRMS 100, 163; Crabb & Latham 1974): the ice onset is
//! 4 kV/cm at 500 mb scaled with pressure like the drops', and colder than
//! -18 degC ice is taken not to go into corona (a modelling choice for
//! "drastically reduced").

use crate::physics::constants::EPSILON_0;
use crate::physics::lanes::Lane;

/// Corona-onset fields (ambient, V m-1) from the laboratory.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoronaOnset {
    /// Drops at 1000 hPa and 500 hPa (V m-1).
    pub drop_1000: f64,
    pub drop_500: f64,
    /// Ice at 500 hPa (V m-1).
    pub ice_500: f64,
    /// Temperature below which ice does not go into corona (degC).
    pub ice_cutoff: f64,
}

impl Default for CoronaOnset {
    fn default() -> Self {
        CoronaOnset {
            drop_1000: 9.0e5,
            drop_500: 5.5e5,
            ice_500: 4.0e5,
            ice_cutoff: -18.0,
        }
    }
}

impl CoronaOnset {
    /// Ambient onset field for drops (V m-1) at pressure `p` (Pa): linear in
    /// pressure through the two laboratory points, never below a tenth of
    /// the 500 hPa value (the line would reach zero near 140 hPa).
    pub fn drop(&self, p: f64) -> f64 {
        let slope = (self.drop_1000 - self.drop_500) / 5.0e4;
        (self.drop_500 + slope * (p - 5.0e4)).max(0.1 * self.drop_500)
    }

    /// Ambient onset field for ice (V m-1) at pressure `p` (Pa) and
    /// temperature `t` (degC); infinite below the cut-off temperature.
    pub fn ice(&self, p: f64, t: f64) -> f64 {
        if t < self.ice_cutoff {
            f64::INFINITY
        } else {
            self.ice_500 * self.drop(p) / self.drop_500
        }
    }
}

/// Whether an exponential distribution N0 exp(-lambda D) holds at least
/// one particle per m3 (N0/lambda > 1), so that its largest particle of
/// [`tail_diameter`] exists.
pub fn holds_a_particle(n0: f64, lambda: f64) -> bool {
    holds_a_particle_of(n0, lambda)
}

/// [`holds_a_particle`] lane by lane ([`crate::physics::lanes`]).
#[inline(always)]
pub fn holds_a_particle_of<T: Lane>(n0: f64, lambda: T) -> T::Mask {
    lambda.lt(T::splat(f64::INFINITY)) & (T::splat(n0) / lambda).gt(T::splat(1.0))
}

/// Diameter (m) of the largest particle per cubic metre of an exponential
/// distribution N0 exp(-lambda D): N(>D) = (N0/lambda) e^(-lambda D) = 1,
/// D = ln(N0/lambda)/lambda; `None` when the species has less than one
/// particle per m3.
pub fn tail_diameter(n0: f64, lambda: f64) -> Option<f64> {
    holds_a_particle(n0, lambda).then(|| tail_diameter_of(n0, lambda))
}

/// [`tail_diameter`] lane by lane, for lanes that hold a particle.
#[inline(always)]
pub fn tail_diameter_of<T: Lane>(n0: f64, lambda: T) -> T {
    (T::splat(n0) / lambda).ln() / lambda
}

/// Largest surface field (V m-1) of a conducting sphere with surface charge
/// density `sigma` (C m-2; a charge Q on radius r is Q/(4 pi r^2)) in the
/// ambient field `e` (V m-1), with the polarisation enhancement
/// `enhancement` (3 for a sphere): f |E| + |sigma|/eps0 (the module's
/// superposition). With the charge shared by surface area every particle
/// of a species has the same sigma
/// ([`crate::physics::charging::SharedCharge::surface_density`]), so the
/// largest particle's own part needs no diameter.
#[inline(always)]
pub fn surface_field_of_density<T: Lane>(e: T, sigma: T, enhancement: f64) -> T {
    e.abs() * enhancement + sigma.abs() / EPSILON_0
}

/// Largest surface charge density (C m-2) a particle can keep in the
/// ambient field `e` before its surface field reaches `enhancement` times
/// the ambient onset `onset`: eps0 f (onset - |E|), zero when the ambient
/// field alone reaches onset, infinite without onset.
#[inline(always)]
pub fn corona_limited_density<T: Lane>(e: T, enhancement: f64, onset: T) -> T {
    let inf = T::splat(f64::INFINITY);
    let limited = ((onset - e.abs()) * (EPSILON_0 * enhancement)).max(T::splat(0.0));
    T::select(onset.lt(inf), limited, inf)
}
