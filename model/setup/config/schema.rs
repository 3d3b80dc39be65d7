//! The table of every configuration key: its kind, unit, allowed range,
//! default and meaning. Validation, defaults, the `init` template and the
//! reference in docs/configuration.md are all generated from this one table,
//! so they cannot drift apart.

/// What values a key accepts.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Kind {
    /// A real number in an interval; `*_open` excludes the end point.
    Float {
        lo: f64,
        lo_open: bool,
        hi: f64,
        hi_open: bool,
    },
    /// A whole number in an inclusive range.
    Integer { lo: i64, hi: i64 },
    /// true or false.
    Bool,
    /// One of a fixed list of names.
    Choice(&'static [&'static str]),
    /// Free text.
    Text,
    /// A UTC date and time, `YYYY-MM-DDTHH:MM:SSZ`.
    Timestamp,
    /// A file path.
    Path,
    /// A list of names (strings).
    Names,
    /// A table of numbers: a list of rows, each a list of numbers.
    Rows,
    /// A non-empty list of values of any type (sweep values).
    Values,
    /// A list of tables (TOML `[[section.key]]`), each checked against the
    /// given element keys (whose paths are `section.key.element_key`).
    TableArray(&'static [KeySpec]),
}

impl Kind {
    /// The allowed values in words, as printed in errors and documentation.
    pub fn allowed(&self) -> String {
        match self {
            Kind::Float {
                lo,
                lo_open,
                hi,
                hi_open,
            } => format!(
                "{}{}, {}{}",
                if *lo_open { "(" } else { "[" },
                fmt_num(*lo),
                fmt_num(*hi),
                if *hi_open { ")" } else { "]" }
            ),
            Kind::Choice(c) => c
                .iter()
                .map(|s| format!("\"{s}\""))
                .collect::<Vec<_>>()
                .join(", "),
            Kind::Integer { lo, hi } => format!("whole numbers {lo} to {hi}"),
            Kind::Bool => "true, false".into(),
            Kind::Text => "any text".into(),
            Kind::Timestamp => "a UTC time written YYYY-MM-DDTHH:MM:SSZ".into(),
            Kind::Path => "a file path".into(),
            Kind::Names => "a list of names".into(),
            Kind::Rows => "a list of rows of numbers".into(),
            Kind::TableArray(_) => "a list of tables ([[...]] blocks)".into(),
            Kind::Values => "a non-empty list of values".into(),
        }
    }

    /// True when `v` lies in a `Float` interval.
    pub fn contains(&self, v: f64) -> bool {
        match *self {
            Kind::Float {
                lo,
                lo_open,
                hi,
                hi_open,
            } => {
                let above = if lo_open { v > lo } else { v >= lo };
                let below = if hi_open { v < hi } else { v <= hi };
                above && below
            }
            _ => true,
        }
    }
}

fn fmt_num(x: f64) -> String {
    if x != 0.0 && (x.abs() >= 1e6 || x.abs() < 1e-3) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

/// One configuration key.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KeySpec {
    /// Dotted path: section(s), then the key.
    pub path: &'static str,
    pub kind: Kind,
    /// Unit in UDUNITS syntax; empty when dimensionless text or a name.
    pub unit: &'static str,
    /// Default as TOML text; `None` when the key has no default (optional or
    /// required only in some modes).
    pub default: Option<&'static str>,
    /// Meaning, one or two sentences.
    pub doc: &'static str,
}

impl KeySpec {
    /// Section part of the path (`atmosphere.analytic` for `atmosphere.analytic.lapse_rate`).
    pub fn section(&self) -> &'static str {
        self.path.rsplit_once('.').map_or("", |(s, _)| s)
    }

    /// Key name within its section.
    pub fn name(&self) -> &'static str {
        self.path.rsplit_once('.').map_or(self.path, |(_, k)| k)
    }
}

const fn float(lo: f64, lo_open: bool, hi: f64, hi_open: bool) -> Kind {
    Kind::Float {
        lo,
        lo_open,
        hi,
        hi_open,
    }
}

/// Every key, in the order sections appear in generated files.
pub const KEYS: &[KeySpec] = &[
    // --- grid
    KeySpec {
        path: "grid.top",
        kind: float(500.0, false, 80_000.0, false),
        unit: "m",
        default: Some("20000.0"),
        doc: "Height of the model top above ground. Must be a whole number of grid.spacing.",
    },
    KeySpec {
        path: "grid.spacing",
        kind: float(1.0, false, 5_000.0, false),
        unit: "m",
        default: Some("100.0"),
        doc: "Uniform vertical cell thickness.",
    },
    // --- time
    KeySpec {
        path: "time.step",
        kind: float(0.0, true, 600.0, false),
        unit: "s",
        default: Some("2.0"),
        doc: "Model time step: every process advances by this much per step (operator splitting).",
    },
    KeySpec {
        path: "time.duration",
        kind: float(0.0, true, 1.0e6, false),
        unit: "s",
        default: Some("3600.0"),
        doc: "Simulated time. Must be a whole number of time.step.",
    },
    KeySpec {
        path: "time.output_interval",
        kind: float(0.0, true, 1.0e6, false),
        unit: "s",
        default: Some("60.0"),
        doc: "Time between output records (the initial state is always written). A whole number of time.step, at most time.duration.",
    },
    KeySpec {
        path: "time.start",
        kind: Kind::Timestamp,
        unit: "",
        default: Some("\"2000-01-01T00:00:00Z\""),
        doc: "Model time zero, used as the reference of the CF time coordinate.",
    },
    // --- atmosphere
    KeySpec {
        path: "atmosphere.profile",
        kind: Kind::Choice(super::ProfileKind::NAMES),
        unit: "",
        default: Some("\"analytic\""),
        doc: "Source of the base state: the dry U.S. Standard Atmosphere 1976, the analytic profile of [atmosphere.analytic], or the sounding of [atmosphere.sounding].",
    },
    KeySpec {
        path: "atmosphere.analytic.surface_temperature",
        kind: float(200.0, false, 330.0, false),
        unit: "K",
        default: Some("300.0"),
        doc: "Air temperature at the ground.",
    },
    KeySpec {
        path: "atmosphere.analytic.surface_pressure",
        kind: float(50_000.0, false, 110_000.0, false),
        unit: "Pa",
        default: Some("100000.0"),
        doc: "Air pressure at the ground.",
    },
    KeySpec {
        path: "atmosphere.analytic.surface_relative_humidity",
        kind: float(0.0, false, 100.0, false),
        unit: "%",
        default: Some("80.0"),
        doc: "Relative humidity over liquid water at the ground.",
    },
    KeySpec {
        path: "atmosphere.analytic.tropopause_relative_humidity",
        kind: float(0.0, false, 100.0, false),
        unit: "%",
        default: Some("20.0"),
        doc: "Relative humidity over liquid water at the tropopause; linear in height below, constant above.",
    },
    KeySpec {
        path: "atmosphere.analytic.lapse_rate",
        kind: float(-20.0, false, 10.0, false),
        unit: "K km-1",
        default: Some("6.5"),
        doc: "Tropospheric lapse rate -dT/dz; positive when temperature falls with height.",
    },
    KeySpec {
        path: "atmosphere.analytic.tropopause_height",
        kind: float(1_000.0, false, 30_000.0, false),
        unit: "m",
        default: Some("12000.0"),
        doc: "Height of the tropopause above ground.",
    },
    KeySpec {
        path: "atmosphere.analytic.stratosphere_lapse_rate",
        kind: float(-20.0, false, 10.0, false),
        unit: "K km-1",
        default: Some("0.0"),
        doc: "Lapse rate -dT/dz above the tropopause; negative when temperature rises with height.",
    },
    KeySpec {
        path: "atmosphere.sounding.columns",
        kind: Kind::Names,
        unit: "",
        default: None,
        doc: "Column names of the inline table: \"height\" (m) or \"pressure\" (hPa); \"temperature\" (degC); \"dew_point\" (degC) or \"relative_humidity\" (%). Not used with a file, whose header line names the columns.",
    },
    KeySpec {
        path: "atmosphere.sounding.rows",
        kind: Kind::Rows,
        unit: "",
        default: None,
        doc: "Inline sounding, one row per level, bottom up, in the order of the columns. Must span the ground to grid.top.",
    },
    KeySpec {
        path: "atmosphere.sounding.file",
        kind: Kind::Path,
        unit: "",
        default: None,
        doc: "CSV sounding file, relative to the configuration file (header line of column names as for `columns`). Its rows are copied into the resolved configuration, so the output alone reproduces the run.",
    },
    KeySpec {
        path: "atmosphere.sounding.surface_pressure",
        kind: float(50_000.0, false, 110_000.0, false),
        unit: "Pa",
        default: None,
        doc: "Pressure at the ground; required for a height sounding, not allowed for a pressure sounding (whose first level is the ground).",
    },
    // --- updraft
    KeySpec {
        path: "updraft.shape",
        kind: Kind::Choice(super::UpdraftShape::NAMES),
        unit: "",
        default: Some("\"sine\""),
        doc: "Vertical shape: \"sine\" (half sine between bottom and top) or \"table\" (profile_points).",
    },
    KeySpec {
        path: "updraft.bottom",
        kind: float(0.0, false, 1.0e5, false),
        unit: "m",
        default: Some("0.0"),
        doc: "Lower end of the sine shape.",
    },
    KeySpec {
        path: "updraft.top",
        kind: float(0.0, true, 1.0e5, false),
        unit: "m",
        default: Some("12000.0"),
        doc: "Upper end of the sine shape.",
    },
    KeySpec {
        path: "updraft.profile_points",
        kind: Kind::Rows,
        unit: "",
        default: None,
        doc: "For shape = \"table\": rows [height (m), factor (1)], linear between, zero outside.",
    },
    KeySpec {
        path: "updraft.peak_speed",
        kind: float(0.0, false, 100.0, false),
        unit: "m s-1",
        default: Some("15.0"),
        doc: "Peak updraft speed w_peak (the default gives a storm in the 10-20 m/s class).",
    },
    KeySpec {
        path: "updraft.envelope",
        kind: Kind::Choice(super::EnvelopeKind::NAMES),
        unit: "",
        default: Some("\"pulse\""),
        doc: "Time envelope: \"constant\", \"pulse\" (sin^2 rise over growth, mature plateau, cos^2 decay) or \"table\" (envelope_points).",
    },
    KeySpec {
        path: "updraft.start",
        kind: float(0.0, false, 1.0e6, false),
        unit: "s",
        default: Some("0.0"),
        doc: "Start of the pulse.",
    },
    KeySpec {
        path: "updraft.growth",
        kind: float(0.0, true, 1.0e6, false),
        unit: "s",
        default: Some("600.0"),
        doc: "Rise time of the pulse.",
    },
    KeySpec {
        path: "updraft.mature",
        kind: float(0.0, false, 1.0e6, false),
        unit: "s",
        default: Some("1800.0"),
        doc: "Plateau time of the pulse.",
    },
    KeySpec {
        path: "updraft.decay",
        kind: float(0.0, true, 1.0e6, false),
        unit: "s",
        default: Some("900.0"),
        doc: "Decay time of the pulse.",
    },
    KeySpec {
        path: "updraft.envelope_points",
        kind: Kind::Rows,
        unit: "",
        default: None,
        doc: "For envelope = \"table\": rows [time (s), factor (1)], linear between, end values held outside.",
    },
    KeySpec {
        path: "updraft.background",
        kind: float(-10.0, false, 10.0, false),
        unit: "m s-1",
        default: Some("0.0"),
        doc: "Constant background vertical velocity added everywhere (negative: subsidence).",
    },
    // --- microphysics
    // --- the column as a whole
    KeySpec {
        path: "column.radius",
        kind: float(10.0, false, 1.0e7, false),
        unit: "m",
        default: Some("5000.0"),
        doc: "Radius of the storm column: the charged cylinder of electrostatics.geometry = \"column\" and the plume radius of the lateral entrainment.",
    },
    KeySpec {
        path: "column.entrainment",
        kind: Kind::Choice(crate::physics::kinematics::entrainment::Entrainment::NAMES),
        unit: "",
        default: Some("\"entraining_plume\""),
        doc: "Exchange of air with the environment through the column's sides (docs/transport.md): \"entraining_plume\" mixes in environmental air where the mass flux grows with height and at the turbulent rate entrainment_coefficient/radius per metre of rise; \"off\" keeps the column closed (air leaves or enters the sides only with the column's own properties).",
    },
    KeySpec {
        path: "column.entrainment_coefficient",
        kind: float(0.0, true, 2.0, true),
        unit: "1",
        default: Some("0.2"),
        doc: "Turbulent fractional entrainment rate times the radius, epsilon R: 0.2 after Stommel (1947) as used in one-dimensional entraining cloud models (twice the plume entrainment coefficient of Morton, Taylor & Turner 1956).",
    },
    KeySpec {
        path: "column.eddy_diffusivity",
        kind: float(0.0, false, 1.0e4, false),
        unit: "m2 s-1",
        default: Some("0.0"),
        doc: "Vertical eddy diffusivity K of the turbulence inside the column (first-order closure, docs/transport.md): potential temperature and vapour are mixed as departures from the base state, every other transported quantity as itself. 0 (the default) turns it off; the demo takes 100, estimated from dissipation rates measured in clouds (docs/transport.md), and docs/numerics.md measures its effect on convergence.",
    },
    KeySpec {
        path: "microphysics.scheme",
        kind: Kind::Choice(crate::physics::microphysics::Mode::NAMES),
        unit: "",
        default: Some("\"bulk\""),
        doc: "\"bulk\": the mixed-phase bulk scheme; \"prescribed\": hydrometeor profiles imposed from [[hydrometeors.layers]]; \"off\": no hydrometeors.",
    },
    KeySpec {
        path: "microphysics.ice_nucleation",
        kind: Kind::Choice(crate::physics::microphysics::params::Nucleation::NAMES),
        unit: "",
        default: Some("\"cooper_1986\""),
        doc: "Ice-nucleation parameterisation: Cooper (1986), Meyers et al. (1992) or Fletcher (1962).",
    },
    KeySpec {
        path: "microphysics.max_ice_nuclei",
        kind: float(0.0, true, 1.0e9, false),
        unit: "m-3",
        default: Some("1.0e5"),
        doc: "Upper bound on active ice nuclei (100 per litre by default; common practice).",
    },
    KeySpec {
        path: "microphysics.ice_nuclei_scale",
        kind: float(0.0, true, 1.0e4, false),
        unit: "1",
        default: Some("1.0"),
        doc: "Multiplier on the active ice-nucleus number of the chosen parameterisation (sensitivity studies; observed ice concentrations in storms often exceed nucleus counts).",
    },
    KeySpec {
        path: "microphysics.rime_splintering",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Secondary ice production by rime splintering (Hallett & Mossop 1974) between -3 and -8 degC.",
    },
    KeySpec {
        path: "microphysics.rain_ice_collection",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Supercooled rain collected by graupel freezes on it (Lin, Farley & Orville 1983, PGACR), within the heat balance of wet growth.",
    },
    KeySpec {
        path: "microphysics.droplet_diameter",
        kind: float(1.0e-6, false, 1.0e-4, false),
        unit: "m",
        default: Some("2.0e-5"),
        doc: "Diameter of the cloud droplets, one size for the microphysics and the charging (the small ions' attachment takes ions.cloud_droplet_number instead): the crystal mass homogeneous freezing makes of each droplet, the droplets' Bigg freezing volume, their collision efficiency on rimers (riming_efficiency = \"langmuir_1948\") and the droplets of inductive charging. 20 um (a 10 um radius, common practice).",
    },
    KeySpec {
        path: "microphysics.droplet_freezing",
        kind: Kind::Bool,
        unit: "",
        default: Some("false"),
        doc: "Immersion freezing of cloud droplets after Bigg (1953), B' [exp(A' (T0 - T)) - 1] per unit droplet volume and time with the constants of the rain law (Lin, Farley & Orville 1983, Eq. 45); cloud water left at -40 degC still freezes at once. Off by default, on in the demo: docs/microphysics.md gives its effect and why.",
    },
    KeySpec {
        path: "microphysics.cloud_equilibrium",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Hold the cloud water in equilibrium with the vapour inside the process integration too (condensation or evaporation at the rate that keeps liquid saturation while cloud water exists), not only at the saturation adjustments before and after it. false: deposition on ice can draw the vapour below liquid saturation for a whole step, so the transfer of cloud water to ice depends on the step (docs/numerics.md).",
    },
    KeySpec {
        path: "microphysics.rain_ice_contact_freezing",
        kind: Kind::Bool,
        unit: "",
        default: Some("false"),
        doc: "Supercooled drops that collect cloud-ice crystals freeze into graupel (Lin, Farley & Orville 1983, P_iacr and P_raci), no faster than the drops can give off the latent heat (Musil 1970 heat balance). Off by default: docs/microphysics.md gives its effect and why.",
    },
    KeySpec {
        path: "microphysics.autoconversion_rate",
        kind: float(0.0, false, 1.0, false),
        unit: "s-1",
        default: Some("1.0e-3"),
        doc: "Kessler (1969) autoconversion rate k1.",
    },
    KeySpec {
        path: "microphysics.autoconversion_threshold",
        kind: float(0.0, false, 0.01, false),
        unit: "kg kg-1",
        default: Some("1.0e-3"),
        doc: "Kessler (1969) autoconversion threshold q_c0.",
    },
    KeySpec {
        path: "microphysics.rain_intercept",
        kind: float(0.0, true, 1.0e10, false),
        unit: "m-4",
        default: Some("8.0e6"),
        doc: "Intercept N0 of the rain size distribution (Marshall & Palmer 1948; Lin et al. 1983).",
    },
    KeySpec {
        path: "microphysics.snow_intercept",
        kind: float(0.0, true, 1.0e10, false),
        unit: "m-4",
        default: Some("3.0e6"),
        doc: "Intercept N0 of the snow size distribution (Lin et al. 1983).",
    },
    KeySpec {
        path: "microphysics.snow_density",
        kind: float(10.0, false, 917.0, false),
        unit: "kg m-3",
        default: Some("100.0"),
        doc: "Bulk density of snow particles (Lin et al. 1983).",
    },
    KeySpec {
        path: "microphysics.graupel_intercept",
        kind: float(0.0, true, 1.0e10, false),
        unit: "m-4",
        default: Some("4.0e6"),
        doc: "Intercept N0 of the graupel size distribution (common in later bulk schemes).",
    },
    KeySpec {
        path: "microphysics.graupel_density",
        kind: float(50.0, false, 917.0, false),
        unit: "kg m-3",
        default: Some("400.0"),
        doc: "Bulk density of graupel (common in later bulk schemes).",
    },
    KeySpec {
        path: "microphysics.integrator",
        kind: Kind::Choice(crate::physics::microphysics::params::Integrator::NAMES),
        unit: "",
        default: Some("\"bogacki_shampine_1989\""),
        doc: "Integration of the process rates over each step: the adaptive Runge-Kutta pairs of Bogacki & Shampine (1989, orders 3(2)) or Dormand & Prince (1980, orders 5(4)), both allocation-free; \"ode_solvers_dopri5\" is the Dormand-Prince integrator of the ode_solvers crate, kept as an independent reference (slower).",
    },
    KeySpec {
        path: "microphysics.relative_tolerance",
        kind: float(0.0, true, 0.1, false),
        unit: "1",
        default: Some("1.0e-4"),
        doc: "Relative error tolerance of the adaptive integration of the process rates (per step; the default's effect on the demo is measured in docs/microphysics.md).",
    },
    KeySpec {
        path: "microphysics.absolute_tolerance",
        kind: float(0.0, true, 1.0e-3, false),
        unit: "1",
        default: Some("1.0e-12"),
        doc: "Absolute error tolerance of the adaptive integration (mixing ratios in kg kg-1).",
    },
    KeySpec {
        path: "hydrometeors.layers",
        kind: Kind::TableArray(HYDRO_LAYER_KEYS),
        unit: "",
        default: None,
        doc: "Imposed hydrometeor layers for microphysics.scheme = \"prescribed\", one [[hydrometeors.layers]] block each.",
    },
    // --- prescribed charge
    KeySpec {
        path: "prescribed_charge.layers",
        kind: Kind::TableArray(LAYER_KEYS),
        unit: "",
        default: None,
        doc: "Charge layers put into the column by prescription (no microphysics needed), one [[prescribed_charge.layers]] block each. None by default.",
    },
    // --- charging
    KeySpec {
        path: "charging.scheme",
        kind: Kind::Choice(crate::physics::charging::Scheme::NAMES),
        unit: "",
        default: Some("\"saunders_peck_1998\""),
        doc: "Non-inductive charging scheme for rebounding graupel-ice, graupel-snow and snow-ice collisions (docs/charging.md).",
    },
    KeySpec {
        path: "charging.reversal_temperature",
        kind: float(-30.0, false, -5.0, false),
        unit: "degC",
        default: Some("-15.0"),
        doc: "Reversal temperature T_r of gardiner_1985 (graupel charges positively warmer, negatively colder).",
    },
    KeySpec {
        path: "charging.table_file",
        kind: Kind::Path,
        unit: "",
        default: None,
        doc: "CSV of the table scheme (scheme = \"table\"), relative to the configuration file: temperature_degC,liquid_water_g_m3,charge_fC (or rime_accretion_rate_g_m2_s as the second column), one row per grid point of a complete grid; charge_fC is q of dq = B d^a V^b q (docs/charging.md). The resolved configuration holds the table inline instead (table_columns, table_rows).",
    },
    KeySpec {
        path: "charging.table_columns",
        kind: Kind::Names,
        unit: "",
        default: None,
        doc: "Inline table of the table scheme: the three column names, as in a table file's header (a resolved configuration holds the file's table this way).",
    },
    KeySpec {
        path: "charging.table_rows",
        kind: Kind::Rows,
        unit: "",
        default: None,
        doc: "Inline table of the table scheme: rows [temperature (degC), liquid water (g m-3) or rime accretion rate (g m-2 s-1), charge (fC)].",
    },
    KeySpec {
        path: "charging.scale",
        kind: float(0.0, false, 1000.0, false),
        unit: "1",
        default: Some("1.0"),
        doc: "Multiplier on the charge per collision (sensitivity studies).",
    },
    KeySpec {
        path: "charging.max_charge_per_collision",
        kind: float(0.0, true, 1.0e4, false),
        unit: "fC",
        default: Some("100.0"),
        doc: "Cap on |charge| per collision; laboratory values lie within about 0.1-100 fC (docs/references.md).",
    },
    KeySpec {
        path: "charging.taper_start",
        kind: float(-60.0, false, 0.0, false),
        unit: "degC",
        default: Some("-30.0"),
        doc: "Low-temperature taper: full charging down to this temperature...",
    },
    KeySpec {
        path: "charging.taper_end",
        kind: float(-70.0, false, 0.0, false),
        unit: "degC",
        default: Some("-40.0"),
        doc: "...falling linearly to zero here (laboratory data end near -30 degC; no liquid below -40 degC).",
    },
    KeySpec {
        path: "charging.inductive",
        kind: Kind::Bool,
        unit: "",
        default: Some("false"),
        doc: "Inductive charging of graupel by rebounding cloud droplets in the vertical field (and of rain with inductive_rain).",
    },
    KeySpec {
        path: "charging.inductive_rain",
        kind: Kind::Bool,
        unit: "",
        default: Some("false"),
        doc: "Also charge rain inductively. Off by default: the laboratory support (Jennings 1975) is for droplets rebounding from ice targets; droplets meeting drops mostly coalesce (docs/charging.md).",
    },
    KeySpec {
        path: "charging.graupel_snow",
        kind: Kind::Bool,
        unit: "",
        default: Some("false"),
        doc: "Non-inductive charging in graupel-snow collisions. Off by default: the laboratory laws were measured with vapour-grown crystals of tens to a few hundred micrometres, not with snow aggregates, so using them for snow extrapolates the size law (docs/charging.md); in the demo every collision that reached the max_charge_per_collision cap was a graupel-snow one.",
    },
    KeySpec {
        path: "charging.riming_efficiency",
        kind: Kind::Choice(crate::physics::charging::riming_efficiency::RimingEfficiency::NAMES),
        unit: "",
        default: Some("\"langmuir_1948\""),
        doc: "Collision efficiency E of cloud droplets on the rimer in the effective water content E LWC of the rime accretion rate (saunders_peck_1998, and tables on the rime-accretion-rate axis): \"langmuir_1948\" from the Stokes number of 20 um droplets on the collector's mass-weighted mean size and speed (Langmuir 1948; 0.7-0.85 for mm graupel); \"unity\" uses the liquid water content itself (docs/charging.md).",
    },
    KeySpec {
        path: "charging.inductive_cos_theta",
        kind: float(0.0, false, 1.0, false),
        unit: "1",
        default: Some("0.2"),
        doc: "Mean cosine of the contact angle <cos theta> (uncertain: 0.1-0.3).",
    },
    KeySpec {
        path: "charging.inductive_rebound_probability",
        kind: float(0.0, false, 1.0, false),
        unit: "1",
        default: Some("0.01"),
        doc: "Fraction of droplet contacts that rebound (uncertain: 1e-3 to 1e-1).",
    },
    // --- electrostatics
    KeySpec {
        path: "electrostatics.geometry",
        kind: Kind::Choice(super::Geometry::NAMES),
        unit: "",
        default: Some("\"planar\""),
        doc: "\"planar\": horizontally infinite layers over a conducting ground. \"column\": charge confined to a vertical cylinder of radius column.radius over a conducting ground (image charges); field and potential on the axis.",
    },
    KeySpec {
        path: "electrostatics.top_boundary",
        kind: Kind::Choice(super::TopBoundary::NAMES),
        unit: "",
        default: Some("\"field_free\""),
        doc: "Planar geometry only. \"field_free\": no field above the model top (all flux ends on the ground). \"conductor\": the top is a conductor at top_potential.",
    },
    KeySpec {
        path: "electrostatics.top_potential",
        kind: float(-1.0e10, false, 1.0e10, false),
        unit: "V",
        default: Some("0.0"),
        doc: "Potential of the top conductor (planar geometry, top_boundary = \"conductor\").",
    },
    // --- breakdown and inception criteria
    // --- small ions and conduction (docs/ions.md)
    KeySpec {
        path: "ions.enabled",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Small ions as prognostic fields: ionisation, recombination, attachment to aerosol and hydrometeors, drift in the field (conduction) and point discharge at the ground. false: charge released by evaporating hydrometeors stays as a passive space charge that moves with the air and never conducts.",
    },
    KeySpec {
        path: "ions.ionisation",
        kind: Kind::Choice(crate::setup::config::IonisationSource::NAMES),
        unit: "",
        default: Some("\"slyunyaev_2015\""),
        doc: "Ion-pair production: \"slyunyaev_2015\", galactic cosmic rays against height, geomagnetic latitude and solar-cycle phase (Slyunyaev et al. 2015), plus surface_radioactivity; \"table\", the rows of ionisation_points.",
    },
    KeySpec {
        path: "ions.geomagnetic_latitude",
        kind: float(-90.0, false, 90.0, false),
        unit: "degree",
        default: Some("45.0"),
        doc: "Geomagnetic latitude of the column: sets the geomagnetic cutoff of the cosmic rays (the poles receive the most).",
    },
    KeySpec {
        path: "ions.solar_cycle_phase",
        kind: float(0.0, false, 1.0, false),
        unit: "1",
        default: Some("0.5"),
        doc: "Solar modulation of the cosmic rays: 0 at solar minimum (most ionisation), 1 at solar maximum.",
    },
    KeySpec {
        path: "ions.ionisation_scale",
        kind: float(0.0, false, 100.0, false),
        unit: "1",
        default: Some("1.0"),
        doc: "Factor on the cosmic-ray ion-pair production, for experiments: 0.95 is a Forbush decrease of 5 %.",
    },
    KeySpec {
        path: "ions.ionisation_points",
        kind: Kind::Rows,
        unit: "",
        default: None,
        doc: "For ionisation = \"table\": rows [height (m), ion-pair production (m-3 s-1)], linear between, the end values beyond. ionisation_scale applies.",
    },
    KeySpec {
        path: "ions.surface_radioactivity",
        kind: float(0.0, false, 1.0e9, false),
        unit: "m-3 s-1",
        default: Some("0.0"),
        doc: "Ion-pair production by radon and soil radioactivity at the ground (several 1e6 m-3 s-1 over land, zero over the sea), decreasing as exp(-z/radioactivity_scale_height).",
    },
    KeySpec {
        path: "ions.radioactivity_scale_height",
        kind: float(10.0, false, 1.0e5, false),
        unit: "m",
        default: Some("1000.0"),
        doc: "Height scale of the radioactive ionisation.",
    },
    KeySpec {
        path: "ions.positive_mobility",
        kind: float(1.0e-6, false, 1.0e-2, false),
        unit: "m2 V-1 s-1",
        default: Some("1.4e-4"),
        doc: "Positive small-ion mobility at 1013.25 hPa and 15 degC; scaled as (p0/p)(T/T0)^0.6 (Tammet 1998).",
    },
    KeySpec {
        path: "ions.negative_mobility",
        kind: float(1.0e-6, false, 1.0e-2, false),
        unit: "m2 V-1 s-1",
        default: Some("1.9e-4"),
        doc: "Negative small-ion mobility at 1013.25 hPa and 15 degC, scaled like the positive one.",
    },
    KeySpec {
        path: "ions.aerosol_number",
        kind: float(0.0, false, 1.0e13, false),
        unit: "m-3",
        default: Some("5.0e8"),
        doc: "Aerosol particle number at the ground that takes up small ions; decreases as exp(-z/aerosol_scale_height). 5e8 m-3 (500 per cm3) is clean air.",
    },
    KeySpec {
        path: "ions.aerosol_scale_height",
        kind: float(10.0, false, 1.0e5, false),
        unit: "m",
        default: Some("3000.0"),
        doc: "Height scale of the aerosol number.",
    },
    KeySpec {
        path: "ions.aerosol_attachment",
        kind: float(0.0, false, 1.0e-9, false),
        unit: "m3 s-1",
        default: Some("1.0e-11"),
        doc: "Ion-aerosol combination coefficient (1e-5 cm3 s-1, AMS Glossary of Meteorology); the attached charge stays on the aerosol, which moves with the air.",
    },
    KeySpec {
        path: "ions.cloud_droplet_number",
        kind: float(1.0e6, false, 1.0e10, false),
        unit: "m-3",
        default: Some("3.0e8"),
        doc: "Cloud droplet number concentration, used only for the droplets' radius in ion attachment (the bulk scheme carries no droplet number).",
    },
    KeySpec {
        path: "ions.ground_corona",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Point discharge from objects on the ground when the surface field exceeds corona_threshold.",
    },
    KeySpec {
        path: "ions.corona_threshold",
        kind: float(100.0, false, 1.0e6, false),
        unit: "V m-1",
        default: Some("5000.0"),
        doc: "Surface field at which point discharge begins (a few kV/m over land).",
    },
    KeySpec {
        path: "ions.corona_coefficient",
        kind: float(0.0, false, 1.0e-12, false),
        unit: "A V-2",
        default: Some("1.0e-17"),
        doc: "A in the areal point-discharge current J = A (E^2 - E0^2): 1e-17 gives 0.75 nA m-2 at 10 kV/m with a 5 kV/m threshold.",
    },
    KeySpec {
        path: "ions.seed_electron_flux",
        kind: float(0.0, false, 1.0e8, false),
        unit: "m-2 s-1",
        default: Some("100.0"),
        doc: "Flux of energetic secondary cosmic-ray electrons at sea level; it follows the cosmic-ray ionisation with height, latitude and solar phase. Reported as the seed of runaway avalanches.",
    },
    KeySpec {
        path: "breakdown.trigger",
        kind: Kind::Choice(crate::physics::breakdown::Criterion::NAMES),
        unit: "",
        default: Some("\"avalanche_multiplication\""),
        doc: "The criterion that starts a flash (docs/criteria.md compares them). Default: the runaway avalanche gain reaching avalanche_required_efolds e-foldings, the proxy of relativistic feedback, which lets the field overshoot the runaway threshold as observed.",
    },
    KeySpec {
        path: "breakdown.conventional_field",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("3.0e6"),
        doc: "Conventional breakdown field at sea-level air density; scaled by relative air density delta. Default: AMS Glossary of Meteorology, \"electrical breakdown\".",
    },
    KeySpec {
        path: "breakdown.hydrometeor_enhancement",
        kind: float(1.0, false, 1.0e4, false),
        unit: "1",
        default: Some("3.0"),
        doc: "Factor by which a hydrometeor enhances the ambient field at its surface; breakdown at the surface needs conventional_field * delta / factor ambient. Default 3: conducting sphere (textbook electrostatics).",
    },
    KeySpec {
        path: "breakdown.positive_streamer_field",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("4.5e5"),
        doc: "Positive streamer propagation (stability) field at sea-level density. Default: Allen & Ghaffar (1995), Griffiths & Phelps (1976).",
    },
    KeySpec {
        path: "breakdown.negative_streamer_field",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("1.25e6"),
        doc: "Negative streamer propagation field at sea-level density. Default: upper value in Raizer, Gas Discharge Physics (1991).",
    },
    KeySpec {
        path: "breakdown.runaway_field",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("2.84e5"),
        doc: "Relativistic runaway electron avalanche threshold at sea-level density. Default: Dwyer (2003), GRL 30, 2055 (from memory; secondary sources agree).",
    },
    KeySpec {
        path: "breakdown.breakeven_coefficient",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m2 kg-1",
        default: Some("1.67e5"),
        doc: "Runaway breakeven field per unit air density: E_be = coefficient * rho_air. Default 167 kV/m per kg m-3: Marshall, McCarthy & Rust (1995), JGR 100 (from memory).",
    },
    KeySpec {
        path: "breakdown.avalanche_energy_scale",
        kind: float(0.0, true, 1.0e9, false),
        unit: "V",
        default: Some("7.3e6"),
        doc: "Numerator of the avalanche e-folding length lambda = scale / (|E| - friction_field * delta), i.e. 7.3 MeV per elementary charge. Coleman & Dwyer (2006), GRL 33 (from memory).",
    },
    KeySpec {
        path: "breakdown.avalanche_friction_field",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("2.76e5"),
        doc: "Effective friction field in the avalanche length (0.276 MeV/m per elementary charge at sea-level density). Coleman & Dwyer (2006) (from memory).",
    },
    KeySpec {
        path: "breakdown.avalanche_required_efolds",
        kind: float(0.0, true, 1.0e4, false),
        unit: "1",
        default: Some("10.0"),
        doc: "Number of avalanche e-foldings (integral of dz/lambda over a stretch above the runaway threshold) for the avalanche_multiplication criterion to hold: a gain of e^10 = 2.2e4, inside the 1e3-1e5 sometimes used as a proxy of relativistic feedback. A modelling choice, not a published constant.",
    },
    KeySpec {
        path: "breakdown.avalanche_fit_floor",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("3.0e5"),
        doc: "Lowest field (at sea-level density) at which the avalanche-length fit is used; between the runaway threshold and this field the growth rate rises linearly from zero (docs/criteria.md).",
    },
    KeySpec {
        path: "breakdown.persistence_time",
        kind: float(0.0, false, 3600.0, false),
        unit: "s",
        default: Some("0.0"),
        doc: "Time the trigger must hold without a break before a flash starts (0: the first step it holds). A modelling choice that lets the field overshoot.",
    },
    KeySpec {
        path: "breakdown.drop_corona_onset_1000",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("9.0e5"),
        doc: "Ambient field of corona onset at falling drops at 1000 hPa: Griffiths & Latham (1972), J. Meteor. Soc. Japan 50.",
    },
    KeySpec {
        path: "breakdown.drop_corona_onset_500",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("5.5e5"),
        doc: "The same at 500 hPa (Griffiths & Latham 1972); linear in pressure between and beyond.",
    },
    KeySpec {
        path: "breakdown.ice_corona_onset_500",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("4.0e5"),
        doc: "Ambient field of corona onset at millimetre ice particles in mid-cloud conditions, taken at 500 hPa and scaled with pressure like the drops': Griffiths & Latham (1974), QJRMS 100.",
    },
    KeySpec {
        path: "breakdown.ice_corona_cutoff",
        kind: float(-60.0, false, 0.0, false),
        unit: "degC",
        default: Some("-18.0"),
        doc: "Below this temperature ice does not go into corona (corona from ice is drastically reduced below about -18 degC, Griffiths & Latham 1974).",
    },
    KeySpec {
        path: "breakdown.particle_charge_limits",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Corona and Rayleigh limits on the charge of the largest particles: charge above them leaves the particles (corona: to small ions; drop disruption: to cloud droplets).",
    },
    KeySpec {
        path: "breakdown.streamer_zone_depth",
        kind: float(0.0, true, 1.0e5, false),
        unit: "m",
        default: Some("10.0"),
        doc: "Depth of a zone above the positive-streamer field, containing corona-active hydrometeors, for the hydrometeor_streamers criterion to hold. A modelling choice.",
    },
    KeySpec {
        path: "breakdown.leader_stem_charge",
        kind: float(0.0, true, 1.0, false),
        unit: "C",
        default: Some("1.0e-6"),
        doc: "Charge a streamer zone must hold to heat a common stem into a leader (about 1 uC: Gallimberti 1979; Bazelyan & Raizer 2000; from memory).",
    },
    // --- discharge
    KeySpec {
        path: "discharge.enabled",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Whether flashes happen. With false the field builds without limit (useful to study the criteria alone).",
    },
    KeySpec {
        path: "discharge.max_flashes_per_step",
        kind: Kind::Integer { lo: 1, hi: 1000 },
        unit: "1",
        default: Some("10"),
        doc: "Upper bound on flashes in one time step; reaching it is reported as a warning (the step or thresholds need attention).",
    },
    KeySpec {
        path: "discharge.min_interval",
        kind: float(0.0, false, 1.0e5, false),
        unit: "s",
        default: Some("0.0"),
        doc: "Optional gate: no flash within this time of the previous one.",
    },
    KeySpec {
        path: "discharge.locate_in_step",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Start a flash at the time its trigger is reached instead of at the end of the step in which it is: the step is split where the trigger margin, extrapolated from the last two step ends, reaches zero (docs/numerics.md). With false, flash times are whole steps.",
    },
    KeySpec {
        path: "discharge.require_hydrometeor_breakdown",
        kind: Kind::Bool,
        unit: "",
        default: Some("false"),
        doc: "Optional gate: a flash starts only where the hydrometeor_breakdown criterion also holds.",
    },
    KeySpec {
        path: "discharge.propagation",
        kind: Kind::Choice(super::PropagationMode::NAMES),
        unit: "",
        default: Some("\"fraction_of_trigger\""),
        doc: "How the propagation field is set: \"fraction_of_trigger\" (propagation_fraction times the local trigger threshold) or \"absolute\" (propagation_field, optionally scaled with air density).",
    },
    KeySpec {
        path: "discharge.propagation_fraction",
        kind: float(0.0, true, 1.0, false),
        unit: "1",
        default: Some("0.375"),
        doc: "Propagation field as a fraction of the local trigger threshold. Default: the ratio 150/400 kV/m of propagation to initiation fields used in published schemes (from memory, low confidence).",
    },
    KeySpec {
        path: "discharge.propagation_field",
        kind: float(0.0, true, 1.0e8, false),
        unit: "V m-1",
        default: Some("1.5e5"),
        doc: "Absolute propagation field (at sea-level density when propagation_density_scaled). Default 150 kV/m, from published schemes (from memory, low confidence).",
    },
    KeySpec {
        path: "discharge.propagation_density_scaled",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Scale the absolute propagation field with the relative air density delta.",
    },
    KeySpec {
        path: "discharge.follow_charge",
        kind: Kind::Bool,
        unit: "",
        default: Some("true"),
        doc: "Let each channel end also keep going through charge of the polarity it seeks while its density exceeds min_charge_density, even where the field has fallen below the propagation field.",
    },
    KeySpec {
        path: "discharge.min_charge_density",
        kind: float(0.0, false, 1.0e3, false),
        unit: "nC m-3",
        default: Some("0.1"),
        doc: "Charge density below which a channel does not follow charge and which neutralisation leaves in place. Default 0.1 nC m-3, recalled from published schemes (from memory).",
    },
    KeySpec {
        path: "discharge.neutralization",
        kind: Kind::Choice(super::NeutralizationMode::NAMES),
        unit: "",
        default: Some("\"target_field\""),
        doc: "\"target_field\": remove the amount that brings the largest |E|/threshold in the channel down to target_fraction. \"fraction\": remove neutralization_fraction of the excess charge.",
    },
    KeySpec {
        path: "discharge.target_fraction",
        kind: float(0.0, false, 1.0, true),
        unit: "1",
        default: Some("0.5"),
        doc: "Largest |E|/trigger threshold left in the channel after a flash (target_field mode). A modelling choice.",
    },
    KeySpec {
        path: "discharge.neutralization_fraction",
        kind: float(0.0, true, 1.0, false),
        unit: "1",
        default: Some("0.5"),
        doc: "Fraction of the excess charge (above min_charge_density) removed in the channel (fraction mode). A modelling choice.",
    },
    KeySpec {
        path: "discharge.ground_connection_height",
        kind: float(0.0, false, 1.0e5, false),
        unit: "m",
        default: Some("1000.0"),
        doc: "A channel whose lower end reaches this height above ground connects to ground: a ground flash. A modelling choice.",
    },
    KeySpec {
        path: "discharge.negative_end_factor",
        kind: float(1.0, false, 100.0, false),
        unit: "1",
        default: Some("2.0"),
        doc: "Asymmetry of the bidirectional channel: the propagation field is what the negative end needs, the positive end needs it divided by this factor. Negative streamers need 7.5-12.5 kV/cm against 4.5-5 for positive ones at sea level (Raizer 1991, via secondary sources), a ratio of about 1.5-2.8; 1 makes the channel symmetric.",
    },
    KeySpec {
        path: "discharge.channel_rule",
        kind: Kind::Choice(super::ChannelRule::NAMES),
        unit: "",
        default: Some("\"local_field\""),
        doc: "How a channel grows (docs/discharge.md): \"local_field\" (each end advances while the field is at least the propagation field, or through charge it seeks when follow_charge) or \"equipotential\" (that channel is then extended as a floating conductor with zero net charge, Kasemir 1960: each end keeps advancing while the ambient potential differs from the channel's, in the end's direction, by more than leader_potential_margin).",
    },
    KeySpec {
        path: "discharge.leader_potential_margin",
        kind: float(0.0, false, 1.0e10, false),
        unit: "V",
        default: Some("0.0"),
        doc: "Equipotential rule only: the potential difference between channel and ambient air that the negative end needs to advance; the positive end needs it divided by negative_end_factor. 0 (the default) lets an end advance wherever its induced charge keeps its polarity, the most permissive case; a larger margin is a modelling choice (no published value was verified here).",
    },
    // --- sweep
    KeySpec {
        path: "sweep.combine",
        kind: Kind::Choice(super::SweepCombine::NAMES),
        unit: "",
        default: Some("\"product\""),
        doc: "How the value lists of [[sweep.parameters]] combine into members: \"product\" (every combination) or \"zip\" (the i-th value of every list together; lists of equal length). Used only by `stormcharge sweep`.",
    },
    KeySpec {
        path: "sweep.error_estimate",
        kind: Kind::Bool,
        unit: "",
        default: Some("false"),
        doc: "Also run every member at half and a quarter of its time step and of its grid spacing (no output files; about thirteen times the work of the member) and report, for the peak field and the main negative charge, the relative error of the member's own settings the convergence command would report: observed order and Richardson extrapolate from the three levels (the finest value stands in when the levels are not in the asymptotic range); with the structure classes (at the largest separation and of the flashing stage), the flash count and the ground flashes at half the step and at half the spacing, which `analyze` of the sweep compares with the member's own.",
    },
    KeySpec {
        path: "sweep.parameters",
        kind: Kind::TableArray(SWEEP_PARAMETER_KEYS),
        unit: "",
        default: None,
        doc: "Parameters varied by `stormcharge sweep`, one [[sweep.parameters]] block each. `run` ignores them.",
    },
    // --- output
    KeySpec {
        path: "output.file",
        kind: Kind::Path,
        unit: "",
        default: Some("\"stormcharge_output.nc\""),
        doc: "NetCDF output file, relative to the working directory. Written as <file>.<process id>.incomplete and renamed over <file> only when the run succeeds (docs/output.md). `run -o` overrides it.",
    },
    KeySpec {
        path: "output.durable_interval",
        kind: float(0.0, false, 3600.0, false),
        unit: "s",
        default: Some("5.0"),
        doc: "Longest wall-clock time records are held in memory before they are written, handed to the operating system and forced to the disk (fsync); they are also written whenever about 4 MiB are held. 0: every record written and forced at once. A killed run loses at most this interval of records.",
    },
    KeySpec {
        path: "output.deflate_level",
        kind: Kind::Integer { lo: 0, hi: 9 },
        unit: "1",
        default: Some("0"),
        doc: "NetCDF-4 deflate compression of the time-dependent variables (with byte shuffling): 0 off, 1 fast, 9 smallest. Level 1 usually gives most of the gain.",
    },
    KeySpec {
        path: "output.variables",
        kind: Kind::Names,
        unit: "",
        default: None,
        doc: "Profile and time-series variables to write, by their names in the output (docs/output.md); without this key all of them. The coordinates, the flash records and the global attributes are always written. A large ensemble that keeps a few fields writes smaller member files, and each member spends less time in the NetCDF library (docs/performance.md). `analyze` needs charge_density, air_temperature and electric_field; `plot` the fields it draws.",
    },
    KeySpec {
        path: "output.title",
        kind: Kind::Text,
        unit: "",
        default: Some("\"stormcharge column experiment\""),
        doc: "Free-text title stored in the output's global attribute `title`.",
    },
];

/// Keys of one `[[prescribed_charge.layers]]` block.
pub const LAYER_KEYS: &[KeySpec] = &[
    KeySpec {
        path: "prescribed_charge.layers.shape",
        kind: Kind::Choice(super::LayerShape::NAMES),
        unit: "",
        default: Some("\"top_hat\""),
        doc: "\"top_hat\": uniform between center -/+ thickness/2. \"gaussian\": exp(-(z-center)^2/(2 s^2)) with s = thickness/sqrt(2 pi), so it holds the same charge as the top hat. \"table\": a dimensionless shape factor against height from `points`.",
    },
    KeySpec {
        path: "prescribed_charge.layers.center",
        kind: float(0.0, false, 1.0e5, false),
        unit: "m",
        default: None,
        doc: "Height of the layer centre above ground (top_hat and gaussian).",
    },
    KeySpec {
        path: "prescribed_charge.layers.thickness",
        kind: float(0.0, true, 1.0e5, false),
        unit: "m",
        default: None,
        doc: "Layer thickness (top_hat and gaussian).",
    },
    KeySpec {
        path: "prescribed_charge.layers.density",
        kind: float(-1.0e4, false, 1.0e4, false),
        unit: "nC m-3",
        default: Some("0.0"),
        doc: "Initial charge density where the shape factor is 1.",
    },
    KeySpec {
        path: "prescribed_charge.layers.growth_rate",
        kind: float(-1.0e3, false, 1.0e3, false),
        unit: "nC m-3 s-1",
        default: Some("0.0"),
        doc: "Rate at which the density grows where the shape factor is 1 (charge keeps being added at this rate; discharges remove charge).",
    },
    KeySpec {
        path: "prescribed_charge.layers.points",
        kind: Kind::Rows,
        unit: "",
        default: None,
        doc: "For shape = \"table\": rows [height (m), shape factor (1)], increasing in height; linear between points, zero outside.",
    },
];

/// Keys of one `[[hydrometeors.layers]]` block.
pub const HYDRO_LAYER_KEYS: &[KeySpec] = &[
    KeySpec {
        path: "hydrometeors.layers.species",
        kind: Kind::Choice(crate::physics::microphysics::species::Species::HYDROMETEOR_NAMES),
        unit: "",
        default: None,
        doc: "Which species this layer imposes (required).",
    },
    KeySpec {
        path: "hydrometeors.layers.shape",
        kind: Kind::Choice(super::LayerShape::NAMES),
        unit: "",
        default: Some("\"gaussian\""),
        doc: "\"gaussian\": exp(-(z-center)^2/(2 s^2)), s = thickness/sqrt(2 pi); \"top_hat\": 1 within thickness/2 of center; \"table\": factor against height from points.",
    },
    KeySpec {
        path: "hydrometeors.layers.center",
        kind: float(0.0, false, 1.0e5, false),
        unit: "m",
        default: None,
        doc: "Centre height (gaussian).",
    },
    KeySpec {
        path: "hydrometeors.layers.thickness",
        kind: float(0.0, true, 1.0e5, false),
        unit: "m",
        default: None,
        doc: "Thickness (gaussian).",
    },
    KeySpec {
        path: "hydrometeors.layers.points",
        kind: Kind::Rows,
        unit: "",
        default: None,
        doc: "For shape = \"table\": rows [height (m), factor (1)].",
    },
    KeySpec {
        path: "hydrometeors.layers.mixing_ratio",
        kind: float(0.0, false, 0.05, false),
        unit: "kg kg-1",
        default: None,
        doc: "Peak mixing ratio (required).",
    },
    KeySpec {
        path: "hydrometeors.layers.number",
        kind: float(0.0, false, 1.0e12, false),
        unit: "kg-1",
        default: Some("0.0"),
        doc: "Peak crystal number (cloud ice only; needed there).",
    },
    KeySpec {
        path: "hydrometeors.layers.envelope",
        kind: Kind::Choice(super::EnvelopeKind::NAMES),
        unit: "",
        default: Some("\"constant\""),
        doc: "Time envelope, as for the updraft.",
    },
    KeySpec {
        path: "hydrometeors.layers.start",
        kind: float(0.0, false, 1.0e6, false),
        unit: "s",
        default: Some("0.0"),
        doc: "Start of the pulse envelope.",
    },
    KeySpec {
        path: "hydrometeors.layers.growth",
        kind: float(0.0, true, 1.0e6, false),
        unit: "s",
        default: Some("600.0"),
        doc: "Rise time of the pulse envelope.",
    },
    KeySpec {
        path: "hydrometeors.layers.mature",
        kind: float(0.0, false, 1.0e6, false),
        unit: "s",
        default: Some("1800.0"),
        doc: "Plateau of the pulse envelope.",
    },
    KeySpec {
        path: "hydrometeors.layers.decay",
        kind: float(0.0, true, 1.0e6, false),
        unit: "s",
        default: Some("900.0"),
        doc: "Decay time of the pulse envelope.",
    },
    KeySpec {
        path: "hydrometeors.layers.envelope_points",
        kind: Kind::Rows,
        unit: "",
        default: None,
        doc: "For envelope = \"table\": rows [time (s), factor (1)].",
    },
];

/// Keys of one `[[sweep.parameters]]` block.
pub const SWEEP_PARAMETER_KEYS: &[KeySpec] = &[
    KeySpec {
        path: "sweep.parameters.key",
        kind: Kind::Text,
        unit: "",
        default: None,
        doc: "Dotted configuration key to vary, e.g. \"updraft.peak_speed\" (required).",
    },
    KeySpec {
        path: "sweep.parameters.values",
        kind: Kind::Values,
        unit: "",
        default: None,
        doc: "Values the key takes, in the key's own type and unit (required).",
    },
];

/// Looks a key up by its dotted path.
pub fn find(path: &str) -> Option<&'static KeySpec> {
    index().keys.get(path).copied()
}

/// The keys by path and the sections (every dotted prefix of a key), built
/// once: each configuration read looks up every key it holds, and a sweep
/// reads one configuration per member.
struct Index {
    keys: std::collections::HashMap<&'static str, &'static KeySpec>,
    sections: std::collections::HashSet<&'static str>,
}

fn index() -> &'static Index {
    static INDEX: std::sync::OnceLock<Index> = std::sync::OnceLock::new();
    INDEX.get_or_init(|| {
        let mut keys = std::collections::HashMap::new();
        let mut sections = std::collections::HashSet::new();
        for k in KEYS {
            // The first of two specs with one path wins, as a search in
            // order would find it.
            keys.entry(k.path).or_insert(k);
            for (i, _) in k.path.match_indices('.') {
                sections.insert(&k.path[..i]);
            }
        }
        Index { keys, sections }
    })
}

/// [`find`], or the key of one element of an array of tables
/// (`prescribed_charge.layers.density`).
pub fn find_any(path: &str) -> Option<&'static KeySpec> {
    find(path).or_else(|| {
        KEYS.iter().find_map(|k| match k.kind {
            Kind::TableArray(elements) => elements.iter().find(|e| e.path == path),
            _ => None,
        })
    })
}

/// True when `path` is a section (some key lives under it).
pub fn is_section(path: &str) -> bool {
    index().sections.contains(path)
}

/// The names directly under a section (keys and sub-sections), for "did you
/// mean" lists in errors.
pub fn children(section: &str) -> Vec<&'static str> {
    let mut out: Vec<&'static str> = Vec::new();
    for k in KEYS {
        let rest = if section.is_empty() {
            Some(k.path)
        } else {
            k.path
                .strip_prefix(section)
                .and_then(|r| r.strip_prefix('.'))
        };
        if let Some(rest) = rest {
            let first = rest.split('.').next().unwrap_or(rest);
            if !out.contains(&first) {
                out.push(first);
            }
        }
    }
    out
}

/// Section paths in order of first appearance.
pub fn sections() -> Vec<&'static str> {
    let mut out: Vec<&'static str> = Vec::new();
    for k in KEYS {
        if !out.contains(&k.section()) {
            out.push(k.section());
        }
    }
    out
}
