//! Reading stormcharge output files back (for `analyze` and `plot`).

use crate::error::RunError;
use std::path::{Path, PathBuf};

/// An opened output file with errors that name it.
pub struct OutputFile {
    path: PathBuf,
    pub file: netcdf::File,
}

impl OutputFile {
    pub fn open(path: &Path) -> Result<Self, RunError> {
        let file = netcdf::open(path).map_err(|x| Self::error(path, x.to_string()))?;
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
            .ok_or_else(|| self.fail(format!("variable {name} missing: not a stormcharge output")))?
            .get_values::<f64, _>(..)
            .map_err(|x| self.fail(x.to_string()))
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

    /// A text global attribute, if present.
    pub fn text(&self, name: &str) -> Option<String> {
        match self.file.attribute(name).and_then(|a| a.value().ok()) {
            Some(netcdf::AttributeValue::Str(s)) => Some(s),
            _ => None,
        }
    }
}
