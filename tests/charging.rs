//! Charging: published facts of each scheme, magnitudes, conservation, the
//! structure detector, the demo storm, inductive magnitude, the map command.

mod common;
use common::*;

use std::path::Path;
use stormcharge::analysis::{classify, main_region, regions, separation, Structure};
use stormcharge::column::state::State;
use stormcharge::physics::carriers::Carrier;
use stormcharge::physics::charging::inductive::charge_per_rebound;
use stormcharge::physics::charging::{gardiner_1985, rayleigh_limit, saunders_peck_1998 as sp98};
use stormcharge::setup::experiment::Experiment;

fn demo() -> Experiment {
    Experiment::from_text(
        stormcharge::setup::config::DEMO_TOML,
        "demo",
        &[],
        Path::new("."),
    )
    .unwrap()
}

/// Temperature (degC) where a charge function of temperature changes sign,
/// scanning 0 to -30 degC in 0.01 K steps.
fn reversal(f: impl Fn(f64) -> f64) -> Option<f64> {
    let mut prev = f(-0.5);
    for i in 51..3000 {
        let t = -0.01 * i as f64;
        let q = f(t);
        if q.signum() != prev.signum() && q != 0.0 && prev != 0.0 {
            return Some(t);
        }
        prev = q;
    }
    None
}

#[test]
fn saunders_peck_1998_facts() {
    // SP98 abstract: negative graupel charging at low rime accretion rate as
    // warm as -2 degC; positive above the critical rate.
    assert!(sp98::charge_per_collision(-2.0, 0.3, 100e-6, 3.0) < 0.0);
    assert!(sp98::charge_per_collision(-5.0, 0.5, 100e-6, 3.0) < 0.0);
    assert!(sp98::charge_per_collision(-5.0, 4.0, 100e-6, 3.0) > 0.0);
    assert_eq!(sp98::charge_per_collision(-10.0, 0.05, 100e-6, 3.0), 0.0); // below RAR 0.1
                                                                           // The critical rate: 1 at 0 degC, continuous with the constant 3.4 at
                                                                           // -23.7 degC, never negative (physics.md: the polynomial would turn
                                                                           // negative near -33 degC if extrapolated).
    assert!((sp98::critical_rar(0.0) - 1.0).abs() < 1e-12);
    assert!((sp98::critical_rar(-23.69) - 3.4).abs() < 0.05);
    for i in 0..=400 {
        assert!(sp98::critical_rar(-0.1 * i as f64) > 0.0);
    }
    // Both branches are continuous at RAR_c (q -> 0 from both sides).
    let rc = sp98::critical_rar(-12.0);
    assert!(
        sp98::charge_fc(-12.0, rc + 1e-9).abs() < 1e-6
            && sp98::charge_fc(-12.0, rc - 1e-9).abs() < 1e-6
    );
}

#[test]
fn reversal_temperature_for_moderate_liquid_water() {
    // Laboratory facts (Takahashi 1978; Saunders et al. 1991; AMS Glossary,
    // "reversal temperature"): graupel charges positively warmer than the
    // reversal temperature and negatively colder at moderate liquid water, the
    // reversal lying between -10 and -20 degC. SP98 with RAR = LWC x V at
    // 0.5 g m-3 and 3 m/s:
    let t_r = reversal(|t| sp98::charge_per_collision(t, 0.5 * 3.0, 100e-6, 3.0)).unwrap();
    assert!((-20.0..=-10.0).contains(&t_r), "SP98 reversal {t_r}");
    assert!(sp98::charge_per_collision(t_r + 2.0, 1.5, 100e-6, 3.0) > 0.0);
    assert!(sp98::charge_per_collision(t_r - 2.0, 1.5, 100e-6, 3.0) < 0.0);
}

#[test]
fn gardiner_1985_facts() {
    // Sign changes at the configured reversal temperature (f has its root at
    // tau = -21.27, 1.3 % colder than T_r) and at LWC = 0.1 g m-3.
    for t_r in [-10.0, -15.0, -20.0] {
        let t =
            reversal(|t| gardiner_1985::charge_per_collision(t, t_r, 1.0, 100e-6, 3.0)).unwrap();
        assert!((t - t_r).abs() < 0.015 * t_r.abs() + 0.01, "T_r {t_r}: {t}");
        assert!(gardiner_1985::charge_per_collision(t_r + 3.0, t_r, 1.0, 100e-6, 3.0) > 0.0);
        assert!(gardiner_1985::charge_per_collision(t_r + 3.0, t_r, 0.05, 100e-6, 3.0) < 0.0);
    }
    assert_eq!(
        gardiner_1985::charge_per_collision(-8.0, -15.0, 0.1, 100e-6, 3.0),
        0.0
    );
    // Worked example (physics.md section 3): d = 100 um, dV = 3 m/s,
    // dL = 1 g m-3, tau = -10 gives about 6.8 fC (T_r = -21 makes tau = T).
    let q = gardiner_1985::charge_per_collision(-10.0, -21.0, 1.1, 100e-6, 3.0);
    assert!((q * 1e15 - 6.8).abs() < 0.1, "{q}");
}

#[test]
fn laboratory_magnitudes() {
    // Per-collision charges of 0.1 to some 100 fC over the laboratory ranges
    // (Takahashi 1978; physics.md section 3): both schemes reach the 0.1 fC
    // scale and stay below a few hundred fC.
    for scheme in ["sp98", "g85"] {
        let mut max: f64 = 0.0;
        for ti in 1..=30 {
            for li in 1..=50 {
                let (t, lwc) = (-(ti as f64), 0.1 * li as f64);
                let q = match scheme {
                    "sp98" => sp98::charge_per_collision(t, lwc * 3.0, 100e-6, 3.0),
                    _ => gardiner_1985::charge_per_collision(t, -15.0, lwc, 100e-6, 3.0),
                };
                max = max.max(q.abs());
            }
        }
        assert!(max > 0.1e-15 && max < 300e-15, "{scheme}: {max}");
    }
}

#[test]
fn inductive_charge_per_rebound_matches_jennings() {
    // Jennings (1975, QJRMS 101): 0.1-0.25 fC per event at 5-15 kV/m; the
    // formula with a 20 um droplet, <cos theta> = 0.2, uncharged collector.
    let q = charge_per_rebound(20e-6, 2e-3, 10e3, 0.2, 0.0);
    assert!((0.1e-15..=0.25e-15).contains(&q), "{q}");
    // A collector already charged positively in an upward field gains less.
    assert!(charge_per_rebound(20e-6, 2e-3, 10e3, 0.2, 1e-12) < q);
}

#[test]
fn rayleigh_limit_check_value() {
    // 6.3809e-10 C for r = 1 mm and gamma = 0.0728 N/m (check-values.md).
    assert!((rayleigh_limit(1e-3) - 6.3809e-10).abs() < 1e-13);
}

#[test]
fn charging_is_local_and_conserves() {
    // In every cell the charging of one step adds to one species exactly what
    // it takes from another: the cell's total charge does not change.
    let exp = demo();
    let mut s = State::initial(&exp);
    for _ in 0..800 {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
    }
    let before: Vec<f64> = (0..exp.grid.len())
        .map(|k| s.charge.iter().map(|c| c[k]).sum())
        .collect();
    stormcharge::column::charging::step(&exp, &mut s, exp.schedule.dt);
    let moved: f64 = s.charging_rates.graupel_ice.iter().map(|x| x.abs()).sum();
    assert!(moved > 0.0, "nothing charged at this time");
    for k in 0..exp.grid.len() {
        let after: f64 = s.charge.iter().map(|c| c[k]).sum();
        let scale: f64 = s.charge.iter().map(|c| c[k].abs()).sum::<f64>().max(1e-30);
        assert!((after - before[k]).abs() <= 1e-13 * scale, "cell {k}");
    }
    // No charging where one partner is missing.
    for k in 0..exp.grid.len() {
        if s.q[5][k] <= 0.0 || s.q[3][k] <= 0.0 {
            assert_eq!(s.charging_rates.graupel_ice[k], 0.0);
        }
    }
}

#[test]
fn charge_budgets_close_over_whole_runs() {
    // Column charge = initial + sources + advected - precipitated - lowered
    // to ground by flashes, to round-off: the demo storm (charging, charge
    // following mass, transport, flashes) and the prescribed tripole (ground
    // flashes).
    let flash_cfg = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("configs/tripole_flashes.toml"),
    )
    .unwrap();
    for exp in [
        demo(),
        Experiment::from_text(&flash_cfg, "flashes", &[], Path::new(".")).unwrap(),
    ] {
        let (rec, summary) = run_recorded(&exp);
        assert!(summary.flash_counts.iter().sum::<u64>() > 0);
        let residual = rec.series("charge_budget_residual");
        let scale = rec
            .get("charge_density")
            .iter()
            .map(|r| separation(r, exp.grid.dz))
            .fold(0.0_f64, f64::max);
        assert!(scale > 0.0);
        for r in residual {
            assert!(r.abs() <= 1e-12 * scale, "residual {r} vs {scale}");
        }
    }
}

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
    let (z, rho, t) = synthetic(&[]);
    assert_eq!(
        classify(&regions(&z, 100.0, &rho, &t, 0.1)),
        Structure::Other
    );
}

#[test]
fn demo_storm_charges_flashes_and_is_plausible() {
    // The demo storm: charge separates, flashes happen, and from the first
    // flash to the end of the mature stage (updraft at full strength until
    // 2100 s) the largest negative region sits at -30 to -10 degC with
    // positive charge above it (the upper
    // two regions of the tripole; Krehbiel 1986, Williams 1989). Peak fields
    // stay below conventional breakdown; mean particle charge is tens of pC
    // or less (Marshall & Winn; check-values.md) and below the Rayleigh limit.
    let exp = demo();
    let (rec, s) = run_recorded(&exp);
    assert!(s.flash_counts[0] > 0);
    assert!(
        s.peak_ratio[0] < 1.0,
        "conventional breakdown ratio {}",
        s.peak_ratio[0]
    );
    assert!(
        s.max_particle_charge > 0.0 && s.max_particle_charge < 100e-12,
        "{}",
        s.max_particle_charge
    );
    assert_eq!(s.rayleigh_exceeded, 0);
    let rho = rec.get("charge_density");
    let t = rec.get("air_temperature");
    let first = s.first_flash.unwrap();
    assert!(first < 2100.0);
    for (r, &time) in rec.times.iter().enumerate() {
        if (first..=2100.0).contains(&time) {
            let regs = regions(&exp.grid.z, exp.grid.dz, &rho[r], &t[r], 0.1);
            let n = main_region(&regs, -1.0).unwrap();
            assert!(
                (-30.0..=-10.0).contains(&n.temperature),
                "t = {time}: main negative at {} degC",
                n.temperature
            );
            assert!(regs.iter().any(|x| x.polarity > 0.0 && x.height > n.height));
        }
    }
}

#[test]
fn demo_storm_is_a_normal_tripole_at_peak_separation() {
    // At the record of largest charge separation the demo shows the normal
    // tripole (Williams 1989, JGR 94; check-values/physics.md section 7): the
    // largest negative region between -10 and -25 degC (set by temperature,
    // Krehbiel 1986), positive charge above it and a smaller positive region
    // below it.
    let exp = demo();
    let (rec, _) = run_recorded(&exp);
    let rho = rec.get("charge_density");
    let t = rec.get("air_temperature");
    let best = (0..rho.len())
        .max_by(|&a, &b| {
            separation(&rho[a], exp.grid.dz).total_cmp(&separation(&rho[b], exp.grid.dz))
        })
        .unwrap();
    let regs = regions(&exp.grid.z, exp.grid.dz, &rho[best], &t[best], 0.1);
    assert_eq!(
        classify(&regs),
        Structure::NormalTripole,
        "t = {}: {regs:?}",
        rec.times[best]
    );
    let n = main_region(&regs, -1.0).unwrap();
    assert!(
        (-25.0..=-10.0).contains(&n.temperature),
        "main negative at {} degC",
        n.temperature
    );
    let above = regs
        .iter()
        .filter(|x| x.polarity > 0.0 && x.bottom >= n.top)
        .map(|x| x.charge)
        .sum::<f64>();
    let below = regs
        .iter()
        .filter(|x| x.polarity > 0.0 && x.top <= n.bottom)
        .map(|x| x.charge)
        .sum::<f64>();
    assert!(
        above > 0.0 && below > 0.0 && below < n.charge.abs(),
        "above {above}, below {below}"
    );
}

#[test]
fn rime_accretion_rate_scheme_gives_early_inverted_polarity() {
    // RAR-based charging (Saunders & Peck 1998) charges graupel positively at
    // the low rime accretion rates of a young storm, giving inverted polarity
    // aloft early on (physics.md section 3). The demo storm with SP98 and no
    // inductive charging shows it in its first 20 minutes.
    let exp = Experiment::from_text(
        stormcharge::setup::config::DEMO_TOML,
        "demo",
        &[
            "charging.scheme=saunders_peck_1998".into(),
            "charging.inductive=false".into(),
        ],
        Path::new("."),
    )
    .unwrap();
    let (rec, _) = run_recorded(&exp);
    let rho = rec.get("charge_density");
    let t = rec.get("air_temperature");
    let early = rec.times.iter().enumerate().any(|(r, &time)| {
        time <= 1200.0
            && matches!(
                classify(&regions(&exp.grid.z, exp.grid.dz, &rho[r], &t[r], 0.1)),
                Structure::InvertedDipole | Structure::InvertedTripole
            )
    });
    assert!(early);
}

#[test]
fn charging_map_command() {
    let dir = std::env::temp_dir().join(format!("stormcharge-map-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let csv = dir.join("map.csv");
    succeed(
        bin()
            .args(["charging-map", "--scheme", "saunders_peck_1998", "--csv"])
            .arg(&csv),
    );
    let text = std::fs::read_to_string(&csv).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "temperature_degC,liquid_water_g_m3,charge_fC");
    assert_eq!(lines.len(), 1 + 16 * 8);
    // Values are the scheme's own: -5 degC, 0.1 g m-3 (RAR 0.3): negative.
    let row = lines.iter().find(|l| l.starts_with("-5,0.1,")).unwrap();
    let q: f64 = row.rsplit(',').next().unwrap().parse().unwrap();
    assert!((q - sp98::charge_per_collision(-5.0, 0.3, 100e-6, 3.0) * 1e15).abs() < 1e-9);
    let o = bin()
        .args(["charging-map", "--scheme", "takahashi"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn charge_follows_mass() {
    // physics.md section 5: a transfer x -> y moves charge in proportion to
    // mass; evaporation releases charge to the ions; a vanished species gives
    // all its charge to the ions. Built by hand: half the cloud water goes to
    // rain, a quarter of the rain evaporates, and the snow vanishes.
    use stormcharge::physics::microphysics::CellReport;
    let mut report = CellReport {
        q_start: [5e-3, 1e-3, 2e-3, 0.0, 1e-4, 0.0],
        ..CellReport::default()
    };
    report.transfers[0] = 5e-4; // cloud -> rain (autoconversion)
    report.transfers[2] = 6.25e-4; // rain -> vapour: a quarter of 2e-3 + 5e-4
    let q_end = [5.6e-3, 5e-4, 1.875e-3, 0.0, 0.0, 0.0];
    let mut charge: Vec<Vec<f64>> = vec![vec![0.0]; Carrier::ALL.len()];
    charge[Carrier::Cloud.index()][0] = 4e-9;
    charge[Carrier::Rain.index()][0] = -1e-9;
    charge[Carrier::Snow.index()][0] = 3e-10;
    let total: f64 = charge.iter().map(|c| c[0]).sum();
    stormcharge::physics::charging::follow_mass::apply(&report, &q_end, &mut charge, 0);
    let c = |x: Carrier| charge[x.index()][0];
    assert!((c(Carrier::Cloud) - 2e-9).abs() < 1e-21);
    // Rain: -1 + 2 (from cloud) = 1 nC m-3 passed through 2.5 g/kg, of which a
    // quarter evaporated... of its starting charge (-1 nC m-3): -0.25 to ions.
    assert!(
        (c(Carrier::Rain) - (-1e-9 + 2e-9 + 0.25e-9)).abs() < 1e-21,
        "{}",
        c(Carrier::Rain)
    );
    assert!((c(Carrier::Snow)).abs() == 0.0);
    assert!((c(Carrier::Ions) - (-0.25e-9 + 3e-10)).abs() < 1e-21);
    let after: f64 = charge.iter().map(|c| c[0]).sum();
    assert!((after - total).abs() < 1e-22);
}

#[test]
fn analyze_command_finds_prescribed_layers() {
    // Known top-hat layers in (edges on cell faces), known regions out: the
    // heights, thicknesses and charges per area and in the column are those of
    // the layers exactly (charge = density x thickness), and the class is a
    // normal tripole.
    let text = crate::still_column!(
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
[electrostatics]
geometry = "column"
column_radius = 2000.0
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
    let cfg = scratch("layers.toml");
    std::fs::write(&cfg, text).unwrap();
    let out = scratch("layers.nc");
    succeed(bin().args(["run", "--quiet"]).arg(&cfg).arg("-o").arg(&out));
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
