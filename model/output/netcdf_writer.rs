//! CF-1.10 NetCDF output.
//!
//! The file is written under `<name>.incomplete` with the global attribute
//! `run_status = "incomplete"`, synced after every record so a killed run
//! keeps what it wrote, and only after a successful run marked
//! `run_status = "complete"` and renamed to `<name>`. A failed run therefore
//! never leaves a file that looks complete.

use super::{
    flash_variables, record_len, variables, FlashValue, FlashVar, Observer, OutputVar, Placement,
};
use crate::column::state::State;
use crate::error::RunError;
use crate::output::summary::RunSummary;
use crate::physics::discharge::record::FlashRecord;
use crate::setup::experiment::Experiment;
use std::path::{Path, PathBuf};

/// Global attribute holding the resolved configuration (TOML text).
pub const CONFIG_ATTRIBUTE: &str = "run_configuration";
/// Global attribute marking whether the run finished.
pub const STATUS_ATTRIBUTE: &str = "run_status";

/// The NetCDF observer.
pub struct NetcdfWriter {
    target: PathBuf,
    partial: PathBuf,
    history: String,
    file: Option<netcdf::FileMut>,
    vars: Vec<OutputVar>,
    flash_vars: Vec<FlashVar>,
    flashes_written: usize,
    record: usize,
    buffer: Vec<f64>,
}

fn nc_err(context: &str) -> impl Fn(netcdf::Error) -> RunError + '_ {
    move |e| RunError::Output {
        context: context.to_string(),
        message: e.to_string(),
    }
}

/// The name a run writes to before it succeeds.
pub fn partial_path(target: &Path) -> PathBuf {
    let mut s = target.as_os_str().to_owned();
    s.push(".incomplete");
    PathBuf::from(s)
}

impl NetcdfWriter {
    /// A writer for `target`; `command_line` goes into the `history` attribute.
    pub fn new(target: &Path, command_line: &str) -> Self {
        NetcdfWriter {
            target: target.to_path_buf(),
            partial: partial_path(target),
            history: format!("{}: {}", utc_now(), command_line),
            file: None,
            vars: Vec::new(),
            flash_vars: Vec::new(),
            flashes_written: 0,
            record: 0,
            buffer: Vec::new(),
        }
    }

    fn define(&mut self, exp: &Experiment) -> Result<netcdf::FileMut, RunError> {
        let e = nc_err("definition");
        let mut f = netcdf::create(&self.partial).map_err(&e)?;
        let n = exp.grid.len();
        f.add_unlimited_dimension("time").map_err(&e)?;
        f.add_dimension("z", n).map_err(&e)?;
        f.add_dimension("z_face", n + 1).map_err(&e)?;
        f.add_unlimited_dimension("flash").map_err(&e)?;

        let cfg = &exp.config;
        let start = cfg.time.start.replace('T', " ").replace('Z', "");
        let globals: [(&str, String); 9] = [
            ("Conventions", "CF-1.10".into()),
            ("title", cfg.output.title.clone()),
            ("source", format!("stormcharge {}", env!("CARGO_PKG_VERSION"))),
            ("history", self.history.clone()),
            (
                "comment",
                "Output of a one-dimensional research and teaching model of thunderstorm electrification. \
                 It is not a lightning-safety or forecasting product; protection decisions follow local codes \
                 and licensed practice."
                    .into(),
            ),
            ("featureType", "profile".into()),
            (CONFIG_ATTRIBUTE, cfg.to_toml()),
            (STATUS_ATTRIBUTE, "incomplete".into()),
            ("flash_trigger_criterion", cfg.breakdown.trigger.name().into()),
        ];
        for (k, v) in globals {
            f.add_attribute(k, v).map_err(&e)?;
        }

        let mut time = f.add_variable::<f64>("time", &["time"]).map_err(&e)?;
        time.put_attribute("standard_name", "time").map_err(&e)?;
        time.put_attribute("long_name", "model time").map_err(&e)?;
        time.put_attribute("units", format!("seconds since {start}"))
            .map_err(&e)?;
        time.put_attribute("calendar", "standard").map_err(&e)?;
        time.put_attribute("axis", "T").map_err(&e)?;

        for (name, values, long) in [
            ("z", &exp.grid.z, "height of cell centre above ground"),
            (
                "z_face",
                &exp.grid.z_face,
                "height of cell face above ground",
            ),
        ] {
            let mut v = f.add_variable::<f64>(name, &[name]).map_err(&e)?;
            v.put_attribute("standard_name", "height").map_err(&e)?;
            v.put_attribute("long_name", long).map_err(&e)?;
            v.put_attribute("units", "m").map_err(&e)?;
            v.put_attribute("positive", "up").map_err(&e)?;
            v.put_attribute("axis", "Z").map_err(&e)?;
            v.put_values(values, ..).map_err(&e)?;
        }

        for var in &self.vars {
            let dims: &[&str] = match var.placement {
                Placement::Centre => &["time", "z"],
                Placement::Face => &["time", "z_face"],
                Placement::Series => &["time"],
                Placement::StaticFace => &["z_face"],
            };
            let mut v = f.add_variable::<f64>(&var.name, dims).map_err(&e)?;
            if let Some(sn) = var.standard_name {
                v.put_attribute("standard_name", sn).map_err(&e)?;
            }
            v.put_attribute("long_name", var.long_name.as_str())
                .map_err(&e)?;
            v.put_attribute("units", var.units).map_err(&e)?;
            if !var.comment.is_empty() {
                v.put_attribute("comment", var.comment).map_err(&e)?;
            }
        }
        let mut ft = f
            .add_variable::<f64>("flash_time", &["flash"])
            .map_err(&e)?;
        ft.put_attribute(
            "long_name",
            "model time of the flash (end of its time step)",
        )
        .map_err(&e)?;
        ft.put_attribute("units", format!("seconds since {start}"))
            .map_err(&e)?;
        ft.put_attribute("calendar", "standard").map_err(&e)?;
        for var in &self.flash_vars {
            match var.value {
                FlashValue::Real => {
                    let mut v = f.add_variable::<f64>(&var.name, &["flash"]).map_err(&e)?;
                    v.put_attribute("long_name", var.long_name.as_str())
                        .map_err(&e)?;
                    v.put_attribute("units", var.units).map_err(&e)?;
                }
                FlashValue::Flag(values, meanings) => {
                    let mut v = f.add_variable::<i32>(&var.name, &["flash"]).map_err(&e)?;
                    v.put_attribute("long_name", var.long_name.as_str())
                        .map_err(&e)?;
                    v.put_attribute("flag_values", values.to_vec())
                        .map_err(&e)?;
                    v.put_attribute("flag_meanings", meanings).map_err(&e)?;
                }
            }
        }
        f.sync().map_err(&e)?;
        Ok(f)
    }
}

impl Observer for NetcdfWriter {
    fn begin(&mut self, exp: &Experiment) -> Result<(), RunError> {
        // A stale complete file under the target name would be mistaken for
        // this run's result if this run failed, so it goes first.
        if self.target.exists() {
            std::fs::remove_file(&self.target).map_err(|source| RunError::Io {
                context: format!("removing old output {}", self.target.display()),
                source,
            })?;
        }
        self.vars = variables(exp);
        self.flash_vars = flash_variables(exp);
        self.file = Some(self.define(exp)?);
        Ok(())
    }

    fn record(&mut self, exp: &Experiment, state: &State) -> Result<(), RunError> {
        let e = nc_err("record");
        let f = self.file.as_mut().ok_or_else(|| RunError::Output {
            context: "record".into(),
            message: "file not open".into(),
        })?;
        let t = self.record;
        f.variable_mut("time")
            .ok_or_else(|| RunError::Output {
                context: "record".into(),
                message: "variable time missing".into(),
            })?
            .put_value(state.time, [t])
            .map_err(&e)?;
        for var in &self.vars {
            if var.is_static() && t > 0 {
                continue;
            }
            let len = record_len(exp, var);
            self.buffer.resize(len, 0.0);
            (var.fill)(exp, state, &mut self.buffer[..len]);
            let mut v = f.variable_mut(&var.name).ok_or_else(|| RunError::Output {
                context: "record".into(),
                message: format!("variable {} missing", var.name),
            })?;
            match var.placement {
                Placement::Series => v.put_value(self.buffer[0], [t]),
                Placement::StaticFace => v.put_values(&self.buffer[..len], ..),
                Placement::Centre | Placement::Face => v.put_values(&self.buffer[..len], (t, ..)),
            }
            .map_err(&e)?;
        }
        write_flashes(
            f,
            &self.flash_vars,
            &state.ledger.flashes,
            self.flashes_written,
        )?;
        self.flashes_written = state.ledger.flashes.len();
        f.sync().map_err(&e)?;
        self.record += 1;
        Ok(())
    }

    fn finish(
        &mut self,
        _exp: &Experiment,
        state: &State,
        _summary: &RunSummary,
    ) -> Result<(), RunError> {
        let e = nc_err("closing");
        let mut f = self.file.take().ok_or_else(|| RunError::Output {
            context: "closing".into(),
            message: "file not open".into(),
        })?;
        write_flashes(
            &mut f,
            &self.flash_vars,
            &state.ledger.flashes,
            self.flashes_written,
        )?;
        self.flashes_written = state.ledger.flashes.len();
        f.add_attribute(STATUS_ATTRIBUTE, "complete").map_err(&e)?;
        f.close().map_err(&e)?;
        std::fs::rename(&self.partial, &self.target).map_err(|source| RunError::Io {
            context: format!(
                "renaming {} to {}",
                self.partial.display(),
                self.target.display()
            ),
            source,
        })
    }
}

/// Appends `flashes[from..]` on the `flash` dimension.
fn write_flashes(
    f: &mut netcdf::FileMut,
    vars: &[FlashVar],
    flashes: &[FlashRecord],
    from: usize,
) -> Result<(), RunError> {
    let e = nc_err("flash records");
    let missing = |name: &str| RunError::Output {
        context: "flash records".into(),
        message: format!("variable {name} missing"),
    };
    for (i, rec) in flashes.iter().enumerate().skip(from) {
        f.variable_mut("flash_time")
            .ok_or_else(|| missing("flash_time"))?
            .put_value(rec.time, [i])
            .map_err(&e)?;
        for var in vars {
            let mut v = f
                .variable_mut(&var.name)
                .ok_or_else(|| missing(&var.name))?;
            let x = (var.get)(rec);
            match var.value {
                FlashValue::Real => v.put_value(x, [i]),
                FlashValue::Flag(..) => v.put_value(x as i32, [i]),
            }
            .map_err(&e)?;
        }
    }
    Ok(())
}

/// Current UTC time as `YYYY-MM-DDTHH:MM:SSZ`, from the system clock.
fn utc_now() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_secs()) as i64;
    let (days, rem) = (secs.div_euclid(86_400), secs.rem_euclid(86_400));
    // Civil date from days since 1970-01-01 (H. Hinnant's days_from_civil inverse).
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        (rem % 3600) / 60,
        rem % 60
    )
}

/// Reads the resolved configuration and run status stored in an output file.
pub fn read_stored_configuration(path: &Path) -> Result<(String, String), RunError> {
    let e = |m: String| RunError::Output {
        context: format!("reading {}", path.display()),
        message: m,
    };
    let f = netcdf::open(path).map_err(|x| e(x.to_string()))?;
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
