//! The model step allocates no memory: every work array lives in the state
//! or on the stack (DEVELOPERS.md, "Performance"). Counted with a counting
//! global allocator over steps of the demo storm, after the first steps have
//! sized everything that grows; the window ends before the demo's first flash
//! (1550 s), whose record is the one allocation a step may make.

use std::alloc::{GlobalAlloc, Layout, System};
use std::cell::Cell;
use std::path::Path;
use stormcharge::column::state::State;
use stormcharge::physics::microphysics::species::Species;
use stormcharge::setup::experiment::Experiment;

struct Counting;

thread_local! {
    // Per thread, so tests running side by side do not count each other.
    static ALLOCATIONS: Cell<usize> = const { Cell::new(0) };
}

fn count() {
    ALLOCATIONS.with(|c| c.set(c.get() + 1));
}

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        count();
        unsafe { System.alloc(layout) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) }
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        count();
        unsafe { System.realloc(ptr, layout, new_size) }
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

fn allocations_over_steps(overrides: &[&str], warm: u64, counted: u64) -> usize {
    let overrides: Vec<String> = overrides.iter().map(|s| s.to_string()).collect();
    let exp = Experiment::from_text(
        stormcharge::setup::config::DEMO_TOML,
        "demo",
        &overrides,
        Path::new("."),
    )
    .unwrap();
    let mut s = State::initial(&exp);
    let dt = exp.schedule.dt;
    for _ in 0..warm {
        stormcharge::column::step::step(&exp, &mut s, dt).unwrap();
    }
    let before = ALLOCATIONS.with(Cell::get);
    for _ in 0..counted {
        stormcharge::column::step::step(&exp, &mut s, dt).unwrap();
    }
    let allocations = ALLOCATIONS.with(Cell::get) - before;
    assert!(s.ledger.flashes.is_empty(), "a flash fell in the window");
    // The window exercised the mixed-phase physics and the charging.
    let graupel = s.q[Species::Graupel.index()]
        .iter()
        .cloned()
        .fold(0.0, f64::max);
    assert!(graupel > 1e-4, "graupel {graupel}");
    assert!(s.charge_total.iter().any(|&c| c != 0.0));
    allocations
}

#[test]
fn the_demo_step_allocates_nothing() {
    // Steps 50..700 (100..1400 s): cloud, rain, ice, snow and graupel form
    // and charge separates, all through the default integrator.
    assert_eq!(allocations_over_steps(&[], 50, 650), 0);
}

#[test]
fn the_reference_integrator_allocates_and_is_detected() {
    // The ode_solvers reference integrator keeps its own vectors: the same
    // count must see its allocations (so the zero above is a measurement).
    let n = allocations_over_steps(&["microphysics.integrator=\"ode_solvers_dopri5\""], 50, 650);
    assert!(n > 100, "{n} allocations");
}

#[test]
fn the_fft_field_solve_allocates_nothing() {
    // At 25 m the demo column has 640 cells, past the FFT threshold of the
    // finite-column solve: its transforms reuse buffers made with the solver.
    const { assert!(640 >= stormcharge::physics::electrostatics::column::FFT_FROM) };
    assert_eq!(allocations_over_steps(&["grid.spacing=25"], 50, 650), 0);
}

#[test]
fn eddy_diffusion_allocates_nothing() {
    // The factorised diffusion matrix and the field it sweeps are work
    // arrays made with the state.
    assert_eq!(
        allocations_over_steps(&["column.eddy_diffusivity=100"], 50, 650),
        0
    );
}
