//! Charge budgets: charging conserves charge in every cell, charge follows
//! mass through the microphysics and sedimentation, prescribed layers hold
//! their charge, and whole-run budgets close to round-off.

mod common;
use common::*;

use std::path::Path;
use stormcharge::analysis::separation;
use stormcharge::column::state::State;
use stormcharge::physics::carriers::Carrier;
use stormcharge::physics::microphysics::species::Species;
use stormcharge::setup::experiment::Experiment;

#[test]
fn charging_is_local_and_conserves() {
    // In every cell the charging of one step adds to one species exactly what
    // it takes from another: the cell's total charge does not change.
    let exp = demo(&[]);
    let mut s = State::initial(&exp);
    for _ in 0..800 {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
    }
    let before: Vec<f64> = (0..exp.grid.len())
        .map(|k| s.charge.iter().map(|c| c[k]).sum())
        .collect();
    stormcharge::column::charging::step(&exp, &mut s, exp.schedule.dt, true);
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
    // to ground by flashes and lost through the column's sides, to
    // round-off: the demo storm (charging, charge following mass, transport,
    // lateral entrainment), the same with the optional freezing of drops on
    // contact with crystals and of cloud droplets (three more transfers the
    // charge follows), with eddy diffusion (charge and ions mixed inside the
    // column) and the prescribed tripole (ground flashes).
    for (exp, flashes) in [
        (demo(&[]), false),
        (demo(&["column.eddy_diffusivity=100"]), false),
        (
            demo(&[
                "microphysics.rain_ice_contact_freezing=true",
                "microphysics.droplet_freezing=true",
            ]),
            false,
        ),
        (config_file("tripole_flashes.toml", &[]), true),
    ] {
        let (rec, summary) = run_recorded(&exp);
        if flashes {
            assert!(summary.flash_counts.iter().sum::<u64>() > 0);
        }
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

#[test]
fn charge_follows_mass() {
    // docs/references.md, "Charge follows mass": a transfer x -> y moves charge in proportion to
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
fn charge_rides_with_sedimenting_graupel() {
    // Charge on a carrier falls with its species: total charge in the column
    // plus charge carried to the ground by precipitation plus charge moved
    // by advection is conserved to round-off.
    let exp = Experiment::from_text(
        PRESCRIBED,
        "prescribed",
        // Non-conducting air: this checks sedimentation alone.
        &["updraft.peak_speed=0".into(), "ions.enabled=false".into()],
        Path::new("."),
    )
    .unwrap();
    let mut s = State::initial(&exp);
    // Let the graupel pulse build up (mature from 200 s), then charge it.
    for _ in 0..50 {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
    }
    let g = stormcharge::physics::carriers::Carrier::Graupel.index();
    for k in 0..exp.grid.len() {
        s.charge[g][k] = 1e-9 * s.q[Species::Graupel.index()][k] / 2.0e-3;
    }
    let column = |s: &State| s.charge.iter().flatten().sum::<f64>() * exp.grid.dz;
    let c0 = column(&s);
    assert!(c0 > 0.0);
    for _ in 50..exp.schedule.steps {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
    }
    let moved = s.charge_transport;
    assert!(moved.precipitated > 0.0);
    assert!((column(&s) + moved.precipitated - moved.advected_in - c0).abs() <= 1e-12 * c0);
}

#[test]
fn prescribed_layers_hold_their_charge() {
    // A top hat holds density x thickness per area wherever its edges fall (by
    // construction of the cell overlap), and grows at growth_rate x thickness.
    let text = crate::still_column!(
        r#"
[grid]
top = 10000.0
spacing = 70.0
[time]
step = 10.0
duration = 100.0
output_interval = 100.0
[discharge]
enabled = false
[[prescribed_charge.layers]]
center = 5123.0
thickness = 777.0
density = -2.5
growth_rate = 0.01
[[prescribed_charge.layers]]
shape = "gaussian"
center = 2000.0
thickness = 500.0
density = 1.0
"#
    );
    let text = text.replace("top = 10000.0", "top = 9800.0");
    let exp =
        stormcharge::setup::experiment::Experiment::from_text(&text, "t", &[], Path::new("."))
            .unwrap();
    let mut s = stormcharge::column::state::State::initial(&exp);
    // Gaussian: Simpson cell averages of a well-resolved Gaussian (s = 200 m
    // on 70 m cells) integrate to density x thickness within 1e-6.
    let expect0 = (-2.5 * 777.0 + 500.0) * NC;
    assert!(
        rel(s.column_charge, expect0) < 1e-6,
        "{} vs {expect0}",
        s.column_charge
    );
    for _ in 0..10 {
        stormcharge::column::step::step(&exp, &mut s, 10.0).unwrap();
    }
    let expect = expect0 + 0.01 * 100.0 * 777.0 * NC;
    assert!(rel(s.column_charge, expect) < 1e-6);
}

#[test]
fn ion_attachment_charges_hydrometeors_and_conserves_charge() {
    // Small ions attach to the imposed graupel and ice; negative ions are
    // the more mobile (1.9 against 1.4e-4 m2 V-1 s-1), so neutral particles
    // take more negative than positive ions and charge negatively, as
    // diffusion charging does (Pruppacher & Klett 1997, ch. 18; from
    // memory). Every ion taken up is booked on a particle or an aerosol,
    // conduction into the ground and out at the top and point discharge in
    // the ledger: the column budget closes to round-off of the gross
    // charge moved.
    let exp = Experiment::from_text(
        PRESCRIBED,
        "prescribed",
        &[
            "charging.scheme=off".into(),
            "charging.inductive=false".into(),
        ],
        Path::new("."),
    )
    .unwrap();
    let mut s = State::initial(&exp);
    let g = stormcharge::physics::carriers::Carrier::Graupel.index();
    let mut gross: f64 = 0.0;
    for _ in 0..exp.schedule.steps {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
        gross = gross.max(s.charge.iter().flatten().map(|c| c.abs()).sum::<f64>() * exp.grid.dz);
    }
    let graupel: f64 = s.charge[g].iter().sum::<f64>() * exp.grid.dz;
    assert!(graupel < 0.0, "graupel charge {graupel}");
    assert!(
        s.charge_budget_residual().abs() <= 1e-12 * gross,
        "{} of {gross}",
        s.charge_budget_residual()
    );
}

/// Charge given to the ion carrier (by evaporation, say) and not yet folded
/// into the ion numbers survives transport: the small ions move as numbers
/// and the carrier is set from them, so transport folds the carrier's
/// charge in first. The column charge changes only by what was advected in
/// through the ends and sides and what precipitated (charge conservation,
/// common practice), to round-off: within 1e-12 of the charge given, the
/// bound of the whole-run budgets (measured: 5e-16).
#[test]
fn ion_carrier_charge_survives_transport() {
    use stormcharge::column::transport;
    let exp = demo(&[]);
    assert!(exp.ions.enabled);
    let mut s = State::initial(&exp);
    s.time = 1500.0; // the updraft at its peak
    let ions = Carrier::Ions.index();
    for k in 40..61 {
        s.charge[ions][k] += 1e-10;
    }
    let column = |s: &State| s.charge.iter().flatten().sum::<f64>() * exp.grid.dz;
    let c0 = column(&s);
    let added = 21.0 * 1e-10 * exp.grid.dz;
    transport::apply_forcing(&exp, &mut s);
    assert!(s.w.iter().any(|&w| w > 5.0));
    transport::transport(&exp, &mut s, exp.schedule.dt).unwrap();
    let moved = s.charge_transport;
    let residual = column(&s) + moved.precipitated - moved.advected_in - c0;
    assert!(
        residual.abs() <= 1e-12 * added,
        "column charge changed by {residual:e} C m-2 beyond the booked transport ({added:e} C m-2 given to the ion carrier)"
    );
}
