//! Parameter sweeps: one configuration with a `[sweep]` section expands into
//! members (every combination of the value lists, or the lists zipped), each
//! run in parallel with rayon into its own NetCDF file, and a summary table
//! (CSV and NetCDF) with one row per member: its parameter values and its
//! outcome. Members are independent, so results do not depend on the thread
//! count or order. `--shard K/N` runs every N-th member starting at the K-th
//! (a Slurm job array runs the shards on several nodes) and
//! [`merge`] joins the shard summaries.

use crate::analysis::{classify, majority_class, spread, PeakSeparation, Region, Structure};
use crate::column::state::State;
use crate::error::{ConfigError, ConfigIssue, RunError};
use crate::output::csv::{csv_field, csv_fields};
use crate::output::netcdf_writer::NetcdfWriter;
use crate::output::Observer;
use crate::setup::config::{Config, ConfigText, SweepCombine};
use crate::setup::experiment::Experiment;
use crate::timeloop;
use crate::workers::thread_pool;
use std::path::{Path, PathBuf};

/// One member: its index (from 1) and `key=value` overrides.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Member {
    pub index: usize,
    pub overrides: Vec<String>,
}

/// What one member produced.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Outcome {
    pub member: Member,
    /// `None` when the member ran; the error otherwise.
    pub error: Option<String>,
    pub flash_counts: [u64; 3],
    #[serde(deserialize_with = "nan::one")]
    pub first_flash: f64,
    #[serde(deserialize_with = "nan::one")]
    pub peak_field: f64,
    pub structure: String,
    #[serde(deserialize_with = "nan::one")]
    pub max_separation: f64,
    /// Model time (s) of the largest separation (watched every step).
    #[serde(default = "no_time", deserialize_with = "nan::one")]
    pub max_separation_time: f64,
    #[serde(deserialize_with = "nan::one")]
    pub precipitation: f64,
    /// Particle charge neutralised by ion capture (C m-2; 0 with ions off).
    #[serde(default, deserialize_with = "nan::one")]
    pub ion_neutralised: f64,
    /// Smallest, median and largest field at flash initiation over the
    /// runaway threshold (1; NaN without flashes).
    #[serde(default = "no_ratios", deserialize_with = "nan::three")]
    pub initiation_ratio: [f64; 3],
    /// The main negative, upper positive and lower positive regions at
    /// the largest separation: charge (C m-2), height (m), temperature (degC).
    #[serde(default = "no_regions", deserialize_with = "nan::three_by_three")]
    pub regions: [[f64; 3]; 3],
    /// Net charge lowered to ground by flashes (C m-2, signed).
    #[serde(default, deserialize_with = "nan::one")]
    pub ground_charge: f64,
    /// Model time reached (s).
    #[serde(default, deserialize_with = "nan::one")]
    pub model_time: f64,
    /// Cross-section of a finite column (m2); NaN for planar layers.
    #[serde(default = "no_area", deserialize_with = "nan::one")]
    pub column_area: f64,
    /// Estimated relative error of the member's own step and spacing for
    /// the peak field and the main negative charge: [time, space] each
    /// (NaN unless `sweep.error_estimate`).
    #[serde(default = "no_estimate", deserialize_with = "nan::two_by_two")]
    pub error_estimate: [[f64; 2]; 2],
    /// With `sweep.error_estimate`: the structure class at the largest
    /// separation of the member at half its step and at half its spacing
    /// (empty otherwise, and in outcomes written before it was kept), and
    /// its flashes by kind there (NaN otherwise). A class or a flash count
    /// that changes with the numerics is an artefact of them, not a
    /// result.
    #[serde(default)]
    pub structure_refined: [String; 2],
    /// The same for the class of the flashing stage (empty without
    /// flashes, as `structure_while_flashing`).
    #[serde(default)]
    pub structure_while_flashing_refined: [String; 2],
    #[serde(default = "no_counts", deserialize_with = "nan::two_by_three")]
    pub flash_counts_refined: [[f64; 3]; 2],
    /// Largest charge (C, magnitude) on a 2.5 mm drop and a 2.5 mm graupel
    /// particle over the run, the charge shared over the size distribution
    /// in proportion to surface area (the run summary's diagnostic).
    #[serde(default = "no_pair", deserialize_with = "nan::two")]
    pub charge_2p5mm: [f64; 2],
    /// The structure class most output records of the flashing stage show
    /// (from the first record at or after the first flash to the first at
    /// or after the last) and the share of those records in it; empty and
    /// NaN for a member without flashes. The class at the largest
    /// separation can belong to the decaying stage; this one describes the
    /// storm while it flashes.
    #[serde(default)]
    pub structure_while_flashing: String,
    #[serde(default = "no_time", deserialize_with = "nan::one")]
    pub structure_while_flashing_share: f64,
    /// Flashes whose channel reached the model top (their extent, potential
    /// and neutralised charge depend on `grid.top`; docs/discharge.md);
    /// NaN in outcomes written before it was counted.
    #[serde(default = "no_time", deserialize_with = "nan::one")]
    pub channels_at_model_top: f64,
    /// [`fingerprint`] of the member's resolved configuration (empty for a
    /// member that did not resolve), so that `--resume` can check an
    /// outcome without the member's file.
    #[serde(default)]
    pub configuration: String,
}

/// What a sweep writes for each member.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MemberFiles {
    /// The member's NetCDF file and its outcome side file.
    NetCdf,
    /// The outcome side file only (`sweep --outcomes-only`): the summary
    /// and `analyze` need nothing else, and an ensemble of thousands of
    /// members then writes kilobytes per member, not megabytes.
    OutcomesOnly,
}

fn no_pair() -> [f64; 2] {
    [f64::NAN; 2]
}

fn no_estimate() -> [[f64; 2]; 2] {
    [[f64::NAN; 2]; 2]
}

fn no_counts() -> [[f64; 3]; 2] {
    [[f64::NAN; 3]; 2]
}

/// JSON has no NaN: serde_json writes it as null, and these read null back
/// as NaN, so an outcome without flashes survives the round trip.
mod nan {
    use serde::{Deserialize, Deserializer};

    pub fn one<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
        Ok(Option::<f64>::deserialize(d)?.unwrap_or(f64::NAN))
    }

    pub fn two<'de, D: Deserializer<'de>>(d: D) -> Result<[f64; 2], D::Error> {
        Ok(<[Option<f64>; 2]>::deserialize(d)?.map(|x| x.unwrap_or(f64::NAN)))
    }

    pub fn three<'de, D: Deserializer<'de>>(d: D) -> Result<[f64; 3], D::Error> {
        Ok(<[Option<f64>; 3]>::deserialize(d)?.map(|x| x.unwrap_or(f64::NAN)))
    }

    pub fn two_by_two<'de, D: Deserializer<'de>>(d: D) -> Result<[[f64; 2]; 2], D::Error> {
        Ok(<[[Option<f64>; 2]; 2]>::deserialize(d)?.map(|r| r.map(|x| x.unwrap_or(f64::NAN))))
    }

    pub fn two_by_three<'de, D: Deserializer<'de>>(d: D) -> Result<[[f64; 3]; 2], D::Error> {
        Ok(<[[Option<f64>; 3]; 2]>::deserialize(d)?.map(|r| r.map(|x| x.unwrap_or(f64::NAN))))
    }

    pub fn three_by_three<'de, D: Deserializer<'de>>(d: D) -> Result<[[f64; 3]; 3], D::Error> {
        Ok(<[[Option<f64>; 3]; 3]>::deserialize(d)?.map(|r| r.map(|x| x.unwrap_or(f64::NAN))))
    }
}

fn no_regions() -> [[f64; 3]; 3] {
    [[f64::NAN; 3]; 3]
}

fn no_area() -> f64 {
    f64::NAN
}

fn no_ratios() -> [f64; 3] {
    [f64::NAN; 3]
}

/// No time yet (outcome files written before the field existed).
fn no_time() -> f64 {
    f64::NAN
}

/// Most members one sweep may have: each writes its own output file, and
/// the expansion is held in memory.
pub const MAX_MEMBERS: usize = 100_000;

/// Expands the sweep section into members. Errors name the offending key.
pub fn members(config: &Config, origin: &str) -> Result<(Vec<String>, Vec<Member>), ConfigError> {
    let err = |key: String, msg: String| ConfigError::single(origin, ConfigIssue::new(key, msg));
    let mut keys = Vec::new();
    let mut lists: Vec<Vec<String>> = Vec::new();
    for (i, p) in config.sweep.parameters.iter().enumerate() {
        let at = format!("sweep.parameters[{}]", i + 1);
        let key = p
            .key
            .clone()
            .ok_or_else(|| err(format!("{at}.key"), "every parameter needs its key".into()))?;
        if key.starts_with("sweep.") || crate::setup::config::schema::find(&key).is_none() {
            return Err(err(
                format!("{at}.key"),
                format!("\"{key}\" is not a configuration key that can be swept"),
            ));
        }
        // A key swept twice would override itself member by member and
        // give the summary two columns of one name.
        if let Some(j) = keys.iter().position(|k| *k == key) {
            return Err(err(
                format!("{at}.key"),
                format!(
                    "\"{key}\" is already swept by sweep.parameters[{}]; give all its values in one list",
                    j + 1
                ),
            ));
        }
        let values = p.values.clone().ok_or_else(|| {
            err(
                format!("{at}.values"),
                "every parameter needs its values".into(),
            )
        })?;
        keys.push(key);
        lists.push(values.iter().map(|v| v.to_string()).collect());
    }
    if keys.is_empty() {
        return Err(err(
            "sweep.parameters".into(),
            "a sweep needs at least one [[sweep.parameters]] block".into(),
        ));
    }
    let count: u128 = match config.sweep.combine {
        SweepCombine::Zip => lists[0].len() as u128,
        SweepCombine::Product => lists.iter().map(|l| l.len() as u128).product(),
    };
    if count > MAX_MEMBERS as u128 {
        return Err(err(
            "sweep.parameters".into(),
            format!("the sweep has {count} members; at most {MAX_MEMBERS} are allowed (split it into several sweeps)"),
        ));
    }
    let combos: Vec<Vec<String>> = match config.sweep.combine {
        SweepCombine::Zip => {
            let n = lists[0].len();
            if let Some(i) = lists.iter().position(|l| l.len() != n) {
                let values = |k: usize| if k == 1 { "value" } else { "values" };
                let m = lists[i].len();
                return Err(ConfigError::single(
                    origin,
                    ConfigIssue::new(
                        format!("sweep.parameters[{}].values", i + 1),
                        "sweep.combine = \"zip\" pairs the lists value by value",
                    )
                    .value(format!("a list of {m} {}", values(m)))
                    .allowed(format!(
                        "a list of {n} {}, as long as sweep.parameters[1].values",
                        values(n)
                    )),
                ));
            }
            (0..n)
                .map(|j| lists.iter().map(|l| l[j].clone()).collect())
                .collect()
        }
        SweepCombine::Product => {
            let mut out: Vec<Vec<String>> = vec![Vec::new()];
            for l in &lists {
                out = out
                    .into_iter()
                    .flat_map(|prefix| {
                        l.iter().map(move |v| {
                            let mut p = prefix.clone();
                            p.push(v.clone());
                            p
                        })
                    })
                    .collect();
            }
            out
        }
    };
    let members = combos
        .into_iter()
        .enumerate()
        .map(|(i, vals)| Member {
            index: i + 1,
            overrides: keys
                .iter()
                .zip(vals)
                .map(|(k, v)| format!("{k}={v}"))
                .collect(),
        })
        .collect();
    Ok((keys, members))
}

/// A member's class at the largest separation, its flashes by kind and
/// the class of its flashing stage at a refined step or spacing.
struct Refined {
    class: Structure,
    flashes: [u64; 3],
    flashing: Option<Structure>,
}

/// Tracks the step of largest charge separation while a member runs.
#[derive(Default)]
struct Watch {
    peak: PeakSeparation,
    /// |E|/runaway threshold of every flash at initiation.
    ratios: Vec<f64>,
    area: f64,
    error_estimate: [[f64; 2]; 2],
    /// Class and flash total at half the step and at half the spacing.
    refined: [Option<Refined>; 2],
    /// Model time and structure class of every output record, and the
    /// times of the first and last flash.
    classes: Vec<(f64, Structure)>,
    flash_span: Option<(f64, f64)>,
}

impl Observer for Watch {
    fn begin(&mut self, exp: &Experiment) -> Result<(), RunError> {
        self.error_estimate = no_estimate();
        self.area = exp.field_solver.column_area().unwrap_or(f64::NAN);
        Ok(())
    }

    fn record(&mut self, exp: &Experiment, state: &State) -> Result<(), RunError> {
        // Flashes come in the order they happen.
        crate::analysis::extend_flash_span(&mut self.flash_span, &state.ledger.flashes);
        let temps = state.temperatures(exp);
        let regions =
            crate::analysis::regions(&exp.grid.z, exp.grid.dz, &state.charge_total, &temps, 0.1);
        self.classes.push((state.time, classify(&regions)));
        let runaway = crate::physics::breakdown::Criterion::RunawayAvalanche.index();
        self.ratios.extend(
            state
                .ledger
                .flashes
                .iter()
                .map(|f| f.criteria_ratio[runaway]),
        );
        Ok(())
    }

    fn stepped(&mut self, exp: &Experiment, state: &State) {
        self.peak.watch(exp, state);
    }
}

/// Charge (C m-2), height (m) and temperature (degC) of the main negative,
/// upper positive and lower positive regions in `regions` (NaN where one is
/// absent), as [`Outcome::regions`] holds them.
fn tripole_table(regions: &[Region]) -> [[f64; 3]; 3] {
    crate::analysis::tripole_regions(regions)
        .map(|g| g.map_or([f64::NAN; 3], |g| [g.charge, g.height, g.temperature]))
}

/// Resolves every member of this shard before any runs, so a value out of
/// range or a relation between keys that fails stops the sweep at once
/// with every offending member named (not hours later, half-way through).
pub fn validate(
    base_text: &ConfigText,
    base_dir: &Path,
    members: &[Member],
    shard: Option<(usize, usize)>,
    origin: &str,
    threads: usize,
) -> Result<(), RunError> {
    let chosen: Vec<&Member> = members
        .iter()
        .filter(|m| in_shard(m.index, shard))
        .collect();
    // Each member is resolved on its own, on the sweep's threads (an
    // ensemble of ten thousand members spent a fifth of its time here on
    // one thread); the messages are gathered in member order.
    let pool = thread_pool(threads)?;
    let failures = crate::workers::each_in_order(&pool, &chosen, |m| {
        let mut overrides = m.overrides.clone();
        overrides.push("sweep.parameters=[]".into());
        let label = format!("member {} ({})", m.index, m.overrides.join(", "));
        Experiment::from_config_text(base_text, &label, &overrides, base_dir)
            .and_then(|exp| crate::output::check_selection(&exp, base_text, &overrides, &label))
            .err()
            .map(|e| (label, e))
    });
    let mut issues = Vec::new();
    let mut failed = 0;
    for (label, e) in failures.into_iter().flatten() {
        failed += 1;
        if issues.len() < 20 {
            for mut issue in e.issues {
                issue.message = format!("{label}: {}", issue.message);
                issues.push(issue);
            }
        }
    }
    if issues.is_empty() {
        Ok(())
    } else {
        if failed > 1 {
            issues.push(ConfigIssue::new(
                "sweep.parameters",
                format!("{failed} members fail; nothing was run"),
            ));
        }
        Err(ConfigError {
            origin: origin.to_string(),
            issues,
        }
        .into())
    }
}

/// An outcome with nothing measured yet.
fn failed_outcome(member: Member) -> Outcome {
    Outcome {
        member,
        error: None,
        flash_counts: [0; 3],
        first_flash: f64::NAN,
        peak_field: f64::NAN,
        structure: String::new(),
        max_separation: f64::NAN,
        max_separation_time: f64::NAN,
        precipitation: f64::NAN,
        ion_neutralised: f64::NAN,
        initiation_ratio: no_ratios(),
        regions: no_regions(),
        ground_charge: f64::NAN,
        model_time: f64::NAN,
        column_area: f64::NAN,
        error_estimate: no_estimate(),
        structure_refined: Default::default(),
        structure_while_flashing_refined: Default::default(),
        flash_counts_refined: no_counts(),
        charge_2p5mm: no_pair(),
        channels_at_model_top: f64::NAN,
        structure_while_flashing: String::new(),
        structure_while_flashing_share: f64::NAN,
        configuration: String::new(),
    }
}

/// Runs one member into `dir`.
pub fn run_member(
    base_text: &ConfigText,
    base_dir: &Path,
    member: &Member,
    dir: &Path,
    files: MemberFiles,
) -> Outcome {
    let mut out = failed_outcome(member.clone());
    let mut overrides = member.overrides.clone();
    overrides.push("sweep.parameters=[]".into());
    let result = Experiment::from_config_text(
        base_text,
        &format!("member {}", member.index),
        &overrides,
        base_dir,
    )
    .map_err(RunError::from)
    .and_then(|exp| {
        let mut watch = Watch::default();
        let mut writer = (files == MemberFiles::NetCdf).then(|| {
            NetcdfWriter::new(
                &member_path(dir, member.index),
                &format!("stormcharge sweep member {}", member.index),
            )
        });
        let mut obs: Vec<&mut dyn Observer> = Vec::with_capacity(2);
        if let Some(w) = writer.as_mut() {
            obs.push(w);
        }
        obs.push(&mut watch);
        let s = timeloop::run(&exp, &mut obs, &mut |_| {})?;
        let configuration = fingerprint(&exp.config.to_toml());
        let peak_regions = watch.peak.regions(&exp);
        if exp.config.sweep.error_estimate {
            // The method of the convergence command: the same member at half
            // and a quarter of its step, and of its spacing, in memory only;
            // from the three levels the observed order, the Richardson
            // extrapolate and the relative error of the member's own
            // settings, for the peak field and the main negative charge.
            // The member's own values in the command's units (kV/m; C over
            // the column's cross-section, per m2 in the planar geometry).
            use crate::convergence::{
                level_overrides, run_level, Refinement, MAIN_NEGATIVE_CHARGE, PEAK_FIELD,
            };
            let scale = exp.field_solver.column_area().unwrap_or(1.0);
            let main_negative = tripole_table(&peak_regions)[0][0];
            let here = [s.peak_field.0 / 1e3, main_negative * scale];
            let (dt, dz) = (exp.schedule.dt, exp.grid.dz);
            for (i, refinement) in [Refinement::Time, Refinement::Space]
                .into_iter()
                .enumerate()
            {
                let mut levels = vec![here];
                for level in 1..3 {
                    let o = level_overrides(&overrides, dt, dz, refinement, level);
                    let fine = run_level(base_text, "error estimate", base_dir, &o)?;
                    if level == 1 {
                        watch.refined[i] = Some(Refined {
                            class: fine.structure,
                            flashes: fine.flash_counts,
                            flashing: fine.structure_while_flashing,
                        });
                    }
                    levels.push([fine.outcome(PEAK_FIELD), fine.outcome(MAIN_NEGATIVE_CHARGE)]);
                }
                for q in 0..2 {
                    let series: Vec<f64> = levels.iter().map(|l| l[q]).collect();
                    watch.error_estimate[q][i] = crate::convergence::richardson(&series).2;
                }
            }
        }
        Ok((s, watch, peak_regions, configuration))
    });
    match result {
        Ok((s, watch, peak_regions, configuration)) => {
            out.configuration = configuration;
            out.flash_counts = s.flash_counts;
            out.first_flash = s.first_flash.unwrap_or(f64::NAN);
            out.peak_field = s.peak_field.0;
            out.structure = classify(&peak_regions).name().into();
            out.max_separation = watch.peak.separation;
            out.max_separation_time = watch.peak.time;
            out.precipitation = s.precipitation;
            out.ion_neutralised = s.conduction.neutralised;
            let mut ratios = watch.ratios;
            out.initiation_ratio = spread(&mut ratios);
            out.regions = tripole_table(&peak_regions);
            out.ground_charge = s.ground_charge;
            out.model_time = s.model_time;
            out.column_area = watch.area;
            out.error_estimate = watch.error_estimate;
            for (i, r) in watch.refined.iter().enumerate() {
                if let Some(r) = r {
                    out.structure_refined[i] = r.class.name().into();
                    out.flash_counts_refined[i] = r.flashes.map(|n| n as f64);
                    out.structure_while_flashing_refined[i] =
                        r.flashing.map_or(String::new(), |c| c.name().into());
                }
            }
            out.charge_2p5mm = s.max_charge_2p5mm;
            out.channels_at_model_top = s.channels_at_model_top as f64;
            if let Some((class, share, _)) = majority_class(&watch.classes, watch.flash_span) {
                out.structure_while_flashing = class.name().into();
                out.structure_while_flashing_share = share;
            }
        }
        Err(e) => out.error = Some(e.to_string().replace('\n', " ")),
    }
    if out.error.is_none() {
        // The outcome beside the member's file, so that --resume can reuse
        // a complete member without reading its whole file back.
        // Best effort: without it --resume reruns the member.
        if let Ok(text) = serde_json::to_string(&out) {
            let _ =
                crate::output::write_atomically(&outcome_path(dir, member.index), text.as_bytes());
        }
    }
    out
}

/// The NetCDF file of member `index`.
pub fn member_path(dir: &Path, index: usize) -> PathBuf {
    dir.join(format!("member_{index:04}.nc"))
}

/// The outcome side file of member `index`.
pub fn outcome_path(dir: &Path, index: usize) -> PathBuf {
    dir.join(format!("member_{index:04}.outcome.json"))
}

/// The member number in a member file's name (`member_0012.nc` -> 12,
/// `member_10000.outcome.json` -> 10000): every digit after `member_`, as
/// [`member_path`] writes at least four.
fn member_index_of(name: &str) -> Option<usize> {
    let digits = name.strip_prefix("member_")?;
    let end = digits
        .find(|c: char| !c.is_ascii_digit())
        .unwrap_or(digits.len());
    digits[..end].parse().ok()
}

/// The outcome of a member that an earlier run of the same sweep completed:
/// its outcome side file names the same member and the fingerprint of the
/// configuration this member resolves to, and (with NetCDF member files)
/// its file is marked complete and stores exactly that configuration.
/// `None` when any of that does not hold (the member is run again).
pub fn reusable(
    base_text: &ConfigText,
    base_dir: &Path,
    member: &Member,
    dir: &Path,
    files: MemberFiles,
) -> Option<Outcome> {
    let mut overrides = member.overrides.clone();
    overrides.push("sweep.parameters=[]".into());
    let exp = Experiment::from_config_text(base_text, "resume", &overrides, base_dir).ok()?;
    let resolved = exp.config.to_toml();
    if files == MemberFiles::NetCdf {
        let (stored, status) =
            crate::output::reader::read_stored_configuration(&member_path(dir, member.index))
                .ok()?;
        if status != "complete" || resolved != stored {
            return None;
        }
    }
    let text = std::fs::read_to_string(outcome_path(dir, member.index)).ok()?;
    let outcome: Outcome = serde_json::from_str(&text).ok()?;
    (outcome.member == *member
        && outcome.error.is_none()
        && outcome.configuration == fingerprint(&resolved))
    .then_some(outcome)
}

/// Whether member `index` (from 1) belongs to shard (K, N): every N-th
/// member starting at the K-th, so the shards get members of every kind.
pub fn in_shard(index: usize, shard: Option<(usize, usize)>) -> bool {
    match shard {
        Some((k, n)) => (index - 1) % n == k - 1,
        None => true,
    }
}

/// Runs the members of shard `shard` = (K, N) (all when `None`) on `threads`
/// threads (0: all cores), calling `progress` after each member.
#[allow(clippy::too_many_arguments)]
pub fn run(
    base_text: &ConfigText,
    base_dir: &Path,
    members: &[Member],
    dir: &Path,
    threads: usize,
    shard: Option<(usize, usize)>,
    resume: bool,
    files: MemberFiles,
    progress: &(dyn Fn() + Sync),
) -> Result<Vec<Outcome>, RunError> {
    std::fs::create_dir_all(dir).map_err(|source| RunError::Io {
        context: format!("creating {}", dir.display()),
        source,
    })?;
    let chosen: Vec<&Member> = members
        .iter()
        .filter(|m| in_shard(m.index, shard))
        .collect();
    let pool = thread_pool(threads)?;
    let mut outcomes: Vec<Outcome> = crate::workers::each_in_order(&pool, &chosen, |m| {
        let o = resume
            .then(|| reusable(base_text, base_dir, m, dir, files))
            .flatten()
            .unwrap_or_else(|| run_member(base_text, base_dir, m, dir, files));
        progress();
        o
    });
    outcomes.sort_by_key(|o| o.member.index);
    Ok(outcomes)
}

/// A swept value as shown in summaries: TOML strings without their quotes.
fn shown(override_text: &str) -> &str {
    let v = override_text.split_once('=').map_or("", |(_, v)| v);
    v.strip_prefix('"')
        .and_then(|x| x.strip_suffix('"'))
        .unwrap_or(v)
}

/// A value of the summary: a number or a word.
#[derive(Debug, Clone, PartialEq)]
pub enum Cell {
    Number(f64),
    Text(String),
}

/// One outcome column of the summary: its CSV header (with units), its
/// NetCDF name, long name and units, and how to read it from an outcome.
pub struct OutcomeColumn {
    pub csv: String,
    pub name: String,
    pub long_name: String,
    pub units: &'static str,
    pub get: Box<dyn Fn(&Outcome) -> Cell>,
}

fn col(
    csv: &str,
    name: &str,
    long_name: &str,
    units: &'static str,
    get: impl Fn(&Outcome) -> Cell + 'static,
) -> OutcomeColumn {
    OutcomeColumn {
        csv: csv.into(),
        name: name.into(),
        long_name: long_name.into(),
        units,
        get: Box::new(get),
    }
}

/// The outcome columns of a sweep summary, in order; the CSV and NetCDF
/// summaries are both written from this one list.
pub fn outcome_columns() -> Vec<OutcomeColumn> {
    use Cell::{Number as N, Text as T};
    let mut v = vec![col("status", "status_text", "member status", "", |o| {
        T(if o.error.is_some() { "failed" } else { "ok" }.into())
    })];
    for (i, kind) in ["intracloud", "negative_ground", "positive_ground"]
        .into_iter()
        .enumerate()
    {
        v.push(col(
            &format!("flashes_{kind}"),
            &format!("flashes_{kind}"),
            &format!("{} flashes", kind.replace('_', " ")),
            "1",
            move |o| N(o.flash_counts[i] as f64),
        ));
    }
    for (i, kind) in ["intracloud", "negative_ground", "positive_ground"]
        .into_iter()
        .enumerate()
    {
        v.push(col(
            &format!("flash_rate_{kind}_per_min"),
            &format!("flash_rate_{kind}"),
            &format!("{} flashes per minute over the run", kind.replace('_', " ")),
            "min-1",
            move |o| N(o.flash_counts[i] as f64 / (o.model_time / 60.0)),
        ));
    }
    v.extend([
        col(
            "first_flash_s",
            "first_flash",
            "time of the first flash",
            "s",
            |o| N(o.first_flash),
        ),
        col(
            "ground_charge_C_m2",
            "ground_charge",
            "net charge lowered to ground by flashes, signed",
            "C m-2",
            |o| N(o.ground_charge),
        ),
        col(
            "peak_field_V_m",
            "peak_field",
            "largest |E_z| of the run",
            "V m-1",
            |o| N(o.peak_field),
        ),
        col(
            "structure_at_peak_separation",
            "structure",
            "charge structure at the largest separation",
            "",
            |o| T(o.structure.clone()),
        ),
        col(
            "structure_while_flashing",
            "structure_while_flashing",
            "charge structure most output records show from the first flash to the last (empty without flashes)",
            "",
            |o| T(o.structure_while_flashing.clone()),
        ),
        col(
            "structure_while_flashing_share",
            "structure_while_flashing_share",
            "share of the flashing stage's records in that structure",
            "1",
            |o| N(o.structure_while_flashing_share),
        ),
        col(
            "peak_separation_C_m2",
            "peak_separation",
            "largest charge of one sign in the column",
            "C m-2",
            |o| N(o.max_separation),
        ),
        col(
            "peak_separation_time_s",
            "peak_separation_time",
            "model time of the largest separation (watched every step)",
            "s",
            |o| N(o.max_separation_time),
        ),
    ]);
    for (r, label) in ["main_negative", "upper_positive", "lower_positive"]
        .into_iter()
        .enumerate()
    {
        let words = label.replace('_', " ");
        v.push(col(
            &format!("{label}_C_m2"),
            &format!("{label}_charge"),
            &format!("charge of the {words} region at the largest separation"),
            "C m-2",
            move |o| N(o.regions[r][0]),
        ));
        v.push(col(
            &format!("{label}_C"),
            &format!("{label}_charge_total"),
            &format!("charge of the {words} region in the finite column (NaN for planar layers)"),
            "C",
            move |o| N(o.regions[r][0] * o.column_area),
        ));
        v.push(col(
            &format!("{label}_height_m"),
            &format!("{label}_height"),
            &format!("charge-weighted height of the {words} region"),
            "m",
            move |o| N(o.regions[r][1]),
        ));
        v.push(col(
            &format!("{label}_temperature_degC"),
            &format!("{label}_temperature"),
            &format!("temperature at the height of the {words} region"),
            "degC",
            move |o| N(o.regions[r][2]),
        ));
    }
    v.extend([
        col(
            "precipitation_kg_m2",
            "precipitation",
            "accumulated surface precipitation",
            "kg m-2",
            |o| N(o.precipitation),
        ),
        col(
            "ion_neutralised_C_m2",
            "ion_neutralised",
            "particle charge neutralised by the capture of small ions",
            "C m-2",
            |o| N(o.ion_neutralised),
        ),
        col(
            "drop_2p5mm_charge_C",
            "drop_2p5mm_charge",
            "largest charge magnitude on a 2.5 mm drop over the run (charge shared over the size distribution by surface area; cells holding at least one drop of 2.5 mm or larger per m3)",
            "C",
            |o| N(o.charge_2p5mm[0]),
        ),
        col(
            "graupel_2p5mm_charge_C",
            "graupel_2p5mm_charge",
            "largest charge magnitude on a 2.5 mm graupel particle over the run (charge shared over the size distribution by surface area; cells holding at least one particle of 2.5 mm or larger per m3)",
            "C",
            |o| N(o.charge_2p5mm[1]),
        ),
    ]);
    for (q, what) in ["peak_field", "main_negative"].into_iter().enumerate() {
        for (i, refinement) in ["time", "space"].into_iter().enumerate() {
            v.push(col(
                &format!("error_{refinement}_{what}"),
                &format!("error_{refinement}_{what}"),
                &format!(
                    "estimated relative error of the {} of the member's own {}, from two halvings (the convergence command's Richardson estimate)",
                    what.replace('_', " "),
                    if i == 0 { "time step" } else { "grid spacing" }
                ),
                "1",
                move |o| N(o.error_estimate[q][i]),
            ));
        }
    }
    for (i, refinement) in ["half_step", "half_spacing"].into_iter().enumerate() {
        let what = refinement.replace('_', " ");
        v.push(col(
            &format!("structure_at_{refinement}"),
            &format!("structure_at_{refinement}"),
            &format!("structure class at the largest charge separation of the member at {what} (sweep.error_estimate)"),
            "",
            move |o| T(o.structure_refined[i].clone()),
        ));
        v.push(col(
            &format!("structure_while_flashing_at_{refinement}"),
            &format!("structure_while_flashing_at_{refinement}"),
            &format!("structure class most records of the flashing stage show, of the member at {what} (sweep.error_estimate; empty without flashes)"),
            "",
            move |o| T(o.structure_while_flashing_refined[i].clone()),
        ));
        v.push(col(
            &format!("flashes_at_{refinement}"),
            &format!("flashes_at_{refinement}"),
            &format!("flashes of all kinds of the member at {what} (sweep.error_estimate)"),
            "1",
            move |o| N(o.flash_counts_refined[i].iter().sum()),
        ));
        v.push(col(
            &format!("ground_flashes_at_{refinement}"),
            &format!("ground_flashes_at_{refinement}"),
            &format!("negative and positive ground flashes of the member at {what} (sweep.error_estimate)"),
            "1",
            move |o| N(o.flash_counts_refined[i][1] + o.flash_counts_refined[i][2]),
        ));
    }
    for (i, which) in ["min", "median", "max"].into_iter().enumerate() {
        v.push(col(
            &format!("initiation_over_runaway_{which}"),
            &format!("initiation_over_runaway_{which}"),
            &format!("{which} field at flash initiation over the runaway threshold"),
            "1",
            move |o| N(o.initiation_ratio[i]),
        ));
    }
    v.push(col(
        "flash_channels_at_model_top",
        "flash_channels_at_model_top",
        "flashes whose channel reached the model top (their extent depends on grid.top)",
        "1",
        |o| N(o.channels_at_model_top),
    ));
    v
}

/// A number with six significant digits (no more than the runs resolve),
/// without trailing zeros; NaN as "NaN".
pub fn rounded(x: f64) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    if x == 0.0 {
        return "0".into();
    }
    let digits = 6 - 1 - x.abs().log10().floor() as i32;
    if (1e-3..1e7).contains(&x.abs()) && (0..=15).contains(&digits) {
        let t = format!("{:.*}", digits as usize, x);
        if t.contains('.') {
            t.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            t
        }
    } else {
        // Mantissa without trailing zeros: 3.40839e-6, 1e7.
        let t = format!("{x:.5e}");
        match t.split_once('e') {
            Some((m, e)) if m.contains('.') => {
                format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.'))
            }
            _ => t,
        }
    }
}

/// The summary as CSV text: member, one column per swept key, outcomes.
pub fn summary_csv(keys: &[String], outcomes: &[Outcome]) -> String {
    let columns = outcome_columns();
    let mut s = String::from("member");
    for k in keys {
        s.push(',');
        s.push_str(k);
    }
    for c in &columns {
        s.push(',');
        s.push_str(&c.csv);
    }
    s.push_str(",error\n");
    for o in outcomes {
        s.push_str(&o.member.index.to_string());
        for ov in &o.member.overrides {
            s.push(',');
            s.push_str(&csv_field(shown(ov)));
        }
        for (i, c) in columns.iter().enumerate() {
            s.push(',');
            // A failed member has no outcome: empty fields, not zeros.
            if o.error.is_some() && i > 0 {
                continue;
            }
            match (c.get)(o) {
                Cell::Number(x) => s.push_str(&rounded(x)),
                Cell::Text(t) => s.push_str(&csv_field(&t)),
            }
        }
        s.push(',');
        s.push_str(&csv_field(o.error.as_deref().unwrap_or("")));
        s.push('\n');
    }
    s
}

/// FNV-1a 64-bit hash of a text (Fowler, Noll & Vo; the published offset
/// basis and prime), the fingerprint that ties shard summaries to one
/// configuration.
pub fn fingerprint(text: &str) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

/// The side file of a summary that `merge` checks: the configuration's
/// fingerprint, the sweep's member count and the members of this summary.
pub fn summary_meta(fingerprint: &str, total: usize, outcomes: &[Outcome]) -> String {
    let ids: Vec<String> = outcomes
        .iter()
        .map(|o| o.member.index.to_string())
        .collect();
    format!(
        "fingerprint {fingerprint}\nmembers {total}\nids {}\n",
        ids.join(",")
    )
}

/// File name of a summary's side file.
pub fn meta_name(summary: &str) -> String {
    summary.replace(".csv", ".meta")
}

/// Makes sure an earlier sweep's files in `dir` cannot be mixed with this
/// one's: this shard's member files, its summary and member files beyond
/// this sweep's count are removed with `overwrite` and refused otherwise.
/// Other shards' files of the same sweep are left alone.
pub fn prepare_directory(
    dir: &Path,
    members: &[Member],
    shard: Option<(usize, usize)>,
    summary: &str,
    overwrite: bool,
    resume: bool,
) -> Result<(), RunError> {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return Ok(()); // a new directory
    };
    let total = members.len();
    let mut stale = Vec::new();
    for entry in entries.flatten() {
        let path = entry.path();
        let name = path
            .file_name()
            .and_then(|n| n.to_str())
            .unwrap_or("")
            .to_string();
        let member = member_index_of(&name);
        let conflict = match member {
            // Resuming keeps this sweep's members (each is checked before
            // it is reused); members beyond its count are never its own.
            Some(i) => i > total || (in_shard(i, shard) && !resume),
            None if resume => false,
            None => {
                name == summary
                    || name == meta_name(summary)
                    || name == summary.replace(".csv", ".nc")
                    || (shard.is_none() && name.starts_with("summary"))
            }
        };
        if conflict {
            stale.push(path);
        }
    }
    if stale.is_empty() {
        return Ok(());
    }
    if !overwrite {
        return Err(RunError::Config(ConfigError::single(
            dir.display().to_string(),
            ConfigIssue::new(
                "--output",
                format!(
                    "holds {} files of an earlier sweep (e.g. {}); choose an empty directory or pass --overwrite to remove them",
                    stale.len(),
                    stale[0].display()
                ),
            ),
        )));
    }
    for p in stale {
        std::fs::remove_file(&p).map_err(|source| RunError::Io {
            context: format!("removing {}", p.display()),
            source,
        })?;
    }
    Ok(())
}

/// File name of a shard's summary.
pub fn shard_summary_name(shard: Option<(usize, usize)>) -> String {
    match shard {
        Some((k, n)) => format!("summary_shard_{k}_of_{n}.csv"),
        None => "summary.csv".into(),
    }
}

/// Joins the shard summaries in `dir` into `summary.csv`: every shard of the
/// same N must be present; rows are ordered by member.
pub fn merge(dir: &Path) -> Result<PathBuf, RunError> {
    let shards = shard_summaries(dir)?;
    let (header, rows) = shard_rows(dir, &shards)?;
    let (keys, outcomes) = outcomes_of_rows(dir, &header, &rows);
    let target = dir.join("summary.csv");
    crate::output::write_atomically(&target, summary_csv(&keys, &outcomes).as_bytes())?;
    write_summary_netcdf(&dir.join("summary.nc"), &keys, &outcomes)?;
    Ok(target)
}

/// An input or output error while `context` (what was being done).
fn io(context: String) -> impl FnOnce(std::io::Error) -> RunError {
    move |source| RunError::Io { context, source }
}

/// A usage error about the sharded sweep directory `dir`.
fn bad_shards(dir: &Path, msg: String) -> RunError {
    RunError::Config(ConfigError::single(
        dir.display().to_string(),
        ConfigIssue::new("DIR", msg),
    ))
}

/// The shard summaries `summary_shard_K_of_N.csv` in `dir` as (K, N, path),
/// checked to be shards 1 to N of one sweep, each once.
fn shard_summaries(dir: &Path) -> Result<Vec<(usize, usize, PathBuf)>, RunError> {
    let bad = |msg: String| bad_shards(dir, msg);
    let mut shards: Vec<(usize, usize, PathBuf)> = Vec::new();
    for entry in std::fs::read_dir(dir).map_err(io(format!("reading {}", dir.display())))? {
        let path = entry.map_err(io("listing".into()))?.path();
        let name = path
            .file_name()
            .and_then(|n| n.to_str())
            .unwrap_or("")
            .to_string();
        if let Some(rest) = name
            .strip_prefix("summary_shard_")
            .and_then(|r| r.strip_suffix(".csv"))
        {
            if let Some((k, n)) = rest.split_once("_of_") {
                if let (Ok(k), Ok(n)) = (k.parse(), n.parse()) {
                    shards.push((k, n, path));
                }
            }
        }
    }
    let Some(&(_, n, _)) = shards.first() else {
        return Err(bad("no summary_shard_K_of_N.csv files found".into()));
    };
    if shards.iter().any(|s| s.1 != n) {
        return Err(bad("shard summaries of different shard counts".into()));
    }
    for k in 1..=n {
        if !shards.iter().any(|s| s.0 == k) {
            return Err(bad(format!("shard {k} of {n} is missing")));
        }
    }
    if shards.len() != n {
        return Err(bad(format!(
            "{} summaries for {n} shards: a shard appears twice",
            shards.len()
        )));
    }
    Ok(shards)
}

/// The header and the member rows (index, line) of the shard summaries,
/// in member order, checked against each shard's side file (the same
/// sweep, no truncated or edited summary) and to cover members 1 to the
/// sweep's count exactly once.
fn shard_rows(
    dir: &Path,
    shards: &[(usize, usize, PathBuf)],
) -> Result<(String, Vec<(usize, String)>), RunError> {
    let bad = |msg: String| bad_shards(dir, msg);
    let mut header = None;
    let mut rows: Vec<(usize, String)> = Vec::new();
    let mut print: Option<(String, usize)> = None;
    for (_, _, path) in shards {
        let text =
            std::fs::read_to_string(path).map_err(io(format!("reading {}", path.display())))?;
        let meta_path = path.with_extension("meta");
        let meta = std::fs::read_to_string(&meta_path).map_err(|_| {
            bad(format!(
                "{} has no side file {} (written by the sweep with the summary)",
                path.display(),
                meta_path.display()
            ))
        })?;
        let field = |key: &str| {
            meta.lines()
                .find_map(|l| l.strip_prefix(&format!("{key} ")))
                .unwrap_or("")
                .to_string()
        };
        let (fp, total) = (
            field("fingerprint"),
            field("members").parse::<usize>().unwrap_or(0),
        );
        match &print {
            None => print = Some((fp.clone(), total)),
            Some((f, t)) if *f != fp || *t != total => {
                return Err(bad(format!(
                    "{} belongs to another sweep (configuration fingerprint or member count differs)",
                    path.display()
                )));
            }
            _ => {}
        }
        let ids: Vec<usize> = field("ids")
            .split(',')
            .filter_map(|x| x.parse().ok())
            .collect();
        let mut lines = text.lines();
        let h = lines.next().unwrap_or("").to_string();
        if header.get_or_insert_with(|| h.clone()) != &h {
            return Err(bad(format!("{} has a different header", path.display())));
        }
        let mut found = Vec::new();
        for line in lines {
            let idx = line
                .split(',')
                .next()
                .and_then(|x| x.parse().ok())
                .unwrap_or(0);
            found.push(idx);
            rows.push((idx, line.to_string()));
        }
        if found != ids {
            return Err(bad(format!(
                "{} holds {} rows where its side file lists {} members: it is truncated or was edited",
                path.display(),
                found.len(),
                ids.len()
            )));
        }
    }
    rows.sort_by_key(|r| r.0);
    let total = print.map_or(0, |p| p.1);
    let expected: Vec<usize> = (1..=total).collect();
    if rows.iter().map(|r| r.0).collect::<Vec<_>>() != expected {
        return Err(bad(format!(
            "the shards do not hold members 1 to {total} exactly once"
        )));
    }
    Ok((header.unwrap_or_default(), rows))
}

/// The members' outcomes for the merged summary, the same an unsharded
/// sweep writes: each member's outcome file, or for a failed member (which
/// has none) its row of the shard summary; with the sweep's keys, read
/// from the header.
fn outcomes_of_rows(
    dir: &Path,
    header: &str,
    rows: &[(usize, String)],
) -> (Vec<String>, Vec<Outcome>) {
    let head = csv_fields(header);
    let n_keys = head
        .iter()
        .position(|h| h == "status")
        .map_or(0, |p| p.saturating_sub(1));
    let keys: Vec<String> = head[1..1 + n_keys].to_vec();
    let mut outcomes = Vec::with_capacity(rows.len());
    for (idx, line) in rows {
        let stored = std::fs::read_to_string(outcome_path(dir, *idx))
            .ok()
            .and_then(|t| serde_json::from_str::<Outcome>(&t).ok());
        let o = match stored {
            Some(o) => o,
            None => {
                let f = csv_fields(line);
                let overrides = keys
                    .iter()
                    .zip(f.iter().skip(1))
                    .map(|(k, v)| format!("{k}={v}"))
                    .collect();
                let mut o = failed_outcome(Member {
                    index: *idx,
                    overrides,
                });
                o.error = Some(f.last().cloned().unwrap_or_default());
                o
            }
        };
        outcomes.push(o);
    }
    (keys, outcomes)
}

/// Writes the summary as NetCDF: dimension `member` with the member numbers
/// as its coordinate; each swept key as a variable named after it (dots as
/// underscores, the key in the `key` attribute): numbers where every value
/// is one, with the key's units, otherwise text; then the outcome columns of
/// [`outcome_columns`], numbers as doubles (NaN, the fill value, for a
/// failed member) and words as text; `status` 0 ok / 1 failed.
///
/// Every variable is defined before any value is written, and each text
/// variable is written in one call (`put_strings`): a sweep writes the
/// summary after its last member, on one thread, so its cost is not shared
/// (measured on a six-member summary: 82 -> 37 million instructions).
pub fn write_summary_netcdf(
    path: &Path,
    keys: &[String],
    outcomes: &[Outcome],
) -> Result<(), RunError> {
    let e = |m: netcdf::Error| RunError::Output {
        context: format!("sweep summary {}", path.display()),
        message: m.to_string(),
    };
    // The variables, in file order: name, attributes, values.
    let mut planned: Vec<SummaryVariable> = Vec::new();
    planned.push((
        "member".into(),
        vec![("long_name", SummaryAttribute::Text("member number".into()))],
        SummaryValues::Integers(outcomes.iter().map(|o| o.member.index as i32).collect()),
    ));
    planned.push((
        "status".into(),
        vec![
            ("flag_values", SummaryAttribute::Integers(vec![0, 1])),
            ("flag_meanings", SummaryAttribute::Text("ok failed".into())),
        ],
        SummaryValues::Integers(
            outcomes
                .iter()
                .map(|o| i32::from(o.error.is_some()))
                .collect(),
        ),
    ));
    for (i, key) in keys.iter().enumerate() {
        let texts: Vec<&str> = outcomes
            .iter()
            .map(|o| shown(&o.member.overrides[i]))
            .collect();
        let numbers: Option<Vec<f64>> = texts.iter().map(|t| t.parse::<f64>().ok()).collect();
        let mut attributes = vec![("key", SummaryAttribute::Text(key.clone()))];
        let values = match numbers {
            Some(values) => {
                let units = crate::setup::config::schema::find(key).map_or("", |k| k.unit);
                if !units.is_empty() {
                    attributes.push(("units", SummaryAttribute::Text(units.into())));
                }
                SummaryValues::Numbers(values)
            }
            None => SummaryValues::Texts(texts.iter().map(|t| t.to_string()).collect()),
        };
        planned.push((key.replace('.', "_"), attributes, values));
    }
    for c in outcome_columns().iter().skip(1) {
        let cells: Vec<Cell> = outcomes.iter().map(|o| (c.get)(o)).collect();
        let long_name = ("long_name", SummaryAttribute::Text(c.long_name.clone()));
        if cells.iter().all(|x| matches!(x, Cell::Number(_))) {
            // A failed member has no outcome: the CF fill value, not a zero.
            let data: Vec<f64> = outcomes
                .iter()
                .zip(&cells)
                .map(|(o, x)| match x {
                    Cell::Number(n) if o.error.is_none() => *n,
                    _ => f64::NAN,
                })
                .collect();
            planned.push((
                c.name.clone(),
                vec![
                    long_name,
                    ("units", SummaryAttribute::Text(c.units.into())),
                    ("_FillValue", SummaryAttribute::Number(f64::NAN)),
                ],
                SummaryValues::Numbers(data),
            ));
        } else {
            let texts = cells
                .iter()
                .map(|x| match x {
                    Cell::Text(t) => t.clone(),
                    Cell::Number(n) => rounded(*n),
                })
                .collect();
            planned.push((c.name.clone(), vec![long_name], SummaryValues::Texts(texts)));
        }
    }
    planned.push((
        "error".into(),
        Vec::new(),
        SummaryValues::Texts(
            outcomes
                .iter()
                .map(|o| o.error.clone().unwrap_or_default())
                .collect(),
        ),
    ));

    crate::output::quiet_library_diagnostics();
    let mut f = netcdf::create(path).map_err(e)?;
    f.add_dimension("member", outcomes.len()).map_err(e)?;
    f.add_attribute("Conventions", "CF-1.10").map_err(e)?;
    f.add_attribute("title", "stormcharge sweep summary")
        .map_err(e)?;
    f.add_attribute(
        "source",
        format!("stormcharge {}", env!("CARGO_PKG_VERSION")),
    )
    .map_err(e)?;
    for (name, attributes, values) in &planned {
        let mut v = match values {
            SummaryValues::Integers(_) => f.add_variable::<i32>(name, &["member"]),
            SummaryValues::Numbers(_) => f.add_variable::<f64>(name, &["member"]),
            SummaryValues::Texts(_) => f.add_string_variable(name, &["member"]),
        }
        .map_err(e)?;
        for (attribute, value) in attributes {
            match value {
                SummaryAttribute::Text(t) => v.put_attribute(attribute, t.as_str()),
                SummaryAttribute::Integers(x) => v.put_attribute(attribute, x.clone()),
                SummaryAttribute::Number(x) => v.put_attribute(attribute, *x),
            }
            .map_err(e)?;
        }
    }
    for (name, _, values) in &planned {
        let mut v = f.variable_mut(name).ok_or_else(|| RunError::Output {
            context: format!("sweep summary {}", path.display()),
            message: format!("variable {name} missing"),
        })?;
        match values {
            SummaryValues::Integers(x) => v.put_values(x, ..).map_err(e)?,
            SummaryValues::Numbers(x) => v.put_values(x, ..).map_err(e)?,
            SummaryValues::Texts(x) => put_strings(&mut v, x).map_err(e)?,
        }
    }
    Ok(())
}

/// A NetCDF `string` value as the library takes it: a pointer to a
/// NUL-terminated text.
#[repr(transparent)]
struct TextPointer(*const std::ffi::c_char);

// SAFETY: a transparent wrapper of one C string pointer, which is the
// in-memory form of the NetCDF string type (netcdf crate, types module);
// only written, never read back into this type.
unsafe impl netcdf::types::NcTypeDescriptor for TextPointer {
    fn type_descriptor() -> netcdf::types::NcVariableType {
        netcdf::types::NcVariableType::String
    }
}

/// Writes every member's text of a one-dimensional string variable in one
/// library call. One call per value cost about 2 million instructions each
/// (an HDF5 write of one variable-length element), most of a sweep
/// summary's writing.
fn put_strings(v: &mut netcdf::VariableMut<'_>, texts: &[String]) -> Result<(), netcdf::Error> {
    // A NUL inside a text cannot be stored in a C string: the text ends
    // there (one value at a time refused the whole summary instead).
    let owned: Vec<std::ffi::CString> = texts
        .iter()
        .map(|t| {
            let end = t.find('\0').unwrap_or(t.len());
            std::ffi::CString::new(&t[..end]).unwrap_or_default()
        })
        .collect();
    let pointers: Vec<TextPointer> = owned.iter().map(|c| TextPointer(c.as_ptr())).collect();
    // `owned` outlives the call, so every pointer is valid while it runs.
    v.put_values(&pointers, ..)
}

/// A variable of the summary: name, attributes, values.
type SummaryVariable = (String, Vec<(&'static str, SummaryAttribute)>, SummaryValues);

/// An attribute of a summary variable.
enum SummaryAttribute {
    Text(String),
    Integers(Vec<i32>),
    Number(f64),
}

/// The values of a summary variable, one per member.
enum SummaryValues {
    Integers(Vec<i32>),
    Numbers(Vec<f64>),
    Texts(Vec<String>),
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Member files past 9999 have five digits; all of them name the
    /// member (the first four alone made member 10000 look like member 1000
    /// when a directory was prepared). Common practice: the names the
    /// writer gives are read back whole.
    #[test]
    fn member_numbers_are_read_whole() {
        let dir = Path::new("d");
        for index in [1, 12, 999, 9999, 10000, 12345, 100_000] {
            for path in [member_path(dir, index), outcome_path(dir, index)] {
                let name = path.file_name().and_then(|n| n.to_str()).unwrap();
                assert_eq!(member_index_of(name), Some(index), "{name}");
            }
        }
        for other in [
            "summary.csv",
            "member_.nc",
            "member_x1.nc",
            "members_0001.nc",
        ] {
            assert_eq!(member_index_of(other), None, "{other}");
        }
    }
}
