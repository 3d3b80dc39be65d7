//! The charge-structure analysis on profiles whose answer is known exactly:
//! synthetic layers and prescribed top hats.

mod common;
use common::*;

use stormcharge::analysis::{classify, regions, Structure};

fn synthetic(layers: &[(f64, f64, f64)]) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    // (centre m, half-width m, nC m-3); temperature falling 6.5 K/km from 30 degC.
    let z: Vec<f64> = (0..150).map(|k| (k as f64 + 0.5) * 100.0).collect();
    let rho = z
        .iter()
        .map(|&h| {
            layers
                .iter()
                .map(|&(c, w, d)| if (h - c).abs() < w { d * 1e-9 } else { 0.0 })
                .sum()
        })
        .collect();
    let t = z.iter().map(|&h| 303.15 - 6.5e-3 * h).collect();
    (z, rho, t)
}

#[test]
fn structure_detector_on_synthetic_profiles() {
    // Textbook structures (Williams 1989, JGR 94): normal tripole, dipole and
    // an inverted tripole built from layers, classified and located.
    let (z, rho, t) = synthetic(&[
        (10_000.0, 1000.0, 1.0),
        (7000.0, 600.0, -2.0),
        (4500.0, 300.0, 1.0),
    ]);
    let r = regions(&z, 100.0, &rho, &t, 0.1);
    assert_eq!(classify(&r), Structure::NormalTripole);
    assert_eq!(r.len(), 3);
    let main = r.iter().find(|x| x.polarity < 0.0).unwrap();
    assert!((main.height - 7000.0).abs() < 1.0);
    assert!((main.temperature - (30.0 - 6.5 * 7.0)).abs() < 0.01);
    assert!((main.charge - -2.0e-9 * 1200.0).abs() < 1e-15);

    let (z, rho, t) = synthetic(&[(10_000.0, 1000.0, 1.0), (7000.0, 600.0, -2.0)]);
    assert_eq!(
        classify(&regions(&z, 100.0, &rho, &t, 0.1)),
        Structure::NormalDipole
    );
    let (z, rho, t) = synthetic(&[
        (10_000.0, 1000.0, -1.0),
        (7000.0, 600.0, 2.0),
        (4500.0, 300.0, -1.0),
    ]);
    assert_eq!(
        classify(&regions(&z, 100.0, &rho, &t, 0.1)),
        Structure::InvertedTripole
    );
    let (z, rho, t) = synthetic(&[(10_000.0, 1000.0, -1.0), (7000.0, 600.0, 1.0)]);
    assert_eq!(
        classify(&regions(&z, 100.0, &rho, &t, 0.1)),
        Structure::InvertedDipole
    );
    // Positive charge above and below the main negative region, the lower
    // region the larger (a normal tripole whose upper positive region a
    // flash has drained): not an inverted dipole, which has no positive
    // charge above its negative region.
    let (z, rho, t) = synthetic(&[
        (10_000.0, 400.0, 1.0),
        (8000.0, 600.0, -2.0),
        (6000.0, 500.0, 1.6),
    ]);
    assert_eq!(
        classify(&regions(&z, 100.0, &rho, &t, 0.1)),
        Structure::EnhancedLowerTripole
    );
    let (z, rho, t) = synthetic(&[]);
    assert_eq!(
        classify(&regions(&z, 100.0, &rho, &t, 0.1)),
        Structure::Uncharged
    );
    // Round-off-sized charge (9e-22 C m-2 in a column) is no structure: the
    // noise floor is 0.01 nC m-3, a twentieth of the weakest region balloon
    // soundings report (Marshall & Rust 1991).
    let tiny: Vec<f64> = rho
        .iter()
        .enumerate()
        .map(|(k, _)| if k % 2 == 0 { 1e-24 } else { -1e-24 })
        .collect();
    assert_eq!(
        classify(&regions(&z, 100.0, &tiny, &t, 0.1)),
        Structure::Uncharged
    );
}

/// Three top-hat layers in a still 2 km column: +1 nC m-3 over 9-11 km,
/// -3 nC m-3 over 6.5-7.5 km, +1.5 nC m-3 over 3.7-4.3 km.
const LAYERS: &str = crate::still_column!(
    r#"
[grid]
top = 15000.0
spacing = 100.0
[time]
step = 10.0
duration = 100.0
output_interval = 100.0
[discharge]
enabled = false
[column]
radius = 2000.0
[electrostatics]
geometry = "column"
[[prescribed_charge.layers]]
center = 10000.0
thickness = 2000.0
density = 1.0
[[prescribed_charge.layers]]
center = 7000.0
thickness = 1000.0
density = -3.0
[[prescribed_charge.layers]]
center = 4000.0
thickness = 600.0
density = 1.5
"#
);

/// Runs [`LAYERS`] into the scratch file `<name>.nc` and returns its path.
fn run_layers(name: &str) -> std::path::PathBuf {
    let cfg = scratch(&format!("{name}.toml"));
    std::fs::write(&cfg, LAYERS).unwrap();
    let out = scratch(&format!("{name}.nc"));
    run_quiet(&cfg, &out);
    out
}

#[test]
fn analyze_command_finds_prescribed_layers() {
    // Known top-hat layers in (edges on cell faces), known regions out: the
    // heights, thicknesses and charges per area and in the column are those of
    // the layers exactly (charge = density x thickness), and the class is a
    // normal tripole.
    let out = run_layers("layers");
    let json = scratch("layers.json");
    let o = succeed(bin().arg("analyze").arg(&out).arg("--json").arg(&json));
    assert!(String::from_utf8_lossy(&o.stdout).contains("normal_tripole"));
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    let regions = v["records"][0]["regions"].as_array().unwrap();
    let area = std::f64::consts::PI * 2000.0 * 2000.0;
    let expect = [
        (4000.0, 600.0, 1.5e-9 * 600.0),
        (7000.0, 1000.0, -3e-9 * 1000.0),
        (10000.0, 2000.0, 1e-9 * 2000.0),
    ];
    assert_eq!(regions.len(), 3);
    for (r, (h, d, q)) in regions.iter().zip(expect) {
        assert!((r["height"].as_f64().unwrap() - h).abs() < 1e-9);
        assert!((r["thickness"].as_f64().unwrap() - d).abs() < 1e-9);
        assert!((r["charge_per_area"].as_f64().unwrap() - q).abs() < 1e-12 * q.abs());
        assert!((r["charge"].as_f64().unwrap() - q * area).abs() < 1e-9 * (q * area).abs());
    }
    assert_eq!(v["records"][0]["structure"], "normal_tripole");
}

#[test]
fn analyze_warns_when_the_stored_configuration_cannot_be_read() {
    // A file whose stored configuration this version rejects (written by
    // another version, or edited) still analyses per area; the column
    // charges need the radius, so their absence is said on stderr, not
    // left silent (common practice: a tool says what it could not do).
    // The layers of the test above, whose charges the file loses.
    let out = run_layers("unreadable");
    {
        let mut f = netcdf::append(&out).unwrap();
        f.add_attribute(
            stormcharge::output::reader::CONFIG_ATTRIBUTE,
            "[column]\nradius = -5.0\n",
        )
        .unwrap();
    }
    let json = scratch("unreadable.json");
    // This test process's HDF5 library opened the file for the edit and can
    // still hold its file lock when the analysing process opens it (seen
    // intermittently as "HDF error" under the parallel test runner): the
    // analysing process runs without HDF5 file locking.
    let o = succeed(
        bin()
            .env("HDF5_USE_FILE_LOCKING", "FALSE")
            .arg("analyze")
            .arg(&out)
            .arg("--json")
            .arg(&json),
    );
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("could not be read"), "{err}");
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    // Per area still exact (the lowest layer: density x thickness); no
    // column charges.
    let regions = v["records"][0]["regions"].as_array().unwrap();
    assert_eq!(regions.len(), 3);
    let q = regions[0]["charge_per_area"].as_f64().unwrap();
    assert!((q - 1.5e-9 * 600.0).abs() < 1e-12 * q.abs());
    assert!(regions.iter().all(|r| r["charge"].is_null()));
}

#[test]
fn analyze_reports_which_way_the_negative_ends_point() {
    // configs/tripole_flashes.toml: positive charge at 7 km over negative at
    // 3 km over a thin positive layer at 1.2 km. A negative ground flash
    // starts below the negative region and brings its negative end down
    // (common practice: the downward negative stepped leader; Mansell et
    // al. 2002 need a lower positive region for it), while the intracloud
    // flashes between the upper two regions have the negative end up. The
    // report's count of channels with the negative end down equals the
    // negative ground flashes, and the channel potentials' median lies
    // within their range.
    let out = scratch("ends.nc");
    run_quiet(&repo("configs/tripole_flashes.toml"), &out);
    let json = scratch("ends.json");
    let o = succeed(bin().arg("analyze").arg(&out).arg("--json").arg(&json));
    assert!(String::from_utf8_lossy(&o.stdout).contains("negative end down"));
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    let fl = &v["flashes"];
    let ground = fl["count_negative_ground"].as_u64().unwrap();
    let intracloud = fl["count_intracloud"].as_u64().unwrap();
    assert!(ground > 0 && intracloud > 0);
    let ends = fl["negative_end_down"].as_array().unwrap();
    assert_eq!(ends[0].as_u64().unwrap(), ground);
    assert_eq!(ends[1].as_u64().unwrap(), intracloud);
    let p = fl["channel_potential"].as_array().unwrap();
    let (mid, lo, hi) = (
        p[0].as_f64().unwrap(),
        p[1].as_f64().unwrap(),
        p[2].as_f64().unwrap(),
    );
    assert!(lo <= mid && mid <= hi, "{p:?}");
    // Every flash takes its negative charge from the one negative layer,
    // symmetric about 3 km, so every negative charge centre sits at the
    // same temperature; the intracloud flashes, the majority, take their
    // positive charge from the layer at 7 km, colder than 3 km (wiring of
    // the charge centres into the report; their analytic check is in
    // tests/analytic_discharge.rs).
    let t = |key: &str| -> [f64; 3] {
        let a = fl[key].as_array().unwrap();
        [0, 1, 2].map(|i| a[i].as_f64().unwrap())
    };
    let [neg_mid, neg_lo, neg_hi] = t("negative_charge_temperature");
    assert!(neg_hi - neg_lo < 1e-3, "{neg_lo} to {neg_hi} degC");
    let [pos_mid, _, _] = t("positive_charge_temperature");
    assert!(pos_mid < neg_mid - 20.0, "{pos_mid} vs {neg_mid} degC");
    // The structure while the storm flashes: a class of the detector, held
    // by a whole number of the flashing stage's records (wiring; the rule
    // is checked on synthetic records in the library's unit tests).
    let w = v["structure_while_flashing"].as_array().unwrap();
    let (class, share, records) = (
        w[0].as_str().unwrap(),
        w[1].as_f64().unwrap(),
        w[2].as_u64().unwrap() as f64,
    );
    assert!(class.starts_with("normal_"), "{class}");
    assert!(records > 0.0 && share > 0.0 && share <= 1.0);
    assert!(((share * records).round() - share * records).abs() < 1e-9);
}
