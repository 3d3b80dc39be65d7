//! Microphysics against exact results: the gamma function, closed-form
//! moments against quadrature, zero in zero out, imposed profiles, the
//! light-cloud shortcut.

mod common;
use common::*;

use std::path::Path;
use stormcharge::physics::atmosphere::saturation::murphy_koop_2005_liquid;
use stormcharge::physics::constants::EPSILON;
use stormcharge::physics::microphysics::dsd::{self, gamma};
use stormcharge::physics::microphysics::params::MicroParams;
use stormcharge::physics::microphysics::rates::{rates, CellEnv, CellState};
use stormcharge::physics::microphysics::species::Species;
use stormcharge::physics::microphysics::step_cell;
use stormcharge::setup::experiment::Experiment;

/// Trapezoid quadrature of f over [0, dmax] with `n` intervals.
fn quad(f: impl Fn(f64) -> f64, dmax: f64, n: usize) -> f64 {
    let h = dmax / n as f64;
    (0..=n)
        .map(|i| f(i as f64 * h) * if i == 0 || i == n { 0.5 } else { 1.0 })
        .sum::<f64>()
        * h
}

#[test]
fn incomplete_moments_match_the_finite_sum_and_quadrature() {
    // The integral of D^m exp(-k D) from d0 to infinity for integer m is
    // m! exp(-k d0) sum_{j=0..m} (k d0)^j / j! / k^(m+1) (the upper
    // incomplete gamma function of integer order, Gamma(m+1, x) = m! e^-x
    // sum_j x^j/j!; Abramowitz & Stegun 1964, Eq. 6.5.13, equation number
    // from memory; derived again by repeated integration by parts). The
    // model reaches orders 4 and 5 (rain's fall-speed moments) by a
    // recursion; the sum and a trapezoid quadrature are independent of it.
    let d0 = 0.109e-3; // m, the rain law's zero (module documentation)
    for k in [500.0, 2000.0, 8000.0] {
        for m in 0..=6u32 {
            let x = k * d0;
            let mut term = 1.0;
            let mut sum = 1.0;
            for j in 1..=m {
                term *= x / f64::from(j);
                sum += term;
            }
            let factorial: f64 = (1..=m).map(f64::from).product();
            let exact = factorial * (-x).exp() * sum / k.powi(m as i32 + 1);
            let got = dsd::tail_moment(m, k, d0);
            assert!(
                ((got - exact) / exact).abs() < 1e-13,
                "m = {m}, k = {k}: {got} against {exact}"
            );
            // Over [d0, d0 + 60/k] (the rest is below e^-60 of it); the
            // trapezoid rule errs by h^2/12 (f'(b) - f'(a)) to leading order
            // (Euler-Maclaurin), about (h k)^2/12 = 3e-8 of the integral here.
            let numeric = quad(
                |u| (d0 + u).powi(m as i32) * (-k * (d0 + u)).exp(),
                60.0 / k,
                100_000,
            );
            assert!(
                ((got - numeric) / exact).abs() < 1e-7,
                "m = {m}, k = {k}: {got} against quadrature {numeric}"
            );
        }
    }
}

#[test]
fn gamma_function() {
    // Gamma(1/2) = sqrt(pi), Gamma(n) = (n-1)!, Gamma(4.5) = 11.6317283966
    // (Abramowitz & Stegun 1964, Table 6.1 and Eq. 6.1.8).
    assert!(rel(gamma(0.5), std::f64::consts::PI.sqrt()) < 1e-13);
    assert!(rel(gamma(5.0), 24.0) < 1e-13);
    assert!(rel(gamma(4.5), 11.631_728_396_567_45) < 1e-12);
}

#[test]
fn closed_form_moments_match_quadrature() {
    // The mass-weighted speed and sweep-out integral (LFO83 Eq. 51 kernel)
    // are closed forms over the exponential distribution; numerical
    // quadrature of the same integrals is the independent check (1e-6).
    let rho = 0.8;
    for (dist, q) in [
        (dsd::rain(8e6), 2e-3),
        (dsd::rain(8e6), 2e-6),
        (dsd::snow(3e6, 100.0), 1e-3),
        (dsd::graupel(4e6, 400.0), 3e-3),
    ] {
        let l = dist.slope(rho, q);
        let n = |d: f64| dist.n0 * (-l * d).exp();
        let dmax = 40.0 / l;
        let mass_flux = quad(|d| d.powi(3) * dist.fall.speed(d) * n(d), dmax, 200_000);
        let mass = quad(|d| d.powi(3) * n(d), dmax, 200_000);
        let vm = dist.mass_weighted_speed(rho, q) / dist.correction(rho);
        assert!(
            rel(vm, mass_flux / mass) < 1e-6,
            "{vm} vs {}",
            mass_flux / mass
        );
        let sweep = 0.25
            * std::f64::consts::PI
            * quad(|d| d * d * dist.fall.speed(d) * n(d), dmax, 200_000);
        assert!(rel(dist.sweep(rho, q) / dist.correction(rho), sweep) < 1e-6);
        // Mass content from the distribution equals rho q (the slope's definition).
        let m = quad(
            |d| std::f64::consts::PI / 6.0 * dist.rho_p * d.powi(3) * n(d),
            dmax,
            200_000,
        );
        assert!(rel(m, rho * q) < 1e-6);
    }
}

#[test]
fn zero_in_zero_out_and_signs() {
    // No condensate and subsaturated air: nothing happens (no process has a
    // source without its parent species).
    let p = MicroParams::default();
    let env = CellEnv::new(80_000.0, 1.0, &p);
    let mut s = CellState {
        q: [0.005, 0.0, 0.0, 0.0, 0.0, 0.0],
        n_ice: 0.0,
        t: 285.0,
    };
    let before = s;
    step_cell(&mut s, env, &p, 2.0, &mut Default::default()).unwrap();
    assert_eq!(s, before);
    // Mixed-phase cell: every transfer rate is non-negative except deposition,
    // whose sign is that of ice supersaturation (positive at water saturation
    // below 0 degC, Murphy & Koop 2005: e_w > e_i).
    let ew = murphy_koop_2005_liquid(258.0);
    let s = CellState {
        q: [EPSILON * ew / (50_000.0 - ew), 5e-4, 1e-3, 5e-5, 3e-4, 2e-3],
        n_ice: 5e4,
        t: 258.0,
    };
    let r = rates(&s, CellEnv::new(50_000.0, 0.65, &p), &p);
    assert!(r.vapour_to_ice > 0.0 && r.vapour_to_graupel > 0.0);
    let all = [
        r.cloud_to_rain_autoconversion,
        r.cloud_to_rain_accretion,
        r.rain_to_vapour,
        r.ice_to_snow,
        r.cloud_to_snow,
        r.cloud_to_graupel,
        r.ice_to_snow_collection,
        r.ice_to_graupel,
        r.snow_to_graupel_collection,
        r.rain_to_graupel,
    ];
    assert!(all.iter().all(|x| x.is_finite() && *x >= 0.0), "{r:?}");
    assert!(r.cloud_to_graupel > 0.0 && r.ice_to_graupel > 0.0 && r.rain_to_graupel > 0.0);
}

#[test]
fn prescribed_mode_reproduces_its_profiles() {
    // Each imposed species equals its formula (shape x envelope x peak)
    // exactly at every output time; species without layers stay empty.
    let exp = Experiment::from_text(PRESCRIBED, "prescribed", &[], Path::new(".")).unwrap();
    assert_eq!(
        exp.microphysics,
        stormcharge::physics::microphysics::Mode::Prescribed
    );
    let p = &exp.prescribed_hydrometeors;
    let (rec, _) = run_recorded(&exp);
    for (r, &t) in rec.times.iter().enumerate() {
        for (k, &z) in exp.grid.z.iter().enumerate() {
            for sp in [Species::Graupel, Species::Ice] {
                let (q, n) = p.value(sp, z, t).unwrap();
                assert_eq!(
                    rec.get(&format!("q_{}", sp.name()))[r][k],
                    q,
                    "{} at t = {t}, z = {z}",
                    sp.name()
                );
                if sp == Species::Ice {
                    assert_eq!(rec.get("n_ice")[r][k], n);
                }
            }
            assert_eq!(rec.get("q_snow")[r][k], 0.0);
        }
    }
    // Graupel pulse: zero at the start, full at 300 s (mature), zero at the
    // end; the largest value sits on the centres 100 m either side of 6 km.
    let peak = |r: usize| {
        rec.get("q_graupel")[r]
            .iter()
            .fold(0.0_f64, |m, &x| m.max(x))
    };
    let s = 1500.0 / (2.0 * std::f64::consts::PI).sqrt();
    assert_eq!(peak(0), 0.0);
    assert!(
        rel(
            peak(3),
            2.0e-3 * (-(100.0_f64 * 100.0) / (2.0 * s * s)).exp()
        ) < 1e-12
    );
    assert_eq!(peak(6), 0.0);
}

#[test]
fn light_cloud_alone_has_no_process_rates() {
    // The cell step skips the rate evaluation when cloud water below the
    // autoconversion threshold is the only condensate. That shortcut is
    // exact only while every process needs rain, ice, snow or graupel, and
    // Kessler (1969) autoconversion is zero below its threshold q_c0 (here
    // the LFO83 set of processes); this guards it against a process added
    // later. Sub- and supersaturated states, warm and cold.
    let p = MicroParams::default();
    let env = CellEnv::new(70_000.0, 0.9, &p);
    for t in [240.0, 258.0, 268.0, 280.0, 295.0] {
        let qsat = EPSILON * murphy_koop_2005_liquid(t) / (70_000.0 - murphy_koop_2005_liquid(t));
        for qv in [0.5 * qsat, qsat, 1.05 * qsat] {
            for qc in [
                0.0,
                0.5 * p.autoconversion_threshold,
                p.autoconversion_threshold,
            ] {
                let s = CellState {
                    q: [qv, qc, 0.0, 0.0, 0.0, 0.0],
                    n_ice: 0.0,
                    t,
                };
                let r = rates(&s, env, &p);
                assert!(
                    r.transfer_rates().iter().all(|&x| x == 0.0) && r.splinter_number == 0.0,
                    "T = {t} K, q_v = {qv}, q_c = {qc}: {r:?}"
                );
            }
        }
    }
}

/// A cold cell (258 K, 50 kPa) with cloud water, rain and graupel and no
/// cloud ice or snow, saturated over water.
fn rain_graupel_cell(t: f64, qc: f64, qr: f64, qg: f64) -> (CellState, CellEnv, MicroParams) {
    let p = MicroParams::default();
    let ew = murphy_koop_2005_liquid(t);
    let s = CellState {
        q: [EPSILON * ew / (50_000.0 - ew), qc, qr, 0.0, 0.0, qg],
        n_ice: 0.0,
        t,
    };
    (s, CellEnv::new(50_000.0, 0.65, &p), p)
}

#[test]
fn graupel_collecting_rain_is_the_collision_integral() {
    // LFO83's PGACR closed form pi^2 E N0r N0g |dV| (rho_w/rho)
    // [5/(lr^6 lg) + 2/(lr^5 lg^2) + 0.5/(lr^4 lg^3)] is the geometric
    // collision integral of two exponential populations,
    // (1/rho) int int (pi/4) (Dr + Dg)^2 |dV| m_w(Dr) Nr(Dr) Ng(Dg) dDr dDg,
    // with m_w = (pi/6) rho_w D^3 and E = 1: checked by quadrature (1e-6)
    // in a dry-growth cell (little water at -15 degC), where no limit acts.
    let (s, env, p) = rain_graupel_cell(258.15, 1e-5, 2e-4, 2e-3);
    let r = rates(&s, env, &p);
    let rho = 0.65;
    let lr = p.rain.slope(rho, s.q[2]);
    let lg = p.graupel.slope(rho, s.q[5]);
    let dv = (p.graupel.mass_weighted_speed(rho, s.q[5]) - p.rain.mass_weighted_speed(rho, s.q[2]))
        .abs();
    let pi = std::f64::consts::PI;
    let inner = |dg: f64| {
        quad(
            |dr: f64| {
                0.25 * pi
                    * (dr + dg).powi(2)
                    * (pi / 6.0 * 1000.0 * dr.powi(3))
                    * p.rain.n0
                    * (-lr * dr).exp()
            },
            40.0 / lr,
            4000,
        )
    };
    let integral = quad(
        |dg| inner(dg) * p.graupel.n0 * (-lg * dg).exp(),
        40.0 / lg,
        4000,
    );
    let expected = integral * dv / rho;
    assert!(r.rain_to_graupel_collection > 0.0);
    assert!(
        rel(r.rain_to_graupel_collection, expected) < 1e-6,
        "{} vs {expected}",
        r.rain_to_graupel_collection
    );
}

#[test]
fn wet_growth_sheds_what_cannot_freeze_and_fades_at_zero_celsius() {
    // Heat balance of wet growth (Musil 1970; LFO83's PGWET): the collected
    // water graupel freezes is limited by the heat it can lose. Checks:
    // (1) the water is conserved: frozen + shed + splinters = collected;
    // (2) at 0 degC in air saturated over water no heat leaves the particle,
    //     so nothing collected freezes (the limit tends continuously to the
    //     shedding above 0 degC);
    // (3) colder, the frozen share grows with the supercooling (more heat
    //     conducted away per unit time).
    let frozen_share = |t: f64| {
        let (s, env, p) = rain_graupel_cell(t, 3e-3, 0.0, 4e-3);
        let r = rates(&s, env, &p);
        let collected = p.graupel.sweep(0.65, s.q[5]) * s.q[1];
        let frozen = r.cloud_to_graupel + r.cloud_to_ice_splinters;
        assert!(
            rel(frozen + r.cloud_to_rain_shedding, collected) < 1e-12,
            "T = {t}: {frozen} + {} vs {collected}",
            r.cloud_to_rain_shedding
        );
        frozen / collected
    };
    let at_zero = frozen_share(273.15 - 1e-9);
    assert!(at_zero < 1e-6, "frozen share at 0 degC: {at_zero}");
    let (f2, f10) = (frozen_share(271.15), frozen_share(263.15));
    assert!(0.0 < f2 && f2 < f10 && f10 <= 1.0, "{f2} {f10}");
}

/// A cold cell (50 kPa, air 0.65 kg m-3) saturated over water with rain and
/// cloud ice only, drops freezing on contact with the crystals switched on.
fn rain_ice_cell(t: f64, qr: f64, qi: f64, n_ice: f64) -> (CellState, CellEnv, MicroParams) {
    let p = MicroParams {
        rain_ice_contact_freezing: true,
        ..MicroParams::default()
    };
    let ew = murphy_koop_2005_liquid(t);
    let s = CellState {
        q: [EPSILON * ew / (50_000.0 - ew), 0.0, qr, qi, 0.0, 0.0],
        n_ice,
        t,
    };
    (s, CellEnv::new(50_000.0, 0.65, &p), p)
}

#[test]
fn drops_freezing_on_crystals_is_the_collision_integral() {
    // LFO83's P_iacr: every drop that hits a crystal freezes, so the frozen
    // mass per second and kg of air is the crystal number per kg, n_i,
    // times the mass of the drops that hit one crystal: n_i int (pi/4)
    // D^2 V(D) (pi/6) rho_w D^3 N(D) dD; P_raci: the crystals' mass collected,
    // q_i int (pi/4) D^2 V N dD. Checked by quadrature with the Atlas et al.
    // (1973) fall law (1e-6), in a cell with few crystals, where the
    // collisions and not the heat balance set the rate.
    let (t, qr, qi, n) = (263.15, 2e-3, 1e-9, 1e3);
    let (s, env, p) = rain_ice_cell(t, qr, qi, n);
    let r = rates(&s, env, &p);
    let rho = 0.65;
    let l = p.rain.slope(rho, qr);
    let c = p.rain.correction(rho);
    let pi = std::f64::consts::PI;
    let hits = |m: i32| {
        quad(
            |d| 0.25 * pi * d * d * p.rain.fall.speed(d) * p.rain.n0 * (-l * d).exp() * d.powi(m),
            40.0 / l,
            200_000,
        ) * c
    };
    let frozen = n * pi / 6.0 * 1000.0 * hits(3);
    let collected = qi * hits(0);
    assert!(r.rain_to_graupel_ice_contact > 0.0);
    assert!(
        rel(r.rain_to_graupel_ice_contact, frozen) < 1e-6,
        "{} vs {frozen}",
        r.rain_to_graupel_ice_contact
    );
    assert!(rel(r.ice_to_graupel_by_rain, collected) < 1e-6);
    // The same closed form for a power fall law is LFO83's
    // pi^2 a rho_p N0 Gamma(6 + b)/(24 lambda^(6 + b)) (their Eq. 26 form).
    let g = dsd::graupel(4e6, 400.0);
    let lg = g.slope(rho, 3e-3);
    let sp = g.slope_powers(rho, 3e-3).unwrap();
    let (a, b) = g.power_law();
    let closed = pi * pi / 24.0 * a * 400.0 * 4e6 * gamma(6.0 + b) / lg.powf(6.0 + b);
    assert!(rel(g.mass_sweep_at(&sp, 1.0), closed) < 1e-12);
    // Off by default: the key's default leaves the scheme as before.
    let off = rates(&s, env, &MicroParams::default());
    assert_eq!(off.rain_to_graupel_ice_contact, 0.0);
    assert_eq!(off.ice_to_graupel_by_rain, 0.0);
}

#[test]
fn drops_freeze_no_faster_than_they_lose_heat_and_not_at_zero_celsius() {
    // With many crystals every large drop is hit within seconds, and the
    // freezing is bounded by the heat the drops can give off with their
    // surface at 0 degC (Musil 1970): the bound vanishes at 0 degC in air
    // saturated there (no sliding step where melting takes over) and grows
    // with the supercooling. Water is conserved and the latent heat of
    // exactly the frozen mass is released (tendencies).
    let freezing = |t: f64| {
        let (s, env, p) = rain_ice_cell(t, 3e-3, 1e-6, 1e5);
        let r = rates(&s, env, &p);
        let (dq, _, dtdt) = stormcharge::physics::microphysics::rates::tendencies(&s, &r);
        assert!(dq.iter().sum::<f64>().abs() <= 1e-15 * dq.iter().map(|x| x.abs()).sum::<f64>());
        // The heating beyond the scheme without the process is the latent
        // heat of fusion of the frozen drops (collected crystals are ice
        // already and release none).
        let mut without = r;
        without.rain_to_graupel_ice_contact = 0.0;
        let (_, _, dtdt_without) =
            stormcharge::physics::microphysics::rates::tendencies(&s, &without);
        let latent = stormcharge::physics::constants::L_FUSION * r.rain_to_graupel_ice_contact
            / stormcharge::physics::constants::CP_DRY;
        assert!(
            (dtdt - dtdt_without - latent).abs() <= 1e-12 * latent.max(1e-30),
            "{dtdt} - {dtdt_without} vs {latent}"
        );
        if t < 273.0 {
            // Many crystals: the heat balance, not the collisions, sets it.
            let rho = 0.65;
            let mu = stormcharge::physics::microphysics::rates::MU_AIR;
            let cap = stormcharge::physics::microphysics::rates::wet_growth_capacity(
                t,
                s.q[0],
                rho,
                p.rain.ventilation(rho, s.q[2], mu / rho),
                r.ice_to_graupel_by_rain,
            );
            assert!(rel(r.rain_to_graupel_ice_contact, cap) < 1e-10, "{t}");
        }
        r.rain_to_graupel_ice_contact
    };
    let near_zero = freezing(273.15 - 1e-9);
    let (f1, f5) = (freezing(272.15), freezing(268.15));
    assert!(
        near_zero < 1e-6 * f1,
        "at 0 degC: {near_zero} against {f1} at -1 degC"
    );
    assert!(0.0 < f1 && f1 < f5, "{f1} {f5}");
    // Above 0 degC nothing freezes.
    assert_eq!(freezing(274.15), 0.0);
}

#[test]
fn droplets_freeze_by_bigg_law_near_minus_37_celsius_under_steady_cooling() {
    // Bigg (1953): a droplet of volume v freezes with probability
    // B' [exp(A' dT) - 1] v per second at supercooling dT (B' = 100 m-3 s-1,
    // A' = 0.66 K-1, the constants of LFO83 Eq. 45, from memory). Cooled at a
    // steady c K/s the unfrozen fraction is exp(-(B' v/(A' c)) [exp(A' dT) -
    // 1 - A' dT]), so half of the droplets have frozen at the dT where that
    // bracket equals A' c ln 2/(B' v) (integration of the law in closed
    // form). For 20 um droplets lifted at 7 m/s through 6.5 K/km, the
    // closed form gives about -37 degC, close to the -37.5 degC down to which
    // most condensed water stayed liquid in vigorous continental updrafts
    // (Rosenfeld & Woodley 2000, Nature 405; seen in its abstract: droplets
    // of 17 um median volume diameter). The model's rate, integrated
    // along the same cooling, must reach half at the closed form's
    // temperature (0.05 K).
    let p = MicroParams {
        droplet_freezing: true,
        ..MicroParams::default()
    };
    let (a, b) = (p.bigg_a, p.bigg_b);
    let v = p.droplet_volume();
    let cooling = 7.0 * 6.5e-3; // K s-1
    let target = a * cooling * std::f64::consts::LN_2 / (b * v);
    // Solve exp(a x) - 1 - a x = target for x by bisection.
    let (mut lo, mut hi) = (0.0_f64, 60.0_f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if (a * mid).exp() - 1.0 - a * mid < target {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let closed = 0.5 * (lo + hi);
    assert!((closed - 37.0).abs() < 1.0, "closed-form median {closed} K");
    // The model's rate along the cooling (only cloud water: no other
    // process acts), integrated with small steps of the exact exponential.
    let env = CellEnv::new(30_000.0, 0.45, &p);
    let (mut qc, q0, mut t, dt) = (1e-3, 1e-3, 273.15 - 30.0, 0.01);
    while qc > 0.5 * q0 {
        let s = CellState {
            q: [0.0, qc, 0.0, 0.0, 0.0, 0.0],
            n_ice: 0.0,
            t,
        };
        let r = rates(&s, env, &p);
        assert!(
            rel(
                r.frozen_droplet_number,
                r.cloud_to_ice_freezing / p.droplet_mass()
            ) < 1e-12
        );
        qc *= (-dt * r.cloud_to_ice_freezing / qc).exp();
        t -= cooling * dt;
        assert!(t > 273.15 - 45.0, "not half frozen by -45 degC");
    }
    let model = 273.15 - t;
    assert!(
        (model - closed).abs() < 0.05,
        "model {model} K, closed form {closed} K"
    );
    // Off by default.
    let s = CellState {
        q: [0.0, 1e-3, 0.0, 0.0, 0.0, 0.0],
        n_ice: 0.0,
        t: 273.15 - 36.0,
    };
    assert_eq!(
        rates(&s, env, &MicroParams::default()).cloud_to_ice_freezing,
        0.0
    );
}

#[test]
fn one_droplet_size_for_the_microphysics_and_the_charging() {
    // `microphysics.droplet_diameter` sets the droplet of every bulk process
    // (homogeneous freezing's crystal mass, Bigg freezing, the collision
    // efficiency, inductive charging): the mass of a sphere scales as d^3
    // (derived), 1.5^3 = 3.375 times the 20 um droplet's at 30 um.
    let default = demo(&[]);
    let larger = demo(&["microphysics.droplet_diameter=3.0e-5"]);
    let (m0, m1) = (
        default.micro_params().droplet_mass(),
        larger.micro_params().droplet_mass(),
    );
    assert_eq!(default.micro_params().droplet_diameter, 2.0e-5);
    assert!(rel(m1 / m0, 3.375) < 1e-14);
    assert!(rel(m0, std::f64::consts::PI / 6.0 * 1000.0 * 2.0e-5_f64.powi(3)) < 1e-14);
}

/// A cell at 50 kPa (air 0.65 kg m-3), saturated over water at `t` (K),
/// with cloud water `qc` and crystals (`qi` kg kg-1, `n_ice` kg-1) only.
fn mixed_phase_cell(
    t: f64,
    qc: f64,
    qi: f64,
    n_ice: f64,
    equilibrium: bool,
) -> (CellState, CellEnv, MicroParams) {
    let p = MicroParams {
        cloud_equilibrium: equilibrium,
        ..MicroParams::default()
    };
    let ew = murphy_koop_2005_liquid(t);
    let s = CellState {
        q: [EPSILON * ew / (50_000.0 - ew), qc, 0.0, qi, 0.0, 0.0],
        n_ice,
        t,
    };
    (s, CellEnv::new(50_000.0, 0.65, &p), p)
}

/// Cloud ice (kg kg-1) after `total` s of the cell's processes taken in
/// steps of `dt` s.
fn ice_after(cell: &(CellState, CellEnv, MicroParams), total: f64, dt: f64) -> f64 {
    let (mut s, env, p) = (cell.0, cell.1, &cell.2);
    let mut report = stormcharge::physics::microphysics::CellReport::default();
    for _ in 0..(total / dt).round() as usize {
        step_cell(&mut s, env, p, dt, &mut report).unwrap();
    }
    s.q[Species::Ice.index()]
}

#[test]
fn cloud_water_feeds_growing_crystals_at_a_rate_that_does_not_depend_on_the_step() {
    // Crystals growing among droplets at -20 degC take their vapour from
    // the droplets (the Wegener-Bergeron-Findeisen process; Pruppacher &
    // Klett 1997, ch. 16, from memory): the bulk scheme assumes the cloud
    // water in equilibrium with the vapour, so the vapour stays at liquid
    // saturation while the cloud lasts. A cell with no other process is an
    // autonomous ODE, whose solution after 20 s cannot depend on how the
    // 20 s are cut into steps (the flow of an autonomous ODE is a
    // semigroup; common practice): with the equilibrium held inside the
    // integration, 1 x 20 s, 20 x 1 s and 80 x 0.25 s agree within the
    // integrator's tolerance (measured: 0.892 g/kg gained each, within
    // 2.1e-4 and 9e-6 relative of the 0.25 s steps). Held only at the
    // adjustments before and after each step, the vapour falls towards ice
    // saturation within a step (1e8 crystals per kg deposit in a few
    // seconds) and the droplets refill it only at the step's end, so the
    // ice gained depends on the step (measured: 0.20, 0.78 and 0.86 g/kg
    // with 20, 1 and 0.25 s steps, approaching 0.89 at first order).
    let cell = |eq| mixed_phase_cell(253.15, 1.0e-3, 1.0e-4, 1.0e8, eq);
    let held = cell(true);
    let gained = |c: &_, dt| ice_after(c, 20.0, dt) - 1.0e-4;
    let (g20, g1, g025) = (gained(&held, 20.0), gained(&held, 1.0), gained(&held, 0.25));
    assert!(g025 > 1e-5, "ice gained {g025}");
    assert!(
        rel(g20, g025) < 1e-3 && rel(g1, g025) < 1e-3,
        "{g20} {g1} {g025}"
    );
    let split = cell(false);
    let (s20, s025) = (gained(&split, 20.0), gained(&split, 0.25));
    assert!(
        s20 < 0.9 * s025,
        "without the equilibrium: {s20} against {s025}"
    );
}

/// The column integrates its cells in groups side by side
/// (`integrate_cells`). Each cell's result must not depend on its group:
/// the same bits whatever the group size (IEEE 754 arithmetic is exact per
/// lane; common practice). Against the cell step alone (`step_cell`, the
/// platform's exp, ln and cbrt where the group uses its own, within one
/// unit in the last place of them) every variable agrees to 1e-12
/// relative: a rounding-level difference. Cells over the whole range the
/// column meets: warm and cold, sub- and supersaturated, every mix of
/// species, groups of every size including a short last one, both
/// embedded integrators.
#[test]
fn grouped_integration_does_not_depend_on_the_group() {
    use stormcharge::physics::microphysics::params::Integrator;
    use stormcharge::physics::microphysics::{finish_cell, integrate_cells, prepare_cell};
    let mut uniform = uniform_stream(12345);
    for integrator in [
        Integrator::BogackiShampine1989,
        Integrator::DormandPrince1980,
    ] {
        let p = MicroParams {
            integrator,
            droplet_freezing: true,
            ..MicroParams::default()
        };
        let mut cells = Vec::new();
        for _ in 0..203 {
            let pressure = 25_000.0 + 75_000.0 * uniform();
            let rho = pressure / (287.0 * 260.0);
            let t = 225.0 + 70.0 * uniform();
            let ew = murphy_koop_2005_liquid(t);
            let qsat = EPSILON * ew / (pressure - ew);
            let vapour = qsat * (0.7 + 0.4 * uniform());
            let mut q = [vapour, 2e-3, 4e-3, 1e-3, 2e-3, 5e-3];
            for x in &mut q[1..] {
                *x = if uniform() < 0.35 {
                    0.0
                } else {
                    *x * 10f64.powf(-4.0 * uniform())
                };
            }
            let n_ice = if q[3] > 0.0 {
                1e4 * 10f64.powf(4.0 * uniform())
            } else {
                0.0
            };
            cells.push((CellState { q, n_ice, t }, CellEnv::new(pressure, rho, &p)));
        }
        let dt = 2.0;
        let mut alone = cells.clone();
        for (s, env) in &mut alone {
            step_cell(s, *env, &p, dt, &mut Default::default()).unwrap();
        }
        let mut first: Option<Vec<(CellState, CellEnv)>> = None;
        for group_of in [cells.len(), 7, 1] {
            let mut grouped = cells.clone();
            for chunk in grouped.chunks_mut(group_of) {
                let mut work: Vec<_> = chunk
                    .iter()
                    .map(|&(s, env)| (s, env, Default::default()))
                    .collect();
                let mut moving = Vec::new();
                for (i, (s, env, report)) in work.iter_mut().enumerate() {
                    if prepare_cell(s, *env, &p, report) {
                        moving.push(i);
                    }
                }
                integrate_cells(&mut work, &moving, &p, dt).unwrap();
                for ((s, _), (w, env, report)) in chunk.iter_mut().zip(&mut work) {
                    finish_cell(w, *env, report).unwrap();
                    *s = *w;
                }
            }
            for (k, ((a, _), (g, _))) in alone.iter().zip(&grouped).enumerate() {
                let pairs =
                    a.q.iter()
                        .chain([&a.n_ice, &a.t])
                        .zip(g.q.iter().chain([&g.n_ice, &g.t]));
                for (x, y) in pairs {
                    assert!(
                        (x - y).abs() <= 1e-12 * x.abs().max(1e-20),
                        "{integrator:?}, groups of {group_of}: cell {k}: {a:?} against {g:?}"
                    );
                }
            }
            match &first {
                None => first = Some(grouped),
                Some(f) => {
                    for (k, (a, g)) in f.iter().zip(&grouped).enumerate() {
                        assert_eq!(a, g, "{integrator:?}, groups of {group_of}: cell {k}");
                    }
                }
            }
        }
        // The set exercises the processes, not only dry cells.
        let changed = cells
            .iter()
            .zip(&alone)
            .filter(|((c, _), (a, _))| c.q[2..] != a.q[2..])
            .count();
        assert!(
            changed > 100,
            "only {changed} of {} cells changed",
            cells.len()
        );
    }
}

/// The saturation adjustment of cells in groups (`adjust_cells`) against
/// each cell's own adjustment: the same operations lane by lane (Newton's
/// method on the isobaric adjustment equation, Soong & Ogura 1973, with
/// the tabulated Murphy & Koop 2005 pressures, whose interpolation is plain
/// arithmetic), so every cell gets the same bits, whether it stays
/// subsaturated, dries out or condenses, including the reports. Cells from
/// 40 % to 130 % of liquid saturation, with and without cloud water, both
/// adjustments of the step, a short last group.
#[test]
fn grouped_saturation_adjustment_gives_each_cells_bits() {
    use stormcharge::physics::microphysics::adjust::saturation_adjustment;
    use stormcharge::physics::microphysics::{adjust_cells, Adjustment, CellReport};
    let p = MicroParams::default();
    let mut uniform = uniform_stream(31);
    let mut cells = Vec::new();
    for _ in 0..1001 {
        let pressure = 20_000.0 + 80_000.0 * uniform();
        let t = 225.0 + 80.0 * uniform();
        let rho = pressure / (287.0 * t);
        let ew = murphy_koop_2005_liquid(t);
        let qsat = EPSILON * ew / (pressure - ew);
        let cloud = if uniform() < 0.4 {
            0.0
        } else {
            3e-3 * 10f64.powf(-6.0 * uniform())
        };
        let s = CellState {
            q: [qsat * (0.4 + 0.9 * uniform()), cloud, 0.0, 0.0, 0.0, 0.0],
            n_ice: 0.0,
            t,
        };
        cells.push((s, CellEnv::new(pressure, rho, &p), CellReport::default()));
    }
    let (mut dried, mut condensed) = (0, 0);
    for which in [Adjustment::First, Adjustment::Last] {
        let mut grouped = cells.clone();
        adjust_cells(&mut grouped, which);
        for ((s, env, _), (g, _, report)) in cells.iter().zip(&grouped) {
            let mut alone = *s;
            let c = saturation_adjustment(&mut alone, env.p);
            assert_eq!(alone, *g, "{s:?}");
            let (before, formed) = match which {
                Adjustment::First => (report.cloud_before_first_adjust, report.condensed_first),
                Adjustment::Last => (report.cloud_before_adjust, report.condensed),
            };
            assert_eq!((before, formed.to_bits()), (s.q[1], c.to_bits()));
            dried += usize::from(s.q[1] > 0.0 && g.q[1] == 0.0);
            condensed += usize::from(c > 0.0);
        }
    }
    // Every branch of the adjustment is exercised.
    assert!(
        dried > 50 && condensed > 50,
        "{dried} dried, {condensed} condensed"
    );
}
