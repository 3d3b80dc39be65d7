//! Breakdown and inception criteria.
//!
//! Each criterion is a threshold profile of the vertical field on the grid's
//! faces, computed once from the base-state air density (thresholds scale
//! with the relative air density delta = rho_air/rho_air0, rho_air0 =
//! 1.2250 kg m-3 of the U.S. Standard Atmosphere 1976), and evaluated on the
//! current field every step: the largest |E|/threshold and where it occurs.
//! The avalanche-multiplication criterion instead reports the largest number
//! of runaway avalanche e-foldings over a contiguous stretch above the
//! runaway threshold.
//!
//! Caveats (docs/criteria.md): one-dimensional fields overestimate real
//! fields; exceeding a runaway threshold is necessary but not sufficient for
//! lightning initiation (Stolzenburg et al. 2007, GRL 34).

pub mod avalanche;
pub mod thresholds;

named_choice! {
    /// One breakdown or inception criterion. Its name is the configuration
    /// value of `breakdown.trigger` and the suffix of its output variables.
    pub enum Criterion {
        ConventionalBreakdown = "conventional_breakdown",
        HydrometeorBreakdown = "hydrometeor_breakdown",
        PositiveStreamer = "positive_streamer",
        NegativeStreamer = "negative_streamer",
        RunawayAvalanche = "runaway_avalanche",
        RunawayBreakeven = "runaway_breakeven",
        AvalancheMultiplication = "avalanche_multiplication",
        HydrometeorCorona = "hydrometeor_corona",
        HydrometeorStreamers = "hydrometeor_streamers",
        StreamerLeader = "streamer_leader",
    }
}

impl Criterion {
    /// Long description for output metadata.
    pub fn description(self) -> &'static str {
        match self {
            Criterion::ConventionalBreakdown => "conventional breakdown of air",
            Criterion::HydrometeorBreakdown => {
                "conventional breakdown at a hydrometeor surface (enhanced field)"
            }
            Criterion::PositiveStreamer => "positive streamer propagation",
            Criterion::NegativeStreamer => "negative streamer propagation",
            Criterion::RunawayAvalanche => "relativistic runaway electron avalanches",
            Criterion::RunawayBreakeven => "runaway breakeven of energetic electrons",
            Criterion::AvalancheMultiplication => {
                "relativistic runaway avalanche gain as a feedback proxy (e-folding count over the required count)"
            }
            Criterion::HydrometeorCorona => {
                "corona at the largest charged, polarised hydrometeors (surface field over onset)"
            }
            Criterion::HydrometeorStreamers => {
                "positive streamers from corona-active hydrometeors (zone depth over the required depth)"
            }
            Criterion::StreamerLeader => {
                "streamer-zone-to-leader transition (zone charge over the stem charge)"
            }
        }
    }
}

/// How close the field is to one criterion.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct CriterionStatus {
    /// Largest |E|/threshold over the column (1), or for avalanche
    /// multiplication the largest e-folding count (1).
    pub ratio: f64,
    /// Height of that maximum (m; the middle of the stretch for avalanche
    /// multiplication); NaN when the field is zero everywhere.
    pub height: f64,
    /// Whether the criterion holds (ratio >= 1, or count >= the required count).
    pub met: bool,
    /// Face index of that maximum (the face nearest the middle of the
    /// stretch for avalanche multiplication); 0 when the field is zero.
    pub face: usize,
}

/// Threshold profiles on faces (V m-1), one per criterion, and the
/// parameters of the criteria that are not a threshold alone, computed once
/// per experiment.
#[derive(Debug, Clone, PartialEq)]
pub struct Criteria {
    /// For the hydrometeor criteria the ambient field at which an uncharged
    /// sphere reaches corona onset (hydrometeor_corona) or the
    /// positive-streamer field (streamers, leader); for the avalanche count
    /// the runaway threshold that bounds its stretches.
    pub thresholds: [Vec<f64>; Criterion::COUNT],
    pub growth: crate::physics::initiation::runaway::Growth,
    pub required_efolds: f64,
    /// Depth of streamer zone that counts as streamers from hydrometeors (m).
    pub streamer_depth: f64,
    /// Charge through a common stem that heats a leader (C).
    pub stem_charge: f64,
    /// Corona-onset fields of drops and ice.
    pub onset: crate::physics::initiation::hydrometeor::CoronaOnset,
    /// Field enhancement at a hydrometeor's surface (1).
    pub enhancement: f64,
    pub trigger: Criterion,
}

/// What the criteria need besides the field, per step.
pub struct Extras<'a> {
    /// Largest surface field over the corona-onset surface field of the
    /// hydrometeors of each cell (1; 0 without particles).
    pub corona: &'a [f64],
    /// Seed flux of energetic electrons on faces (m-2 s-1).
    pub seed: &'a [f64],
}

impl Criteria {
    /// How far `status` of criterion `c` is from holding, as a fraction of
    /// what it needs (1): ratio - 1, or for avalanche multiplication the
    /// e-folding count over the required count, less 1. Negative while the
    /// criterion does not hold, zero where it starts to; continuous in the
    /// field, so a flash's start can be placed inside a step
    /// (`column::step`).
    pub fn margin(&self, c: Criterion, status: &CriterionStatus) -> f64 {
        match c {
            Criterion::AvalancheMultiplication => status.ratio / self.required_efolds - 1.0,
            _ => status.ratio - 1.0,
        }
    }

    /// Threshold profiles from the face air densities (kg m-3) and
    /// pressures (Pa).
    pub fn new(
        params: &thresholds::ThresholdParams,
        face_density: &[f64],
        face_pressure: &[f64],
        rules: &Rules,
        trigger: Criterion,
    ) -> Self {
        let thresholds = Criterion::ALL.map(|c| {
            face_density
                .iter()
                .zip(face_pressure)
                .map(|(&rho, &p)| params.threshold(c, rho, p))
                .collect()
        });
        Criteria {
            thresholds,
            growth: crate::physics::initiation::runaway::Growth {
                energy_scale: params.avalanche.energy_scale,
                friction_field: params.avalanche.friction_field,
                threshold: params.runaway,
                fit_floor: rules.fit_floor,
            },
            required_efolds: rules.required_efolds,
            streamer_depth: rules.streamer_depth,
            stem_charge: rules.stem_charge,
            onset: params.onset,
            enhancement: params.enhancement,
            trigger,
        }
    }

    /// Evaluates every criterion on the face field `e` (V m-1) at heights
    /// `z_face` (m), with the hydrometeor and seed inputs of `extras`; also
    /// returns the strongest runaway avalanche.
    pub fn evaluate(
        &self,
        e: &[f64],
        z_face: &[f64],
        face_density: &[f64],
        extras: &Extras,
    ) -> (
        [CriterionStatus; Criterion::COUNT],
        crate::physics::initiation::runaway::Avalanche,
    ) {
        use crate::physics::initiation::{leader, runaway};
        let aval = runaway::avalanches(e, z_face, face_density, extras.seed, &self.growth);
        let n_cells = extras.corona.len();
        // A face is corona-active when a neighbouring cell is.
        let active = |k: usize| {
            (k > 0 && extras.corona[k - 1] >= 1.0) || (k < n_cells && extras.corona[k] >= 1.0)
        };
        let streamer = &self.thresholds[Criterion::PositiveStreamer.index()];
        let status = Criterion::ALL.map(|c| match c {
            Criterion::AvalancheMultiplication => CriterionStatus {
                ratio: aval.efolds,
                height: aval.height,
                met: aval.efolds >= self.required_efolds,
                face: aval.face,
            },
            Criterion::HydrometeorCorona => {
                let mut best = CriterionStatus {
                    height: f64::NAN,
                    ..CriterionStatus::default()
                };
                for (k, &r) in extras.corona.iter().enumerate() {
                    if r > best.ratio {
                        // The cell's stronger face starts the discharge.
                        let face = if e[k].abs() >= e[k + 1].abs() {
                            k
                        } else {
                            k + 1
                        };
                        best = CriterionStatus {
                            ratio: r,
                            height: z_face[face],
                            met: r >= 1.0,
                            face,
                        };
                    }
                }
                best
            }
            Criterion::HydrometeorStreamers | Criterion::StreamerLeader => {
                let needs_corona = c == Criterion::HydrometeorStreamers;
                let accept = |a: usize, b: usize| !needs_corona || (a..=b).any(active);
                let (length, face) = leader::longest_zone(e, streamer, z_face, &accept);
                let ratio = if needs_corona {
                    length / self.streamer_depth
                } else {
                    leader::zone_charge(length, streamer[face]) / self.stem_charge
                };
                CriterionStatus {
                    ratio,
                    height: if length > 0.0 { z_face[face] } else { f64::NAN },
                    met: ratio >= 1.0,
                    face,
                }
            }
            _ => {
                let thr = &self.thresholds[c.index()];
                let mut best = CriterionStatus {
                    ratio: 0.0,
                    height: f64::NAN,
                    met: false,
                    face: 0,
                };
                for k in 0..e.len() {
                    let r = e[k].abs() / thr[k];
                    if r > best.ratio {
                        best.ratio = r;
                        best.height = z_face[k];
                        best.face = k;
                    }
                }
                best.met = best.ratio >= 1.0;
                best
            }
        });
        (status, aval)
    }
}

/// The parameters of the criteria that are not a threshold alone.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rules {
    pub fit_floor: f64,
    pub required_efolds: f64,
    pub streamer_depth: f64,
    pub stem_charge: f64,
}
