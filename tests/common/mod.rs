//! Helpers shared by the integration tests (each test binary uses a subset).
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;
use stormcharge::output::memory::MemoryRecorder;
use stormcharge::output::summary::RunSummary;
use stormcharge::output::Observer;
use stormcharge::setup::experiment::Experiment;
use stormcharge::timeloop;

/// The command-line program built for the tests.
pub fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_stormcharge"))
}

/// Runs a command and asserts that it succeeded (exit code 0).
pub fn succeed(cmd: &mut Command) -> std::process::Output {
    let o = cmd.output().unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    o
}

/// A path in a scratch directory private to this test process.
pub fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("stormcharge-tests-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

/// A path inside the repository.
pub fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// Relative difference |a - b| / |b|.
pub fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// An experiment from configuration text with `section.key=value` overrides.
pub fn experiment(text: &str, overrides: &[&str]) -> Experiment {
    let o: Vec<String> = overrides.iter().map(|s| s.to_string()).collect();
    Experiment::from_text(text, "test", &o, Path::new(".")).unwrap()
}

/// An experiment from a file in configs/.
pub fn config_file(name: &str, overrides: &[&str]) -> Experiment {
    experiment(
        &std::fs::read_to_string(repo(&format!("configs/{name}"))).unwrap(),
        overrides,
    )
}

/// Runs an experiment into memory.
pub fn run_recorded(exp: &Experiment) -> (MemoryRecorder, RunSummary) {
    let mut rec = MemoryRecorder::default();
    let mut obs: [&mut dyn Observer; 1] = [&mut rec];
    let summary = timeloop::run(exp, &mut obs, &mut |_| {}).unwrap();
    (rec, summary)
}

fn as_text(attribute: Option<netcdf::Attribute<'_>>, name: &str) -> String {
    match attribute
        .unwrap_or_else(|| panic!("attribute {name}"))
        .value()
        .unwrap()
    {
        netcdf::AttributeValue::Str(s) => s,
        other => panic!("{name} is not text: {other:?}"),
    }
}

/// A text global attribute of a NetCDF file.
pub fn text_attr(f: &netcdf::File, name: &str) -> String {
    as_text(f.attribute(name), name)
}

/// A text attribute of a NetCDF variable.
pub fn var_text_attr(v: &netcdf::Variable, name: &str) -> String {
    as_text(v.attribute(name), name)
}

/// Configuration text of a still, dry column in the U.S. Standard Atmosphere
/// 1976 (no updraft, no microphysics), the setting of the prescribed-charge
/// tests, followed by the given TOML literals.
#[macro_export]
macro_rules! still_column {
    ($($rest:expr),* $(,)?) => {
        concat!(
            "[atmosphere]\nprofile = \"standard_1976\"\n[updraft]\npeak_speed = 0.0\n[microphysics]\nscheme = \"off\"\n",
            $($rest),*
        )
    };
}
