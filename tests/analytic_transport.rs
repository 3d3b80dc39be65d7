//! Transport: advection of a top hat and sedimentation at constant speed
//! against their analytic shifts, sedimentation in sheared fall speeds, a
//! tracer in a steady entraining plume; the updraft function.

use stormcharge::physics::kinematics::advection::{self, advect};
use stormcharge::physics::kinematics::sedimentation::{self, settle};
use stormcharge::physics::kinematics::updraft::{Envelope, Shape, Updraft};

fn top_hat(n: usize, lo: usize, hi: usize, v: f64) -> Vec<f64> {
    (0..n)
        .map(|k| if (lo..hi).contains(&k) { v } else { 0.0 })
        .collect()
}

fn centroid(q: &[f64], dz: f64) -> f64 {
    let m: f64 = q.iter().sum();
    q.iter()
        .enumerate()
        .map(|(k, x)| (k as f64 + 0.5) * dz * x)
        .sum::<f64>()
        / m
}

#[test]
fn top_hat_advection_conserves_and_shifts() {
    // Uniform w and density: the exact solution is the top hat shifted by
    // w t (analytic). Checks: mass conserved to round-off (nothing reaches a
    // boundary), no value outside the initial [0, 1] range (monotone), no
    // negatives, centroid shifted by w t within a tenth of a cell (the limited
    // scheme spreads the edges symmetrically), and the bulk of the mass inside
    // the shifted hat.
    let (n, dz, w, dt) = (400, 50.0, 10.0, 2.0); // Courant 0.4
    let rho = vec![1.0; n];
    let m = vec![w; n + 1];
    let mut q = top_hat(n, 40, 80, 1.0);
    let mut faces = vec![0.0; n + 1];
    assert_eq!(advection::substeps(&m, &rho, dz, dt), 1);
    let mass0: f64 = q.iter().sum::<f64>() * dz;
    let c0 = centroid(&q, dz);
    let steps = 500;
    let mut left = 0.0;
    for _ in 0..steps {
        let b = advect(&mut q, &m, &rho, dz, dt, (0.0, 0.0), &mut faces);
        assert_eq!(b.lateral, 0.0);
        assert_eq!(b.bottom, 0.0);
        left += b.top; // only the far numerical-diffusion tail of the front
    }
    assert!(left < 1e-30 * mass0, "{left}");
    let mass: f64 = q.iter().sum::<f64>() * dz;
    assert!(
        (mass + left - mass0).abs() <= 1e-12 * mass0,
        "{mass} vs {mass0}"
    );
    assert!(
        q.iter().all(|&x| (0.0..=1.0 + 1e-12).contains(&x)),
        "new extremum"
    );
    let shift = w * dt * steps as f64; // 10 km = 200 cells
    assert!(
        (centroid(&q, dz) - c0 - shift).abs() < 0.1 * dz,
        "centroid {}",
        centroid(&q, dz) - c0
    );
    let inside: f64 = q[240..280].iter().sum::<f64>() * dz;
    assert!(inside > 0.9 * mass0, "{inside}");
}

#[test]
fn divergent_flow_keeps_a_uniform_field_and_books_the_sides() {
    // Advective form: a uniform field stays uniform whatever the velocity
    // profile (dq/dt = -w dq/dz = 0), and the column budget closes: the mass
    // change equals inflow - outflow + lateral exchange to round-off.
    let (n, dz, dt) = (100, 100.0, 2.0);
    let rho: Vec<f64> = (0..n)
        .map(|k| 1.2 * (-(k as f64 * dz) / 8000.0).exp())
        .collect();
    let m: Vec<f64> = (0..=n)
        .map(|j| 12.0 * (std::f64::consts::PI * j as f64 / n as f64).sin() + 0.5)
        .collect();
    let mut q = vec![3.0e-3; n];
    let mut faces = vec![0.0; n + 1];
    let mass = |q: &[f64]| q.iter().zip(&rho).map(|(a, r)| a * r * dz).sum::<f64>();
    let m0 = mass(&q);
    let mut total = advection::Budget::default();
    for _ in 0..200 {
        let b = advect(&mut q, &m, &rho, dz, dt, (3.0e-3, 3.0e-3), &mut faces);
        total.add(&b);
    }
    assert!(q.iter().all(|&x| (x - 3.0e-3).abs() < 1e-15));
    assert!((mass(&q) - m0 - total.net()).abs() <= 1e-12 * m0);
    assert!(total.lateral != 0.0);
}

/// 10 %-90 % widths (cells) of the lower and upper edges of a top hat of
/// amplitude `a`.
fn edge_widths(d: &[f64], a: f64) -> (usize, usize) {
    let first = |f: f64| d.iter().position(|&x| x > f * a).unwrap();
    let last = |f: f64| d.iter().rposition(|&x| x > f * a).unwrap();
    (first(0.9) - first(0.1), last(0.1) - last(0.9))
}

#[test]
fn constant_speed_sedimentation() {
    // Limited flux form at constant speed V and density. The exact solution
    // is the top hat shifted down by V t (analytic). Checks: mass (in the
    // column plus what left through the ground) conserved to round-off; no
    // new extrema and no negatives; the centre of mass moves by V t (the
    // limiter's corrections at the two edges cancel; checked to 1e-9 of the
    // distance); and each edge stays sharp: 10 %-90 % within 4 cells, i.e.
    // within two cells either side of the exact front, where first-order
    // upwind smears it over about 2.56 sqrt(2 D t) with D = V dz (1 - C)/2,
    // 18 cells here (diffusion of an upwind scheme: modified-equation
    // analysis, e.g. LeVeque 2002, Finite Volume Methods, sec. 8.6; from
    // memory).
    let (n, dz, v, dt) = (300, 50.0, 5.0, 4.0);
    let speeds = vec![v; n];
    assert_eq!(sedimentation::substeps(&speeds, dz, dt), 1);
    let mut d = top_hat(n, 200, 240, 2.0e-3);
    let (mut flux, mut faces) = (vec![0.0; n], vec![0.0; n]);
    let mass0: f64 = d.iter().sum::<f64>() * dz;
    let c0 = centroid(&d, dz);
    let mut out = 0.0;
    for _ in 0..200 {
        out += settle(&mut d, &speeds, dz, dt, &mut flux, &mut faces);
    }
    assert_eq!(out, 0.0);
    assert!(((centroid(&d, dz) - c0) + v * dt * 200.0).abs() < 1e-9 * v * dt * 200.0);
    let (lower, upper) = edge_widths(&d, 2.0e-3);
    assert!(
        lower <= 4 && upper <= 4,
        "edges {lower} and {upper} cells wide"
    );
    assert!(d
        .iter()
        .all(|&x| (0.0..=2.0e-3 * (1.0 + 1e-12)).contains(&x)));
    for _ in 0..400 {
        out += settle(&mut d, &speeds, dz, dt, &mut flux, &mut faces);
    }
    let mass: f64 = d.iter().sum::<f64>() * dz;
    assert!(out > 0.0);
    assert!((mass + out - mass0).abs() <= 1e-12 * mass0);
    assert!(d
        .iter()
        .all(|&x| (0.0..=2.0e-3 * (1.0 + 1e-12)).contains(&x)));
}

#[test]
fn sheared_fall_speed_stays_positive_and_conserves() {
    // Speeds from 1 to 10 m/s (faster below, so the profile stretches) at
    // the largest Courant number the sub-steps allow: no negative values,
    // and the column plus the ground keep the mass to round-off (flux form;
    // positivity of the limited scheme for C <= 1/2, Sweby 1984).
    let (n, dz, dt) = (200, 100.0, 10.0);
    let speeds: Vec<f64> = (0..n).map(|k| 10.0 - 9.0 * k as f64 / n as f64).collect();
    let nsub = sedimentation::substeps(&speeds, dz, dt);
    assert_eq!(nsub, 2);
    let h = dt / nsub as f64;
    let mut d: Vec<f64> = (0..n)
        .map(|k| {
            if (120..160).contains(&k) {
                1e-3 * (1.0 + (k % 3) as f64)
            } else {
                0.0
            }
        })
        .collect();
    let (mut flux, mut faces) = (vec![0.0; n], vec![0.0; n]);
    let mass0: f64 = d.iter().sum::<f64>() * dz;
    let mut out = 0.0;
    for _ in 0..300 * nsub {
        out += settle(&mut d, &speeds, dz, h, &mut flux, &mut faces);
        assert!(d.iter().all(|&x| x >= 0.0), "negative value");
    }
    let mass: f64 = d.iter().sum::<f64>() * dz;
    assert!(out > 0.0);
    assert!((mass + out - mass0).abs() <= 1e-12 * mass0);
}

#[test]
fn tracer_in_a_steady_entraining_plume() {
    // A steady column with a mass flux growing linearly with height,
    // M = M0 (1 + z/L), and turbulent entrainment epsilon = 0.2/R carries a
    // tracer q0 in from the ground into an environment with q = 0. The
    // entraining-plume tracer equation M dq/dz = -(dM/dz + epsilon M)(q - q_env)
    // (Squires & Turner 1962; Morton, Taylor & Turner 1956) has the steady
    // solution q = q0 (M0/M) exp(-epsilon z) (analytic). The model's
    // advection with the entrainment relaxation reaches it within 1 % at
    // every level (second-order advection at 50 m; first-order splitting
    // of the relaxation at a sub-step of about 8 s).
    use stormcharge::physics::kinematics::entrainment::{relax, survival, Env};
    let (n, dz) = (200, 50.0);
    let (m0, l, eps) = (1.0, 5000.0, 0.2 / 2000.0);
    let rho = vec![1.0; n];
    let m: Vec<f64> = (0..=n).map(|j| m0 * (1.0 + j as f64 * dz / l)).collect();
    let dt = 8.0;
    assert_eq!(advection::substeps(&m, &rho, dz, dt), 1);
    let mut flow = advection::FlowFactors::new(n);
    flow.update(&m, &rho, dz, dt);
    let mut factor = vec![0.0; n];
    survival(&m, &rho, dz, eps, dt, &mut factor);
    let weight = vec![dz; n];
    let mut q = vec![0.0; n];
    let mut faces = vec![0.0; n + 1];
    for _ in 0..4000 {
        advection::advect_with(&mut q, &m, &flow, dt, (1.0, 0.0), &mut faces);
        relax(&mut q, Env::Uniform(0.0), &factor, &weight);
    }
    for (k, &x) in q.iter().enumerate() {
        let z = (k as f64 + 0.5) * dz;
        let exact = m0 / (m0 * (1.0 + z / l)) * (-eps * z).exp();
        assert!((x - exact).abs() <= 0.01 * exact, "z = {z}: {x} vs {exact}");
    }
}

#[test]
fn updraft_shape_and_pulse() {
    // Definitions (docs/microphysics.md): half sine between bottom and top,
    // sin^2 rise, plateau, cos^2 decay.
    let u = Updraft {
        shape: Shape::Sine {
            bottom: 1000.0,
            top: 11000.0,
        },
        envelope: Envelope::Pulse {
            start: 100.0,
            growth: 600.0,
            mature: 1200.0,
            decay: 600.0,
        },
        peak: 15.0,
        background: -0.2,
    };
    assert_eq!(u.w(6000.0, 1000.0), 15.0 - 0.2);
    assert_eq!(u.w(500.0, 1000.0), -0.2);
    assert!(
        (u.w(3500.0, 1000.0) - (15.0 * (std::f64::consts::PI / 4.0).sin() - 0.2)).abs() < 1e-12
    );
    assert!((u.w(6000.0, 400.0) - (15.0 * 0.5 - 0.2)).abs() < 1e-12); // half way up: sin^2(pi/4)
    assert!((u.w(6000.0, 2200.0) - (15.0 * 0.5 - 0.2)).abs() < 1e-12); // half way down
    assert_eq!(u.w(6000.0, 50.0), -0.2);
    assert_eq!(u.w(6000.0, 3000.0), -0.2);
}

#[test]
fn eddy_diffusion_spreads_a_tracer_at_the_rate_k_theory_gives() {
    // Uniform density and diffusivity K, no flux through the ends: the
    // heat equation d(x)/dt = K d2x/dz2 conserves the tracer and grows its
    // variance about the centre of mass by exactly 2 K t (analytic: the
    // second moment of the diffusion equation, e.g. Crank 1975, The
    // Mathematics of Diffusion, ch. 2, from memory). The flux form with
    // backward Euler keeps both exactly, step by step, while the tracer
    // stays away from the ends (summation by parts of the discrete
    // fluxes: derived), and a non-negative field stays non-negative
    // (M-matrix). A field equal to its environment profile does not change.
    use stormcharge::physics::kinematics::eddy_diffusion::Diffusion;
    let (n, dz, k, dt) = (400, 50.0, 100.0, 20.0);
    let rho = vec![1.0; n];
    let rho_face = vec![1.0; n + 1];
    let mut d = Diffusion::new(n);
    d.factorise(k, &rho, &rho_face, dz, dt);
    let mut x = top_hat(n, 190, 210, 1.0);
    let moments = |x: &[f64]| {
        let m: f64 = x.iter().sum();
        let c = centroid(x, dz);
        let var = x
            .iter()
            .enumerate()
            .map(|(i, v)| ((i as f64 + 0.5) * dz - c).powi(2) * v)
            .sum::<f64>()
            / m;
        (m, c, var)
    };
    let (m0, c0, v0) = moments(&x);
    let steps = 200;
    for _ in 0..steps {
        d.apply(&mut x, None);
        assert!(x.iter().all(|&v| v >= 0.0), "negative value");
    }
    let (m, c, v) = moments(&x);
    assert!((m - m0).abs() <= 1e-12 * m0);
    assert!((c - c0).abs() <= 1e-9 * dz);
    let expected = 2.0 * k * dt * steps as f64;
    assert!(
        ((v - v0) - expected).abs() <= 1e-6 * expected,
        "variance grew by {} against {expected}",
        v - v0
    );
    // The environment's own profile is a fixed point.
    let env: Vec<f64> = (0..n).map(|i| 300.0 + 0.004 * i as f64 * dz).collect();
    let mut theta = env.clone();
    d.apply(&mut theta, Some(&env));
    assert_eq!(theta, env);
}
