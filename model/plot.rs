//! Quick-look pictures of an output file (`stormcharge plot`), PNG and SVG:
//! a time-height panel of the total charge density (diverging colours
//! centred on zero with symmetric limits, colour bar in nC m-3) with the
//! 0, -10, -20 and -40 degC isotherms and flash initiation points coloured by
//! kind; the field profile with every criterion's threshold at one time; the
//! hydrometeor mixing ratios at that time.

use crate::error::RunError;
use crate::physics::breakdown::Criterion;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::Path;

/// What the pictures need, read from an output file.
pub struct PlotData {
    pub title: String,
    pub time: Vec<f64>,
    pub z: Vec<f64>,
    pub z_face: Vec<f64>,
    /// (time, z) row-major.
    pub charge: Vec<f64>,
    pub temperature: Vec<f64>,
    pub field: Vec<f64>,
    pub thresholds: Vec<(String, Vec<f64>)>,
    pub mixing: Vec<(String, Vec<f64>)>,
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
    for c in Criterion::ALL
        .iter()
        .filter(|c| **c != Criterion::AvalancheMultiplication)
    {
        thresholds.push((
            c.name().replace('_', " "),
            get(&format!("threshold_{}", c.name()))?,
        ));
    }
    let mut mixing = Vec::new();
    for s in ["cloud", "rain", "ice", "snow", "graupel"] {
        mixing.push((s.to_string(), get(&format!("q_{s}"))?));
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
    Ok(PlotData {
        title,
        time: get("time")?,
        z: get("z")?,
        z_face: get("z_face")?,
        charge: get("charge_density")?,
        temperature: get("air_temperature")?,
        field: get("electric_field")?,
        thresholds,
        mixing,
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

/// Colour of a flash kind (1 intracloud, 2 negative ground, 3 positive ground).
fn flash_colour(kind: i32) -> RGBColor {
    match kind {
        1 => RGBColor(0, 150, 0),
        2 => RGBColor(120, 0, 160),
        _ => RGBColor(230, 140, 0),
    }
}

fn err<E: std::fmt::Display>(e: E) -> RunError {
    RunError::Output {
        context: "drawing the picture".into(),
        message: e.to_string(),
    }
}

fn draw<DB: DrawingBackend>(
    root: DrawingArea<DB, Shift>,
    d: &PlotData,
    rec: usize,
) -> Result<(), RunError> {
    root.fill(&WHITE).map_err(err)?;
    let (w, h) = root.dim_in_pixel();
    let (top, bottom) = root.split_vertically(h * 55 / 100);
    let (main, bar) = top.split_horizontally(w.saturating_sub(110));
    let n = d.z.len();
    let nt = d.time.len();
    let tmax = d.time[nt - 1].max(1.0);
    let ztop = d.z_face[d.z_face.len() - 1];
    let dz = d.z_face[1] - d.z_face[0];
    let limit = d
        .charge
        .iter()
        .fold(0.0_f64, |m, x| m.max(x.abs()))
        .max(1e-15);
    let font = ("sans-serif", 16);

    let mut chart = ChartBuilder::on(&main)
        .caption(
            format!("{}: total charge density", d.title),
            ("sans-serif", 20),
        )
        .margin(10)
        .x_label_area_size(45)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..tmax, 0.0..ztop / 1000.0)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc("time (s)")
        .y_desc("height (km)")
        .label_style(font)
        .axis_desc_style(font)
        .draw()
        .map_err(err)?;
    for r in 0..nt {
        let t0 = if r == 0 {
            0.0
        } else {
            0.5 * (d.time[r - 1] + d.time[r])
        };
        let t1 = if r + 1 == nt {
            tmax
        } else {
            0.5 * (d.time[r] + d.time[r + 1])
        };
        chart
            .draw_series((0..n).map(|k| {
                let v = d.charge[r * n + k] / limit;
                let z0 = (d.z[k] - 0.5 * dz) / 1000.0;
                Rectangle::new([(t0, z0), (t1, z0 + dz / 1000.0)], diverging(v).filled())
            }))
            .map_err(err)?;
    }
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
                    .map(|k| (d.time[r], d.z[k] / 1000.0))
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
    for kind in 1..=3 {
        let name = [
            "intracloud flash",
            "negative ground flash",
            "positive ground flash",
        ][kind as usize - 1];
        let colour = flash_colour(kind);
        chart
            .draw_series(
                d.flashes
                    .iter()
                    .filter(|f| f.2 == kind)
                    .map(|f| Circle::new((f.0, f.1 / 1000.0), 5, colour.filled())),
            )
            .map_err(err)?
            .label(name)
            .legend(move |(x, y)| Circle::new((x + 10, y), 5, colour.filled()));
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperLeft)
        .background_style(WHITE.mix(0.8))
        .border_style(BLACK)
        .label_font(("sans-serif", 14))
        .draw()
        .map_err(err)?;

    // Colour bar in nC m-3.
    let lim_n = limit * 1e9;
    let mut cb = ChartBuilder::on(&bar)
        .margin_top(40)
        .margin_bottom(55)
        .margin_right(10)
        .y_label_area_size(55)
        .build_cartesian_2d(0.0..1.0, -lim_n..lim_n)
        .map_err(err)?;
    cb.configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_desc("nC m-3")
        .label_style(("sans-serif", 14))
        .axis_desc_style(("sans-serif", 14))
        .draw()
        .map_err(err)?;
    let steps = 100;
    cb.draw_series((0..steps).map(|i| {
        let a = -lim_n + 2.0 * lim_n * i as f64 / steps as f64;
        let b = a + 2.0 * lim_n / steps as f64;
        Rectangle::new(
            [(0.0, a), (1.0, b)],
            diverging(0.5 * (a + b) / lim_n).filled(),
        )
    }))
    .map_err(err)?;

    // Field and thresholds at the chosen record.
    let (left, right) = bottom.split_horizontally(w / 2);
    let nf = d.z_face.len();
    let e = &d.field[rec * nf..(rec + 1) * nf];
    // Wide enough for the field and the runaway thresholds; the higher
    // thresholds run off the sides where they are far from the field.
    let runaway = d
        .thresholds
        .iter()
        .filter(|t| t.0.starts_with("runaway"))
        .flat_map(|t| t.1.iter().copied())
        .fold(0.0_f64, f64::max);
    let emax = (1.2 * e.iter().fold(0.0_f64, |m, x| m.max(x.abs()))).max(1.5 * runaway) / 1e3;
    let mut fc = ChartBuilder::on(&left)
        .caption(
            format!("field and thresholds at t = {} s", d.time[rec]),
            ("sans-serif", 18),
        )
        .margin(10)
        .x_label_area_size(45)
        .y_label_area_size(70)
        .build_cartesian_2d(-emax..emax, 0.0..ztop / 1000.0)
        .map_err(err)?;
    fc.configure_mesh()
        .x_desc("E_z (kV/m, positive up); thresholds as +/-")
        .y_desc("height (km)")
        .label_style(font)
        .axis_desc_style(font)
        .draw()
        .map_err(err)?;
    let zk: Vec<f64> = d.z_face.iter().map(|z| z / 1000.0).collect();
    fc.draw_series(LineSeries::new(
        e.iter().zip(&zk).map(|(x, z)| (x / 1e3, *z)),
        BLACK.stroke_width(3),
    ))
    .map_err(err)?
    .label("E_z")
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK.stroke_width(3)));
    for (i, (name, thr)) in d.thresholds.iter().enumerate() {
        let colour = Palette99::pick(i).to_rgba();
        for sign in [1.0, -1.0] {
            let s = fc
                .draw_series(LineSeries::new(
                    thr.iter().zip(&zk).map(|(x, z)| (sign * x / 1e3, *z)),
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
    fc.configure_series_labels()
        .background_style(WHITE.mix(0.8))
        .border_style(BLACK)
        .label_font(("sans-serif", 12))
        .draw()
        .map_err(err)?;

    // Mixing ratios at the chosen record.
    let qmax = d
        .mixing
        .iter()
        .flat_map(|m| m.1[rec * n..(rec + 1) * n].iter().copied())
        .fold(0.0_f64, f64::max)
        .max(1e-6)
        * 1e3;
    let mut mc = ChartBuilder::on(&right)
        .caption(
            format!("hydrometeors at t = {} s", d.time[rec]),
            ("sans-serif", 18),
        )
        .margin(10)
        .x_label_area_size(45)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..qmax * 1.05, 0.0..ztop / 1000.0)
        .map_err(err)?;
    mc.configure_mesh()
        .x_desc("mixing ratio (g/kg)")
        .y_desc("height (km)")
        .label_style(font)
        .axis_desc_style(font)
        .draw()
        .map_err(err)?;
    for (i, (name, q)) in d.mixing.iter().enumerate() {
        let colour = Palette99::pick(i + 2).to_rgba();
        mc.draw_series(LineSeries::new(
            (0..n).map(|k| (q[rec * n + k] * 1e3, d.z[k] / 1000.0)),
            colour.stroke_width(2),
        ))
        .map_err(err)?
        .label(name.clone())
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2)));
    }
    mc.configure_series_labels()
        .background_style(WHITE.mix(0.8))
        .border_style(BLACK)
        .label_font(("sans-serif", 14))
        .draw()
        .map_err(err)?;
    root.present().map_err(err)?;
    Ok(())
}

/// Draws `output` into `prefix`.png (and `prefix`.svg when `svg`) of `size`
/// pixels, the profile panels at the record nearest `time` (default:
/// largest |E_z|).
pub fn plot(
    output: &Path,
    prefix: &Path,
    size: (u32, u32),
    time: Option<f64>,
    svg: bool,
) -> Result<(), RunError> {
    let dir = crate::output::directory_of(prefix);
    if !dir.is_dir() {
        return Err(RunError::Output {
            context: format!("writing {}", prefix.with_extension("png").display()),
            message: format!("the directory {} does not exist", dir.display()),
        });
    }
    let d = read(output)?;
    let nf = d.z_face.len();
    let nt = d.time.len();
    let rec = match time {
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
    };
    let png = prefix.with_extension("png");
    draw(BitMapBackend::new(&png, size).into_drawing_area(), &d, rec)?;
    if svg {
        let svg = prefix.with_extension("svg");
        draw(SVGBackend::new(&svg, size).into_drawing_area(), &d, rec)?;
    }
    Ok(())
}
