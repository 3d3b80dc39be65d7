//! Charging against published laboratory results and worked examples:
//! Saunders & Peck (1998), Gardiner et al. (1985), laboratory magnitudes,
//! inductive charge per rebound (Jennings 1975), the Rayleigh limit.

mod common;

use stormcharge::physics::charging::inductive::charge_per_rebound;
use stormcharge::physics::charging::{gardiner_1985, rayleigh_limit, saunders_peck_1998 as sp98};

/// Temperature (degC) where a charge function of temperature changes sign,
/// scanning 0 to -30 degC in 0.01 K steps.
fn reversal(f: impl Fn(f64) -> f64) -> Option<f64> {
    let mut prev = f(-0.5);
    for i in 51..3000 {
        let t = -0.01 * i as f64;
        let q = f(t);
        if q.signum() != prev.signum() && q != 0.0 && prev != 0.0 {
            return Some(t);
        }
        prev = q;
    }
    None
}

#[test]
fn saunders_peck_1998_facts() {
    // SP98 abstract: negative graupel charging at low rime accretion rate as
    // warm as -2 degC; positive above the critical rate.
    assert!(sp98::charge_per_collision(-2.0, 0.3, 100e-6, 3.0) < 0.0);
    assert!(sp98::charge_per_collision(-5.0, 0.5, 100e-6, 3.0) < 0.0);
    assert!(sp98::charge_per_collision(-5.0, 4.0, 100e-6, 3.0) > 0.0);
    assert_eq!(sp98::charge_per_collision(-10.0, 0.05, 100e-6, 3.0), 0.0); // below RAR 0.1
                                                                           // The critical rate: 1 at 0 degC, continuous with the constant 3.4 at
                                                                           // -23.7 degC, never negative (docs/references.md: the polynomial would turn
                                                                           // negative near -33 degC if extrapolated).
    assert!((sp98::critical_rar(0.0) - 1.0).abs() < 1e-12);
    assert!((sp98::critical_rar(-23.69) - 3.4).abs() < 0.05);
    for i in 0..=400 {
        assert!(sp98::critical_rar(-0.1 * i as f64) > 0.0);
    }
    // Both branches are continuous at RAR_c (q -> 0 from both sides).
    let rc = sp98::critical_rar(-12.0);
    assert!(
        sp98::charge_fc(-12.0, rc + 1e-9).abs() < 1e-6
            && sp98::charge_fc(-12.0, rc - 1e-9).abs() < 1e-6
    );
}

#[test]
fn reversal_temperature_for_moderate_liquid_water() {
    // Laboratory facts (Takahashi 1978; Saunders et al. 1991; AMS Glossary,
    // "reversal temperature"): graupel charges positively warmer than the
    // reversal temperature and negatively colder at moderate liquid water, the
    // reversal lying between -10 and -20 degC. SP98 with RAR = LWC x V at
    // 0.5 g m-3 and 3 m/s:
    let t_r = reversal(|t| sp98::charge_per_collision(t, 0.5 * 3.0, 100e-6, 3.0)).unwrap();
    assert!((-20.0..=-10.0).contains(&t_r), "SP98 reversal {t_r}");
    assert!(sp98::charge_per_collision(t_r + 2.0, 1.5, 100e-6, 3.0) > 0.0);
    assert!(sp98::charge_per_collision(t_r - 2.0, 1.5, 100e-6, 3.0) < 0.0);
}

#[test]
fn gardiner_1985_facts() {
    // Sign changes at the configured reversal temperature (f has its root at
    // tau = -21.27, 1.3 % colder than T_r) and at LWC = 0.1 g m-3.
    for t_r in [-10.0, -15.0, -20.0] {
        let t =
            reversal(|t| gardiner_1985::charge_per_collision(t, t_r, 1.0, 100e-6, 3.0)).unwrap();
        assert!((t - t_r).abs() < 0.015 * t_r.abs() + 0.01, "T_r {t_r}: {t}");
        assert!(gardiner_1985::charge_per_collision(t_r + 3.0, t_r, 1.0, 100e-6, 3.0) > 0.0);
        assert!(gardiner_1985::charge_per_collision(t_r + 3.0, t_r, 0.05, 100e-6, 3.0) < 0.0);
    }
    assert_eq!(
        gardiner_1985::charge_per_collision(-8.0, -15.0, 0.1, 100e-6, 3.0),
        0.0
    );
    // Worked example (docs/references.md, "Non-inductive charging"): d = 100 um, dV = 3 m/s,
    // dL = 1 g m-3, tau = -10 gives about 6.8 fC (T_r = -21 makes tau = T).
    let q = gardiner_1985::charge_per_collision(-10.0, -21.0, 1.1, 100e-6, 3.0);
    assert!((q * 1e15 - 6.8).abs() < 0.1, "{q}");
}

#[test]
fn laboratory_magnitudes() {
    // Per-collision charges of 0.1 to some 100 fC over the laboratory ranges
    // (Takahashi 1978; docs/references.md, "Non-inductive charging"): both schemes reach the 0.1 fC
    // scale and stay below a few hundred fC.
    for scheme in ["sp98", "g85"] {
        let mut max: f64 = 0.0;
        for ti in 1..=30 {
            for li in 1..=50 {
                let (t, lwc) = (-(ti as f64), 0.1 * li as f64);
                let q = match scheme {
                    "sp98" => sp98::charge_per_collision(t, lwc * 3.0, 100e-6, 3.0),
                    _ => gardiner_1985::charge_per_collision(t, -15.0, lwc, 100e-6, 3.0),
                };
                max = max.max(q.abs());
            }
        }
        assert!(max > 0.1e-15 && max < 300e-15, "{scheme}: {max}");
    }
}

#[test]
fn inductive_charge_per_rebound_matches_jennings() {
    // Jennings (1975, QJRMS 101): 0.1-0.25 fC per event at 5-15 kV/m; the
    // formula with a 20 um droplet, <cos theta> = 0.2, uncharged collector.
    let q = charge_per_rebound(20e-6, 2e-3, 10e3, 0.2, 0.0);
    assert!((0.1e-15..=0.25e-15).contains(&q), "{q}");
    // A collector already charged positively in an upward field gains less.
    assert!(charge_per_rebound(20e-6, 2e-3, 10e3, 0.2, 1e-12) < q);
}

#[test]
fn rayleigh_limit_check_value() {
    // 6.3809e-10 C for r = 1 mm and gamma = 0.0728 N/m (docs/references.md).
    assert!((rayleigh_limit(1e-3) - 6.3809e-10).abs() < 1e-13);
}

#[test]
fn surface_shared_charge_adds_up_and_grows_with_size() {
    // Sharing the charge density over an exponential size distribution in
    // proportion to surface area (docs/charging.md): integrating
    // q(D) N(D) dD over all sizes returns the charge density (analytic: the
    // second moment of the exponential is 2 N0 / lambda^3), and q grows as
    // D^2.
    use stormcharge::physics::charging::charge_at_diameter;
    use stormcharge::physics::microphysics::dsd;
    let g = dsd::graupel(4.0e6, 400.0);
    let (rho, q, charge) = (0.8, 2e-3, 1e-9);
    let lambda = g.slope(rho, q);
    let n = 200_000;
    let dmax = 60.0 / lambda;
    let h = dmax / n as f64;
    let mut total = 0.0;
    for i in 0..n {
        let d = (i as f64 + 0.5) * h;
        let each = charge_at_diameter(&g, rho, q, charge, d).unwrap();
        total += each * g.n0 * (-lambda * d).exp() * h;
    }
    assert!((total - charge).abs() < 1e-6 * charge, "{total}");
    let (a, b) = (
        charge_at_diameter(&g, rho, q, charge, 1e-3).unwrap(),
        charge_at_diameter(&g, rho, q, charge, 2e-3).unwrap(),
    );
    assert!((b / a - 4.0).abs() < 1e-12);
}

#[test]
fn one_particle_per_cubic_metre_lies_beyond_the_tail_diameter() {
    // The summary takes the 2.5 mm charges where the largest particle per
    // cubic metre (`tail_diameter`) is at least 2.5 mm. Counted by a
    // midpoint sum of N0 e^(-lambda D) from that diameter on, a cubic metre
    // of the demo's graupel holds one particle there (the exponential's
    // tail, derived), and all N0/lambda of them from zero.
    use stormcharge::physics::charging::SharedCharge;
    use stormcharge::physics::initiation::hydrometeor::tail_diameter;
    use stormcharge::physics::microphysics::dsd;
    let g = dsd::graupel(1.26e5, 400.0);
    let (rho, q) = (0.7, 3e-3);
    let s = SharedCharge::of(&g, rho, q, 1e-9).unwrap();
    let count_from = |d0: f64| {
        let n = 200_000;
        let h = (60.0 / s.lambda) / n as f64;
        (0..n)
            .map(|i| s.n0 * (-s.lambda * (d0 + (i as f64 + 0.5) * h)).exp() * h)
            .sum::<f64>()
    };
    let d = tail_diameter(s.n0, s.lambda).unwrap();
    assert!(d > 2.5e-3, "{d}");
    assert!((count_from(d) - 1.0).abs() < 1e-8, "{}", count_from(d));
    let all = s.n0 / s.lambda;
    assert!((count_from(0.0) - all).abs() < 1e-8 * all);
}

#[test]
fn size_speed_factor_never_leaves_its_laboratory_values() {
    // Property over wide inputs (diameters 1 nm to 1 m, speeds 0 to
    // 1000 m/s, NaN-free): the factor B d^a V^b of Saunders, Keith & Mitzeva
    // (1991) is increasing in d and V, so over the laboratory box it lies
    // between its values at the box's corners; outside the box it is held
    // there, never extrapolated.
    use stormcharge::physics::charging::size_speed::{factor, DIAMETER_RANGE, SPEED_RANGE};
    for positive in [true, false] {
        let lo = factor(positive, DIAMETER_RANGE.0, SPEED_RANGE.0);
        let hi = factor(positive, DIAMETER_RANGE.1, SPEED_RANGE.1);
        assert!(lo > 0.0 && hi > lo);
        let mut x: u64 = 0x9e37_79b9_7f4a_7c15;
        for _ in 0..100_000 {
            // A simple linear congruential sequence (Knuth's MMIX constants).
            x = x
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            let u = (x >> 11) as f64 / (1u64 << 53) as f64;
            x = x
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            let w = (x >> 11) as f64 / (1u64 << 53) as f64;
            let d = 10f64.powf(-9.0 + 9.0 * u);
            let v = 1000.0 * w;
            let f = factor(positive, d, v);
            assert!(
                f >= lo * (1.0 - 1e-12) && f <= hi * (1.0 + 1e-12),
                "d {d}, v {v}: {f}"
            );
        }
    }
}

#[test]
fn droplet_collision_efficiency_follows_langmuir_1948_limits() {
    // Langmuir (1948), J. Meteor. 5, 175 (forms read in a secondary source,
    // docs/references.md): no inertial impaction at or below the critical
    // Stokes numbers, 1/12 in potential flow and 1.214 in viscous flow;
    // (K/(K+0.5))^2 in potential flow (large Reynolds number) and
    // [1 + 0.75 ln(2K)/(K - 1.214)]^-2 in viscous flow (small).
    use stormcharge::physics::charging::riming_efficiency::langmuir_1948;
    let mu = 1.8e-5;
    // Collector 1 mm: K = rho_w d^2 V / (9 mu D).
    let (d_coll, v) = (1e-3, 4.0);
    let droplet_for_k = |k: f64| (k * 9.0 * mu * d_coll / (1000.0 * v)).sqrt();
    // Potential flow: a very dense air makes Re/60 huge.
    let dense = 1e6;
    for k in [0.5, 2.0, 10.0, 100.0] {
        let e = langmuir_1948(droplet_for_k(k), d_coll, v, dense, mu);
        let want = (k / (k + 0.5)).powi(2);
        assert!((e - want).abs() < 1e-3, "K = {k}: {e} against {want}");
    }
    // Viscous flow: a very thin air makes Re/60 vanish.
    let thin = 1e-15;
    for k in [2.0, 10.0, 100.0] {
        let e = langmuir_1948(droplet_for_k(k), d_coll, v, thin, mu);
        let want = (1.0 + 0.75 * (2.0 * k).ln() / (k - 1.214)).powi(-2);
        assert!((e - want).abs() < 1e-9, "K = {k}: {e} against {want}");
    }
    // Below the critical numbers nothing is collected.
    assert_eq!(
        langmuir_1948(droplet_for_k(0.08), d_coll, v, dense, mu),
        0.0
    );
    // (In viscous flow the potential-flow part weighs Re/60, here 1e-15.)
    assert!(langmuir_1948(droplet_for_k(1.2), d_coll, v, thin, mu) < 1e-12);
    // Larger droplets are collected more efficiently, never above 1.
    let mut prev = 0.0;
    for i in 1..60 {
        let e = langmuir_1948(i as f64 * 1e-6, 2e-3, 5.0, 0.6, 1.718e-5);
        assert!(e >= prev && e <= 1.0, "{i} um: {e}");
        prev = e;
    }
}
