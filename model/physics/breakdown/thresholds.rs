//! Threshold fields for breakdown and inception, each scaled with air density.
//!
//! All fields in V m-1; air density rho in kg m-3; delta = rho / rho0 with
//! rho0 = 1.2250 kg m-3 (U.S. Standard Atmosphere 1976 sea level). Scaling
//! with delta (i.e. with the neutral number density) is the similarity law of
//! gas discharges (Paschen scaling; e.g. Raizer 1991, Gas Discharge Physics,
//! ch. 4) and is how each source below states its threshold.

use super::avalanche::AvalancheParams;
use super::Criterion;
use crate::physics::atmosphere::relative_density;

/// Threshold parameters (SI), with the published defaults.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThresholdParams {
    /// Conventional breakdown field at sea-level density, E_k (V m-1).
    /// Default 3.0e6: AMS Glossary of Meteorology, "electrical breakdown"
    /// (about 3e6 V/m, decreasing about linearly with pressure).
    pub conventional: f64,
    /// Surface field enhancement by a hydrometeor (1). Default 3: a
    /// conducting sphere in a uniform field triples the field at its poles,
    /// E_s = 3 E0 cos(theta) (Jackson, Classical Electrodynamics, 3rd ed.,
    /// sec. 2.5; section number from memory). Elongated particles enhance more.
    pub enhancement: f64,
    /// Positive streamer propagation field at sea-level density (V m-1).
    /// Default 4.5e5: Allen & Ghaffar (1995), J. Phys. D 28; Griffiths &
    /// Phelps (1976), QJRMS 102 (as cited in secondary sources).
    pub positive_streamer: f64,
    /// Negative streamer propagation field at sea-level density (V m-1).
    /// Default 1.25e6: upper end of 7.5e5-1.25e6 in Raizer (1991), Gas
    /// Discharge Physics (as cited in secondary sources).
    pub negative_streamer: f64,
    /// Relativistic runaway electron avalanche threshold at sea-level
    /// density (V m-1). Default 2.84e5: Dwyer (2003), GRL 30, 2055 (from
    /// memory; secondary sources agree on about 280 kV/m).
    pub runaway: f64,
    /// Breakeven field per unit air density (V m-1 per kg m-3), E_be =
    /// 167 kV/m * rho_air: Marshall, McCarthy & Rust (1995), JGR 100 (from
    /// memory; 167 * 1.293 = 216 kV/m agrees with Gurevich et al. 1992).
    pub breakeven_coefficient: f64,
    /// Avalanche length parameters (Coleman & Dwyer 2006).
    pub avalanche: AvalancheParams,
    /// Laboratory corona-onset fields of drops and ice (Griffiths & Latham
    /// 1972, 1974): the hydrometeor_corona threshold, which depends on
    /// pressure rather than density.
    pub onset: crate::physics::initiation::hydrometeor::CoronaOnset,
}

impl Default for ThresholdParams {
    fn default() -> Self {
        ThresholdParams {
            conventional: 3.0e6,
            enhancement: 3.0,
            positive_streamer: 4.5e5,
            negative_streamer: 1.25e6,
            runaway: 2.84e5,
            breakeven_coefficient: 1.67e5,
            avalanche: AvalancheParams::default(),
            onset: Default::default(),
        }
    }
}

impl ThresholdParams {
    /// Threshold field (V m-1) of criterion `c` at air density `rho` (kg m-3)
    /// and pressure `p` (Pa). Avalanche multiplication uses the runaway
    /// threshold to delimit its stretches.
    pub fn threshold(&self, c: Criterion, rho: f64, p: f64) -> f64 {
        let delta = relative_density(rho);
        match c {
            Criterion::ConventionalBreakdown => self.conventional * delta,
            // Ambient field at which the enhanced surface field reaches E_k.
            Criterion::HydrometeorBreakdown => self.conventional * delta / self.enhancement,
            // The streamer zones of the hydrometeor-streamer and leader
            // criteria are where the positive-streamer field is exceeded.
            Criterion::PositiveStreamer
            | Criterion::HydrometeorStreamers
            | Criterion::StreamerLeader => self.positive_streamer * delta,
            // The ambient field at which an uncharged drop goes into corona.
            Criterion::HydrometeorCorona => self.onset.drop(p),
            Criterion::NegativeStreamer => self.negative_streamer * delta,
            Criterion::RunawayAvalanche | Criterion::AvalancheMultiplication => {
                self.runaway * delta
            }
            Criterion::RunawayBreakeven => self.breakeven_coefficient * rho,
        }
    }
}
