//! U.S. Standard Atmosphere 1976 against its tabulated values.

mod common;
use common::*;

use stormcharge::grid::Grid;
use stormcharge::physics::atmosphere::standard_1976::us_standard_1976;
use stormcharge::physics::atmosphere::{BaseSource, BaseState};

/// Geometric height (km), T (K), p (Pa), rho (kg m-3). Source: U.S. Standard
/// Atmosphere 1976 (NOAA/NASA/USAF), values as listed in
/// docs/references.md ("U.S. Standard Atmosphere 1976").
const TABLE: [(f64, f64, f64, f64); 9] = [
    (0.0, 288.150, 101325.0, 1.22500),
    (1.0, 281.651, 89876.3, 1.11166),
    (2.0, 275.154, 79501.4, 1.00655),
    (5.0, 255.676, 54048.3, 0.736428),
    (8.0, 236.215, 35651.6, 0.525786),
    (10.0, 223.252, 26499.9, 0.413510),
    (11.0, 216.774, 22700.0, 0.364802),
    (15.0, 216.650, 12111.8, 0.194755),
    (20.0, 216.650, 5529.3, 0.0889099),
];

#[test]
fn us_standard_1976_table() {
    // Relative tolerance 1e-4 (the table's 5-6 significant figures).
    for (zkm, t, p, rho) in TABLE {
        let s = us_standard_1976(zkm * 1000.0).expect("inside 0-86 km");
        assert!(
            rel(s.temperature, t) < 1e-4,
            "T at {zkm} km: {}",
            s.temperature
        );
        assert!(rel(s.pressure, p) < 1e-4, "p at {zkm} km: {}", s.pressure);
        assert!(rel(s.density, rho) < 1e-4, "rho at {zkm} km: {}", s.density);
    }
}

#[test]
fn upper_layers_are_continuous_and_covered() {
    // The standard's temperature is continuous at every layer base (its
    // definition); check 32, 47, 51, 71 km geopotential by sampling just
    // below and above each base in geometric height.
    for h in [32_000.0, 47_000.0, 51_000.0, 71_000.0_f64] {
        let z = 6_356_766.0 * h / (6_356_766.0 - h); // inverse of H = r0 Z/(r0 + Z)
        let a = us_standard_1976(z - 1e-3).unwrap();
        let b = us_standard_1976(z + 1e-3).unwrap();
        assert!((a.temperature - b.temperature).abs() < 1e-5);
        assert!(rel(a.pressure, b.pressure) < 1e-6);
    }
    // 47-51 km geopotential is the isothermal stratopause at 270.65 K
    // (U.S. Standard Atmosphere 1976, Table 4).
    let z = 6_356_766.0 * 49_000.0 / (6_356_766.0 - 49_000.0);
    assert!((us_standard_1976(z).unwrap().temperature - 270.65).abs() < 1e-9);
    assert!(us_standard_1976(86_001.0).is_none());
}

#[test]
fn base_state_uses_it_on_the_grid() {
    let grid = Grid::uniform(40, 500.0);
    let b = BaseState::build(&grid, &BaseSource::Standard1976).unwrap();
    // Face 22 is at 11 km: table row for 11 km (same source, same tolerance).
    assert!(rel(b.face.pressure[22], 22700.0) < 1e-4);
    assert!(rel(b.face.density[40], 0.0889099) < 1e-4);
    assert!(b.centre.vapour.iter().all(|&r| r == 0.0));
}
