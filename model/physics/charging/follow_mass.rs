//! Charge follows mass (docs/references.md, "Charge follows mass"; common practice in published
//! bulk models): a conversion of mass from species x to species y moves the
//! same fraction of x's charge to y. Over a step the fraction is the mass
//! transferred divided by the mass that passed through x (what x held at the
//! start of the integration plus everything it gained), so the fractions of
//! all of x's outflows never exceed one. Deposition and condensation move no
//! charge. Evaporation and sublimation release charge in proportion to the
//! mass lost to the small-ion reservoir; a species that vanishes releases all
//! its remaining charge there. Every move subtracts from one carrier what it
//! adds to another, so charge is conserved to round-off.

use crate::physics::carriers::Carrier;
use crate::physics::microphysics::rates::TRANSFER_PAIRS;
use crate::physics::microphysics::species::Species;
use crate::physics::microphysics::CellReport;

/// Smallest mixing ratio that still holds charge (kg kg-1).
const VANISHED: f64 = 1e-18;

/// Moves `amount` from carrier `from` to carrier `to` in one cell's charges.
fn mv(c: &mut [f64; Carrier::COUNT], from: Carrier, to: Carrier, amount: f64) {
    c[from.index()] -= amount;
    c[to.index()] += amount;
}

/// Moves cell `k`'s charge as the microphysics step described by `report`
/// moved its mass; `q_end` are the final mixing ratios.
pub fn apply(report: &CellReport, q_end: &[f64; 6], charge: &mut [Vec<f64>], k: usize) {
    let mut c: [f64; Carrier::COUNT] = std::array::from_fn(|i| charge[i][k]);
    apply_cell(report, q_end, &mut c);
    for (i, ci) in c.iter().enumerate() {
        charge[i][k] = *ci;
    }
}

/// [`apply`] on the charges of one cell, in `Carrier::ALL` order.
fn apply_cell(report: &CellReport, q_end: &[f64; 6], charge: &mut [f64; Carrier::COUNT]) {
    // Evaporation of cloud water in the adjustment at the start of the step.
    evaporate(
        charge,
        report.condensed_first,
        report.cloud_before_first_adjust,
    );
    // Instantaneous freezing (of the cloud water the first adjustment left)
    // and melting at the start of the step.
    let cloud_before_freeze = report.cloud_before_first_adjust + report.condensed_first;
    mv_share(
        charge,
        Carrier::Cloud,
        Carrier::Ice,
        report.frozen,
        cloud_before_freeze,
    );
    mv_share(
        charge,
        Carrier::Ice,
        Carrier::Cloud,
        report.melted,
        report.ice_before_melt,
    );
    // Process transfers: fractions of the charge each species held (nothing
    // to do in cells whose rates were not integrated).
    if report.transfers.iter().any(|&m| m != 0.0) {
        transfers(report, charge);
    }
    // Evaporation of cloud water in the final saturation adjustment.
    evaporate(charge, report.condensed, report.cloud_before_adjust);
    // Vanished species give everything to the ions.
    for sp in Species::HYDROMETEORS {
        if q_end[sp.index()] <= VANISHED {
            let c = charge[Carrier::of(sp).index()];
            if c != 0.0 {
                mv(charge, Carrier::of(sp), Carrier::Ions, c);
            }
        }
    }
}

/// Moves from carrier `from` to `to` the share `amount / of` (at most all)
/// of `from`'s charge: the share of its mass an instantaneous process took.
fn mv_share(c: &mut [f64; Carrier::COUNT], from: Carrier, to: Carrier, amount: f64, of: f64) {
    if amount > 0.0 && of > 0.0 {
        let x = c[from.index()] * (amount / of).min(1.0);
        mv(c, from, to, x);
    }
}

/// Releases to the ions the fraction of cloud charge whose water an
/// adjustment evaporated (`condensed` < 0 out of `cloud_before`).
fn evaporate(charge: &mut [f64; Carrier::COUNT], condensed: f64, cloud_before: f64) {
    mv_share(
        charge,
        Carrier::Cloud,
        Carrier::Ions,
        -condensed,
        cloud_before,
    );
}

/// The process transfers of [`apply`]: each moves the fraction of its source's
/// charge that it took of the mass that passed through the source.
fn transfers(report: &CellReport, charge: &mut [f64; Carrier::COUNT]) {
    let mut through = report.q_start;
    for (i, (from, to)) in TRANSFER_PAIRS.iter().enumerate() {
        let m = report.transfers[i];
        let dst = if m >= 0.0 { *to } else { *from };
        if dst != Species::Vapour {
            through[dst.index()] += m.abs();
        }
    }
    let start = Species::ALL.map(|s| charge[Carrier::of(s).index()]);
    for (i, (from, to)) in TRANSFER_PAIRS.iter().enumerate() {
        let m = report.transfers[i];
        if m == 0.0 {
            continue;
        }
        // Negative deposition is sublimation: species -> vapour.
        let (src, dst) = if m > 0.0 { (*from, *to) } else { (*to, *from) };
        if src == Species::Vapour {
            continue; // vapour carries no charge
        }
        let avail = through[src.index()];
        if avail <= 0.0 {
            continue;
        }
        let amount = start[src.index()] * (m.abs() / avail).min(1.0);
        mv(charge, Carrier::of(src), Carrier::of(dst), amount);
    }
}
