//! Work arrays and per-step diagnostics the column carries between steps:
//! allocated once with the state, so the step allocates nothing.

use crate::physics::charging::CellRates;
use crate::physics::kinematics::{advection, eddy_diffusion};
use crate::physics::microphysics::rates::{CellEnv, CellState};
use crate::physics::microphysics::CellReport;

/// Work arrays, allocated once with the state.
#[derive(Debug, Clone, PartialEq)]
pub struct TransportScratch {
    pub(crate) mass_flux: Vec<f64>,
    pub(crate) faces: Vec<f64>,
    /// The sedimentation's face fluxes.
    pub(crate) fall_faces: Vec<f64>,
    pub(crate) field: Vec<f64>,
    pub(crate) flow: advection::FlowFactors,
    /// exp(-r dt) of the lateral entrainment per cell (1).
    pub(crate) survival: Vec<f64>,
    /// The eddy-diffusion matrix of the step, factorised.
    pub(crate) diffusion: eddy_diffusion::Diffusion,
}

impl TransportScratch {
    pub fn new(n: usize) -> Self {
        TransportScratch {
            mass_flux: vec![0.0; n + 1],
            faces: vec![0.0; n + 1],
            fall_faces: vec![0.0; n + 1],
            field: vec![0.0; n],
            flow: advection::FlowFactors::new(n),
            survival: vec![1.0; n],
            diffusion: eddy_diffusion::Diffusion::new(n),
        }
    }
}

/// Work arrays of the bulk microphysics, with room for every cell
/// (allocated once with the state): each cell's variables, environment and
/// step report between its preparation, the grouped integration and its
/// finish, and the indices of the cells whose rates must be integrated.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct MicroScratch {
    pub(crate) cells: Vec<(CellState, CellEnv, CellReport)>,
    pub(crate) moving: Vec<usize>,
}

impl MicroScratch {
    pub fn new(n: usize) -> Self {
        MicroScratch {
            cells: Vec::with_capacity(n),
            moving: Vec::with_capacity(n),
        }
    }
}

/// Work arrays for flashes, allocated once with the state.
#[derive(Debug, Clone, PartialEq)]
pub struct FlashScratch {
    /// The neutralisation pattern of the current flash (C m-3).
    pub(crate) pattern: Vec<f64>,
    pub(crate) g_phi: Vec<f64>,
    pub(crate) g_e: Vec<f64>,
    pub(crate) phi_before: Vec<f64>,
    pub(crate) rho_before: Vec<f64>,
}

impl FlashScratch {
    pub(crate) fn empty() -> Self {
        FlashScratch {
            pattern: Vec::new(),
            g_phi: Vec::new(),
            g_e: Vec::new(),
            phi_before: Vec::new(),
            rho_before: Vec::new(),
        }
    }

    pub fn new(n: usize) -> Self {
        FlashScratch {
            pattern: vec![0.0; n],
            g_phi: vec![0.0; n],
            g_e: vec![0.0; n + 1],
            phi_before: vec![0.0; n],
            rho_before: vec![0.0; n],
        }
    }
}

/// Charging rates of the last step (C m-3 s-1 at centres; positive when the
/// collector named first gains positive charge).
#[derive(Debug, Clone, PartialEq)]
pub struct ChargingRates {
    pub graupel_ice: Vec<f64>,
    pub graupel_snow: Vec<f64>,
    pub snow_ice: Vec<f64>,
    pub inductive_graupel: Vec<f64>,
    pub inductive_rain: Vec<f64>,
}

impl ChargingRates {
    pub fn new(n: usize) -> Self {
        ChargingRates {
            graupel_ice: vec![0.0; n],
            graupel_snow: vec![0.0; n],
            snow_ice: vec![0.0; n],
            inductive_graupel: vec![0.0; n],
            inductive_rain: vec![0.0; n],
        }
    }

    pub(crate) fn set(&mut self, k: usize, r: CellRates) {
        self.graupel_ice[k] = r.graupel_ice;
        self.graupel_snow[k] = r.graupel_snow;
        self.snow_ice[k] = r.snow_ice;
        self.inductive_graupel[k] = r.inductive_graupel;
        self.inductive_rain[k] = r.inductive_rain;
    }
}
