//! Flashes over the column: while the trigger holds, grow a channel
//! ([`crate::physics::discharge::channel`]), neutralise its charge
//! ([`crate::physics::discharge::neutralization`]), solve the field again and
//! record the flash. docs/discharge.md describes the rule.

use crate::column::state::State;
use crate::column::work::FlashScratch;
use crate::physics::breakdown::Criterion;
use crate::physics::discharge::channel::{self, Channel, ChannelInputs, EquipotentialInputs};
use crate::physics::discharge::neutralization;
use crate::physics::discharge::record::{FlashKind, FlashRecord};
use crate::physics::discharge::{trigger_threshold, Neutralization};
use crate::setup::experiment::Experiment;

/// Runs flashes while the trigger holds, up to the per-step bound. `time` is
/// the model time at the end of the current step (s).
pub fn step(exp: &Experiment, state: &mut State, time: f64) {
    let p = &exp.discharge_params;
    if !p.enabled {
        return;
    }
    let trigger = exp.criteria_thresholds.trigger.index();
    for _ in 0..p.max_per_step {
        let status = state.criteria_status[trigger];
        if !status.met {
            state.trigger_since = None;
            return;
        }
        // Initiation is an event: the trigger must have held for the
        // persistence time (the field keeps growing meanwhile).
        let since = *state.trigger_since.get_or_insert(time);
        if time - since < p.persistence {
            return;
        }
        if let Some(last) = state.ledger.last_time {
            if time - last < p.min_interval {
                return;
            }
        }
        let start = status.face;
        if p.require_hydrometeor_breakdown {
            let thr = &exp.criteria_thresholds.thresholds[Criterion::HydrometeorBreakdown.index()];
            if state.field[start].abs() < thr[start] {
                return;
            }
        }
        let Some(rec) = flash(exp, state, start, time) else {
            return;
        };
        if rec.z_top >= exp.grid.top() {
            state.ledger.at_model_top += 1;
        }
        state.ledger.push(rec);
        crate::column::breakdown::evaluate(exp, state);
    }
    if state.criteria_status[trigger].met {
        state.ledger.bound_hits += 1;
        state.ledger.first_bound_hit.get_or_insert(time);
    }
}

/// Shortest piece a step is split into to place a flash, as a fraction of
/// the model step (1); also how far past the predicted start a piece aims,
/// so that it normally ends with the trigger just reached.
pub const SHORTEST_PIECE: f64 = 1e-3;

/// How far (s) the next piece of a step with `left` s to go should reach:
/// all of `left`, or up to the time the flash trigger is due when that falls
/// inside it.
///
/// - The trigger does not hold: its margin (`Criteria::margin`, zero where it
///   starts to hold) is extrapolated linearly from the last two ends of
///   steps or pieces (`State::trigger_before` and now) to its zero, where the
///   trigger starts to hold (and with no gates the flash starts). This is
///   the secant rule; repeated over the pieces it is the secant method of
///   root finding, which places the start to second order in the step. The
///   piece aims one shortest piece past the zero, so that it ends just after
///   the trigger is reached when the extrapolation is good. (A margin that
///   grows ever faster, as before a flash, is reached later than the line
///   says, so a piece can also end short and the next one, extrapolated
///   over a shorter interval, gets closer. A quadratic through three ends,
///   measured on the demo, needed 28 extra pieces against 35 but sometimes
///   overshot the start by 4 % of the step.)
/// - The trigger holds but a gate has held the flash back: the time the
///   gates open, `breakdown.persistence_time` after the trigger started to
///   hold and `discharge.min_interval` after the last flash.
pub fn next_piece(exp: &Experiment, state: &State, left: f64) -> f64 {
    let p = &exp.discharge_params;
    if !p.enabled || !p.locate {
        return left;
    }
    let trigger = exp.criteria_thresholds.trigger;
    let status = &state.criteria_status[trigger.index()];
    let now = state.time;
    let shortest = SHORTEST_PIECE * exp.schedule.dt;
    let due = if status.met {
        let Some(since) = state.trigger_since else {
            return left;
        };
        let opens = state
            .ledger
            .last_time
            .map_or(since + p.persistence, |last| {
                (since + p.persistence).max(last + p.min_interval)
            });
        opens - now
    } else {
        let Some((t0, m0)) = state.trigger_before else {
            return left;
        };
        let m1 = exp.criteria_thresholds.margin(trigger, status);
        if !(m1 > m0 && now > t0) {
            return left;
        }
        -m1 * (now - t0) / (m1 - m0) + shortest
    };
    // NaN-safe: anything but a time inside the piece leaves it whole.
    if due > 0.0 && due < left - shortest {
        due.max(shortest)
    } else {
        left
    }
}

fn max_abs(e: &[f64], faces: std::ops::RangeInclusive<usize>) -> f64 {
    faces.map(|k| e[k].abs()).fold(0.0, f64::max)
}

/// One flash from face `start`; the state's field is re-solved. Returns `None`
/// (and changes nothing) when no channel forms or it holds no charge to remove.
pub fn flash(exp: &Experiment, state: &mut State, start: usize, time: f64) -> Option<FlashRecord> {
    // The work arrays leave the state for the duration (moving Vecs does not
    // allocate) so the state can be re-solved while they are in use.
    let mut sc = std::mem::replace(&mut state.flash_scratch, FlashScratch::empty());
    let rec = flash_with(exp, state, &mut sc, start, time);
    state.flash_scratch = sc;
    rec
}

fn flash_with(
    exp: &Experiment,
    state: &mut State,
    sc: &mut FlashScratch,
    start: usize,
    time: f64,
) -> Option<FlashRecord> {
    let p = &exp.discharge_params;
    let grid = &exp.grid;
    let dz = grid.dz;
    let criteria_met = state.criteria_status.map(|c| c.met);
    let criteria_ratio = state.criteria_status.map(|c| c.ratio);
    let sign0 = state.field[start].signum();
    let local = channel::grow(
        &ChannelInputs {
            field: &state.field,
            propagation: &p.propagation,
            charge: &state.charge_total,
            follow_min: p.follow_charge.then_some(p.min_charge_density),
            negative_factor: p.negative_end_factor,
        },
        start,
    )?;
    let Channel { mut bottom, top } = if p.equipotential {
        channel::extend_equipotential(
            &EquipotentialInputs {
                potential: &state.potential,
                sign0,
                margin: p.leader_margin,
                negative_factor: p.negative_end_factor,
            },
            local,
        )
    } else {
        local
    };
    let channel_potential = channel::floating_potential(&state.potential, Channel { bottom, top });
    let ground = grid.z_face[bottom] <= p.ground_height;
    if ground {
        bottom = 0;
    }
    if top == bottom {
        return None;
    }
    let faces = bottom..=top;
    let (pos, neg) = neutralization::excess_pattern(
        &state.charge_total,
        bottom..top,
        p.min_charge_density,
        !ground,
        dz,
        &mut sc.pattern,
    );
    if pos + neg == 0.0 {
        return None;
    }
    sc.phi_before.copy_from_slice(&state.potential);
    sc.rho_before.copy_from_slice(&state.charge_total);
    let energy_before = state.field_energy;
    let field_before = max_abs(&state.field, faces.clone());
    let s = match p.neutralization {
        Neutralization::Fraction(f) => f,
        Neutralization::TargetField(target) => {
            exp.field_solver
                .solve(&sc.pattern, &mut sc.g_phi, &mut sc.g_e);
            let thr = &exp.criteria_thresholds.thresholds
                [trigger_threshold(exp.criteria_thresholds.trigger)];
            neutralization::target_scale(&state.field, &sc.g_e, thr, faces.clone(), target)
        }
    };

    // Remove s w from each cell, shared among carriers of the cell's sign.
    for k in bottom..top {
        let wk = sc.pattern[k];
        if wk == 0.0 {
            continue;
        }
        let sign = wk.signum();
        let same: f64 = state.charge.iter().map(|c| (c[k] * sign).max(0.0)).sum();
        for carrier in state.charge.iter_mut() {
            let share = (carrier[k] * sign).max(0.0) / same;
            carrier[k] -= s * wk * share;
        }
    }
    crate::column::electrostatics::solve(exp, state);

    let mut net_change = 0.0;
    let mut energy_from_charges = 0.0;
    // Weights and first moments of the negative (d > 0: negative charge
    // neutralised) and positive charge the flash took away.
    let (mut neg_moment, mut pos_moment) = ((0.0, 0.0), (0.0, 0.0));
    for k in bottom..top {
        let d = state.charge_total[k] - sc.rho_before[k];
        net_change += d * dz;
        if d > 0.0 {
            neg_moment = (neg_moment.0 + d, neg_moment.1 + d * grid.z[k]);
        } else if d < 0.0 {
            pos_moment = (pos_moment.0 - d, pos_moment.1 - d * grid.z[k]);
        }
        let before = exp
            .field_solver
            .pairing_potential(&sc.phi_before, &sc.rho_before, k);
        let after = exp
            .field_solver
            .pairing_potential(&state.potential, &state.charge_total, k);
        energy_from_charges -= 0.5 * d * (before + after) * dz;
    }
    let charge_to_ground = if ground { -net_change } else { 0.0 };
    let kind = match (ground, charge_to_ground < 0.0) {
        (false, _) => FlashKind::Intracloud,
        (true, true) => FlashKind::NegativeGround,
        (true, false) => FlashKind::PositiveGround,
    };
    Some(FlashRecord {
        time,
        kind,
        z_init: grid.z_face[start],
        z_bottom: grid.z_face[bottom],
        z_top: grid.z_face[top],
        charge_neutralized: s * pos.max(neg),
        charge_to_ground,
        energy: energy_before - state.field_energy,
        energy_from_charges,
        field_before,
        field_after: max_abs(&state.field, faces),
        criteria_met,
        criteria_ratio,
        // With E_z > 0 at initiation the upper end is the positive one.
        positive_end: if sign0 > 0.0 {
            grid.z_face[top] - grid.z_face[start]
        } else {
            grid.z_face[start] - grid.z_face[bottom]
        },
        negative_end: if sign0 > 0.0 {
            grid.z_face[start] - grid.z_face[bottom]
        } else {
            grid.z_face[top] - grid.z_face[start]
        },
        channel_potential,
        z_negative_charge: centroid(neg_moment),
        z_positive_charge: centroid(pos_moment),
        t_negative_charge: temperature_at(exp, state, centroid(neg_moment)),
        t_positive_charge: temperature_at(exp, state, centroid(pos_moment)),
    })
}

/// Height (m) of a centroid from its weight and first moment; NaN without
/// weight.
fn centroid((weight, moment): (f64, f64)) -> f64 {
    if weight > 0.0 {
        moment / weight
    } else {
        f64::NAN
    }
}

/// Air temperature (K) at height `z` (m), linear between cell centres and
/// constant beyond the first and last; NaN for a NaN height.
fn temperature_at(exp: &Experiment, state: &State, z: f64) -> f64 {
    if z.is_nan() {
        return f64::NAN;
    }
    let zc = &exp.grid.z;
    let n = zc.len();
    let j = zc.partition_point(|&h| h <= z);
    if j == 0 {
        return state.temperature(exp, 0);
    }
    if j >= n {
        return state.temperature(exp, n - 1);
    }
    let u = (z - zc[j - 1]) / (zc[j] - zc[j - 1]);
    (1.0 - u) * state.temperature(exp, j - 1) + u * state.temperature(exp, j)
}
