//! Error types. A configuration problem (exit code 2) is kept apart from a
//! failure while running (exit code 1) so the command line can tell them apart.

use std::fmt;

/// One problem with one configuration key.
#[derive(Debug, Clone, PartialEq)]
pub struct ConfigIssue {
    /// Dotted key path, e.g. `grid.spacing`.
    pub key: String,
    /// The offending value as the user wrote it (TOML text), if there is one.
    pub value: Option<String>,
    /// Unit of the key (UDUNITS syntax), if it has one.
    pub unit: Option<String>,
    /// Allowed values or range, in words.
    pub allowed: Option<String>,
    /// 1-based line in the configuration file, when known.
    pub line: Option<usize>,
    /// The file that line is in, when it is not the configuration named by
    /// the error's origin (a base configuration it includes).
    pub file: Option<String>,
    /// What is wrong.
    pub message: String,
}

impl ConfigIssue {
    /// An issue with only a key and a message; builder methods add the rest.
    pub fn new(key: impl Into<String>, message: impl Into<String>) -> Self {
        ConfigIssue {
            key: key.into(),
            value: None,
            unit: None,
            allowed: None,
            line: None,
            file: None,
            message: message.into(),
        }
    }

    pub fn value(mut self, v: impl Into<String>) -> Self {
        self.value = Some(v.into());
        self
    }

    pub fn unit(mut self, u: impl Into<String>) -> Self {
        let u = u.into();
        if !u.is_empty() {
            self.unit = Some(u);
        }
        self
    }

    pub fn allowed(mut self, a: impl Into<String>) -> Self {
        self.allowed = Some(a.into());
        self
    }

    pub fn line(mut self, l: Option<usize>) -> Self {
        self.line = l;
        self
    }
}

/// A number as an error message shows it: plain between 1e-4 and 1e9 (and
/// zero), in exponent form outside, so that `1e300` is not written out as
/// three hundred digits nor `1e-300` as zeros.
pub fn shown_number(x: f64) -> String {
    if wants_exponent(x) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

/// Whether [`shown_number`] writes `x` in exponent form: finite, nonzero
/// and outside 1e-4..1e9 in magnitude.
pub fn wants_exponent(x: f64) -> bool {
    x != 0.0 && x.is_finite() && !(1e-4..1e9).contains(&x.abs())
}

impl fmt::Display for ConfigIssue {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "`{}`", self.key)?;
        if let Some(v) = &self.value {
            write!(f, " = {v}")?;
        }
        if let Some(u) = &self.unit {
            write!(f, " [{u}]")?;
        }
        write!(f, ": {}", self.message)?;
        if let Some(a) = &self.allowed {
            write!(f, "; allowed: {a}")?;
            // A dimensionless key's unit "1" after a range reads as a number.
            if let Some(u) = self.unit.as_ref().filter(|u| *u != "1") {
                write!(f, " {u}")?;
            }
        }
        match (self.line, &self.file) {
            (Some(l), Some(file)) => write!(f, " (line {l} of {file})")?,
            (Some(l), None) => write!(f, " (line {l})")?,
            _ => {}
        }
        Ok(())
    }
}

/// Every problem found in one configuration, with where it came from.
#[derive(Debug, Clone, PartialEq)]
pub struct ConfigError {
    /// File name, `<embedded demo>`, `--set`, or similar.
    pub origin: String,
    pub issues: Vec<ConfigIssue>,
}

impl ConfigError {
    pub fn single(origin: impl Into<String>, issue: ConfigIssue) -> Self {
        ConfigError {
            origin: origin.into(),
            issues: vec![issue],
        }
    }
}

impl fmt::Display for ConfigError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let n = self.issues.len();
        write!(
            f,
            "configuration {}: {} problem{}",
            self.origin,
            n,
            if n == 1 { "" } else { "s" }
        )?;
        for issue in &self.issues {
            write!(f, "\n  - {issue}")?;
        }
        Ok(())
    }
}

impl std::error::Error for ConfigError {}

/// Anything that stops a run.
#[derive(Debug, thiserror::Error)]
pub enum RunError {
    #[error("{0}")]
    Config(#[from] ConfigError),
    #[error("{context}: {source}")]
    Io {
        context: String,
        #[source]
        source: std::io::Error,
    },
    #[error("{context}: {message}")]
    Output { context: String, message: String },
    /// A file named on the command line that cannot be used as asked (a
    /// usage error, exit code 2), such as an output file to analyse that
    /// is missing or is not NetCDF.
    #[error("{context}: {message}")]
    Usage { context: String, message: String },
    #[error("numerical failure at t = {time} s: {message}")]
    Numerics { time: f64, message: String },
    /// Some members of a sweep failed (the others' results are written).
    #[error("{failed} of {total} sweep members failed; see {}", summary.display())]
    MembersFailed {
        failed: usize,
        total: usize,
        summary: std::path::PathBuf,
    },
    /// A guard of `crate::column::guards` stopped the run: a quantity left
    /// the finite numbers or its physical range.
    #[error("run stopped at t = {time} s after {process}: {message}")]
    Stopped {
        time: f64,
        process: &'static str,
        message: String,
    },
}

impl RunError {
    /// Process exit code: 2 for configuration and usage errors, 3 for a
    /// sweep in which some members failed, 1 otherwise.
    pub fn exit_code(&self) -> i32 {
        match self {
            RunError::Config(_) | RunError::Usage { .. } => 2,
            RunError::MembersFailed { .. } => 3,
            _ => 1,
        }
    }
}
