//! Resolution of the configuration sections into the parameter structs of
//! the physics cores, with the checks between keys that the key table cannot
//! express. This is the one place where configuration types are turned into
//! physics types; errors name the key.

use crate::error::ConfigIssue;
use crate::grid::Grid;
use crate::physics::atmosphere::relative_density;
use crate::physics::breakdown::avalanche::AvalancheParams;
use crate::physics::breakdown::thresholds::ThresholdParams;
use crate::physics::breakdown::Criteria;
use crate::physics::charging::prescribed::{ChargeLayer, PrescribedCharge};
use crate::physics::charging::ChargingParams;
use crate::physics::discharge::{trigger_threshold, DischargeParams, Neutralization};
use crate::physics::electrostatics::{column, planar, FieldSolver};
use crate::physics::kinematics::entrainment::Entrainment;
use crate::physics::kinematics::updraft::{Envelope, Shape, Updraft};
use crate::physics::microphysics::dsd;
use crate::physics::microphysics::params::MicroParams;
use crate::physics::microphysics::prescribed::{HydroLayer, PrescribedHydrometeors};
use crate::physics::microphysics::species::Species;
use crate::physics::profile::{self, Table, TableError};
use crate::setup::config::{
    BreakdownConfig, ChannelRule, ChargingConfig, ColumnConfig, DischargeConfig,
    ElectrostaticsConfig, EnvelopeConfig, EnvelopeKind, Geometry, HydroLayerConfig,
    IonisationSource, IonsConfig, LayerConfig, LayerShape, MicrophysicsConfig, NeutralizationMode,
    PropagationMode, TopBoundary, UpdraftConfig, UpdraftShape,
};

/// One nanocoulomb (C): charge-density keys are given in nC m-3.
const NANO: f64 = 1e-9;

/// The physical range of a table's columns.
#[derive(Debug, Clone, Copy)]
pub struct Columns {
    /// Names with units, for messages: "height (m), factor".
    pub what: &'static str,
    pub x: (f64, f64),
    pub y: (f64, f64),
}

/// Heights (m) against a shape factor (1) of imposed layers and the updraft.
pub const HEIGHT_FACTOR: Columns = Columns {
    what: "height (m), factor",
    x: (-1000.0, 100_000.0),
    y: (-10.0, 10.0),
};

/// Times (s) against an envelope factor (1).
pub const TIME_FACTOR: Columns = Columns {
    what: "time (s), factor",
    x: (-1.0e7, 1.0e7),
    y: (-10.0, 10.0),
};

/// A checked table from the rows of configuration key `key`. Every value
/// must lie in its column's physical range: a factor of 1e300 passes the
/// type check but would ask for 1e300 m/s of updraft.
pub fn table(key: &str, rows: Option<&Vec<Vec<f64>>>, cols: Columns) -> Result<Table, ConfigIssue> {
    let allowed = format!(
        "at least 2 rows [{}], finite, first column strictly increasing within [{}, {}], second within [{}, {}]",
        cols.what, cols.x.0, cols.x.1, cols.y.0, cols.y.1
    );
    let rows = rows.ok_or_else(|| {
        ConfigIssue::new(key, "this table is required here").allowed(allowed.clone())
    })?;
    let table = Table::new(rows).map_err(|e| {
        let issue = ConfigIssue::new(key, e.to_string()).allowed(allowed.clone());
        match e {
            TableError::NotTwoFinite { values, .. } => issue.value(format!("{values:?}")),
            _ => issue,
        }
    })?;
    for (i, p) in table.points().iter().enumerate() {
        let inside = |v: f64, (lo, hi): (f64, f64)| (lo..=hi).contains(&v);
        if !inside(p[0], cols.x) || !inside(p[1], cols.y) {
            return Err(
                ConfigIssue::new(key, format!("row {} is out of range", i + 1))
                    .value(format!("{p:?}"))
                    .allowed(allowed),
            );
        }
    }
    Ok(table)
}

fn envelope(prefix: &str, c: &EnvelopeConfig) -> Result<Envelope, ConfigIssue> {
    Ok(match c.envelope {
        EnvelopeKind::Constant => Envelope::Constant,
        EnvelopeKind::Pulse => Envelope::Pulse {
            start: c.start,
            growth: c.growth,
            mature: c.mature,
            decay: c.decay,
        },
        EnvelopeKind::Table => Envelope::Table(table(
            &format!("{prefix}.envelope_points"),
            c.envelope_points.as_ref(),
            TIME_FACTOR,
        )?),
    })
}

/// The updraft of the configuration.
pub fn updraft(c: &UpdraftConfig) -> Result<Updraft, ConfigIssue> {
    let shape = match c.shape {
        UpdraftShape::Sine => {
            if c.top <= c.bottom {
                return Err(ConfigIssue::new(
                    "updraft.top",
                    format!("must lie above updraft.bottom ({} m)", c.bottom),
                )
                .value(format!("{}", c.top))
                .unit("m"));
            }
            Shape::Sine {
                bottom: c.bottom,
                top: c.top,
            }
        }
        UpdraftShape::Table => Shape::Table(table(
            "updraft.profile_points",
            c.profile_points.as_ref(),
            HEIGHT_FACTOR,
        )?),
    };
    Ok(Updraft {
        shape,
        envelope: envelope("updraft", &c.timing)?,
        peak: c.peak_speed,
        background: c.background,
    })
}

/// Bulk-scheme parameters (also used for fall speeds in every mode).
pub fn micro_params(c: &MicrophysicsConfig) -> MicroParams {
    MicroParams {
        rain: dsd::rain(c.rain_intercept),
        snow: dsd::snow(c.snow_intercept, c.snow_density),
        graupel: dsd::graupel(c.graupel_intercept, c.graupel_density),
        autoconversion_rate: c.autoconversion_rate,
        autoconversion_threshold: c.autoconversion_threshold,
        nucleation: c.ice_nucleation,
        max_nuclei: c.max_ice_nuclei,
        nuclei_scale: c.ice_nuclei_scale,
        rime_splintering: c.rime_splintering,
        rain_ice_collection: c.rain_ice_collection,
        rain_ice_contact_freezing: c.rain_ice_contact_freezing,
        droplet_freezing: c.droplet_freezing,
        cloud_equilibrium: c.cloud_equilibrium,
        droplet_diameter: c.droplet_diameter,
        integrator: c.integrator,
        rtol: c.relative_tolerance,
        atol: c.absolute_tolerance,
        ..MicroParams::default()
    }
}

/// The vertical shape of an imposed layer (`key` names the layer block).
fn layer_shape(
    key: &str,
    shape: LayerShape,
    center: Option<f64>,
    thickness: Option<f64>,
    points: Option<&Vec<Vec<f64>>>,
) -> Result<profile::LayerShape, ConfigIssue> {
    let need = |what: &str, v: Option<f64>| {
        v.ok_or_else(|| {
            ConfigIssue::new(
                format!("{key}.{what}"),
                format!("a {} layer needs `{what}`", shape.name()),
            )
        })
    };
    match shape {
        LayerShape::TopHat | LayerShape::Gaussian => {
            let center = need("center", center)?;
            let thickness = need("thickness", thickness)?;
            if points.is_some() {
                return Err(ConfigIssue::new(
                    format!("{key}.points"),
                    "`points` belongs to shape = \"table\" only",
                ));
            }
            Ok(if shape == LayerShape::TopHat {
                profile::LayerShape::TopHat { center, thickness }
            } else {
                profile::LayerShape::Gaussian { center, thickness }
            })
        }
        LayerShape::Table => {
            if center.is_some() || thickness.is_some() {
                return Err(ConfigIssue::new(
                    key,
                    "a table layer takes its shape from `points`; remove `center` and `thickness`",
                ));
            }
            Ok(profile::LayerShape::Table(table(
                &format!("{key}.points"),
                points,
                HEIGHT_FACTOR,
            )?))
        }
    }
}

fn hydro_layer(i: usize, l: &HydroLayerConfig) -> Result<HydroLayer, ConfigIssue> {
    let key = format!("hydrometeors.layers[{}]", i + 1);
    let species = l
        .species
        .filter(|&sp| sp != Species::Vapour)
        .ok_or_else(|| {
            ConfigIssue::new(
                format!("{key}.species"),
                "every layer names its hydrometeor",
            )
            .allowed(format!("{:?}", Species::HYDROMETEOR_NAMES))
        })?;
    let mixing_ratio = l.mixing_ratio.ok_or_else(|| {
        ConfigIssue::new(
            format!("{key}.mixing_ratio"),
            "every layer needs its peak mixing ratio",
        )
        .unit("kg kg-1")
    })?;
    if species == Species::Ice && mixing_ratio > 0.0 && l.number <= 0.0 {
        return Err(ConfigIssue::new(
            format!("{key}.number"),
            "a cloud-ice layer needs a crystal number",
        )
        .unit("kg-1"));
    }
    Ok(HydroLayer {
        species,
        shape: layer_shape(&key, l.shape, l.center, l.thickness, l.points.as_ref())?,
        envelope: envelope(&key, &l.timing)?,
        mixing_ratio,
        number: l.number,
    })
}

/// The imposed hydrometeor layers of `microphysics.scheme = "prescribed"`.
pub fn prescribed_hydrometeors(
    layers: &[HydroLayerConfig],
) -> Result<PrescribedHydrometeors, ConfigIssue> {
    if layers.is_empty() {
        return Err(ConfigIssue::new(
            "hydrometeors.layers",
            "microphysics.scheme = \"prescribed\" needs at least one [[hydrometeors.layers]] block",
        ));
    }
    let layers = layers
        .iter()
        .enumerate()
        .map(|(i, l)| hydro_layer(i, l))
        .collect::<Result<_, _>>()?;
    Ok(PrescribedHydrometeors { layers })
}

/// The prescribed charge layers on the grid.
pub fn prescribed_charge(
    layers: &[LayerConfig],
    grid: &Grid,
) -> Result<PrescribedCharge, ConfigIssue> {
    let key = |i: usize| format!("prescribed_charge.layers[{}]", i + 1);
    let layers = layers
        .iter()
        .enumerate()
        .map(|(i, l)| {
            Ok(ChargeLayer {
                shape: layer_shape(&key(i), l.shape, l.center, l.thickness, l.points.as_ref())?,
                density: l.density * NANO,
                growth_rate: l.growth_rate * NANO,
            })
        })
        .collect::<Result<Vec<_>, ConfigIssue>>()?;
    PrescribedCharge::new(&layers, grid).map_err(|i| {
        ConfigIssue::new(
            key(i),
            format!("the layer lies outside the grid (0 to {} m)", grid.top()),
        )
    })
}

/// The charging parameters of the configuration.
pub fn charging(
    c: &mut ChargingConfig,
    base_dir: &std::path::Path,
    inputs: &mut Vec<std::path::PathBuf>,
) -> Result<ChargingParams, ConfigIssue> {
    use crate::physics::charging::Scheme;
    use crate::setup::charge_table_input as input;
    let table = match &mut c.scheme {
        Scheme::Table {
            table_file,
            table_columns,
            table_rows,
        } => {
            let t =
                match (
                    table_file.take(),
                    table_columns.as_ref(),
                    table_rows.as_ref(),
                ) {
                    (Some(file), None, None) => {
                        let path = base_dir.join(&file);
                        let (names, rows, t) = input::read(&path)?;
                        inputs.push(path);
                        // Inline, as soundings are: the stored configuration
                        // then reproduces the run without the file.
                        *table_columns = Some(names);
                        *table_rows = Some(rows);
                        t
                    }
                    (None, Some(cols), Some(rows)) => input::from_rows(cols, rows)?,
                    (None, _, _) => return Err(ConfigIssue::new(
                        "charging.table_file",
                        "scheme = \"table\" needs table_file (or table_columns with table_rows)",
                    )),
                    (Some(_), _, _) => {
                        return Err(ConfigIssue::new(
                            "charging.table_file",
                            "give either table_file or table_columns with table_rows, not both",
                        ))
                    }
                };
            Some(std::sync::Arc::new(t))
        }
        _ => None,
    };
    if c.taper_end >= c.taper_start {
        return Err(ConfigIssue::new(
            "charging.taper_end",
            format!(
                "must be colder than charging.taper_start ({} degC)",
                c.taper_start
            ),
        )
        .value(format!("{}", c.taper_end))
        .unit("degC"));
    }
    Ok(ChargingParams {
        scheme: c.scheme.clone(),
        table,
        scale: c.scale,
        cap: c.max_charge_per_collision * 1e-15,
        taper_start: c.taper_start,
        taper_end: c.taper_end,
        inductive: c.inductive,
        inductive_rain: c.inductive_rain,
        graupel_snow: c.graupel_snow,
        riming_efficiency: c.riming_efficiency,
        cos_theta: c.inductive_cos_theta,
        rebound_probability: c.inductive_rebound_probability,
    })
}

/// The turbulent fractional entrainment rate epsilon (m-1), zero for a
/// closed column. The continuity part of the exchange needs no parameter:
/// [`crate::physics::kinematics::entrainment`] takes it from the mass flux
/// whenever this rate is positive.
pub fn entrainment_rate(c: &ColumnConfig) -> f64 {
    match c.entrainment {
        Entrainment::Off => 0.0,
        Entrainment::EntrainingPlume => c.entrainment_coefficient / c.radius,
    }
}

/// The field solver of the configuration, with its precomputed parts.
pub fn field_solver(grid: &Grid, c: &ElectrostaticsConfig, radius: f64) -> FieldSolver {
    match c.geometry {
        Geometry::Planar => FieldSolver::Planar(planar::PlanarSolver::new(
            grid,
            match c.top_boundary {
                TopBoundary::FieldFree => planar::Top::FieldFree,
                TopBoundary::Conductor => planar::Top::Conductor(c.top_potential),
            },
        )),
        Geometry::Column => FieldSolver::Column(column::ColumnSolver::new(grid, radius)),
    }
}

/// The threshold profiles of every criterion on the faces.
pub fn criteria(b: &BreakdownConfig, face: &crate::physics::atmosphere::Profile) -> Criteria {
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
        onset: crate::physics::initiation::hydrometeor::CoronaOnset {
            drop_1000: b.drop_corona_onset_1000,
            drop_500: b.drop_corona_onset_500,
            ice_500: b.ice_corona_onset_500,
            ice_cutoff: b.ice_corona_cutoff,
        },
    };
    let rules = crate::physics::breakdown::Rules {
        fit_floor: b.avalanche_fit_floor,
        required_efolds: b.avalanche_required_efolds,
        streamer_depth: b.streamer_zone_depth,
        stem_charge: b.leader_stem_charge,
    };
    Criteria::new(&params, &face.density, &face.pressure, &rules, b.trigger)
}

/// Discharge parameters on the grid's faces.
pub fn discharge(
    c: &DischargeConfig,
    criteria: &Criteria,
    face_density: &[f64],
    persistence_time: f64,
) -> DischargeParams {
    let thr = &criteria.thresholds[trigger_threshold(criteria.trigger)];
    let propagation = match c.propagation {
        PropagationMode::FractionOfTrigger => {
            thr.iter().map(|t| c.propagation_fraction * t).collect()
        }
        PropagationMode::Absolute => face_density
            .iter()
            .map(|&rho| {
                let delta = if c.propagation_density_scaled {
                    relative_density(rho)
                } else {
                    1.0
                };
                c.propagation_field * delta
            })
            .collect(),
    };
    DischargeParams {
        enabled: c.enabled,
        max_per_step: c.max_flashes_per_step,
        min_interval: c.min_interval,
        locate: c.locate_in_step,
        require_hydrometeor_breakdown: c.require_hydrometeor_breakdown,
        propagation,
        min_charge_density: c.min_charge_density * NANO,
        follow_charge: c.follow_charge,
        neutralization: match c.neutralization {
            NeutralizationMode::Fraction => Neutralization::Fraction(c.neutralization_fraction),
            NeutralizationMode::TargetField => Neutralization::TargetField(c.target_fraction),
        },
        ground_height: c.ground_connection_height,
        negative_end_factor: c.negative_end_factor,
        persistence: persistence_time,
        equipotential: c.channel_rule == ChannelRule::Equipotential,
        leader_margin: c.leader_potential_margin,
    }
}

/// Heights (m) against an ion-pair production (m-3 s-1).
pub const HEIGHT_PRODUCTION: Columns = Columns {
    what: "height (m), ion-pair production (m-3 s-1)",
    x: (-1000.0, 100_000.0),
    y: (0.0, 1.0e12),
};

/// The ion physics on the grid: production from cosmic rays (Slyunyaev et
/// al. 2015) or the user's table, times the scale, plus radioactivity;
/// mobilities, recombination and aerosol sink from the base state.
pub fn ions(
    c: &IonsConfig,
    z: &[f64],
    base: &crate::physics::atmosphere::Profile,
) -> Result<crate::physics::ions::IonColumn, ConfigIssue> {
    use crate::physics::ions::{conduction::Corona, ionisation, IonColumn, IonInputs, Mobility};
    let cosmic = ionisation::CosmicRayProfile::new(c.geomagnetic_latitude, c.solar_cycle_phase);
    if !c.enabled {
        // The energetic-electron seed of runaway avalanches is there
        // whether or not the air conducts.
        let (electron_flux, seed_on_faces) = crate::physics::ions::electron_flux_profiles(
            &cosmic,
            z,
            &base.pressure,
            &base.temperature,
            c.seed_electron_flux * c.ionisation_scale,
        );
        return Ok(IonColumn {
            electron_flux,
            seed_on_faces,
            ..IonColumn::default()
        });
    }
    let table = match c.ionisation {
        IonisationSource::Table => Some(table(
            "ions.ionisation_points",
            c.ionisation_points.as_ref(),
            HEIGHT_PRODUCTION,
        )?),
        IonisationSource::Slyunyaev2015 => None,
    };
    let production = (0..z.len())
        .map(|k| {
            let q = match &table {
                Some(t) => t.lookup(z[k], None),
                None => cosmic.rate(z[k], base.pressure[k], base.temperature[k]),
            };
            c.ionisation_scale * q
                + ionisation::radioactivity(
                    z[k],
                    c.surface_radioactivity,
                    c.radioactivity_scale_height,
                )
        })
        .collect();
    let inputs = IonInputs {
        mobility: Mobility {
            positive: c.positive_mobility,
            negative: c.negative_mobility,
        },
        aerosol_number: c.aerosol_number,
        aerosol_scale_height: c.aerosol_scale_height,
        aerosol_attachment: c.aerosol_attachment,
        cloud_droplet_number: c.cloud_droplet_number,
        corona: c.ground_corona.then_some(Corona {
            threshold: c.corona_threshold,
            coefficient: c.corona_coefficient,
        }),
        seed_electron_flux: c.seed_electron_flux * c.ionisation_scale,
    };
    Ok(IonColumn::build(
        &inputs,
        z,
        &base.pressure,
        &base.temperature,
        &base.density,
        production,
        &cosmic,
    ))
}
