//! Poisson solvers against analytic fields: slabs between conductors, a
//! uniform charge, Gauss's law, the charged disk, the finite column's
//! planar limit and the image of a compact charge.

mod common;
use common::*;

use stormcharge::grid::Grid;
use stormcharge::physics::constants::EPSILON_0;
use stormcharge::physics::electrostatics::column::{cylinder_axial_field, ColumnSolver};
use stormcharge::physics::electrostatics::planar::{PlanarSolver, Top};
use stormcharge::physics::electrostatics::{column_charge, field_energy};

fn slab(grid: &Grid, lo: f64, hi: f64, rho: f64) -> Vec<f64> {
    grid.z
        .iter()
        .map(|&z| if z > lo && z < hi { rho } else { 0.0 })
        .collect()
}

fn solve_planar(grid: &Grid, top: Top, rho: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let s = PlanarSolver::new(grid, top);
    let mut phi = vec![0.0; grid.len()];
    let mut e = vec![0.0; grid.len() + 1];
    s.solve(rho, &mut phi, &mut e);
    (phi, e)
}

#[test]
fn uniform_slab_between_grounded_conductors() {
    // Gauss's law for an isolated uniform slab (docs/references.md, "Electrostatic
    // oracles"): E = +-rho d/(2 eps0) outside = 56,470.45 V/m for 1 nC m-3 and
    // 1 km; rho z/eps0 inside, 28,235.23 V/m at a quarter thickness from the
    // centre. A slab centred between two grounded plates has exactly these
    // fields by symmetry. Tolerance 1e-6 (the oracle's 7 figures).
    let grid = Grid::uniform(400, 10.0); // 0-4 km, slab 1.5-2.5 km on faces
    let rho = slab(&grid, 1500.0, 2500.0, NC);
    let (_, e) = solve_planar(&grid, Top::Conductor(0.0), &rho);
    assert!(rel(e[100], -56_470.45) < 1e-6, "below: {}", e[100]);
    assert!(rel(e[0], -56_470.45) < 1e-6);
    assert!(rel(e[300], 56_470.45) < 1e-6, "above: {}", e[300]);
    assert!(rel(e[225], 28_235.23) < 1e-6, "quarter: {}", e[225]);
    assert!(rel(e[175], -28_235.23) < 1e-6);
    assert!(e[200].abs() < 1e-6);
}

#[test]
fn uniform_slab_with_field_free_top() {
    // With a field-free top all flux ends on the ground (Gauss's law): below
    // the slab E = -rho d/eps0 = -2 x 56,470.45 V/m, above it zero.
    let grid = Grid::uniform(400, 10.0);
    let rho = slab(&grid, 1500.0, 2500.0, NC);
    let (_, e) = solve_planar(&grid, Top::FieldFree, &rho);
    assert!(rel(e[50], -112_940.9) < 1e-6, "{}", e[50]);
    // Zero to round-off relative to the field scale (potentials of ~1e8 V are differenced).
    assert!(e[300].abs() < 1e-9 * 112_940.9 && e[400] == 0.0);
    // Energy: E linear inside, constant below, so W = eps0/2 E0^2 (1.5 km + 1 km/3).
    let e0 = NC * 1000.0 / EPSILON_0;
    let w = 0.5 * EPSILON_0 * e0 * e0 * (1500.0 + 1000.0 / 3.0);
    assert!(rel(field_energy(&e, grid.dz), w) < 1e-9);
    assert!(rel(column_charge(&rho, grid.dz), 1e-6) < 1e-12);
}

#[test]
fn uniform_charge_between_conductors_is_exact() {
    // phi = rho z (L - z)/(2 eps0) solves d2phi/dz2 = -rho/eps0 with phi = 0 at
    // both ends. The solver is exact for cell-uniform charge (and the
    // three-point Laplacian is exact for quadratics), so the match is to
    // round-off (docs/references.md).
    let l = 1000.0;
    let exact = |z: f64| NC * z * (l - z) / (2.0 * EPSILON_0);
    // The oracle's own values: 14.1176 MV at L/2 and 10.5882 MV at 250 m.
    assert!(rel(exact(500.0), 14.1176e6) < 1e-5 && rel(exact(250.0), 10.5882e6) < 1e-5);
    for n in [10, 37, 200] {
        let grid = Grid::uniform(n, l / n as f64);
        let (phi, e) = solve_planar(&grid, Top::Conductor(0.0), &vec![NC; n]);
        for (k, (&p, &z)) in phi.iter().zip(&grid.z).enumerate() {
            assert!(rel(p, exact(z)) < 1e-12, "n = {n}, k = {k}");
        }
        for (k, &z) in grid.z_face.iter().enumerate() {
            let ez = -NC * (l - 2.0 * z) / (2.0 * EPSILON_0);
            assert!((e[k] - ez).abs() < 1e-9 * 56_470.45, "face {k}");
        }
    }
}

#[test]
fn top_conductor_potential_is_respected() {
    // Charge-free gap between plates at 0 and V: uniform field -V/L (parallel-plate capacitor).
    let grid = Grid::uniform(50, 100.0);
    let (phi, e) = solve_planar(&grid, Top::Conductor(1.0e6), &vec![0.0; 50]);
    for (&p, &z) in phi.iter().zip(&grid.z) {
        assert!(rel(p, 1.0e6 * z / 5000.0) < 1e-12);
    }
    assert!(e.iter().all(|&x| rel(x, -200.0) < 1e-12));
}

#[test]
fn gauss_law_round_trip() {
    // Balloon soundings recover charge as rho = eps0 dE/dz from the field
    // profile (Marshall & Rust 1991, JGR 96). The planar solver's field must
    // give back its input charge this way, cell by cell, to round-off.
    let grid = Grid::uniform(200, 100.0);
    let rho: Vec<f64> = grid
        .z
        .iter()
        .map(|&z| {
            let g = |c: f64, w: f64, a: f64| a * NC * (-((z - c) / w).powi(2)).exp();
            g(10_000.0, 1200.0, 1.0) + g(6500.0, 600.0, -3.0) + g(3000.0, 300.0, 1.5)
        })
        .collect();
    for top in [Top::FieldFree, Top::Conductor(0.0), Top::Conductor(-5.0e7)] {
        let (_, e) = solve_planar(&grid, top, &rho);
        for k in 0..grid.len() {
            let back = EPSILON_0 * (e[k + 1] - e[k]) / grid.dz;
            assert!(
                (back - rho[k]).abs() < 1e-9 * 3.0 * NC,
                "{top:?} cell {k}: {back} vs {}",
                rho[k]
            );
        }
    }
}

#[test]
fn disk_field_on_axis() {
    // Disk of surface charge s = 1 nC m-2, R = 1 km (docs/references.md):
    // 56.470 V/m just above, 16.5398 V/m at 1 km, 1.09662 V/m at 5 km.
    // A cylinder 1 mm thick with rho = s / 1 mm is the disk to 5e-7.
    let d = 1e-3;
    let rho = NC / d;
    let f = |h: f64| rho * cylinder_axial_field(h, -d, 0.0, 1000.0);
    assert!(rel(f(0.0), 56.470) < 1e-5, "{}", f(0.0));
    assert!(rel(f(1000.0), 16.5398) < 1e-5, "{}", f(1000.0));
    assert!(rel(f(5000.0), 1.09662) < 1e-5, "{}", f(5000.0));
    // Antisymmetric below the disk.
    assert!(rel(-f(-1000.0 - d), 16.5398) < 1e-5);
}

#[test]
fn finite_column_tends_to_planar() {
    // As R grows the image-charge column becomes the planar field-free-top
    // solution. For a layer at height h the relative departure of the ground
    // field is h/sqrt(h^2+R^2) < h/R (disk formula), so the largest departure
    // anywhere, relative to the largest planar field, is checked against
    // h_top/R and must shrink with R.
    let grid = Grid::uniform(100, 100.0);
    let rho = slab(&grid, 4000.0, 5000.0, NC);
    let (_, planar) = solve_planar(&grid, Top::FieldFree, &rho);
    let scale = planar.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
    let mut last = f64::INFINITY;
    for r in [1.0e3, 1.0e4, 1.0e5, 1.0e6] {
        let s = ColumnSolver::new(&grid, r);
        let mut phi = vec![0.0; 100];
        let mut e = vec![0.0; 101];
        s.solve(&rho, &mut phi, &mut e);
        let dev = e
            .iter()
            .zip(&planar)
            .fold(0.0_f64, |m, (a, b)| m.max((a - b).abs()))
            / scale;
        assert!(dev < last, "R = {r}: {dev} not below {last}");
        assert!(dev <= 5000.0 / r, "R = {r}: departure {dev}");
        last = dev;
    }
    assert!(last < 5e-3);
}

#[test]
fn ground_image_of_a_compact_charge() {
    // A point charge Q at height h over a conducting plane makes the ground
    // field -Q/(2 pi eps0 h^2) (method of images; docs/references.md: 7190.04 V/m
    // for 10 C at 5 km). A 100 m tall, 50 m radius cell holding 10 C departs
    // from a point charge by terms of order (size/h)^2 ~ 4e-4, hence 1e-3.
    let grid = Grid::uniform(100, 100.0);
    let r = 50.0;
    let mut rho = vec![0.0; 100];
    rho[49] = 10.0 / (std::f64::consts::PI * r * r * grid.dz); // cell 4900-5000 m
    let h = grid.z[49];
    let s = ColumnSolver::new(&grid, r);
    let mut phi = vec![0.0; 100];
    let mut e = vec![0.0; 101];
    s.solve(&rho, &mut phi, &mut e);
    let expect = -10.0 / (2.0 * std::f64::consts::PI * EPSILON_0 * h * h);
    assert!(rel(e[0], expect) < 1e-3, "{} vs {expect}", e[0]);
    assert!(
        rel(
            -10.0 / (2.0 * std::f64::consts::PI * EPSILON_0 * 25.0e6),
            -7190.04
        ) < 1e-5
    );
    // The ground is an equipotential at 0 V: potential tends to 0 toward it.
    assert!(phi[0].abs() < 0.05 * phi[49].abs());
}

#[test]
fn fft_column_solve_equals_the_direct_sum() {
    // On tall grids the finite-column solve is an FFT convolution; it must
    // give the direct superposition of the cells' exact responses to
    // round-off (relative 1e-11 of the largest value), for charge in every
    // cell (conducting air) and for isolated layers.
    for n in [
        stormcharge::physics::electrostatics::column::FFT_FROM,
        777,
        1000,
        1283,
    ] {
        let grid = Grid::uniform(n, 20.0);
        let fft = ColumnSolver::new(&grid, 3000.0);
        let direct = ColumnSolver::new(&grid, 3000.0).direct_only();
        let rho: Vec<f64> = (0..n)
            .map(|k| {
                let z = k as f64 / n as f64;
                1e-9 * ((7.0 * z).sin() + 0.3 * (31.0 * z).cos())
                    + if k == n / 3 { 2e-9 } else { 0.0 }
            })
            .collect();
        let (mut p1, mut e1) = (vec![0.0; n], vec![0.0; n + 1]);
        let (mut p2, mut e2) = (vec![0.0; n], vec![0.0; n + 1]);
        fft.solve(&rho, &mut p1, &mut e1);
        direct.solve(&rho, &mut p2, &mut e2);
        let close = |a: &[f64], b: &[f64]| {
            let big = b.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
            a.iter().zip(b).all(|(x, y)| (x - y).abs() <= 1e-11 * big)
        };
        assert!(close(&p1, &p2) && close(&e1, &e2), "n = {n}");
    }
}

#[test]
fn direct_column_solve_gives_the_same_bits_on_every_instruction_set() {
    // The direct sums run compiled for AVX2 where the processor has it
    // (chosen at run time); without fused multiply-add they must equal the
    // portable build's sums bit for bit, so results do not depend on the
    // machine (common practice for reproducible numerics).
    let n = 200;
    assert!(n < stormcharge::physics::electrostatics::column::FFT_FROM);
    let grid = Grid::uniform(n, 50.0);
    let s = ColumnSolver::new(&grid, 3000.0);
    let rho: Vec<f64> = (0..n)
        .map(|k| 1e-9 * ((0.07 * k as f64).sin() + if k % 17 == 0 { 0.0 } else { 0.1 }))
        .collect();
    let (mut p1, mut e1) = (vec![0.0; n], vec![0.0; n + 1]);
    let (mut p2, mut e2) = (vec![0.0; n], vec![0.0; n + 1]);
    s.solve(&rho, &mut p1, &mut e1);
    s.solve_portable(&rho, &mut p2, &mut e2);
    assert!(p1.iter().any(|x| *x != 0.0));
    for (a, b) in p1.iter().zip(&p2).chain(e1.iter().zip(&e2)) {
        assert_eq!(a.to_bits(), b.to_bits());
    }
}

#[test]
fn field_alone_has_the_bits_of_the_full_solve() {
    // The solve inside a step whose potential nothing reads computes the
    // field alone; it must be the full solve's field bit for bit (the same
    // sums in the same order), by the direct sums (the potential left
    // untouched) and on the FFT route (which fills both), and in the planar
    // geometry. A wiring check of the two paths (common practice).
    use stormcharge::physics::electrostatics::column::FFT_FROM;
    use stormcharge::physics::electrostatics::FieldSolver;
    for n in [160, FFT_FROM + 64] {
        let grid = Grid::uniform(n, 50.0);
        let rho: Vec<f64> = (0..n)
            .map(|k| 1e-9 * ((0.05 * k as f64).cos() + if k % 13 == 0 { 0.0 } else { 0.2 }))
            .collect();
        let solvers = [
            FieldSolver::Column(ColumnSolver::new(&grid, 3000.0)),
            FieldSolver::Planar(PlanarSolver::new(&grid, Top::FieldFree)),
        ];
        for (g, s) in solvers.iter().enumerate() {
            let (mut p1, mut e1) = (vec![0.0; n], vec![0.0; n + 1]);
            let (mut p2, mut e2) = (vec![-7.0; n], vec![0.0; n + 1]);
            s.solve(&rho, &mut p1, &mut e1);
            s.solve_field(&rho, &mut p2, &mut e2);
            assert!(e1.iter().any(|x| *x != 0.0));
            for (a, b) in e1.iter().zip(&e2) {
                assert_eq!(a.to_bits(), b.to_bits(), "n = {n}, solver {g}");
            }
            let direct = g == 0 && n < FFT_FROM;
            if direct {
                assert!(p2.iter().all(|&x| x == -7.0), "potential left as it was");
            } else {
                assert_eq!(p1, p2, "n = {n}, solver {g}");
            }
        }
    }
}

#[test]
fn fft_lengths_have_only_small_prime_factors() {
    // The FFT length is the smallest number >= 2n with prime factors 2, 3
    // and 5 only (5-smooth numbers: 1, 2, 3, 4, 5, 6, 8, 9, 10, 12, 15, 16,
    // ... ; common practice for fast FFT sizes).
    use stormcharge::physics::electrostatics::column::smooth_length;
    let smooth = [
        1, 2, 3, 4, 5, 6, 8, 9, 10, 12, 15, 16, 18, 20, 24, 25, 27, 30,
    ];
    for m in 1..=30 {
        let want = *smooth.iter().find(|&&s| s >= m).unwrap();
        assert_eq!(smooth_length(m), want, "{m}");
    }
    assert_eq!(smooth_length(2 * 1280), 2560);
    assert_eq!(smooth_length(2 * 1283), 2592);
}
