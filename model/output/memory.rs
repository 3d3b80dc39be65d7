//! An in-memory observer: keeps every record, for tests and analysis.

use super::{record_len, Observer, VARIABLES};
use crate::error::RunError;
use crate::experiment::Experiment;
use crate::state::State;
use crate::timeloop::RunSummary;
use std::collections::BTreeMap;

/// Records of every registered variable, by name, plus the record times (s).
#[derive(Debug, Default, Clone)]
pub struct MemoryRecorder {
    pub times: Vec<f64>,
    pub data: BTreeMap<&'static str, Vec<Vec<f64>>>,
    pub finished: bool,
}

impl Observer for MemoryRecorder {
    fn begin(&mut self, _exp: &Experiment) -> Result<(), RunError> {
        Ok(())
    }

    fn record(&mut self, exp: &Experiment, state: &State) -> Result<(), RunError> {
        self.times.push(state.time);
        for var in VARIABLES {
            let mut buf = vec![0.0; record_len(exp, var)];
            (var.fill)(exp, state, &mut buf);
            self.data.entry(var.name).or_default().push(buf);
        }
        Ok(())
    }

    fn finish(&mut self, _exp: &Experiment, _summary: &RunSummary) -> Result<(), RunError> {
        self.finished = true;
        Ok(())
    }
}
