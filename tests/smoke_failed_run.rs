//! A run that fails part-way never leaves a file that looks complete.
//!
//! Kept in its own test binary: HDF5 holds a file lock on open files, and a
//! child process spawned by another test in the same process would inherit
//! the descriptor (HDF5 does not open with O_CLOEXEC) and with it the lock.

mod common;
use common::*;

use std::path::Path;
use stormcharge::column::state::State;
use stormcharge::error::RunError;
use stormcharge::output::netcdf_writer::{partial_path, NetcdfWriter};
use stormcharge::output::reader::STATUS_ATTRIBUTE;
use stormcharge::output::Observer;
use stormcharge::setup::config::DEMO_TOML;
use stormcharge::setup::experiment::Experiment;
use stormcharge::timeloop;

/// An observer that fails at a given record, to simulate a crash mid-run.
struct FailAt(usize, usize);

impl Observer for FailAt {
    fn record(&mut self, _: &Experiment, s: &State) -> Result<(), RunError> {
        self.1 += 1;
        if self.1 > self.0 {
            return Err(RunError::Numerics {
                time: s.time,
                message: "injected failure".into(),
            });
        }
        Ok(())
    }
}

#[test]
fn failed_run_never_looks_complete() {
    // A run that fails part-way over an earlier file: the earlier file stays
    // untouched (it is replaced only by a complete run, in one rename), the
    // failed run's data are in its own `.incomplete` file marked incomplete,
    // and its lock is gone.
    let exp = Experiment::from_text(DEMO_TOML, "demo", &[], Path::new(".")).unwrap();
    let out = scratch("failed.nc");
    std::fs::write(&out, b"an earlier result").unwrap();
    let mut writer = NetcdfWriter::new(&out, "test");
    let mut fail = FailAt(3, 0);
    let mut observers: [&mut dyn Observer; 2] = [&mut writer, &mut fail];
    let r = timeloop::run(&exp, &mut observers, &mut |_| {});
    assert!(r.is_err());
    drop(writer);
    assert_eq!(std::fs::read(&out).unwrap(), b"an earlier result");
    assert!(!stormcharge::output::netcdf_writer::lock_path(&out).exists());
    let partial = partial_path(&out);
    let f = netcdf::open(&partial).unwrap();
    assert_eq!(text_attr(&f, STATUS_ATTRIBUTE), "incomplete");
    // Records written before the failure were synced and are readable.
    assert_eq!(f.dimension_len("time"), Some(4));
}

#[test]
fn written_files_leave_the_library_a_small_chunk_cache() {
    // Records go to the file in whole chunks, so a chunk cache only holds
    // what was written until the file closes (HDF5 keeps one cache per open
    // dataset, H5Pset_chunk_cache in the HDF5 reference manual): the
    // writer sets the library's default to a few KiB per variable before
    // its first file (docs/performance.md, "Memory of the output").
    let exp = Experiment::from_text(
        DEMO_TOML,
        "demo",
        &["time.duration=120".into()],
        Path::new("."),
    )
    .unwrap();
    let out = scratch("chunk_cache.nc");
    let _ = std::fs::remove_file(&out);
    let mut writer = NetcdfWriter::new(&out, "test");
    let mut observers: [&mut dyn Observer; 1] = [&mut writer];
    timeloop::run(&exp, &mut observers, &mut |_| {}).unwrap();
    drop(writer);
    let (mut size, mut slots, mut preemption) = (0usize, 0usize, 0f32);
    let status = {
        // The library's lock, as the netcdf crate takes it: the other test
        // of this file may be calling the library meanwhile.
        let _lock = netcdf_sys::libnetcdf_lock.lock();
        // SAFETY: plain out-pointers to locals.
        unsafe { netcdf_sys::nc_get_chunk_cache(&mut size, &mut slots, &mut preemption) }
    };
    assert_eq!(status, 0);
    assert_eq!(size, stormcharge::output::netcdf_writer::CHUNK_CACHE_BYTES);
    assert_eq!(preemption, 1.0);
    // The file is whole: every record is there (0, 60 and 120 s).
    let f = netcdf::open(&out).unwrap();
    assert_eq!(f.dimension_len("time"), Some(3));
}
