//! Parameterised discharges: trigger, bidirectional channel, charge
//! neutralisation, intracloud and ground flashes, flash records.
//!
//! The cores live here; the column adapter (`crate::column::discharge`)
//! runs them: after each Poisson solve, while the trigger criterion holds
//! (and the optional gates allow), a flash starts at the face where the trigger ratio
//! is largest ([`crate::physics::breakdown::CriterionStatus::face`]). Its channel grows
//! both ways ([`channel`]), charge in the channel is reduced
//! ([`neutralization`]), each carrier losing in proportion to its share of the
//! cell's charge of that sign (common practice), the field is solved again
//! and the flash is recorded ([`record`]). A channel whose lower end reaches
//! `ground_connection_height` becomes a ground flash; the net charge it
//! removes is booked as charge lowered to ground. Threshold-triggered,
//! bidirectional, charge-neutralising parameterisations of this family go
//! back to Rawlins (1982), Helsdon, Wu & Farley (1992), Ziegler & MacGorman
//! (1994), Solomon & Baker (1994, one-dimensional) and Mansell et al. (2002);
//! the rule here is our own combination, described in docs/discharge.md.

pub mod channel;
pub mod neutralization;
pub mod record;

use crate::physics::breakdown::Criterion;
use record::FlashRecord;

/// How the channel charge is reduced.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Neutralization {
    /// Remove this fraction of the excess.
    Fraction(f64),
    /// Bring the largest |E|/threshold in the channel to this fraction.
    TargetField(f64),
}

/// Discharge parameters resolved on the grid (SI).
#[derive(Debug, Clone, PartialEq)]
pub struct DischargeParams {
    pub enabled: bool,
    pub max_per_step: u32,
    /// Minimum time between flashes (s).
    pub min_interval: f64,
    /// Whether a step is split to start a flash when its trigger is reached.
    pub locate: bool,
    pub require_hydrometeor_breakdown: bool,
    /// Propagation field on faces (V m-1).
    pub propagation: Vec<f64>,
    /// Minimum charge density (C m-3) followed by channels and left in place.
    pub min_charge_density: f64,
    pub follow_charge: bool,
    pub neutralization: Neutralization,
    /// Ground connection height (m).
    pub ground_height: f64,
    /// Factor on the propagation field for the channel's negative end (1).
    pub negative_end_factor: f64,
    /// Time the trigger must hold before a flash starts (s).
    pub persistence: f64,
    /// Equipotential channel growth instead of the local-field rule.
    pub equipotential: bool,
    /// Potential margin of the equipotential rule's negative end (V).
    pub leader_margin: f64,
}

/// Index of the threshold profile a trigger is measured against (the
/// avalanche-count trigger uses the runaway threshold that bounds its stretches).
pub fn trigger_threshold(trigger: Criterion) -> usize {
    match trigger {
        Criterion::AvalancheMultiplication => Criterion::RunawayAvalanche.index(),
        c => c.index(),
    }
}

/// Flash bookkeeping carried in the state.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct FlashLedger {
    /// The flashes not yet handed to the output observers, in order. The run
    /// loop empties it after every output record, so memory does not grow
    /// with the number of flashes of a run.
    pub flashes: Vec<FlashRecord>,
    /// Flashes so far, including those already handed on.
    pub total: usize,
    /// Model times of the first and of the latest flash (s).
    pub first_time: Option<f64>,
    pub last_time: Option<f64>,
    /// Cumulative charge lowered to ground (C m-2), signed.
    pub ground_charge: f64,
    /// Cumulative flash counts by kind, in `FlashKind::ALL` order.
    pub counts: [u64; 3],
    /// Steps at which the per-step flash bound was reached with the trigger still met.
    pub bound_hits: u64,
    /// Model time of the first such step (s).
    pub first_bound_hit: Option<f64>,
    /// Flashes whose channel reached the model top: their length, their
    /// potential as a floating conductor and the charge they neutralise
    /// then depend on `grid.top`, not on the storm alone.
    pub at_model_top: u64,
}

impl FlashLedger {
    /// Books a flash.
    pub fn push(&mut self, rec: FlashRecord) {
        self.ground_charge += rec.charge_to_ground;
        self.counts[rec.kind.index()] += 1;
        self.total += 1;
        self.first_time.get_or_insert(rec.time);
        self.last_time = Some(rec.time);
        self.flashes.push(rec);
    }

    /// The position on the output's `flash` dimension of the first pending
    /// flash.
    pub fn first_pending(&self) -> usize {
        self.total - self.flashes.len()
    }

    /// The pending flashes an observer that has already taken the first
    /// `seen` flashes of the run has not taken yet (the run loop hands each
    /// flash on once, but the flashes pending at the last record are still
    /// held at the end of the run).
    pub fn unseen(&self, seen: usize) -> &[FlashRecord] {
        let skip = seen
            .saturating_sub(self.first_pending())
            .min(self.flashes.len());
        &self.flashes[skip..]
    }
}
