//! An in-memory observer: keeps every record, for tests and analysis.

use super::{record_len, variables, Observer, OutputVar};
use crate::column::state::State;
use crate::error::RunError;
use crate::output::summary::RunSummary;
use crate::setup::experiment::Experiment;
use std::collections::BTreeMap;

/// Records of every registered variable, by name, plus the record times (s).
/// Time-independent variables hold a single record.
#[derive(Default)]
pub struct MemoryRecorder {
    pub times: Vec<f64>,
    pub data: BTreeMap<String, Vec<Vec<f64>>>,
    pub finished: bool,
    /// Every flash of the run (complete after `finish`).
    pub flashes: Vec<crate::physics::discharge::record::FlashRecord>,
    vars: Vec<OutputVar>,
}

impl MemoryRecorder {
    /// All records of one variable.
    pub fn get(&self, name: &str) -> &[Vec<f64>] {
        self.data.get(name).map_or(&[], |v| v.as_slice())
    }

    /// One value per record of a time-series variable.
    pub fn series(&self, name: &str) -> Vec<f64> {
        self.get(name).iter().map(|r| r[0]).collect()
    }
}

impl MemoryRecorder {
    /// Copies the flashes the state holds beyond those already kept.
    fn catch_up(&mut self, state: &State) {
        self.flashes
            .extend_from_slice(state.ledger.unseen(self.flashes.len()));
    }
}

impl Observer for MemoryRecorder {
    fn begin(&mut self, exp: &Experiment) -> Result<(), RunError> {
        self.vars = variables(exp);
        Ok(())
    }

    fn record(&mut self, exp: &Experiment, state: &State) -> Result<(), RunError> {
        let first = self.times.is_empty();
        self.catch_up(state);
        self.times.push(state.time);
        for var in &self.vars {
            if var.is_static() && !first {
                continue;
            }
            let mut buf = vec![0.0; record_len(exp, var)];
            (var.fill)(exp, state, &mut buf);
            self.data.entry(var.name.clone()).or_default().push(buf);
        }
        Ok(())
    }

    fn finish(
        &mut self,
        _exp: &Experiment,
        state: &State,
        _summary: &RunSummary,
    ) -> Result<(), RunError> {
        self.catch_up(state);
        self.finished = true;
        Ok(())
    }
}
