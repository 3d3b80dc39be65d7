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
            Criterion::RunawayAvalanche => "relativistic runaway electron avalanche threshold",
            Criterion::RunawayBreakeven => "runaway breakeven field",
            Criterion::AvalancheMultiplication => {
                "relativistic runaway avalanche multiplication (e-folding count)"
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

/// Threshold profiles on faces (V m-1), one per criterion, and the avalanche
/// parameters, computed once per experiment.
#[derive(Debug, Clone, PartialEq)]
pub struct Criteria {
    pub thresholds: [Vec<f64>; Criterion::COUNT],
    pub avalanche: avalanche::AvalancheParams,
    pub required_efolds: f64,
    pub trigger: Criterion,
}

impl Criteria {
    /// Threshold profiles from the face air densities (kg m-3).
    pub fn new(
        params: &thresholds::ThresholdParams,
        face_density: &[f64],
        required_efolds: f64,
        trigger: Criterion,
    ) -> Self {
        let thresholds = Criterion::ALL.map(|c| {
            face_density
                .iter()
                .map(|&rho| params.threshold(c, rho))
                .collect()
        });
        Criteria {
            thresholds,
            avalanche: params.avalanche,
            required_efolds,
            trigger,
        }
    }

    /// Evaluates every criterion on the face field `e` (V m-1) at heights `z_face` (m).
    pub fn evaluate(
        &self,
        e: &[f64],
        z_face: &[f64],
        face_density: &[f64],
    ) -> [CriterionStatus; Criterion::COUNT] {
        Criterion::ALL.map(|c| match c {
            Criterion::AvalancheMultiplication => {
                let (count, height) = avalanche::max_efoldings(
                    e,
                    z_face,
                    face_density,
                    &self.thresholds[Criterion::RunawayAvalanche.index()],
                    &self.avalanche,
                );
                let dz = z_face[1] - z_face[0];
                let face = if height.is_finite() {
                    ((height - z_face[0]) / dz).round() as usize
                } else {
                    0
                };
                CriterionStatus {
                    ratio: count,
                    height,
                    met: count >= self.required_efolds,
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
        })
    }
}
