//! Charge-structure analysis of a profile: charge regions and the structure
//! class (normal tripole, inverted, dipole, other).
//!
//! A region is a run of contiguous cells whose total charge density has one
//! sign and a magnitude of at least `min_fraction` of the profile's largest
//! |rho|. Regions holding less than `min_fraction` of the largest region's
//! charge are dropped (they are edges and noise, not structure), and
//! neighbours of the same sign left adjacent by a dropped region are merged.
//! The rules are this project's own, stated in docs/charging.md; the class
//! names follow the usage of the trade (Williams 1989, JGR 94, for the
//! tripole; inverted structures e.g. Fuchs et al. 2018).

/// One charge region.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Region {
    /// +1 or -1.
    pub polarity: f64,
    /// Lower and upper edges (m).
    pub bottom: f64,
    pub top: f64,
    /// Charge-weighted mean height (m) and the temperature there (degC).
    pub height: f64,
    pub temperature: f64,
    /// Charge per unit area (C m-2), signed.
    pub charge: f64,
}

/// Structure classes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Structure {
    /// Main negative with positive above and a smaller positive below.
    NormalTripole,
    /// Main positive with negative above and a smaller negative below.
    InvertedTripole,
    /// Positive above negative only.
    NormalDipole,
    /// Negative above positive only.
    InvertedDipole,
    /// Main negative with positive above and below, the lower positive
    /// region the larger of the two: a tripole with an enhanced lower
    /// positive charge region (the term of observational studies of storms
    /// with a strong lower positive region, e.g. Qie et al. 2005, GRL 32,
    /// from memory). In a flashing storm it appears just after intracloud
    /// flashes have drained the upper positive region.
    EnhancedLowerTripole,
    /// Anything else.
    Other,
    /// No charge density above [`NOISE_FLOOR`] anywhere.
    Uncharged,
}

/// Charge density (C m-3) below which a profile counts as uncharged:
/// 0.01 nC m-3, a twentieth of the weakest charge region balloon soundings
/// report (0.2 nC m-3, Marshall & Rust 1991, docs/references.md), far above
/// round-off and below any storm's regions.
pub const NOISE_FLOOR: f64 = 1e-11;

impl Structure {
    pub fn name(self) -> &'static str {
        match self {
            Structure::NormalTripole => "normal_tripole",
            Structure::InvertedTripole => "inverted_tripole",
            Structure::NormalDipole => "normal_dipole",
            Structure::InvertedDipole => "inverted_dipole",
            Structure::EnhancedLowerTripole => "enhanced_lower_tripole",
            Structure::Other => "other",
            Structure::Uncharged => "uncharged",
        }
    }
}

/// Charge regions of a profile: `z` cell centres (m), `dz` (m), `rho` total
/// charge density (C m-3), `t` temperature (K).
pub fn regions(z: &[f64], dz: f64, rho: &[f64], t: &[f64], min_fraction: f64) -> Vec<Region> {
    let peak = rho.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
    if peak < NOISE_FLOOR {
        return Vec::new();
    }
    let floor = min_fraction * peak;
    let mut raw: Vec<(usize, usize)> = Vec::new(); // cell ranges [a, b)
    let mut k = 0;
    while k < rho.len() {
        if rho[k].abs() < floor {
            k += 1;
            continue;
        }
        let s = rho[k].signum();
        let a = k;
        while k < rho.len() && rho[k].abs() >= floor && rho[k].signum() == s {
            k += 1;
        }
        raw.push((a, k));
    }
    let build = |a: usize, b: usize| {
        let q: f64 = rho[a..b].iter().sum::<f64>() * dz;
        let w: f64 = rho[a..b].iter().map(|x| x.abs()).sum();
        let h = (a..b).map(|i| z[i] * rho[i].abs()).sum::<f64>() / w;
        let tc = (a..b).map(|i| t[i] * rho[i].abs()).sum::<f64>() / w
            - crate::physics::constants::T_MELT;
        Region {
            polarity: q.signum(),
            bottom: z[a] - 0.5 * dz,
            top: z[b - 1] + 0.5 * dz,
            height: h,
            temperature: tc,
            charge: q,
        }
    };
    let all: Vec<(usize, usize, f64)> = raw
        .iter()
        .map(|&(a, b)| (a, b, build(a, b).charge))
        .collect();
    let biggest = all.iter().fold(0.0_f64, |m, r| m.max(r.2.abs()));
    let mut kept: Vec<(usize, usize)> = Vec::new();
    for &(a, b, q) in &all {
        if q.abs() < min_fraction * biggest {
            continue;
        }
        if let Some(last) = kept.last_mut() {
            let same = rho[last.0].signum() == rho[a].signum();
            if same {
                last.1 = b;
                continue;
            }
        }
        kept.push((a, b));
    }
    kept.into_iter().map(|(a, b)| build(a, b)).collect()
}

/// The region of largest charge of one polarity (+1.0 or -1.0), if any.
pub fn main_region(regions: &[Region], polarity: f64) -> Option<&Region> {
    regions
        .iter()
        .filter(|r| r.polarity == polarity)
        .max_by(|a, b| a.charge.abs().total_cmp(&b.charge.abs()))
}

/// Structure class of regions ordered bottom to top. With N the region of
/// largest negative charge and P the region of largest positive charge:
/// P above N is the normal family, a tripole when some positive region
/// below N holds less charge than N, a dipole otherwise. P below N with a
/// positive region above N as well is a tripole whose lower positive
/// region is the larger ([`Structure::EnhancedLowerTripole`]; until
/// 2026-12-03 it was called an inverted dipole, against that class's own
/// definition, negative above positive only). Otherwise N above P is the
/// inverted family, a tripole when some negative region below P holds less
/// charge than P. Only one polarity: other.
pub fn classify(regions: &[Region]) -> Structure {
    if regions.is_empty() {
        return Structure::Uncharged;
    }
    let (Some(n), Some(p)) = (main_region(regions, -1.0), main_region(regions, 1.0)) else {
        return Structure::Other;
    };
    if p.height > n.height {
        let lower = regions
            .iter()
            .any(|r| r.polarity > 0.0 && r.top <= n.bottom && r.charge.abs() < n.charge.abs());
        if lower {
            Structure::NormalTripole
        } else {
            Structure::NormalDipole
        }
    } else if regions
        .iter()
        .any(|r| r.polarity > 0.0 && r.bottom >= n.top)
    {
        Structure::EnhancedLowerTripole
    } else {
        let lower = regions
            .iter()
            .any(|r| r.polarity < 0.0 && r.top <= p.bottom && r.charge.abs() < p.charge.abs());
        if lower {
            Structure::InvertedTripole
        } else {
            Structure::InvertedDipole
        }
    }
}

/// The three regions of a normal tripole in `regions`: the main negative
/// region, the largest positive region above it and the largest below it
/// (each `None` when absent).
pub fn tripole_regions(regions: &[Region]) -> [Option<Region>; 3] {
    let neg = main_region(regions, -1.0).copied();
    let pick = |above: bool| -> Option<Region> {
        let n = neg?;
        regions
            .iter()
            .filter(|x| x.polarity > 0.0 && (x.height > n.height) == above)
            .max_by(|a, b| a.charge.abs().total_cmp(&b.charge.abs()))
            .copied()
    };
    [neg, pick(true), pick(false)]
}

/// Total charge of one sign in the column (C m-2): half the integral of |rho|,
/// the "charge separation" of a profile.
pub fn separation(rho: &[f64], dz: f64) -> f64 {
    0.5 * rho.iter().map(|x| x.abs()).sum::<f64>() * dz
}

/// The largest charge separation of a running experiment, its time and the
/// profiles then. Watched wherever the time loop shows an observer's
/// `stepped` (the initial state, every step, and just before every flash):
/// in a flashing storm the separation is a sawtooth that peaks just before
/// each flash, and
/// records every output interval would sample it at an arbitrary phase
/// (docs/numerics.md). A new peak copies the charge and temperature
/// profiles into buffers kept from the first one, so watching allocates
/// nothing after it; the regions are found once, at the end
/// ([`Self::regions`]).
#[derive(Debug, Clone, Default)]
pub struct PeakSeparation {
    /// Largest separation so far (C m-2; 0 before any charge).
    pub separation: f64,
    /// Model time (s) it was reached.
    pub time: f64,
    /// Charge density (C m-3) and temperature (K) of every cell then.
    charge: Vec<f64>,
    temperature: Vec<f64>,
}

impl PeakSeparation {
    /// Takes the state in if its separation beats the largest so far.
    pub fn watch(
        &mut self,
        exp: &crate::setup::experiment::Experiment,
        state: &crate::column::state::State,
    ) {
        let sep = separation(&state.charge_total, exp.grid.dz);
        if sep > self.separation {
            self.separation = sep;
            self.time = state.time;
            self.charge.clear();
            self.charge.extend_from_slice(&state.charge_total);
            self.temperature.clear();
            self.temperature
                .extend((0..state.charge_total.len()).map(|k| state.temperature(exp, k)));
        }
    }

    /// The charge regions at the largest separation (bottom to top; empty
    /// before any charge).
    pub fn regions(&self, exp: &crate::setup::experiment::Experiment) -> Vec<Region> {
        if self.charge.is_empty() {
            return Vec::new();
        }
        regions(
            &exp.grid.z,
            exp.grid.dz,
            &self.charge,
            &self.temperature,
            0.1,
        )
    }
}

/// Charge regions of one output record.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct RecordReport {
    /// Model time (s).
    pub time: f64,
    pub structure: String,
    /// Charge of one sign in the column (C m-2).
    pub separation: f64,
    pub regions: Vec<RegionReport>,
}

/// One region for reports (heights m, temperature degC, charge C m-2 and C).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct RegionReport {
    pub polarity: String,
    pub height: f64,
    pub bottom: f64,
    pub top: f64,
    pub thickness: f64,
    pub temperature: f64,
    pub charge_per_area: f64,
    /// Charge in the finite column (C), when the geometry has one.
    pub charge: Option<f64>,
}

/// Flash statistics of a run.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FlashReport {
    pub count_intracloud: usize,
    pub count_negative_ground: usize,
    pub count_positive_ground: usize,
    /// Flashes per minute over the run, by kind.
    pub rate_per_minute: [f64; 3],
    pub first_flash_time: Option<f64>,
    /// Mean charge neutralised (C m-2) and energy (J m-2) per flash.
    pub mean_charge_per_area: Option<f64>,
    pub mean_energy_per_area: Option<f64>,
    /// The same in C and J for a finite column.
    pub mean_charge: Option<f64>,
    pub mean_energy: Option<f64>,
    /// Per flash: time (s), |E| at initiation over the runaway threshold,
    /// and the criteria that held.
    pub initiation: Vec<FlashInitiation>,
    /// Flashes whose negative end pointed down (started below a negative
    /// region, as a negative ground flash must) and up; `None` for files
    /// without the end lengths.
    pub negative_end_down: Option<(usize, usize)>,
    /// Channel potential as a floating conductor (V): median, lowest,
    /// highest; `None` without flashes or for files without it.
    pub channel_potential: Option<(f64, f64, f64)>,
    /// Flashes whose channel reached the model top (the file's last
    /// face), whose extent and potential then depend on `grid.top`.
    pub at_model_top: usize,
    /// Temperature (degC) at the flashes' negative and positive charge
    /// centres (the centroids of the charge each flash neutralised):
    /// median, lowest, highest over the flashes that had one; `None`
    /// without them or for files without the variables.
    pub negative_charge_temperature: Option<(f64, f64, f64)>,
    pub positive_charge_temperature: Option<(f64, f64, f64)>,
}

/// What held when one flash started.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FlashInitiation {
    pub time: f64,
    pub over_runaway: f64,
    pub criteria_met: Vec<String>,
}

/// Everything `stormcharge analyze` reports.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Report {
    pub file: String,
    pub records: Vec<RecordReport>,
    pub flashes: FlashReport,
    /// The class most records from the first flash to the last show, the
    /// share of those records in it and their number; `None` without
    /// flashes.
    pub structure_while_flashing: Option<(String, f64, usize)>,
}

fn mean(v: &[f64]) -> Option<f64> {
    (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64)
}

/// Analyses an output file at the record nearest each of `times` (s), or at
/// the record of largest charge separation when `times` is empty.
pub fn analyze_file(
    path: &std::path::Path,
    times: &[f64],
) -> Result<Report, crate::error::RunError> {
    let out = crate::output::reader::OutputFile::open(path)?;
    for w in out.usable(&["charge_density", "air_temperature", "electric_field"])? {
        eprintln!("stormcharge: warning: {w}");
    }
    let get = |name: &str| out.values(name);
    let z = get("z")?;
    let time = get("time")?;
    let rho = get("charge_density")?;
    let temp = get("air_temperature")?;
    let n = z.len();
    let dz = if n > 1 { z[1] - z[0] } else { 1.0 };
    let area = column_area(&out, path);
    let record = |r: usize| &rho[r * n..(r + 1) * n];
    let chosen: Vec<usize> = if times.is_empty() {
        let best = (0..time.len())
            .max_by(|&a, &b| separation(record(a), dz).total_cmp(&separation(record(b), dz)))
            .unwrap_or(0);
        vec![best]
    } else {
        times
            .iter()
            .map(|&t| {
                (0..time.len())
                    .min_by(|&a, &b| (time[a] - t).abs().total_cmp(&(time[b] - t).abs()))
                    .unwrap_or(0)
            })
            .collect()
    };
    // The charge regions of every record, found once: the chosen records
    // report them, the flashing stage's class is read from them all.
    let all_regions: Vec<Vec<Region>> = (0..time.len())
        .map(|r| regions(&z, dz, record(r), &temp[r * n..(r + 1) * n], 0.1))
        .collect();
    let records = chosen
        .into_iter()
        .map(|r| {
            let regs = &all_regions[r];
            RecordReport {
                time: time[r],
                structure: classify(regs).name().into(),
                separation: separation(record(r), dz),
                regions: regs
                    .iter()
                    .map(|g| RegionReport {
                        polarity: if g.polarity > 0.0 {
                            "positive"
                        } else {
                            "negative"
                        }
                        .into(),
                        height: g.height,
                        bottom: g.bottom,
                        top: g.top,
                        thickness: g.top - g.bottom,
                        temperature: g.temperature,
                        charge_per_area: g.charge,
                        charge: area.map(|a| g.charge * a),
                    })
                    .collect(),
            }
        })
        .collect();
    let duration = time.last().copied().unwrap_or(0.0);
    let flashes = flash_report(&out, duration, area)?;
    // The structure while the storm flashes, as the sweep summary gives it
    // (flashes are written in the order they happen).
    let span = flashes
        .first_flash_time
        .zip(flashes.initiation.last().map(|f| f.time));
    let classes: Vec<(f64, Structure)> = (0..time.len())
        .map(|r| (time[r], classify(&all_regions[r])))
        .collect();
    let structure_while_flashing = majority_class(&classes, span)
        .map(|(c, share, records)| (c.name().to_string(), share, records));
    Ok(Report {
        file: path.display().to_string(),
        structure_while_flashing,
        records,
        flashes,
    })
}

/// The column's cross-section (m2) from the configuration stored in the
/// file, for charges in coulombs; None for planar runs or a stored
/// configuration this version cannot read (said in a warning).
fn column_area(out: &crate::output::reader::OutputFile, path: &std::path::Path) -> Option<f64> {
    let stored = out
        .text(crate::output::reader::CONFIG_ATTRIBUTE)
        .and_then(|s| match crate::setup::config::parse(&s, "stored") {
            Ok(c) => Some(c),
            Err(e) => {
                // A file written by another version may hold keys this one
                // rejects: say so rather than drop the column charges silently.
                eprintln!(
                    "stormcharge: warning: the run configuration stored in {} could not be read ({e}); region charges are given per area only",
                    path.display()
                );
                None
            }
        });
    stored.and_then(|c| {
        (c.electrostatics.geometry == crate::setup::config::Geometry::Column)
            .then(|| std::f64::consts::PI * c.column.radius.powi(2))
    })
}

/// The flash statistics of a file: counts and rates by kind over its
/// `duration` (s), charge and energy per flash (in coulombs and joules
/// where the column's `area` is known), each flash's initiation, its
/// channel's ends and potential, and the temperatures of the charge it
/// neutralised.
fn flash_report(
    out: &crate::output::reader::OutputFile,
    duration: f64,
    area: Option<f64>,
) -> Result<FlashReport, crate::error::RunError> {
    let kinds: Vec<i32> = out.optional("flash_kind")?;
    let flash_f64 = |name: &str| out.optional::<f64>(name);
    let duration_min = duration / 60.0;
    let count = |k: i32| kinds.iter().filter(|&&x| x == k).count();
    let counts = [count(1), count(2), count(3)];
    let rate = counts.map(|c| {
        if duration_min > 0.0 {
            c as f64 / duration_min
        } else {
            0.0
        }
    });
    let charge = flash_f64("flash_charge_neutralized")?;
    let energy = flash_f64("flash_energy")?;
    let times = flash_f64("flash_time")?;
    let first_flash_time = times.first().copied();
    let over_runaway = flash_f64("flash_ratio_runaway_avalanche")?;
    let mut met: Vec<(String, Vec<f64>)> = Vec::new();
    for c in crate::physics::breakdown::Criterion::ALL {
        met.push((
            c.name().to_string(),
            out.optional::<f64>(&format!("flash_criterion_{}", c.name()))?,
        ));
    }
    let (z_init, z_bottom, negative_end) = (
        flash_f64("flash_z_init")?,
        flash_f64("flash_z_bottom")?,
        flash_f64("flash_negative_end_length")?,
    );
    let negative_end_down = (!negative_end.is_empty()
        && negative_end.len() == z_init.len()
        && z_init.len() == z_bottom.len())
    .then(|| {
        // The negative end is the lower one when its length is the distance
        // from the initiation height down to the channel's bottom.
        let down = negative_end
            .iter()
            .zip(z_init.iter().zip(&z_bottom))
            .filter(|(n, (zi, zb))| (**n - (**zi - **zb)).abs() <= 1e-6 * zi.abs().max(1.0))
            .count();
        (down, negative_end.len() - down)
    });
    let channel_potential = median_range(flash_f64("flash_channel_potential")?);
    let lid = flash_f64("z_face")?.last().copied();
    let tops = flash_f64("flash_z_top")?;
    let at_model_top = lid.map_or(0, |lid| tops.iter().filter(|&&z| z >= lid).count());
    // Missing centres (NaN) are the flashes that neutralised no charge of
    // that sign.
    let centre = |name: &str| -> Result<Option<(f64, f64, f64)>, crate::error::RunError> {
        Ok(median_range(
            flash_f64(name)?
                .into_iter()
                .filter(|x| x.is_finite())
                .map(|x| x - crate::physics::constants::T_MELT)
                .collect(),
        ))
    };
    let negative_charge_temperature = centre("flash_temperature_negative_charge")?;
    let positive_charge_temperature = centre("flash_temperature_positive_charge")?;
    let initiation = times
        .iter()
        .enumerate()
        .map(|(i, &time)| FlashInitiation {
            time,
            over_runaway: over_runaway.get(i).copied().unwrap_or(f64::NAN),
            criteria_met: met
                .iter()
                .filter(|(_, v)| v.get(i).is_some_and(|&x| x > 0.5))
                .map(|(n, _)| n.clone())
                .collect(),
        })
        .collect();
    Ok(FlashReport {
        count_intracloud: counts[0],
        count_negative_ground: counts[1],
        count_positive_ground: counts[2],
        rate_per_minute: rate,
        first_flash_time,
        mean_charge_per_area: mean(&charge),
        mean_energy_per_area: mean(&energy),
        mean_charge: mean(&charge).zip(area).map(|(m, a)| m * a),
        mean_energy: mean(&energy).zip(area).map(|(m, a)| m * a),
        initiation,
        negative_end_down,
        channel_potential,
        at_model_top,
        negative_charge_temperature,
        positive_charge_temperature,
    })
}

impl Report {
    /// Human-readable text.
    pub fn text(&self) -> String {
        let mut s = format!("{}\n", self.file);
        for r in &self.records {
            s.push_str(&format!(
                "t = {} s: {} (charge of one sign {:.3e} C m-2)\n",
                r.time, r.structure, r.separation
            ));
            for g in &r.regions {
                s.push_str(&format!(
                    "  {:<8} {:>7.0} m ({:.0}-{:.0} m, {:.0} m thick) {:>6.1} degC  {:+.3e} C m-2",
                    g.polarity,
                    g.height,
                    g.bottom,
                    g.top,
                    g.thickness,
                    g.temperature,
                    g.charge_per_area
                ));
                if let Some(c) = g.charge {
                    s.push_str(&format!("  {c:+.1} C"));
                }
                s.push('\n');
            }
        }
        let fl = &self.flashes;
        s.push_str(&format!(
            "flashes: {} intracloud, {} negative ground, {} positive ground ({:.2}, {:.2}, {:.2} per minute)\n",
            fl.count_intracloud,
            fl.count_negative_ground,
            fl.count_positive_ground,
            fl.rate_per_minute[0],
            fl.rate_per_minute[1],
            fl.rate_per_minute[2]
        ));
        if let Some(t) = fl.first_flash_time {
            s.push_str(&format!("first flash at {t:.2} s\n"));
        }
        if let Some((class, share, records)) = &self.structure_while_flashing {
            s.push_str(&format!(
                "while the storm flashes: {class} in {:.0} % of the {records} records from the first flash to the last\n",
                100.0 * share
            ));
        }
        if let (Some(q), Some(w)) = (fl.mean_charge_per_area, fl.mean_energy_per_area) {
            s.push_str(&format!("mean per flash: {q:.3e} C m-2, {w:.3e} J m-2"));
            if let (Some(qc), Some(wc)) = (fl.mean_charge, fl.mean_energy) {
                s.push_str(&format!(" ({qc:.1} C, {wc:.2e} J)"));
            }
            s.push('\n');
        }
        if let (Some((down, up)), Some((mid, lo, hi))) =
            (fl.negative_end_down, fl.channel_potential)
        {
            s.push_str(&format!(
                "channels: {down} with the negative end down (started below a negative region), {up} with it up; \
                 potential as a floating conductor median {:.1} MV ({:.1} to {:.1} MV)\n",
                mid / 1e6,
                lo / 1e6,
                hi / 1e6
            ));
        }
        if fl.at_model_top > 0 {
            s.push_str(&format!(
                "{} of the channels reached the model top: their length and potential depend on grid.top (docs/discharge.md, \"Channels that reach the model top\")\n",
                fl.at_model_top
            ));
        }
        let centre = |t: Option<(f64, f64, f64)>| {
            t.map_or("none".to_string(), |(mid, lo, hi)| {
                format!("median {mid:.1} degC ({lo:.1} to {hi:.1} degC)")
            })
        };
        if fl.negative_charge_temperature.is_some() || fl.positive_charge_temperature.is_some() {
            s.push_str(&format!(
                "flash charge centres (centroids of the charge each flash neutralised): negative {}, positive {}\n",
                centre(fl.negative_charge_temperature),
                centre(fl.positive_charge_temperature)
            ));
        }
        if !fl.initiation.is_empty() {
            let mut r: Vec<f64> = fl.initiation.iter().map(|f| f.over_runaway).collect();
            let [lo, mid, hi] = spread(&mut r);
            s.push_str(&format!(
                "field at initiation over the runaway threshold: median {mid:.2} ({lo:.2}-{hi:.2}; observed before flashes 1.1-3.3, Stolzenburg et al. 2007)\n"
            ));
            const SHOWN: usize = 20;
            for f in fl.initiation.iter().take(SHOWN) {
                s.push_str(&format!(
                    "  flash at {:.2} s: {:.2} x runaway threshold; held: {}\n",
                    f.time,
                    f.over_runaway,
                    f.criteria_met.join(", ")
                ));
            }
            if fl.initiation.len() > SHOWN {
                s.push_str(&format!(
                    "  ... and {} more flashes (--json lists them all)\n",
                    fl.initiation.len() - SHOWN
                ));
            }
        }
        s
    }
}

/// The structure classes of a sweep's members, read from `summary.csv`.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct EnsembleReport {
    /// Members that ran.
    pub members: usize,
    /// Members that failed.
    pub failed: usize,
    /// For each class found: its name, share of the members that ran, and
    /// the members (number and swept values).
    pub classes: Vec<(String, f64, Vec<String>)>,
    /// Flashes of the members that ran, summed: intracloud, negative and
    /// positive ground.
    pub flashes: [u64; 3],
    /// Members that made at least one ground flash.
    pub members_with_ground_flashes: Vec<String>,
    /// Members with flash channels that reached the model top (empty for
    /// summaries written before the column existed).
    pub members_with_channels_at_top: Vec<String>,
    /// The same as `classes` for the structure most records of each
    /// member's flashing stage show ("no_flashes" for members without
    /// any); empty for summaries written before the column existed.
    pub classes_while_flashing: Vec<(String, f64, Vec<String>)>,
    /// One row per member that ran, for comparing them side by side.
    pub rows: Vec<MemberRow>,
    /// With `sweep.error_estimate`: which members keep their class and
    /// flash count at half the step and at half the spacing.
    pub numerics: Option<NumericsCheck>,
}

/// Whether each member's answer survives halving its step and its spacing
/// (from the summary columns `sweep.error_estimate` fills). A class that
/// changes, or a flash count that changes by more than one, is a property
/// of the numerics, not of the storm (docs/numerics.md).
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize)]
pub struct NumericsCheck {
    /// Members with both refined runs.
    pub checked: usize,
    /// Whether the summary has the refined ground-flash columns (older
    /// summaries do not; their ground flashes go unchecked).
    pub ground_compared: bool,
    /// One entry per member: "member N: values (class -> class at half
    /// the step)" and the like ([`at_half`]).
    pub class_changes: Vec<String>,
    /// "member N: values (flashes: n -> m at half the spacing)" and the
    /// like, for changes of more than one flash.
    pub flash_changes: Vec<String>,
    /// "member N: values (while flashing: class -> class at ...)", the
    /// class of the flashing stage ([`NO_FLASHES`] for a run without any).
    pub flashing_class_changes: Vec<String>,
    /// "member N: values (ground flashes: n -> m at ...)": ground flashes
    /// that appear, vanish or change by more than one (in summaries that
    /// have the column).
    pub ground_flash_changes: Vec<String>,
}

/// One member's key outcomes, read from its summary row (`None` where the
/// outcome does not exist, e.g. no flash, or the column is older than the
/// summary).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MemberRow {
    pub member: usize,
    /// The swept values, "key=value" joined by ", ".
    pub values: String,
    /// Intracloud, negative ground and positive ground flashes.
    pub flashes: [u64; 3],
    /// Time of the first flash (s).
    pub first_flash_s: Option<f64>,
    /// Largest |E_z| of the run (V m-1).
    pub peak_field_v_m: Option<f64>,
    /// Main negative region at the largest separation: charge (C) and
    /// temperature (degC).
    pub main_negative_c: Option<f64>,
    pub main_negative_temperature_degc: Option<f64>,
    /// Structure class at the largest separation.
    pub structure: String,
}

/// Lists longer than this are printed as runs of member numbers, not one
/// member and its values per line (an ensemble of ten thousand members
/// would print ten thousand lines per table; `--json` keeps every member).
const LISTED_ONE_BY_ONE: usize = 40;

/// Appends the members of `list` ("member N: values" each): one per line,
/// or for a long list the runs of their numbers, wrapped.
fn member_lines(out: &mut String, list: &[String]) {
    if list.len() <= LISTED_ONE_BY_ONE {
        for m in list {
            out.push_str(&format!("      {m}\n"));
        }
        return;
    }
    let numbers: Vec<usize> = list
        .iter()
        .filter_map(|m| {
            let rest = m.strip_prefix("member ")?;
            rest[..rest.find(':').unwrap_or(rest.len())].parse().ok()
        })
        .collect();
    let mut runs: Vec<String> = Vec::new();
    let mut i = 0;
    while i < numbers.len() {
        let mut j = i;
        while j + 1 < numbers.len() && numbers[j + 1] == numbers[j] + 1 {
            j += 1;
        }
        runs.push(if j > i {
            format!("{}-{}", numbers[i], numbers[j])
        } else {
            numbers[i].to_string()
        });
        i = j + 1;
    }
    let mut line = String::from("      members");
    for (k, run) in runs.iter().enumerate() {
        let piece = if k + 1 < runs.len() {
            format!(" {run},")
        } else {
            format!(" {run}")
        };
        if line.len() + piece.len() > 100 && line.len() > 13 {
            out.push_str(&line);
            out.push('\n');
            line = String::from("       ");
        }
        line.push_str(&piece);
    }
    let note = " (numbers only; --json lists each with its values)";
    if line.len() + note.len() > 100 {
        out.push_str(&line);
        out.push('\n');
        line = String::from("      ");
    }
    out.push_str(&line);
    out.push_str(note);
    out.push('\n');
}

/// Appends the lines of one class table (name, share, members).
fn class_lines(out: &mut String, classes: &[(String, f64, Vec<String>)]) {
    for (name, share, list) in classes {
        out.push_str(&format!(
            "  {name:<22} {:>5.1} %  ({} member{})\n",
            100.0 * share,
            list.len(),
            if list.len() == 1 { "" } else { "s" }
        ));
        member_lines(out, list);
    }
}

/// Adds `member` to the class `name` of `classes`.
fn tally(classes: &mut Vec<(String, f64, Vec<String>)>, name: &str, member: String) {
    match classes.iter_mut().find(|c| c.0 == name) {
        Some(c) => c.2.push(member),
        None => classes.push((name.to_string(), 0.0, vec![member])),
    }
}

/// Turns the member lists of `classes` into shares of `n` members, largest
/// first.
fn shares(classes: &mut [(String, f64, Vec<String>)], n: usize) {
    let n = n.max(1) as f64;
    for c in classes.iter_mut() {
        c.1 = c.2.len() as f64 / n;
    }
    classes.sort_by(|a, b| b.1.total_cmp(&a.1));
}

impl EnsembleReport {
    /// The members side by side (up to [`LISTED_ONE_BY_ONE`] of them; a
    /// larger ensemble is compared through summary.csv or `--json`): the
    /// numbers a comparison of schemes or criteria starts from.
    fn comparison_table(&self, out: &mut String) {
        if self.rows.is_empty() || self.rows.len() > LISTED_ONE_BY_ONE {
            return;
        }
        let opt = |v: Option<f64>, scale: f64, digits: usize| {
            v.map_or("-".to_string(), |x| format!("{:.*}", digits, x * scale))
        };
        let width = self
            .rows
            .iter()
            .map(|r| r.values.len())
            .max()
            .unwrap_or(0)
            .max(6);
        out.push_str(&format!(
            "members side by side (main negative region at the largest separation):\n  {:>6}  {:<width$}  {:>10}  {:>11}  {:>10}  {:>10}  {:>10}  {:>8}  structure\n",
            "member", "values", "intracloud", "ground -/+", "first (s)", "peak kV/m", "neg. (C)", "(degC)"
        ));
        for r in &self.rows {
            out.push_str(&format!(
                "  {:>6}  {:<width$}  {:>10}  {:>11}  {:>10}  {:>10}  {:>10}  {:>8}  {}\n",
                r.member,
                r.values,
                r.flashes[0],
                format!("{}/{}", r.flashes[1], r.flashes[2]),
                opt(r.first_flash_s, 1.0, 1),
                opt(r.peak_field_v_m, 1e-3, 1),
                opt(r.main_negative_c, 1.0, 1),
                opt(r.main_negative_temperature_degc, 1.0, 1),
                r.structure
            ));
        }
    }

    /// The report as text.
    pub fn text(&self) -> String {
        let mut out = format!(
            "{} members ran ({} failed); structure at the largest charge separation:\n",
            self.members, self.failed
        );
        class_lines(&mut out, &self.classes);
        if !self.classes_while_flashing.is_empty() {
            out.push_str(
                "structure while the storm flashes (the class most records from the first flash to the last show):\n",
            );
            class_lines(&mut out, &self.classes_while_flashing);
        }
        let [ic, neg, pos] = self.flashes;
        let total = ic + neg + pos;
        out.push_str(&format!(
            "flashes: {ic} intracloud, {neg} negative ground, {pos} positive ground; ground flashes {:.1} % of all",
            if total > 0 {
                100.0 * (neg + pos) as f64 / total as f64
            } else {
                0.0
            }
        ));
        out.push_str(&format!(
            " (in {} member{})\n",
            self.members_with_ground_flashes.len(),
            if self.members_with_ground_flashes.len() == 1 {
                ""
            } else {
                "s"
            }
        ));
        member_lines(&mut out, &self.members_with_ground_flashes);
        self.comparison_table(&mut out);
        if let Some(check) = &self.numerics {
            let plural = |n: usize| if n == 1 { "" } else { "s" };
            let ground = if check.ground_compared {
                format!(
                    ", the ground flashes (appear, vanish or by more than one) in {}",
                    check.ground_flash_changes.len()
                )
            } else {
                String::new()
            };
            out.push_str(&format!(
                "numerics (sweep.error_estimate, {} member{} rerun at half the step and half the spacing): the class changes in {} member{}, the flash count by more than one in {}{ground}, the class while flashing in {} (such answers belong to the numerics, not the storm)\n",
                check.checked,
                plural(check.checked),
                check.class_changes.len(),
                plural(check.class_changes.len()),
                check.flash_changes.len(),
                check.flashing_class_changes.len()
            ));
            member_lines(&mut out, &check.class_changes);
            member_lines(&mut out, &check.flash_changes);
            member_lines(&mut out, &check.ground_flash_changes);
            member_lines(&mut out, &check.flashing_class_changes);
        }
        if !self.members_with_channels_at_top.is_empty() {
            out.push_str(&format!(
                "flash channels reached the model top in {} member{}: their flashes depend on grid.top (docs/discharge.md, \"Channels that reach the model top\")\n",
                self.members_with_channels_at_top.len(),
                if self.members_with_channels_at_top.len() == 1 { "" } else { "s" }
            ));
            member_lines(&mut out, &self.members_with_channels_at_top);
        }
        out
    }
}

/// A sweep directory's `summary.csv` as fields: the header and the rows,
/// with the positions of the status and structure columns (errors name the
/// file and what is missing).
pub struct SweepTable {
    pub header: Vec<String>,
    pub rows: Vec<Vec<String>>,
    pub status: usize,
    pub structure: usize,
}

impl SweepTable {
    pub fn read(dir: &std::path::Path) -> Result<Self, crate::error::RunError> {
        let path = dir.join("summary.csv");
        let fail = |m: String| summary_error(dir, m);
        // No summary: the directory is not (yet) a sweep's, a usage error
        // (exit 2) as a missing input file is.
        let text = std::fs::read_to_string(&path).map_err(|e| crate::error::RunError::Usage {
            context: format!("sweep directory {}", dir.display()),
            message: format!(
                "cannot read its summary.csv: {e} (run the sweep, or sweep-merge its shards, first)"
            ),
        })?;
        let mut lines = text.lines();
        let header = crate::output::csv::csv_fields(lines.next().unwrap_or(""));
        let mut table = SweepTable {
            header,
            rows: lines.map(crate::output::csv::csv_fields).collect(),
            status: 0,
            structure: 0,
        };
        table.status = table.column("status").map_err(&fail)?;
        table.structure = table
            .column("structure_at_peak_separation")
            .map_err(&fail)?;
        if let Some(r) = table.rows.iter().find(|r| r.len() <= table.structure) {
            return Err(fail(format!("a row has {} fields: truncated", r.len())));
        }
        Ok(table)
    }

    /// Position of the column `name`.
    pub fn column(&self, name: &str) -> Result<usize, String> {
        self.header
            .iter()
            .position(|h| h == name)
            .ok_or_else(|| format!("no column {name}: not a sweep summary"))
    }
}

/// An error reading the `summary.csv` of the sweep directory `dir`.
fn summary_error(dir: &std::path::Path, message: String) -> crate::error::RunError {
    crate::error::RunError::Output {
        context: format!("reading {}", dir.join("summary.csv").display()),
        message,
    }
}

/// The name a flashing stage's class goes by in summaries and reports
/// when the run made no flash (the summary leaves the cell empty).
pub const NO_FLASHES: &str = "no_flashes";

/// A summary cell of the flashing stage's class, named: [`NO_FLASHES`]
/// for an empty cell.
pub fn flashing_class_name(cell: &str) -> &str {
    if cell.is_empty() {
        NO_FLASHES
    } else {
        cell
    }
}

/// A summary cell as a finite number (`None` for a missing column, an
/// empty cell or NaN).
fn finite_cell(f: &[String], col: Option<usize>) -> Option<f64> {
    f.get(col?)?.parse::<f64>().ok().filter(|v| v.is_finite())
}

/// What changed at the refined levels, "X at half the step", "X at half
/// the step and spacing" or "X at half the step, Y at half the spacing"
/// (`changes`: the refinement's name, "step" or "spacing", and the value
/// there). Shared by `analyze` and the sweep picture.
pub fn at_half(changes: &[(&str, String)]) -> String {
    match changes {
        [(what, v)] => format!("{v} at half the {what}"),
        [(_, a), (_, b)] if a == b => format!("{a} at half the step and spacing"),
        [(w1, a), (w2, b)] => format!("{a} at half the {w1}, {b} at half the {w2}"),
        _ => String::new(),
    }
}

/// The summary columns `sweep.error_estimate` fills, per refinement (half
/// the step, half the spacing): the class at the largest separation, the
/// class of the flashing stage, the flash count and the ground flashes
/// (the last three absent from older summaries), and the member's own
/// flashing-stage class.
pub struct RefinedColumns {
    levels: Vec<RefinedLevel>,
    own_flashing: Option<usize>,
}

/// One refinement's columns: its name ("step", "spacing") and indices.
struct RefinedLevel {
    what: &'static str,
    class: usize,
    flashing: Option<usize>,
    flashes: Option<usize>,
    ground: Option<usize>,
}

impl RefinedColumns {
    pub fn of(table: &SweepTable) -> Self {
        let levels = [("step", "half_step"), ("spacing", "half_spacing")]
            .into_iter()
            .filter_map(|(what, suffix)| {
                let at = |name: &str| table.column(&format!("{name}_at_{suffix}")).ok();
                Some(RefinedLevel {
                    what,
                    class: at("structure")?,
                    flashing: at("structure_while_flashing"),
                    flashes: at("flashes"),
                    ground: at("ground_flashes"),
                })
            })
            .collect();
        RefinedColumns {
            levels,
            own_flashing: table.column("structure_while_flashing").ok(),
        }
    }

    /// The refined runs of row `f`: each refinement's name and class at the
    /// largest separation, or `None` unless both refinements are there
    /// (a sweep without the estimate leaves the cells empty).
    fn refined_classes<'a>(&self, f: &'a [String]) -> Option<Vec<(&'static str, &'a str)>> {
        let v: Vec<(&'static str, &'a str)> = self
            .levels
            .iter()
            .filter_map(|l| Some((l.what, f.get(l.class).filter(|c| !c.is_empty())?.as_str())))
            .collect();
        (v.len() == 2).then_some(v)
    }

    /// The refinements at which row `f`'s class at the largest separation
    /// differs from `own`, with the class there.
    pub fn class_changes(&self, f: &[String], own: &str) -> Vec<(&'static str, String)> {
        self.refined_classes(f)
            .unwrap_or_default()
            .into_iter()
            .filter(|(_, c)| *c != own)
            .map(|(what, c)| (what, c.to_string()))
            .collect()
    }

    /// Books in `check` the member of row `f` (named `member`, with flash
    /// `counts`) when both refined runs are in its row, one entry per
    /// member in each list: a class that changes, a flash count that
    /// changes by more than one, ground flashes that appear, vanish or
    /// change by more than one (whether a storm makes them is the answer),
    /// a flashing-stage class that changes.
    fn check(
        &self,
        table: &SweepTable,
        f: &[String],
        member: &str,
        counts: [u64; 3],
        check: &mut Option<NumericsCheck>,
    ) {
        if self.refined_classes(f).is_none() {
            return;
        }
        let check = check.get_or_insert_with(|| NumericsCheck {
            ground_compared: self.levels.iter().all(|l| l.ground.is_some()),
            ..NumericsCheck::default()
        });
        check.checked += 1;
        let own_class = &f[table.structure];
        let own_stage = self
            .own_flashing
            .and_then(|c| f.get(c))
            .map(|c| flashing_class_name(c));
        let total = counts.iter().sum::<u64>() as f64;
        let own_ground = (counts[1] + counts[2]) as f64;
        let mut flashing = Vec::new();
        let mut flashes = Vec::new();
        let mut ground = Vec::new();
        for l in &self.levels {
            let stage = l
                .flashing
                .and_then(|c| f.get(c))
                .map(|c| flashing_class_name(c));
            if let (Some(stage), Some(own)) = (stage, own_stage) {
                if stage != own {
                    flashing.push((l.what, stage.to_string()));
                }
            }
            if let Some(n) = finite_cell(f, l.flashes).filter(|n| (n - total).abs() > 1.0) {
                flashes.push((l.what, n.to_string()));
            }
            if let Some(g) = finite_cell(f, l.ground)
                .filter(|&g| (g - own_ground).abs() > 1.0 || (g > 0.0) != (own_ground > 0.0))
            {
                ground.push((l.what, g.to_string()));
            }
        }
        let classes = self.class_changes(f, own_class);
        let book = |list: &mut Vec<String>, changes: &[(&str, String)], from: String| {
            if !changes.is_empty() {
                list.push(format!("{member} ({from} -> {})", at_half(changes)));
            }
        };
        book(&mut check.class_changes, &classes, own_class.clone());
        book(
            &mut check.flash_changes,
            &flashes,
            format!("flashes: {total}"),
        );
        book(
            &mut check.ground_flash_changes,
            &ground,
            format!("ground flashes: {own_ground}"),
        );
        if let Some(own) = own_stage {
            book(
                &mut check.flashing_class_changes,
                &flashing,
                format!("while flashing: {own}"),
            );
        }
    }
}

/// Reads a sweep directory's `summary.csv` and counts the structure classes.
pub fn analyze_sweep(dir: &std::path::Path) -> Result<EnsembleReport, crate::error::RunError> {
    let table = SweepTable::read(dir)?;
    let (status, structure) = (table.status, table.structure);
    let keys = &table.header[1..status];
    let mut report = EnsembleReport {
        members: 0,
        failed: 0,
        classes: Vec::new(),
        flashes: [0; 3],
        members_with_ground_flashes: Vec::new(),
        members_with_channels_at_top: Vec::new(),
        classes_while_flashing: Vec::new(),
        rows: Vec::new(),
        numerics: None,
    };
    let refined = RefinedColumns::of(&table);
    let while_flashing = table.column("structure_while_flashing").ok();
    // Optional columns of the comparison table (a missing column, an
    // empty or NaN cell read as "none"), found once.
    let [first_flash, peak_field, main_negative, main_negative_temperature] = [
        "first_flash_s",
        "peak_field_V_m",
        "main_negative_C",
        "main_negative_temperature_degC",
    ]
    .map(|name| table.column(name).ok());
    let at_top = table.column("flash_channels_at_model_top").ok();
    let fail = |m: String| summary_error(dir, m);
    let kinds = [
        table.column("flashes_intracloud").map_err(&fail)?,
        table.column("flashes_negative_ground").map_err(&fail)?,
        table.column("flashes_positive_ground").map_err(&fail)?,
    ];
    for f in &table.rows {
        if f[status] != "ok" {
            report.failed += 1;
            continue;
        }
        report.members += 1;
        let values: Vec<String> = keys
            .iter()
            .zip(&f[1..status])
            .map(|(k, v)| format!("{k}={v}"))
            .collect();
        let member = format!("member {}: {}", f[0], values.join(", "));
        let mut counts = [0u64; 3];
        for (c, &col) in counts.iter_mut().zip(&kinds) {
            *c = f.get(col).and_then(|v| v.parse().ok()).ok_or_else(|| {
                fail(format!(
                    "member {}: column {} is not a flash count",
                    f[0], table.header[col]
                ))
            })?;
        }
        for (t, c) in report.flashes.iter_mut().zip(counts) {
            *t += c;
        }
        if counts[1] + counts[2] > 0 {
            report.members_with_ground_flashes.push(format!(
                "{member} ({} negative, {} positive ground of {})",
                counts[1],
                counts[2],
                counts.iter().sum::<u64>()
            ));
        }
        let reached = at_top
            .and_then(|col| f.get(col))
            .and_then(|v| v.parse::<f64>().ok())
            .filter(|&n| n > 0.0);
        if let Some(n) = reached {
            report
                .members_with_channels_at_top
                .push(format!("{member} ({n} of {})", counts.iter().sum::<u64>()));
        }
        if let Some(col) = while_flashing {
            let class = flashing_class_name(f.get(col).map_or("", String::as_str));
            tally(&mut report.classes_while_flashing, class, member.clone());
        }
        refined.check(&table, f, &member, counts, &mut report.numerics);
        report.rows.push(MemberRow {
            member: f[0].parse().unwrap_or(0),
            values: values.join(", "),
            flashes: counts,
            first_flash_s: finite_cell(f, first_flash),
            peak_field_v_m: finite_cell(f, peak_field),
            main_negative_c: finite_cell(f, main_negative),
            main_negative_temperature_degc: finite_cell(f, main_negative_temperature),
            structure: f[structure].clone(),
        });
        tally(&mut report.classes, &f[structure], member);
    }
    shares(&mut report.classes, report.members);
    shares(&mut report.classes_while_flashing, report.members);
    Ok(report)
}

/// Median, smallest and largest of `v` ([`spread`] in the order the
/// reports print them); `None` when empty.
pub fn median_range(mut v: Vec<f64>) -> Option<(f64, f64, f64)> {
    (!v.is_empty()).then(|| {
        let [lo, mid, hi] = spread(&mut v);
        (mid, lo, hi)
    })
}

/// Smallest, median and largest of `v` (NaN when empty).
pub fn spread(v: &mut [f64]) -> [f64; 3] {
    if v.is_empty() {
        return [f64::NAN; 3];
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    let median = if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    };
    [v[0], median, v[n - 1]]
}

/// Widens `span` (the times of the first flash and of the last one seen so
/// far) by the flashes the ledger holds at an output record, so that
/// [`majority_class`] sees the flashing stage as the records met it.
pub fn extend_flash_span(
    span: &mut Option<(f64, f64)>,
    flashes: &[crate::physics::discharge::record::FlashRecord],
) {
    if let (Some(first), Some(last)) = (flashes.first(), flashes.last()) {
        let start = span.map_or(first.time, |s| s.0);
        *span = Some((start, last.time));
    }
}

/// The class most of the records in `classes` (model time, class) show from
/// the first at or after `span.0` to the first at or after `span.1`, and
/// the share of those records in it, and their number; ties go to the
/// class seen first. `None` without a span or without records after its
/// start.
pub fn majority_class(
    classes: &[(f64, Structure)],
    span: Option<(f64, f64)>,
) -> Option<(Structure, f64, usize)> {
    let (first, last) = span?;
    let start = classes.iter().position(|c| c.0 >= first)?;
    let end = classes[start..]
        .iter()
        .position(|c| c.0 >= last)
        .map_or(classes.len(), |i| start + i + 1);
    let stage = &classes[start..end];
    let mut counts: Vec<(Structure, usize)> = Vec::new();
    for (_, c) in stage {
        match counts.iter_mut().find(|(k, _)| k == c) {
            Some(e) => e.1 += 1,
            None => counts.push((*c, 1)),
        }
    }
    // The first of the largest counts (max_by_key would take the last).
    let best = counts
        .iter()
        .fold(None::<(Structure, usize)>, |b, &(k, n)| match b {
            Some((_, m)) if m >= n => b,
            _ => Some((k, n)),
        })?;
    Some((best.0, best.1 as f64 / stage.len() as f64, stage.len()))
}

#[cfg(test)]
mod tests {
    use super::*;
    use Structure::{NormalDipole as D, NormalTripole as T};

    /// A long class list is printed as runs of member numbers, every member
    /// in exactly one run and every line within 100 characters; a short one
    /// member by member (common practice for listing large sets).
    #[test]
    fn long_member_lists_print_as_runs() {
        let member = |n: usize| format!("member {n}: updraft.peak_speed={n}.5");
        let numbers: Vec<usize> = (1..=30).chain([32]).chain(40..=53).collect();
        let list: Vec<String> = numbers.iter().map(|&n| member(n)).collect();
        let mut out = String::new();
        member_lines(&mut out, &list);
        assert_eq!(
            out,
            "      members 1-30, 32, 40-53 (numbers only; --json lists each with its values)\n"
        );
        let short: Vec<String> = (1..=3).map(member).collect();
        let mut out = String::new();
        member_lines(&mut out, &short);
        assert_eq!(out.lines().count(), 3);
        assert!(out.lines().all(|l| l.starts_with("      member ")));
        // Every other member of 10,000: 5,000 runs of one, wrapped.
        let sparse: Vec<String> = (1..=10_000).step_by(2).map(member).collect();
        let mut out = String::new();
        member_lines(&mut out, &sparse);
        assert!(out.lines().all(|l| l.len() <= 100), "{out}");
        let listed: Vec<usize> = out
            .replace("members", "")
            .split(|c: char| !c.is_ascii_digit())
            .filter_map(|t| t.parse().ok())
            .collect();
        let expected: Vec<usize> = (1..=10_000).step_by(2).collect();
        assert_eq!(listed, expected);
    }

    /// `analyze` of a sweep puts the members side by side with the values
    /// their summary rows hold (a member without flashes has no first-flash
    /// time; a summary without a column prints "-"), and leaves the table
    /// out for ensembles too large to read line by line.
    #[test]
    fn members_side_by_side_repeat_their_summary_rows() {
        let dir = std::env::temp_dir().join(format!("stormcharge-side-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let header = "member,breakdown.trigger,status,flashes_intracloud,flashes_negative_ground,\
                      flashes_positive_ground,first_flash_s,peak_field_V_m,\
                      structure_at_peak_separation,main_negative_C";
        let rows = [
            "1,runaway_avalanche,ok,113,2,0,1410.14,124012.5,normal_tripole,-52.71",
            "2,conventional_breakdown,ok,0,0,0,NaN,1059900,normal_dipole,-498.1",
        ];
        std::fs::write(
            dir.join("summary.csv"),
            format!("{header}\n{}\n", rows.join("\n")),
        )
        .unwrap();
        let report = analyze_sweep(&dir).unwrap();
        assert_eq!(report.rows.len(), 2);
        assert_eq!(report.rows[0].flashes, [113, 2, 0]);
        assert_eq!(report.rows[1].first_flash_s, None);
        assert_eq!(report.rows[0].main_negative_temperature_degc, None);
        let text = report.text();
        let line = |n: &str| {
            text.lines()
                .find(|l| l.trim_start().starts_with(n))
                .unwrap_or_else(|| panic!("no row {n} in:\n{text}"))
                .split_whitespace()
                .collect::<Vec<_>>()
        };
        assert_eq!(
            line("1  breakdown"),
            [
                "1",
                "breakdown.trigger=runaway_avalanche",
                "113",
                "2/0",
                "1410.1",
                "124.0",
                "-52.7",
                "-",
                "normal_tripole"
            ]
        );
        assert_eq!(
            line("2  breakdown"),
            [
                "2",
                "breakdown.trigger=conventional_breakdown",
                "0",
                "0/0",
                "-",
                "1059.9",
                "-498.1",
                "-",
                "normal_dipole"
            ]
        );
        // Beyond LISTED_ONE_BY_ONE members: no table (summary.csv has them).
        let many: Vec<String> = (1..=LISTED_ONE_BY_ONE + 1)
            .map(|n| format!("{n},runaway_avalanche,ok,1,0,0,10,1e5,normal_dipole,-1"))
            .collect();
        std::fs::write(
            dir.join("summary.csv"),
            format!("{header}\n{}\n", many.join("\n")),
        )
        .unwrap();
        let text = analyze_sweep(&dir).unwrap().text();
        assert!(!text.contains("side by side"), "{text}");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    /// With `sweep.error_estimate` columns, `analyze` names the members
    /// whose class changes at half the step or spacing and those whose
    /// flash count changes by more than one (the convergence issue's
    /// bound: within one between a step and half of it); a change of one
    /// flash is not reported, a member that changes at both refinements
    /// is one entry, and a summary without the columns (or with them
    /// empty) has no such check.
    #[test]
    fn members_whose_answer_changes_with_the_numerics_are_named() {
        let dir = std::env::temp_dir().join(format!("stormcharge-numerics-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let header = "member,updraft.peak_speed,status,flashes_intracloud,flashes_negative_ground,\
                      flashes_positive_ground,structure_at_peak_separation,structure_while_flashing,\
                      structure_at_half_step,structure_while_flashing_at_half_step,\
                      flashes_at_half_step,structure_at_half_spacing,\
                      structure_while_flashing_at_half_spacing,flashes_at_half_spacing,\
                      ground_flashes_at_half_step,ground_flashes_at_half_spacing";
        let rows = [
            "1,10,ok,10,1,0,normal_tripole,normal_tripole,normal_tripole,normal_tripole,12,normal_tripole,normal_tripole,11,2,0",
            "2,12,ok,20,0,0,normal_tripole,normal_dipole,normal_dipole,normal_dipole,20,normal_dipole,normal_dipole,23,0,0",
            "3,14,ok,0,0,0,normal_dipole,,normal_dipole,,0,normal_dipole,normal_dipole,1,0,0",
            "4,16,ok,5,0,0,normal_dipole,normal_dipole,,,NaN,,,NaN,NaN,NaN",
        ];
        std::fs::write(
            dir.join("summary.csv"),
            format!("{header}\n{}\n", rows.join("\n")),
        )
        .unwrap();
        let report = analyze_sweep(&dir).unwrap();
        let check = report.numerics.clone().unwrap();
        assert_eq!(check.checked, 3);
        assert_eq!(
            check.class_changes,
            ["member 2: updraft.peak_speed=12 (normal_tripole -> normal_dipole at half the step and spacing)"]
        );
        assert_eq!(
            check.flash_changes,
            ["member 2: updraft.peak_speed=12 (flashes: 20 -> 23 at half the spacing)"]
        );
        // A member without flashes at one level and with them at another
        // changes its flashing-stage class ("no_flashes" against a class).
        assert_eq!(
            check.flashing_class_changes,
            ["member 3: updraft.peak_speed=14 (while flashing: no_flashes -> normal_dipole at half the spacing)"]
        );
        // Member 1's single negative ground flash is none at half the
        // spacing: whether a storm makes ground flashes is the answer, so
        // that counts though the number changes by one; two at half the
        // step does not.
        assert_eq!(
            check.ground_flash_changes,
            ["member 1: updraft.peak_speed=10 (ground flashes: 1 -> 0 at half the spacing)"]
        );
        let text = report.text();
        assert!(
            text.contains("the class changes in 1 member, the flash count by more than one in 1, the ground flashes (appear, vanish or by more than one) in 1, the class while flashing in 1 ("),
            "{text}"
        );
        assert_eq!(
            at_half(&[("step", "3".into()), ("spacing", "5".into())]),
            "3 at half the step, 5 at half the spacing"
        );
        let plain = header.split(",structure_at_half_step").next().unwrap();
        let rows: Vec<String> = rows
            .iter()
            .map(|r| r.split(',').take(8).collect::<Vec<_>>().join(","))
            .collect();
        std::fs::write(
            dir.join("summary.csv"),
            format!("{plain}\n{}\n", rows.join("\n")),
        )
        .unwrap();
        let report = analyze_sweep(&dir).unwrap();
        assert_eq!(report.numerics, None);
        assert!(!report.text().contains("numerics ("));
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn majority_class_reads_the_flashing_stage_only() {
        // Records every 60 s; flashes from 100 s to 250 s: the stage runs
        // from the record at 120 s to the one at 300 s (four records), and
        // the records before and after it do not count.
        let classes = [
            (60.0, D),
            (120.0, T),
            (180.0, T),
            (240.0, D),
            (300.0, T),
            (360.0, D),
            (420.0, D),
        ];
        let (c, share, records) = majority_class(&classes, Some((100.0, 250.0))).unwrap();
        assert_eq!((c, records), (T, 4));
        assert!((share - 0.75).abs() < 1e-15);
        // A tie goes to the class seen first in the stage (240 and 300 s).
        let (c, share, _) = majority_class(&classes, Some((200.0, 250.0))).unwrap();
        assert_eq!((c, share), (D, 0.5));
        // Flashes until after the last record: the stage runs to the end.
        let (c, share, _) = majority_class(&classes, Some((330.0, 900.0))).unwrap();
        assert_eq!((c, share), (D, 1.0));
        // No flashes, or flashes after the last record: no class.
        assert!(majority_class(&classes, None).is_none());
        assert!(majority_class(&classes, Some((500.0, 600.0))).is_none());
    }
}
