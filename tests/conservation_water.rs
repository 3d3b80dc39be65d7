//! Water budgets: the saturation adjustment and whole moist runs close to
//! round-off with every source and sink booked.

mod common;
use common::*;

use stormcharge::column::state::State;
use stormcharge::physics::atmosphere::saturation::murphy_koop_2005_liquid;
use stormcharge::physics::constants::{CP_DRY, EPSILON, L_VAPORISATION};
use stormcharge::physics::microphysics::adjust;
use stormcharge::physics::microphysics::rates::CellState;
use stormcharge::physics::microphysics::species::Species;
use stormcharge::setup::experiment::Experiment;

fn column_water(exp: &Experiment, s: &State) -> f64 {
    let rho = &exp.base.centre.density;
    Species::ALL
        .iter()
        .map(|sp| {
            s.q[sp.index()]
                .iter()
                .zip(rho)
                .map(|(q, r)| q * r)
                .sum::<f64>()
        })
        .sum::<f64>()
        * exp.grid.dz
}

#[test]
fn saturation_adjustment_reaches_saturation_and_conserves() {
    // After adjustment the air is saturated over liquid (Murphy & Koop 2005)
    // to 1e-6, total water q_v + q_c and the liquid-water static energy
    // c_p T - L_v q_c are unchanged (to round-off).
    let p = 70_000.0;
    for (qv, qc, t) in [
        (0.015, 0.0, 285.0),
        (0.004, 0.002, 275.0),
        (0.002, 0.0005, 268.0),
        (0.01, 0.0, 290.0),
        // Subsaturated air with a trace or a little cloud water: all of it
        // evaporates and the air stays subsaturated.
        (0.002, 1e-20, 290.0),
        (0.003, 1e-4, 295.0),
    ] {
        let mut s = CellState {
            q: [qv, qc, 0.0, 0.0, 0.0, 0.0],
            n_ice: 0.0,
            t,
        };
        let (w0, h0) = (qv + qc, CP_DRY * t - L_VAPORISATION * qc);
        adjust::saturation_adjustment(&mut s, p);
        assert!(rel(s.q[0] + s.q[1], w0) < 1e-14);
        assert!(rel(CP_DRY * s.t - L_VAPORISATION * s.q[1], h0) < 1e-14);
        let e = s.q[0] * p / (EPSILON + s.q[0]);
        let rh = e / murphy_koop_2005_liquid(s.t);
        if s.q[1] > 0.0 {
            assert!((rh - 1.0).abs() < 1e-6, "RH {rh}");
        } else {
            assert!(rh <= 1.0 + 1e-6);
            assert_eq!(s.q[0], qv + qc);
        }
    }
}

#[test]
fn water_budget_of_a_moist_run_closes() {
    // Change in column water = inflow - outflow + lateral exchange - surface
    // precipitation + mass created by clipping, to round-off (1e-12 of the
    // column water), over the demo storm, also with drops freezing on
    // contact with crystals (a rain -> graupel transfer and its heat) and
    // with eddy diffusion (which moves water inside the column only).
    for set in [
        &[][..],
        &["microphysics.rain_ice_contact_freezing=true"][..],
        &["column.eddy_diffusivity=100"][..],
    ] {
        water_budget_closes(set);
    }
}

fn water_budget_closes(set: &[&str]) {
    let exp = demo(set);
    let mut s = State::initial(&exp);
    let w0 = column_water(&exp, &s);
    for _ in 0..exp.schedule.steps {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
    }
    let l = s.water;
    let expect = w0 + l.advected_in_bottom - l.advected_out_top + l.lateral - l.precipitation
        + l.clip_created;
    let w = column_water(&exp, &s);
    assert!((w - expect).abs() <= 1e-12 * w0, "{w} vs {expect}: {l:?}");
    assert!(l.precipitation > 1.0, "{l:?}");
    assert!(l.clip_created >= 0.0 && l.clip_created < 1e-6 * l.precipitation);
}
