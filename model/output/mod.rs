//! Output as observers. The NetCDF writer is one implementation, the in-memory
//! recorder used by tests another. Every output variable (name, CF standard
//! name, units, long name, dimensions, how to fill it) is registered in one
//! place, [`variables`].

pub mod csv;
pub mod memory;
pub mod netcdf_writer;
pub mod reader;
pub mod summary;

use crate::column::state::State;
use crate::error::RunError;
use crate::output::summary::RunSummary;
use crate::physics::breakdown::Criterion;
use crate::physics::carriers::Carrier;
use crate::physics::discharge::record::{FlashKind, FlashRecord};
use crate::physics::microphysics::species::Species;
use crate::setup::experiment::Experiment;
use std::path::{Path, PathBuf};

/// Receives the state at output times.
pub trait Observer {
    /// Called once before the first record (nothing by default).
    fn begin(&mut self, _exp: &Experiment) -> Result<(), RunError> {
        Ok(())
    }
    /// Called at t = 0 and every output interval.
    fn record(&mut self, exp: &Experiment, state: &State) -> Result<(), RunError>;
    /// Called on the initial state (after `begin`, before its record),
    /// after every step, before any record of that step, and also where
    /// the field peaks inside a step: just before a flash starts and
    /// at the end of each piece of a step split to place one
    /// (`column::step::step_observed`). Most observers need only the
    /// records; one that looks for an extremum in time (the convergence
    /// study's largest charge separation) needs these, since records sample
    /// a flashing storm's sawtooth at an arbitrary phase.
    fn stepped(&mut self, _exp: &Experiment, _state: &State) {}
    /// Called once after a successful run with the final state (which may
    /// hold flashes after the last output record; nothing by default).
    fn finish(
        &mut self,
        _exp: &Experiment,
        _state: &State,
        _summary: &RunSummary,
    ) -> Result<(), RunError> {
        Ok(())
    }
}

/// Dimensions of an output variable.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Placement {
    /// (time, z): cell centres.
    Centre,
    /// (time, z_face): cell faces.
    Face,
    /// (time): one value per record.
    Series,
    /// (z_face), written once: time-independent profiles.
    StaticFace,
}

/// Fills one record of a variable.
pub type Fill = Box<dyn Fn(&Experiment, &State, &mut [f64]) + Send + Sync>;

/// One output variable.
pub struct OutputVar {
    pub name: String,
    /// CF standard name, when the CF table has one.
    pub standard_name: Option<&'static str>,
    pub long_name: String,
    /// UDUNITS units.
    pub units: &'static str,
    pub placement: Placement,
    /// Extra explanation written as the `comment` attribute (may be empty).
    pub comment: &'static str,
    /// Whether the variable may hold NaN for "no value" (written with the
    /// CF `_FillValue` NaN so readers treat it as missing).
    pub may_be_missing: bool,
    /// Writes the values into `out` (length by placement).
    pub fill: Fill,
}

impl OutputVar {
    fn new(
        name: impl Into<String>,
        long_name: impl Into<String>,
        units: &'static str,
        placement: Placement,
        fill: Fill,
    ) -> Self {
        OutputVar {
            name: name.into(),
            standard_name: None,
            may_be_missing: false,
            long_name: long_name.into(),
            units,
            placement,
            comment: "",
            fill,
        }
    }

    fn standard(mut self, sn: &'static str) -> Self {
        self.standard_name = Some(sn);
        self
    }

    fn comment(mut self, c: &'static str) -> Self {
        self.comment = c;
        self
    }

    /// Marks the variable as holding NaN where it has no value.
    fn missing(mut self) -> Self {
        self.may_be_missing = true;
        self
    }

    /// Whether the variable has no time dimension (written once).
    pub fn is_static(&self) -> bool {
        self.placement == Placement::StaticFace
    }
}

/// Number of values a variable holds per record.
pub fn record_len(exp: &Experiment, var: &OutputVar) -> usize {
    match var.placement {
        Placement::Centre => exp.grid.len(),
        Placement::Face | Placement::StaticFace => exp.grid.len() + 1,
        Placement::Series => 1,
    }
}

/// The profile and series variables this experiment writes: those
/// `output.variables` names, in file order, or all of them without the key.
/// The name of a flash variable is accepted (the flash records are always
/// written, as are the coordinates); any other name the experiment does not
/// write, or a name given twice, is an error naming the key, the name and
/// the names allowed.
pub fn selected_variables(exp: &Experiment) -> Result<Vec<OutputVar>, crate::error::ConfigIssue> {
    let all = variables(exp);
    let Some(chosen) = &exp.config.output.variables else {
        return Ok(all);
    };
    let flashes = flash_variables(exp);
    for (i, name) in chosen.iter().enumerate() {
        if chosen[..i].contains(name) {
            return Err(crate::error::ConfigIssue::new(
                "output.variables",
                "names a variable twice",
            )
            .value(format!("\"{name}\"")));
        }
        let known = all.iter().any(|v| &v.name == name) || flashes.iter().any(|v| &v.name == name);
        if !known {
            let names: Vec<&str> = all.iter().map(|v| v.name.as_str()).collect();
            return Err(crate::error::ConfigIssue::new(
                "output.variables",
                "names no variable this configuration writes (the coordinates and the flash records are always written)",
            )
            .value(format!("\"{name}\""))
            .allowed(names.join(", ")));
        }
    }
    Ok(all
        .into_iter()
        .filter(|v| chosen.contains(&v.name))
        .collect())
}

/// [`selected_variables`]'s check as a configuration error that names the
/// file and line setting `output.variables` (`source`, `overrides` and
/// `origin` as the configuration was read).
pub fn check_selection(
    exp: &Experiment,
    source: &crate::setup::config::ConfigText,
    overrides: &[String],
    origin: &str,
) -> Result<(), crate::error::ConfigError> {
    match selected_variables(exp) {
        Ok(_) => Ok(()),
        Err(mut issue) => {
            let (file, line) =
                crate::setup::config::load::locate_key(source, "output.variables", overrides);
            issue.file = file;
            issue.line = line;
            Err(crate::error::ConfigError::single(origin, issue))
        }
    }
}

/// Every output variable for this experiment, in file order.
pub fn variables(exp: &Experiment) -> Vec<OutputVar> {
    use Placement::*;
    let mut v = vec![
        OutputVar::new(
            "air_pressure",
            "air pressure (hydrostatic base state)",
            "Pa",
            Centre,
            Box::new(|e, _, o| o.copy_from_slice(&e.base.centre.pressure)),
        )
        .standard("air_pressure"),
        OutputVar::new(
            "air_temperature",
            "air temperature",
            "K",
            Centre,
            Box::new(|e, s, o| {
                for (k, x) in o.iter_mut().enumerate() {
                    *x = s.temperature(e, k);
                }
            }),
        )
        .standard("air_temperature"),
        OutputVar::new(
            "air_density",
            "moist air density (base state)",
            "kg m-3",
            Centre,
            Box::new(|e, _, o| o.copy_from_slice(&e.base.centre.density)),
        )
        .standard("air_density"),
        OutputVar::new(
            "air_potential_temperature",
            "dry potential temperature referred to 1000 hPa",
            "K",
            Centre,
            Box::new(|_, s, o| o.copy_from_slice(&s.potential_temperature)),
        )
        .standard("air_potential_temperature"),
        OutputVar::new(
            "charge_density",
            "total electric charge density (sum over carriers)",
            "C m-3",
            Centre,
            Box::new(|_, s, o| o.copy_from_slice(&s.charge_total)),
        ),
    ];
    v.push(
        OutputVar::new(
            "upward_air_velocity",
            "prescribed vertical air velocity",
            "m s-1",
            Face,
            Box::new(|_, s, o| o.copy_from_slice(&s.w)),
        )
        .standard("upward_air_velocity"),
    );
    for sp in Species::ALL {
        let standard = match sp {
            Species::Vapour => Some("humidity_mixing_ratio"),
            Species::Cloud => Some("cloud_liquid_water_mixing_ratio"),
            Species::Ice => Some("cloud_ice_mixing_ratio"),
            _ => None,
        };
        let mut var = OutputVar::new(
            format!("q_{}", sp.name()),
            format!("{} mixing ratio", sp.long_name()),
            "kg kg-1",
            Centre,
            Box::new(move |_, s, o| o.copy_from_slice(&s.q[sp.index()])),
        );
        var.standard_name = standard;
        v.push(var);
    }
    v.push(OutputVar::new(
        "n_ice",
        "number of cloud-ice crystals per kg of air",
        "kg-1",
        Centre,
        Box::new(|_, s, o| o.copy_from_slice(&s.n_ice)),
    ));
    for (ice, name, long) in [
        (
            false,
            "relative_humidity",
            "relative humidity over liquid water",
        ),
        (true, "relative_humidity_ice", "relative humidity over ice"),
    ] {
        // Percent, as the configuration's humidities are given.
        let mut var = OutputVar::new(
            name,
            long,
            "%",
            Centre,
            Box::new(move |e, s, o| {
                for (k, x) in o.iter_mut().enumerate() {
                    let p = e.base.centre.pressure[k];
                    let t = s.temperature(e, k);
                    let (qsw, qsi) = crate::physics::microphysics::rates::saturation_ratios(t, p);
                    // Ratio of vapour pressures e/e_s from the mixing ratios.
                    let e = crate::physics::microphysics::rates::vapour_pressure(
                        s.q[Species::Vapour.index()][k],
                        p,
                    );
                    let es = |qs: f64| qs * p / (crate::physics::constants::EPSILON + qs);
                    *x = 100.0 * e / es(if ice { qsi } else { qsw });
                }
            }),
        );
        if !ice {
            var.standard_name = Some("relative_humidity");
        }
        v.push(var);
    }
    for (i, sp) in Species::FALLING.iter().enumerate() {
        v.push(
            OutputVar::new(
                format!("fall_speed_{}", sp.name()),
                format!("mass-weighted fall speed of {}", sp.long_name()),
                "m s-1",
                Centre,
                Box::new(move |_, s, o| o.copy_from_slice(&s.fall_speed[i])),
            )
            .comment("positive downward"),
        );
    }
    v.push(
        OutputVar::new(
            "precipitation_flux",
            "surface precipitation rate (all species, mean over the last step)",
            "kg m-2 s-1",
            Series,
            Box::new(|_, s, o| o[0] = s.precip_rate),
        )
        .standard("precipitation_flux"),
    );
    v.push(
        OutputVar::new(
            "precipitation_amount",
            "accumulated surface precipitation since the start",
            "kg m-2",
            Series,
            Box::new(|_, s, o| o[0] = s.water.precipitation),
        )
        .standard("precipitation_amount"),
    );
    for c in Carrier::ALL {
        v.push(OutputVar::new(
            format!("charge_density_{}", c.name()),
            format!("electric charge density carried by {}", c.long_name()),
            "C m-3",
            Centre,
            Box::new(move |_, s, o| o.copy_from_slice(&s.charge[c.index()])),
        ));
    }
    for (name, long, get) in [
        (
            "charging_rate_graupel_ice",
            "non-inductive charging rate of graupel in rebounding graupel-ice collisions",
            (|s: &State| &s.charging_rates.graupel_ice) as fn(&State) -> &Vec<f64>,
        ),
        (
            "charging_rate_graupel_snow",
            "non-inductive charging rate of graupel in rebounding graupel-snow collisions",
            |s: &State| &s.charging_rates.graupel_snow,
        ),
        (
            "charging_rate_snow_ice",
            "non-inductive charging rate of snow in rebounding snow-ice collisions",
            |s: &State| &s.charging_rates.snow_ice,
        ),
        (
            "charging_rate_inductive_graupel",
            "inductive charging rate of graupel",
            |s: &State| &s.charging_rates.inductive_graupel,
        ),
        (
            "charging_rate_inductive_rain",
            "inductive charging rate of rain",
            |s: &State| &s.charging_rates.inductive_rain,
        ),
    ] {
        v.push(
            OutputVar::new(name, long, "C m-3 s-1", Centre, Box::new(move |_, s, o| o.copy_from_slice(get(s))))
                .comment("positive when the first-named species gains positive charge; the other loses the same"),
        );
    }
    for sp in [Species::Rain, Species::Snow, Species::Graupel] {
        v.push(
            OutputVar::new(
                format!("mean_particle_charge_{}", sp.name()),
                format!("mean charge per {} particle", sp.long_name()),
                "C",
                Centre,
                Box::new(move |e, s, o| {
                    let f = e.micro_params();
                    let Some(dist) = f.exponential(sp) else {
                        return;
                    };
                    for (k, x) in o.iter_mut().enumerate() {
                        let rho = e.base.centre.density[k];
                        let c = s.charge[Carrier::of(sp).index()][k];
                        *x = crate::physics::charging::mean_particle_charge(
                            dist,
                            rho,
                            s.q[sp.index()][k],
                            c,
                        )
                        .map_or(0.0, |m| m.0);
                    }
                }),
            )
            .comment("charge density divided by the number concentration N0/lambda"),
        );
    }
    v.push(OutputVar::new(
        "charge_precipitated",
        "cumulative charge carried to the ground by precipitation, per unit area",
        "C m-2",
        Series,
        Box::new(|_, s, o| o[0] = s.charge_transport.precipitated),
    ));
    v.push(
        OutputVar::new(
            "charge_budget_residual",
            "column charge minus (initial + sources + advected - precipitated - lowered to ground by flashes)",
            "C m-2",
            Series,
            Box::new(|_, s, o| o[0] = s.charge_budget_residual()),
        )
        .comment("zero to round-off when charge is conserved"),
    );
    let geometry = if exp.field_solver.column_area().is_some() {
        "on the axis of the finite charged column"
    } else {
        "planar (horizontally infinite layers)"
    };
    v.push(
        OutputVar::new(
            "electric_potential",
            format!("electric potential, {geometry}"),
            "V",
            Centre,
            Box::new(|_, s, o| o.copy_from_slice(&s.potential)),
        )
        .comment("ground is a conductor at 0 V"),
    );
    v.push(
        OutputVar::new(
            "electric_field",
            format!("vertical electric field E_z, {geometry}"),
            "V m-1",
            Face,
            Box::new(|_, s, o| o.copy_from_slice(&s.field)),
        )
        .comment("positive when the field points upward (E_z = -dphi/dz)"),
    );
    if exp.ions.enabled {
        for (i, sign) in ["positive", "negative"].into_iter().enumerate() {
            v.push(OutputVar::new(
                format!("n_ion_{sign}"),
                format!("number concentration of {sign} small ions"),
                "m-3",
                Centre,
                Box::new(move |_, s, o| o.copy_from_slice(&s.n_ion[i])),
            ));
        }
        v.push(OutputVar::new(
            "ion_pair_production_rate",
            "ion pairs produced per unit volume and time (cosmic rays and radioactivity)",
            "m-3 s-1",
            Centre,
            Box::new(|e, _, o| o.copy_from_slice(&e.ions.production)),
        ));
        v.push(
            OutputVar::new(
                "air_conductivity",
                "electrical conductivity of the air from small ions",
                "S m-1",
                Centre,
                Box::new(|e, s, o| {
                    for (k, x) in o.iter_mut().enumerate() {
                        *x = crate::physics::ions::conductivity(
                            s.n_ion[0][k],
                            s.n_ion[1][k],
                            e.ions.mu_pos[k],
                            e.ions.mu_neg[k],
                        );
                    }
                }),
            )
            .comment("e (n+ mu+ + n- mu-)"),
        );
        v.push(
            OutputVar::new(
                "conduction_current_density",
                "vertical conduction current density of small ions (mean over the last step)",
                "A m-2",
                Face,
                Box::new(|_, s, o| o.copy_from_slice(&s.conduction_current)),
            )
            .comment("positive upward; at the ground face it includes point discharge"),
        );
        v.push(
            OutputVar::new(
                "corona_current_density",
                "point-discharge current density at the ground (mean over the last step)",
                "A m-2",
                Series,
                Box::new(|_, s, o| o[0] = s.corona_current),
            )
            .comment("positive upward"),
        );
        v.push(
            OutputVar::new(
                "energetic_electron_flux",
                "flux of energetic secondary cosmic-ray electrons (seed of runaway avalanches)",
                "m-2 s-1",
                Centre,
                Box::new(|e, _, o| o.copy_from_slice(&e.ions.electron_flux)),
            )
            .comment("follows the cosmic-ray ionisation profile (docs/ions.md)"),
        );
    }
    v.push(
        OutputVar::new(
            "runaway_electron_flux",
            "largest flux of runaway electrons leaving a stretch above the runaway threshold",
            "m-2 s-1",
            Series,
            Box::new(|_, s, o| o[0] = s.avalanche.flux),
        )
        .comment("seed flux of energetic electrons times the avalanche multiplication; the source of gamma-ray glows"),
    );
    v.push(
        OutputVar::new(
            "runaway_electron_flux_height",
            "height where the largest runaway electron flux leaves its stretch",
            "m",
            Series,
            Box::new(|_, s, o| o[0] = s.avalanche.flux_height),
        )
        .missing(),
    );
    v.push(OutputVar::new(
        "column_charge",
        "column-integrated electric charge per unit area",
        "C m-2",
        Series,
        Box::new(|_, s, o| o[0] = s.column_charge),
    ));
    if let Some(area) = exp.field_solver.column_area() {
        v.push(OutputVar::new(
            "column_total_charge",
            "total electric charge in the finite column",
            "C",
            Series,
            Box::new(move |_, s, o| o[0] = s.column_charge * area),
        ));
    }
    let energy_comment = if exp.field_solver.column_area().is_some() {
        "(1/2) sum of rho phi dz with the axial potential, per unit cross-section of the column"
    } else {
        "(eps0/2) times the integral of E_z squared over the column"
    };
    v.push(
        OutputVar::new(
            "field_energy",
            "electrostatic energy per unit area",
            "J m-2",
            Series,
            Box::new(|_, s, o| o[0] = s.field_energy),
        )
        .comment(energy_comment),
    );
    if let Some(area) = exp.field_solver.column_area() {
        v.push(OutputVar::new(
            "field_energy_total",
            "electrostatic energy of the finite column",
            "J",
            Series,
            Box::new(move |_, s, o| o[0] = s.field_energy * area),
        ));
    }
    v.push(
        OutputVar::new(
            "ground_charge",
            "cumulative charge lowered to ground by ground flashes, per unit area",
            "C m-2",
            Series,
            Box::new(|_, s, o| o[0] = s.ledger.ground_charge),
        )
        .comment("signed: negative ground flashes lower negative charge"),
    );
    for kind in FlashKind::ALL {
        v.push(OutputVar::new(
            format!("flash_count_{}", kind.name()),
            format!(
                "cumulative number of {} flashes since the start",
                kind.name().replace('_', " ")
            ),
            "1",
            Series,
            Box::new(move |_, s, o| o[0] = s.ledger.counts[kind.index()] as f64),
        ));
    }
    for c in Criterion::ALL {
        let i = c.index();
        let threshold_name = if c == Criterion::AvalancheMultiplication {
            format!(
                "stretch threshold of {}: runaway avalanche threshold",
                c.description()
            )
        } else {
            format!("threshold field of the criterion: {}", c.description())
        };
        v.push(OutputVar::new(
            format!("threshold_{}", c.name()),
            threshold_name,
            "V m-1",
            StaticFace,
            Box::new(move |e, _, o| o.copy_from_slice(&e.criteria_thresholds.thresholds[i])),
        ));
        let (ratio_long, ratio_comment) = if c == Criterion::AvalancheMultiplication {
            (
                format!("largest {}", c.description()),
                "integral of dz/lambda over contiguous stretches above the runaway threshold",
            )
        } else {
            (
                format!(
                    "largest ratio of |E_z| to the threshold for {}",
                    c.description()
                ),
                "the criterion holds where the ratio reaches 1",
            )
        };
        // The avalanche criterion's value is a count, not a field ratio.
        let (value_name, height_name) = if c == Criterion::AvalancheMultiplication {
            (
                format!("efold_count_{}", c.name()),
                format!("efold_count_height_{}", c.name()),
            )
        } else {
            (
                format!("field_ratio_{}", c.name()),
                format!("field_ratio_height_{}", c.name()),
            )
        };
        v.push(
            OutputVar::new(
                value_name.clone(),
                ratio_long,
                "1",
                Series,
                Box::new(move |_, s, o| o[0] = s.criteria_status[i].ratio),
            )
            .comment(ratio_comment),
        );
        v.push(
            OutputVar::new(
                height_name,
                format!("height of the largest {value_name}"),
                "m",
                Series,
                Box::new(move |_, s, o| o[0] = s.criteria_status[i].height),
            )
            .missing(),
        );
    }
    v
}

/// How a flash variable is stored.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FlashValue {
    /// 64-bit float.
    Real,
    /// 32-bit integer flag with CF `flag_values` and `flag_meanings`.
    Flag(&'static [i32], &'static str),
}

/// One variable on the `flash` dimension.
pub struct FlashVar {
    pub name: String,
    pub long_name: String,
    pub units: &'static str,
    pub value: FlashValue,
    pub get: Box<dyn Fn(&FlashRecord) -> f64 + Send + Sync>,
    /// Whether a flash may have no value (written as NaN, the _FillValue).
    pub may_be_missing: bool,
}

const KIND_VALUES: &[i32] = &[1, 2, 3];
const KIND_MEANINGS: &str = "intracloud negative_ground positive_ground";
const MET_VALUES: &[i32] = &[0, 1];
const MET_MEANINGS: &str = "not_met met";

/// Every flash variable for this experiment (totals in C and J for the finite column).
pub fn flash_variables(exp: &Experiment) -> Vec<FlashVar> {
    let real = |name: &str,
                long: &str,
                units: &'static str,
                get: Box<dyn Fn(&FlashRecord) -> f64 + Send + Sync>| FlashVar {
        name: name.into(),
        long_name: long.into(),
        units,
        value: FlashValue::Real,
        get,
        may_be_missing: false,
    };
    let mut v = vec![
        real("flash_z_init", "height of flash initiation", "m", Box::new(|f| f.z_init)),
        real("flash_z_bottom", "lower end of the flash channel", "m", Box::new(|f| f.z_bottom)),
        real("flash_z_top", "upper end of the flash channel", "m", Box::new(|f| f.z_top)),
        real(
            "flash_charge_neutralized",
            "charge neutralised of each polarity per unit area (intracloud: equal positive and negative amount; ground: the larger)",
            "C m-2",
            Box::new(|f| f.charge_neutralized),
        ),
        real(
            "flash_charge_to_ground",
            "net charge lowered to ground per unit area, signed",
            "C m-2",
            Box::new(|f| f.charge_to_ground),
        ),
        real(
            "flash_energy",
            "energy released per unit area (drop in electrostatic energy)",
            "J m-2",
            Box::new(|f| f.energy),
        ),
        real(
            "flash_field_before",
            "largest |E_z| on the channel before the flash",
            "V m-1",
            Box::new(|f| f.field_before),
        ),
        real(
            "flash_field_after",
            "largest |E_z| on the channel after the flash",
            "V m-1",
            Box::new(|f| f.field_after),
        ),
    ];
    if let Some(area) = exp.field_solver.column_area() {
        v.push(real(
            "flash_charge_neutralized_total",
            "charge neutralised of each polarity in the finite column",
            "C",
            Box::new(move |f| f.charge_neutralized * area),
        ));
        v.push(real(
            "flash_charge_to_ground_total",
            "net charge lowered to ground in the finite column, signed",
            "C",
            Box::new(move |f| f.charge_to_ground * area),
        ));
        v.push(real(
            "flash_energy_total",
            "energy released by the flash in the finite column",
            "J",
            Box::new(move |f| f.energy * area),
        ));
    }
    v.push(FlashVar {
        name: "flash_kind".into(),
        long_name: "kind of flash".into(),
        units: "",
        value: FlashValue::Flag(KIND_VALUES, KIND_MEANINGS),
        get: Box::new(|f| f.kind as i32 as f64),
        may_be_missing: false,
    });
    for c in Criterion::ALL {
        let i = c.index();
        v.push(FlashVar {
            name: format!("flash_criterion_{}", c.name()),
            long_name: format!(
                "whether the {} criterion held at initiation",
                c.description()
            ),
            units: "",
            value: FlashValue::Flag(MET_VALUES, MET_MEANINGS),
            get: Box::new(move |f| f64::from(u8::from(f.criteria_met[i]))),
            may_be_missing: false,
        });
        v.push(real(
            &format!("flash_ratio_{}", c.name()),
            &format!(
                "value of the {} criterion at initiation (1 where it starts to hold)",
                c.description()
            ),
            "1",
            Box::new(move |f| f.criteria_ratio[i]),
        ));
    }
    v.push(real(
        "flash_positive_end_length",
        "length of the channel's positive end from the initiation height",
        "m",
        Box::new(|f| f.positive_end),
    ));
    v.push(real(
        "flash_negative_end_length",
        "length of the channel's negative end from the initiation height",
        "m",
        Box::new(|f| f.negative_end),
    ));
    v.push(real(
        "flash_channel_potential",
        "potential of the channel as a floating conductor with zero net charge: the mean ambient potential over it before the flash (ground at 0 V)",
        "V",
        Box::new(|f| f.channel_potential),
    ));
    // The charge centres are missing for a flash that neutralised no charge
    // of that sign.
    let optional = |name: &str, long: &str, units, get| FlashVar {
        may_be_missing: true,
        ..real(name, long, units, get)
    };
    v.extend([
        optional(
            "flash_z_negative_charge",
            "height of the flash's negative charge centre: centroid of the negative charge it neutralised (missing when none)",
            "m",
            Box::new(|f| f.z_negative_charge),
        ),
        optional(
            "flash_z_positive_charge",
            "height of the flash's positive charge centre: centroid of the positive charge it neutralised (missing when none)",
            "m",
            Box::new(|f| f.z_positive_charge),
        ),
        optional(
            "flash_temperature_negative_charge",
            "air temperature at the flash's negative charge centre (missing when none)",
            "K",
            Box::new(|f| f.t_negative_charge),
        ),
        optional(
            "flash_temperature_positive_charge",
            "air temperature at the flash's positive charge centre (missing when none)",
            "K",
            Box::new(|f| f.t_positive_charge),
        ),
    ]);
    v
}

/// The output reference of docs/output.md, generated from [`variables`] and
/// [`flash_variables`] of the embedded demo (finite column); variables that
/// only the finite-column geometry writes are marked. A test keeps the page
/// current.
pub fn reference_markdown() -> String {
    use crate::setup::config::DEMO_TOML;
    let column = Experiment::from_text(DEMO_TOML, "demo", &[], std::path::Path::new("."))
        .expect("the embedded demo resolves");
    let planar = Experiment::from_text(
        DEMO_TOML,
        "demo",
        &["electrostatics.geometry=\"planar\"".to_string()],
        std::path::Path::new("."),
    )
    .expect("the embedded demo resolves in planar geometry");
    let planar_names: Vec<String> = variables(&planar).into_iter().map(|v| v.name).collect();
    let planar_flash: Vec<String> = flash_variables(&planar)
        .into_iter()
        .map(|v| v.name)
        .collect();
    let cell = |s: &str| s.replace('|', "\\|");
    let mut out = String::from(
        "| variable | dimensions | units | standard_name | long_name and comment |\n|---|---|---|---|---|\n",
    );
    for v in variables(&column) {
        let dims = match v.placement {
            Placement::Centre => "time, z",
            Placement::Face => "time, z_face",
            Placement::Series => "time",
            Placement::StaticFace => "z_face",
        };
        let mut text = v.long_name.clone();
        if !v.comment.is_empty() {
            text.push_str(". ");
            text.push_str(v.comment);
        }
        if !planar_names.contains(&v.name) {
            text.push_str(" (finite-column geometry only)");
        }
        out.push_str(&format!(
            "| `{}` | {} | {} | {} | {} |\n",
            v.name,
            dims,
            if v.units.is_empty() { "1" } else { v.units },
            v.standard_name.unwrap_or(""),
            cell(&text)
        ));
    }
    out.push_str("\nOn the unlimited `flash` dimension, one record per flash:\n\n");
    out.push_str("| variable | units | long_name |\n|---|---|---|\n");
    for v in flash_variables(&column) {
        let mut text = v.long_name.clone();
        if let FlashValue::Flag(values, meanings) = v.value {
            text.push_str(&format!(
                "; flag_values {values:?}, flag_meanings \"{meanings}\""
            ));
        }
        if !planar_flash.contains(&v.name) {
            text.push_str(" (finite-column geometry only)");
        }
        out.push_str(&format!(
            "| `{}` | {} | {} |\n",
            v.name,
            if v.units.is_empty() { "1" } else { v.units },
            cell(&text)
        ));
    }
    out
}

/// `path` with `suffix` appended to its file name (`out.nc` + `.lock` gives
/// `out.nc.lock`): the side files of an output live beside it, in the same
/// directory, so that a rename between them never crosses file systems.
pub fn beside(path: &Path, suffix: &str) -> PathBuf {
    let mut s = path.as_os_str().to_owned();
    s.push(suffix);
    PathBuf::from(s)
}

/// The directory holding a path (`.` for a bare file name); configuration
/// files resolve their relative paths against it too.
pub use crate::setup::config::load::directory_of;

/// An I/O error naming the action and the file; the operating system's
/// reason (a full disk reads "No space left on device") rides along.
pub fn io_error(action: &str, path: &Path, source: std::io::Error) -> RunError {
    RunError::Io {
        context: format!("{action} {}", path.display()),
        source,
    }
}

/// Gives the finished, already-synced file `done` the name `target` in one
/// step and makes the rename itself durable by syncing the directory: the
/// last move of every output this program writes.
pub fn commit_file(done: &Path, target: &Path) -> Result<(), RunError> {
    std::fs::rename(done, target).map_err(|source| RunError::Io {
        context: format!("renaming {} to {}", done.display(), target.display()),
        source,
    })?;
    if let Ok(d) = std::fs::File::open(directory_of(target)) {
        // Best effort: some file systems refuse to sync a directory.
        let _ = d.sync_all();
    }
    Ok(())
}

/// Checks that a file can be written at `target` before any work is done
/// for it: its directory exists and `target` is not itself a directory.
/// The commands call this first, so a long study does not end in an error
/// about a directory that was missing all along, and the message names the
/// file the user asked for, not the temporary one beside it.
pub fn check_destination(target: &Path) -> Result<(), RunError> {
    let fail = |message: String| RunError::Output {
        context: format!("writing {}", target.display()),
        message,
    };
    let dir = directory_of(target);
    if !dir.is_dir() {
        return Err(fail(format!(
            "the directory {} does not exist",
            dir.display()
        )));
    }
    if target.is_dir() {
        return Err(fail(
            "a directory of that name exists (give a file name)".into(),
        ));
    }
    Ok(())
}

/// Writes `contents` to `path` so that a reader never sees a half-written
/// file and a failed write never destroys an earlier good one: the bytes go
/// to `<path>.<pid>.tmp` beside it, are forced to disk, and the file is
/// renamed over `path` in one step (for summaries, reports and tables;
/// NetCDF output has its own protocol in [`netcdf_writer`]).
pub fn write_atomically(path: &Path, contents: &[u8]) -> Result<(), RunError> {
    use std::io::Write;
    check_destination(path)?;
    let tmp = beside(path, &format!(".{}.tmp", std::process::id()));
    let result = std::fs::File::create(&tmp)
        .and_then(|mut f| {
            f.write_all(contents)?;
            f.sync_all()
        })
        .map_err(|e| io_error("writing", &tmp, e))
        .and_then(|()| commit_file(&tmp, path));
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// Stops the HDF5 library (under the NetCDF library) from printing its
/// internal error stack on stderr when a call fails: dozens of lines per
/// failed write on a full disk, before the run's own message, which names
/// the file, the NetCDF error and the operating system's reason. The
/// setting belongs to the calling thread where the library is built
/// thread-safe (as Debian's is), so every thread that opens or creates a
/// file calls this first; it acts once per thread.
pub fn quiet_library_diagnostics() {
    thread_local! {
        static QUIET: std::cell::Cell<bool> = const { std::cell::Cell::new(false) };
    }
    if QUIET.with(|q| q.replace(true)) {
        return;
    }
    let _lock = netcdf_sys::libnetcdf_lock.lock();
    // SAFETY: H5Eset_auto2 with the default error stack and no handler only
    // switches off the library's automatic printing; it takes plain values
    // and runs under the lock the netcdf crate holds around its own calls.
    let status = unsafe {
        hdf5_metno_sys::h5e::H5Eset_auto2(
            hdf5_metno_sys::h5e::H5E_DEFAULT,
            None,
            std::ptr::null_mut(),
        )
    };
    // A refusal leaves the library's printing on: noisier, not wrong.
    let _ = status;
}
