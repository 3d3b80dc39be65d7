//! The avalanche-multiplication count over a uniform field, where the
//! integral is exact.

mod common;
use common::*;

use stormcharge::physics::breakdown::avalanche::{max_efoldings, AvalancheParams};

#[test]
fn multiplication_over_a_uniform_region() {
    // A uniform field over a region of length L gives exactly L/lambda
    // e-foldings (the integral of dz/lambda with constant lambda).
    let n = 101;
    let z: Vec<f64> = (0..n).map(|k| k as f64 * 10.0).collect();
    let rho = vec![1.225; n];
    let thr = vec![2.84e5; n];
    let p = AvalancheParams::default();
    let mut e = vec![1.0e5; n];
    for v in &mut e[20..=60] {
        *v = 5.0e5; // 400 m stretch
    }
    for v in &mut e[80..=90] {
        *v = -5.0e5; // 100 m stretch, negative field
    }
    let (count, height) = max_efoldings(&e, &z, &rho, &thr, &p);
    let lambda = p.length(5.0e5, 1.225);
    assert!(rel(count, 400.0 / lambda) < 1e-12, "{count}");
    assert_eq!(height, 400.0);
    // No stretch above threshold: no e-foldings.
    let (none, h) = max_efoldings(&vec![1.0e5; n], &z, &rho, &thr, &p);
    assert_eq!(none, 0.0);
    assert!(h.is_nan());
}
