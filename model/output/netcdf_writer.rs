//! CF-1.10 NetCDF output, written so that no run loses a good file or leaves
//! one that looks complete:
//!
//! - the output path is checked first: it must be a new name or a regular
//!   file (not a device, directory, pipe or an input of the run);
//! - a lock file `<name>.lock`, created exclusively and naming the process,
//!   keeps two runs from writing the same output; a lock whose process has
//!   ended is taken over;
//! - the data go to `<name>.<pid>.incomplete` in the same directory, with
//!   the global attribute `run_status = "incomplete"`; records are kept in
//!   memory and written in batches (one call per variable for several
//!   records, at most about 4 MiB), handed to the operating system and
//!   forced to the disk (fsync) at least every `output.durable_interval`
//!   seconds of wall clock, and after every record when it is 0; the file
//!   is created with the first write; a full batch waits (up to half a
//!   batch more) while another writer of the process has the library;
//! - only after the run has succeeded is the file marked
//!   `run_status = "complete"`, forced to disk and renamed over `<name>` in
//!   one atomic step, so an earlier good file stays until then. A failed or
//!   killed run leaves its `.incomplete` file (and nothing under `<name>`
//!   that was not there before).

use super::{
    beside, commit_file, directory_of, flash_variables, io_error, record_len, selected_variables,
    FlashValue, FlashVar, Observer, OutputVar, Placement,
};
use crate::column::state::State;
use crate::error::{ConfigError, RunError};
use crate::output::reader::{CONFIG_ATTRIBUTE, STATUS_ATTRIBUTE};
use crate::output::summary::RunSummary;
use crate::physics::discharge::record::FlashRecord;
use crate::setup::experiment::Experiment;
use std::path::{Path, PathBuf};

/// The NetCDF observer.
pub struct NetcdfWriter {
    target: PathBuf,
    partial: PathBuf,
    lock: Option<OutputLock>,
    /// Paths the run reads; the output may not be any of them.
    inputs: Vec<PathBuf>,
    /// Wall-clock interval between forced writes to the disk.
    durable: std::time::Duration,
    last_durable: std::time::Instant,
    history: String,
    file: Option<netcdf::FileMut>,
    vars: Vec<OutputVar>,
    flash_vars: Vec<FlashVar>,
    record: usize,
    /// Records not yet written: their times, each record variable's values
    /// (record after record), the flashes, and the first record's index.
    pending_times: Vec<f64>,
    pending: Vec<Vec<f64>>,
    pending_flashes: Vec<FlashRecord>,
    first_pending_flash: usize,
    /// Most records held before a write is attempted.
    batch: usize,
    /// Values per record of each variable.
    lens: Vec<usize>,
    /// Whether the file has been created: it is created once, so that a
    /// later write can never start it afresh over records already written.
    created: bool,
    /// What the file's definition needs, taken at `begin`; None before
    /// `begin` and after `finish`.
    layout: Option<Layout>,
    /// The time-independent profiles, filled at the first record and
    /// written with the definition.
    statics: Vec<(usize, Vec<f64>)>,
}

/// What the definition of the file takes from the experiment, kept from
/// `begin` so that the file can be created at the first write (or by the
/// error path, which has no experiment).
struct Layout {
    z: Vec<f64>,
    z_face: Vec<f64>,
    /// `time.start` written as the CF `units` want it.
    start: String,
    title: String,
    config: String,
    trigger: &'static str,
    deflate_level: i64,
}

/// The writers' turn at the NetCDF library, which serves one call at a time
/// in a process. A writer that finds it taken while its batch is not yet
/// due keeps its records and computes on (`NetcdfWriter::write_held`); in
/// a sweep the members start together and reach their writes at about the
/// same moments, so waiting there cost 2-3 points of parallel efficiency
/// (docs/performance.md).
static WRITERS_TURN: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// Records a writer holds before it writes them (at most about
/// `BATCH_BYTES` of the variables `vars`; 1 with `output.durable_interval
/// = 0`, which writes every record at once). While another writer has the
/// library it holds up to half as many again.
pub fn batch_records(exp: &Experiment, vars: &[OutputVar]) -> usize {
    let per_record: usize = vars.iter().map(|v| record_len(exp, v)).sum::<usize>() * 8;
    if exp.config.output.durable_interval == 0.0 {
        1
    } else {
        (BATCH_BYTES / per_record.max(1)).clamp(1, 1024)
    }
}

/// Takes the writers' turn at the NetCDF library and holds it until the
/// guard is dropped: no writer of this process writes meanwhile, and each
/// keeps its records (up to half a batch more than a batch) and computes
/// on. For code that must not interleave with the writers, and for tests.
pub fn hold_writers_turn() -> std::sync::MutexGuard<'static, ()> {
    WRITERS_TURN.lock().unwrap_or_else(|p| p.into_inner())
}

/// Whether to wait for the writers' turn.
#[derive(Clone, Copy, PartialEq)]
enum Turn {
    Wait,
    IfFree,
}

/// Upper bound on the bytes of records held in memory before a write.
const BATCH_BYTES: usize = 4 << 20;

fn nc_err(context: &str) -> impl Fn(netcdf::Error) -> RunError + '_ {
    move |e| RunError::Output {
        context: format!("NetCDF output {context}"),
        message: e.to_string(),
    }
}

/// A NetCDF error while writing `path`, with the operating system's last
/// error when there is one (the NetCDF library reports a full disk only as
/// "HDF error"). errno is not cleared on success, so the added reason may
/// be older than the failure; it is reported as a hint beside the NetCDF
/// message, never instead of it.
fn nc_err_at<'a>(context: &'a str, path: &'a str) -> impl Fn(netcdf::Error) -> RunError + 'a {
    move |e| {
        let os = std::io::Error::last_os_error();
        let reason = match os.raw_os_error() {
            Some(code) if code != 0 => format!("; operating system: {os}"),
            _ => String::new(),
        };
        RunError::Output {
            context: format!("NetCDF output {context} of {path}"),
            message: format!("{e}{reason}"),
        }
    }
}

/// The name this process writes to before its run succeeds:
/// `<target>.<pid>.incomplete`, beside the target.
pub fn partial_path(target: &Path) -> PathBuf {
    beside(target, &format!(".{}.incomplete", std::process::id()))
}

/// The lock file that marks a run writing `target`.
pub fn lock_path(target: &Path) -> PathBuf {
    beside(target, ".lock")
}

/// The process a lock file names, if it can be read.
fn lock_owner(lock: &Path) -> Option<u32> {
    std::fs::read_to_string(lock)
        .ok()
        .and_then(|t| t.trim().parse::<u32>().ok())
}

/// Whether process `pid` is alive (Linux: its /proc entry exists).
fn process_alive(pid: u32) -> bool {
    Path::new(&format!("/proc/{pid}")).exists()
}

/// Exclusive claim on an output path for the lifetime of a run.
#[derive(Debug)]
struct OutputLock {
    path: PathBuf,
}

impl OutputLock {
    fn acquire(target: &Path) -> Result<Self, RunError> {
        let dir = crate::output::directory_of(target);
        if !dir.is_dir() {
            return Err(RunError::Output {
                context: format!("NetCDF output {}", target.display()),
                message: format!("the output directory {} does not exist", dir.display()),
            });
        }
        let path = lock_path(target);
        for _ in 0..2 {
            match std::fs::OpenOptions::new()
                .write(true)
                .create_new(true)
                .open(&path)
            {
                Ok(mut f) => {
                    use std::io::Write;
                    if let Err(e) = writeln!(f, "{}", std::process::id()) {
                        // A lock that names no process (a full disk) is
                        // removed again, not left behind.
                        drop(f);
                        let _ = std::fs::remove_file(&path);
                        return Err(io_error("writing the lock", &path, e));
                    }
                    return Ok(OutputLock { path });
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                    match lock_owner(&path) {
                        Some(pid) if pid == std::process::id() || process_alive(pid) => {
                            return Err(RunError::Output {
                                context: format!("NetCDF output {}", target.display()),
                                message: format!(
                                    "another run (process {pid}) is writing this file (lock {}); wait for it to finish or choose another output path",
                                    path.display()
                                ),
                            });
                        }
                        // Left by a run that has ended: take it over.
                        _ => {
                            std::fs::remove_file(&path)
                                .map_err(|e| io_error("removing the stale lock", &path, e))?;
                        }
                    }
                }
                Err(e) => return Err(io_error("creating the lock", &path, e)),
            }
        }
        Err(RunError::Output {
            context: format!("NetCDF output {}", target.display()),
            message: format!("could not take the lock {}", path.display()),
        })
    }
}

impl Drop for OutputLock {
    fn drop(&mut self) {
        // Only our own lock is removed (its content names this process).
        if lock_owner(&self.path) == Some(std::process::id()) {
            let _ = std::fs::remove_file(&self.path);
        }
    }
}

/// Refuses an output path that is not a new name or a regular file, or that
/// is one of the run's inputs (compared as canonical paths).
pub fn check_output_path(target: &Path, inputs: &[PathBuf]) -> Result<(), RunError> {
    let refuse = |why: String| RunError::Output {
        context: format!("NetCDF output {}", target.display()),
        message: why,
    };
    match std::fs::metadata(target) {
        Ok(m) if !m.is_file() => return Err(refuse(
            "exists and is not a regular file (a directory, device or pipe); give a new file name"
                .into(),
        )),
        Ok(_) => {}
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
        Err(e) => return Err(io_error("checking the output", target, e)),
    }
    let canonical = |p: &Path| -> Option<PathBuf> {
        if p.exists() {
            std::fs::canonicalize(p).ok()
        } else {
            // A new file: its directory's canonical path plus its name.
            Some(
                std::fs::canonicalize(directory_of(p))
                    .ok()?
                    .join(p.file_name()?),
            )
        }
    };
    let out = canonical(target);
    for input in inputs {
        if out.is_some() && canonical(input) == out {
            return Err(refuse(format!(
                "is an input of this run ({}); writing it would destroy that input",
                input.display()
            )));
        }
    }
    Ok(())
}

impl NetcdfWriter {
    /// A writer for `target`; `command_line` goes into the `history` attribute.
    pub fn new(target: &Path, command_line: &str) -> Self {
        NetcdfWriter {
            target: target.to_path_buf(),
            partial: partial_path(target),
            lock: None,
            inputs: Vec::new(),
            durable: std::time::Duration::from_secs(5),
            last_durable: std::time::Instant::now(),
            history: format!("{}: {}", utc_now(), command_line),
            file: None,
            vars: Vec::new(),
            flash_vars: Vec::new(),
            record: 0,
            pending_times: Vec::new(),
            pending: Vec::new(),
            pending_flashes: Vec::new(),
            first_pending_flash: 0,
            batch: 1,
            lens: Vec::new(),
            created: false,
            layout: None,
            statics: Vec::new(),
        }
    }

    /// The run's input files (configuration, sounding, replayed output):
    /// the output may not be one of them.
    pub fn with_inputs(mut self, inputs: Vec<PathBuf>) -> Self {
        self.inputs = inputs;
        self
    }

    /// Puts the `history` of the file a run replays before this run's line
    /// (CF: history lists every program that made the data, newest last).
    pub fn after_history(mut self, earlier: Option<String>) -> Self {
        if let Some(h) = earlier.filter(|h| !h.trim().is_empty()) {
            self.history = format!("{}\n{}", h.trim_end(), self.history);
        }
        self
    }

    /// Forces the written records to the disk (fsync of the partial file).
    fn make_durable(&mut self) -> Result<(), RunError> {
        std::fs::File::open(&self.partial)
            .and_then(|f| f.sync_all())
            .map_err(|e| io_error("forcing to disk", &self.partial, e))?;
        self.last_durable = std::time::Instant::now();
        Ok(())
    }

    /// Most records held while another writer has the library, before this
    /// one waits for its turn: half a batch more (the wait there is one
    /// definition or batch write of the other, a few records); the durable
    /// interval still bounds it. A batch of one is written at once.
    fn most_held(&self) -> usize {
        if self.batch == 1 {
            1
        } else {
            self.batch + self.batch / 2
        }
    }

    /// Writes the pending records (one call per variable) and flashes and
    /// hands them to the operating system; forces them to the disk when the
    /// durable interval has passed. The first write creates and defines the
    /// file. With `Turn::IfFree` nothing is written while another writer
    /// has the library (returns false); the records stay held.
    fn write_held(&mut self, turn: Turn) -> Result<bool, RunError> {
        let _turn = match WRITERS_TURN.try_lock() {
            Ok(g) => g,
            // A writer that panicked left nothing half-done that this one
            // relies on: each call finishes its own library calls.
            Err(std::sync::TryLockError::Poisoned(p)) => p.into_inner(),
            Err(std::sync::TryLockError::WouldBlock) if turn == Turn::IfFree => return Ok(false),
            Err(std::sync::TryLockError::WouldBlock) => hold_writers_turn(),
        };
        if !self.created {
            self.created = true;
            let defined = self.define()?;
            let f = self.file.insert(defined);
            // The time-independent profiles held since the first record.
            let partial = self.partial.display().to_string();
            let e = nc_err_at("record", &partial);
            for (i, values) in std::mem::take(&mut self.statics) {
                variable_in(f, &self.vars[i].name, "NetCDF output record")?
                    .put_values(&values, ..)
                    .map_err(&e)?;
            }
        }
        self.write_pending()?;
        Ok(true)
    }

    /// The body of [`Self::write_held`], with the file defined and the
    /// writers' turn held.
    fn write_pending(&mut self) -> Result<(), RunError> {
        let partial = self.partial.display().to_string();
        let e = nc_err_at("record", &partial);
        let f = self.file.as_mut().ok_or_else(|| RunError::Output {
            context: "NetCDF output record".into(),
            message: "file not open".into(),
        })?;
        let n = self.pending_times.len();
        if n > 0 {
            let t0 = self.record - n;
            let mut write = || -> Result<(), RunError> {
                variable_in(f, "time", "NetCDF output record")?
                    .put_values(&self.pending_times, t0..t0 + n)
                    .map_err(&e)?;
                for ((var, values), &len) in self.vars.iter().zip(&self.pending).zip(&self.lens) {
                    if var.is_static() {
                        continue;
                    }
                    let mut v = variable_in(f, &var.name, "NetCDF output record")?;
                    match var.placement {
                        Placement::Series => v.put_values(&values[..n], t0..t0 + n),
                        _ => v.put_values(&values[..n * len], (t0..t0 + n, ..)),
                    }
                    .map_err(&e)?;
                }
                Ok(())
            };
            let written = write();
            // The batch is gone either way: written, or refused (a full
            // disk); a later flush (the error path writes what it holds)
            // must not see some variables' records without the others'.
            for values in &mut self.pending {
                values.clear();
            }
            self.pending_times.clear();
            written?;
        }
        write_flashes(
            f,
            &self.flash_vars,
            &self.pending_flashes,
            self.first_pending_flash,
        )?;
        self.first_pending_flash += self.pending_flashes.len();
        self.pending_flashes.clear();
        f.sync().map_err(&e)?;
        if self.last_durable.elapsed() >= self.durable {
            self.make_durable()?;
        }
        Ok(())
    }

    fn define(&mut self) -> Result<netcdf::FileMut, RunError> {
        let partial = self.partial.display().to_string();
        let e = nc_err_at("definition", &partial);
        let layout = self.layout.as_ref().ok_or_else(|| RunError::Output {
            context: format!("NetCDF output definition of {partial}"),
            message: "the writer has not begun".into(),
        })?;
        limit_chunk_cache();
        crate::output::quiet_library_diagnostics();
        let mut f = netcdf::create(&self.partial).map_err(&e)?;
        let n = layout.z.len();
        f.add_unlimited_dimension("time").map_err(&e)?;
        f.add_dimension("z", n).map_err(&e)?;
        f.add_dimension("z_face", n + 1).map_err(&e)?;
        f.add_unlimited_dimension("flash").map_err(&e)?;

        let start = &layout.start;
        let globals: [(&str, String); 8] = [
            ("Conventions", "CF-1.10".into()),
            ("title", layout.title.clone()),
            ("source", format!("stormcharge {}", env!("CARGO_PKG_VERSION"))),
            ("history", self.history.clone()),
            (
                "comment",
                "Output of a one-dimensional research and teaching model of thunderstorm electrification. \
                 It is not a lightning-safety or forecasting product; protection decisions follow local codes \
                 and licensed practice."
                    .into(),
            ),
            (CONFIG_ATTRIBUTE, layout.config.clone()),
            (STATUS_ATTRIBUTE, "incomplete".into()),
            ("flash_trigger_criterion", layout.trigger.into()),
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
            ("z", &layout.z, "height of cell centre above ground"),
            ("z_face", &layout.z_face, "height of cell face above ground"),
        ] {
            let mut v = f.add_variable::<f64>(name, &[name]).map_err(&e)?;
            v.put_attribute("standard_name", "height").map_err(&e)?;
            v.put_attribute("long_name", long).map_err(&e)?;
            v.put_attribute("units", "m").map_err(&e)?;
            v.put_attribute("positive", "up").map_err(&e)?;
            v.put_attribute("axis", "Z").map_err(&e)?;
            if name == "z" {
                v.put_attribute("bounds", "z_bounds").map_err(&e)?;
            }
            v.put_values(values, ..).map_err(&e)?;
        }
        // Cell bounds of the centres (CF section 7.1): the faces below and above.
        f.add_dimension("nv", 2).map_err(&e)?;
        let bounds: Vec<f64> = layout
            .z_face
            .windows(2)
            .flat_map(|w| [w[0], w[1]])
            .collect();
        let mut zb = f
            .add_variable::<f64>("z_bounds", &["z", "nv"])
            .map_err(&e)?;
        zb.put_attribute("units", "m").map_err(&e)?;
        zb.put_values(&bounds, ..).map_err(&e)?;

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
            if var.may_be_missing {
                v.put_attribute("_FillValue", f64::NAN).map_err(&e)?;
            }
            let level = layout.deflate_level;
            if level > 0 && var.placement != Placement::StaticFace {
                v.set_compression(level as i32, true).map_err(&e)?;
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
                    if var.may_be_missing {
                        v.put_attribute("_FillValue", f64::NAN).map_err(&e)?;
                    }
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
        // No sync here: the definition is only made by `write_held`, whose
        // records write ends in one.
        Ok(f)
    }
}

impl Observer for NetcdfWriter {
    fn begin(&mut self, exp: &Experiment) -> Result<(), RunError> {
        // Nothing is created or truncated before the path is checked and
        // the lock is ours; an earlier file under the target name stays
        // until this run has succeeded.
        // The selection is checked before anything is created.
        self.vars = selected_variables(exp)
            .map_err(|issue| RunError::Config(ConfigError::single("configuration", issue)))?;
        check_output_path(&self.target, &self.inputs)?;
        self.lock = Some(OutputLock::acquire(&self.target)?);
        self.durable = std::time::Duration::from_secs_f64(exp.config.output.durable_interval);
        self.flash_vars = flash_variables(exp);
        self.batch = batch_records(exp, &self.vars);
        self.lens = self.vars.iter().map(|v| record_len(exp, v)).collect();
        self.pending = self
            .lens
            .iter()
            .map(|len| Vec::with_capacity(self.most_held() * len))
            .collect();
        self.pending_times = Vec::with_capacity(self.most_held());
        let cfg = &exp.config;
        // The file itself is created at the first write (a full batch, the
        // durable interval, the end of the run or the error path).
        self.layout = Some(Layout {
            z: exp.grid.z.clone(),
            z_face: exp.grid.z_face.clone(),
            start: cfg.time.start.replace('T', " ").replace('Z', ""),
            title: cfg.output.title.clone(),
            config: cfg.to_toml(),
            trigger: cfg.breakdown.trigger.name(),
            deflate_level: cfg.output.deflate_level,
        });
        Ok(())
    }

    fn record(&mut self, exp: &Experiment, state: &State) -> Result<(), RunError> {
        let t = self.record;
        for (i, ((var, values), &len)) in self
            .vars
            .iter()
            .zip(&mut self.pending)
            .zip(&self.lens)
            .enumerate()
        {
            if var.is_static() {
                // Time-independent profiles: taken once, written with the
                // file's definition.
                if t == 0 {
                    let mut profile = vec![0.0; len];
                    (var.fill)(exp, state, &mut profile);
                    self.statics.push((i, profile));
                }
                continue;
            }
            let start = values.len();
            values.resize(start + len, 0.0);
            (var.fill)(exp, state, &mut values[start..]);
        }
        self.pending_times.push(state.time);
        let seen = self.first_pending_flash + self.pending_flashes.len();
        self.pending_flashes
            .extend_from_slice(state.ledger.unseen(seen));
        self.record += 1;
        let held = self.pending_times.len();
        if held >= self.most_held() || self.last_durable.elapsed() >= self.durable {
            self.write_held(Turn::Wait)?;
        } else if held >= self.batch {
            self.write_held(Turn::IfFree)?;
        }
        Ok(())
    }

    fn finish(
        &mut self,
        _exp: &Experiment,
        state: &State,
        _summary: &RunSummary,
    ) -> Result<(), RunError> {
        let partial = self.partial.display().to_string();
        let e = nc_err_at("closing", &partial);
        // Flashes after the last record, then everything still held.
        let seen = self.first_pending_flash + self.pending_flashes.len();
        self.pending_flashes
            .extend_from_slice(state.ledger.unseen(seen));
        self.write_held(Turn::Wait)?;
        {
            // The closing calls are the library's too.
            let _turn = hold_writers_turn();
            let mut f = self.file.take().ok_or_else(|| RunError::Output {
                context: "NetCDF output closing".into(),
                message: "file not open".into(),
            })?;
            f.add_attribute(STATUS_ATTRIBUTE, "complete").map_err(&e)?;
            f.close().map_err(&e)?;
        }
        self.layout = None;
        // On the disk before it takes the target's name, so a crash after
        // the rename cannot leave a complete-looking but empty file.
        self.make_durable()?;
        // The target may have become a non-file meanwhile; check again.
        check_output_path(&self.target, &self.inputs)?;
        commit_file(&self.partial, &self.target)?;
        self.lock = None;
        Ok(())
    }
}

impl Drop for NetcdfWriter {
    /// A run that stops with an error still writes the records it holds
    /// into its `.incomplete` file (best effort: an error here has nowhere
    /// to go); a finished run holds none.
    fn drop(&mut self) {
        // Begun and not finished: the file may not exist yet; the write
        // creates it.
        if self.layout.is_some() {
            let _ = self.write_held(Turn::Wait);
        }
    }
}

/// The variable `name` of the file being written, or an error naming it
/// (`context` says what was being written).
fn variable_in<'f>(
    f: &'f mut netcdf::FileMut,
    name: &str,
    context: &str,
) -> Result<netcdf::VariableMut<'f>, RunError> {
    f.variable_mut(name).ok_or_else(|| RunError::Output {
        context: context.into(),
        message: format!("variable {name} missing"),
    })
}

/// Writes the pending `flashes` on the `flash` dimension from position `at`.
fn write_flashes(
    f: &mut netcdf::FileMut,
    vars: &[FlashVar],
    flashes: &[FlashRecord],
    at: usize,
) -> Result<(), RunError> {
    if flashes.is_empty() {
        return Ok(());
    }
    let e = nc_err("flash records");
    // One call per variable for all the flashes held: a call per flash and
    // variable cost about 6e4 instructions in the NetCDF and HDF5 libraries
    // each, 2.5 % of a demo hour at 200 levels (docs/performance.md).
    let span = at..at + flashes.len();
    let mut reals: Vec<f64> = flashes.iter().map(|rec| rec.time).collect();
    variable_in(f, "flash_time", "flash records")?
        .put_values(&reals, span.clone())
        .map_err(&e)?;
    let mut flags = Vec::with_capacity(flashes.len());
    for var in vars {
        let mut v = variable_in(f, &var.name, "flash records")?;
        match var.value {
            FlashValue::Real => {
                reals.clear();
                reals.extend(flashes.iter().map(|rec| (var.get)(rec)));
                v.put_values(&reals, span.clone())
            }
            FlashValue::Flag(..) => {
                flags.clear();
                flags.extend(flashes.iter().map(|rec| (var.get)(rec) as i32));
                v.put_values(&flags, span.clone())
            }
        }
        .map_err(&e)?;
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

/// Bytes of HDF5 chunk cache each variable of a file opened after
/// `limit_chunk_cache` may hold: one time-series chunk (512 values of 8
/// bytes) and a few records of a 160-level profile.
pub const CHUNK_CACHE_BYTES: usize = 16 * 1024;

/// Hash slots of that cache (a prime, as the HDF5 documentation advises).
const CHUNK_CACHE_SLOTS: usize = 37;

/// Makes the NetCDF library give the variables of every file opened or
/// created from now on a small chunk cache ([`CHUNK_CACHE_BYTES`]) instead
/// of its default of several MiB per variable. Records are written as
/// whole chunks (one record of a profile per chunk) in batches, so a cache
/// only kept every chunk the run had written until the file was closed:
/// measured on the demo, about 12 MB of a run's 24 MB heap, and most of
/// the memory of each concurrently running sweep member. Chunks that are
/// wholly written are evicted first (preemption 1). Set once per process,
/// before the first file is created.
fn limit_chunk_cache() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        let _lock = netcdf_sys::libnetcdf_lock.lock();
        // SAFETY: nc_set_chunk_cache takes plain values and only sets the
        // library's defaults for later opens, under the library's lock that
        // the netcdf crate holds around its own calls.
        let status =
            unsafe { netcdf_sys::nc_set_chunk_cache(CHUNK_CACHE_BYTES, CHUNK_CACHE_SLOTS, 1.0) };
        // A refusal (status not 0) leaves the library's default cache: more
        // memory, the same file; nothing to report to the user.
        let _ = status;
    });
}
