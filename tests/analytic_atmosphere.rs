//! Hydrostatic integration and sounding input.

use stormcharge::grid::Grid;
use stormcharge::physics::atmosphere::analytic::AnalyticProfile;
use stormcharge::physics::atmosphere::saturation::murphy_koop_2005_liquid;
use stormcharge::physics::atmosphere::{BaseSource, BaseState};
use stormcharge::physics::constants::{G0, R_DRY};
use stormcharge::setup::sounding_input::sounding_from_table;

fn isothermal(t: f64) -> AnalyticProfile {
    AnalyticProfile {
        surface_temperature: t,
        surface_pressure: 100_000.0,
        surface_rh: 0.0,
        tropopause_rh: 0.0,
        lapse_rate: 0.0,
        tropopause_height: 12_000.0,
        stratosphere_lapse_rate: 0.0,
    }
}

#[test]
fn isothermal_round_trip() {
    // Analytic solution of dp/dz = -g p/(R_d T) for constant T:
    // p = p0 exp(-z/H), H = R_d T/g (any textbook, e.g. Wallace & Hobbs 2006 Eq. 3.28).
    let t = 250.0;
    let grid = Grid::uniform(200, 100.0);
    let b = BaseState::build(&grid, &BaseSource::Analytic(isothermal(t))).unwrap();
    let h = R_DRY * t / G0;
    for (k, &z) in grid.z.iter().enumerate() {
        let exact = 100_000.0 * (-z / h).exp();
        assert!(
            (b.centre.pressure[k] - exact).abs() / exact < 1e-6,
            "z = {z}"
        );
        let rho = exact / (R_DRY * t);
        assert!((b.centre.density[k] - rho).abs() / rho < 1e-6);
    }
}

#[test]
fn lapse_rate_round_trip() {
    // Constant lapse rate Gamma: p = p0 (T/T0)^(g/(R_d Gamma)) (polytropic
    // atmosphere; U.S. Standard Atmosphere 1976 Eq. 33a has the same form).
    let mut a = isothermal(300.0);
    a.lapse_rate = 6.5e-3;
    let grid = Grid::uniform(120, 100.0);
    let b = BaseState::build(&grid, &BaseSource::Analytic(a)).unwrap();
    for (k, &z) in grid.z.iter().enumerate() {
        let tz = 300.0 - 6.5e-3 * z;
        let exact = 100_000.0 * (tz / 300.0).powf(G0 / (R_DRY * 6.5e-3));
        assert!(
            (b.centre.pressure[k] - exact).abs() / exact < 1e-9,
            "z = {z}"
        );
    }
}

fn columns(names: [&str; 3]) -> Vec<String> {
    names.iter().map(|s| s.to_string()).collect()
}

#[test]
fn sounding_reproduces_its_levels_on_a_coinciding_grid() {
    // Levels every 50 m, i.e. at every centre and face of a 100 m grid: the
    // interpolation must return the sounding's own values (to round-off; the
    // weights are exactly 0 or 1 there).
    let grid = Grid::uniform(50, 100.0);
    let rows: Vec<Vec<f64>> = (0..=100)
        .map(|i| {
            let z = i as f64 * 50.0;
            vec![
                z,
                25.0 - 0.0065 * z + (i % 3) as f64 * 0.3,
                18.0 - 0.008 * z,
            ]
        })
        .collect();
    let s = sounding_from_table(
        &columns(["height", "temperature", "dew_point"]),
        &rows,
        "rows",
    )
    .unwrap();
    let b = BaseState::build(
        &grid,
        &BaseSource::Sounding {
            sounding: s,
            surface_pressure: 95_000.0,
        },
    )
    .unwrap();
    for k in 0..grid.len() {
        let row = &rows[2 * k + 1];
        assert_eq!(b.centre.temperature[k], row[1] + 273.15);
        // Dew point -> vapour pressure e_w(T_d) (Murphy & Koop 2005) -> mixing
        // ratio: check the vapour pressure recovered from the mixing ratio.
        let p = b.centre.pressure[k];
        let r = b.centre.vapour[k];
        let e = r * p / (stormcharge::physics::constants::EPSILON + r);
        let e_ref = murphy_koop_2005_liquid(row[2] + 273.15);
        assert!((e - e_ref).abs() / e_ref < 1e-12);
    }
    for k in 0..=grid.len() {
        assert_eq!(b.face.temperature[k], rows[2 * k][1] + 273.15);
    }
    assert_eq!(b.face.pressure[0], 95_000.0);
}

#[test]
fn pressure_sounding_matches_the_isothermal_analytic_column() {
    // A dry isothermal atmosphere written as a pressure sounding: the
    // hypsometric heights are exact (z = H ln(p0/p)), so the grid pressures
    // must match p0 exp(-z/H) to 1e-9.
    let t = 260.0;
    let h = R_DRY * t / G0;
    let rows: Vec<Vec<f64>> = [1000.0, 900.0, 700.0, 500.0, 300.0, 200.0, 100.0]
        .iter()
        .map(|&p| vec![p, t - 273.15, 0.0])
        .collect();
    let s = sounding_from_table(
        &columns(["pressure", "temperature", "relative_humidity"]),
        &rows,
        "rows",
    )
    .unwrap();
    let p0 = s.surface_pressure_from_table.unwrap();
    let grid = Grid::uniform(100, 100.0);
    s.check_span(grid.top()).unwrap();
    let b = BaseState::build(
        &grid,
        &BaseSource::Sounding {
            sounding: s,
            surface_pressure: p0,
        },
    )
    .unwrap();
    for (k, &z) in grid.z.iter().enumerate() {
        let exact = 100_000.0 * (-z / h).exp();
        assert!((b.centre.pressure[k] - exact).abs() / exact < 1e-9);
    }
}

#[test]
fn bad_soundings_are_rejected() {
    let c = columns(["height", "temperature", "dew_point"]);
    let not_monotonic = vec![
        vec![0.0, 20.0, 10.0],
        vec![1000.0, 14.0, 5.0],
        vec![900.0, 13.0, 4.0],
    ];
    let e = sounding_from_table(&c, &not_monotonic, "atmosphere.sounding.rows").unwrap_err();
    assert!(e[0].message.contains("monotonic"), "{}", e[0]);

    let missing = vec![vec![0.0, 20.0, 10.0], vec![1000.0, f64::NAN, 5.0]];
    let e = sounding_from_table(&c, &missing, "atmosphere.sounding.rows").unwrap_err();
    assert!(e[0].message.contains("missing"), "{}", e[0]);

    let short_row = vec![vec![0.0, 20.0, 10.0], vec![1000.0, 14.0]];
    let e = sounding_from_table(&c, &short_row, "atmosphere.sounding.rows").unwrap_err();
    assert!(e[0].message.contains("missing"), "{}", e[0]);

    let low = vec![vec![0.0, 20.0, 10.0], vec![5000.0, -10.0, -20.0]];
    let s = sounding_from_table(&c, &low, "atmosphere.sounding.rows").unwrap();
    // The levels span 0-5000 m; the grid needs 0-20000 m.
    assert_eq!(s.check_span(20_000.0), Err((0.0, 5000.0)));
}
