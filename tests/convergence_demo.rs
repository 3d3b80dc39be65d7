//! Convergence of the demo under refinement of the time step (short runs in
//! the optimised build). A consistent first-order method halves its error
//! when the step halves, so the difference between successive levels must
//! at least halve (Richardson 1911; common practice in verification).

mod common;
use common::*;

use stormcharge::convergence::{study, Refinement};

/// Relative L1 difference of the charge density (and of the field) between
/// two recorded runs on the same grid, over every record.
fn l1(a: &[Vec<f64>], b: &[Vec<f64>]) -> f64 {
    let (mut num, mut den) = (0.0, 0.0);
    for (x, y) in a.iter().zip(b) {
        for (p, q) in x.iter().zip(y) {
            num += (p - q).abs();
            den += q.abs();
        }
    }
    num / den
}

#[test]
fn demo_charge_and_field_converge_at_first_order_in_time() {
    // Discharges off (a flash is a discrete event), the configured step 2 s
    // between 4 s and 1 s: |rho(2) - rho(1)| <= |rho(4) - rho(2)| / 2 in L1,
    // and the same for the field. Measured: 0.0386 and 0.0179 (charge).
    let runs: Vec<_> = [4.0, 2.0, 1.0]
        .iter()
        .map(|dt| {
            let step = format!("time.step={dt:?}");
            run_recorded(&demo(&["discharge.enabled=false", &step])).0
        })
        .collect();
    for name in ["charge_density", "electric_field"] {
        let coarse = l1(runs[0].get(name), runs[1].get(name));
        let fine = l1(runs[1].get(name), runs[2].get(name));
        assert!(
            fine > 0.0 && fine <= 0.5 * coarse,
            "{name}: {coarse} then {fine}"
        );
    }
}

#[test]
fn demo_budgets_close_at_every_level() {
    // Water and charge budgets close to round-off at refined steps and
    // spacings too (the lateral entrainment booked in both).
    for set in [["time.step=1.0"], ["grid.spacing=50.0"]] {
        let exp = demo(&set);
        let (rec, s) = run_recorded(&exp);
        let scale = rec
            .get("charge_density")
            .iter()
            .map(|r| stormcharge::analysis::separation(r, exp.grid.dz))
            .fold(0.0_f64, f64::max);
        for r in rec.series("charge_budget_residual") {
            assert!(r.abs() <= 1e-12 * scale, "{set:?}: residual {r}");
        }
        assert!(s.precipitation > 0.0);
    }
}

#[test]
fn converge_reports_the_configured_error_of_a_prescribed_case() {
    // The teaching tripole has prescribed charge growing linearly in time in
    // a still column, discharges off: every outcome is independent of the
    // step (the growth is exact for any step), so the time series must
    // report an error of exactly zero; on the grid only the cell averages of
    // the layers change, so the peak field must agree within 1 % (measured
    // 0.03 %; analytic: the Gaussian layers' column charge does not depend
    // on the spacing).
    let text = std::fs::read_to_string(repo("configs/teaching_tripole.toml")).unwrap();
    let off = ["discharge.enabled=false".to_string()];
    let report = study(&text, "teaching", &repo("configs"), &off, 3, 2).unwrap();
    assert_eq!(report.series.len(), 2);
    for s in &report.series {
        assert_eq!(s.steps.len(), 3);
        let row = |name: &str| s.outcomes.iter().find(|r| r.name == name).unwrap();
        match s.refinement {
            Refinement::Time => {
                assert_eq!(s.spacings, vec![100.0; 3]);
                assert_eq!(s.steps, vec![2.0, 1.0, 0.5]);
                for name in [
                    "main negative region charge",
                    "upper positive region charge",
                    "lower positive region charge",
                    "peak |E_z|",
                ] {
                    assert_eq!(row(name).error_of_configured, 0.0, "{name}");
                }
            }
            Refinement::Space => {
                assert_eq!(s.spacings, vec![100.0, 50.0, 25.0]);
                let r = row("peak |E_z|");
                assert!(r.error_of_configured < 0.01, "{r:?}");
            }
        }
    }
}
