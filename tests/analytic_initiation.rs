//! Lightning initiation against analytic solutions and laboratory values:
//! the surface field of charged, polarised spheres, the Rayleigh limit,
//! corona onset, the runaway avalanche growth and its seeded flux, the
//! particle charge limits, and the time at which a growing field starts a
//! flash with and without the persistence rule.

mod common;
use common::*;
use std::f64::consts::PI;
use stormcharge::column::state::State;
use stormcharge::physics::breakdown::Criterion;
use stormcharge::physics::carriers::Carrier;
use stormcharge::physics::charging::rayleigh_limit;
use stormcharge::physics::charging::SharedCharge;
use stormcharge::physics::constants::{EPSILON_0, RHO_AIR_SEA_LEVEL as RHO0};
use stormcharge::physics::initiation::hydrometeor::{
    corona_limited_density, holds_a_particle, surface_field_of_density, tail_diameter, CoronaOnset,
};
use stormcharge::physics::initiation::runaway::{avalanches, Growth};

#[test]
fn polarised_and_charged_spheres() {
    // A conducting sphere in a uniform field E has 3E at its poles; one
    // holding Q has Q/(4 pi eps0 r^2) all over (analytic: Jackson, sec. 2.5;
    // Gauss's law). The largest surface field adds the two; the model takes
    // the charge as its surface density Q/(4 pi r^2).
    let (e, r, q) = (1.0e5, 1.5e-3, 2.0e-11);
    let sigma = q / (4.0 * PI * r * r);
    assert_eq!(surface_field_of_density(e, 0.0, 3.0), 3.0e5);
    let own = q / (4.0 * PI * EPSILON_0 * r * r);
    assert!(rel(surface_field_of_density(0.0, sigma, 3.0), own) < 1e-15);
    assert!(rel(surface_field_of_density(-e, -sigma, 3.0), 3.0e5 + own) < 1e-15);
    // The corona limit is the charge at which the surface reaches f E_onset.
    let onset = 5.0e5;
    let limit = corona_limited_density(e, 3.0, onset);
    assert!(rel(surface_field_of_density(e, limit, 3.0), 3.0 * onset) < 1e-12);
    assert_eq!(corona_limited_density(6.0e5, 3.0, onset), 0.0);
    assert!(corona_limited_density(e, 3.0, f64::INFINITY).is_infinite());
}

#[test]
fn surface_area_sharing_gives_every_particle_the_same_surface_field() {
    // Charge shared in proportion to surface area, q(D) = rho_q D^2
    // lambda^3/(2 N0), over the area pi D^2: one surface charge density for
    // every size (derived), so the largest particle's surface field, f |E| +
    // q/(4 pi eps0 r^2) by Gauss's law (as above), needs no diameter.
    let shared = SharedCharge {
        density: -2.0e-9,
        lambda: 1500.0,
        n0: 4.0e5,
    };
    let sigma = shared.surface_density();
    let e = 8.0e4;
    for d in [2.0e-4, 1.0e-3, 4.0e-3] {
        let q = shared.at_diameter(d);
        assert!(rel(q / (PI * d * d), sigma) < 1e-14);
        let r = 0.5 * d;
        let gauss = 3.0 * e + q.abs() / (4.0 * PI * EPSILON_0 * r * r);
        assert!(rel(surface_field_of_density(e, sigma, 3.0), gauss) < 1e-14);
    }
}

#[test]
fn rayleigh_limit_values() {
    // Q = 8 pi sqrt(eps0 gamma r^3) (Rayleigh 1882) with gamma = 0.0728 N/m:
    // 6.38e-10 C at r = 1 mm and 2.256e-10 C at 0.5 mm (derived one-line
    // checks, docs/references.md).
    assert!(rel(rayleigh_limit(1e-3), 6.38e-10) < 1e-3);
    assert!(rel(rayleigh_limit(0.5e-3), 2.256e-10) < 1e-3);
}

#[test]
fn corona_onset_matches_the_laboratory() {
    // Drops: 9.0 kV/cm at 1000 mb, 5.5 kV/cm at 500 mb (Griffiths & Latham
    // 1972); ice: about 4 kV/cm in mid-cloud conditions (taken at 500 mb),
    // none below -18 degC (Griffiths & Latham 1974).
    let o = CoronaOnset::default();
    assert!(rel(o.drop(1.0e5), 9.0e5) < 1e-12);
    assert!(rel(o.drop(5.0e4), 5.5e5) < 1e-12);
    assert!(rel(o.ice(5.0e4, -10.0), 4.0e5) < 1e-12);
    assert!(o.ice(5.0e4, -20.0).is_infinite());
    assert!(o.drop(7.5e4) > o.drop(5.0e4) && o.drop(2.0e4) > 0.0);
}

#[test]
fn largest_particle_per_cubic_metre() {
    // N(>D) = (N0/lambda) exp(-lambda D) = 1 at the tail diameter (analytic).
    let (n0, lambda) = (4.0e6, 2000.0);
    let d = tail_diameter(n0, lambda).unwrap();
    assert!(((n0 / lambda) * (-lambda * d).exp() - 1.0).abs() < 1e-12);
    assert!(holds_a_particle(n0, lambda));
    assert!(tail_diameter(1.0e3, 2000.0).is_none());
    assert!(!holds_a_particle(1.0e3, 2000.0));
}

#[test]
fn avalanche_growth_follows_the_fit_and_vanishes_at_threshold() {
    // lambda = 7.3 MeV/(eE - 0.276 MeV/m) (Coleman & Dwyer 2006, from memory):
    // 58.9 m at 400 kV/m and 10.08 m at 1 MV/m at sea-level density; zero
    // growth at and below the 284 kV/m threshold (Dwyer 2003); continuous
    // at the 300 kV/m floor of the fit.
    let g = Growth::default();
    assert!(rel(1.0 / g.rate(4.0e5, RHO0), 7.3e6 / 1.24e5) < 1e-12);
    assert!(rel(1.0 / g.rate(1.0e6, RHO0), 7.3e6 / 7.24e5) < 1e-12);
    assert_eq!(g.rate(2.84e5, RHO0), 0.0);
    assert_eq!(g.rate(2.0e5, RHO0), 0.0);
    let below = g.rate(3.0e5 * (1.0 - 1e-12), RHO0);
    let above = g.rate(3.0e5, RHO0);
    assert!(rel(below, above) < 1e-9);
    // Density scaling: the same reduced field gives the growth per unit
    // density.
    assert!(rel(g.rate(2.0e5, 0.5 * RHO0), 0.5 * g.rate(4.0e5, RHO0)) < 1e-12);
}

#[test]
fn uniform_field_multiplies_the_seed_by_exp_length_over_lambda() {
    // A stretch of uniform field 500 kV/m, 400 m long, at sea-level density:
    // exp(L/lambda) multiplication (analytic), the runaway flux leaving the
    // top (field pointing down, electrons run up) is the seed times it.
    let n = 41;
    let z: Vec<f64> = (0..n).map(|k| k as f64 * 10.0).collect();
    let mut e = vec![0.0; n];
    for x in e.iter_mut().take(35).skip(5) {
        *x = -5.0e5;
    }
    let rho = vec![RHO0; n];
    let seed = vec![30.0; n];
    let g = Growth::default();
    let a = avalanches(&e, &z, &rho, &seed, &g);
    let count = (z[34] - z[5]) * (5.0e5 - 2.76e5) / 7.3e6;
    assert!(rel(a.efolds, count) < 1e-12);
    assert!(rel(a.flux, 30.0 * count.exp()) < 1e-12);
    assert_eq!(a.flux_height, z[34]);
    // Below threshold nothing grows.
    let weak = vec![-2.5e5; n];
    assert_eq!(avalanches(&weak, &z, &rho, &seed, &g).efolds, 0.0);
}

#[test]
fn corona_limit_conserves_charge_and_stops_at_onset() {
    // Imposed graupel given far more charge than corona allows: the limit
    // moves the excess to small ions (charge conserved to round-off) and
    // leaves the largest particles at the onset surface field. (The imposed
    // graupel sits near -24 degC, colder than the -18 degC below which ice
    // is taken not to go into corona, so the cut-off is lowered here.)
    let exp = experiment(
        PRESCRIBED,
        &["ions.enabled=false", "breakdown.ice_corona_cutoff=-40"],
    );
    let mut s = State::initial(&exp);
    for _ in 0..60 {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
    }
    let g = Carrier::Graupel.index();
    for k in 0..exp.grid.len() {
        s.charge[g][k] = 1e-6
            * s.q[stormcharge::physics::microphysics::species::Species::Graupel.index()][k]
            / 2e-3;
    }
    let total = |s: &State| s.charge.iter().flatten().sum::<f64>();
    let before = total(&s);
    let gross: f64 = s.charge.iter().flatten().map(|c| c.abs()).sum();
    let (corona, _) = stormcharge::column::particle_limits::limit(&exp, &mut s);
    assert!(corona > 0.0);
    assert!((total(&s) - before).abs() <= 1e-14 * gross);
    let mut ratio = vec![0.0; exp.grid.len()];
    stormcharge::column::particle_limits::corona_ratios(&exp, &s, &mut ratio);
    assert!(ratio.iter().all(|&r| r <= 1.0 + 1e-9), "{ratio:?}");
    assert!(ratio.iter().any(|&r| r > 1.0 - 1e-9));
}

/// A growing 1 km layer of positive charge at 7.5-8.5 km over planar ground,
/// field-free above: below it E = -g h t/eps0 (Gauss's law), largest
/// relative to any density-scaled threshold at its lower edge.
const RAMP: &str = still_column!(
    r#"
[grid]
top = 10000.0
spacing = 100.0
[time]
step = 2.0
duration = 8000.0
output_interval = 1000.0
[electrostatics]
geometry = "planar"
[[prescribed_charge.layers]]
center = 8000.0
thickness = 1000.0
density = 0.0
growth_rate = 0.002
"#
);

/// Model time of the first flash and its ratio to the trigger's threshold.
fn first(extra: &[&str]) -> (f64, [f64; Criterion::COUNT]) {
    let exp = experiment(RAMP, extra);
    let (_, _, f) = first_flash(&exp);
    (f.time, f.criteria_ratio)
}

#[test]
fn a_growing_field_starts_a_flash_when_each_threshold_is_crossed() {
    // Crossing time t* = eps0 E_c(7500 m) / (g h), g h = 2e-12 C m-3 s-1 x
    // 1000 m (analytic); the flash comes at the end of the step in which
    // the crossing happens.
    let exp = experiment(RAMP, &[]);
    let face = 75;
    let gh = 0.002e-9 * 1000.0;
    for c in [
        Criterion::ConventionalBreakdown,
        Criterion::PositiveStreamer,
        Criterion::RunawayAvalanche,
        Criterion::RunawayBreakeven,
    ] {
        let threshold = exp.criteria_thresholds.thresholds[c.index()][face];
        let crossing = EPSILON_0 * threshold / gh;
        let expected = (crossing / 2.0).ceil() * 2.0;
        let (t, ratio) = first(&[&format!("breakdown.trigger=\"{}\"", c.name())]);
        assert!(
            (t - expected).abs() < 1e-9,
            "{}: {t} vs {expected}",
            c.name()
        );
        // At initiation the trigger has just been reached: a ratio of 1 up
        // to one step's growth.
        assert!(ratio[c.index()] >= 1.0 && ratio[c.index()] <= expected / crossing + 1e-12);
    }
}

#[test]
fn persistence_lets_the_field_overshoot() {
    // With the trigger required to hold for 60 s the flash comes 60 s after
    // the first step that met it, when the field has grown by the factor
    // (t1 + 60)/t* (analytic for a linear ramp): the documented overshoot.
    let exp = experiment(RAMP, &[]);
    let gh = 0.002e-9 * 1000.0;
    let threshold = exp.criteria_thresholds.thresholds[Criterion::RunawayAvalanche.index()][75];
    let crossing = EPSILON_0 * threshold / gh;
    let t1 = (crossing / 2.0).ceil() * 2.0;
    let (t, ratio) = first(&[
        "breakdown.trigger=\"runaway_avalanche\"",
        "breakdown.persistence_time=60",
    ]);
    assert!((t - (t1 + 60.0)).abs() < 1e-9, "{t}");
    let overshoot = ratio[Criterion::RunawayAvalanche.index()];
    assert!(rel(overshoot, (t1 + 60.0) / crossing) < 1e-9, "{overshoot}");
}

/// The first flash with the step split where the trigger is reached
/// (`discharge.locate_in_step`, the default).
fn first_located(extra: &[&str]) -> (f64, [f64; Criterion::COUNT], f64) {
    let exp = experiment(RAMP, extra);
    assert!(exp.discharge_params.locate);
    let mut s = State::initial(&exp);
    for _ in 0..exp.schedule.steps {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
        if let Some(f) = s.ledger.flashes.first() {
            return (f.time, f.criteria_ratio, exp.schedule.dt);
        }
    }
    panic!("no flash");
}

#[test]
fn a_located_flash_starts_at_the_analytic_crossing_time() {
    // The same ramp with the flash placed inside its step: the field is
    // linear in time, so the secant rule of `discharge::next_piece` finds
    // the crossing
    // t* = eps0 E_c(7500 m)/(g h) (Gauss's law, analytic), and the piece
    // ends the shortest piece (1e-3 of the step) past it, at every step
    // length; the ratio at initiation is t/t* (at least 1). With the
    // runaway trigger required to hold 60 s, the flash comes 60 s after
    // that start.
    let gh = 0.002e-9 * 1000.0;
    for dt in ["2.0", "0.5", "4.0"] {
        for c in [
            Criterion::ConventionalBreakdown,
            Criterion::RunawayAvalanche,
        ] {
            let trigger = format!("breakdown.trigger=\"{}\"", c.name());
            let step = format!("time.step={dt}");
            let exp = experiment(RAMP, &[&trigger, &step]);
            let threshold = exp.criteria_thresholds.thresholds[c.index()][75];
            let crossing = EPSILON_0 * threshold / gh;
            let (t, ratio, dt) = first_located(&[&trigger, &step]);
            let slack = stormcharge::column::discharge::SHORTEST_PIECE * dt;
            assert!(
                t >= crossing - 1e-9 && t <= crossing + slack + 1e-9,
                "{} at dt {dt}: {t} vs {crossing}",
                c.name()
            );
            // The ratio grows like the time (linear ramp from zero).
            let r = ratio[c.index()];
            assert!(r >= 1.0 && rel(r, t / crossing) < 1e-9, "{r}");
            // The gate opens at the located start plus 60 s; the piece that
            // reaches it may end a rounding short, adding one shortest piece.
            // (Only below conventional breakdown: the air cannot hold a
            // field above it for 60 s, and the run stops with that message.)
            if c == Criterion::ConventionalBreakdown {
                continue;
            }
            let (t, ratio, _) = first_located(&[&trigger, &step, "breakdown.persistence_time=60"]);
            assert!(
                t >= crossing + 60.0 - 1e-9 && t <= crossing + 60.0 + 2.0 * slack + 1e-9,
                "persistence at dt {dt}: {t} vs {}",
                crossing + 60.0
            );
            assert!(rel(ratio[c.index()], t / crossing) < 1e-9);
        }
    }
}

#[test]
fn default_trigger_starts_flashes_in_the_observed_overshoot_band() {
    // Before flashes, balloon-measured fields exceeded the runaway threshold
    // by factors of 1.1-3.3 (Stolzenburg et al. 2007, GRL 34, L04804) and
    // stayed far below conventional breakdown (common practice). The demo
    // storm does not flash with conducting air (docs/criteria.md), so the
    // check runs on the prescribed tripole of configs/tripole_flashes.toml
    // under the default trigger (the avalanche gain, the relativistic
    // feedback proxy): the median field at initiation lies in the band.
    let exp = experiment(
        &flash_config(),
        &["breakdown.trigger=\"avalanche_multiplication\""],
    );
    let (rec, s) = run_recorded(&exp);
    let mut r: Vec<f64> = rec
        .flashes
        .iter()
        .map(|f| f.criteria_ratio[Criterion::RunawayAvalanche.index()])
        .collect();
    assert!(r.len() >= 3, "{} flashes", r.len());
    let [_, median, _] = stormcharge::analysis::spread(&mut r);
    assert!((1.1..=3.3).contains(&median), "median {median}");
    assert!(s.peak_ratio[Criterion::ConventionalBreakdown.index()] < 1.0);
}
