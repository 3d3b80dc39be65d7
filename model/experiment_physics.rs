//! Resolution of the updraft and microphysics sections into their model
//! objects, with the checks between keys that the key table cannot express.

use crate::config::HydroLayerConfig;
use crate::config::{
    EnvelopeConfig, EnvelopeKind, HydroName, HydroShape, IntegratorKind, MicroScheme,
    MicrophysicsConfig, NucleationKind, UpdraftConfig, UpdraftShape,
};
use crate::error::ConfigIssue;
use crate::kinematics::updraft::{Envelope, Shape, Updraft};
use crate::microphysics::dsd;
use crate::microphysics::params::{Integrator, MicroParams, Nucleation};
use crate::microphysics::prescribed::{HydroLayer, LayerShape, PrescribedHydrometeors};
use crate::microphysics::species::Species;
use crate::microphysics::Scheme;

/// A table of (x, y) points: at least two rows of two finite numbers, x increasing.
pub fn points(
    key: &str,
    rows: Option<&Vec<Vec<f64>>>,
    what: &str,
) -> Result<Vec<[f64; 2]>, ConfigIssue> {
    let allowed = format!("at least 2 rows [{what}], finite, first column strictly increasing");
    let rows = rows.ok_or_else(|| {
        ConfigIssue::new(key, "this table is required here").allowed(allowed.clone())
    })?;
    if rows.len() < 2 {
        return Err(ConfigIssue::new(key, format!("{} rows given", rows.len())).allowed(allowed));
    }
    let mut out = Vec::with_capacity(rows.len());
    for (i, r) in rows.iter().enumerate() {
        if r.len() != 2 || !r.iter().all(|v| v.is_finite()) {
            return Err(
                ConfigIssue::new(key, format!("row {} is not two finite numbers", i + 1))
                    .value(format!("{r:?}"))
                    .allowed(allowed),
            );
        }
        if i > 0 && r[0] <= rows[i - 1][0] {
            return Err(ConfigIssue::new(
                key,
                format!("row {}: the first column must increase", i + 1),
            )
            .allowed(allowed));
        }
        out.push([r[0], r[1]]);
    }
    Ok(out)
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
        EnvelopeKind::Table => Envelope::Table(points(
            &format!("{prefix}.envelope_points"),
            c.envelope_points.as_ref(),
            "time (s), factor",
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
        UpdraftShape::Table => Shape::Table(points(
            "updraft.profile_points",
            c.profile_points.as_ref(),
            "height (m), factor",
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
        nucleation: match c.ice_nucleation {
            NucleationKind::Cooper1986 => Nucleation::Cooper1986,
            NucleationKind::Meyers1992 => Nucleation::Meyers1992,
            NucleationKind::Fletcher1962 => Nucleation::Fletcher1962,
        },
        max_nuclei: c.max_ice_nuclei,
        nuclei_scale: c.ice_nuclei_scale,
        rime_splintering: c.rime_splintering,
        integrator: match c.integrator {
            IntegratorKind::BogackiShampine1989 => Integrator::BogackiShampine1989,
            IntegratorKind::DormandPrince1980 => Integrator::DormandPrince1980,
            IntegratorKind::OdeSolversDopri5 => Integrator::OdeSolversDopri5,
        },
        rtol: c.relative_tolerance,
        atol: c.absolute_tolerance,
        ..MicroParams::default()
    }
}

fn hydro_layer(i: usize, l: &HydroLayerConfig) -> Result<HydroLayer, ConfigIssue> {
    let key = format!("hydrometeors.layers[{}]", i + 1);
    let species = match l.species.ok_or_else(|| {
        ConfigIssue::new(format!("{key}.species"), "every layer names its species")
    })? {
        HydroName::Cloud => Species::Cloud,
        HydroName::Rain => Species::Rain,
        HydroName::Ice => Species::Ice,
        HydroName::Snow => Species::Snow,
        HydroName::Graupel => Species::Graupel,
    };
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
    let shape = match l.shape {
        HydroShape::Gaussian => LayerShape::Gaussian {
            center: l.center.ok_or_else(|| {
                ConfigIssue::new(format!("{key}.center"), "a gaussian layer needs `center`")
            })?,
            thickness: l.thickness.ok_or_else(|| {
                ConfigIssue::new(
                    format!("{key}.thickness"),
                    "a gaussian layer needs `thickness`",
                )
            })?,
        },
        HydroShape::Table => LayerShape::Table(points(
            &format!("{key}.points"),
            l.points.as_ref(),
            "height (m), factor",
        )?),
    };
    Ok(HydroLayer {
        species,
        shape,
        envelope: envelope(&key, &l.timing)?,
        mixing_ratio,
        number: l.number,
    })
}

/// The microphysics of the configuration.
pub fn scheme(c: &MicrophysicsConfig, layers: &[HydroLayerConfig]) -> Result<Scheme, ConfigIssue> {
    match c.scheme {
        MicroScheme::Off => Ok(Scheme::Off),
        MicroScheme::Bulk => Ok(Scheme::Bulk),
        MicroScheme::Prescribed => {
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
            Ok(Scheme::Prescribed(PrescribedHydrometeors { layers }))
        }
    }
}

/// The charging parameters of the configuration.
pub fn charging(
    c: &crate::config::ChargingConfig,
) -> Result<crate::charging::ChargingParams, ConfigIssue> {
    use crate::charging::{ChargingParams, Scheme as Charge};
    use crate::config::ChargingScheme;
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
        scheme: match c.scheme {
            ChargingScheme::Off => Charge::Off,
            ChargingScheme::Gardiner1985 => Charge::Gardiner1985 {
                reversal: c.reversal_temperature,
            },
            ChargingScheme::SaundersPeck1998 => Charge::SaundersPeck1998,
        },
        scale: c.scale,
        cap: c.max_charge_per_collision * 1e-15,
        taper_start: c.taper_start,
        taper_end: c.taper_end,
        inductive: c.inductive,
        cos_theta: c.inductive_cos_theta,
        rebound_probability: c.inductive_rebound_probability,
        droplet_diameter: c.inductive_droplet_diameter,
    })
}
