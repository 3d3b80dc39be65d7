//! Small ions against published and textbook values: the cosmic-ray
//! ionisation profile, the recombination coefficient, mobilities, and the
//! fair-weather column of the global circuit.

mod common;
use common::*;
use stormcharge::column::state::State;
use stormcharge::physics::ions::ionisation::CosmicRayProfile;
use stormcharge::physics::ions::{conductivity, recombination_tinsley_zhou_2006, Mobility};

/// Standard-atmosphere pressure and temperature at height z (m).
fn air(z: f64) -> (f64, f64) {
    let s = stormcharge::physics::atmosphere::standard_1976::us_standard_1976(z).unwrap();
    (s.pressure, s.temperature)
}

fn q_at(latitude: f64, xi: f64, z: f64) -> f64 {
    let (p, t) = air(z);
    CosmicRayProfile::new(latitude, xi).rate(z, p, t)
}

#[test]
fn cosmic_ray_ionisation_has_the_observed_magnitudes() {
    // About 2 ion pairs cm-3 s-1 from cosmic rays near sea level, tens of
    // cm-3 s-1 in the upper troposphere, a maximum between about 10 and
    // 20 km, more at high geomagnetic latitude than at the equator and more
    // at solar minimum than at maximum, by of order 10-30 % in the upper
    // troposphere at high latitude (docs/references.md, "Cosmic-ray
    // ionisation"; magnitudes from memory, hence the wide bounds).
    let cm = 1e6; // m-3 s-1 per cm-3 s-1
    for lat in [30.0, 45.0, 60.0] {
        let q0 = q_at(lat, 0.5, 0.0) / cm;
        assert!((1.5..=2.6).contains(&q0), "sea level at {lat} deg: {q0}");
    }
    assert!((1.2..=2.0).contains(&(q_at(0.0, 0.5, 0.0) / cm)));
    for lat in [0.0, 45.0, 60.0] {
        let q10 = q_at(lat, 0.5, 10_000.0) / cm;
        assert!((15.0..=60.0).contains(&q10), "10 km at {lat} deg: {q10}");
        let heights: Vec<f64> = (0..=300).map(|i| i as f64 * 100.0).collect();
        let top = heights
            .iter()
            .copied()
            .max_by(|a, b| q_at(lat, 0.5, *a).total_cmp(&q_at(lat, 0.5, *b)))
            .unwrap();
        assert!((9_000.0..=20_000.0).contains(&top), "maximum at {top} m");
    }
    for z in [0.0, 5e3, 10e3, 15e3] {
        assert!(q_at(60.0, 0.5, z) > q_at(0.0, 0.5, z));
        assert!(q_at(60.0, 0.0, z) > q_at(60.0, 1.0, z));
    }
    let swing = 1.0 - q_at(60.0, 1.0, 12_000.0) / q_at(60.0, 0.0, 12_000.0);
    assert!((0.1..=0.3).contains(&swing), "solar-cycle swing {swing}");
}

#[test]
fn cosmic_ray_profile_is_continuous_at_its_knots() {
    // The parameterisation joins its pieces with continuous values
    // (Slyunyaev et al. 2015): no step anywhere on a 1 m scan.
    for (lat, xi) in [(0.0, 0.0), (45.0, 0.5), (70.0, 1.0)] {
        let p = CosmicRayProfile::new(lat, xi);
        let mut prev = p.normalised(0.0);
        for i in 1..=40_000 {
            let q = p.normalised(i as f64 * 1e-3);
            assert!((q - prev).abs() <= 2e-3 * prev, "jump at {} m", i);
            prev = q;
        }
    }
}

#[test]
fn recombination_matches_laboratory_values_near_the_ground() {
    // alpha = 1.7e-6 cm3 s-1 at standard conditions (Zauner-Wieczorek,
    // Curtius & Kuerten 2022, ACP 22, 12443; docs/references.md): within 5 %.
    let (p, t) = air(0.0);
    let n_air = p / (stormcharge::physics::constants::BOLTZMANN * t);
    let alpha = recombination_tinsley_zhou_2006(t, n_air, 0.0);
    assert!(rel(alpha, 1.7e-12) < 0.05, "{alpha}");
}

#[test]
fn mobility_follows_tammet_temperature_exponent() {
    // At fixed pressure d ln mu / d ln T = 0.6 for small ions (Tammet 1998,
    // JGR 103, 13933, abstract); at fixed temperature mu ~ 1/p (Langevin).
    let m = Mobility::default();
    let (a, _) = m.at(80_000.0, 250.0);
    let (b, _) = m.at(80_000.0, 250.0 * 1.1);
    assert!(((b / a).ln() / 1.1f64.ln() - 0.6).abs() < 1e-12);
    let (c, _) = m.at(40_000.0, 250.0);
    assert!(rel(c, 2.0 * a) < 1e-12);
}

/// A still, cloudless column between the ground and a conductor at the
/// ionospheric potential, with the default ion profiles.
fn fair_weather(extra: &[&str]) -> stormcharge::setup::experiment::Experiment {
    let text = r#"
[grid]
top = 20000.0
spacing = 250.0
[time]
step = 20.0
duration = 43200.0
output_interval = 43200.0
[atmosphere]
profile = "standard_1976"
[updraft]
peak_speed = 0.0
[microphysics]
scheme = "off"
[electrostatics]
geometry = "planar"
top_boundary = "conductor"
top_potential = 250000.0
[discharge]
enabled = false
"#;
    experiment(text, extra)
}

/// Runs the fair-weather column to its steady state (twelve hours, many
/// relaxation times at every height).
fn settled(extra: &[&str]) -> (stormcharge::setup::experiment::Experiment, State) {
    let exp = fair_weather(extra);
    let mut s = State::initial(&exp);
    for _ in 0..exp.schedule.steps {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
    }
    (exp, s)
}

#[test]
fn fair_weather_column_matches_the_global_circuit() {
    // Textbook magnitudes of the global circuit (docs/references.md,
    // "Global circuit"; from memory, except the air-earth current of about
    // 2 pA m-2, seen): surface conductivity of order 1e-14 S m-1 rising
    // roughly exponentially with height, columnar resistance of order
    // 1e17 Ohm m2, air-earth current density of a few pA m-2 and a surface
    // field of order 100 V/m pointing down, with the ionosphere at 250 kV.
    // Bounds are a factor of about 3 either way: order-of-magnitude facts.
    let (exp, s) = settled(&[]);
    let n = exp.grid.len();
    let sigma: Vec<f64> = (0..n)
        .map(|k| {
            conductivity(
                s.n_ion[0][k],
                s.n_ion[1][k],
                exp.ions.mu_pos[k],
                exp.ions.mu_neg[k],
            )
        })
        .collect();
    assert!(
        (0.5e-14..=5e-14).contains(&sigma[0]),
        "surface conductivity {}",
        sigma[0]
    );
    // Least-squares scale height of ln sigma over the lowest 10 km.
    let pts: Vec<(f64, f64)> = (0..n)
        .filter(|&k| exp.grid.z[k] <= 10_000.0)
        .map(|k| (exp.grid.z[k], sigma[k].ln()))
        .collect();
    let m = pts.len() as f64;
    let (sx, sy) = pts.iter().fold((0.0, 0.0), |a, p| (a.0 + p.0, a.1 + p.1));
    let (sxx, sxy) = pts
        .iter()
        .fold((0.0, 0.0), |a, p| (a.0 + p.0 * p.0, a.1 + p.0 * p.1));
    let slope = (m * sxy - sx * sy) / (m * sxx - sx * sx);
    let scale_height = 1.0 / slope;
    assert!(
        (2_000.0..=8_000.0).contains(&scale_height),
        "scale height {scale_height} m"
    );
    let resistance: f64 = sigma.iter().map(|x| exp.grid.dz / x).sum();
    assert!(
        (3e16..=3e17).contains(&resistance),
        "columnar resistance {resistance}"
    );
    // Steady state: the same current through every face (to 1e-6).
    let j = s.conduction_current[n / 2];
    for jf in &s.conduction_current {
        assert!(rel(*jf, j) < 1e-6, "{jf} vs {j}");
    }
    assert!(
        (-6e-12..=-1e-12).contains(&j),
        "air-earth current {j} A m-2"
    );
    assert!(
        (-300.0..=-50.0).contains(&s.field[0]),
        "surface field {} V/m",
        s.field[0]
    );
    // The current is the ionospheric potential over the resistance, within
    // the electrode layer's share (the ground face carries positive ions only).
    assert!(rel(-j, 250e3 / resistance) < 0.5);
    // The budget closes to round-off of the terms it sums: twelve hours of
    // air-earth current carry about 40 times the column's own charge
    // through it.
    let t = &s.charge_transport;
    let scale = s.column_charge.abs() + t.conducted_to_ground.abs() + t.conducted_out_top.abs();
    assert!(
        s.charge_budget_residual().abs() <= 1e-10 * scale,
        "{} against {scale}",
        s.charge_budget_residual()
    );
}

#[test]
fn a_forbush_decrease_lowers_the_air_earth_current() {
    // Less ionisation, fewer ions, a more resistive column, less current at
    // a fixed ionospheric potential: the sign every global-circuit model
    // gives (common practice), and at most the square-root scaling of clean
    // air, since aerosol makes part of the loss linear.
    let (_, a) = settled(&[]);
    let (_, b) = settled(&["ions.ionisation_scale=0.9"]);
    let (ja, jb) = (a.conduction_current[0], b.conduction_current[0]);
    assert!(jb.abs() < ja.abs());
    assert!(jb.abs() / ja.abs() >= 0.9 - 1e-9, "{}", jb / ja);
}

#[test]
fn cosmic_ray_profile_passes_through_the_parameterisation_knots() {
    // Slyunyaev, Mareev & Zhidkov (2015), appendix: knot i sits at height
    // Z_i = H_i + (B_i - b_i xi) s^g_i with production (normalised to
    // 297.15 K, 98658.55 Pa) Q_i = (C_i - c_i xi) + (D_i - d_i xi) s^h_i,
    // s = sin(min(|lambda|, K_i))/sin K_i. Worked by hand from their table
    // (coefficients as read, docs/references.md) at the equator (s = 0) and
    // the pole (s = 1), solar minimum (xi = 0) and maximum (xi = 1):
    // heights in km, Q in 1e6 m-3 s-1 (ion pairs cm-3 s-1).
    let cases: [(f64, f64, [f64; 6], [f64; 6]); 4] = [
        (
            0.0,
            0.0,
            [0.0, 5.0, 10.0, 16.0, 23.0, 37.0],
            [1.4, 15.0, 64.0, 93.0, 74.0, 45.0],
        ),
        (
            0.0,
            1.0,
            [0.0, 5.0, 10.0, 16.0, 23.0, 37.0],
            [1.3, 14.5, 62.0, 88.0, 71.0, 43.0],
        ),
        (
            90.0,
            1.0,
            [0.0, 5.0, 15.0, 23.0, 28.0, 37.0],
            [2.0, 22.0, 215.0, 265.0, 256.0, 250.0],
        ),
        // At the pole at solar minimum the last three knots coincide at 37 km.
        (
            90.0,
            0.0,
            [0.0, 5.0, 15.0, 37.0, 37.0, 37.0],
            [2.2, 25.0, 300.0, 495.0, 495.0, 495.0],
        ),
    ];
    for (lat, xi, z, q) in cases {
        let p = CosmicRayProfile::new(lat, xi);
        for i in 0..6 {
            let got = p.normalised(z[i]) / 1e6;
            assert!(
                rel(got, q[i]) < 1e-12,
                "lat {lat}, xi {xi}, knot {i}: {got} against {}",
                q[i]
            );
        }
        // Between the ground and Z_1 the profile is exponential: at half
        // of Z_1 the geometric mean of Q_0 and Q_1.
        let mid = p.normalised(0.5 * z[1]) / 1e6;
        assert!(rel(mid, (q[0] * q[1]).sqrt()) < 1e-12, "{mid}");
        // In air of the reference state the rate is the normalised value.
        let (tq, pq) = stormcharge::physics::ions::ionisation::REFERENCE_AIR;
        assert!(rel(p.rate(10_000.0, pq, tq), p.normalised(10.0)) < 1e-15);
    }
}
