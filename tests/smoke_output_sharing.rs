//! Runs of one process that share the NetCDF library: a writer that finds
//! the library taken when its batch is full keeps its records and computes
//! on, and the file it writes in the end holds every record as a run alone
//! writes it.
//!
//! In its own test binary: HDF5 holds a lock on open files, which a child
//! process of another test in the same binary would inherit.

mod common;
use common::*;

use std::path::Path;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Arc;
use stormcharge::column::state::State;
use stormcharge::error::RunError;
use stormcharge::output::netcdf_writer::{
    batch_records, hold_writers_turn, partial_path, NetcdfWriter,
};
use stormcharge::output::Observer;
use stormcharge::setup::config::DEMO_TOML;
use stormcharge::setup::experiment::Experiment;
use stormcharge::timeloop;

/// Counts the records of a run, for another thread to watch.
struct Count(Arc<AtomicUsize>);

impl Observer for Count {
    fn record(&mut self, _: &Experiment, _: &State) -> Result<(), RunError> {
        self.0.fetch_add(1, Ordering::SeqCst);
        Ok(())
    }
}

fn values(path: &Path) -> Vec<(String, Vec<u64>)> {
    let f = netcdf::open(path).unwrap();
    let mut out: Vec<(String, Vec<u64>)> = f
        .variables()
        .map(|v| {
            let x: Vec<f64> = v.get_values(..).unwrap();
            (v.name(), x.iter().map(|y| y.to_bits()).collect())
        })
        .collect();
    out.sort();
    out
}

#[test]
fn a_writer_keeps_its_records_while_another_has_the_library() {
    // The demo's hour with a record every 20 s (181 records; a batch is 61
    // of them, about 4 MiB); a writer holds a batch, and up to half as
    // many again while the library is taken (docs/output.md). The durable
    // interval is set to its longest so that only the batch decides.
    // While this test holds the writers' turn the run goes past a full
    // batch without creating its file; released, the run finishes, and its
    // file holds the same bits as a run alone (common practice: buffering
    // changes when data are written, never what).
    let set = [
        "output.durable_interval=3600".to_string(),
        "time.output_interval=20".to_string(),
    ];
    let exp = Experiment::from_text(DEMO_TOML, "demo", &set, Path::new(".")).unwrap();
    let batch = batch_records(&exp, &stormcharge::output::variables(&exp));
    let past = batch + 3;
    assert!(
        past < batch + batch / 2 && past < 181,
        "a batch of {batch} records leaves no room to go past it"
    );
    let alone = scratch("sharing_alone.nc");
    let mut w = NetcdfWriter::new(&alone, "test");
    timeloop::run(&exp, &mut [&mut w as &mut dyn Observer], &mut |_| {}).unwrap();
    drop(w);

    let shared = scratch("sharing_shared.nc");
    let records = Arc::new(AtomicUsize::new(0));
    let turn = hold_writers_turn();
    let seen = records.clone();
    let target = shared.clone();
    let run = std::thread::spawn(move || {
        let exp = Experiment::from_text(DEMO_TOML, "demo", &set, Path::new(".")).unwrap();
        let mut w = NetcdfWriter::new(&target, "test");
        let mut c = Count(seen);
        let mut observers: [&mut dyn Observer; 2] = [&mut w, &mut c];
        timeloop::run(&exp, &mut observers, &mut |_| {}).map(|_| ())
    });
    // Past a full batch and still computing, nothing written.
    let deadline = std::time::Instant::now() + std::time::Duration::from_secs(60);
    while records.load(Ordering::SeqCst) < past {
        assert!(std::time::Instant::now() < deadline, "the run stopped");
        std::thread::sleep(std::time::Duration::from_millis(2));
    }
    assert!(
        !partial_path(&shared).exists(),
        "the file was written while the library was taken"
    );
    drop(turn);
    run.join().unwrap().unwrap();
    assert!(shared.exists());
    assert_eq!(values(&shared), values(&alone));
}
