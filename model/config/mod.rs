//! Experiment configuration: one TOML file describes a whole run.
//!
//! Two stages. [`load`] parses the text, rejects unknown keys, type- and
//! range-checks every value against the key table in [`schema`], applies
//! `--set` overrides the same way and fills in defaults, giving a [`Config`].
//! [`crate::experiment::Experiment`] then checks the relations between keys
//! and builds the grid and base state. The resolved [`Config`] (defaults filled
//! in, sounding files inlined) is what `check` prints and what every output
//! file stores, so a run is reproduced from its output alone.

pub mod load;
pub mod schema;
pub mod template;

use serde::{Deserialize, Serialize};

pub use load::{parse, parse_with_overrides};

/// The resolved configuration. Field docs give units; the full reference with
/// ranges and defaults is [`schema::KEYS`] and docs/configuration.md.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Config {
    pub grid: GridConfig,
    pub time: TimeConfig,
    pub atmosphere: AtmosphereConfig,
    pub updraft: UpdraftConfig,
    pub microphysics: MicrophysicsConfig,
    #[serde(default)]
    pub hydrometeors: HydrometeorsConfig,
    #[serde(default)]
    pub prescribed_charge: PrescribedChargeConfig,
    pub charging: ChargingConfig,
    pub electrostatics: ElectrostaticsConfig,
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

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ProfileKind {
    #[serde(rename = "standard_1976")]
    Standard1976,
    Analytic,
    Sounding,
}

impl ProfileKind {
    /// The configuration name.
    pub fn name(self) -> &'static str {
        match self {
            ProfileKind::Standard1976 => "standard_1976",
            ProfileKind::Analytic => "analytic",
            ProfileKind::Sounding => "sounding",
        }
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

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum UpdraftShape {
    Sine,
    Table,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum EnvelopeKind {
    Constant,
    Pulse,
    Table,
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

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum MicroScheme {
    Bulk,
    Prescribed,
    Off,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum NucleationKind {
    #[serde(rename = "cooper_1986")]
    Cooper1986,
    #[serde(rename = "meyers_1992")]
    Meyers1992,
    #[serde(rename = "fletcher_1962")]
    Fletcher1962,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum IntegratorKind {
    #[serde(rename = "bogacki_shampine_1989")]
    BogackiShampine1989,
    #[serde(rename = "dormand_prince_1980")]
    DormandPrince1980,
    #[serde(rename = "ode_solvers_dopri5")]
    OdeSolversDopri5,
}

/// Input units as in the key table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MicrophysicsConfig {
    pub scheme: MicroScheme,
    pub ice_nucleation: NucleationKind,
    pub max_ice_nuclei: f64,
    pub ice_nuclei_scale: f64,
    pub rime_splintering: bool,
    pub autoconversion_rate: f64,
    pub autoconversion_threshold: f64,
    pub rain_intercept: f64,
    pub snow_intercept: f64,
    pub snow_density: f64,
    pub graupel_intercept: f64,
    pub graupel_density: f64,
    pub integrator: IntegratorKind,
    pub relative_tolerance: f64,
    pub absolute_tolerance: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum HydroName {
    Cloud,
    Rain,
    Ice,
    Snow,
    Graupel,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum HydroShape {
    Gaussian,
    Table,
}

/// One imposed hydrometeor layer (m, kg kg-1, kg-1, s).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HydroLayerConfig {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub species: Option<HydroName>,
    pub shape: HydroShape,
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

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LayerShape {
    TopHat,
    Gaussian,
    Table,
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

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum ChargingScheme {
    #[serde(rename = "off")]
    Off,
    #[serde(rename = "gardiner_1985")]
    Gardiner1985,
    #[serde(rename = "saunders_peck_1998")]
    SaundersPeck1998,
}

/// Input units: degC, fC, m; others dimensionless.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ChargingConfig {
    pub scheme: ChargingScheme,
    pub reversal_temperature: f64,
    pub scale: f64,
    pub max_charge_per_collision: f64,
    pub taper_start: f64,
    pub taper_end: f64,
    pub inductive: bool,
    pub inductive_cos_theta: f64,
    pub inductive_rebound_probability: f64,
    pub inductive_droplet_diameter: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Geometry {
    Planar,
    Column,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TopBoundary {
    FieldFree,
    Conductor,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ElectrostaticsConfig {
    pub geometry: Geometry,
    pub top_boundary: TopBoundary,
    /// V.
    pub top_potential: f64,
    /// m.
    pub column_radius: f64,
}

/// Threshold fields in V m-1 at sea-level air density unless noted.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BreakdownConfig {
    pub trigger: crate::breakdown::Criterion,
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
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PropagationMode {
    FractionOfTrigger,
    Absolute,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum NeutralizationMode {
    TargetField,
    Fraction,
}

/// Input units: s, V m-1, nC m-3, m; fractions dimensionless.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DischargeConfig {
    pub enabled: bool,
    pub max_flashes_per_step: u32,
    pub min_interval: f64,
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
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SweepCombine {
    Product,
    Zip,
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
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutputConfig {
    pub file: String,
    pub title: String,
}

impl Config {
    /// The configuration as TOML text (what `check` prints and outputs store).
    pub fn to_toml(&self) -> String {
        // Serialising plain structs of numbers, strings and lists cannot fail.
        toml::to_string(self).unwrap_or_else(|e| format!("# serialisation failed: {e}\n"))
    }
}

/// The demo configuration, embedded in the binary; identical to configs/demo.toml.
pub const DEMO_TOML: &str = include_str!("../../configs/demo.toml");
