//! The resolved run description: checks the relations between keys, builds the
//! grid, the base state and the time schedule, and inlines sounding files. No
//! physics runs before this has succeeded.

use crate::error::{ConfigError, ConfigIssue};
use crate::grid::Grid;
use crate::physics::atmosphere::analytic::AnalyticProfile;
use crate::physics::atmosphere::{BaseSource, BaseState};
use crate::physics::breakdown::Criteria;
use crate::physics::charging::prescribed::PrescribedCharge;
use crate::physics::charging::ChargingParams;
use crate::physics::discharge::DischargeParams;
use crate::physics::electrostatics::FieldSolver;
use crate::physics::kinematics::updraft::Updraft;
use crate::physics::microphysics::params::MicroParams;
use crate::physics::microphysics::prescribed::PrescribedHydrometeors;
use crate::physics::microphysics::rates::CellEnv;
use crate::physics::microphysics::Mode;
use crate::setup::config::{schema, Config, ProfileKind};
use crate::setup::{resolve, sounding_input};
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
    /// Breakdown threshold profiles and the trigger.
    pub criteria_thresholds: Criteria,
    /// Discharge parameters on the grid.
    pub discharge_params: DischargeParams,
    /// The prescribed updraft.
    pub updraft: Updraft,
    /// The microphysics that runs.
    pub microphysics: Mode,
    /// The imposed hydrometeor layers (empty unless the mode is prescribed).
    pub prescribed_hydrometeors: PrescribedHydrometeors,
    /// Bulk microphysics parameters: size distributions and fall laws (used
    /// for fall speeds in every mode) and the process coefficients.
    micro: MicroParams,
    /// Charging scheme and parameters.
    pub charging_params: ChargingParams,
    /// Per cell: base-state pressure and density with the factors of the
    /// microphysics that depend only on them (the base state is fixed).
    pub cell_env: Vec<CellEnv>,
    /// Turbulent fractional entrainment rate epsilon = coefficient / radius
    /// (m-1); zero when the column is closed (`column.entrainment = "off"`).
    pub entrainment_rate: f64,
    /// Air mass per area of each cell, rho dz (kg m-2).
    pub cell_mass: Vec<f64>,
    /// 1/rho of each cell (m3 kg-1): `cell_env[k].inv_rho` in one
    /// contiguous array, for the passes over the column that turn amounts
    /// per volume into amounts per mass (the same values, so the same bits).
    pub inv_density: Vec<f64>,
    /// Files the configuration made the run read (a sounding CSV): an
    /// output may not overwrite them.
    pub input_files: Vec<std::path::PathBuf>,
    /// The updraft's vertical shape factor on the faces (fixed in time).
    pub updraft_shape: Vec<f64>,
    /// Small ions: production, losses and mobilities per cell.
    pub ions: crate::physics::ions::IonColumn,
}

impl Experiment {
    /// Bulk microphysics parameters, including the size distributions and
    /// fall laws of the precipitating species.
    pub fn micro_params(&self) -> &MicroParams {
        &self.micro
    }
}

/// Most steps a run may take: 1e8 steps of the demo column would take
/// about a day on one core (docs/performance.md); a larger count is a
/// mistake in the time section, not an experiment.
pub const MAX_STEPS: u64 = 100_000_000;

/// `a / b` as a whole number when it is one to within 1e-9 relative.
fn whole_ratio(a: f64, b: f64) -> Option<u64> {
    let r = a / b;
    let n = r.round();
    ((r - n).abs() <= 1e-9 * n.max(1.0) && n >= 1.0).then_some(n as u64)
}

fn issue_for(path: &str, value: f64, message: String) -> ConfigIssue {
    let spec = schema::find(path);
    ConfigIssue::new(path, message)
        .value(crate::error::shown_number(value))
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
        if !(3..=80_000).contains(&n) {
            return Err(err(issue_for(
                "grid.spacing",
                g.spacing,
                format!("gives {n} cells; between 3 and 80000 are allowed"),
            )));
        }
        let grid = Grid::uniform(n as usize, g.spacing);

        // Time.
        let t = &config.time;
        // Checked on the ratio itself: a count past u64 would be cast to
        // u64::MAX and reported as that.
        let ratio = t.duration / t.step;
        if ratio > MAX_STEPS as f64 + 0.5 {
            return Err(err(issue_for(
                "time.step",
                t.step,
                format!(
                    "gives {} steps for time.duration = {} s; at most {MAX_STEPS} are allowed (lengthen the step or shorten the run)",
                    crate::error::shown_number(ratio.round()),
                    t.duration
                ),
            )));
        }
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
        let mut input_files = Vec::new();
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
            ProfileKind::Sounding => sounding_input::resolve(
                &mut config,
                base_dir,
                grid.top(),
                origin,
                &mut input_files,
            )?,
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
            resolve::prescribed_charge(&config.prescribed_charge.layers, &grid).map_err(err)?;
        let field_solver =
            resolve::field_solver(&grid, &config.electrostatics, config.column.radius);
        let criteria_thresholds = resolve::criteria(&config.breakdown, &base.face);
        let discharge_params = resolve::discharge(
            &config.discharge,
            &criteria_thresholds,
            &base.face.density,
            config.breakdown.persistence_time,
        );
        let updraft = resolve::updraft(&config.updraft).map_err(err)?;
        let microphysics = config.microphysics.scheme;
        let prescribed_hydrometeors = if microphysics == Mode::Prescribed {
            resolve::prescribed_hydrometeors(&config.hydrometeors.layers).map_err(err)?
        } else {
            PrescribedHydrometeors::default()
        };
        let micro = resolve::micro_params(&config.microphysics);
        let charging_params =
            resolve::charging(&mut config.charging, base_dir, &mut input_files).map_err(err)?;
        let cell_env: Vec<CellEnv> = (0..grid.len())
            .map(|k| CellEnv::new(base.centre.pressure[k], base.centre.density[k], &micro))
            .collect();
        let inv_density = cell_env.iter().map(|c| c.inv_rho).collect();
        let updraft_shape = updraft.shape_factors(&grid.z_face);
        let entrainment_rate = resolve::entrainment_rate(&config.column);
        let cell_mass = base.centre.density.iter().map(|r| r * grid.dz).collect();
        let ions = resolve::ions(&config.ions, &grid.z, &base.centre).map_err(err)?;
        Ok(Experiment {
            config,
            grid,
            base,
            schedule,
            prescribed,
            field_solver,
            criteria_thresholds,
            discharge_params,
            updraft,
            microphysics,
            prescribed_hydrometeors,
            micro,
            charging_params,
            cell_env,
            entrainment_rate,
            cell_mass,
            inv_density,
            input_files,
            updraft_shape,
            ions,
        })
    }

    /// Parses, overrides and resolves in one call.
    pub fn from_text(
        text: &str,
        origin: &str,
        overrides: &[String],
        base_dir: &Path,
    ) -> Result<Self, ConfigError> {
        Experiment::from_config_text(
            &crate::setup::config::ConfigText::plain(text),
            origin,
            overrides,
            base_dir,
        )
    }

    /// [`Experiment::from_text`] on a text that may be merged from several
    /// files (`include`), whose errors then name the file that holds a key.
    pub fn from_config_text(
        source: &crate::setup::config::ConfigText,
        origin: &str,
        overrides: &[String],
        base_dir: &Path,
    ) -> Result<Self, ConfigError> {
        let config = crate::setup::config::parse_config_text(source, origin, overrides)?;
        // Set-up checks name keys; the text gives their lines.
        Experiment::new(config, base_dir, origin)
            .map_err(|e| crate::setup::config::load::with_lines(e, source, overrides))
    }
}
