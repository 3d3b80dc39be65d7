//! Transport over the column: the prescribed updraft on the faces, advection
//! of every advected field by it, then sedimentation of the falling species
//! (the cores are [`crate::physics::kinematics`]). Water and charge that
//! cross the boundaries are booked in the state's ledgers.

// The transport loops walk several parallel arrays (densities, fluxes,
// fields) by cell index; iterator zips would obscure the stencils.
#![allow(clippy::needless_range_loop)]

use crate::column::state::State;
use crate::error::RunError;
use crate::physics::carriers::Carrier;
use crate::physics::kinematics::entrainment::{self, relax, Env};
use crate::physics::kinematics::{advection, sedimentation};
use crate::physics::lanes::{with_avx2, Cells, Lane, Mask, WIDTH};
use crate::physics::microphysics::dsd;
use crate::physics::microphysics::species::Species;
use crate::physics::microphysics::Mode;
use crate::setup::experiment::Experiment;

/// Sets the prescribed updraft on the faces for the state's time.
pub fn apply_forcing(exp: &Experiment, state: &mut State) {
    exp.updraft
        .w_on(&exp.updraft_shape, state.time, &mut state.w);
}

with_avx2! {
    /// Mass-weighted fall speeds (m s-1) of the falling species at every cell,
    /// zero where a species is absent, a group of [`WIDTH`] cells side by
    /// side ([`crate::physics::lanes`]; a short last group repeats its last
    /// cell, whose lanes are dropped; an AVX2 build is chosen at run time).
    pub fn update_fall_speeds(exp: &Experiment, state: &mut State) {
        let rho = &exp.base.centre.density;
        let p = exp.micro_params();
        let n = rho.len();
        let zero = Cells::splat(0.0);
        for (i, sp) in Species::FALLING.iter().enumerate() {
            let q = &state.q[sp.index()];
            let out = &mut state.fall_speed[i];
            for first in (0..n).step_by(WIDTH) {
                let cell = |l: usize| (first + l).min(n - 1);
                let r = Cells::from_lanes(|l| rho[cell(l)]);
                let mass = Cells::from_lanes(|l| q[cell(l)]);
                let present = mass.gt(zero);
                let v = if !present.any() {
                    zero
                } else if let Some((dist, c)) = match sp {
                    Species::Rain => Some((&p.rain, 0)),
                    Species::Snow => Some((&p.snow, 1)),
                    Species::Graupel => Some((&p.graupel, 2)),
                    _ => None,
                } {
                    let correction = Cells::from_lanes(|l| exp.cell_env[cell(l)].corrections[c]);
                    let (_, s) = dist.slope_powers_masked(r, mass);
                    Cells::select(present, dist.mass_weighted_speed_at(&s, correction), zero)
                } else {
                    let mass = Cells::select(present, mass, Cells::splat(1.0));
                    Cells::select(present, dsd::ice::speed_of(r, mass), zero)
                };
                for (l, o) in out[first..(first + WIDTH).min(n)].iter_mut().enumerate() {
                    *o = v.lane(l);
                }
            }
        }
    }
}

/// Most sub-steps one transport step may take. More means a Courant number
/// above 5000 (an updraft or fall speed far outside the physical range for
/// the step and spacing): a mistake in the configuration, reported instead
/// of a run that seems to hang.
pub const MAX_SUBSTEPS: usize = 10_000;

fn too_many(state: &State, what: &str, n: usize) -> RunError {
    // A speed that is not finite gives a count cast to usize::MAX.
    let count = if n == usize::MAX {
        "an unbounded number of".to_string()
    } else {
        n.to_string()
    };
    RunError::Stopped {
        time: state.time,
        process: "transport",
        message: format!(
            "{what} would need {count} sub-steps in one step; at most {MAX_SUBSTEPS} are allowed (shorten time.step or check the speeds)"
        ),
    }
}

/// Advection, then sedimentation, over one step of `dt` s.
pub fn transport(exp: &Experiment, state: &mut State, dt: f64) -> Result<(), RunError> {
    // The small ions move as numbers and the ion carrier is set from them
    // afterwards (`advect_ions`, `diffuse_all`), so charge a process gave
    // the carrier and nobody folded into the numbers yet would be lost:
    // fold it in first, as the ions' own step does (a symmetric transport
    // placed after the microphysics, measured 2026-12-04, lost the charge
    // evaporation had released).
    crate::column::ions::reconcile(exp, state);
    advect_all(exp, state, dt)?;
    if exp.config.column.eddy_diffusivity > 0.0 {
        diffuse_all(exp, state, dt);
    }
    if exp.microphysics != Mode::Off {
        sediment_all(exp, state, dt)?;
    }
    Ok(())
}

fn advect_all(exp: &Experiment, state: &mut State, dt: f64) -> Result<(), RunError> {
    let rho = &exp.base.centre.density;
    let rho_face = &exp.base.face.density;
    let dz = exp.grid.dz;
    let n = rho.len();
    let sc = &mut state.transport_scratch;
    let mut moving = false;
    for j in 0..=n {
        sc.mass_flux[j] = rho_face[j] * state.w[j];
        moving |= sc.mass_flux[j] != 0.0;
    }
    if !moving {
        return Ok(());
    }
    let nsub = advection::substeps(&sc.mass_flux, rho, dz, dt);
    if nsub > MAX_SUBSTEPS {
        return Err(too_many(state, "advection by the updraft", nsub));
    }
    if nsub > 1 {
        state.substeps.0 += 1;
        state.substeps.1 = state.substeps.1.max(nsub);
    }
    let h = dt / nsub as f64;
    sc.flow.update(&sc.mass_flux, rho, dz, h);
    // Lateral entrainment (docs/transport.md): the fraction of each cell's
    // departure from the environment that survives a sub-step.
    let entraining = exp.entrainment_rate > 0.0;
    if entraining {
        entrainment::survival(
            &sc.mass_flux,
            rho,
            dz,
            exp.entrainment_rate,
            h,
            &mut sc.survival,
        );
    }
    let base_face = &exp.base.face;
    let base = &exp.base.centre;
    let mass = &exp.cell_mass;
    for _ in 0..nsub {
        let theta_in = (
            base_face.potential_temperature[0],
            base_face.potential_temperature[n],
        );
        advection::advect_with(
            &mut state.potential_temperature,
            &sc.mass_flux,
            &sc.flow,
            h,
            theta_in,
            &mut sc.faces,
        );
        if entraining {
            relax(
                &mut state.potential_temperature,
                Env::Profile(&base.potential_temperature),
                &sc.survival,
                mass,
            );
        }
        for sp in Species::ALL {
            let inflow = if sp == Species::Vapour {
                (base_face.vapour[0], base_face.vapour[n])
            } else {
                (0.0, 0.0)
            };
            let b = advection::advect_with(
                &mut state.q[sp.index()],
                &sc.mass_flux,
                &sc.flow,
                h,
                inflow,
                &mut sc.faces,
            );
            state.water.advected_in_bottom += b.bottom;
            state.water.advected_out_top += b.top;
            state.water.lateral += b.lateral;
            if entraining {
                let env = if sp == Species::Vapour {
                    Env::Profile(&base.vapour)
                } else {
                    Env::Uniform(0.0)
                };
                state.water.lateral += relax(&mut state.q[sp.index()], env, &sc.survival, mass);
            }
        }
        advection::advect_with(
            &mut state.n_ice,
            &sc.mass_flux,
            &sc.flow,
            h,
            (0.0, 0.0),
            &mut sc.faces,
        );
        if entraining {
            relax(&mut state.n_ice, Env::Uniform(0.0), &sc.survival, mass);
        }
        if exp.ions.enabled {
            advect_ions(
                exp,
                IonTransport {
                    ions: &mut state.n_ion,
                    charge: &mut state.charge[Carrier::Ions.index()],
                    advected_in: &mut state.charge_transport.advected_in,
                },
                sc,
                h,
                entraining,
            );
        }
        for c in Carrier::ALL
            .iter()
            .filter(|c| c.advected() && !(exp.ions.enabled && **c == Carrier::Ions))
        {
            // The environment's air is neutral on the whole.
            state.charge_transport.advected_in += advect_per_mass(
                exp,
                &mut state.charge[c.index()],
                sc,
                h,
                (0.0, 0.0),
                entraining.then_some(Env::Uniform(0.0)),
            );
        }
    }
    Ok(())
}

/// Advects the small ions (as numbers per kilogram of air) over one
/// sub-step; air entering the column and entrained air carry the clear-air
/// concentrations. Their net charge is booked as advected and set on the
/// ion carrier.
fn advect_ions(
    exp: &Experiment,
    out: IonTransport,
    sc: &mut crate::column::work::TransportScratch,
    h: f64,
    entraining: bool,
) {
    let rho = &exp.base.centre.density;
    let n = rho.len();
    let env = &exp.ions.environment_specific;
    let inflow = (env[0], env[n - 1]);
    let mut net = [0.0; 2];
    for (s, ions) in out.ions.iter_mut().enumerate() {
        net[s] = advect_per_mass(
            exp,
            ions,
            sc,
            h,
            inflow,
            entraining.then_some(Env::Profile(env)),
        );
    }
    let e = crate::physics::constants::ELEMENTARY_CHARGE;
    *out.advected_in += e * (net[0] - net[1]);
    crate::column::ions::set_carrier(out.charge, out.ions);
}

/// Advects a field held per cubic metre (`density`: charge or ion number)
/// over one sub-step as its amount per kilogram of air, with `inflow` (per
/// kg) at the bottom and top and, when entraining, the lateral exchange
/// toward `env` (per kg). Returns the net amount that came in through the
/// ends and the sides (per m2).
fn advect_per_mass(
    exp: &Experiment,
    density: &mut [f64],
    sc: &mut crate::column::work::TransportScratch,
    h: f64,
    inflow: (f64, f64),
    env: Option<Env<'_>>,
) -> f64 {
    for (f, (d, inv_rho)) in sc
        .field
        .iter_mut()
        .zip(density.iter().zip(&exp.inv_density))
    {
        *f = d * inv_rho;
    }
    let b = advection::advect_with(
        &mut sc.field,
        &sc.mass_flux,
        &sc.flow,
        h,
        inflow,
        &mut sc.faces,
    );
    let mut net = b.net();
    if let Some(env) = env {
        net += relax(&mut sc.field, env, &sc.survival, &exp.cell_mass);
    }
    for (d, (f, rho)) in density
        .iter_mut()
        .zip(sc.field.iter().zip(&exp.base.centre.density))
    {
        *d = f * rho;
    }
    net
}

/// What [`advect_ions`] changes besides the work arrays.
struct IonTransport<'a> {
    ions: &'a mut [Vec<f64>; 2],
    charge: &'a mut [f64],
    advected_in: &'a mut f64,
}

fn sediment_all(exp: &Experiment, state: &mut State, dt: f64) -> Result<(), RunError> {
    let dz = exp.grid.dz;
    update_fall_speeds(exp, state);
    let nsub = state
        .fall_speed
        .iter()
        .map(|v| sedimentation::substeps(v, dz, dt))
        .max()
        .unwrap_or(1);
    if nsub > MAX_SUBSTEPS {
        return Err(too_many(state, "sedimentation", nsub));
    }
    let h = dt / nsub as f64;
    let mut precip = 0.0;
    for sub in 0..nsub {
        if sub > 0 {
            update_fall_speeds(exp, state);
        }
        for (i, sp) in Species::FALLING.iter().enumerate() {
            let sc = &mut state.transport_scratch;
            let v = &state.fall_speed[i];
            precip += settle_per_mass(exp, &mut state.q[sp.index()], v, h, sc);
            if *sp == Species::Ice {
                settle_per_mass(exp, &mut state.n_ice, v, h, sc);
            }
            let c = Carrier::of(*sp).index();
            let out = sedimentation::settle(
                &mut state.charge[c],
                v,
                dz,
                h,
                &mut sc.faces,
                &mut sc.fall_faces,
            );
            state.charge_transport.precipitated += out;
        }
    }
    state.water.precipitation += precip;
    Ok(())
}

/// Lets a field held per kilogram of air (a mixing ratio or the crystal
/// number) fall at `v` (m s-1) for `h` s as its amount per cubic metre;
/// returns what reached the ground (its unit times kg m-2).
fn settle_per_mass(
    exp: &Experiment,
    x: &mut [f64],
    v: &[f64],
    h: f64,
    sc: &mut crate::column::work::TransportScratch,
) -> f64 {
    let rho = &exp.base.centre.density;
    for k in 0..x.len() {
        sc.field[k] = rho[k] * x[k];
    }
    let out = sedimentation::settle(
        &mut sc.field,
        v,
        exp.grid.dz,
        h,
        &mut sc.faces,
        &mut sc.fall_faces,
    );
    for k in 0..x.len() {
        x[k] = sc.field[k] * exp.inv_density[k];
    }
    out
}

/// Vertical eddy diffusion of every transported quantity over one step
/// ([`crate::physics::kinematics::eddy_diffusion`]): potential temperature
/// and vapour as departures from the base state, the hydrometeors, the
/// crystal number, every carrier's charge and the small ions per kg of air.
/// Column totals are conserved, so no budget term changes.
fn diffuse_all(exp: &Experiment, state: &mut State, dt: f64) {
    let base = &exp.base.centre;
    let sc = &mut state.transport_scratch;
    sc.diffusion.prepare(
        exp.config.column.eddy_diffusivity,
        &base.density,
        &exp.base.face.density,
        exp.grid.dz,
        dt,
    );
    let d = &sc.diffusion;
    // Every field of a step shares the matrix, so the fields are swept four
    // at a time (`Diffusion::apply_all`). The potential temperature and the
    // vapour mix as departures from the base state.
    let vapour = Species::Vapour.index();
    d.apply_all(
        std::iter::once((
            state.potential_temperature.as_mut_slice(),
            Some(base.potential_temperature.as_slice()),
        ))
        .chain(state.q.iter_mut().enumerate().map(|(i, q)| {
            let env = (i == vapour).then_some(base.vapour.as_slice());
            (q.as_mut_slice(), env)
        }))
        .chain(std::iter::once((state.n_ice.as_mut_slice(), None))),
    );
    // Per-volume fields (charge densities, ion numbers) mix as amounts per
    // kilogram of air, like the specific quantities. The ions mix as
    // concentrations, not as departures from the clear air's profile:
    // backward Euler keeps a non-negative field non-negative only in that
    // form. Mixed as departures, a layer the charged particles had stripped
    // of one sign went negative where the clear-air profile curves
    // (measured on the demo at 50 m), and the ion balance then clipped it
    // to zero, losing charge that no budget term held. The clear-air
    // profile itself is kept by production and recombination within
    // minutes, far faster than mixing at K ~ 100 m2 s-1 changes it over
    // its kilometres.
    let ions_on = exp.ions.enabled;
    for x in per_volume(&mut state.charge, &mut state.n_ion, ions_on) {
        for (v, inv_rho) in x.iter_mut().zip(&exp.inv_density) {
            *v *= inv_rho;
        }
    }
    d.apply_all(per_volume(&mut state.charge, &mut state.n_ion, ions_on).map(|x| (x, None)));
    for x in per_volume(&mut state.charge, &mut state.n_ion, ions_on) {
        for (v, r) in x.iter_mut().zip(&base.density) {
            *v *= r;
        }
    }
    if ions_on {
        crate::column::ions::set_carrier(&mut state.charge[Carrier::Ions.index()], &state.n_ion);
    }
}

/// The per-volume fields the eddy diffusion mixes: the charge densities of
/// the carriers that move with the air (not the ions' own when they are
/// prognostic, `ions_on`) and then the ion numbers.
fn per_volume<'a>(
    charge: &'a mut [Vec<f64>],
    n_ion: &'a mut [Vec<f64>; 2],
    ions_on: bool,
) -> impl Iterator<Item = &'a mut [f64]> {
    charge
        .iter_mut()
        .zip(Carrier::ALL)
        .filter(move |(_, c)| c.advected() && !(ions_on && *c == Carrier::Ions))
        .map(|(x, _)| x.as_mut_slice())
        .chain(
            n_ion
                .iter_mut()
                .filter(move |_| ions_on)
                .map(|x| x.as_mut_slice()),
        )
}
