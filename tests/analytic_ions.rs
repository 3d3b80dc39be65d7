//! Small ions against analytic solutions: the ion balance, charge
//! relaxation in a conductor, ion drift, attachment to a charged sphere,
//! and point discharge limiting the surface field.

mod common;
use common::*;
use stormcharge::column::state::State;
use stormcharge::physics::carriers::Carrier;
use stormcharge::physics::constants::{ELEMENTARY_CHARGE, EPSILON_0};
use stormcharge::physics::ions::attachment::{
    coulomb_factor, diffusion_coefficient, population_rates,
};
use stormcharge::physics::ions::conduction::{drift, relaxed_fraction, DriftColumn};
use stormcharge::physics::ions::{balance_step, steady_clear_air};

#[test]
fn clean_air_settles_to_the_square_root_law() {
    // dn/dt = q - alpha n^2 has the steady state n = sqrt(q/alpha) (the ion
    // balance equation; analytic). From no ions, with a step 100 times the
    // recombination time, the balance reaches it to 1e-6; the steady state
    // is a fixed point of the step for any step length.
    let (q, alpha): (f64, f64) = (2.0e6, 1.6e-12);
    let exact = (q / alpha).sqrt();
    let (mut p, mut m) = (0.0, 0.0);
    for _ in 0..200 {
        let b = balance_step(p, m, q, alpha, 0.0, 0.0, 50.0);
        (p, m) = (b.positive, b.negative);
    }
    assert!(
        rel(p, exact) < 1e-6 && rel(m, exact) < 1e-6,
        "{p} {m} {exact}"
    );
    for dt in [0.1, 10.0, 1e4] {
        let b = balance_step(exact, exact, q, alpha, 0.0, 0.0, dt);
        assert!(rel(b.positive, exact) < 1e-12);
    }
    assert!(rel(steady_clear_air(q, alpha, 0.0), exact) < 1e-15);
}

#[test]
fn aerosol_balance_is_the_quadratic_root() {
    // With attachment to aerosol at beta Z the steady state solves
    // q = alpha n^2 + beta Z n (analytic); the step converges to it.
    let (q, alpha, sink) = (5.0e6, 1.6e-12, 0.01);
    let n = steady_clear_air(q, alpha, sink);
    assert!(rel(alpha * n * n + sink * n, q) < 1e-12);
    let (mut p, mut m) = (0.0, 0.0);
    for _ in 0..400 {
        let b = balance_step(p, m, q, alpha, sink, sink, 20.0);
        (p, m) = (b.positive, b.negative);
    }
    assert!(rel(p, n) < 1e-6 && rel(m, n) < 1e-6);
}

#[test]
fn balance_books_every_ion() {
    // Numbers: start + production = end + recombined + attached, for each
    // sign, to round-off; recombination takes equal numbers of each sign.
    let (np, nn, q, alpha, lp, ln, dt) = (3.0e8, 1.0e8, 4.0e6, 1.6e-12, 0.3, 0.05, 7.0);
    let b = balance_step(np, nn, q, alpha, lp, ln, dt);
    assert!(rel(b.positive + b.recombined + b.attached_pos, np + q * dt) < 1e-14);
    assert!(rel(b.negative + b.recombined + b.attached_neg, nn + q * dt) < 1e-14);
}

#[test]
fn coulomb_factor_limits() {
    // x/(e^x - 1): 1 at x = 0, ~ |x| for strong attraction, ~ x e^-x for
    // strong repulsion (analytic).
    assert_eq!(coulomb_factor(0.0), 1.0);
    assert!(rel(coulomb_factor(-50.0), 50.0) < 1e-15);
    assert!(coulomb_factor(50.0) < 1e-19);
    assert!(rel(coulomb_factor(1.0), 1.0 / (std::f64::consts::E - 1.0)) < 1e-15);
}

/// The Coulomb factor the column evaluates for a group of cells (Bernoulli
/// series below 1/2, x/(e^x - 1) above; `coulomb_factor_nonnegative`)
/// against the one-cell form with the platform's `expm1`
/// (`coulomb_factor`), for one cell and for a group, from 0 to beyond the
/// overflow of e^x: within 4 units in the last place (the group's exp is
/// within one of the platform's, the subtraction e^x - 1 >= 0.64 loses at
/// most two bits, the division one; analytic error bound).
#[test]
fn coulomb_factor_of_groups_within_rounding() {
    use stormcharge::physics::ions::attachment::coulomb_factor_nonnegative;
    let mut worst = 0.0f64;
    let mut xs: Vec<f64> = (0..4000).map(|i| 1e-12 * 1.01f64.powi(i)).collect();
    xs.extend((0..8000).map(|i| i as f64 * 0.1));
    xs.extend([0.0, 0.5, 0.5f64.next_down(), 700.0, 700.5, 745.0, 800.0]);
    for x in xs {
        let want = coulomb_factor(x);
        let one = coulomb_factor_nonnegative(x);
        let group = coulomb_factor_nonnegative(lane_zero_among(x, &[0.3, 2.0, 750.0])).0[0];
        for got in [one, group] {
            worst = worst.max(ulps(got, want));
        }
    }
    assert!(worst <= 4.0, "worst {worst} units in the last place");
}

#[test]
fn strongly_charged_sphere_takes_ions_at_the_conduction_rate() {
    // For large attracting charge the diffusion rate with its Coulomb
    // factor tends to mu |Q| / eps0 per sphere: the flux of ions drifting in
    // the sphere's own field Q/(4 pi eps0 r^2) over its surface (Gauss's
    // law; Whipple & Chalmers 1944; analytic).
    let (mu, t, r, q) = ((1.4e-4, 1.9e-4), 270.0, 1e-3, 50e-12);
    let (kp, kn) = population_rates(mu, t, 1.0, r, q);
    assert!(kp < 1e-100, "like-signed ions are repelled: {kp}");
    assert!(rel(kn, mu.1 * q / EPSILON_0) < 1e-3, "{kn}");
    // Uncharged: 4 pi D r (Smoluchowski), D = mu k T / e.
    let (k0, _) = population_rates(mu, t, 1.0, r, 0.0);
    assert!(
        rel(
            k0,
            4.0 * std::f64::consts::PI * diffusion_coefficient(mu.0, t) * r
        ) < 1e-14
    );
}

/// A uniform column for the drift core: `n` cells of `dz` m with ions
/// `n_pos`, `n_neg` and mobilities `mu`.
struct Bed {
    n_pos: Vec<f64>,
    n_neg: Vec<f64>,
    mu: Vec<f64>,
    field: Vec<f64>,
    flux: [Vec<f64>; 2],
    current: Vec<f64>,
}

impl Bed {
    fn new(n: usize, n_pos: Vec<f64>, n_neg: Vec<f64>, mu: f64) -> Self {
        Bed {
            n_pos,
            n_neg,
            mu: vec![mu; n],
            field: vec![0.0; n + 1],
            flux: [vec![0.0; n + 1], vec![0.0; n + 1]],
            current: vec![0.0; n + 1],
        }
    }
    fn run(&mut self, dz: f64, dt: f64) {
        let [fp, fnn] = &mut self.flux;
        let mut col = DriftColumn {
            n_pos: &mut self.n_pos,
            n_neg: &mut self.n_neg,
            mu_pos: &self.mu,
            mu_neg: &self.mu,
            field: &mut self.field,
            flux_pos: fp,
            flux_neg: fnn,
            current: &mut self.current,
        };
        drift(&mut col, dz, dt, None);
    }
    fn charge(&self, dz: f64, from: usize) -> f64 {
        ELEMENTARY_CHARGE
            * dz
            * self.n_pos[from..]
                .iter()
                .zip(&self.n_neg[from..])
                .map(|(p, m)| p - m)
                .sum::<f64>()
    }
}

#[test]
fn charge_relaxes_at_the_conductivity_rate() {
    // A layer of excess positive ions in air of uniform conductivity
    // (planar, field-free above a conducting ground): in a uniform conductor
    // d rho/dt = -div(sigma E) = -sigma rho/eps0, so the charge in the air
    // decays as exp(-sigma t/eps0) (analytic) and reappears only where the
    // conductivity changes: at the ground, whose electrode layer (the ground
    // emits no ions) lies in the lowest cells, left out of the sum. The
    // excess is 1e-6 of the background, so sigma stays uniform to 1e-6.
    let (n, dz, base, mu) = (100, 100.0, 1.0e9, 1.5e-4);
    let mut pos = vec![base; n];
    for p in pos.iter_mut().skip(60).take(5) {
        *p += 1e-6 * base;
    }
    let mut bed = Bed::new(n, pos, vec![base; n], mu);
    // Gauss's law upward from E(top) = 0.
    let mut e = 0.0;
    for j in (0..n).rev() {
        e -= ELEMENTARY_CHARGE * (bed.n_pos[j] - bed.n_neg[j]) * dz / EPSILON_0;
        bed.field[j] = e;
    }
    let q0 = bed.charge(dz, 20);
    let sigma = 2.0 * ELEMENTARY_CHARGE * base * mu;
    let tau = EPSILON_0 / sigma;
    let dt = tau / 20.0;
    for _ in 0..40 {
        bed.run(dz, dt);
    }
    let expected = q0 * (-40.0 * dt / tau).exp();
    let q = bed.charge(dz, 20);
    assert!(rel(q, expected) < 1e-4, "{q} vs {expected}");
}

#[test]
fn a_thin_ion_layer_drifts_at_mobility_times_field() {
    // Positive ions in a uniform upward field move up at mu E (analytic);
    // the layer's centroid after t lies mu E t higher. Few ions, so their
    // own field is negligible (the relaxation factor stays 1 to 1e-12).
    let (n, dz, mu, e0) = (400, 10.0, 2e-4, 1e4);
    let pos: Vec<f64> = (0..n)
        .map(|k| {
            let z = (k as f64 + 0.5) * dz;
            1e3 * (-((z - 1000.0) / 60.0).powi(2)).exp()
        })
        .collect();
    let mut bed = Bed::new(n, pos, vec![0.0; n], mu);
    let centroid = |b: &Bed| {
        let m: f64 = b.n_pos.iter().sum();
        b.n_pos
            .iter()
            .enumerate()
            .map(|(k, x)| (k as f64 + 0.5) * dz * x)
            .sum::<f64>()
            / m
    };
    let c0 = centroid(&bed);
    let (dt, steps) = (1.0, 100);
    for _ in 0..steps {
        bed.field.fill(e0);
        bed.run(dz, dt);
    }
    let moved = centroid(&bed) - c0;
    let exact = mu * e0 * dt * steps as f64;
    assert!(rel(moved, exact) < 1e-6, "{moved} vs {exact}");
}

/// A still planar column with a prescribed negative layer overhead and
/// point discharge, no ionisation (only corona ions).
const CORONA: &str = stormcharge_still!(
    r#"
[grid]
top = 10000.0
spacing = 100.0
[time]
step = 2.0
duration = 1200.0
output_interval = 600.0
[electrostatics]
geometry = "planar"
[discharge]
enabled = false
[[prescribed_charge.layers]]
center = 5000.0
thickness = 1000.0
density = -0.5
"#
);

macro_rules! stormcharge_still {
    ($rest:expr) => {
        concat!(
            "[atmosphere]\nprofile = \"standard_1976\"\n[updraft]\npeak_speed = 0.0\n[microphysics]\nscheme = \"off\"\n",
            "[ions]\nionisation = \"table\"\nionisation_points = [[0.0, 0.0], [20000.0, 0.0]]\naerosol_number = 0.0\ncorona_coefficient = 1e-14\n",
            $rest
        )
    };
}
use stormcharge_still;

#[test]
fn ground_corona_limits_the_surface_field_to_its_threshold() {
    // -0.5 nC m-3 over 1 km overhead: 56.5 kV/m at the ground (planar,
    // field-free top: E0 = -Q/eps0; docs/references.md, one-line checks).
    // Point discharge injects positive ions until the surface field is back
    // at the 5 kV/m threshold (never below within a step): after 20 minutes
    // it lies within 2 % above the threshold, the injected charge is in the
    // air as a positive space charge of the observed few nC m-3 magnitude
    // near the ground (Chauzy & Raizonville; Soula 1994; docs/references.md),
    // and the budget closes to round-off.
    let exp = experiment(CORONA, &[]);
    let mut s = State::initial(&exp);
    assert!(
        rel(s.field[0], 0.5e-9 * 1000.0 / EPSILON_0) < 1e-9,
        "{}",
        s.field[0]
    );
    for _ in 0..exp.schedule.steps {
        stormcharge::column::step::step(&exp, &mut s, exp.schedule.dt).unwrap();
    }
    let threshold = exp.config.ions.corona_threshold;
    assert!(
        s.field[0] >= threshold * (1.0 - 1e-9) && s.field[0] <= 1.02 * threshold,
        "surface field {}",
        s.field[0]
    );
    let ions = &s.charge[Carrier::Ions.index()];
    assert!(s.charge_transport.corona > 0.0);
    let low: f64 = ions[..5].iter().sum::<f64>() / 5.0;
    assert!(low > 0.0, "positive space charge near the ground: {low}");
    assert!(s.charge_budget_residual().abs() <= 1e-12 * s.charge_transport.corona);
}

#[test]
fn coulomb_pair_equals_both_factors() {
    // f(-x) = f(x) + x for f(x) = x/(e^x - 1) (algebra: both equal
    // x e^x/(e^x - 1)); the pair from one exponential must match the two
    // factors computed apart to rounding over attracting and repelling
    // charges of every size.
    use stormcharge::physics::ions::attachment::coulomb_pair_of;
    for i in -400..=400 {
        let x = 0.05 * i as f64 * (1.0 + 1e-3 * i as f64);
        let (p, m) = coulomb_pair_of(x);
        for (got, want) in [(p, coulomb_factor(x)), (m, coulomb_factor(-x))] {
            assert!(
                (got - want).abs() <= 1e-13 * want.max(1e-300),
                "x = {x}: {got} {want}"
            );
        }
    }
}

/// The relaxation factor of the drift, (1 - e^-x)/x (an identity of the
/// exponential; the field a face's own flux removes, docs/ions.md), against
/// the same quantity from the platform's `expm1`, -expm1(-x)/x, for one face
/// and for a group, over x from 1e-15 to 1e4: within a few units in the
/// last place (the group's exponential is the lanes' own).
#[test]
fn relaxed_fraction_matches_the_platform_expm1() {
    let mut worst = 0.0f64;
    let mut xs: Vec<f64> = (0..1900).map(|i| 1e-15 * 1.02f64.powi(i)).collect();
    xs.extend([0.5, 0.5f64.next_down(), 1e-12, 1.0000001e-12, 700.0, 1e4]);
    for &x in xs.iter().filter(|&&x| x <= 1e4) {
        let want = if x > 1e-12 { -(-x).exp_m1() / x } else { 1.0 };
        let one = relaxed_fraction(x);
        let group = relaxed_fraction(lane_zero_among(x, &[3e-7, 0.9, 40.0])).0[0];
        for got in [one, group] {
            worst = worst.max(ulps(got, want));
        }
    }
    assert!(worst <= 4.0, "worst {worst} units in the last place");
}

/// The drift over one step, computed by the model a group of faces at a
/// time, against the scheme written face by face from the module's
/// description (upwind ions of each sign; the face's field relaxing at the
/// conductivity of the ions crossing, eps0 E (1 - exp(-sigma h/eps0)) with
/// the platform's `expm1`; ions entering through the top as the top cell's;
/// none from below the ground): within 1e-13 relative over column sizes
/// 1-40, fields of both signs and zero, and sub-stepping.
#[test]
fn grouped_drift_matches_the_scheme_face_by_face() {
    let mut next = uniform_stream(17);
    for n in 1..=40 {
        let n_pos: Vec<f64> = (0..n).map(|_| 1e8 + 1e9 * next()).collect();
        let n_neg: Vec<f64> = (0..n).map(|_| 1e8 + 1e9 * next()).collect();
        let mut bed = Bed::new(n, n_pos, n_neg, 0.0);
        bed.mu = (0..n).map(|_| 1e-4 + 4e-4 * next()).collect();
        for (j, e) in bed.field.iter_mut().enumerate() {
            *e = if j % 7 == 3 {
                0.0
            } else {
                (next() - 0.4) * 2e5
            };
        }
        let (dz, dt) = (50.0, 2.0);
        // The reference, face by face, with the sub-steps the model takes.
        let fastest = bed
            .field
            .iter()
            .enumerate()
            .map(|(j, e)| {
                let lo = j.saturating_sub(1).min(n - 1);
                bed.mu[lo].max(bed.mu[j.min(n - 1)]) * e.abs()
            })
            .fold(0.0f64, f64::max);
        let nsub = ((fastest * dt / (0.5 * dz)).ceil() as usize).max(1);
        let h = dt / nsub as f64;
        let (mut p, mut m, mut e) = (bed.n_pos.clone(), bed.n_neg.clone(), bed.field.clone());
        let mu = bed.mu.clone();
        for _ in 0..nsub {
            let mut flux = vec![(0.0, 0.0); n + 1];
            for j in 0..=n {
                if e[j] == 0.0 {
                    continue;
                }
                let below = (j > 0).then(|| j - 1);
                let above = Some(j.min(n - 1));
                let (sp, sn) = if e[j] > 0.0 {
                    (below, above)
                } else {
                    (above, below)
                };
                let (np, mp) = sp.map_or((0.0, 0.0), |k| (p[k], mu[k]));
                let (nn, mn) = sn.map_or((0.0, 0.0), |k| (m[k], mu[k]));
                let sigma = ELEMENTARY_CHARGE * (np * mp + nn * mn);
                let x = sigma * h / EPSILON_0;
                let h_eff = if x > 1e-12 {
                    -(-x).exp_m1() * EPSILON_0 / sigma
                } else {
                    h
                };
                flux[j] = (np * mp * e[j] * h_eff, -nn * mn * e[j] * h_eff);
                e[j] -= ELEMENTARY_CHARGE * (flux[j].0 - flux[j].1) / EPSILON_0;
            }
            for k in 0..n {
                p[k] += (flux[k].0 - flux[k + 1].0) / dz;
                m[k] += (flux[k].1 - flux[k + 1].1) / dz;
            }
        }
        bed.run(dz, dt);
        for (got, want) in bed.n_pos.iter().zip(&p).chain(bed.n_neg.iter().zip(&m)) {
            assert!(rel(*got, *want) < 1e-13, "n = {n}: {got} vs {want}");
        }
        for (got, want) in bed.field.iter().zip(&e) {
            assert!(
                (got - want).abs() <= 1e-13 * want.abs().max(1.0),
                "n = {n}: field {got} vs {want}"
            );
        }
    }
}

/// A group of cells with `x` in its first lane and `others` repeated in the
/// rest, so that lane 0 is evaluated beside neighbours of other sizes.
fn lane_zero_among(x: f64, others: &[f64]) -> stormcharge::physics::lanes::Cells {
    use stormcharge::physics::lanes::Lane;
    stormcharge::physics::lanes::Cells::from_lanes(|i| {
        if i == 0 {
            x
        } else {
            others[(i - 1) % others.len()]
        }
    })
}
