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
//!
//! The moves are written once over [`Lane`] ([`crate::physics::lanes`]):
//! [`apply`] runs them for one cell, [`apply_column`] for groups of
//! [`WIDTH`] cells side by side, with the same bits. Where the scalar form
//! would skip a move, the lanes keep their old value by [`Lane::select`]
//! (never by adding zero, which would turn a -0.0 into +0.0).

use crate::physics::carriers::Carrier;
use crate::physics::lanes::{with_avx2, Cells, Lane, Mask, WIDTH};
use crate::physics::microphysics::rates::{CellEnv, CellState, N_TRANSFERS, TRANSFER_PAIRS};
use crate::physics::microphysics::species::Species;
use crate::physics::microphysics::CellReport;

/// Smallest mixing ratio that still holds charge (kg kg-1).
const VANISHED: f64 = 1e-18;

/// What the moves read of a cell's microphysics step, one value per lane.
struct Moved<T> {
    condensed_first: T,
    cloud_before_first_adjust: T,
    frozen: T,
    melted: T,
    ice_before_melt: T,
    q_start: [T; 6],
    transfers: [T; N_TRANSFERS],
    condensed: T,
    cloud_before_adjust: T,
    /// Final mixing ratios (kg kg-1).
    q_end: [T; 6],
}

impl<T: Lane> Moved<T> {
    /// Lane `l` from `report(l)` and `q_end(l)`.
    #[inline(always)]
    fn gather<'a>(
        report: impl Fn(usize) -> &'a CellReport,
        q_end: impl Fn(usize) -> &'a [f64; 6],
    ) -> Self {
        let each = |f: &dyn Fn(&CellReport) -> f64| T::from_lanes(|l| f(report(l)));
        let mut q_start = [T::default(); 6];
        let mut end = [T::default(); 6];
        for i in 0..6 {
            q_start[i] = T::from_lanes(|l| report(l).q_start[i]);
            end[i] = T::from_lanes(|l| q_end(l)[i]);
        }
        let mut transfers = [T::default(); N_TRANSFERS];
        for (i, m) in transfers.iter_mut().enumerate() {
            *m = T::from_lanes(|l| report(l).transfers[i]);
        }
        Moved {
            condensed_first: each(&|r| r.condensed_first),
            cloud_before_first_adjust: each(&|r| r.cloud_before_first_adjust),
            frozen: each(&|r| r.frozen),
            melted: each(&|r| r.melted),
            ice_before_melt: each(&|r| r.ice_before_melt),
            q_start,
            transfers,
            condensed: each(&|r| r.condensed),
            cloud_before_adjust: each(&|r| r.cloud_before_adjust),
            q_end: end,
        }
    }
}

/// Moves `amount` from carrier `from` to carrier `to` in the lanes where
/// `active` holds.
#[inline(always)]
fn mv<T: Lane>(
    c: &mut [T; Carrier::COUNT],
    from: Carrier,
    to: Carrier,
    amount: T,
    active: T::Mask,
) {
    c[from.index()] = T::select(active, c[from.index()] - amount, c[from.index()]);
    c[to.index()] = T::select(active, c[to.index()] + amount, c[to.index()]);
}

/// Moves cell `k`'s charge as the microphysics step described by `report`
/// moved its mass; `q_end` are the final mixing ratios.
pub fn apply(report: &CellReport, q_end: &[f64; 6], charge: &mut [Vec<f64>], k: usize) {
    let mut c: [f64; Carrier::COUNT] = std::array::from_fn(|i| charge[i][k]);
    moves(&Moved::gather(|_| report, |_| q_end), &mut c);
    for (i, ci) in c.iter().enumerate() {
        charge[i][k] = *ci;
    }
}

with_avx2! {
    /// [`apply`] for every cell of the column, `cells[k]` holding cell
    /// `k`'s final state and report, in groups of [`WIDTH`] cells side by
    /// side (a short last group repeats its last cell, whose lanes are
    /// dropped; an AVX2 build is chosen at run time).
    pub fn apply_column(cells: &[(CellState, CellEnv, CellReport)], charge: &mut [Vec<f64>]) {
        let n = cells.len();
        for first in (0..n).step_by(WIDTH) {
            let cell = |l: usize| (first + l).min(n - 1);
            let moved = Moved::<Cells>::gather(|l| &cells[cell(l)].2, |l| &cells[cell(l)].0.q);
            let mut c = [Cells::default(); Carrier::COUNT];
            for (i, ci) in c.iter_mut().enumerate() {
                *ci = Cells::from_lanes(|l| charge[i][cell(l)]);
            }
            moves(&moved, &mut c);
            let lanes = WIDTH.min(n - first);
            for (i, ci) in c.iter().enumerate() {
                for l in 0..lanes {
                    charge[i][first + l] = ci.lane(l);
                }
            }
        }
    }
}

/// The moves of one step, in [`Carrier::ALL`] order of `charge`.
#[inline(always)]
fn moves<T: Lane>(m: &Moved<T>, charge: &mut [T; Carrier::COUNT]) {
    // Evaporation of cloud water in the adjustment at the start of the step.
    evaporate(charge, m.condensed_first, m.cloud_before_first_adjust);
    // Instantaneous freezing (of the cloud water the first adjustment left)
    // and melting at the start of the step.
    let cloud_before_freeze = m.cloud_before_first_adjust + m.condensed_first;
    mv_share(
        charge,
        Carrier::Cloud,
        Carrier::Ice,
        m.frozen,
        cloud_before_freeze,
    );
    mv_share(
        charge,
        Carrier::Ice,
        Carrier::Cloud,
        m.melted,
        m.ice_before_melt,
    );
    // Process transfers: fractions of the charge each species held (no
    // move where a cell's rates were not integrated: its transfers are 0).
    transfers(m, charge);
    // Evaporation of cloud water in the final saturation adjustment.
    evaporate(charge, m.condensed, m.cloud_before_adjust);
    // Vanished species give everything to the ions.
    let zero = T::splat(0.0);
    for sp in Species::HYDROMETEORS {
        let c = charge[Carrier::of(sp).index()];
        let gone = m.q_end[sp.index()].le(T::splat(VANISHED)) & c.ne(zero);
        mv(charge, Carrier::of(sp), Carrier::Ions, c, gone);
    }
}

/// Moves from carrier `from` to `to` the share `amount / of` (at most all)
/// of `from`'s charge: the share of its mass an instantaneous process took.
#[inline(always)]
fn mv_share<T: Lane>(c: &mut [T; Carrier::COUNT], from: Carrier, to: Carrier, amount: T, of: T) {
    let zero = T::splat(0.0);
    let active = amount.gt(zero) & of.gt(zero);
    if active.any() {
        let x = c[from.index()] * (amount / of).min(T::splat(1.0));
        mv(c, from, to, x, active);
    }
}

/// Releases to the ions the fraction of cloud charge whose water an
/// adjustment evaporated (`condensed` < 0 out of `cloud_before`).
#[inline(always)]
fn evaporate<T: Lane>(charge: &mut [T; Carrier::COUNT], condensed: T, cloud_before: T) {
    mv_share(
        charge,
        Carrier::Cloud,
        Carrier::Ions,
        -condensed,
        cloud_before,
    );
}

/// The process transfers of [`moves`]: each moves the fraction of its
/// source's charge that it took of the mass that passed through the source.
/// A transfer m of pair (x, y) goes x -> y where m > 0 and y -> x where
/// m < 0 (negative deposition is sublimation: species -> vapour); vapour
/// carries no charge, so nothing moves out of it.
#[inline(always)]
fn transfers<T: Lane>(m: &Moved<T>, charge: &mut [T; Carrier::COUNT]) {
    let zero = T::splat(0.0);
    if !m.transfers.iter().any(|&x| x.ne(zero).any()) {
        return;
    }
    // The mass that passed through each species: what it held plus
    // everything it gained.
    let mut through = m.q_start;
    for (i, (from, to)) in TRANSFER_PAIRS.iter().enumerate() {
        let x = m.transfers[i];
        let gains_to = x.ge(zero);
        if *to != Species::Vapour {
            let t = &mut through[to.index()];
            *t = T::select(gains_to, *t + x.abs(), *t);
        }
        if *from != Species::Vapour {
            let f = &mut through[from.index()];
            *f = T::select(!gains_to, *f + x.abs(), *f);
        }
    }
    let mut start = [zero; 6];
    for s in Species::ALL {
        start[s.index()] = charge[Carrier::of(s).index()];
    }
    for (i, (from, to)) in TRANSFER_PAIRS.iter().enumerate() {
        let x = m.transfers[i];
        let forward = x.gt(zero);
        let backward = !forward & x.ne(zero);
        for (src, dst, way) in [(*from, *to, forward), (*to, *from, backward)] {
            if src == Species::Vapour {
                continue;
            }
            let avail = through[src.index()];
            let active = way & !avail.le(zero);
            if active.any() {
                let amount = start[src.index()] * (x.abs() / avail).min(T::splat(1.0));
                mv(charge, Carrier::of(src), Carrier::of(dst), amount, active);
            }
        }
    }
}
