//! Quick-look pictures of an output file (`stormcharge plot`): a PNG (and an
//! SVG on request) of the panels asked for with `--panels`, by default a
//! one-page overview:
//!
//! - `charge`: time-height of the total charge density (diverging colours
//!   centred on zero, symmetric limits or `--charge-limit`), the 0, -10, -20
//!   and -40 degC isotherms and flash initiation points by kind;
//! - `field`: time-height of E_z with the trigger criterion's threshold
//!   contour (where |E_z| crosses the threshold);
//! - `flashes`: flash rate per minute and cumulative flashes by kind;
//! - `profiles`: charge density, E_z with every threshold, and the
//!   potential at one time;
//! - `hydrometeors`: the mixing ratios at that time;
//! - `carriers`: time-height of the charge density of each carrier that
//!   holds charge (small multiples; not in the default set).
//!
//! Time axes are in minutes from the configured start. Empty panels say so.

use crate::error::RunError;
use crate::physics::breakdown::Criterion;
use crate::physics::carriers::Carrier;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::Path;

named_choice! {
    /// One panel of the picture.
    pub enum Panel {
        Charge = "charge",
        Field = "field",
        Flashes = "flashes",
        Profiles = "profiles",
        Hydrometeors = "hydrometeors",
        Carriers = "carriers",
    }
}

/// The default one-page overview.
pub const DEFAULT_PANELS: [Panel; 5] = [
    Panel::Charge,
    Panel::Field,
    Panel::Flashes,
    Panel::Profiles,
    Panel::Hydrometeors,
];

/// How to draw.
#[derive(Debug, Clone, PartialEq)]
pub struct PlotOptions {
    pub size: (u32, u32),
    /// Time (s) of the profile panels; `None`: the record of largest |E_z|.
    pub time: Option<f64>,
    pub svg: bool,
    pub panels: Vec<Panel>,
    /// Fixed colour limit of the charge panels (nC m-3), for comparing runs.
    pub charge_limit: Option<f64>,
    /// Fixed colour limit of the field panel (kV/m).
    pub field_limit: Option<f64>,
}

/// What the pictures need, read from an output file.
pub struct PlotData {
    pub title: String,
    /// Model time in minutes.
    pub minutes: Vec<f64>,
    pub time: Vec<f64>,
    pub z: Vec<f64>,
    pub z_face: Vec<f64>,
    /// (time, z) row-major.
    pub charge: Vec<f64>,
    pub temperature: Vec<f64>,
    pub field: Vec<f64>,
    pub potential: Vec<f64>,
    pub thresholds: Vec<(String, Vec<f64>)>,
    /// Name and threshold of the trigger, when the file names it.
    pub trigger: Option<(String, Vec<f64>)>,
    pub mixing: Vec<(String, Vec<f64>)>,
    pub carriers: Vec<(String, Vec<f64>)>,
    /// (time s, height m, kind 1..3).
    pub flashes: Vec<(f64, f64, i32)>,
}

fn read(path: &Path) -> Result<PlotData, RunError> {
    let out = crate::output::reader::OutputFile::open(path)?;
    for w in out.usable(&["charge_density", "electric_field", "electric_potential"])? {
        eprintln!("stormcharge: warning: {w}");
    }
    let get = |name: &str| out.values(name);
    let title = out
        .text("title")
        .unwrap_or_else(|| path.display().to_string());
    let mut thresholds = Vec::new();
    for c in Criterion::ALL.iter().filter(|c| {
        !matches!(
            c,
            Criterion::AvalancheMultiplication | Criterion::HydrometeorCorona
        )
    }) {
        if let Ok(t) = get(&format!("threshold_{}", c.name())) {
            thresholds.push((c.name().replace('_', " "), t));
        }
    }
    let trigger = out.text("flash_trigger_criterion").and_then(|name| {
        let c = Criterion::ALL.into_iter().find(|c| c.name() == name)?;
        let profile = crate::physics::discharge::trigger_threshold(c);
        let source = Criterion::ALL[profile];
        get(&format!("threshold_{}", source.name()))
            .ok()
            .map(|t| (name.clone(), t))
    });
    let mut mixing = Vec::new();
    for s in ["cloud", "rain", "ice", "snow", "graupel"] {
        mixing.push((s.to_string(), get(&format!("q_{s}"))?));
    }
    let mut carriers = Vec::new();
    for c in Carrier::ALL {
        if let Ok(v) = get(&format!("charge_density_{}", c.name())) {
            if v.iter().any(|x| *x != 0.0) {
                carriers.push((c.name().to_string(), v));
            }
        }
    }
    let (t, z, k): (Vec<f64>, Vec<f64>, Vec<i32>) = (
        out.optional("flash_time")?,
        out.optional("flash_z_init")?,
        out.optional("flash_kind")?,
    );
    let flashes = t
        .into_iter()
        .zip(z)
        .zip(k)
        .map(|((a, b), c)| (a, b, c))
        .collect();
    let time = get("time")?;
    Ok(PlotData {
        title,
        minutes: time.iter().map(|t| t / 60.0).collect(),
        time,
        z: get("z")?,
        z_face: get("z_face")?,
        charge: get("charge_density")?,
        temperature: get("air_temperature")?,
        field: get("electric_field")?,
        potential: get("electric_potential")?,
        thresholds,
        trigger,
        mixing,
        carriers,
        flashes,
    })
}

/// Blue (negative) - white - red (positive) for v in [-1, 1].
fn diverging(v: f64) -> RGBColor {
    let v = v.clamp(-1.0, 1.0);
    let (r, g, b) = if v < 0.0 {
        let a = -v;
        (1.0 - 0.85 * a, 1.0 - 0.7 * a, 1.0 - 0.25 * a)
    } else {
        (1.0 - 0.25 * v, 1.0 - 0.8 * v, 1.0 - 0.85 * v)
    };
    RGBColor((r * 255.0) as u8, (g * 255.0) as u8, (b * 255.0) as u8)
}

/// Colour and name of a flash kind (1 intracloud, 2 negative ground, 3
/// positive ground).
fn flash_style(kind: i32) -> (RGBColor, &'static str) {
    match kind {
        1 => (RGBColor(0, 150, 0), "intracloud"),
        2 => (RGBColor(120, 0, 160), "negative ground"),
        _ => (RGBColor(230, 140, 0), "positive ground"),
    }
}

/// Dark, distinct colours for lines on white (the default palette's light
/// entries vanish on white).
const LINE_COLOURS: [RGBColor; 8] = [
    RGBColor(0, 120, 140),
    RGBColor(20, 60, 200),
    RGBColor(170, 0, 170),
    RGBColor(90, 90, 90),
    RGBColor(180, 90, 0),
    RGBColor(200, 0, 0),
    RGBColor(0, 130, 0),
    RGBColor(120, 60, 20),
];

fn err<E: std::fmt::Display>(e: E) -> RunError {
    RunError::Output {
        context: "drawing the picture".into(),
        message: e.to_string(),
    }
}

/// A tick label without "-0": small values within a thousandth of the
/// range of zero print as 0.
fn tick(v: f64, range: f64) -> String {
    let v = if v.abs() < 1e-3 * range { 0.0 } else { v };
    let s = format!("{v:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

fn note<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, text: &str) -> Result<(), RunError> {
    let (w, h) = area.dim_in_pixel();
    area.draw(&Text::new(
        text.to_string(),
        (w as i32 / 10, h as i32 / 2),
        ("sans-serif", 18).into_font(),
    ))
    .map_err(err)
}

/// The legend of a chart's labelled series, on a pale box.
fn legend<'a, DB: DrawingBackend + 'a>(
    chart: &mut Chart<'a, DB>,
    position: SeriesLabelPosition,
    size: u32,
) -> Result<(), RunError> {
    chart
        .configure_series_labels()
        .position(position)
        .background_style(WHITE.mix(0.8))
        .border_style(BLACK)
        .label_font(("sans-serif", size))
        .draw()
        .map_err(err)
}

const FONT: (&str, u32) = ("sans-serif", 14);

/// A chart with a time axis (min) and a height axis (km).
type Chart<'a, DB> = ChartContext<
    'a,
    DB,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

/// What a time-height panel shows: values (time, cells or faces) at
/// `heights`, times `scale`, with colour limit `limit` (scaled units).
struct Field<'a> {
    values: &'a [f64],
    heights: &'a [f64],
    scale: f64,
    limit: Option<f64>,
    caption: &'a str,
    quantity: &'a str,
}

/// Splits a panel into the chart area and its colour bar.
fn with_bar<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
) -> (DrawingArea<DB, Shift>, DrawingArea<DB, Shift>) {
    let (w, _) = area.dim_in_pixel();
    area.split_horizontally(w.saturating_sub(120))
}

/// A time-height panel on `main` with a colour bar on `bar`; returns the
/// chart for overlays.
fn time_height<'b, DB: DrawingBackend>(
    main: &'b DrawingArea<DB, Shift>,
    bar: &DrawingArea<DB, Shift>,
    d: &PlotData,
    f: Field,
) -> Result<Chart<'b, DB>, RunError> {
    let Field {
        values,
        heights,
        scale,
        limit,
        caption,
        quantity,
    } = f;
    let nz = heights.len();
    let nt = d.time.len();
    let tmax = d.minutes[nt - 1].max(1.0 / 60.0);
    let dz = heights[1] - heights[0];
    let ztop = heights[nz - 1] + 0.5 * dz;
    let lim = limit.unwrap_or_else(|| values.iter().fold(0.0_f64, |m, x| m.max(x.abs() * scale)));
    let lim = if lim > 0.0 { lim } else { 1.0 };
    let mut chart = ChartBuilder::on(main)
        .caption(caption, ("sans-serif", 16))
        .margin(8)
        .x_label_area_size(40)
        .y_label_area_size(55)
        .build_cartesian_2d(0.0..tmax, 0.0..ztop / 1000.0)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc("time (min)")
        .y_desc("height (km)")
        .label_style(FONT)
        .axis_desc_style(FONT)
        .draw()
        .map_err(err)?;
    for r in 0..nt {
        let t0 = if r == 0 {
            0.0
        } else {
            0.5 * (d.minutes[r - 1] + d.minutes[r])
        };
        let t1 = if r + 1 == nt {
            tmax
        } else {
            0.5 * (d.minutes[r] + d.minutes[r + 1])
        };
        chart
            .draw_series((0..nz).map(|k| {
                let v = values[r * nz + k] * scale / lim;
                let z0 = (heights[k] - 0.5 * dz) / 1000.0;
                Rectangle::new([(t0, z0), (t1, z0 + dz / 1000.0)], diverging(v).filled())
            }))
            .map_err(err)?;
    }
    let mut cb = ChartBuilder::on(bar)
        .margin_top(35)
        .margin_bottom(48)
        .margin_right(8)
        .y_label_area_size(60)
        .build_cartesian_2d(0.0..1.0, -lim..lim)
        .map_err(err)?;
    cb.configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_desc(quantity)
        .y_label_formatter(&|v| tick(*v, lim))
        .label_style(("sans-serif", 12))
        .axis_desc_style(("sans-serif", 12))
        .draw()
        .map_err(err)?;
    let steps = 100;
    cb.draw_series((0..steps).map(|i| {
        let a = -lim + 2.0 * lim * i as f64 / steps as f64;
        let b = a + 2.0 * lim / steps as f64;
        Rectangle::new(
            [(0.0, a), (1.0, b)],
            diverging(0.5 * (a + b) / lim).filled(),
        )
    }))
    .map_err(err)?;
    Ok(chart)
}

fn charge_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    d: &PlotData,
    o: &PlotOptions,
) -> Result<(), RunError> {
    if d.charge.iter().all(|x| *x == 0.0) {
        return note(area, "no charge in this run");
    }
    let caption = format!("{}: total charge density", d.title);
    let field = Field {
        values: &d.charge,
        heights: &d.z,
        scale: 1e9,
        limit: o.charge_limit,
        caption: &caption,
        quantity: "charge density (nC m-3)",
    };
    let (main, bar) = with_bar(area);
    let mut chart = time_height(&main, &bar, d, field)?;
    charge_overlay(&mut chart, d)
}

fn charge_overlay<'a, DB: DrawingBackend + 'a>(
    chart: &mut Chart<'a, DB>,
    d: &PlotData,
) -> Result<(), RunError> {
    let n = d.z.len();
    let nt = d.time.len();
    for (iso, style) in [
        (0.0, BLACK),
        (-10.0, RGBColor(0, 110, 110)),
        (-20.0, RGBColor(150, 100, 0)),
        (-40.0, RGBColor(110, 110, 110)),
    ] {
        let pts: Vec<(f64, f64)> = (0..nt)
            .filter_map(|r| {
                let t = &d.temperature[r * n..(r + 1) * n];
                (1..n)
                    .find(|&k| (t[k - 1] - 273.15 - iso) * (t[k] - 273.15 - iso) <= 0.0)
                    .map(|k| (d.minutes[r], d.z[k] / 1000.0))
            })
            .collect();
        chart
            .draw_series(LineSeries::new(pts, style.stroke_width(2)))
            .map_err(err)?
            .label(format!("{iso} degC"))
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], style.stroke_width(2))
            });
    }
    // Only the kinds that occurred appear in the legend.
    for kind in 1..=3 {
        if !d.flashes.iter().any(|f| f.2 == kind) {
            continue;
        }
        let (colour, name) = flash_style(kind);
        chart
            .draw_series(
                d.flashes
                    .iter()
                    .filter(|f| f.2 == kind)
                    .map(|f| Circle::new((f.0 / 60.0, f.1 / 1000.0), 4, colour.filled())),
            )
            .map_err(err)?
            .label(format!("{name} flash"))
            .legend(move |(x, y)| Circle::new((x + 10, y), 4, colour.filled()));
    }
    legend(chart, SeriesLabelPosition::UpperLeft, 12)?;
    Ok(())
}

fn field_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    d: &PlotData,
    o: &PlotOptions,
) -> Result<(), RunError> {
    if d.field.iter().all(|x| *x == 0.0) {
        return note(area, "no electric field in this run");
    }
    let caption = match &d.trigger {
        Some((name, _)) => format!("vertical field E_z; black: |E_z| at the {name} threshold"),
        None => "vertical field E_z".to_string(),
    };
    let field = Field {
        values: &d.field,
        heights: &d.z_face,
        scale: 1e-3,
        limit: o.field_limit,
        caption: &caption,
        quantity: "E_z (kV/m, positive up)",
    };
    let (main, bar) = with_bar(area);
    let mut chart = time_height(&main, &bar, d, field)?;
    {
        let Some((_, thr)) = &d.trigger else {
            return Ok(());
        };
        let nf = d.z_face.len();
        let mut pts = Vec::new();
        for r in 0..d.time.len() {
            let e = &d.field[r * nf..(r + 1) * nf];
            for k in 1..nf {
                let (a, b) = (e[k - 1].abs() - thr[k - 1], e[k].abs() - thr[k]);
                if a * b <= 0.0 && a != b {
                    let z = d.z_face[k - 1] + (d.z_face[k] - d.z_face[k - 1]) * a / (a - b);
                    pts.push((d.minutes[r], z / 1000.0));
                }
            }
        }
        chart
            .draw_series(pts.into_iter().map(|p| Circle::new(p, 2, BLACK.filled())))
            .map_err(err)?;
        Ok(())
    }
}

fn flashes_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    d: &PlotData,
) -> Result<(), RunError> {
    if d.flashes.is_empty() {
        return note(area, "no flashes in this run");
    }
    let tmax = d.minutes[d.minutes.len() - 1].max(1.0 / 60.0);
    let (top, bottom) = area.split_vertically(area.dim_in_pixel().1 / 2);
    // Rate per minute in one-minute bins (or the output interval when longer).
    let bin = (d.minutes.get(1).copied().unwrap_or(1.0) - d.minutes[0]).max(1.0);
    let nbins = (tmax / bin).ceil().max(1.0) as usize;
    let mut rate = vec![0.0; nbins];
    for f in &d.flashes {
        let i = ((f.0 / 60.0) / bin).floor().min((nbins - 1) as f64) as usize;
        rate[i] += 1.0 / bin;
    }
    let rmax = rate.iter().fold(0.0_f64, |a, b| a.max(*b)) * 1.1;
    let mut rc = ChartBuilder::on(&top)
        .caption("flash rate", ("sans-serif", 16))
        .margin(8)
        .x_label_area_size(30)
        .y_label_area_size(55)
        .build_cartesian_2d(0.0..tmax, 0.0..rmax.max(1e-9))
        .map_err(err)?;
    rc.configure_mesh()
        .disable_mesh()
        .y_desc("flashes per minute")
        .label_style(FONT)
        .axis_desc_style(FONT)
        .draw()
        .map_err(err)?;
    rc.draw_series(rate.iter().enumerate().map(|(i, r)| {
        Rectangle::new(
            [(i as f64 * bin, 0.0), ((i + 1) as f64 * bin, *r)],
            RGBColor(60, 60, 60).filled(),
        )
    }))
    .map_err(err)?;
    let total = d.flashes.len() as f64;
    let mut cc = ChartBuilder::on(&bottom)
        .caption("cumulative flashes by kind", ("sans-serif", 16))
        .margin(8)
        .x_label_area_size(40)
        .y_label_area_size(55)
        .build_cartesian_2d(0.0..tmax, 0.0..total * 1.05)
        .map_err(err)?;
    cc.configure_mesh()
        .disable_mesh()
        .x_desc("time (min)")
        .y_desc("flashes")
        .label_style(FONT)
        .axis_desc_style(FONT)
        .draw()
        .map_err(err)?;
    for kind in 1..=3 {
        let times: Vec<f64> = d
            .flashes
            .iter()
            .filter(|f| f.2 == kind)
            .map(|f| f.0 / 60.0)
            .collect();
        if times.is_empty() {
            continue;
        }
        let (colour, name) = flash_style(kind);
        let mut pts = vec![(0.0, 0.0)];
        for (i, t) in times.iter().enumerate() {
            pts.push((*t, i as f64));
            pts.push((*t, (i + 1) as f64));
        }
        pts.push((tmax, times.len() as f64));
        cc.draw_series(LineSeries::new(pts, colour.stroke_width(2)))
            .map_err(err)?
            .label(name)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
            });
    }
    legend(&mut cc, SeriesLabelPosition::UpperLeft, 12)?;
    Ok(())
}

/// The profile panels' record.
fn chosen_record(d: &PlotData, time: Option<f64>) -> usize {
    let nf = d.z_face.len();
    let nt = d.time.len();
    match time {
        Some(t) => (0..nt)
            .min_by(|&a, &b| (d.time[a] - t).abs().total_cmp(&(d.time[b] - t).abs()))
            .unwrap_or(0),
        None => (0..nt)
            .max_by(|&a, &b| {
                let m = |r: usize| {
                    d.field[r * nf..(r + 1) * nf]
                        .iter()
                        .fold(0.0_f64, |x, y| x.max(y.abs()))
                };
                m(a).total_cmp(&m(b))
            })
            .unwrap_or(0),
    }
}

/// A profile chart against height (km) with a symmetric x range
/// -`half`..`half`, its axes drawn.
fn profile_chart<'b, DB: DrawingBackend>(
    area: &'b DrawingArea<DB, Shift>,
    caption: &str,
    half: f64,
    ztop: f64,
    x_desc: &str,
) -> Result<Chart<'b, DB>, RunError> {
    let mut c = ChartBuilder::on(area)
        .caption(caption, ("sans-serif", 14))
        .margin(6)
        // Room under the axis title for the field panel's off-scale note.
        .x_label_area_size(54)
        .y_label_area_size(45)
        .build_cartesian_2d(-half..half, 0.0..ztop)
        .map_err(err)?;
    // One tick label per 45 pixels or so: a third of the picture's width
    // holds about five, where the default ten ran into each other.
    let (w, _) = area.dim_in_pixel();
    c.configure_mesh()
        .x_desc(x_desc)
        .y_desc("height (km)")
        .x_labels((w as usize / 45).clamp(3, 10))
        .x_label_formatter(&|v| tick(*v, half))
        .label_style(("sans-serif", 11))
        .axis_desc_style(("sans-serif", 12))
        .draw()
        .map_err(err)?;
    Ok(c)
}

fn profiles_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    d: &PlotData,
    rec: usize,
) -> Result<(), RunError> {
    let n = d.z.len();
    let nf = d.z_face.len();
    let ztop = d.z_face[nf - 1] / 1000.0;
    let (w, _) = area.dim_in_pixel();
    let (left, rest) = area.split_horizontally(w / 3);
    let (mid, right) = rest.split_horizontally(w / 3);
    let minute = d.minutes[rec];
    // Charge density and potential at the cell centres.
    let centre_profile = |area: &DrawingArea<DB, Shift>,
                          values: &[f64],
                          scale: f64,
                          what: &str,
                          x_desc: &str,
                          colour: RGBColor|
     -> Result<(), RunError> {
        let v: Vec<f64> = values[rec * n..(rec + 1) * n]
            .iter()
            .map(|x| x * scale)
            .collect();
        let half = v.iter().fold(0.0_f64, |m, x| m.max(x.abs())).max(1e-9) * 1.1;
        let mut c = profile_chart(
            area,
            &format!("{what} at {minute:.1} min"),
            half,
            ztop,
            x_desc,
        )?;
        c.draw_series(LineSeries::new(
            v.iter().zip(&d.z).map(|(x, z)| (*x, z / 1000.0)),
            colour.stroke_width(2),
        ))
        .map_err(err)?;
        Ok(())
    };
    centre_profile(
        &left,
        &d.charge,
        1e9,
        "charge",
        "charge density (nC m-3)",
        BLACK,
    )?;
    // Field with thresholds; off-scale thresholds are named in a note.
    let e = &d.field[rec * nf..(rec + 1) * nf];
    let emax = (1.2 * e.iter().fold(0.0_f64, |m, x| m.max(x.abs()))).max(1.0) / 1e3;
    let mut fc = profile_chart(
        &mid,
        &format!("E_z at {minute:.1} min"),
        emax,
        ztop,
        "E_z (kV/m, positive up)",
    )?;
    let zk: Vec<f64> = d.z_face.iter().map(|z| z / 1000.0).collect();
    fc.draw_series(LineSeries::new(
        e.iter().zip(&zk).map(|(x, z)| (x / 1e3, *z)),
        BLACK.stroke_width(2),
    ))
    .map_err(err)?
    .label("E_z")
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK.stroke_width(2)));
    let mut off_scale = Vec::new();
    for (i, (name, thr)) in d.thresholds.iter().enumerate() {
        let lowest = thr.iter().fold(f64::INFINITY, |m, x| m.min(*x)) / 1e3;
        if lowest > emax {
            off_scale.push(format!("{name} >= {lowest:.0}"));
            continue;
        }
        let colour = LINE_COLOURS[i % LINE_COLOURS.len()];
        for sign in [1.0, -1.0] {
            let s = fc
                .draw_series(LineSeries::new(
                    thr.iter()
                        .zip(&zk)
                        .filter(|(x, _)| *x / 1e3 <= emax)
                        .map(|(x, z)| (sign * x / 1e3, *z)),
                    colour.stroke_width(1),
                ))
                .map_err(err)?;
            if sign > 0.0 {
                s.label(name.clone()).legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
                });
            }
        }
    }
    legend(&mut fc, SeriesLabelPosition::UpperRight, 10)?;
    if !off_scale.is_empty() {
        let (_, h) = mid.dim_in_pixel();
        mid.draw(&Text::new(
            format!("off scale (kV/m): {}", off_scale.join("; ")),
            (50, h as i32 - 30),
            ("sans-serif", 10).into_font(),
        ))
        .map_err(err)?;
    }
    centre_profile(
        &right,
        &d.potential,
        1e-6,
        "potential",
        "potential (MV; ground 0)",
        RGBColor(20, 60, 200),
    )
}

fn hydrometeors_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    d: &PlotData,
    rec: usize,
) -> Result<(), RunError> {
    let n = d.z.len();
    let qmax = d
        .mixing
        .iter()
        .flat_map(|m| m.1[rec * n..(rec + 1) * n].iter().copied())
        .fold(0.0_f64, f64::max)
        * 1e3;
    if qmax <= 0.0 {
        return note(area, "no hydrometeors at this time (or in this run)");
    }
    let ztop = d.z_face[d.z_face.len() - 1] / 1000.0;
    let mut mc = ChartBuilder::on(area)
        .caption(
            format!("hydrometeors at {:.1} min", d.minutes[rec]),
            ("sans-serif", 16),
        )
        .margin(8)
        .x_label_area_size(40)
        .y_label_area_size(55)
        .build_cartesian_2d(0.0..qmax * 1.05, 0.0..ztop)
        .map_err(err)?;
    mc.configure_mesh()
        .x_desc("mixing ratio (g/kg)")
        .y_desc("height (km)")
        .label_style(FONT)
        .axis_desc_style(FONT)
        .draw()
        .map_err(err)?;
    for (i, (name, q)) in d.mixing.iter().enumerate() {
        let colour = LINE_COLOURS[i % LINE_COLOURS.len()];
        mc.draw_series(LineSeries::new(
            (0..n).map(|k| (q[rec * n + k] * 1e3, d.z[k] / 1000.0)),
            colour.stroke_width(2),
        ))
        .map_err(err)?
        .label(name.clone())
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2)));
    }
    legend(&mut mc, SeriesLabelPosition::UpperRight, 12)?;
    Ok(())
}

fn carriers_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    d: &PlotData,
    o: &PlotOptions,
) -> Result<(), RunError> {
    if d.carriers.is_empty() {
        return note(area, "no carrier holds charge in this run");
    }
    let cols = d.carriers.len().min(3);
    let rows = d.carriers.len().div_ceil(cols);
    let cells = area.split_evenly((rows, cols));
    for ((name, values), cell) in d.carriers.iter().zip(cells.iter()) {
        let caption = format!("charge on {name}");
        let field = Field {
            values,
            heights: &d.z,
            scale: 1e9,
            limit: o.charge_limit,
            caption: &caption,
            quantity: "nC m-3",
        };
        let (main, bar) = with_bar(cell);
        time_height(&main, &bar, d, field)?;
    }
    Ok(())
}

fn draw<DB: DrawingBackend>(
    root: DrawingArea<DB, Shift>,
    d: &PlotData,
    o: &PlotOptions,
) -> Result<(), RunError> {
    root.fill(&WHITE).map_err(err)?;
    let rec = chosen_record(d, o.time);
    let count = o.panels.len().max(1);
    let cols = if count == 1 { 1 } else { 2 };
    let rows = count.div_ceil(cols);
    let areas = root.split_evenly((rows, cols));
    for (panel, area) in o.panels.iter().zip(areas.iter()) {
        match panel {
            Panel::Charge => charge_panel(area, d, o)?,
            Panel::Field => field_panel(area, d, o)?,
            Panel::Flashes => flashes_panel(area, d)?,
            Panel::Profiles => profiles_panel(area, d, rec)?,
            Panel::Hydrometeors => hydrometeors_panel(area, d, rec)?,
            Panel::Carriers => carriers_panel(area, d, o)?,
        }
    }
    root.present().map_err(err)?;
    Ok(())
}

/// Draws `output` into `prefix`.png (and `prefix`.svg when asked).
pub fn plot(output: &Path, prefix: &Path, o: &PlotOptions) -> Result<(), RunError> {
    crate::output::check_destination(&prefix.with_extension("png"))?;
    let d = read(output)?;
    let png = prefix.with_extension("png");
    draw(BitMapBackend::new(&png, o.size).into_drawing_area(), &d, o)?;
    if o.svg {
        let svg = prefix.with_extension("svg");
        draw(SVGBackend::new(&svg, o.size).into_drawing_area(), &d, o)?;
    }
    Ok(())
}

/// Colour of a structure class in sweep pictures.
fn structure_colour(name: &str) -> RGBColor {
    match name {
        "normal_tripole" => RGBColor(200, 0, 0),
        "normal_dipole" => RGBColor(240, 140, 120),
        "enhanced_lower_tripole" => RGBColor(150, 40, 110),
        "inverted_tripole" => RGBColor(20, 60, 200),
        "inverted_dipole" => RGBColor(130, 160, 240),
        "uncharged" => RGBColor(220, 220, 220),
        _ => RGBColor(120, 120, 120),
    }
}

/// A sweep picture from `dir`/summary.csv: one row per member, labelled
/// with its swept values, a square coloured by the structure class at the
/// largest separation and bars of its flash counts by kind.
pub fn plot_sweep(dir: &Path, prefix: &Path, o: &PlotOptions) -> Result<(), RunError> {
    let table = crate::analysis::SweepTable::read(dir)?;
    let fail = |m: String| RunError::Output {
        context: format!("reading {}", dir.join("summary.csv").display()),
        message: m,
    };
    let (status, structure) = (table.status, table.structure);
    let mut kinds = [0; 3];
    for (k, name) in kinds.iter_mut().zip([
        "flashes_intracloud",
        "flashes_negative_ground",
        "flashes_positive_ground",
    ]) {
        *k = table.column(name).map_err(&fail)?;
    }
    // With `sweep.error_estimate`, a member whose class changes at half
    // the step or spacing says so in its label (the check `analyze`
    // reports): its colour is the numerics' as much as the storm's.
    let refined = crate::analysis::RefinedColumns::of(&table);
    let rows: Vec<SweepRow> = table
        .rows
        .iter()
        .map(|f| {
            let counts = kinds.map(|k| f.get(k).and_then(|x| x.parse().ok()).unwrap_or(0.0));
            let s = if f[status] == "ok" {
                f[structure].clone()
            } else {
                "failed".into()
            };
            let changes = refined.class_changes(f, &f[structure]);
            let note = if changes.is_empty() {
                String::new()
            } else {
                format!(" ({})", crate::analysis::at_half(&changes))
            };
            let label = format!("{}: {} [{s}]{note}", f[0], f[1..status].join(", "));
            (label, s, counts)
        })
        .collect();
    if rows.is_empty() {
        return Err(fail("the summary has no members".into()));
    }
    crate::output::check_destination(&prefix.with_extension("png"))?;
    let title = format!(
        "sweep {}: structure at peak separation and flashes",
        dir.display()
    );
    // Every member's row keeps the height its 11-point label needs, so a
    // large ensemble makes a taller picture instead of labels drawn over
    // each other, up to the tallest picture the command allows; beyond
    // that [`draw_sweep`] labels every k-th member and draws every bar.
    let wanted = SWEEP_FRAME_PX.saturating_add(SWEEP_ROW_PX.saturating_mul(rows.len() as u32));
    let size = (o.size.0, o.size.1.max(wanted.min(MAX_PICTURE_PX)));
    let png = prefix.with_extension("png");
    draw_sweep(
        BitMapBackend::new(&png, size).into_drawing_area(),
        &title,
        &rows,
    )?;
    if o.svg {
        let svg = prefix.with_extension("svg");
        draw_sweep(
            SVGBackend::new(&svg, size).into_drawing_area(),
            &title,
            &rows,
        )?;
    }
    Ok(())
}

/// Height (px) of one member's row in a sweep picture, enough for its
/// 11-point label.
pub const SWEEP_ROW_PX: u32 = 14;

/// Height (px) of a sweep picture's caption, axis and margins.
const SWEEP_FRAME_PX: u32 = 90;

/// The largest picture side (px) the plot command draws (`--width`,
/// `--height` and a sweep picture's height).
pub const MAX_PICTURE_PX: u32 = 8000;

/// One sweep member in a sweep picture: its label as drawn, structure
/// class, flash counts by kind.
type SweepRow = (String, String, [f64; 3]);

fn draw_sweep<DB: DrawingBackend>(
    root: DrawingArea<DB, Shift>,
    title: &str,
    rows: &[SweepRow],
) -> Result<(), RunError> {
    root.fill(&WHITE).map_err(err)?;
    let n = rows.len() as f64;
    let most = rows
        .iter()
        .map(|r| r.2.iter().sum::<f64>())
        .fold(0.0_f64, f64::max)
        .max(1.0);
    // The labels' share of the width: enough for the longest at 11 px
    // (about 5 px a character), between 0.25 and 0.6 of the picture, the
    // x range then reaching -left x most on the left.
    let (width, _) = root.dim_in_pixel();
    let longest = rows
        .iter()
        .map(|(label, _, _)| label.chars().count())
        .max()
        .unwrap_or(1) as f64;
    let share = (5.0 * longest / f64::from(width.max(1))).clamp(0.25, 0.6);
    let left = (1.4 * share + 0.07) / (1.0 - share);
    let mut chart = ChartBuilder::on(&root)
        .caption(title, ("sans-serif", 18))
        .margin(10)
        .x_label_area_size(40)
        .y_label_area_size(20)
        // The right quarter stays free for the key of colours.
        .build_cartesian_2d(-left * most..most * 1.4, 0.0..n)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .disable_y_axis()
        .x_desc("flashes (intracloud, negative ground, positive ground stacked)")
        .x_label_formatter(&|v| {
            if *v < 0.0 {
                String::new()
            } else {
                format!("{v:.0}")
            }
        })
        .label_style(FONT)
        .axis_desc_style(FONT)
        .draw()
        .map_err(err)?;
    // Every member's label where the rows are tall enough for one, else
    // every k-th (the first and then each k-th member).
    let (_, height) = root.dim_in_pixel();
    let row_px = f64::from(height.saturating_sub(SWEEP_FRAME_PX)) / n;
    let every = (f64::from(SWEEP_ROW_PX) / row_px).ceil().max(1.0) as usize;
    // Labels grow with their rows up to 15 px and sit in the middle of
    // them (text is placed by its top edge; a data unit is one row).
    // No wider than the longest label allows between the left edge and the
    // class squares (at most about 0.45 em a character in a sans-serif
    // face, measured on this picture's labels).
    let room = f64::from(
        chart.backend_coord(&(-0.07 * most, 0.0)).0
            - chart.backend_coord(&(-(left - 0.01) * most, 0.0)).0,
    );
    let font_px = (0.45 * row_px)
        .min(room / (0.45 * longest))
        .clamp(11.0, 15.0);
    let text_top = 0.5 + 0.5 * font_px / row_px.max(1.0);
    for (i, (label, s, counts)) in rows.iter().enumerate() {
        let y = n - i as f64 - 1.0;
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(-0.06 * most, y + 0.15), (-0.01 * most, y + 0.85)],
                structure_colour(s).filled(),
            )))
            .map_err(err)?;
        if i % every == 0 {
            chart
                .draw_series(std::iter::once(Text::new(
                    label.clone(),
                    (-(left - 0.01) * most, y + text_top),
                    ("sans-serif", font_px).into_font(),
                )))
                .map_err(err)?;
        }
        let mut x = 0.0;
        for (k, c) in counts.iter().enumerate() {
            if *c > 0.0 {
                chart
                    .draw_series(std::iter::once(Rectangle::new(
                        [(x, y + 0.2), (x + c, y + 0.8)],
                        flash_style(k as i32 + 1).0.filled(),
                    )))
                    .map_err(err)?;
            }
            x += c;
        }
    }
    // The key: the classes and the flash kinds that occur, in the order
    // the rows show them.
    let mut classes: Vec<&str> = Vec::new();
    for (_, s, _) in rows {
        if !classes.contains(&s.as_str()) {
            classes.push(s);
        }
    }
    let swatch = |colour: RGBColor| {
        move |(x, y): (i32, i32)| Rectangle::new([(x, y - 5), (x + 14, y + 5)], colour.filled())
    };
    for class in classes {
        chart
            .draw_series(std::iter::empty::<Rectangle<(f64, f64)>>())
            .map_err(err)?
            .label(format!("structure: {class}"))
            .legend(swatch(structure_colour(class)));
    }
    for k in 0..3 {
        if rows.iter().any(|r| r.2[k] > 0.0) {
            let (colour, name) = flash_style(k as i32 + 1);
            chart
                .draw_series(std::iter::empty::<Rectangle<(f64, f64)>>())
                .map_err(err)?
                .label(format!("{name} flashes"))
                .legend(swatch(colour));
        }
    }
    legend(&mut chart, SeriesLabelPosition::UpperRight, 13)?;
    root.present().map_err(err)?;
    Ok(())
}
