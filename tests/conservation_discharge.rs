//! Flashes conserve what they must: an intracloud flash removes no net
//! charge, a ground flash lowers exactly what the column loses, budgets
//! close over whole runs, and the two energy computations agree.
#![allow(clippy::needless_range_loop)]

mod common;
use common::*;

use stormcharge::column::state::State;
use stormcharge::physics::discharge::record::FlashKind;
use stormcharge::physics::discharge::trigger_threshold;
use stormcharge::setup::experiment::Experiment;

fn column_charge(s: &State, exp: &Experiment) -> f64 {
    s.charge_total.iter().sum::<f64>() * exp.grid.dz
}

#[test]
fn intracloud_flash_between_two_layers() {
    // Positive above negative, equal magnitudes: the field peaks between the
    // layers and the flash must stay in the cloud, remove equal positive and
    // negative charge (a floating channel carries no net charge; Kasemir
    // 1960, docs/references.md, "Discharges") and leave the channel below the trigger.
    for geometry in ["column", "planar"] {
        let exp = experiment(DIPOLE, &[&format!("electrostatics.geometry={geometry}")]);
        let (before, after, f) = first_flash(&exp);
        assert_eq!(f.kind, FlashKind::Intracloud, "{geometry}");
        assert!(
            f.z_bottom <= 6000.0 && f.z_top >= 9000.0,
            "{geometry}: channel {}-{}",
            f.z_bottom,
            f.z_top
        );
        // Between the layers (edges included): the field is nearly uniform
        // there and the threshold lowest at the top, so it starts near 8.5 km.
        assert!(f.z_init >= 6500.0 && f.z_init <= 8500.0, "{}", f.z_init);
        let net = column_charge(&after, &exp) - column_charge(&before, &exp);
        assert!(
            net.abs() <= 1e-12 * f.charge_neutralized,
            "{geometry}: net {net} vs {}",
            f.charge_neutralized
        );
        assert!(f.charge_neutralized > 0.0 && f.charge_to_ground == 0.0);
        let thr =
            &exp.criteria_thresholds.thresholds[trigger_threshold(exp.criteria_thresholds.trigger)];
        let (lo, hi) = (
            (f.z_bottom / exp.grid.dz) as usize,
            (f.z_top / exp.grid.dz) as usize,
        );
        for k in lo..=hi {
            assert!(
                after.field[k].abs() < thr[k],
                "{geometry}: face {k} still above the trigger"
            );
        }
    }
}

#[test]
fn negative_ground_flash_from_a_low_negative_layer() {
    // A dominant negative layer close to the ground: the channel reaches the
    // ground, negative charge is lowered (flash_charge_to_ground < 0), and the
    // column charge changes by exactly minus the charge lowered.
    let exp = experiment(LOW_NEGATIVE, &[]);
    let (before, after, f) = first_flash(&exp);
    assert_eq!(f.kind, FlashKind::NegativeGround);
    assert_eq!(f.z_bottom, 0.0);
    assert!(f.charge_to_ground < 0.0);
    let change = column_charge(&after, &exp) - column_charge(&before, &exp);
    // The growth of the step itself is added before the flash; remove it.
    let growth: f64 = exp.prescribed.growth.iter().sum::<f64>() * exp.grid.dz * exp.schedule.dt;
    let flash_change = change - growth;
    assert!(
        (flash_change + f.charge_to_ground).abs() <= 1e-12 * f.charge_to_ground.abs(),
        "{flash_change} vs {}",
        f.charge_to_ground
    );
    assert!((after.ledger.ground_charge - f.charge_to_ground).abs() == 0.0);
}

#[test]
fn budget_closes_over_a_whole_run() {
    // Charge conservation: everything added by the prescribed growth, minus
    // everything lowered to ground, is what the column holds (round-off),
    // with either channel rule.
    for rule in ["local_field", "equipotential"] {
        let exp = experiment(
            &flash_config(),
            &[&format!("discharge.channel_rule=\"{rule}\"")],
        );
        budget_closes(&exp);
    }
}

fn budget_closes(exp: &Experiment) {
    let rec = run_recorded(exp).0;
    let initial: f64 = exp.prescribed.initial.iter().sum::<f64>() * exp.grid.dz;
    let added: f64 =
        exp.prescribed.growth.iter().sum::<f64>() * exp.grid.dz * exp.config.time.duration;
    let ground = rec.series("ground_charge");
    let column = rec.series("column_charge");
    let (g, c) = (ground[ground.len() - 1], column[column.len() - 1]);
    assert!(g < 0.0);
    let scale = initial.abs() + added.abs() + g.abs();
    assert!(
        (c - (initial + added - g)).abs() <= 1e-12 * scale,
        "{c} vs {}",
        initial + added - g
    );
}

#[test]
fn two_energy_computations_agree() {
    // The energy released is the drop in electrostatic energy; by Green's
    // reciprocity it also equals -1/2 sum dq (phi_before + phi_after). The two
    // are computed independently and must agree to 1e-9, and be positive.
    let flash = flash_config();
    let cases: [(&str, &[&str]); 5] = [
        (&flash, &[]),
        (&flash, &["electrostatics.geometry=planar"]),
        (
            DIPOLE,
            &[
                "electrostatics.geometry=planar",
                "electrostatics.top_boundary=conductor",
            ],
        ),
        (LOW_NEGATIVE, &["electrostatics.geometry=planar"]),
        (DIPOLE, &["discharge.neutralization=fraction"]),
    ];
    let mut n = 0;
    for (text, o) in cases {
        let exp = experiment(text, o);
        for f in run_recorded(&exp).0.flashes {
            assert!(f.energy > 0.0, "{o:?}: {f:?}");
            let rel = (f.energy - f.energy_from_charges).abs() / f.energy;
            assert!(
                rel < 1e-9,
                "{o:?}: {} vs {} ({rel})",
                f.energy,
                f.energy_from_charges
            );
            n += 1;
        }
    }
    assert!(n > 10, "only {n} flashes checked");
}
