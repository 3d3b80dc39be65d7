//! The resolved run description: checks the relations between keys, builds the
//! grid, the base state and the time schedule, and inlines sounding files. No
//! physics runs before this has succeeded.

use crate::atmosphere::analytic::AnalyticProfile;
use crate::atmosphere::sounding::{self, Sounding};
use crate::atmosphere::{BaseSource, BaseState};
use crate::breakdown::avalanche::AvalancheParams;
use crate::breakdown::thresholds::ThresholdParams;
use crate::breakdown::Criteria;
use crate::charging::prescribed::PrescribedCharge;
use crate::config::{schema, Config, ProfileKind};
use crate::discharge::DischargeParams;
use crate::electrostatics::FieldSolver;
use crate::error::{ConfigError, ConfigIssue};
use crate::grid::Grid;
use std::path::Path;

/// Step counts derived from the time section.
#[derive(Debug, Clone, PartialEq)]
pub struct Schedule {
    /// Time step (s).
    pub dt: f64,
    /// Number of steps.
    pub steps: u64,
    /// Steps between output records.
    pub output_every: u64,
}

impl Schedule {
    /// Model time (s) after `step` steps; a product, not a running sum, so
    /// output times carry no accumulated rounding.
    pub fn time(&self, step: u64) -> f64 {
        step as f64 * self.dt
    }
}

/// Everything a run needs, validated.
#[derive(Debug, Clone)]
pub struct Experiment {
    /// The resolved configuration, stored in every output file.
    pub config: Config,
    pub grid: Grid,
    pub base: BaseState,
    pub schedule: Schedule,
    /// Prescribed charge layers on the grid.
    pub prescribed: PrescribedCharge,
    /// Poisson solver with its precomputed parts.
    pub field_solver: FieldSolver,
    /// Breakdown threshold profiles.
    pub criteria: Criteria,
    /// Discharge parameters on the grid.
    pub discharge: DischargeParams,
    /// The prescribed updraft.
    pub updraft: crate::kinematics::updraft::Updraft,
    /// The microphysics that runs.
    pub microphysics: crate::microphysics::Scheme,
    /// Bulk microphysics parameters: size distributions and fall laws (used
    /// for fall speeds in every mode) and the process coefficients.
    micro: crate::microphysics::params::MicroParams,
    /// Charging scheme and parameters.
    pub charging: crate::charging::ChargingParams,
    /// Per cell: base-state pressure and density with the factors of the
    /// microphysics that depend only on them (the base state is fixed).
    pub cell_env: Vec<crate::microphysics::rates::CellEnv>,
    /// The updraft's vertical shape factor on the faces (fixed in time).
    pub updraft_shape: Vec<f64>,
}

impl Experiment {
    /// Bulk microphysics parameters, including the size distributions and
    /// fall laws of the precipitating species.
    pub fn micro_params(&self) -> &crate::microphysics::params::MicroParams {
        &self.micro
    }
}

/// `a / b` as a whole number when it is one to within 1e-9 relative.
fn whole_ratio(a: f64, b: f64) -> Option<u64> {
    let r = a / b;
    let n = r.round();
    ((r - n).abs() <= 1e-9 * n.max(1.0) && n >= 1.0).then_some(n as u64)
}

fn issue_for(path: &str, value: f64, message: String) -> ConfigIssue {
    let spec = schema::find(path);
    ConfigIssue::new(path, message)
        .value(format!("{value}"))
        .unit(spec.map_or("", |s| s.unit))
}

impl Experiment {
    /// Resolves `config`; `base_dir` is where relative paths (sounding files) are looked up.
    pub fn new(mut config: Config, base_dir: &Path, origin: &str) -> Result<Self, ConfigError> {
        let err = |issue: ConfigIssue| ConfigError::single(origin, issue);

        // Grid.
        let g = &config.grid;
        let n = whole_ratio(g.top, g.spacing).ok_or_else(|| {
            err(issue_for(
                "grid.top",
                g.top,
                format!("must be a whole number of grid.spacing ({} m)", g.spacing),
            ))
        })?;
        if !(3..=100_000).contains(&n) {
            return Err(err(issue_for(
                "grid.spacing",
                g.spacing,
                format!("gives {n} cells; between 3 and 100000 are allowed"),
            )));
        }
        let grid = Grid::uniform(n as usize, g.spacing);

        // Time.
        let t = &config.time;
        let steps = whole_ratio(t.duration, t.step).ok_or_else(|| {
            err(issue_for(
                "time.duration",
                t.duration,
                format!("must be a whole number of time.step ({} s)", t.step),
            ))
        })?;
        if t.output_interval > t.duration {
            return Err(err(issue_for(
                "time.output_interval",
                t.output_interval,
                format!("exceeds time.duration ({} s)", t.duration),
            )));
        }
        let output_every = whole_ratio(t.output_interval, t.step).ok_or_else(|| {
            err(issue_for(
                "time.output_interval",
                t.output_interval,
                format!("must be a whole number of time.step ({} s)", t.step),
            ))
        })?;
        let schedule = Schedule {
            dt: t.step,
            steps,
            output_every,
        };

        // Base state.
        let source = match config.atmosphere.profile {
            ProfileKind::Standard1976 => BaseSource::Standard1976,
            ProfileKind::Analytic => {
                let a = &config.atmosphere.analytic;
                BaseSource::Analytic(AnalyticProfile {
                    surface_temperature: a.surface_temperature,
                    surface_pressure: a.surface_pressure,
                    surface_rh: a.surface_relative_humidity / 100.0,
                    tropopause_rh: a.tropopause_relative_humidity / 100.0,
                    lapse_rate: a.lapse_rate * 1e-3,
                    tropopause_height: a.tropopause_height,
                    stratosphere_lapse_rate: a.stratosphere_lapse_rate * 1e-3,
                })
            }
            ProfileKind::Sounding => resolve_sounding(&mut config, base_dir, grid.top(), origin)?,
        };
        let base = BaseState::build(&grid, &source).map_err(|why| {
            let key = match config.atmosphere.profile {
                ProfileKind::Standard1976 => "grid.top",
                ProfileKind::Analytic => "atmosphere.analytic",
                ProfileKind::Sounding => "atmosphere.sounding.rows",
            };
            err(ConfigIssue::new(key, why))
        })?;
        let prescribed =
            PrescribedCharge::new(&config.prescribed_charge.layers, &grid).map_err(err)?;
        let field_solver = FieldSolver::new(&grid, &config.electrostatics);
        let b = &config.breakdown;
        let params = ThresholdParams {
            conventional: b.conventional_field,
            enhancement: b.hydrometeor_enhancement,
            positive_streamer: b.positive_streamer_field,
            negative_streamer: b.negative_streamer_field,
            runaway: b.runaway_field,
            breakeven_coefficient: b.breakeven_coefficient,
            avalanche: AvalancheParams {
                energy_scale: b.avalanche_energy_scale,
                friction_field: b.avalanche_friction_field,
            },
        };
        let criteria = Criteria::new(
            &params,
            &base.face.density,
            b.avalanche_required_efolds,
            b.trigger,
        );
        let discharge = DischargeParams::new(&config.discharge, &criteria, &base.face.density);
        let updraft = crate::experiment_physics::updraft(&config.updraft).map_err(err)?;
        let microphysics =
            crate::experiment_physics::scheme(&config.microphysics, &config.hydrometeors.layers)
                .map_err(err)?;
        let micro = crate::experiment_physics::micro_params(&config.microphysics);
        let charging = crate::experiment_physics::charging(&config.charging).map_err(err)?;
        let cell_env = (0..grid.len())
            .map(|k| {
                crate::microphysics::rates::CellEnv::new(
                    base.centre.pressure[k],
                    base.centre.density[k],
                    &micro,
                )
            })
            .collect();
        let updraft_shape = updraft.shape_factors(&grid.z_face);
        Ok(Experiment {
            config,
            grid,
            base,
            schedule,
            prescribed,
            field_solver,
            criteria,
            discharge,
            updraft,
            microphysics,
            micro,
            charging,
            cell_env,
            updraft_shape,
        })
    }

    /// Parses, overrides and resolves in one call.
    pub fn from_text(
        text: &str,
        origin: &str,
        overrides: &[String],
        base_dir: &Path,
    ) -> Result<Self, ConfigError> {
        let config = crate::config::parse_with_overrides(text, origin, overrides)?;
        Experiment::new(config, base_dir, origin)
    }
}

/// Reads the sounding (inline or from CSV), validates it, and rewrites the
/// configuration so the rows are inline and the file key is gone.
fn resolve_sounding(
    config: &mut Config,
    base_dir: &Path,
    top: f64,
    origin: &str,
) -> Result<BaseSource, ConfigError> {
    let s = &mut config.atmosphere.sounding;
    let many = |issues: Vec<ConfigIssue>| ConfigError {
        origin: origin.to_string(),
        issues,
    };
    let one = |issue: ConfigIssue| many(vec![issue]);
    let (columns, rows, key) = match (&s.file, &s.rows) {
        (Some(_), Some(_)) => {
            return Err(one(ConfigIssue::new(
                "atmosphere.sounding.file",
                "give either `file` or `rows`, not both",
            )))
        }
        (Some(file), None) => {
            if s.columns.is_some() {
                return Err(one(ConfigIssue::new(
                    "atmosphere.sounding.columns",
                    "with `file`, the CSV header names the columns; remove `columns`",
                )));
            }
            let path = base_dir.join(file);
            let (c, r) = sounding::read_csv(&path, "atmosphere.sounding.file").map_err(one)?;
            (c, r, "atmosphere.sounding.file")
        }
        (None, Some(rows)) => {
            let columns = s.columns.clone().ok_or_else(|| {
                one(ConfigIssue::new(
                    "atmosphere.sounding.columns",
                    "inline `rows` need `columns` naming them",
                ))
            })?;
            (columns, rows.clone(), "atmosphere.sounding.rows")
        }
        (None, None) => {
            return Err(one(ConfigIssue::new(
                "atmosphere.sounding",
                "atmosphere.profile = \"sounding\" needs `rows` (with `columns`) or `file`",
            )))
        }
    };
    let sounding = Sounding::from_table(&columns, &rows, key).map_err(many)?;
    sounding.check_span(top, key).map_err(one)?;
    let surface_pressure = match (sounding.surface_pressure_from_table, s.surface_pressure) {
        (Some(_), Some(p)) => {
            return Err(one(ConfigIssue::new(
                "atmosphere.sounding.surface_pressure",
                "a pressure sounding's first level is the ground; remove surface_pressure",
            )
            .value(format!("{p}"))
            .unit("Pa")))
        }
        (Some(p), None) | (None, Some(p)) => p,
        (None, None) => {
            return Err(one(ConfigIssue::new(
                "atmosphere.sounding.surface_pressure",
                "a height sounding needs the pressure at the ground",
            )
            .unit("Pa")
            .allowed(
                schema::find("atmosphere.sounding.surface_pressure")
                    .map_or(String::new(), |k| k.kind.allowed()),
            )))
        }
    };
    s.file = None;
    s.columns = Some(columns);
    s.rows = Some(rows);
    Ok(BaseSource::Sounding {
        sounding,
        surface_pressure,
    })
}
