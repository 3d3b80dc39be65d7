//! Transport: advection of a top hat and sedimentation at constant speed
//! against their analytic shifts; the updraft function.

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

#[test]
fn constant_speed_sedimentation() {
    // Upwind flux form at constant speed V and density: mass (in the column
    // plus what left through the ground) conserved to round-off, no new
    // extrema, no negatives, and the centre of mass moves by exactly V t
    // (analytic shift; exact for upwind while nothing has reached the ground).
    let (n, dz, v, dt) = (300, 50.0, 5.0, 4.0);
    let speeds = vec![v; n];
    assert_eq!(sedimentation::substeps(&speeds, dz, dt), 1);
    let mut d = top_hat(n, 200, 240, 2.0e-3);
    let mass0: f64 = d.iter().sum::<f64>() * dz;
    let c0 = centroid(&d, dz);
    let mut out = 0.0;
    for _ in 0..200 {
        out += settle(&mut d, &speeds, dz, dt);
    }
    assert_eq!(out, 0.0);
    assert!(((centroid(&d, dz) - c0) + v * dt * 200.0).abs() < 1e-9 * c0);
    for _ in 0..400 {
        out += settle(&mut d, &speeds, dz, dt);
    }
    let mass: f64 = d.iter().sum::<f64>() * dz;
    assert!(out > 0.0);
    assert!((mass + out - mass0).abs() <= 1e-12 * mass0);
    assert!(d
        .iter()
        .all(|&x| (0.0..=2.0e-3 * (1.0 + 1e-12)).contains(&x)));
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
