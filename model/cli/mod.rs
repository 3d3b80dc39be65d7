//! Command-line interface: parse, load, call the library, report. Exit codes:
//! 0 success, 2 configuration or usage error, 1 runtime failure.

use crate::error::{ConfigError, ConfigIssue, RunError};
use crate::output::netcdf_writer::NetcdfWriter;
use crate::output::reader::read_stored_configuration;
use crate::output::Observer;
use crate::setup::config::{template, ConfigText, DEMO_TOML};
use crate::setup::experiment::Experiment;
use crate::timeloop;
use clap::{Parser, Subcommand};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

#[derive(Parser, Debug)]
#[command(
    name = "stormcharge",
    version,
    about = "One-dimensional thunderstorm electrification column model (research and teaching use; \
             not a lightning-safety or forecasting tool)"
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Run an experiment (the built-in demo when no CONFIG is given) and write NetCDF output.
    Run {
        /// Experiment configuration (TOML).
        config: Option<PathBuf>,
        /// Output file (overrides output.file).
        #[arg(short = 'o', long = "output")]
        output: Option<PathBuf>,
        /// Override one key, e.g. --set grid.spacing=50 (repeatable).
        #[arg(long = "set", value_name = "SECTION.KEY=VALUE")]
        set: Vec<String>,
        /// Re-run the configuration stored in an earlier output file.
        #[arg(long = "replay", value_name = "OUTPUT.nc", conflicts_with_all = ["config", "set"])]
        replay: Option<PathBuf>,
        /// No progress bar, no summary.
        #[arg(short, long)]
        quiet: bool,
    },
    /// Validate a configuration and print it fully resolved (defaults filled in) as TOML.
    Check {
        config: PathBuf,
        /// Override one key, as for `run`.
        #[arg(long = "set", value_name = "SECTION.KEY=VALUE")]
        set: Vec<String>,
    },
    /// Run every member of the configuration's `[sweep]` in parallel.
    Sweep {
        config: PathBuf,
        /// Directory for the member files and the summary.
        #[arg(short = 'o', long = "output")]
        output: PathBuf,
        /// Worker threads (0: all cores).
        #[arg(long, default_value_t = 0)]
        threads: usize,
        /// Run only shard K of N (every N-th member from the K-th), e.g. 2/4.
        #[arg(long, value_name = "K/N")]
        shard: Option<String>,
        /// Remove the output files of an earlier sweep (this shard's
        /// members and summary, and members beyond this sweep's count)
        /// instead of refusing to run into a used directory.
        #[arg(long, conflicts_with = "resume")]
        overwrite: bool,
        /// Reuse the members an interrupted run of the same sweep completed
        /// (file complete, stored configuration identical) and run the rest.
        #[arg(long)]
        resume: bool,
        /// Write each member's outcome and the summary, not the member's
        /// NetCDF file (for large ensembles; --resume then checks the
        /// outcome's configuration fingerprint).
        #[arg(long)]
        outcomes_only: bool,
        /// No progress bar, no summary.
        #[arg(short, long)]
        quiet: bool,
        /// Override one key of the base configuration for every member
        /// (repeatable), as for `run`.
        #[arg(long = "set", value_name = "SECTION.KEY=VALUE")]
        set: Vec<String>,
    },
    /// Run the experiment at its own time step and grid spacing and at
    /// successive halvings of each; report the observed orders, the
    /// Richardson extrapolates and the error of the configured settings.
    Converge {
        /// Experiment configuration (the built-in demo when not given).
        config: Option<PathBuf>,
        /// Levels per refinement, the configured one included (at least 3).
        #[arg(long, default_value_t = 3)]
        levels: usize,
        /// Override one key, as for `run` (repeatable).
        #[arg(long = "set", value_name = "SECTION.KEY=VALUE")]
        set: Vec<String>,
        /// Worker threads (0: all cores).
        #[arg(long, default_value_t = 0)]
        threads: usize,
        /// Also write the report as JSON to this file.
        #[arg(long)]
        json: Option<PathBuf>,
        /// Also write the report as CSV to this file.
        #[arg(long)]
        csv: Option<PathBuf>,
        /// Which resolutions to refine.
        #[arg(long, value_enum, default_value_t = Refine::Both)]
        refine: Refine,
    },
    /// Charge regions, structure class and flash statistics of an output
    /// file; for a sweep directory, the share of each structure class.
    Analyze {
        output: PathBuf,
        /// Times to analyse (s; the nearest record); default: the record of
        /// largest charge separation.
        #[arg(long = "time")]
        times: Vec<f64>,
        /// Also write the report as JSON to this file.
        #[arg(long)]
        json: Option<PathBuf>,
    },
    /// Quick-look pictures (PNG, SVG on request) of an output file, or of a
    /// sweep directory (one row per member).
    Plot {
        output: PathBuf,
        /// Picture files: PREFIX.png, and PREFIX.svg with --svg (default: next to OUTPUT).
        #[arg(short = 'o', long = "prefix")]
        prefix: Option<PathBuf>,
        /// Also write the picture as SVG (large for long runs).
        #[arg(long)]
        svg: bool,
        /// Panels, comma-separated, from: charge, field, flashes, profiles,
        /// hydrometeors, carriers (default: all but carriers).
        #[arg(long, value_delimiter = ',')]
        panels: Vec<String>,
        /// Fixed colour limit of the charge panels (nC m-3), to compare runs.
        #[arg(long, value_name = "NC_PER_M3")]
        charge_limit: Option<f64>,
        /// Fixed colour limit of the field panel (kV/m), to compare runs.
        #[arg(long, value_name = "KV_PER_M")]
        field_limit: Option<f64>,
        /// Time (s) of the profile panels (default: the record of largest |E_z|).
        #[arg(long)]
        time: Option<f64>,
        /// Picture size in pixels.
        #[arg(long, default_value_t = 1400)]
        width: u32,
        #[arg(long, default_value_t = 1000)]
        height: u32,
    },
    /// Measure throughput: demo cell-steps per second, phase shares, sweep efficiency.
    Bench {
        /// Timed runs of the demo (the median is reported).
        #[arg(long, default_value_t = 5)]
        repeats: usize,
        /// Demo copies in the sweep measurement.
        #[arg(long, default_value_t = 8)]
        members: usize,
        /// Simulated time of each sweep member (s).
        #[arg(long, default_value_t = 1800.0)]
        member_duration: f64,
        /// Override one key of the demo, as for `run` (repeatable).
        #[arg(long = "set", value_name = "SECTION.KEY=VALUE")]
        set: Vec<String>,
        /// In the scaling over column sizes, scale the step with the grid
        /// spacing (a fixed Courant number, so the explicit transport takes
        /// the same sub-steps at every size) instead of keeping the demo's.
        #[arg(long)]
        fixed_courant: bool,
    },
    /// Join the shard summaries of a sharded sweep into summary.csv.
    SweepMerge { dir: PathBuf },
    /// Print (and optionally write as CSV) a scheme's charge per rebounding
    /// collision over a temperature x liquid-water grid.
    ChargingMap {
        /// Non-inductive scheme (a `charging.scheme` name other than off).
        #[arg(long)]
        scheme: String,
        /// Crystal diameter (m).
        #[arg(long, default_value_t = 100e-6)]
        crystal_diameter: f64,
        /// Impact speed (m s-1); also the graupel speed in the rime accretion rate.
        #[arg(long, default_value_t = 3.0)]
        impact_speed: f64,
        /// Graupel diameter (m) in the droplets' collision efficiency.
        #[arg(long, default_value_t = 2e-3)]
        graupel_diameter: f64,
        /// Reversal temperature for gardiner_1985 (degC).
        #[arg(long, default_value_t = -15.0, allow_hyphen_values = true)]
        reversal_temperature: f64,
        /// Write the grid as CSV to this file.
        #[arg(long)]
        csv: Option<PathBuf>,
        /// The table of `--scheme table`: a CSV as `charging.table_file`
        /// takes (checked the same way).
        #[arg(long)]
        table: Option<PathBuf>,
    },
    /// Write a complete, commented configuration listing every key.
    Init {
        /// Where to write it.
        #[arg(default_value = "stormcharge.toml")]
        path: PathBuf,
        /// Overwrite an existing file.
        #[arg(long)]
        force: bool,
        /// Print the key reference as Markdown (for docs/configuration.md) instead.
        #[arg(long, conflicts_with = "force")]
        reference: bool,
        /// Print the output-variable reference as Markdown (for docs/output.md) instead.
        #[arg(long, conflicts_with_all = ["force", "reference"])]
        output_reference: bool,
        /// Write the built-in demo's configuration (configs/demo.toml) instead.
        #[arg(long, conflicts_with_all = ["reference", "output_reference"])]
        demo: bool,
    },
}

/// Runs the parsed command line; returns the process exit code.
pub fn main_with(cli: Cli, command_line: &str) -> i32 {
    let result = match cli.command {
        Command::Run {
            config,
            output,
            set,
            replay,
            quiet,
        } => cmd_run(config, output, &set, replay, quiet, command_line),
        Command::Check { config, set } => cmd_check(&config, &set),
        Command::Sweep {
            config,
            output,
            threads,
            shard,
            quiet,
            overwrite,
            resume,
            outcomes_only,
            set,
        } => cmd_sweep(
            &config,
            &output,
            threads,
            shard.as_deref(),
            SweepFlags {
                quiet,
                overwrite,
                resume,
                outcomes_only,
            },
            &set,
        ),
        Command::Analyze {
            output,
            times,
            json,
        } => cmd_analyze(&output, &times, json.as_deref()),
        Command::Plot {
            output,
            prefix,
            svg,
            panels,
            charge_limit,
            field_limit,
            time,
            width,
            height,
        } => cmd_plot(
            &output,
            prefix,
            &panels,
            crate::plot::PlotOptions {
                size: (width, height),
                time,
                svg,
                panels: Vec::new(),
                charge_limit,
                field_limit,
            },
        ),
        Command::Bench {
            repeats,
            members,
            member_duration,
            set,
            fixed_courant,
        } => crate::bench::run(
            repeats.clamp(1, 100),
            members.clamp(1, 64),
            member_duration,
            &set,
            fixed_courant,
        )
        .map(|r| print!("{}", r.text())),
        Command::SweepMerge { dir } => {
            crate::sweep::merge(&dir).map(|p| println!("stormcharge: wrote {}", p.display()))
        }
        Command::ChargingMap {
            scheme,
            crystal_diameter,
            impact_speed,
            graupel_diameter,
            reversal_temperature,
            csv,
            table,
        } => cmd_charging_map(
            &scheme,
            (crystal_diameter, impact_speed, graupel_diameter),
            reversal_temperature,
            table.as_deref(),
            csv.as_deref(),
        ),
        Command::Converge {
            config,
            levels,
            set,
            threads,
            json,
            csv,
            refine,
        } => cmd_converge(
            config.as_deref(),
            levels,
            refine,
            &set,
            threads,
            json.as_deref(),
            csv.as_deref(),
        ),
        Command::Init {
            reference: true, ..
        } => {
            print!("{}", template::reference_markdown());
            Ok(())
        }
        Command::Init {
            output_reference: true,
            ..
        } => {
            print!("{}", crate::output::reference_markdown());
            Ok(())
        }
        Command::Init {
            path, force, demo, ..
        } => cmd_init(&path, force, demo),
    };
    match result {
        Ok(()) => 0,
        Err(e) => {
            eprintln!("stormcharge: error: {e}");
            e.exit_code()
        }
    }
}

/// Reads a configuration file; a missing or unreadable file is a configuration error.
fn read_config(path: &Path) -> Result<ConfigText, RunError> {
    let fail = |why: String| {
        RunError::Config(ConfigError::single(
            path.display().to_string(),
            ConfigIssue::new("(file)", why),
        ))
    };
    let bytes = std::fs::read(path)
        .map_err(|err| fail(format!("cannot read configuration file: {err}")))?;
    // NetCDF classic ("CDF") and NetCDF-4/HDF5 ("\x89HDF") signatures.
    if bytes.starts_with(b"CDF") || bytes.starts_with(b"\x89HDF") {
        return Err(fail(
            "this is a NetCDF output file, not a configuration; to rerun the experiment it stores use --replay FILE".into(),
        ));
    }
    let text = String::from_utf8(bytes)
        .map_err(|_| fail("cannot read configuration file: it is not UTF-8 text".into()))?;
    crate::setup::config::load::resolve_include(&text, path, 0).map_err(RunError::Config)
}

/// The name a configuration's messages give it.
fn origin_of(config: Option<&Path>) -> String {
    config.map_or_else(
        || "<embedded demo>".to_string(),
        |p| p.display().to_string(),
    )
}

/// Says on stderr that a configuration with a `[sweep]` is taken as its
/// base storm (`what`: "`run` runs"): an ensemble's file given to `run` or
/// `converge` does not run the ensemble, and nothing else would say so.
fn note_sweep(config: &crate::setup::config::Config, origin: &str, what: &str) {
    if config.sweep.parameters.is_empty() {
        return;
    }
    let members = crate::sweep::members(config, origin)
        .map(|(_, m)| format!(" of {} members", m.len()))
        .unwrap_or_default();
    eprintln!(
        "stormcharge: note: {origin} has a [sweep]{members}; {what} its base configuration, without the swept values (`stormcharge sweep` runs the members)"
    );
}

fn load(config: Option<&Path>, set: &[String]) -> Result<Experiment, RunError> {
    let origin = origin_of(config);
    let (text, dir) = match config {
        Some(path) => (read_config(path)?, crate::output::directory_of(path)),
        None => (
            crate::setup::config::ConfigText::plain(DEMO_TOML),
            Path::new("."),
        ),
    };
    let exp = Experiment::from_config_text(&text, &origin, set, dir)?;
    // The output's variable names are known to the output, not to setup.
    crate::output::check_selection(&exp, &text, set, &origin)?;
    Ok(exp)
}

fn cmd_run(
    config: Option<PathBuf>,
    output: Option<PathBuf>,
    set: &[String],
    replay: Option<PathBuf>,
    quiet: bool,
    command_line: &str,
) -> Result<(), RunError> {
    let (exp, default_out) = match &replay {
        Some(nc) => {
            let (text, status) = read_stored_configuration(nc)?;
            if status != "complete" && !quiet {
                eprintln!(
                    "stormcharge: note: {} is marked {status}; replaying its configuration anyway",
                    nc.display()
                );
            }
            // stormcharge stores soundings inline, never as a file name: a
            // stored configuration that names a file was edited, and reading
            // that file would let an output file make the program read (and
            // quote in errors) any local file.
            let stored = crate::setup::config::parse(&text, &nc.display().to_string())?;
            let table_file = matches!(
                &stored.charging.scheme,
                crate::physics::charging::Scheme::Table {
                    table_file: Some(_),
                    ..
                }
            );
            if stored.atmosphere.sounding.file.is_some() || table_file {
                return Err(RunError::Config(ConfigError::single(
                    nc.display().to_string(),
                    ConfigIssue::new(
                        if table_file {
                            "charging.table_file"
                        } else {
                            "atmosphere.sounding.file"
                        },
                        "a stored configuration names a file; stormcharge stores soundings and charge tables inline, so this file was edited and is not replayed",
                    ),
                )));
            }
            let exp = Experiment::from_text(
                &text,
                &format!("stored in {}", nc.display()),
                &[],
                Path::new("."),
            )?;
            let mut stem = nc.with_extension("").into_os_string();
            stem.push(".replay.nc");
            (exp, PathBuf::from(stem))
        }
        None => {
            let exp = load(config.as_deref(), set)?;
            if !quiet {
                note_sweep(&exp.config, &origin_of(config.as_deref()), "`run` runs");
            }
            let out = PathBuf::from(&exp.config.output.file);
            (exp, out)
        }
    };
    let target = output.unwrap_or(default_out);
    let mut inputs: Vec<PathBuf> = exp.input_files.clone();
    inputs.extend(config.iter().cloned());
    inputs.extend(replay.iter().cloned());
    if let Err(e) = crate::output::netcdf_writer::check_output_path(&target, &inputs) {
        return Err(RunError::Config(ConfigError::single(
            "command line",
            ConfigIssue::new("--output", e.to_string()).value(target.display().to_string()),
        )));
    }

    let show_bar = !quiet && std::io::stderr().is_terminal();
    let bar = show_bar.then(|| {
        let b = indicatif::ProgressBar::new(exp.schedule.steps);
        b.set_style(
            indicatif::ProgressStyle::with_template(
                "{bar:40} {msg}, {elapsed} elapsed, {eta} left",
            )
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        b
    });
    let earlier = replay
        .as_deref()
        .and_then(|nc| crate::output::reader::OutputFile::open(nc).ok())
        .and_then(|f| f.text("history"));
    let mut writer = NetcdfWriter::new(&target, command_line)
        .with_inputs(inputs)
        .after_history(earlier);
    let started = std::time::Instant::now();
    let mut observers: [&mut dyn Observer; 1] = [&mut writer];
    let summary = timeloop::run(&exp, &mut observers, &mut |p| {
        if let Some(b) = &bar {
            if p.step % 50 == 0 || p.step == exp.schedule.steps {
                b.set_position(p.step);
                b.set_message(format!(
                    "model time {:.1} of {:.1} min, {} flashes",
                    p.time / 60.0,
                    exp.config.time.duration / 60.0,
                    p.flashes
                ));
            }
        }
    })?;
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    if summary.rayleigh_exceeded > 0 {
        eprintln!(
            "stormcharge: warning: mean particle charge exceeded the Rayleigh limit in {} cell-steps; the charging scale or cap may be too large",
            summary.rayleigh_exceeded
        );
    }
    if let (hits @ 1.., Some(first)) = summary.flash_bound_hits {
        eprintln!(
            "stormcharge: warning: the limit of {} flashes per step was reached with the trigger still met in {hits} steps (first at t = {first:.2} s); shorten time.step or revisit the thresholds",
            exp.discharge_params.max_per_step
        );
    }
    if summary.channels_at_model_top > 0 {
        let total: u64 = summary.flash_counts.iter().sum();
        eprintln!(
            "stormcharge: warning: {} of {total} flash channels reached the model top (grid.top = {} m); their length, potential and the charge they neutralise depend on the domain's height: compare a run with a higher grid.top (docs/discharge.md, \"Channels that reach the model top\")",
            summary.channels_at_model_top,
            exp.grid.top()
        );
    }
    if !quiet {
        let g = &exp.grid;
        println!("stormcharge: wrote {}", target.display());
        println!(
            "  column 0-{} m in {} cells of {} m; base state: {}",
            g.top(),
            g.len(),
            g.dz,
            exp.config.atmosphere.profile.name()
        );
        println!(
            "  {} steps of {} s ({} s model time), {} output records, {:.2} s wall clock",
            summary.steps,
            exp.schedule.dt,
            summary.model_time,
            summary.records,
            started.elapsed().as_secs_f64()
        );
        if exp.microphysics != crate::physics::microphysics::Mode::Off {
            println!(
                "  surface precipitation: {:.1} kg m-2 (mm of water)",
                summary.precipitation
            );
        }
        if summary.substeps.0 > 0 {
            println!(
                "  transport sub-stepped in {} steps (up to {} sub-steps) to keep the Courant number below {}",
                summary.substeps.0,
                summary.substeps.1,
                crate::physics::kinematics::advection::MAX_COURANT
            );
        }
        if summary.charging_cap_hits > 0 {
            println!(
                "  the cap on the charge per collision bound in {} cell-steps (a safety limit; docs/charging.md)",
                summary.charging_cap_hits
            );
        }
        if summary.max_particle_charge > 0.0 {
            println!(
                "  largest mean charge per precipitation particle: {:.1} pC; on a 2.5 mm drop {:.1} pC, on 2.5 mm graupel {:.1} pC (charge shared by surface area, where at least one such particle per m3)",
                summary.max_particle_charge * 1e12,
                summary.max_charge_2p5mm[0] * 1e12,
                summary.max_charge_2p5mm[1] * 1e12
            );
        }
        if exp.discharge_params.enabled {
            let [ic, ng, pg] = summary.flash_counts;
            println!("  flashes: {ic} intracloud, {ng} negative ground, {pg} positive ground");
            // The height relation needs a cloud; a prescribed-charge column
            // without microphysics has none.
            let expected = if summary.max_cloud_top > 0.0 {
                format!(
                    "Price & Rind (1992) give {:.1} per minute for its {:.1} km cloud top",
                    summary.price_rind_1992_rate(),
                    summary.max_cloud_top / 1e3
                )
            } else {
                "no cloud top to compare with Price & Rind (1992)".to_string()
            };
            println!(
                "  flash rate: {:.2} per minute over the run, {:.1} per minute in the busiest 10 minutes; {expected} (docs/discharge.md)",
                (ic + ng + pg) as f64 / (summary.model_time / 60.0).max(1e-9),
                summary.max_flashes_per_10_min as f64 / 10.0,
            );
            if let Some(t) = summary.first_flash {
                // Two decimals: integrators already place the first flash
                // tenths of a second apart (docs/numerics.md), so more
                // digits would claim more than the model resolves.
                println!("  first flash at t = {t:.2} s");
            }
            let area = exp.field_solver.column_area();
            match area {
                // Without a ground flash there is nothing to count in C m-2
                // ("0.0000e0 C m-2" read as a measurement).
                _ if ng + pg == 0 => {
                    println!("  charge lowered to ground: none (no ground flash)")
                }
                Some(a) => println!(
                    "  charge lowered to ground: {:.4e} C m-2 ({:.2} C in the column)",
                    summary.ground_charge,
                    summary.ground_charge * a
                ),
                None => println!(
                    "  charge lowered to ground: {:.4e} C m-2",
                    summary.ground_charge
                ),
            }
        }
        if exp.ions.enabled {
            let c = summary.conduction;
            println!(
                "  conducting air: {:.3e} C m-2 of particle charge neutralised by ion capture; ions carried {:.3e} C m-2 into the ground and {:.3e} out through the top; point discharge put {:.3e} C m-2 into the air",
                c.neutralised, c.into_ground, c.out_top, c.corona
            );
        }
        let (e, z, t) = summary.peak_field;
        if e > 0.0 {
            println!(
                "  peak |E_z| {:.1} kV/m at {:.0} m, t = {:.2} s",
                e / 1e3,
                z,
                t
            );
            println!("  largest value of each initiation criterion over the run (1 where it holds, except avalanche_multiplication: e-foldings against breakdown.avalanche_required_efolds):");
            for c in crate::physics::breakdown::Criterion::ALL {
                let trigger = if c == exp.criteria_thresholds.trigger {
                    "  (flash trigger)"
                } else {
                    ""
                };
                // Ratios far above one (the streamer-to-leader charge of a
                // zone hundreds of metres long) in exponent form, so the
                // column keeps its width and its three significant places.
                let r = summary.peak_ratio[c as usize];
                let value = if r.abs() >= 1e5 {
                    format!("{r:.3e}")
                } else {
                    format!("{r:.3}")
                };
                println!("    {:<26} {value:>9}{trigger}", c.name());
            }
            // What the numbers mean for this run's flashes.
            use crate::physics::breakdown::Criterion;
            let t = exp.criteria_thresholds.trigger;
            let reached = summary.peak_ratio[t as usize];
            let needed = if t == Criterion::AvalancheMultiplication {
                exp.criteria_thresholds.required_efolds
            } else {
                1.0
            };
            let runaway = summary.peak_ratio[Criterion::RunawayAvalanche as usize];
            if reached < needed {
                println!(
                    "  the trigger {} reached {reached:.3} of the {needed} it needs: no flash could start; the field peaked at {runaway:.2} times the runaway threshold (flashes are observed to start at 1.1-3.3 times it; docs/criteria.md)",
                    t.name()
                );
            } else {
                println!(
                    "  the trigger {} held (largest {reached:.3} against {needed}); the field peaked at {runaway:.2} times the runaway threshold (observed before flashes: 1.1-3.3; docs/criteria.md)",
                    t.name()
                );
            }
        }
    }
    Ok(())
}

fn cmd_converge(
    config: Option<&Path>,
    levels: usize,
    refine: Refine,
    set: &[String],
    threads: usize,
    json: Option<&Path>,
    csv: Option<&Path>,
) -> Result<(), RunError> {
    if !(3..=6).contains(&levels) {
        return Err(RunError::Config(ConfigError::single(
            "command line",
            ConfigIssue::new("--levels", "out of range")
                .value(levels.to_string())
                .allowed("3 to 6 (three levels give an order; each more doubles the cost)"),
        )));
    }
    let origin = origin_of(config);
    let (text, dir) = match config {
        Some(path) => (
            read_config(path)?,
            crate::output::directory_of(path).to_path_buf(),
        ),
        None => (ConfigText::plain(DEMO_TOML), PathBuf::from(".")),
    };
    use crate::convergence::Refinement;
    // The study can take hours: the report's files must be writable first.
    for p in json.iter().chain(csv.iter()) {
        crate::output::check_destination(p)?;
    }
    let which: &[Refinement] = match refine {
        Refine::Time => &[Refinement::Time],
        Refine::Space => &[Refinement::Space],
        Refine::Both => &Refinement::BOTH,
    };
    if let Ok(c) = crate::setup::config::parse_config_text(&text, &origin, set) {
        note_sweep(&c, &origin, "`converge` studies");
    }
    let report = crate::convergence::study(&text, &origin, &dir, set, levels, threads, which)?;
    print!("{}", report.text());
    let write = |path: &Path, body: String| crate::output::write_atomically(path, body.as_bytes());
    if let Some(p) = json {
        write_json(p, &report)?;
    }
    if let Some(p) = csv {
        write(p, report.csv())?;
    }
    Ok(())
}

fn cmd_check(config: &Path, set: &[String]) -> Result<(), RunError> {
    let exp = load(Some(config), set)?;
    let (text, left_out) = template::used_sections(&exp.config);
    print!("{text}");
    if !left_out.is_empty() {
        println!(
            "# left out as unused by this run: {}",
            left_out
                .iter()
                .map(|s| format!("[{s}]"))
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    println!(
        "# stormcharge: {} is valid: {} cells of {} m, {} steps of {} s",
        config.display(),
        exp.grid.len(),
        exp.grid.dz,
        exp.schedule.steps,
        exp.schedule.dt
    );
    Ok(())
}

fn cmd_init(path: &Path, force: bool, demo: bool) -> Result<(), RunError> {
    if path.exists() && !force {
        return Err(RunError::Config(ConfigError::single(
            "command line",
            ConfigIssue::new("PATH", "file exists; use --force to overwrite")
                .value(path.display().to_string()),
        )));
    }
    let text = if demo {
        crate::setup::config::DEMO_TOML.to_string()
    } else {
        template::init_text()
    };
    crate::output::write_atomically(path, text.as_bytes())?;
    println!("stormcharge: wrote {}", path.display());
    Ok(())
}

fn cmd_charging_map(
    scheme: &str,
    (d, v, graupel_d): (f64, f64, f64),
    reversal: f64,
    table: Option<&Path>,
    csv: Option<&Path>,
) -> Result<(), RunError> {
    use crate::physics::charging::Scheme;
    use serde::Deserialize;
    let usage = |key: &str, value: String, msg: &str, allowed: &str| {
        RunError::Config(ConfigError::single(
            "command line",
            ConfigIssue::new(key, msg).value(value).allowed(allowed),
        ))
    };
    // The scheme is read through its own registry, as from a configuration.
    let named = toml::toml! { scheme = scheme reversal_temperature = reversal };
    let scheme = match Scheme::deserialize(named) {
        Ok(s) if s != Scheme::Off => s,
        _ => {
            let names: Vec<String> = Scheme::NAMES
                .iter()
                .filter(|n| **n != Scheme::Off.name())
                .map(|n| format!("\"{n}\""))
                .collect();
            return Err(usage(
                "--scheme",
                format!("\"{scheme}\""),
                "unknown charging scheme",
                &names.join(", "),
            ));
        }
    };
    if let Some(p) = csv {
        crate::output::check_destination(p)?;
    }
    // Each option within the range the map's formulas are meant for.
    for (key, value, lo, hi, unit, allowed) in [
        ("--crystal-diameter", d, 1e-6, 1e-2, "m", "[1e-6, 1e-2]"),
        ("--impact-speed", v, 0.1, 30.0, "m s-1", "[0.1, 30]"),
        (
            "--graupel-diameter",
            graupel_d,
            1e-4,
            2e-2,
            "m",
            "[1e-4, 2e-2]",
        ),
        (
            "--reversal-temperature",
            reversal,
            -30.0,
            -5.0,
            "degC",
            "[-30, -5]",
        ),
    ] {
        if !(lo..=hi).contains(&value) {
            return Err(usage(
                key,
                format!("{value}"),
                &format!("out of range ({unit})"),
                allowed,
            ));
        }
    }
    // The table scheme's charge is the user's table: it needs the file, and
    // only it takes one (a map of zeros was printed without it).
    let is_table = matches!(scheme, Scheme::Table { .. });
    if is_table != table.is_some() {
        return Err(usage(
            "--table",
            table.map_or("(none)".into(), |p| p.display().to_string()),
            if is_table {
                "--scheme table needs --table FILE"
            } else {
                "only --scheme table takes a table"
            },
            "a CSV as charging.table_file takes, with --scheme table only",
        ));
    }
    // What the model applies: the default scale, cap and low-temperature
    // taper of the key table, as a run without a [charging] section uses;
    // a table read and checked as a configuration's table_file is.
    let mut defaults = crate::setup::config::parse("", "defaults")?;
    if let Some(path) = table {
        defaults.charging.scheme = Scheme::Table {
            table_file: Some(path.display().to_string()),
            table_columns: None,
            table_rows: None,
        };
    }
    let mut params =
        crate::setup::resolve::charging(&mut defaults.charging, Path::new("."), &mut Vec::new())
            .map_err(|issue| RunError::Config(ConfigError::single("command line", issue)))?;
    if !is_table {
        params.scheme = scheme;
    }
    let lwcs = [0.05, 0.1, 0.2, 0.5, 1.0, 2.0, 3.0, 5.0, 8.0];
    // The droplets' collision efficiency as the model forms it, for the
    // given graupel in air of 0.6 kg m-3 (near the -15 degC level of a
    // mid-latitude storm; a stated assumption of the map).
    let efficiency = params.riming_efficiency.of(
        crate::physics::microphysics::params::MicroParams::default().droplet_diameter,
        graupel_d,
        v,
        0.6,
    );
    // 0.0 - x, not -x: the first row prints as 0, not -0.
    let temps: Vec<f64> = (0..=16).map(|i| 0.0 - 2.5 * i as f64).collect();
    // The laboratory ranges of the formulas (docs/charging.md): outside,
    // the formula is held at its edge values; such cells carry a '*'.
    let outside = |t: f64, l: f64| match (&params.scheme, &params.table) {
        (Scheme::Gardiner1985 { .. }, _) => !(-30.0..=0.0).contains(&t) || l > 5.0,
        // A table's range is its own grid, held at its edges outside.
        (Scheme::Table { .. }, Some(tab)) => {
            let x = match tab.axis {
                crate::physics::charging::table::Axis::LiquidWater => l,
                crate::physics::charging::table::Axis::RimeAccretionRate => efficiency * l * v,
            };
            let within = |g: &[f64], a: f64| g[0] <= a && a <= g[g.len() - 1];
            !within(&tab.t, t) || !within(&tab.x, x)
        }
        _ => !(-30.0..=0.0).contains(&t) || efficiency * l * v > 10.0,
    };
    println!(
        "charge gained by graupel per rebounding collision as the model applies it (fC): scale {}, cap {} fC, taper {} to {} degC; crystal {:.0} um, impact speed {} m/s; * outside the laboratory range (held at its edge)",
        params.scale,
        params.cap * 1e15,
        params.taper_start,
        params.taper_end,
        d * 1e6,
        v
    );
    let on_rar = match &params.table {
        Some(tab) => tab.axis == crate::physics::charging::table::Axis::RimeAccretionRate,
        None => matches!(params.scheme, Scheme::SaundersPeck1998),
    };
    if on_rar {
        println!(
            "rime accretion rate E LWC V with droplet collision efficiency E = {efficiency:.3} ({} for a {} mm graupel at {} m/s in air of 0.6 kg m-3)",
            params.riming_efficiency.name(),
            graupel_d * 1e3,
            v
        );
    }
    print!("{:>8}", "T\\LWC");
    for l in lwcs {
        print!("{l:>9}");
    }
    println!("   (g m-3)");
    let mut out = String::from("temperature_degC,liquid_water_g_m3,charge_fC\n");
    for &t in &temps {
        print!("{t:>8.1}");
        for &l in &lwcs {
            // Adding 0 turns a negative zero into zero.
            let collision = crate::physics::charging::Collision {
                t,
                lwc: l,
                crystal: d,
                impact_speed: v,
                collector_speed: v,
                efficiency,
            };
            let q = params.per_collision(&collision) * 1e15 + 0.0;
            let mark = if outside(t, l) { "*" } else { " " };
            print!("{q:>8.3}{mark}");
            out.push_str(&format!("{t},{l},{q}\n"));
        }
        println!();
    }
    if let Some(path) = csv {
        crate::output::write_atomically(path, out.as_bytes())?;
        println!("stormcharge: wrote {}", path.display());
    }
    Ok(())
}

fn parse_shard(text: &str) -> Result<(usize, usize), RunError> {
    let bad = || {
        RunError::Config(ConfigError::single(
            "command line",
            ConfigIssue::new("--shard", "must be K/N with 1 <= K <= N")
                .value(format!("\"{text}\""))
                .allowed("K/N, e.g. 2/4"),
        ))
    };
    let (k, n) = text.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (
        k.trim().parse().map_err(|_| bad())?,
        n.trim().parse().map_err(|_| bad())?,
    );
    if k == 0 || k > n {
        return Err(bad());
    }
    Ok((k, n))
}

/// The switches of `sweep`.
/// `converge --refine`: which resolutions the study halves.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Refine {
    /// The time step only.
    Time,
    /// The grid spacing only.
    Space,
    /// Both, each at the other's configured value.
    Both,
}

struct SweepFlags {
    quiet: bool,
    overwrite: bool,
    resume: bool,
    outcomes_only: bool,
}

fn cmd_sweep(
    config: &Path,
    dir: &Path,
    threads: usize,
    shard: Option<&str>,
    flags: SweepFlags,
    set: &[String],
) -> Result<(), RunError> {
    let SweepFlags {
        quiet,
        overwrite,
        resume,
        outcomes_only,
    } = flags;
    let shard = shard.map(parse_shard).transpose()?;
    let origin = config.display().to_string();
    let mut text = read_config(config)?;
    if !set.is_empty() {
        // The files behind the text stay those the user wrote: errors in
        // their keys keep their lines.
        text.text = crate::setup::config::load::override_text(&text.text, &origin, set)?;
    }
    let base_dir = crate::output::directory_of(config);
    let resolved = crate::setup::config::parse_config_text(&text, &origin, &[])?;
    // The expansion's errors name keys of the text; give them their lines.
    let (keys, members) = crate::sweep::members(&resolved, &origin)
        .map_err(|e| crate::setup::config::load::with_lines(e, &text, set))?;
    // The members' own base: the value lists, read once above, are not read
    // again for every member (a member empties them anyway).
    let text = text.without_sweep_values();
    crate::sweep::validate(&text, base_dir, &members, shard, &origin, threads)?;
    let count = members
        .iter()
        .filter(|m| crate::sweep::in_shard(m.index, shard))
        .count() as u64;
    let bar = (!quiet && std::io::stderr().is_terminal()).then(|| {
        let b = indicatif::ProgressBar::new(count);
        b.set_style(
            indicatif::ProgressStyle::with_template(
                "{bar:40} {pos}/{len} members, {elapsed} elapsed, about {eta} left",
            )
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        b
    });
    let tick = || {
        if let Some(b) = &bar {
            b.inc(1);
        }
    };
    let name = crate::sweep::shard_summary_name(shard);
    crate::sweep::prepare_directory(dir, &members, shard, &name, overwrite, resume)?;
    let files = if outcomes_only {
        crate::sweep::MemberFiles::OutcomesOnly
    } else {
        crate::sweep::MemberFiles::NetCdf
    };
    let outcomes = crate::sweep::run(
        &text, base_dir, &members, dir, threads, shard, resume, files, &tick,
    )?;
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    let csv = dir.join(&name);
    let meta = dir.join(crate::sweep::meta_name(&name));
    let print = crate::sweep::fingerprint(&resolved.to_toml());
    // The side file first: a summary is never on disk without it.
    crate::output::write_atomically(
        &meta,
        crate::sweep::summary_meta(&print, members.len(), &outcomes).as_bytes(),
    )?;
    crate::output::write_atomically(&csv, crate::sweep::summary_csv(&keys, &outcomes).as_bytes())?;
    let nc = csv.with_extension("nc");
    crate::sweep::write_summary_netcdf(&nc, &keys, &outcomes)?;
    if !quiet {
        let failed = outcomes.iter().filter(|o| o.error.is_some()).count();
        println!(
            "stormcharge: {} members run ({} failed); summary in {} and {}",
            outcomes.len(),
            failed,
            csv.display(),
            nc.display()
        );
        print!("{}", crate::sweep::summary_csv(&keys, &outcomes));
    }
    let failed = outcomes.iter().filter(|o| o.error.is_some()).count();
    if failed > 0 {
        return Err(RunError::MembersFailed {
            failed,
            total: outcomes.len(),
            summary: csv,
        });
    }
    Ok(())
}

/// Writes `value` as pretty JSON to `path`.
fn write_json<T: serde::Serialize>(path: &Path, value: &T) -> Result<(), RunError> {
    let text = serde_json::to_string_pretty(value).map_err(|e| RunError::Output {
        context: "JSON report".into(),
        message: e.to_string(),
    })?;
    crate::output::write_atomically(path, text.as_bytes())
}

/// A usage error unless every `--time` is a finite number of seconds (the
/// nearest record is taken, so any finite time has one; NaN had none).
fn finite_times(times: &[f64]) -> Result<(), RunError> {
    match times.iter().find(|t| !t.is_finite()) {
        Some(t) => Err(RunError::Config(ConfigError::single(
            "command line",
            ConfigIssue::new("--time", "not a finite time")
                .value(t.to_string())
                .allowed("a model time in s (the nearest record is taken)"),
        ))),
        None => Ok(()),
    }
}

fn cmd_analyze(path: &Path, times: &[f64], json: Option<&Path>) -> Result<(), RunError> {
    finite_times(times)?;
    if let Some(j) = json {
        crate::output::check_destination(j)?;
    }
    if path.is_dir() {
        // A sweep directory: the share of each structure class.
        let report = crate::analysis::analyze_sweep(path)?;
        print!("{}", report.text());
        return json.map_or(Ok(()), |j| write_json(j, &report));
    }
    let report = crate::analysis::analyze_file(path, times)?;
    print!("{}", report.text());
    json.map_or(Ok(()), |j| write_json(j, &report))
}

fn cmd_plot(
    output: &Path,
    prefix: Option<PathBuf>,
    panels: &[String],
    mut options: crate::plot::PlotOptions,
) -> Result<(), RunError> {
    finite_times(options.time.as_slice())?;
    let size = options.size;
    let usage = |key: &str, value: String, msg: &str, allowed: String| {
        RunError::Config(ConfigError::single(
            "command line",
            ConfigIssue::new(key, msg).value(value).allowed(allowed),
        ))
    };
    let most = crate::plot::MAX_PICTURE_PX;
    if !(400..=most).contains(&size.0) || !(300..=most).contains(&size.1) {
        return Err(usage(
            "--width/--height",
            format!("{}x{}", size.0, size.1),
            "picture size out of range",
            "width 400-8000, height 300-8000 pixels".into(),
        ));
    }
    options.panels = if panels.is_empty() {
        crate::plot::DEFAULT_PANELS.to_vec()
    } else {
        let mut chosen = Vec::new();
        for p in panels {
            let panel = crate::plot::Panel::ALL
                .into_iter()
                .find(|x| x.name() == p.trim())
                .ok_or_else(|| {
                    usage(
                        "--panels",
                        format!("\"{p}\""),
                        "unknown panel",
                        crate::plot::Panel::NAMES.join(", "),
                    )
                })?;
            chosen.push(panel);
        }
        chosen
    };
    for (key, limit) in [
        ("--charge-limit", options.charge_limit),
        ("--field-limit", options.field_limit),
    ] {
        if let Some(l) = limit {
            if !(l.is_finite() && l > 0.0) {
                return Err(usage(
                    key,
                    format!("{l}"),
                    "must be a positive number",
                    "> 0".into(),
                ));
            }
        }
    }
    if output.is_dir() {
        // A sweep directory: one row per member.
        let prefix = prefix.unwrap_or_else(|| output.join("sweep"));
        crate::plot::plot_sweep(output, &prefix, &options)?;
        println!(
            "stormcharge: wrote {}",
            prefix.with_extension("png").display()
        );
        return Ok(());
    }
    let prefix = prefix.unwrap_or_else(|| output.with_extension(""));
    crate::plot::plot(output, &prefix, &options)?;
    if options.svg {
        println!(
            "stormcharge: wrote {} and {}",
            prefix.with_extension("png").display(),
            prefix.with_extension("svg").display()
        );
    } else {
        println!(
            "stormcharge: wrote {}",
            prefix.with_extension("png").display()
        );
    }
    Ok(())
}
