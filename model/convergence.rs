//! Convergence of an experiment under refinement: the configuration is run
//! at its own time step and grid spacing and at successive halvings of each
//! (the time series at the configured spacing, the space series at the
//! configured step), side by side on a thread pool. For every key outcome
//! the report gives the values, the observed order of convergence, the
//! Richardson-extrapolated value and the relative error of the configured
//! settings; for the charge-density and field profiles it gives the relative
//! L1 differences between successive levels and their observed order.
//!
//! Method (Richardson 1911; Roache 1998, Verification and Validation in
//! Computational Science and Engineering, ch. 5, as the grid-convergence
//! procedure; from memory): with three levels f1, f2, f3 at steps h, h/2,
//! h/4 and f(h) = f* + C h^p, the observed order is
//! p = log2((f1 - f2)/(f2 - f3)) and the extrapolate f* = f3 - (f2 - f3)/(2^p - 1).
//! With more levels the three finest are used. Differences of opposite sign
//! (no monotone convergence) give no order and no extrapolate: the finest
//! value stands in and the row says so. Profiles of a finer grid are
//! compared on the coarser one: cell averages of charge density (two fine
//! cells per coarse cell), the field on the coinciding faces.

use crate::analysis::{regions, PeakSeparation, Region};
use crate::column::state::State;
use crate::error::RunError;
use crate::output::summary::RunSummary;
use crate::output::Observer;
use crate::physics::carriers::Carrier;
use crate::physics::microphysics::species::Species;
use crate::setup::config::ConfigText;
use crate::setup::experiment::Experiment;
use std::path::Path;

/// Which resolution a series refines.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Refinement {
    /// Halvings of `time.step` at the configured spacing.
    Time,
    /// Halvings of `grid.spacing` at the configured step.
    Space,
}

impl Refinement {
    /// Both refinements, in the order the report gives them.
    pub const BOTH: [Refinement; 2] = [Refinement::Time, Refinement::Space];
}

/// The bottom and top (m) of the layer whose mean warming over the base
/// state is reported (the issue tracker's bound is on this layer).
const WARMING_LAYER: (f64, f64) = (5000.0, 10000.0);

/// One run of a series.
#[derive(Debug, Clone)]
pub(crate) struct LevelRun {
    dt: f64,
    dz: f64,
    outcomes: Vec<(String, &'static str, f64)>,
    charge: Vec<Vec<f64>>,
    field: Vec<Vec<f64>>,
    /// Per record, the content (kg m-3) of each species of [`CONTENTS`] and
    /// the crystal number concentration (m-3); empty without bulk
    /// microphysics.
    contents: Vec<[Vec<f64>; CONTENTS.len() + 1]>,
    /// Per record, the charge density (C m-3) of every carrier, in
    /// `Carrier::ALL` order.
    carriers: Vec<Vec<Vec<f64>>>,
    /// Records up to the last one before the first flash (all of them in a
    /// run without flashes).
    pre_flash_records: usize,
    /// Charge density and field just before each flash.
    before_flash: Vec<(Vec<f64>, Vec<f64>)>,
    /// Structure class at the largest charge separation (the sweep
    /// summary's `structure_at_peak_separation`).
    pub(crate) structure: crate::analysis::Structure,
    /// Flashes by kind: intracloud, negative and positive ground.
    pub(crate) flash_counts: [u64; 3],
    /// The class most records of the flashing stage show (`None` without
    /// flashes; the sweep summary's `structure_while_flashing`).
    pub(crate) structure_while_flashing: Option<crate::analysis::Structure>,
}

/// The hydrometeors whose content profiles `converge` compares, with the
/// row names; the crystal number follows them.
const CONTENTS: [(Species, &str); 5] = [
    (Species::Cloud, "cloud water content"),
    (Species::Rain, "rain water content"),
    (Species::Ice, "cloud ice content"),
    (Species::Snow, "snow content"),
    (Species::Graupel, "graupel content"),
];

/// Row name of the crystal number concentration profile.
const CRYSTALS: &str = "crystal number concentration";

/// One row of a report: an outcome across the levels of a series.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Row {
    pub name: String,
    pub unit: String,
    /// Values from the configured setting to the finest.
    pub values: Vec<f64>,
    /// Observed order (NaN when the differences do not shrink monotonically;
    /// infinite when the finest levels agree exactly).
    pub order: f64,
    /// Richardson extrapolate (the finest value when there is no order).
    pub extrapolated: f64,
    /// |configured value - extrapolate| / |extrapolate|.
    pub error_of_configured: f64,
}

/// One refinement series.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Series {
    pub refinement: Refinement,
    /// Time steps (s) and spacings (m) of the levels.
    pub steps: Vec<f64>,
    pub spacings: Vec<f64>,
    pub outcomes: Vec<Row>,
    /// Relative L1 differences between successive levels of the charge
    /// density and of the field, their observed order and the estimated
    /// relative error of the configured level.
    pub profiles: Vec<ProfileRow>,
    /// The structure class at the largest separation and that of the
    /// flashing stage at each level: a class that changes from one level
    /// to the next is the numerics', not the storm's.
    pub classes: Vec<ClassRow>,
}

/// A structure class at each level.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ClassRow {
    pub name: String,
    /// The class name at each level ([`crate::analysis::NO_FLASHES`] for a
    /// flashing stage without flashes).
    pub values: Vec<String>,
}

impl ClassRow {
    /// Whether every level gives the same class.
    pub fn converged(&self) -> bool {
        self.values.windows(2).all(|w| w[0] == w[1])
    }
}

/// Relative L1 differences of a profile between successive levels.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ProfileRow {
    pub name: String,
    /// d_i = |a_i - a_(i+1)|_1 / |a_(i+1)|_1 over every record, i from the
    /// configured level.
    pub differences: Vec<f64>,
    /// log2 of the ratio of the last two differences.
    pub order: f64,
    /// log2 of the ratio of each pair of successive differences, coarse to
    /// fine (NaN where a difference is zero or they grow): with more than
    /// three levels, how the order moves from halving to halving. A
    /// first-order scheme scatters about 1 where the model's equations are
    /// not smooth (docs/numerics.md, "Six levels instead of three").
    pub orders: Vec<f64>,
    /// d_0 / (1 - 2^-p): the configured level's error when the differences
    /// are in the asymptotic range.
    pub error_of_configured: f64,
}

/// The whole report.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Report {
    pub origin: String,
    pub levels: usize,
    pub series: Vec<Series>,
}

/// Collects what the outcomes need while a run goes on.
#[derive(Default)]
struct Collector {
    charge: Vec<Vec<f64>>,
    field: Vec<Vec<f64>>,
    contents: Vec<[Vec<f64>; CONTENTS.len() + 1]>,
    carriers: Vec<Vec<Vec<f64>>>,
    peak: PeakSeparation,
    max_q: [f64; 6],
    max_rain_content: f64,
    max_warming: f64,
    summary: Option<RunSummary>,
    /// Flashes seen so far (the ledger hands them on at each record):
    /// their summed charge neutralised (C m-2), count, and the first.
    flash_charge: f64,
    flashes: usize,
    first_flash: Option<crate::physics::discharge::record::FlashRecord>,
    /// Time (s) and charge regions of the last record before the first
    /// flash: a structure at a fixed time while first-flash times agree.
    pre_flash_time: f64,
    pre_flash_regions: Vec<Region>,
    pre_flash_records: usize,
    /// Sums over the records from the first flash on of the main negative,
    /// upper positive and lower positive regions' charge, height and
    /// temperature, with the number of records holding each region
    /// (`flashing`), and those sums at the last record that saw a new flash
    /// (`flashing_stage`): the mean structure of the flashing stage.
    flashing: [[f64; 4]; 3],
    flashing_stage: [[f64; 4]; 3],
    /// The charge density and field of the last state the time loop
    /// showed (`stepped`), the flashes booked when it was shown, and a
    /// copy of that state for every flash that followed it: the state
    /// just before each flash (the time loop shows it before a flash
    /// starts), which is a continuous function of the step while the flash
    /// times move with it.
    last_charge: Vec<f64>,
    last_field: Vec<f64>,
    flashes_shown: usize,
    before_flash: Vec<(Vec<f64>, Vec<f64>)>,
    /// Each record's time and structure class, and the times of the first
    /// flash and of the last one seen at a record: the flashing stage's
    /// majority class, taken as a sweep member takes it.
    classes: Vec<(f64, crate::analysis::Structure)>,
    flash_span: Option<(f64, f64)>,
}

impl Collector {
    /// Books the flashes the ledger holds beyond those already booked.
    fn book_flashes(&mut self, state: &State) {
        for f in state.ledger.unseen(self.flashes) {
            self.flash_charge += f.charge_neutralized;
            self.flashes += 1;
            self.first_flash.get_or_insert(*f);
        }
    }
}

impl Observer for Collector {
    fn begin(&mut self, _: &Experiment) -> Result<(), RunError> {
        self.max_warming = f64::NEG_INFINITY;
        Ok(())
    }

    fn record(&mut self, exp: &Experiment, state: &State) -> Result<(), RunError> {
        let flashes_before = self.flashes;
        self.book_flashes(state);
        crate::analysis::extend_flash_span(&mut self.flash_span, &state.ledger.flashes);
        self.charge.push(state.charge_total.clone());
        self.carriers.push(state.charge.clone());
        self.field.push(state.field.clone());
        if exp.microphysics == crate::physics::microphysics::Mode::Bulk {
            // Contents per volume, so that a finer grid's cell pairs average
            // to the coarse cell exactly.
            let rho = &exp.base.centre.density;
            let per_volume =
                |x: &[f64]| -> Vec<f64> { x.iter().zip(rho).map(|(a, r)| a * r).collect() };
            self.contents.push(std::array::from_fn(|i| {
                if i < CONTENTS.len() {
                    per_volume(&state.q[CONTENTS[i].0.index()])
                } else {
                    per_volume(&state.n_ice)
                }
            }));
        }
        let t = state.temperatures(exp);
        // The record's regions: the sets below need them at some record
        // (before the first flash and at every record of the flashing
        // stage); the largest separation is watched every step (`stepped`).
        let pre_flash = self.flashes == 0;
        let regs = regions(&exp.grid.z, exp.grid.dz, &state.charge_total, &t, 0.1);
        self.classes
            .push((state.time, crate::analysis::classify(&regs)));
        if !pre_flash {
            // Each region's sums stay in its own slot; an absent region adds
            // nothing to its slot.
            let stage = crate::analysis::tripole_regions(&regs);
            for (sum, r) in self.flashing.iter_mut().zip(stage) {
                let Some(r) = r else { continue };
                for (x, v) in sum.iter_mut().zip([r.charge, r.height, r.temperature, 1.0]) {
                    *x += v;
                }
            }
            if self.flashes > flashes_before {
                self.flashing_stage = self.flashing;
            }
        }
        if pre_flash {
            self.pre_flash_records = self.charge.len();
            self.pre_flash_time = state.time;
            self.pre_flash_regions = regs;
        }
        for sp in Species::HYDROMETEORS {
            let m = state.q[sp.index()].iter().fold(0.0_f64, |a, &b| a.max(b));
            self.max_q[sp.index()] = self.max_q[sp.index()].max(m);
        }
        let rho = &exp.base.centre.density;
        for (k, q) in state.q[Species::Rain.index()].iter().enumerate() {
            self.max_rain_content = self.max_rain_content.max(rho[k] * q);
        }
        let (lo, hi) = WARMING_LAYER;
        let (mut sum, mut n) = (0.0, 0);
        for (k, &z) in exp.grid.z.iter().enumerate() {
            if (lo..=hi).contains(&z) {
                sum += t[k] - exp.base.centre.temperature[k];
                n += 1;
            }
        }
        if n > 0 {
            self.max_warming = self.max_warming.max(sum / n as f64);
        }
        Ok(())
    }

    fn stepped(&mut self, exp: &Experiment, state: &State) {
        self.peak.watch(exp, state);
        let total = state.ledger.total;
        if !self.last_charge.is_empty() {
            for _ in self.flashes_shown..total {
                self.before_flash
                    .push((self.last_charge.clone(), self.last_field.clone()));
            }
        }
        self.flashes_shown = total;
        self.last_charge.clear();
        self.last_charge.extend_from_slice(&state.charge_total);
        self.last_field.clear();
        self.last_field.extend_from_slice(&state.field);
    }

    fn finish(&mut self, _: &Experiment, state: &State, s: &RunSummary) -> Result<(), RunError> {
        // Flashes after the last record are still in the ledger.
        self.book_flashes(state);
        self.summary = Some(s.clone());
        Ok(())
    }
}

/// The outcomes of a finished run, in report order.
fn outcomes(exp: &Experiment, c: &Collector) -> Vec<(String, &'static str, f64)> {
    let s = c.summary.as_ref().expect("the run finished");
    let mut out: Vec<(String, &'static str, f64)> = vec![
        (PEAK_FIELD.into(), "kV m-1", s.peak_field.0 / 1e3),
        ("intracloud flashes".into(), "1", s.flash_counts[0] as f64),
        (
            "negative ground flashes".into(),
            "1",
            s.flash_counts[1] as f64,
        ),
        (
            "positive ground flashes".into(),
            "1",
            s.flash_counts[2] as f64,
        ),
        ("first flash".into(), "s", s.first_flash.unwrap_or(f64::NAN)),
        ("surface precipitation".into(), "mm", s.precipitation),
        (
            "peak surface rain rate".into(),
            "mm h-1",
            s.peak_precip_rate * 3600.0,
        ),
        (
            "largest rain water content".into(),
            "g m-3",
            c.max_rain_content * 1e3,
        ),
    ];
    for sp in Species::HYDROMETEORS {
        out.push((
            format!("largest q_{}", sp.name()),
            "g kg-1",
            c.max_q[sp.index()] * 1e3,
        ));
    }
    out.push((
        "largest charge on a 2.5 mm drop".into(),
        "pC",
        s.max_charge_2p5mm[0] * 1e12,
    ));
    out.push((
        "largest charge on 2.5 mm graupel".into(),
        "pC",
        s.max_charge_2p5mm[1] * 1e12,
    ));
    out.push((
        "largest warming of the 5-10 km layer".into(),
        "K",
        if c.max_warming.is_finite() {
            c.max_warming
        } else {
            f64::NAN
        },
    ));
    // The flashes' own outcomes: well posed in a flashing storm, where the
    // regions at the largest separation (below) are an argmax over the
    // flash sawtooth (docs/numerics.md).
    // Charges in C over the column's cross-section, per m2 in the planar
    // geometry.
    let (charge_unit, scale) = match exp.field_solver.column_area() {
        Some(a) => ("C", a),
        None => ("C m-2", 1.0),
    };
    let first = |f: fn(&crate::physics::discharge::record::FlashRecord) -> f64| {
        c.first_flash.as_ref().map_or(f64::NAN, f)
    };
    out.push((
        "mean charge per flash".into(),
        charge_unit,
        if c.flashes > 0 {
            c.flash_charge / c.flashes as f64 * scale
        } else {
            f64::NAN
        },
    ));
    out.push((
        "first flash initiation height".into(),
        "km",
        first(|f| f.z_init / 1e3),
    ));
    out.push((
        "first flash channel bottom".into(),
        "km",
        first(|f| f.z_bottom / 1e3),
    ));
    out.push((
        "first flash channel top".into(),
        "km",
        first(|f| f.z_top / 1e3),
    ));
    // The structure at the last record before the first flash: a fixed
    // time at every level as long as the first flashes fall between the
    // same two records (the record's time is reported beside it), so it
    // stays well posed in a flashing storm. Not defined without flashes.
    let flashed = c.flashes > 0;
    out.push((
        PRE_FLASH_RECORD.into(),
        "s",
        if flashed { c.pre_flash_time } else { f64::NAN },
    ));
    let pre: &[Region] = if flashed { &c.pre_flash_regions } else { &[] };
    push_regions(&mut out, pre, "pre-flash ", charge_unit, scale, false);
    // The largest charge separation, its time and the charge regions there
    // (watched every step): the main negative region, the largest positive
    // region above it and the largest below it (the three regions of a
    // normal tripole).
    out.push((
        "largest charge separation".into(),
        charge_unit,
        c.peak.separation * scale,
    ));
    out.push((LARGEST_SEPARATION_TIME.into(), "s", c.peak.time));
    push_regions(&mut out, &c.peak.regions(exp), "", charge_unit, scale, true);
    // Their means over the flashing stage (the records from the first
    // flash to the one after the last), each over the records that hold
    // it: in a flashing storm every tooth of the sawtooth reaches about the
    // trigger, so the record of largest separation is a near tie between
    // teeth, while the mean structure of the stage is well posed.
    push_mean_regions(&mut out, &c.flashing_stage, charge_unit, scale);
    out
}

/// The flashing stage's mean main negative, upper positive and lower
/// positive regions (sums and counts from [`Collector`]) as outcomes.
fn push_mean_regions(
    out: &mut Vec<(String, &'static str, f64)>,
    sums: &[[f64; 4]; 3],
    charge_unit: &'static str,
    scale: f64,
) {
    for (label, sum) in ["main negative", "upper positive", "lower positive"]
        .iter()
        .zip(sums)
    {
        let mean = |i: usize| {
            if sum[3] > 0.0 {
                sum[i] / sum[3]
            } else {
                f64::NAN
            }
        };
        out.push((
            format!("flashing-stage {label} region charge"),
            charge_unit,
            mean(0) * scale,
        ));
        out.push((
            format!("flashing-stage {label} region height"),
            "km",
            mean(1) / 1e3,
        ));
        out.push((
            format!("flashing-stage {label} region temperature"),
            "degC",
            mean(2),
        ));
    }
}

/// The main negative, upper positive and lower positive regions of
/// `regions` as outcomes: charge and height, and with `temperature` the
/// temperature; names start with `prefix`.
fn push_regions(
    out: &mut Vec<(String, &'static str, f64)>,
    regions: &[Region],
    prefix: &str,
    charge_unit: &'static str,
    scale: f64,
    temperature: bool,
) {
    let [neg, upper, lower] = crate::analysis::tripole_regions(regions);
    for (label, region) in [
        ("main negative", neg),
        ("upper positive", upper),
        ("lower positive", lower),
    ] {
        let g = |f: fn(&Region) -> f64| region.as_ref().map_or(f64::NAN, f);
        out.push((
            format!("{prefix}{label} region charge"),
            charge_unit,
            g(|x| x.charge) * scale,
        ));
        out.push((
            format!("{prefix}{label} region height"),
            "km",
            g(|x| x.height) / 1e3,
        ));
        if temperature {
            out.push((
                format!("{prefix}{label} region temperature"),
                "degC",
                g(|x| x.temperature),
            ));
        }
    }
}

/// `overrides` plus the step (or spacing) of refinement `level`: the
/// configured `dt` (or `dz`) halved `level` times. The sweep's per-member
/// error estimate uses the same levels.
pub fn level_overrides(
    overrides: &[String],
    dt: f64,
    dz: f64,
    refinement: Refinement,
    level: usize,
) -> Vec<String> {
    let f = 0.5_f64.powi(level as i32);
    let mut o = overrides.to_vec();
    match refinement {
        Refinement::Time => o.push(format!("time.step={:?}", dt * f)),
        Refinement::Space => o.push(format!("grid.spacing={:?}", dz * f)),
    }
    o
}

/// Names of the two outcomes the sweep's per-member error estimate reads.
pub(crate) const PEAK_FIELD: &str = "peak |E_z|";
pub(crate) const MAIN_NEGATIVE_CHARGE: &str = "main negative region charge";
/// Name of the outcome that gives the time of the largest separation.
const LARGEST_SEPARATION_TIME: &str = "time of the largest separation";
/// The outcome that holds the time of the last record before the first
/// flash (not a number in a run without flashes).
const PRE_FLASH_RECORD: &str = "pre-flash record";

/// Row names of the charge-density and field profiles just before each
/// flash.
const BEFORE_EACH_FLASH: [&str; 2] = [
    "charge density, before each flash",
    "vertical field, before each flash",
];

impl LevelRun {
    /// The value of the outcome called `name` (NaN if there is none).
    pub(crate) fn outcome(&self, name: &str) -> f64 {
        self.outcomes
            .iter()
            .find(|(n, _, _)| n == name)
            .map_or(f64::NAN, |o| o.2)
    }
}

/// Runs the experiment of `text` with `overrides` and collects outcomes.
pub(crate) fn run_level(
    text: &ConfigText,
    origin: &str,
    base_dir: &Path,
    overrides: &[String],
) -> Result<LevelRun, RunError> {
    let exp = Experiment::from_config_text(text, origin, overrides, base_dir)?;
    let mut c = Collector::default();
    let mut obs: [&mut dyn Observer; 1] = [&mut c];
    crate::timeloop::run(&exp, &mut obs, &mut |_| {})?;
    Ok(LevelRun {
        dt: exp.schedule.dt,
        dz: exp.grid.dz,
        outcomes: outcomes(&exp, &c),
        charge: std::mem::take(&mut c.charge),
        field: std::mem::take(&mut c.field),
        contents: std::mem::take(&mut c.contents),
        carriers: std::mem::take(&mut c.carriers),
        pre_flash_records: c.pre_flash_records,
        before_flash: std::mem::take(&mut c.before_flash),
        structure: crate::analysis::classify(&c.peak.regions(&exp)),
        flash_counts: c.summary.as_ref().map_or([0; 3], |s| s.flash_counts),
        structure_while_flashing: crate::analysis::majority_class(&c.classes, c.flash_span)
            .map(|m| m.0),
    })
}

/// Smallest observed order that is extrapolated (below it the finest value
/// stands: the levels are not in the asymptotic range).
pub const MIN_EXTRAPOLATED_ORDER: f64 = 0.5;

/// Outcome values (in their report units) below this are rounding noise.
const ROUNDING_ZERO: f64 = 1e-13;

/// Order, extrapolate and error of the configured value from values ordered
/// coarse to fine (at least three). Also the sweep's per-member estimate
/// (`sweep.error_estimate`).
pub fn richardson(values: &[f64]) -> (f64, f64, f64) {
    let n = values.len();
    let (a, b, c) = (values[n - 3], values[n - 2], values[n - 1]);
    let first = values[0];
    let rel = |x: f64, y: f64| {
        if x == y {
            0.0
        } else {
            (x - y).abs() / y.abs()
        }
    };
    if values.iter().any(|v| !v.is_finite()) {
        return (f64::NAN, f64::NAN, f64::NAN);
    }
    // Values that agree to rounding (or are all rounding-level zeros, such
    // as the warming of a column whose air does not move) are converged.
    let big = values.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    let spread = values.iter().fold(0.0_f64, |m, v| m.max((v - c).abs()));
    if big < ROUNDING_ZERO || spread <= 1e-12 * big {
        return (f64::INFINITY, c, 0.0);
    }
    let (d1, d2) = (a - b, b - c);
    if d1 == 0.0 && d2 == 0.0 {
        return (f64::INFINITY, c, rel(first, c));
    }
    if d2 == 0.0 || d1 / d2 <= 0.0 {
        return (f64::NAN, c, rel(first, c));
    }
    let p = (d1 / d2).log2();
    // Below order 0.5 the differences hardly shrink: the levels are not in
    // the asymptotic range, and d2 / (2^p - 1) would extrapolate to values
    // far outside them (order 1e-4 gave an "error" of 63 % for values that
    // agreed to 0.02 %). The finest value then stands, and the printed order
    // tells the user why.
    let ext = if p >= MIN_EXTRAPOLATED_ORDER {
        c - d2 / (p.exp2() - 1.0)
    } else {
        c
    };
    (p, ext, rel(first, ext))
}

/// A finer profile on the next coarser grid: cell averages (centres) or the
/// coinciding faces.
fn restrict(fine: &[f64], faces: bool) -> Vec<f64> {
    if faces {
        fine.iter().step_by(2).copied().collect()
    } else {
        fine.chunks(2).map(|p| 0.5 * (p[0] + p[1])).collect()
    }
}

/// Which profile a [`profile_row`] compares.
#[derive(Clone, Copy)]
enum Profile {
    Charge,
    Field,
    /// Index into a level's `contents`.
    Content(usize),
    /// Index of a carrier (`Carrier::ALL` order) into a level's `carriers`.
    Carrier(usize),
    /// The charge density or (with `true`) the field just before each flash.
    BeforeFlash(bool),
}

/// The profile row of `name` over the first `records` records of every level.
fn profile_row(
    name: &str,
    runs: &[LevelRun],
    refinement: Refinement,
    which: Profile,
    records: usize,
) -> ProfileRow {
    let faces = matches!(which, Profile::Field | Profile::BeforeFlash(true));
    fn records_of(r: &LevelRun, which: Profile) -> Vec<&[f64]> {
        match which {
            Profile::Charge => r.charge.iter().map(|x| x.as_slice()).collect(),
            Profile::Field => r.field.iter().map(|x| x.as_slice()).collect(),
            Profile::Content(i) => r.contents.iter().map(|x| x[i].as_slice()).collect(),
            Profile::Carrier(i) => r.carriers.iter().map(|x| x[i].as_slice()).collect(),
            Profile::BeforeFlash(field) => r
                .before_flash
                .iter()
                .map(|(c, f)| if field { f.as_slice() } else { c.as_slice() })
                .collect(),
        }
    }
    let mut differences = Vec::new();
    for w in runs.windows(2) {
        let (mut num, mut den) = (0.0, 0.0);
        let (coarse, finer) = (records_of(&w[0], which), records_of(&w[1], which));
        for (a, fine) in coarse.iter().zip(&finer).take(records) {
            // The fine profile on the coarse points (only a space
            // refinement changes the points).
            let restricted;
            let b: &[f64] = match refinement {
                Refinement::Time => fine,
                Refinement::Space => {
                    restricted = restrict(fine, faces);
                    &restricted
                }
            };
            for (x, y) in a.iter().zip(b) {
                num += (x - y).abs();
                den += y.abs();
            }
        }
        differences.push(if den > 0.0 { num / den } else { 0.0 });
    }
    let orders: Vec<f64> = differences
        .windows(2)
        .map(|d| {
            if d[1] > 0.0 && d[0] > 0.0 {
                (d[0] / d[1]).log2()
            } else {
                f64::NAN
            }
        })
        .collect();
    let order = if differences.iter().all(|&d| d < 1e-12) {
        f64::INFINITY // identical to rounding at every level
    } else {
        // The finest halving's (NaN where a difference is zero).
        orders.last().copied().unwrap_or(f64::NAN)
    };
    let error_of_configured = if order == f64::INFINITY {
        differences[0]
    } else if order > 0.0 {
        differences[0] / (1.0 - (-order).exp2())
    } else {
        f64::NAN
    };
    ProfileRow {
        name: name.into(),
        differences,
        order,
        orders,
        error_of_configured,
    }
}

/// Runs the convergence study: `levels` (at least 3) levels of each
/// refinement in `which` ([`Refinement::BOTH`], or one of them: five or six
/// levels of the step alone cost a fraction of as many levels of the
/// spacing, whose finest column has 16 or 32 times the cells), on
/// `threads` workers (0: all cores). The series come in the order time,
/// space whatever the order of `which`.
pub fn study(
    text: &ConfigText,
    origin: &str,
    base_dir: &Path,
    overrides: &[String],
    levels: usize,
    threads: usize,
    which: &[Refinement],
) -> Result<Report, RunError> {
    if levels < 3 {
        return Err(RunError::Config(crate::error::ConfigError::single(
            origin,
            crate::error::ConfigIssue::new("--levels", "an order needs three levels")
                .value(levels.to_string())
                .allowed("3 or more"),
        )));
    }
    let (time, space) = run_levels(&LevelRuns {
        text,
        origin,
        base_dir,
        overrides,
        levels,
        threads,
        which,
    })?;
    let series = [(Refinement::Time, time), (Refinement::Space, space)]
        .into_iter()
        .filter(|(r, _)| which.contains(r))
        .map(|(refinement, runs)| series_of(refinement, &runs))
        .collect();
    Ok(Report {
        origin: origin.into(),
        levels,
        series,
    })
}

/// What [`run_levels`] runs: [`study`]'s arguments.
struct LevelRuns<'a> {
    text: &'a ConfigText,
    origin: &'a str,
    base_dir: &'a Path,
    overrides: &'a [String],
    levels: usize,
    threads: usize,
    which: &'a [Refinement],
}

/// Runs every level of the refinements in `which` on `threads` workers,
/// the longest first: the time series' runs and the space series' runs,
/// each starting with the configured level (run once and shared).
fn run_levels(spec: &LevelRuns) -> Result<(Vec<LevelRun>, Vec<LevelRun>), RunError> {
    let base = Experiment::from_config_text(spec.text, spec.origin, spec.overrides, spec.base_dir)?;
    let (dt, dz) = (base.schedule.dt, base.grid.dz);
    let mut jobs: Vec<(Refinement, usize, Vec<String>)> = Vec::new();
    let refinements: Vec<Refinement> = Refinement::BOTH
        .into_iter()
        .filter(|r| spec.which.contains(r))
        .collect();
    for &refinement in &refinements {
        for level in 0..spec.levels {
            jobs.push((
                refinement,
                level,
                level_overrides(spec.overrides, dt, dz, refinement, level),
            ));
        }
    }
    // The configured level is the first of every series: run it once.
    let first = refinements.first().copied();
    jobs.retain(|(r, l, _)| *l > 0 || Some(*r) == first);
    let pool = crate::workers::thread_pool(spec.threads)?;
    // Longest first: each halving of the step or the spacing about doubles
    // a level's cost, so the finest levels start first and the short ones
    // fill in around them (the longest-processing-time rule of list
    // scheduling, Graham 1969, SIAM J. Appl. Math. 17).
    let mut order: Vec<usize> = (0..jobs.len()).collect();
    order.sort_by_key(|&i| std::cmp::Reverse(jobs[i].1));
    let ran = crate::workers::each_in_order(&pool, &order, |&i| {
        run_level(spec.text, spec.origin, spec.base_dir, &jobs[i].2)
    });
    let mut slots: Vec<Option<Result<LevelRun, RunError>>> = jobs.iter().map(|_| None).collect();
    for (&i, r) in order.iter().zip(ran) {
        slots[i] = Some(r);
    }
    let results: Vec<Result<LevelRun, RunError>> = slots.into_iter().flatten().collect();
    let mut time = Vec::new();
    let mut space = Vec::new();
    for ((r, _, _), run) in jobs.iter().zip(results) {
        let run = run?;
        match r {
            Refinement::Time => time.push(run),
            Refinement::Space => space.push(run),
        }
    }
    if refinements.len() == 2 {
        space.insert(0, time[0].clone());
    }
    Ok((time, space))
}

/// The structure classes of a series' levels: at the largest separation
/// and of the flashing stage.
fn class_rows(runs: &[LevelRun]) -> Vec<ClassRow> {
    vec![
        ClassRow {
            name: "structure at the largest separation".into(),
            values: runs
                .iter()
                .map(|r| r.structure.name().to_string())
                .collect(),
        },
        ClassRow {
            name: "structure while flashing".into(),
            values: runs
                .iter()
                .map(|r| {
                    r.structure_while_flashing
                        .map_or(crate::analysis::NO_FLASHES, |c| c.name())
                        .to_string()
                })
                .collect(),
        },
    ]
}

/// The rows of one refinement's series: each outcome with its order,
/// extrapolate and error, the profiles' differences and the classes.
fn series_of(refinement: Refinement, runs: &[LevelRun]) -> Series {
    let outcomes = runs[0]
        .outcomes
        .iter()
        .enumerate()
        .map(|(i, (name, unit, _))| {
            let values: Vec<f64> = runs.iter().map(|r| r.outcomes[i].2).collect();
            let (order, extrapolated, error_of_configured) = richardson(&values);
            Row {
                name: name.clone(),
                unit: unit.to_string(),
                values,
                order,
                extrapolated,
                error_of_configured,
            }
        })
        .collect();
    let all = usize::MAX;
    let mut profiles = vec![
        profile_row("charge density", runs, refinement, Profile::Charge, all),
        profile_row("vertical field", runs, refinement, Profile::Field, all),
    ];
    // With flashes the records compare storms whose flashes fall a
    // few seconds apart; up to the first flash they compare the
    // same storm (docs/numerics.md).
    if runs.iter().any(|r| r.outcome(PRE_FLASH_RECORD).is_finite()) {
        let m = runs.iter().map(|r| r.pre_flash_records).min().unwrap_or(0);
        if m > 0 {
            profiles.push(profile_row(
                "charge density, pre-flash",
                runs,
                refinement,
                Profile::Charge,
                m,
            ));
            profiles.push(profile_row(
                "vertical field, pre-flash",
                runs,
                refinement,
                Profile::Field,
                m,
            ));
        }
    }
    // Flash by flash: the state just before the k-th flash at every
    // level, over the flashes every level has. Records fall between
    // two levels' flash times, where the profiles differ by a whole
    // flash; the states before the same flash do not
    // (docs/numerics.md).
    let flashes = runs.iter().map(|r| r.before_flash.len()).min().unwrap_or(0);
    if flashes > 0 {
        for (name, field) in BEFORE_EACH_FLASH.iter().zip([false, true]) {
            profiles.push(profile_row(
                name,
                runs,
                refinement,
                Profile::BeforeFlash(field),
                flashes,
            ));
        }
    }
    // The hydrometeors behind the charge: which of them converges
    // slowly tells where a time or space error comes from
    // (docs/numerics.md).
    if runs.iter().all(|r| !r.contents.is_empty()) {
        for (i, (_, name)) in CONTENTS.iter().enumerate() {
            profiles.push(profile_row(
                name,
                runs,
                refinement,
                Profile::Content(i),
                all,
            ));
        }
        profiles.push(profile_row(
            CRYSTALS,
            runs,
            refinement,
            Profile::Content(CONTENTS.len()),
            all,
        ));
    }
    // The charge of each carrier that holds any: the total is their
    // sum, and their errors can partly cancel in it, so its order
    // can differ from every one of theirs (docs/numerics.md).
    // With a single carrier its row would repeat the total's.
    let holding: Vec<usize> = (0..Carrier::COUNT)
        .filter(|&i| {
            runs.iter()
                .all(|r| r.carriers.iter().any(|x| x[i].iter().any(|&v| v != 0.0)))
        })
        .collect();
    if holding.len() > 1 {
        for i in holding {
            profiles.push(profile_row(
                &format!("charge density, {}", Carrier::ALL[i].name()),
                runs,
                refinement,
                Profile::Carrier(i),
                all,
            ));
        }
    }
    Series {
        refinement,
        steps: runs.iter().map(|r| r.dt).collect(),
        spacings: runs.iter().map(|r| r.dz).collect(),
        outcomes,
        profiles,
        classes: class_rows(runs),
    }
}

fn num(x: f64) -> String {
    if x.is_nan() {
        "-".into()
    } else if x.is_infinite() {
        "exact".into()
    } else if x == 0.0 {
        "0".into()
    } else if x.abs() >= 1e4 || x.abs() < 1e-3 {
        format!("{x:.3e}")
    } else {
        format!("{x:.4}")
    }
}

impl Report {
    /// The report as a text table.
    pub fn text(&self) -> String {
        let mut out = format!(
            "convergence of {} ({} levels per refinement)\n",
            self.origin, self.levels
        );
        for s in &self.series {
            let (what, levels): (&str, Vec<String>) = match s.refinement {
                Refinement::Time => (
                    "time step",
                    s.steps.iter().map(|d| format!("dt={d} s")).collect(),
                ),
                Refinement::Space => (
                    "grid spacing",
                    s.spacings.iter().map(|d| format!("dz={d} m")).collect(),
                ),
            };
            out.push_str(&format!("\n== refinement of the {what}\n"));
            // The name column as wide as the longest name, so the numbers
            // stay in their columns.
            let w = s
                .outcomes
                .iter()
                .map(|r| r.name.chars().count())
                .chain(s.profiles.iter().map(|p| p.name.chars().count()))
                .fold(42, usize::max);
            out.push_str(&format!("{:<w$} {:<8}", "outcome", "unit"));
            for l in &levels {
                out.push_str(&format!(" {l:>12}"));
            }
            out.push_str(&format!(
                " {:>8} {:>12} {:>10}\n",
                "order", "extrapolate", "error"
            ));
            for r in &s.outcomes {
                out.push_str(&format!("{:<w$} {:<8}", r.name, r.unit));
                for v in &r.values {
                    out.push_str(&format!(" {:>12}", num(*v)));
                }
                let err = if r.error_of_configured.is_nan() {
                    "-".to_string()
                } else {
                    format!("{:.2} %", 100.0 * r.error_of_configured)
                };
                out.push_str(&format!(
                    " {:>8} {:>12} {:>10}\n",
                    num(r.order),
                    num(r.extrapolated),
                    err
                ));
            }
            out.push_str("profiles: relative L1 difference to the next finer level\n");
            for p in &s.profiles {
                out.push_str(&format!("{:<w$} {:<8}", p.name, "1"));
                for d in &p.differences {
                    out.push_str(&format!(" {:>12}", num(*d)));
                }
                out.push_str(&format!(" {:>12}", ""));
                let err = if p.error_of_configured.is_nan() {
                    "-".to_string()
                } else {
                    format!("{:.2} %", 100.0 * p.error_of_configured)
                };
                out.push_str(&format!(" {:>8} {:>12} {:>10}\n", num(p.order), "", err));
            }
            if self.levels > 3 {
                // Each halving's own order, from differences k and k + 1,
                // under level k + 1 (the level they share): how far the
                // order scatters.
                out.push_str(
                    "profiles: order of each halving, log2 of successive differences' ratio\n",
                );
                for p in &s.profiles {
                    out.push_str(&format!("{:<w$} {:<8} {:>12}", p.name, "1", ""));
                    for o in &p.orders {
                        out.push_str(&format!(" {:>12}", num(*o)));
                    }
                    out.push('\n');
                }
            }
            out.push_str(
                "structure classes: a class that changes between levels is the numerics', not the storm's\n",
            );
            for c in &s.classes {
                out.push_str(&format!(
                    "{:<w$} {}{}\n",
                    c.name,
                    c.values.join(" / "),
                    if c.converged() {
                        "  (the same at every level)"
                    } else {
                        "  (changes with the numerics)"
                    }
                ));
            }
        }
        out
    }

    /// The report as CSV: one line per series, outcome and level.
    pub fn csv(&self) -> String {
        let mut out =
            String::from("refinement,outcome,unit,level,step_s,spacing_m,value,order,extrapolated,error_of_configured\n");
        for s in &self.series {
            let r = match s.refinement {
                Refinement::Time => "time",
                Refinement::Space => "space",
            };
            for row in &s.outcomes {
                for (i, v) in row.values.iter().enumerate() {
                    out.push_str(&format!(
                        "{r},{},{},{i},{},{},{v},{},{},{}\n",
                        row.name,
                        row.unit,
                        s.steps[i],
                        s.spacings[i],
                        row.order,
                        row.extrapolated,
                        row.error_of_configured
                    ));
                }
            }
            for p in &s.profiles {
                for (i, d) in p.differences.iter().enumerate() {
                    out.push_str(&format!(
                        "{r},{} L1 difference,1,{i},{},{},{d},{},,{}\n",
                        p.name, s.steps[i], s.spacings[i], p.order, p.error_of_configured
                    ));
                }
                // The order from differences k and k + 1 at level k + 1,
                // the level they share.
                for (k, o) in p.orders.iter().enumerate() {
                    out.push_str(&format!(
                        "{r},{} order of halving,1,{},{},{},{o},,,\n",
                        p.name,
                        k + 1,
                        s.steps[k + 1],
                        s.spacings[k + 1]
                    ));
                }
            }
            // A class is a word: in the value column, the numbers empty.
            for c in &s.classes {
                for (i, v) in c.values.iter().enumerate() {
                    out.push_str(&format!(
                        "{r},{},,{i},{},{},{v},,,\n",
                        c.name, s.steps[i], s.spacings[i]
                    ));
                }
            }
        }
        out
    }
}

#[cfg(test)]
mod richardson_tests {
    use super::richardson;

    #[test]
    fn first_order_series_extrapolates_exactly() {
        // f(h) = 1 + 0.1 h for h = 1, 1/2, 1/4: order 1, extrapolate 1, the
        // coarsest value 10 % off (analytic; Richardson 1911).
        let (p, ext, err) = richardson(&[1.1, 1.05, 1.025]);
        assert!((p - 1.0).abs() < 1e-12 && (ext - 1.0).abs() < 1e-12);
        assert!((err - 0.1).abs() < 1e-12);
    }

    #[test]
    fn no_extrapolation_outside_the_asymptotic_range() {
        // Differences that do not shrink (order 1.6e-4) are not
        // extrapolated: the finest value stands.
        let v = [296.4818, 296.5388, 296.5957];
        let (p, ext, err) = richardson(&v);
        assert!(p < 0.5);
        assert_eq!(ext, v[2]);
        assert!(err < 1e-3, "{err}");
    }
}
