//! The lane type the microphysics, the ions and the transport faces are
//! written over (`physics::lanes`): its arithmetic against the scalar
//! arithmetic, its exp, ln and cube root against the platform's functions,
//! and the grouped passes against their one-at-a-time forms.

mod common;
use common::*;
use stormcharge::physics::lanes::{cbrt_each, exp_each, ln_each, Cells, Lane, Mask, WIDTH};

/// The lane functions against the platform's `f64` functions (correctly
/// rounded or within one unit in the last place: glibc's libm manual,
/// "Errors in Math Functions"; from memory) over their whole ranges:
/// within one unit in the last place of them, so within two of the
/// exact value: a rounding-level difference.
#[test]
fn elementary_functions_within_rounding() {
    let mut uniform = uniform_stream(7);
    let (mut worst_exp, mut worst_ln, mut worst_cbrt) = (0.0f64, 0.0f64, 0.0f64);
    for _ in 0..200_000 {
        let x = [0; WIDTH].map(|_| -708.0 + 1417.0 * uniform());
        let e = exp_each(x);
        let y = [0; WIDTH].map(|_| 10f64.powf(-300.0 + 600.0 * uniform()));
        let (l, c) = (ln_each(y), cbrt_each(y));
        for i in 0..WIDTH {
            worst_exp = worst_exp.max(ulps(e[i], x[i].exp()));
            worst_ln = worst_ln.max(ulps(l[i], y[i].ln()));
            worst_cbrt = worst_cbrt.max(ulps(c[i], y[i].cbrt()));
        }
    }
    // Near 1, where ln is small and its relative error largest.
    for _ in 0..200_000 {
        let y = [0; WIDTH].map(|_| 0.5 + 1.5 * uniform());
        let l = ln_each(y);
        for i in 0..WIDTH {
            worst_ln = worst_ln.max(ulps(l[i], y[i].ln()));
        }
    }
    assert!(
        worst_exp <= 1.0 && worst_ln <= 1.0 && worst_cbrt <= 1.0,
        "exp {worst_exp}, ln {worst_ln}, cbrt {worst_cbrt} ulp"
    );
    // Outside the vector range the group falls back to the platform.
    let edge = exp_each([800.0, -800.0, f64::NAN, 0.0]);
    assert!(edge[0].is_infinite() && edge[1] == 0.0 && edge[2].is_nan() && edge[3] == 1.0);
    let edge = ln_each([0.0, -1.0, 1.0, f64::INFINITY]);
    assert!(edge[0] == f64::NEG_INFINITY && edge[1].is_nan() && edge[2] == 0.0);
    assert_eq!(cbrt_each([0.0, -8.0, 27.0, 1e-310])[..2], [0.0, -2.0]);
}

/// IEEE 754 arithmetic is exact per lane: a group gives the bits of the
/// scalar evaluation (common practice; the premise of this module).
#[test]
fn lanes_give_the_scalar_bits() {
    let (x4, y4) = ([0.3, -1.7e-12, 4.2e5, 7.0], [1.1, 2.5e-3, -0.0, 3.0]);
    // Any group width: the four pairs repeated, the repeats scaled.
    let xs: [f64; WIDTH] = std::array::from_fn(|i| x4[i % 4] * (1 + i / 4) as f64);
    let ys: [f64; WIDTH] = std::array::from_fn(|i| y4[i % 4] * (1 + i / 4) as f64);
    let (a, b) = (Cells(xs), Cells(ys));
    let f = |x: f64, y: f64| ((x * y + 3.0) / (y - x)).max(x.abs().sqrt()) * 0.5;
    let g = |x: Cells, y: Cells| ((x * y + 3.0) / (y - x)).max(x.abs().sqrt()) * 0.5;
    let r = g(a, b);
    for i in 0..WIDTH {
        assert_eq!(r.0[i].to_bits(), f(xs[i], ys[i]).to_bits());
    }
    let m = a.lt(b);
    let s = Cells::select(m, a, b);
    for i in 0..WIDTH {
        assert_eq!(m.get(i), xs[i] < ys[i]);
        assert_eq!(s.0[i], if xs[i] < ys[i] { xs[i] } else { ys[i] });
    }
    assert!(m.any() && !(m & !m).any());
}

/// The non-inductive separation rates of a group of cells side by side against
/// each cell's own evaluation (`charging::separation_rates_of` over `f64`):
/// the same formulas (Saunders & Peck 1998, Gardiner et al. 1985, the
/// collision kernels and Langmuir 1948's efficiency), so the two differ
/// only through the group's exp, ln and cbrt (within one unit in the last
/// place each, test above), amplified by at most |a ln d + b ln V| < 60 in
/// the size/speed factor: within 1e-12 relative, a rounding-level
/// difference. The cap counts must agree exactly. Cells over the whole
/// range the column meets: warm and cold, every mix of species (absent,
/// traces below the smallest present mixing ratio, cloud amounts), crystal
/// numbers from none to 1e8 per kg.
#[test]
fn grouped_charging_matches_each_cell() {
    use stormcharge::physics::charging::{separation_rates_of, CellInputs, Separation};
    let mut uniform = uniform_stream(2024);
    for (scheme, graupel_snow) in [
        ("saunders_peck_1998", true),
        ("gardiner_1985", false),
        ("gardiner_1985", true),
    ] {
        let exp = demo(&[
            &format!("charging.scheme=\"{scheme}\""),
            &format!("charging.graupel_snow={graupel_snow}"),
        ]);
        let (p, f) = (&exp.charging_params, exp.micro_params());
        let mut cells = Vec::new();
        for _ in 0..4003 {
            let rho = 0.3 + 0.9 * uniform();
            let mut q = [5e-3, 2e-3, 4e-3, 1e-3, 2e-3, 5e-3];
            for (s, x) in q.iter_mut().enumerate().skip(1) {
                // Cloud water over two decades (the rime accretion rate
                // of Saunders & Peck needs some), the others over five.
                let decades = if s == 1 { 2.0 } else { 5.0 };
                let u = uniform();
                *x = if u < 0.3 {
                    0.0
                } else if u < 0.4 {
                    1e-16 * uniform()
                } else {
                    *x * 10f64.powf(-decades * uniform())
                };
            }
            let n_ice = if uniform() < 0.1 {
                0.0
            } else {
                10f64.powf(8.0 * uniform())
            };
            cells.push(CellInputs {
                rho,
                t: -45.0 + 50.0 * uniform(),
                q,
                n_ice,
                e_z: 0.0,
                corrections: [1.0, 1.0 + uniform(), 1.0 + uniform()],
            });
        }
        let mut charging = 0;
        for group in cells.chunks(WIDTH) {
            let lanes = |g: &dyn Fn(&CellInputs) -> f64| {
                Cells::from_lanes(|i| g(&group[i.min(group.len() - 1)]))
            };
            let together = CellInputs::<Cells> {
                rho: lanes(&|c| c.rho),
                t: lanes(&|c| c.t),
                q: std::array::from_fn(|s| lanes(&|c| c.q[s])),
                n_ice: lanes(&|c| c.n_ice),
                e_z: lanes(&|c| c.e_z),
                corrections: std::array::from_fn(|s| lanes(&|c| c.corrections[s])),
            };
            let rates = separation_rates_of(p, f, &together);
            for (i, c) in group.iter().enumerate() {
                let alone: Separation<f64> = separation_rates_of(p, f, c);
                let got = rates.lane(i);
                assert_eq!(got.capped, alone.capped, "{scheme}: {c:?}");
                for (x, y) in [
                    (got.graupel_ice, alone.graupel_ice),
                    (got.graupel_snow, alone.graupel_snow),
                    (got.snow_ice, alone.snow_ice),
                ] {
                    assert!(
                        (x - y).abs() <= 1e-12 * y.abs(),
                        "{scheme}: {c:?}: {x:e} in a group against {y:e} alone"
                    );
                    charging += usize::from(y != 0.0);
                }
            }
        }
        // The draw must exercise the charging, not only the zeros.
        assert!(charging > 1000, "{scheme}: only {charging} nonzero rates");
    }
}

/// The column's fall speeds, computed a group of cells side by side, against
/// each cell's own mass-weighted speed (`Exponential::mass_weighted_speed_with`;
/// Heymsfield & Donner 1990 for cloud ice): within 1e-13 relative, a
/// rounding-level difference (the group's exp and ln are within one unit
/// in the last place, amplified by the exponents below one of the fall
/// laws). Zero exactly where a species is absent.
#[test]
fn grouped_fall_speeds_match_each_cell() {
    use stormcharge::column::state::State;
    use stormcharge::column::transport::update_fall_speeds;
    use stormcharge::physics::microphysics::dsd;
    use stormcharge::physics::microphysics::species::Species;
    let exp = demo(&[]);
    let mut state = State::initial(&exp);
    let mut uniform = uniform_stream(99);
    let n = exp.grid.len();
    for sp in Species::FALLING {
        for k in 0..n {
            state.q[sp.index()][k] = if uniform() < 0.3 {
                0.0
            } else {
                1e-2 * 10f64.powf(-8.0 * uniform())
            };
        }
    }
    update_fall_speeds(&exp, &mut state);
    let f = exp.micro_params();
    for (i, sp) in Species::FALLING.iter().enumerate() {
        for (k, (&rho, env)) in exp
            .base
            .centre
            .density
            .iter()
            .zip(&exp.cell_env)
            .enumerate()
        {
            let q = state.q[sp.index()][k];
            let [cr, cs, cg] = env.corrections;
            let alone = match sp {
                Species::Rain => f.rain.mass_weighted_speed_with(rho, q, cr),
                Species::Snow => f.snow.mass_weighted_speed_with(rho, q, cs),
                Species::Graupel => f.graupel.mass_weighted_speed_with(rho, q, cg),
                _ => dsd::ice::speed(rho, q),
            };
            let grouped = state.fall_speed[i][k];
            if q == 0.0 {
                assert_eq!(grouped, 0.0, "{sp:?} at cell {k}");
            }
            assert!(
                (grouped - alone).abs() <= 1e-13 * alone.abs(),
                "{sp:?} at cell {k} (q {q:e}): {grouped} in a group against {alone} alone"
            );
        }
    }
}

/// The monotonised-central limiter of van Leer (1977, J. Comput. Phys. 23,
/// 276), phi(r) = max(0, min(2r, (1+r)/2, 2)), and the limited face value
/// up + (1 - C)/2 phi(r) (down - up), r = (up - far)/(down - up), as
/// docs/transport.md writes them (the upwind value where down = up).
fn limited_face(up: f64, down: f64, far: f64, c: f64) -> f64 {
    let delta = down - up;
    if delta == 0.0 {
        return up;
    }
    let r = (up - far) / delta;
    up + 0.5 * (1.0 - c) * (2.0 * r).min(0.5 * (1.0 + r)).clamp(0.0, 2.0) * delta
}

/// One flux-form advection step over the whole column, each face on its
/// own: the limited face value in the interior, the upwind cell next to the
/// ends, the inflow at an inflow end (docs/transport.md).
fn advect_face_by_face(
    q: &mut [f64],
    m: &[f64],
    rho: &[f64],
    dz: f64,
    dt: f64,
    inflow: (f64, f64),
) -> stormcharge::physics::kinematics::advection::Budget {
    let n = q.len();
    let face = |j: usize| {
        if m[j] >= 0.0 {
            match j {
                0 => inflow.0,
                1 => q[0],
                _ if j == n => q[n - 1],
                _ => limited_face(q[j - 1], q[j], q[j - 2], m[j] * dt / (rho[j - 1] * dz)),
            }
        } else if j == n {
            inflow.1
        } else if j == 0 || j == n - 1 {
            q[j]
        } else {
            limited_face(q[j], q[j - 1], q[j + 1], -m[j] * dt / (rho[j] * dz))
        }
    };
    let faces: Vec<f64> = (0..=n).map(face).collect();
    let mut b = stormcharge::physics::kinematics::advection::Budget {
        bottom: dt * m[0] * faces[0],
        top: dt * m[n] * faces[n],
        lateral: 0.0,
    };
    for k in 0..n {
        b.lateral += dt * q[k] * (m[k + 1] - m[k]);
        let per_flux = dt / (rho[k] * dz);
        q[k] -= per_flux * (m[k + 1] * (faces[k + 1] - q[k]) - m[k] * (faces[k] - q[k]));
    }
    b
}

/// One sedimentation step over the whole column, each face on its own: the
/// limited downward flux through every bottom face, the upwind flux at the
/// ground, nothing through the model top (docs/transport.md).
fn settle_face_by_face(d: &mut [f64], v: &[f64], dz: f64, dt: f64) -> f64 {
    let n = d.len();
    let f: Vec<f64> = (0..n).map(|k| v[k] * d[k]).collect();
    let face = |k: usize| {
        if k == 0 {
            f[0]
        } else {
            let far = if k + 1 < n { f[k + 1] } else { 0.0 };
            limited_face(f[k], f[k - 1], far, v[k] * dt / dz)
        }
    };
    let faces: Vec<f64> = (0..n).map(face).chain([0.0]).collect();
    for k in 0..n {
        d[k] += dt / dz * (faces[k + 1] - faces[k]);
    }
    faces[0] * dt
}

/// Profiles with zero stretches, steps and smooth parts (`case` picks the
/// pattern and, when odd, an empty top of the column).
fn test_profile(n: usize, case: usize, uniform: &mut impl FnMut() -> f64) -> Vec<f64> {
    (0..n)
        .map(|k| {
            if case % 2 == 1 && k + 2 >= n {
                0.0
            } else {
                match (k + case) % 7 {
                    0 | 1 => 0.0,
                    2 => 1e-3,
                    _ => 1e-3 * uniform(),
                }
            }
        })
        .collect()
}

#[test]
fn grouped_advection_gives_the_bits_of_one_face_at_a_time() {
    // The model computes interior faces a group at a time and skips the part
    // of the column where the field is zero; the scheme written face by
    // face over the whole column must give the same bits, for fluxes of
    // both signs (a sign change inside a group of faces), with and
    // without inflow, over column sizes around one and two group widths.
    use stormcharge::physics::kinematics::advection::advect;
    let mut uniform = uniform_stream(12345);
    let (dz, dt) = (50.0, 2.0);
    for n in [
        1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 16, 17, 18, 19, 20, 40, 161,
    ] {
        for case in 0..6 {
            let rho: Vec<f64> = (0..n).map(|k| 1.2 * (-(k as f64) / 80.0).exp()).collect();
            let m: Vec<f64> = (0..=n)
                .map(|_| match case % 3 {
                    0 => 3.0 * uniform(),
                    1 => -3.0 * uniform(),
                    _ => 6.0 * (uniform() - 0.5),
                })
                .collect();
            let q0 = test_profile(n, case, &mut uniform);
            let inflow = if case >= 3 { (2e-3, 5e-4) } else { (0.0, 0.0) };
            let (mut a, mut b) = (q0.clone(), q0.clone());
            let mut faces = vec![f64::NAN; n + 1];
            let grouped = advect(&mut a, &m, &rho, dz, dt, inflow, &mut faces);
            let alone = advect_face_by_face(&mut b, &m, &rho, dz, dt, inflow);
            for (x, y) in a.iter().zip(&b) {
                assert_eq!(x.to_bits(), y.to_bits(), "n {n}, case {case}");
            }
            // The budget where the model steps the whole column (inflow at
            // both ends); elsewhere its sums skip terms that are exact zeros.
            if inflow != (0.0, 0.0) {
                assert_eq!(grouped, alone, "n {n}, case {case}");
            }
        }
    }
}

#[test]
fn grouped_sedimentation_gives_the_bits_of_one_face_at_a_time() {
    // The same for the limited sedimentation flux: speeds that vary from
    // cell to cell, supports ending at the model top or below it.
    use stormcharge::physics::kinematics::sedimentation::settle;
    let mut uniform = uniform_stream(987654321);
    let (dz, dt) = (25.0, 1.0);
    for n in [
        1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 16, 17, 18, 19, 20, 40, 161,
    ] {
        for case in 0..6 {
            let v: Vec<f64> = (0..n).map(|_| 10.0 * uniform()).collect();
            let d0 = test_profile(n, case, &mut uniform);
            let (mut a, mut b) = (d0.clone(), d0.clone());
            let (mut flux, mut faces) = (vec![f64::NAN; n], vec![f64::NAN; n]);
            let out_grouped = settle(&mut a, &v, dz, dt, &mut flux, &mut faces);
            let out_alone = settle_face_by_face(&mut b, &v, dz, dt);
            assert_eq!(
                out_grouped.to_bits(),
                out_alone.to_bits(),
                "n {n}, case {case}"
            );
            for (x, y) in a.iter().zip(&b) {
                assert_eq!(x.to_bits(), y.to_bits(), "n {n}, case {case}");
            }
        }
    }
}

/// The charge that follows the mass (`follow_mass`), moved for a column of
/// cells a group at a time, against [`follow_mass::apply`] one cell at a
/// time: the same bits, since the moves are additions, multiplications,
/// divisions and minima done lane by lane in the same order (common
/// practice: a vectorised form must not change the numbers). The draw
/// covers growth and sublimation (both signs of every transfer), zero
/// transfers, cells that evaporate in either adjustment, freeze or melt at
/// once, and species that vanish; the column length is not a multiple of
/// the group width, so the short last group is exercised too.
#[test]
fn grouped_charge_following_mass_gives_the_bits_of_each_cell() {
    use stormcharge::physics::carriers::Carrier;
    use stormcharge::physics::charging::follow_mass;
    use stormcharge::physics::microphysics::rates::{CellEnv, CellState};
    use stormcharge::physics::microphysics::CellReport;
    let mut uniform = uniform_stream(1953);
    let mut moved = 0;
    for n in [1, 7, 8, 13, 161] {
        let mut cells = Vec::new();
        let mut charge: Vec<Vec<f64>> = vec![Vec::new(); Carrier::COUNT];
        for _ in 0..n {
            let mut report = CellReport {
                q_start: std::array::from_fn(|_| draw(&mut uniform, 5e-3, 0.3)),
                frozen: draw(&mut uniform, 1e-4, 0.8),
                melted: draw(&mut uniform, 1e-4, 0.8),
                ice_before_melt: draw(&mut uniform, 1e-3, 0.5),
                cloud_before_first_adjust: draw(&mut uniform, 2e-3, 0.3),
                cloud_before_adjust: draw(&mut uniform, 2e-3, 0.3),
                ..CellReport::default()
            };
            report.condensed_first = signed(&mut uniform, 1e-3, 0.4, 0.5);
            report.condensed = signed(&mut uniform, 1e-3, 0.4, 0.5);
            let idle = uniform() < 0.2;
            for m in report.transfers.iter_mut() {
                *m = if idle {
                    0.0
                } else {
                    signed(&mut uniform, 2e-3, 0.4, 0.3)
                };
            }
            let q: [f64; 6] = std::array::from_fn(|_| {
                if uniform() < 0.2 {
                    1e-19
                } else {
                    draw(&mut uniform, 5e-3, 0.2)
                }
            });
            cells.push((
                CellState {
                    q,
                    n_ice: 0.0,
                    t: 250.0,
                },
                CellEnv::default(),
                report,
            ));
            for c in charge.iter_mut() {
                c.push(signed(&mut uniform, 1e-9, 0.3, 0.5));
            }
        }
        let mut each = charge.clone();
        for (k, (cell, _, report)) in cells.iter().enumerate() {
            follow_mass::apply(report, &cell.q, &mut each, k);
        }
        follow_mass::apply_column(&cells, &mut charge);
        for (i, (grouped, alone)) in charge.iter().zip(&each).enumerate() {
            for k in 0..n {
                assert_eq!(
                    grouped[k].to_bits(),
                    alone[k].to_bits(),
                    "carrier {i}, cell {k} of {n}: {:e} grouped against {:e} alone",
                    grouped[k],
                    alone[k]
                );
            }
        }
        moved += (0..n)
            .filter(|&k| each[Carrier::Ions.index()][k] != 0.0)
            .count();
    }
    // The draw must move charge, not only copy it.
    assert!(moved > 100, "only {moved} cells moved charge to the ions");
}

/// Zero with probability `zero_share`, else `scale` times a factor spread
/// evenly in its logarithm over four decades below one.
fn draw(uniform: &mut impl FnMut() -> f64, scale: f64, zero_share: f64) -> f64 {
    if uniform() < zero_share {
        0.0
    } else {
        scale * 10f64.powf(-4.0 * uniform())
    }
}

/// [`draw`], negative with probability `negative_share`.
fn signed(
    uniform: &mut impl FnMut() -> f64,
    scale: f64,
    zero_share: f64,
    negative_share: f64,
) -> f64 {
    let x = draw(uniform, scale, zero_share);
    if uniform() < negative_share {
        -x
    } else {
        x
    }
}
