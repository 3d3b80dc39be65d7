//! The table-driven charging scheme: bilinear interpolation is exact for a
//! bilinear q(T, x) (analytic); a table of Saunders & Peck (1998)'s q over
//! temperature x rime accretion rate reproduces that scheme's run within
//! the interpolation error; bad tables are refused naming file, line and
//! column.

mod common;
use common::*;

use stormcharge::physics::charging::saunders_peck_1998::charge_fc;
use stormcharge::physics::charging::table::{Axis, ChargeTable};
use stormcharge::setup::charge_table_input::read;

fn write(name: &str, text: &str) -> std::path::PathBuf {
    let p = scratch(name);
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn bilinear_is_exact_for_a_bilinear_charge() {
    // q = 2 + 0.3 T - 1.5 x + 0.05 T x on a coarse, unevenly spaced grid:
    // bilinear interpolation reproduces it at every point inside (exact for
    // functions linear in each variable), and holds the edge values
    // outside (no extrapolation beyond the laboratory range).
    let f = |t: f64, x: f64| 2.0 + 0.3 * t - 1.5 * x + 0.05 * t * x;
    let t = vec![-30.0, -21.0, -10.0, -2.0, 0.0];
    let x = vec![0.0, 0.4, 1.5, 6.0];
    let q = t
        .iter()
        .flat_map(|&a| x.iter().map(move |&b| f(a, b)))
        .collect();
    let tab = ChargeTable {
        axis: Axis::LiquidWater,
        t,
        x,
        q,
    };
    for (tt, xx) in [(-25.3, 0.1), (-12.0, 3.3), (-0.5, 5.99), (-21.0, 0.4)] {
        assert!((tab.charge_fc(tt, xx) - f(tt, xx)).abs() < 1e-12);
    }
    assert_eq!(tab.charge_fc(-40.0, 10.0), f(-30.0, 6.0));
}

fn sp98_table(dt: f64, dr: f64) -> String {
    let mut s = String::from("temperature_degC,rime_accretion_rate_g_m2_s,charge_fC\n");
    let nt = (40.0 / dt) as usize;
    let nr = (10.0 / dr) as usize;
    for i in 0..=nt {
        for j in 0..=nr {
            let (t, r) = (-(i as f64) * dt, j as f64 * dr);
            s.push_str(&format!("{t},{r},{:?}\n", charge_fc(t, r)));
        }
    }
    s
}

#[test]
fn a_table_of_saunders_peck_reproduces_its_run() {
    // The table holds SP98's q on 0.25 K x 0.05 g m-2 s-1; its largest
    // interpolation error against the formula (measured below on a finer
    // grid) bounds how far the runs may differ. Demo storm, inductive
    // charging off, 30 minutes: the charge density of the two runs agrees
    // within 1 % (relative L1 over every record).
    let csv = write("sp98_table.csv", &sp98_table(0.25, 0.05));
    let (_, _, tab) = read(&csv).unwrap();
    let mut worst: f64 = 0.0;
    for i in 0..400 {
        for j in 0..200 {
            let (t, r) = (-0.0731 * i as f64, 0.0497 * j as f64);
            worst = worst.max((tab.charge_fc(t, r) - charge_fc(t, r)).abs());
        }
    }
    assert!(worst < 0.2, "largest interpolation error {worst} fC");
    let set = |scheme: &str| {
        let mut v = vec![
            "charging.inductive=false".to_string(),
            "time.duration=1800".to_string(),
            format!("charging.scheme=\"{scheme}\""),
        ];
        if scheme == "table" {
            v.push(format!("charging.table_file=\"{}\"", csv.display()));
        }
        v
    };
    let run = |scheme: &str| {
        let o: Vec<String> = set(scheme);
        let refs: Vec<&str> = o.iter().map(String::as_str).collect();
        run_recorded(&demo(&refs)).0
    };
    let (a, b) = (run("saunders_peck_1998"), run("table"));
    let (mut num, mut den) = (0.0, 0.0);
    for (x, y) in a.get("charge_density").iter().zip(b.get("charge_density")) {
        for (p, q) in x.iter().zip(y) {
            num += (p - q).abs();
            den += p.abs();
        }
    }
    assert!(den > 0.0);
    assert!(num / den < 0.01, "relative L1 difference {}", num / den);
}

#[test]
fn bad_tables_name_file_line_and_column() {
    let header = "temperature_degC,liquid_water_g_m3,charge_fC\n";
    let cases = [
        (
            "units.csv",
            "temperature_K,liquid_water_g_m3,charge_fC\n1,2,3\n",
            "header",
        ),
        (
            "nan.csv",
            &format!("{header}-1,0.5,1\n-1,1.0,nan\n-2,0.5,1\n-2,1.0,1\n"),
            ":3, column 3",
        ),
        (
            "text.csv",
            &format!("{header}-1,0.5,1\n-1,abc,2\n"),
            ":3, column 2",
        ),
        (
            "range.csv",
            &format!("{header}-1,0.5,1\n-1,1.0,1\n25,0.5,1\n25,1.0,1\n"),
            ":4, column 1",
        ),
        (
            "missing.csv",
            &format!("{header}-1,0.5,1\n-1,1.0,1\n-2,0.5,1\n"),
            "not complete",
        ),
        (
            "twice.csv",
            &format!("{header}-1,0.5,1\n-1,0.5,2\n-2,0.5,1\n-2,1.0,1\n-1,1.0,1\n"),
            "twice",
        ),
    ];
    for (name, text, expect) in cases {
        let p = write(name, text);
        let e = read(&p).unwrap_err().to_string();
        assert!(e.contains(expect) && e.contains(name), "{name}: {e}");
        assert!(!e.contains("abc"), "{name}: quotes the file: {e}");
    }
}

#[test]
fn the_resolved_configuration_holds_the_table_inline() {
    // Like soundings, a table file is read once and stored inline in the
    // resolved configuration, so the configuration an output file stores
    // reproduces the run without the file: resolving that text elsewhere
    // gives the same table.
    let csv = write("inline_table.csv", &sp98_table(1.0, 0.5));
    let exp = demo(&[
        "charging.scheme=\"table\"",
        &format!("charging.table_file=\"{}\"", csv.display()),
    ]);
    let text = exp.config.to_toml();
    assert!(!text.contains("table_file") && text.contains("table_rows"));
    let again = stormcharge::setup::experiment::Experiment::from_text(
        &text,
        "stored",
        &[],
        std::path::Path::new("/"),
    )
    .unwrap();
    assert_eq!(exp.charging_params.table, again.charging_params.table);
    assert!(exp.charging_params.table.is_some());
}
