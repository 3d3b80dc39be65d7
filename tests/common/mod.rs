//! Helpers shared by the integration tests (each test binary uses a subset).
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;
use stormcharge::column::state::State;
use stormcharge::output::memory::MemoryRecorder;
use stormcharge::output::summary::RunSummary;
use stormcharge::output::Observer;
use stormcharge::physics::discharge::record::FlashRecord;
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

/// Runs `stormcharge run --quiet CONFIG -o OUT` and requires success.
pub fn run_quiet(config: &std::path::Path, out: &std::path::Path) {
    succeed(
        bin()
            .args(["run", "--quiet"])
            .arg(config)
            .arg("-o")
            .arg(out),
    );
}

/// A path inside the repository.
pub fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// The pages a reader follows: README.md, DEVELOPERS.md, tools/README.md
/// and docs/*.md (in name order).
pub fn documentation_pages() -> Vec<PathBuf> {
    let mut pages = vec![
        repo("README.md"),
        repo("DEVELOPERS.md"),
        repo("tools/README.md"),
    ];
    let mut docs: Vec<PathBuf> = std::fs::read_dir(repo("docs"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "md"))
        .collect();
    docs.sort();
    pages.extend(docs);
    pages
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

/// An experiment from a file in configs/ (relative paths inside it, such as
/// sounding files and an `include`, are looked up in configs/).
pub fn config_file(name: &str, overrides: &[&str]) -> Experiment {
    let o: Vec<String> = overrides.iter().map(|s| s.to_string()).collect();
    let path = repo(&format!("configs/{name}"));
    let text = std::fs::read_to_string(&path).unwrap();
    let text = stormcharge::setup::config::load::resolve_include(&text, &path, 0).unwrap();
    Experiment::from_config_text(&text, name, &o, &repo("configs")).unwrap()
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
            "[atmosphere]\nprofile = \"standard_1976\"\n[updraft]\npeak_speed = 0.0\n[microphysics]\nscheme = \"off\"\n[ions]\nenabled = false\n",
            $($rest),*
        )
    };
}

/// The shipped demo (configs/demo.toml, also embedded in the binary) with
/// `section.key=value` overrides.
pub fn demo(overrides: &[&str]) -> Experiment {
    experiment(stormcharge::setup::config::DEMO_TOML, overrides)
}

pub const PRESCRIBED: &str = r#"
[grid]
top = 12000.0
spacing = 200.0
[time]
step = 5.0
duration = 600.0
output_interval = 100.0
[atmosphere]
profile = "standard_1976"
[updraft]
peak_speed = 5.0
[microphysics]
scheme = "prescribed"
[[hydrometeors.layers]]
species = "graupel"
center = 6000.0
thickness = 1500.0
mixing_ratio = 2.0e-3
envelope = "pulse"
start = 0.0
growth = 200.0
mature = 200.0
decay = 200.0
[[hydrometeors.layers]]
species = "ice"
shape = "table"
points = [[5000.0, 0.0], [8000.0, 1.0], [10000.0, 0.0]]
mixing_ratio = 1.0e-4
number = 1.0e5
[discharge]
enabled = false
"#;

/// The flash-sequence demo: a growing prescribed tripole (configs/tripole_flashes.toml).
pub fn flash_config() -> String {
    std::fs::read_to_string(repo("configs/tripole_flashes.toml")).unwrap()
}

/// Steps until the first flash; returns the state just before and just after
/// it. The flash is taken at the end of its step (`discharge.locate_in_step`
/// off), so the states around that step are the states around the flash.
pub fn first_flash(exp: &Experiment) -> (State, State, FlashRecord) {
    let mut exp = exp.clone();
    exp.discharge_params.locate = false;
    let exp = &exp;
    let mut s = State::initial(exp);
    for _ in 0..exp.schedule.steps {
        let before = s.clone();
        stormcharge::column::step::step(exp, &mut s, exp.schedule.dt).unwrap();
        if let Some(f) = s.ledger.flashes.first() {
            return (before, s.clone(), *f);
        }
    }
    panic!("no flash in {} steps", exp.schedule.steps);
}

pub const DIPOLE: &str = crate::still_column!(
    r#"
[grid]
top = 15000.0
spacing = 100.0
[time]
step = 2.0
duration = 3000.0
output_interval = 100.0
[column]
radius = 3000.0
[electrostatics]
geometry = "column"
[[prescribed_charge.layers]]
center = 9000.0
thickness = 1000.0
density = 0.5
growth_rate = 0.002
[[prescribed_charge.layers]]
center = 6000.0
thickness = 1000.0
density = -0.5
growth_rate = -0.002
"#
);

pub const LOW_NEGATIVE: &str = crate::still_column!(
    r#"
[grid]
top = 12000.0
spacing = 100.0
[time]
step = 2.0
duration = 1200.0
output_interval = 60.0
[column]
radius = 2000.0
[electrostatics]
geometry = "column"
[[prescribed_charge.layers]]
center = 2500.0
thickness = 600.0
density = -2.0
growth_rate = -0.01
[[prescribed_charge.layers]]
center = 7000.0
thickness = 1000.0
density = 0.3
growth_rate = 0.001
"#
);

pub const NC: f64 = 1e-9;

/// Temperatures (degC) of the main negative region in the records `rec` of
/// the flashing stage (first to last flash) of a run of `exp`, and whether
/// every one of those records has normal polarity: a positive region above
/// the main negative one.
pub fn flashing_main_negative(exp: &Experiment, rec: &MemoryRecorder) -> (Vec<f64>, bool) {
    let (first, last) = (rec.flashes[0].time, rec.flashes[rec.flashes.len() - 1].time);
    main_negative_between(exp, rec, first, last)
}

/// [`flashing_main_negative`] over the records from `from` to `to` (s).
pub fn main_negative_between(
    exp: &Experiment,
    rec: &MemoryRecorder,
    from: f64,
    to: f64,
) -> (Vec<f64>, bool) {
    use stormcharge::analysis::{main_region, regions};
    let rho = rec.get("charge_density");
    let t = rec.get("air_temperature");
    let mut temps = Vec::new();
    let mut all_normal = true;
    for (r, &time) in rec.times.iter().enumerate() {
        if !(from..=to).contains(&time) {
            continue;
        }
        let regs = regions(&exp.grid.z, exp.grid.dz, &rho[r], &t[r], 0.1);
        let n = main_region(&regs, -1.0).unwrap();
        temps.push(n.temperature);
        all_normal &= regs.iter().any(|x| x.polarity > 0.0 && x.height > n.height);
    }
    (temps, all_normal)
}

/// The median (the upper of the two middle values for an even count).
pub fn median(mut x: Vec<f64>) -> f64 {
    x.sort_by(f64::total_cmp);
    x[x.len() / 2]
}

/// A reproducible stream of uniform numbers in [0, 1): a linear
/// congruential generator with Knuth's MMIX constants (TAOCP vol. 2, sec.
/// 3.3.4, from memory), the top 53 bits of each state.
pub fn uniform_stream(seed: u64) -> impl FnMut() -> f64 {
    let mut state = seed;
    move || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// |got - want| in units of the last place of `want`.
pub fn ulps(got: f64, want: f64) -> f64 {
    let ulp = f64::from_bits(want.abs().to_bits() + 1) - want.abs();
    (got - want).abs() / ulp
}
