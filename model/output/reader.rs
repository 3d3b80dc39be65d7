//! Reading stormcharge output files back (for `analyze` and `plot`).

use crate::error::RunError;
use std::path::{Path, PathBuf};

/// Global attribute marking whether the run finished.
pub const STATUS_ATTRIBUTE: &str = "run_status";

/// Global attribute holding the resolved configuration (TOML text).
pub const CONFIG_ATTRIBUTE: &str = "run_configuration";

/// An opened output file with errors that name it.
pub struct OutputFile {
    path: PathBuf,
    pub file: netcdf::File,
}

impl OutputFile {
    pub fn open(path: &Path) -> Result<Self, RunError> {
        // A missing or unreadable input file is a usage error (exit 2), with
        // the path and the operating system's reason.
        let usage = |message: String| RunError::Usage {
            context: format!("output file {}", path.display()),
            message,
        };
        if let Err(e) = std::fs::metadata(path) {
            return Err(usage(format!("cannot read it: {e}")));
        }
        crate::output::quiet_library_diagnostics();
        let file = netcdf::open(path)
            .map_err(|x| usage(format!("not a NetCDF file stormcharge can read ({x})")))?;
        Ok(OutputFile {
            path: path.to_path_buf(),
            file,
        })
    }

    fn error(path: &Path, message: String) -> RunError {
        RunError::Output {
            context: format!("reading {}", path.display()),
            message,
        }
    }

    /// An error about this file.
    pub fn fail(&self, message: String) -> RunError {
        Self::error(&self.path, message)
    }

    /// All values of a variable as f64.
    pub fn values(&self, name: &str) -> Result<Vec<f64>, RunError> {
        self.file
            .variable(name)
            .ok_or_else(|| self.fail(self.missing(name)))?
            .get_values::<f64, _>(..)
            .map_err(|x| self.fail(x.to_string()))
    }

    /// Why a variable is missing: a run that chose its variables
    /// (`output.variables` in the stored configuration) left it out;
    /// otherwise the file is not a stormcharge output.
    fn missing(&self, name: &str) -> String {
        let chosen = self
            .text(CONFIG_ATTRIBUTE)
            .and_then(|t| crate::setup::config::parse(&t, "stored").ok())
            .and_then(|c| c.output.variables);
        match chosen {
            Some(v) => format!(
                "variable {name} missing: the run wrote only the variables its output.variables named ({}); run it again with {name} among them",
                if v.is_empty() { "none".to_string() } else { v.join(", ") }
            ),
            None => format!("variable {name} missing: not a stormcharge output"),
        }
    }

    /// All values of an optional variable (empty when it is absent).
    pub fn optional<T: netcdf::NcTypeDescriptor + Copy>(
        &self,
        name: &str,
    ) -> Result<Vec<T>, RunError> {
        match self.file.variable(name) {
            Some(v) => v
                .get_values::<T, _>(..)
                .map_err(|x| self.fail(x.to_string())),
            None => Ok(Vec::new()),
        }
    }

    /// Checks that the file can be analysed or drawn: at least one time
    /// record and one level, and only finite values in `variables`. Returns
    /// warnings for a usable file that is not marked complete or holds
    /// fields no air can hold.
    pub fn usable(&self, variables: &[&str]) -> Result<Vec<String>, RunError> {
        let len = |d: &str| self.file.dimension(d).map_or(0, |d| d.len());
        if len("time") == 0 {
            return Err(self.fail(
                "has no time records (a run stopped right after writing its header)".into(),
            ));
        }
        if len("z") == 0 {
            return Err(self.fail("has no levels".into()));
        }
        let mut warnings = Vec::new();
        match self.text(STATUS_ATTRIBUTE) {
            Some(s) if s == "complete" => {}
            Some(s) => warnings.push(format!(
                "{} is marked run_status = \"{s}\": the run did not finish, so the file holds only what was written before it stopped",
                self.path.display()
            )),
            None => warnings.push(format!(
                "{} has no run_status attribute: it may not be a stormcharge output",
                self.path.display()
            )),
        }
        for name in variables {
            let v = self.values(name)?;
            if let Some(x) = v.iter().find(|x| !x.is_finite()) {
                return Err(self.fail(format!(
                    "variable {name} holds a value that is not a finite number ({x}): the run that wrote it broke down"
                )));
            }
            if *name == "electric_field" {
                let peak = v.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
                if peak > 1e7 {
                    warnings.push(format!(
                        "{}: |E_z| reaches {peak:.3e} V/m, more than three times the conventional breakdown field at sea level: the run's field ran away",
                        self.path.display()
                    ));
                }
            }
        }
        Ok(warnings)
    }

    /// A text global attribute, if present.
    pub fn text(&self, name: &str) -> Option<String> {
        match self.file.attribute(name).and_then(|a| a.value().ok()) {
            Some(netcdf::AttributeValue::Str(s)) => Some(s),
            _ => None,
        }
    }
}

/// Reads the resolved configuration and run status stored in an output file.
pub fn read_stored_configuration(path: &Path) -> Result<(String, String), RunError> {
    let e = |m: String| RunError::Output {
        context: format!("reading {}", path.display()),
        message: m,
    };
    let f = OutputFile::open(path)?.file;
    let text = |name: &str| -> Result<String, RunError> {
        match f.attribute(name).map(|a| a.value()) {
            Some(Ok(netcdf::AttributeValue::Str(s))) => Ok(s),
            Some(Ok(_)) => Err(e(format!("attribute {name} is not text"))),
            Some(Err(x)) => Err(e(x.to_string())),
            None => Err(e(format!("no attribute {name}: not a stormcharge output"))),
        }
    };
    Ok((text(CONFIG_ATTRIBUTE)?, text(STATUS_ATTRIBUTE)?))
}
