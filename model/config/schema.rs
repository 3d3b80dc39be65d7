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
            Kind::Text => "any text".into(),
            Kind::Timestamp => "a UTC time written YYYY-MM-DDTHH:MM:SSZ".into(),
            Kind::Path => "a file path".into(),
            Kind::Names => "a list of names".into(),
            Kind::Rows => "a list of rows of numbers".into(),
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

/// Profile names accepted by `atmosphere.profile`.
pub const PROFILES: &[&str] = &["standard_1976", "analytic", "sounding"];

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
        kind: Kind::Choice(PROFILES),
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
    // --- output
    KeySpec {
        path: "output.file",
        kind: Kind::Path,
        unit: "",
        default: Some("\"stormcharge_output.nc\""),
        doc: "NetCDF output file, relative to the working directory. Written as <file>.incomplete and renamed when the run succeeds. `run -o` overrides it.",
    },
    KeySpec {
        path: "output.title",
        kind: Kind::Text,
        unit: "",
        default: Some("\"stormcharge column experiment\""),
        doc: "Free-text title stored in the output's global attribute `title`.",
    },
];

/// Looks a key up by its dotted path.
pub fn find(path: &str) -> Option<&'static KeySpec> {
    KEYS.iter().find(|k| k.path == path)
}

/// True when `path` is a section (some key lives under it).
pub fn is_section(path: &str) -> bool {
    KEYS.iter().any(|k| {
        k.path.len() > path.len()
            && k.path.starts_with(path)
            && k.path.as_bytes()[path.len()] == b'.'
    })
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
