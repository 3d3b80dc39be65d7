//! Experiment configuration: one TOML file describes a whole run.
//!
//! Two stages. [`load`] parses the text, rejects unknown keys, type- and
//! range-checks every value against the key table in [`schema`], applies
//! `--set` overrides the same way and fills in defaults, giving a [`Config`].
//! [`crate::setup::experiment::Experiment`] then checks the relations between keys
//! and builds the grid and base state. The resolved [`Config`] (defaults filled
//! in, sounding files inlined) is what `check` prints and what every output
//! file stores, so a run is reproduced from its output alone.

pub mod load;
pub mod schema;
pub mod template;

use serde::{Deserialize, Serialize};

pub use load::{parse, parse_config_text, parse_with_overrides, ConfigText};

/// The resolved configuration. Field docs give units; the full reference with
/// ranges and defaults is [`schema::KEYS`] and docs/configuration.md.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Config {
    pub grid: GridConfig,
    pub time: TimeConfig,
    pub atmosphere: AtmosphereConfig,
    pub updraft: UpdraftConfig,
    pub column: ColumnConfig,
    pub microphysics: MicrophysicsConfig,
    #[serde(default)]
    pub hydrometeors: HydrometeorsConfig,
    #[serde(default)]
    pub prescribed_charge: PrescribedChargeConfig,
    pub charging: ChargingConfig,
    pub electrostatics: ElectrostaticsConfig,
    pub ions: IonsConfig,
    pub breakdown: BreakdownConfig,
    pub discharge: DischargeConfig,
    pub sweep: SweepConfig,
    pub output: OutputConfig,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GridConfig {
    /// Model top (m).
    pub top: f64,
    /// Cell thickness (m).
    pub spacing: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TimeConfig {
    /// Time step (s).
    pub step: f64,
    /// Simulated duration (s).
    pub duration: f64,
    /// Output interval (s).
    pub output_interval: f64,
    /// Model time zero, `YYYY-MM-DDTHH:MM:SSZ`.
    pub start: String,
}

named_choice! {
    pub enum ProfileKind {
        Standard1976 = "standard_1976",
        Analytic = "analytic",
        Sounding = "sounding",
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AtmosphereConfig {
    pub profile: ProfileKind,
    pub analytic: AnalyticConfig,
    #[serde(default)]
    pub sounding: SoundingConfig,
}

/// Input units as in the key table: K, Pa, %, K km-1, m.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AnalyticConfig {
    pub surface_temperature: f64,
    pub surface_pressure: f64,
    pub surface_relative_humidity: f64,
    pub tropopause_relative_humidity: f64,
    pub lapse_rate: f64,
    pub tropopause_height: f64,
    pub stratosphere_lapse_rate: f64,
}

#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SoundingConfig {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub columns: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rows: Option<Vec<Vec<f64>>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub file: Option<String>,
    /// Ground pressure (Pa) for height soundings.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub surface_pressure: Option<f64>,
}

named_choice! {
    pub enum UpdraftShape {
        Sine = "sine",
        Table = "table",
    }
}

named_choice! {
    pub enum EnvelopeKind {
        Constant = "constant",
        Pulse = "pulse",
        Table = "table",
    }
}

/// The time envelope shared by the updraft and the imposed hydrometeor
/// layers (s). Flattened into both tables: the key check of [`load`] rejects
/// unknown keys there (serde's `deny_unknown_fields` cannot be combined with
/// `flatten`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EnvelopeConfig {
    pub envelope: EnvelopeKind,
    pub start: f64,
    pub growth: f64,
    pub mature: f64,
    pub decay: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub envelope_points: Option<Vec<Vec<f64>>>,
}

/// Input units m, m s-1, s.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UpdraftConfig {
    pub shape: UpdraftShape,
    pub bottom: f64,
    pub top: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub profile_points: Option<Vec<Vec<f64>>>,
    pub peak_speed: f64,
    #[serde(flatten)]
    pub timing: EnvelopeConfig,
    pub background: f64,
}

/// The column as a whole: its radius (m), shared by the electrostatics and
/// the lateral entrainment, and the entrainment scheme.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ColumnConfig {
    pub radius: f64,
    pub entrainment: crate::physics::kinematics::entrainment::Entrainment,
    pub entrainment_coefficient: f64,
    pub eddy_diffusivity: f64,
}

/// Input units as in the key table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MicrophysicsConfig {
    pub scheme: crate::physics::microphysics::Mode,
    pub ice_nucleation: crate::physics::microphysics::params::Nucleation,
    pub max_ice_nuclei: f64,
    pub ice_nuclei_scale: f64,
    pub rime_splintering: bool,
    pub rain_ice_collection: bool,
    pub rain_ice_contact_freezing: bool,
    pub droplet_freezing: bool,
    pub cloud_equilibrium: bool,
    pub droplet_diameter: f64,
    pub autoconversion_rate: f64,
    pub autoconversion_threshold: f64,
    pub rain_intercept: f64,
    pub snow_intercept: f64,
    pub snow_density: f64,
    pub graupel_intercept: f64,
    pub graupel_density: f64,
    pub integrator: crate::physics::microphysics::params::Integrator,
    pub relative_tolerance: f64,
    pub absolute_tolerance: f64,
}

/// One imposed hydrometeor layer (m, kg kg-1, kg-1, s).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HydroLayerConfig {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub species: Option<crate::physics::microphysics::species::Species>,
    pub shape: LayerShape,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub center: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub thickness: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points: Option<Vec<Vec<f64>>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mixing_ratio: Option<f64>,
    pub number: f64,
    #[serde(flatten)]
    pub timing: EnvelopeConfig,
}

#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HydrometeorsConfig {
    #[serde(default)]
    pub layers: Vec<HydroLayerConfig>,
}

#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PrescribedChargeConfig {
    #[serde(default)]
    pub layers: Vec<LayerConfig>,
}

named_choice! {
    /// Vertical shape of an imposed layer (charge or hydrometeors); see
    /// [`crate::physics::profile::LayerShape`].
    pub enum LayerShape {
        TopHat = "top_hat",
        Gaussian = "gaussian",
        Table = "table",
    }
}

/// One prescribed layer; input units m, nC m-3, nC m-3 s-1.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LayerConfig {
    pub shape: LayerShape,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub center: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub thickness: Option<f64>,
    pub density: f64,
    pub growth_rate: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points: Option<Vec<Vec<f64>>>,
}

/// Input units: degC, fC, m; others dimensionless. The scheme and its own
/// parameters sit in this table beside the shared ones (the key check of
/// [`load`] rejects unknown keys; serde's `deny_unknown_fields` cannot be
/// combined with `flatten`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChargingConfig {
    #[serde(flatten)]
    pub scheme: crate::physics::charging::Scheme,
    pub scale: f64,
    pub max_charge_per_collision: f64,
    pub taper_start: f64,
    pub taper_end: f64,
    pub inductive: bool,
    pub inductive_rain: bool,
    pub graupel_snow: bool,
    pub riming_efficiency: crate::physics::charging::riming_efficiency::RimingEfficiency,
    pub inductive_cos_theta: f64,
    pub inductive_rebound_probability: f64,
}

named_choice! {
    pub enum Geometry {
        Planar = "planar",
        Column = "column",
    }
}

named_choice! {
    pub enum TopBoundary {
        FieldFree = "field_free",
        Conductor = "conductor",
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ElectrostaticsConfig {
    pub geometry: Geometry,
    pub top_boundary: TopBoundary,
    /// V.
    pub top_potential: f64,
}

named_choice! {
    /// Where the ion-pair production comes from.
    pub enum IonisationSource {
        /// Galactic cosmic rays after Slyunyaev et al. (2015), plus the
        /// optional surface radioactivity.
        Slyunyaev2015 = "slyunyaev_2015",
        /// A user table of production against height (`ions.ionisation_points`).
        Table = "table",
    }
}

/// Small ions, ionisation, conduction and point discharge. Input units as
/// in the key table (m-3, m-3 s-1, m2 V-1 s-1, m3 s-1, V m-1, degrees).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IonsConfig {
    pub enabled: bool,
    pub ionisation: IonisationSource,
    pub geomagnetic_latitude: f64,
    pub solar_cycle_phase: f64,
    pub ionisation_scale: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ionisation_points: Option<Vec<Vec<f64>>>,
    pub surface_radioactivity: f64,
    pub radioactivity_scale_height: f64,
    pub positive_mobility: f64,
    pub negative_mobility: f64,
    pub aerosol_number: f64,
    pub aerosol_scale_height: f64,
    pub aerosol_attachment: f64,
    pub cloud_droplet_number: f64,
    pub ground_corona: bool,
    pub corona_threshold: f64,
    pub corona_coefficient: f64,
    pub seed_electron_flux: f64,
}

/// Threshold fields in V m-1 at sea-level air density unless noted.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BreakdownConfig {
    pub trigger: crate::physics::breakdown::Criterion,
    pub conventional_field: f64,
    pub hydrometeor_enhancement: f64,
    pub positive_streamer_field: f64,
    pub negative_streamer_field: f64,
    pub runaway_field: f64,
    /// V m-1 per kg m-3.
    pub breakeven_coefficient: f64,
    /// V (energy per elementary charge).
    pub avalanche_energy_scale: f64,
    pub avalanche_friction_field: f64,
    pub avalanche_required_efolds: f64,
    pub avalanche_fit_floor: f64,
    pub persistence_time: f64,
    pub drop_corona_onset_1000: f64,
    pub drop_corona_onset_500: f64,
    pub ice_corona_onset_500: f64,
    /// degC.
    pub ice_corona_cutoff: f64,
    pub particle_charge_limits: bool,
    pub streamer_zone_depth: f64,
    pub leader_stem_charge: f64,
}

named_choice! {
    pub enum PropagationMode {
        FractionOfTrigger = "fraction_of_trigger",
        Absolute = "absolute",
    }
}

named_choice! {
    pub enum ChannelRule {
        LocalField = "local_field",
        Equipotential = "equipotential",
    }
}

named_choice! {
    pub enum NeutralizationMode {
        TargetField = "target_field",
        Fraction = "fraction",
    }
}

/// Input units: s, V m-1, nC m-3, m; fractions dimensionless.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DischargeConfig {
    pub enabled: bool,
    pub max_flashes_per_step: u32,
    pub min_interval: f64,
    pub locate_in_step: bool,
    pub require_hydrometeor_breakdown: bool,
    pub propagation: PropagationMode,
    pub propagation_fraction: f64,
    pub propagation_field: f64,
    pub propagation_density_scaled: bool,
    pub follow_charge: bool,
    pub min_charge_density: f64,
    pub neutralization: NeutralizationMode,
    pub target_fraction: f64,
    pub neutralization_fraction: f64,
    pub ground_connection_height: f64,
    pub negative_end_factor: f64,
    pub channel_rule: ChannelRule,
    /// V.
    pub leader_potential_margin: f64,
}

named_choice! {
    pub enum SweepCombine {
        Product = "product",
        Zip = "zip",
    }
}

/// One swept parameter.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepParameter {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub key: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub values: Option<Vec<toml::Value>>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepConfig {
    pub combine: SweepCombine,
    #[serde(default)]
    pub parameters: Vec<SweepParameter>,
    pub error_estimate: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutputConfig {
    pub file: String,
    pub title: String,
    /// s of wall clock.
    pub durable_interval: f64,
    pub deflate_level: i64,
    /// Names of the profile and series variables to write (None: all).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub variables: Option<Vec<String>>,
}

impl Config {
    /// The configuration as TOML text (what `check` prints and outputs store).
    pub fn to_toml(&self) -> String {
        // Serialising plain structs of numbers, strings and lists cannot fail.
        toml::to_string(self).unwrap_or_else(|e| format!("# serialisation failed: {e}\n"))
    }
}

/// The demo configuration, embedded in the binary; identical to configs/demo.toml.
pub const DEMO_TOML: &str = include_str!("../../../configs/demo.toml");
