//! Benchmarks (`stormcharge bench`): throughput of the demo column on one
//! thread, the share of each phase of the step, and sweep throughput on all
//! cores with its parallel efficiency. Figures only: no pass or fail.

use crate::column::state::State;
use crate::column::step::{step_timed, PHASES};
use crate::error::RunError;
use crate::output::netcdf_writer::NetcdfWriter;
use crate::output::Observer;
use crate::setup::config::DEMO_TOML;
use crate::setup::experiment::Experiment;
use std::path::Path;
use std::time::{Duration, Instant};

/// Measured figures.
#[derive(Debug, Clone)]
pub struct BenchReport {
    pub cells: usize,
    pub steps: u64,
    /// Cell-steps per second, full physics, one thread: the median over the
    /// repeated demo runs, and the slowest and fastest of them (a shared
    /// machine's timing varies from run to run).
    pub cell_steps_per_second: f64,
    pub slowest: f64,
    pub fastest: f64,
    pub repeats: usize,
    /// Share of the step spent in each of `PHASES`.
    pub shares: [f64; PHASES.len()],
    pub threads: usize,
    /// Members per second with one thread and with all threads, and the
    /// parallel efficiency (speed-up / threads), medians over `repeats`
    /// interleaved pairs of sweeps.
    pub sweep_one: f64,
    pub sweep_all: f64,
    pub efficiency: f64,
    /// Scaling over column sizes, the demo's first `member_duration`
    /// seconds at spacings from 200 m to 12.5 m, each size run once per
    /// round over `repeats` interleaved rounds.
    pub scaling: Vec<ScalingRow>,
    /// Cell-steps per second at the largest column over those at the
    /// smallest, per round: median, lowest, highest (1 is flat).
    pub flatness: (f64, f64, f64),
    /// Whether the scaling runs scaled the step with the spacing (a fixed
    /// Courant number) instead of keeping the demo's step.
    pub fixed_courant: bool,
    /// Whole demo runs with NetCDF output (the `run` path, into a scratch
    /// directory): median cell-steps per second with slowest and fastest.
    pub with_output: (f64, f64, f64),
}

/// One column size of [`BenchReport::scaling`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScalingRow {
    pub cells: usize,
    /// The step it ran at (s).
    pub step: f64,
    /// Median, slowest and fastest cell-steps per second of the step.
    pub rate: f64,
    pub slowest: f64,
    pub fastest: f64,
    /// Median share of the step in the field solve.
    pub solve_share: f64,
}

/// Grid spacings of the scaling figures (m): 80 to 1280 cells in the
/// demo's 16 km.
pub const SCALING_SPACINGS: [f64; 5] = [200.0, 100.0, 50.0, 25.0, 12.5];

/// Removes a scratch directory when the benchmark ends, also on an error.
struct RemoveOnDrop(std::path::PathBuf);

impl Drop for RemoveOnDrop {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

/// Runs the demo with `overrides`; returns its cells, steps and step (s).
fn run_demo(
    overrides: &[String],
    lap: &mut dyn FnMut(usize, Duration),
) -> Result<(usize, u64, f64), RunError> {
    let exp = Experiment::from_text(DEMO_TOML, "demo", overrides, Path::new("."))?;
    let mut s = State::initial(&exp);
    for _ in 0..exp.schedule.steps {
        step_timed(&exp, &mut s, exp.schedule.dt, Some(&mut *lap), &mut |_| {})?;
    }
    Ok((exp.grid.len(), exp.schedule.steps, exp.schedule.dt))
}

/// Runs the benchmarks on the demo with `overrides` (as `run --set`): the
/// demo `repeats` times, then `members` demo copies (shortened to
/// `member_duration` s) as a sweep, then the scaling over column sizes, with
/// the step scaled with the spacing when `fixed_courant`.
pub fn run(
    repeats: usize,
    members: usize,
    member_duration: f64,
    overrides: &[String],
    fixed_courant: bool,
) -> Result<BenchReport, RunError> {
    let mut phase = [Duration::ZERO; PHASES.len()];
    let mut rates = Vec::with_capacity(repeats);
    let (mut cells, mut steps) = (0, 0);
    for _ in 0..repeats.max(1) {
        let start = Instant::now();
        (cells, steps, _) = run_demo(overrides, &mut |p, d| phase[p] += d)?;
        rates.push(cells as f64 * steps as f64 / start.elapsed().as_secs_f64());
    }
    rates.sort_by(f64::total_cmp);
    // Whole runs with output, as `run` does them (NetCDF writer, records at
    // the demo's interval), into a scratch directory removed afterwards.
    let scratch = std::env::temp_dir().join(format!("stormcharge-bench-{}", std::process::id()));
    std::fs::create_dir_all(&scratch)
        .map_err(|e| crate::output::io_error("creating", &scratch, e))?;
    let _cleanup = RemoveOnDrop(scratch.clone());
    let exp = Experiment::from_text(DEMO_TOML, "demo", overrides, Path::new("."))?;
    let with_output = whole_runs_with_output(&exp, &scratch, repeats)?;
    let sum: f64 = phase.iter().map(|d| d.as_secs_f64()).sum();
    let shares = phase.map(|d| d.as_secs_f64() / sum);
    let threads = rayon::current_num_threads();
    let (one, all, efficiency) = sweep_efficiency(
        overrides,
        member_duration,
        members,
        threads,
        &scratch,
        repeats,
    )?;
    let mut short = overrides.to_vec();
    short.push(format!("time.duration={member_duration}"));
    short.push(format!("time.output_interval={member_duration}"));
    let (scaling, flatness) = scaling_over_sizes(&exp, &short, repeats, fixed_courant)?;
    Ok(BenchReport {
        with_output,
        cells,
        steps,
        cell_steps_per_second: rates[rates.len() / 2],
        slowest: rates[0],
        fastest: rates[rates.len() - 1],
        repeats: rates.len(),
        shares,
        threads,
        sweep_one: one,
        sweep_all: all,
        efficiency,
        scaling,
        flatness,
        fixed_courant,
    })
}

/// A figure over repeated measurements: (median, lowest, highest).
type Spread = (f64, f64, f64);

/// Whole runs of `exp` with output, as `run` does them (NetCDF writer,
/// records at the demo's interval), into `scratch`: cell-steps per second,
/// (median, lowest, highest) of `repeats` runs.
fn whole_runs_with_output(
    exp: &Experiment,
    scratch: &Path,
    repeats: usize,
) -> Result<Spread, RunError> {
    let mut output_rates = Vec::with_capacity(repeats);
    for i in 0..repeats.max(1) {
        let target = scratch.join(format!("run_{i}.nc"));
        let start = Instant::now();
        let mut writer = NetcdfWriter::new(&target, "stormcharge bench");
        let mut obs: [&mut dyn Observer; 1] = [&mut writer];
        let s = crate::timeloop::run(exp, &mut obs, &mut |_| {})?;
        output_rates.push(exp.grid.len() as f64 * s.steps as f64 / start.elapsed().as_secs_f64());
        let _ = std::fs::remove_file(&target);
    }
    output_rates.sort_by(f64::total_cmp);
    let with_output = (
        output_rates[output_rates.len() / 2],
        output_rates[0],
        output_rates[output_rates.len() - 1],
    );
    Ok(with_output)
}

/// The real sweep's parallel efficiency: `members` demo members of
/// `member_duration` s on one thread and on `threads`, `repeats`
/// interleaved pairs; the medians of the one- and all-thread member rates
/// and of the pairs' efficiencies.
fn sweep_efficiency(
    overrides: &[String],
    member_duration: f64,
    members: usize,
    threads: usize,
    scratch: &Path,
    repeats: usize,
) -> Result<(f64, f64, f64), RunError> {
    // The sweep's own member path (`sweep::run_member`: configuration,
    // run, NetCDF file and outcome file per member), into the scratch
    // directory, so the figure includes what output costs a real sweep.
    // Members record at the demo's own interval (60 s), as a real sweep
    // would, not only at the end.
    let mut member_overrides = overrides.to_vec();
    member_overrides.push(format!("time.duration={member_duration}"));
    member_overrides.push(format!(
        "time.output_interval={}",
        member_duration.min(60.0)
    ));
    let mut round = 0;
    let mut sweep = |threads: usize| -> Result<f64, RunError> {
        let pool = crate::workers::thread_pool(threads)?;
        let dir = scratch.join(format!("sweep_{round}"));
        round += 1;
        std::fs::create_dir_all(&dir).map_err(|e| crate::output::io_error("creating", &dir, e))?;
        let demo = crate::setup::config::ConfigText::plain(DEMO_TOML);
        let t = Instant::now();
        let indices: Vec<usize> = (1..=members).collect();
        let outcomes = crate::workers::each_in_order(&pool, &indices, |&index| {
            let member = crate::sweep::Member {
                index,
                overrides: member_overrides.clone(),
            };
            crate::sweep::run_member(
                &demo,
                Path::new("."),
                &member,
                &dir,
                crate::sweep::MemberFiles::NetCdf,
            )
        });
        let rate = members as f64 / t.elapsed().as_secs_f64();
        let _ = std::fs::remove_dir_all(&dir);
        match outcomes.into_iter().find_map(|o| o.error) {
            Some(message) => Err(RunError::Output {
                context: "bench sweep member".into(),
                message,
            }),
            None => Ok(rate),
        }
    };
    // One-thread and all-thread sweeps interleaved, `repeats` pairs; the
    // medians are reported, and the efficiency is the median of the pairs'
    // ratios (each pair ran close together in time, which cancels most of
    // the drift of a shared machine).
    let (mut ones, mut alls, mut ratios) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..repeats.max(1) {
        let one = sweep(1)?;
        let all = sweep(threads)?;
        ones.push(one);
        alls.push(all);
        ratios.push(all / one / threads as f64);
    }
    let median = |v: &mut Vec<f64>| {
        v.sort_by(f64::total_cmp);
        v[v.len() / 2]
    };
    Ok((median(&mut ones), median(&mut alls), median(&mut ratios)))
}

/// Cost per cell-step over the column sizes of [`SCALING_SPACINGS`] (the
/// short runs `short`, at the demo's Courant numbers with
/// `fixed_courant`), in interleaved rounds; the rows and the largest
/// size's rate over the smallest's (median, lowest, highest).
fn scaling_over_sizes(
    exp: &Experiment,
    short: &[String],
    repeats: usize,
    fixed_courant: bool,
) -> Result<(Vec<ScalingRow>, Spread), RunError> {
    // Cost per cell-step over column sizes (the field solve's share shows
    // how it scales).
    let solve = PHASES.iter().position(|p| *p == "poisson").unwrap_or(0);
    // Rounds interleave the sizes, so that a machine that slows down or
    // speeds up during the benchmark affects every size alike.
    let mut rounds: Vec<Vec<(usize, f64, f64, f64)>> = Vec::new();
    for _ in 0..repeats.max(1) {
        let mut round = Vec::new();
        for dz in SCALING_SPACINGS {
            let mut o = short.to_vec();
            o.push(format!("grid.spacing={dz}"));
            if fixed_courant {
                // The demo's Courant numbers at every spacing: its step
                // times the spacing over its own.
                o.push(format!("time.step={}", exp.schedule.dt * dz / exp.grid.dz));
            }
            let mut ph = [Duration::ZERO; PHASES.len()];
            let t = Instant::now();
            let (c, st, dt) = run_demo(&o, &mut |p, d| ph[p] += d)?;
            let total: f64 = ph.iter().map(|d| d.as_secs_f64()).sum();
            round.push((
                c,
                c as f64 * st as f64 / t.elapsed().as_secs_f64(),
                ph[solve].as_secs_f64() / total,
                dt,
            ));
        }
        rounds.push(round);
    }
    // (median, lowest, highest) of the rounds (at least one round).
    let spread =
        |v: Vec<f64>| crate::analysis::median_range(v).unwrap_or((f64::NAN, f64::NAN, f64::NAN));
    let scaling = (0..SCALING_SPACINGS.len())
        .map(|i| {
            let (rate, slow, fast) = spread(rounds.iter().map(|r| r[i].1).collect());
            let (share, _, _) = spread(rounds.iter().map(|r| r[i].2).collect());
            ScalingRow {
                cells: rounds[0][i].0,
                step: rounds[0][i].3,
                rate,
                slowest: slow,
                fastest: fast,
                solve_share: share,
            }
        })
        .collect();
    let last = SCALING_SPACINGS.len() - 1;
    let flatness = spread(rounds.iter().map(|r| r[last].1 / r[0].1).collect());
    Ok((scaling, flatness))
}

impl BenchReport {
    pub fn text(&self) -> String {
        let mut s = format!(
            "demo column, one thread: {} cells x {} steps, {:.3e} cell-steps per second \
             (median of {} runs; slowest {:.3e}, fastest {:.3e})\n",
            self.cells,
            self.steps,
            self.cell_steps_per_second,
            self.repeats,
            self.slowest,
            self.fastest
        );
        s.push_str(&format!(
            "whole run with NetCDF output: {:.3e} cell-steps per second (median of {} runs; slowest {:.3e}, fastest {:.3e})\n",
            self.with_output.0, self.repeats, self.with_output.1, self.with_output.2
        ));
        s.push_str("share of the step:\n");
        for (name, share) in PHASES.iter().zip(self.shares) {
            s.push_str(&format!("  {name:<13} {:>5.1} %\n", 100.0 * share));
        }
        s.push_str(&format!(
            "sweep with output files (medians of {} pairs): {:.3} members/s on 1 thread, {:.3} on {} threads, \
             parallel efficiency {:.0} %\n",
            self.repeats,
            self.sweep_one,
            self.sweep_all,
            self.threads,
            100.0 * self.efficiency
        ));
        let step = if self.fixed_courant {
            "the step scaled with the spacing (a fixed Courant number)"
        } else {
            "the demo's step"
        };
        s.push_str(&format!(
            "scaling over column sizes (the demo's first member-duration seconds at {step}, medians of {} interleaved rounds):\n",
            self.repeats
        ));
        for r in &self.scaling {
            // The field solve's own time per cell-step, from its share of
            // the median rate: what an O(N log N) solve keeps nearly flat.
            s.push_str(&format!(
                "  {:>5} cells: step {} s, {:.3e} cell-steps per second ({:.3e} to {:.3e}), field solve {:.1} % of the step ({:.0} ns per cell-step)\n",
                r.cells,
                r.step,
                r.rate,
                r.slowest,
                r.fastest,
                100.0 * r.solve_share,
                1e9 * r.solve_share / r.rate
            ));
        }
        let (ratio, low, high) = self.flatness;
        s.push_str(&format!(
            "largest over smallest column, per cell-step and round: {ratio:.3} (median; {low:.3} to {high:.3})\n"
        ));
        s
    }
}
