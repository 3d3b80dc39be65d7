//! End to end: the demo run, its NetCDF file read back by the netcdf crate, a
//! bit-for-bit replay from the configuration stored in the output, the `init`
//! template, the documentation reference and every shipped config.

mod common;
use common::*;
use stormcharge::physics::breakdown::Criterion;
use stormcharge::physics::charging::saunders_peck_1998 as sp98;

use std::path::Path;
use stormcharge::output::netcdf_writer::partial_path;
use stormcharge::output::reader::{CONFIG_ATTRIBUTE, STATUS_ATTRIBUTE};
use stormcharge::setup::config::{self, template, DEMO_TOML};
use stormcharge::setup::experiment::Experiment;

#[test]
fn embedded_demo_is_configs_demo_toml() {
    let on_disk = std::fs::read_to_string(repo("configs/demo.toml")).unwrap();
    assert_eq!(DEMO_TOML, on_disk);
}

#[test]
fn demo_run_writes_a_complete_cf_file_and_replays_bit_for_bit() {
    let out = scratch("demo.nc");
    succeed(bin().args(["run", "--quiet", "-o"]).arg(&out));
    assert!(out.exists());
    assert!(!partial_path(&out).exists(), "temporary file left behind");

    let resolved = Experiment::from_text(DEMO_TOML, "demo", &[], Path::new(".")).unwrap();
    let f = netcdf::open(&out).unwrap();
    // Global attributes (CF-1.10 section 2.6).
    assert_eq!(text_attr(&f, "Conventions"), "CF-1.10");
    assert_eq!(text_attr(&f, "title"), resolved.config.output.title);
    assert!(text_attr(&f, "source").starts_with("stormcharge "));
    assert!(text_attr(&f, "history").contains("run"));
    assert_eq!(text_attr(&f, STATUS_ATTRIBUTE), "complete");
    let stored = text_attr(&f, CONFIG_ATTRIBUTE);
    assert_eq!(stored, resolved.config.to_toml());
    assert_eq!(config::parse(&stored, "stored").unwrap(), resolved.config);

    // Dimensions and coordinates.
    let n = resolved.grid.len();
    let records = (resolved.schedule.steps / resolved.schedule.output_every + 1) as usize;
    assert_eq!(f.dimension_len("z"), Some(n));
    assert_eq!(f.dimension_len("z_face"), Some(n + 1));
    assert_eq!(f.dimension_len("time"), Some(records));
    assert!(f.dimension("time").unwrap().is_unlimited());
    for (name, expect) in [("z", &resolved.grid.z), ("z_face", &resolved.grid.z_face)] {
        let v = f.variable(name).unwrap();
        assert_eq!(var_text_attr(&v, "units"), "m");
        assert_eq!(var_text_attr(&v, "positive"), "up");
        assert_eq!(var_text_attr(&v, "axis"), "Z");
        assert_eq!(&v.get_values::<f64, _>(..).unwrap(), expect);
    }
    let time = f.variable("time").unwrap();
    assert_eq!(
        var_text_attr(&time, "units"),
        "seconds since 2026-07-14 15:00:00"
    );
    let t: Vec<f64> = time.get_values(..).unwrap();
    assert_eq!(t[0], 0.0);
    assert_eq!(t[records - 1], resolved.config.time.duration);

    // Data variables with CF metadata, and the base state they must hold.
    for (name, sn, units) in [
        ("air_pressure", "air_pressure", "Pa"),
        ("air_temperature", "air_temperature", "K"),
        ("air_density", "air_density", "kg m-3"),
    ] {
        let v = f.variable(name).unwrap_or_else(|| panic!("{name}"));
        assert_eq!(var_text_attr(&v, "standard_name"), sn);
        assert_eq!(var_text_attr(&v, "units"), units);
        assert!(!var_text_attr(&v, "long_name").is_empty());
        let dims: Vec<String> = v.dimensions().iter().map(|d| d.name()).collect();
        assert_eq!(dims, ["time", "z"]);
        let last: Vec<f64> = v.get_values((records - 1, ..)).unwrap();
        assert!(last.iter().all(|x| x.is_finite() && *x > 0.0));
    }
    let p: Vec<f64> = f
        .variable("air_pressure")
        .unwrap()
        .get_values((0, ..))
        .unwrap();
    assert_eq!(p, resolved.base.centre.pressure);
    let temp: Vec<f64> = f
        .variable("air_temperature")
        .unwrap()
        .get_values((0, ..))
        .unwrap();
    for (a, b) in temp.iter().zip(&resolved.base.centre.temperature) {
        // theta -> T round trip through Poisson's equation: round-off only.
        assert!((a - b).abs() < 1e-9 * b);
    }

    // Replay from the stored configuration reproduces the data bit for bit.
    let again = scratch("demo_again.nc");
    succeed(
        bin()
            .args(["run", "--quiet", "--replay"])
            .arg(&out)
            .arg("-o")
            .arg(&again),
    );
    let g = netcdf::open(&again).unwrap();
    assert_eq!(text_attr(&g, CONFIG_ATTRIBUTE), stored);
    let names: Vec<String> = f.variables().map(|v| v.name()).collect();
    assert!(names.len() > 10);
    for name in &names {
        let a: Vec<f64> = f.variable(name).unwrap().get_values(..).unwrap();
        let b: Vec<f64> = g.variable(name).unwrap().get_values(..).unwrap();
        assert_eq!(a.len(), b.len(), "{name}");
        assert!(
            a.iter().zip(&b).all(|(x, y)| x.to_bits() == y.to_bits()),
            "{name} differs"
        );
    }
}

#[test]
fn init_writes_a_template_of_the_demo_storm_that_flashes() {
    // Every key listed; the storm is the built-in demo's (its [output]
    // aside), so the template resolves to the demo's configuration and
    // flashes.
    let p = scratch("init.toml");
    let _ = std::fs::remove_file(&p);
    let o = bin().arg("init").arg(&p).output().unwrap();
    assert_eq!(o.status.code(), Some(0));
    let text = std::fs::read_to_string(&p).unwrap();
    assert_eq!(text, template::init_text());
    let mut demo: toml::Table = toml::from_str(config::DEMO_TOML).unwrap();
    demo.remove("output");
    assert_eq!(
        config::parse(&text, "init").unwrap(),
        config::parse(&demo.to_string(), "demo").unwrap()
    );
    let out = scratch("init_storm.nc");
    let o = bin()
        .arg("run")
        .arg(&p)
        .arg("-o")
        .arg(&out)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    let summary = String::from_utf8_lossy(&o.stdout);
    let intracloud: u64 = summary
        .lines()
        .find_map(|l| l.trim().strip_prefix("flashes: "))
        .and_then(|l| l.split_whitespace().next())
        .and_then(|n| n.parse().ok())
        .unwrap();
    assert!(intracloud > 0, "{summary}");
    for spec in config::schema::KEYS {
        match spec.kind {
            config::schema::Kind::TableArray(elements) => {
                assert!(
                    text.contains(&format!("[[{}]]", spec.path)),
                    "{}",
                    spec.path
                );
                for e in elements {
                    assert!(text.contains(&format!("{} = ", e.name())), "{}", e.path);
                }
            }
            _ => assert!(
                text.contains(&format!("{} = ", spec.name())),
                "{}",
                spec.path
            ),
        }
    }
    // Refuses to overwrite without --force.
    let o = bin().arg("init").arg(&p).output().unwrap();
    assert_eq!(o.status.code(), Some(2));
    let o = bin().arg("init").arg(&p).arg("--force").output().unwrap();
    assert_eq!(o.status.code(), Some(0));
}

#[test]
fn configuration_reference_is_current() {
    // docs/configuration.md carries the generated key reference between
    // markers; `stormcharge init --reference` prints it (DEVELOPERS.md,
    // "Adding a configuration key").
    let doc = std::fs::read_to_string(repo("docs/configuration.md")).unwrap();
    let start =
        doc.find("<!-- keys:start -->").expect("start marker") + "<!-- keys:start -->".len();
    let end = doc.find("<!-- keys:end -->").expect("end marker");
    assert_eq!(
        doc[start..end].trim(),
        template::reference_markdown().trim()
    );
}

#[test]
fn output_reference_is_current() {
    // docs/output.md carries the table generated from the output registry
    // between markers; `stormcharge init --output-reference` prints it
    // (DEVELOPERS.md, "Adding an output variable").
    let doc = std::fs::read_to_string(repo("docs/output.md")).unwrap();
    let start =
        doc.find("<!-- outputs:start -->").expect("start marker") + "<!-- outputs:start -->".len();
    let end = doc.find("<!-- outputs:end -->").expect("end marker");
    let generated = stormcharge::output::reference_markdown();
    assert_eq!(doc[start..end].trim(), generated.trim());
    // Every variable the demo writes is on the page (a blank line inside a
    // Markdown table would end it and hide the rest).
    let table: Vec<&str> = doc[start..end]
        .trim()
        .lines()
        .take_while(|l| l.starts_with('|'))
        .collect();
    let exp = stormcharge::setup::experiment::Experiment::from_text(
        stormcharge::setup::config::DEMO_TOML,
        "demo",
        &[],
        std::path::Path::new("."),
    )
    .unwrap();
    for v in stormcharge::output::variables(&exp) {
        let row = format!("| `{}` |", v.name);
        assert!(
            table.iter().any(|l| l.starts_with(&row)),
            "{} missing",
            v.name
        );
    }
}

#[test]
fn every_shipped_config_resolves() {
    for entry in std::fs::read_dir(repo("configs")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "toml") {
            let o = bin().arg("check").arg(&path).output().unwrap();
            assert_eq!(
                o.status.code(),
                Some(0),
                "{}: {}",
                path.display(),
                String::from_utf8_lossy(&o.stderr)
            );
        }
    }
}

#[test]
fn flash_records_in_the_file() {
    // Flash records on their own unlimited dimension; counts by kind agree.
    let out = scratch("flashes.nc");
    run_quiet(&repo("configs/tripole_flashes.toml"), &out);
    let f = netcdf::open(&out).unwrap();
    let n_flash = f.dimension_len("flash").expect("flash dimension");
    assert!(f.dimension("flash").unwrap().is_unlimited());
    let last = |name: &str| -> f64 {
        let v: Vec<f64> = f.variable(name).unwrap().get_values(..).unwrap();
        v[v.len() - 1]
    };
    let counted = last("flash_count_intracloud")
        + last("flash_count_negative_ground")
        + last("flash_count_positive_ground");
    assert!(n_flash > 0);
    assert_eq!(counted as usize, n_flash);
    let kind = f.variable("flash_kind").unwrap();
    assert_eq!(
        var_text_attr(&kind, "flag_meanings"),
        "intracloud negative_ground positive_ground"
    );
    match kind.attribute("flag_values").unwrap().value().unwrap() {
        netcdf::AttributeValue::Ints(v) => assert_eq!(v, [1, 2, 3]),
        other => panic!("flag_values: {other:?}"),
    }
    let kinds: Vec<i32> = kind.get_values(..).unwrap();
    assert_eq!(
        kinds.iter().filter(|&&k| k == 1).count() as f64,
        last("flash_count_intracloud")
    );
    for name in [
        "flash_time",
        "flash_z_init",
        "flash_z_bottom",
        "flash_z_top",
        "flash_charge_neutralized",
        "flash_charge_neutralized_total",
        "flash_charge_to_ground",
        "flash_energy",
        "flash_energy_total",
        "flash_field_before",
        "flash_field_after",
        "flash_criterion_runaway_avalanche",
    ] {
        let v = f.variable(name).unwrap_or_else(|| panic!("{name} missing"));
        let dims: Vec<String> = v.dimensions().iter().map(|d| d.name()).collect();
        assert_eq!(dims, ["flash"], "{name}");
    }
    let to_ground: Vec<f64> = f
        .variable("flash_charge_to_ground")
        .unwrap()
        .get_values(..)
        .unwrap();
    assert!(
        (to_ground.iter().sum::<f64>() - last("ground_charge")).abs()
            <= 1e-12 * last("ground_charge").abs()
    );
}

/// The prescribed tripole's channels grown as floating conductors run to
/// the model top (docs/discharge.md, "Channels that reach the model top"):
/// `run` warns with the count and the lid, `analyze` of the file counts the
/// flashes whose `flash_z_top` is the last face; the local-field channels
/// never warn. Common practice: a boundary an answer depends on is reported.
#[test]
fn channels_at_the_model_top_are_reported_by_run_and_analyze() {
    let config = repo("configs/tripole_flashes.toml");
    let go = |name: &str, rule: &str| {
        let out = scratch(name);
        let run = bin()
            .arg("run")
            .arg(&config)
            .args(["--quiet", "--set", "time.duration=3600"])
            .args(["--set", &format!("discharge.channel_rule=\"{rule}\"")])
            .arg("-o")
            .arg(&out)
            .output()
            .unwrap();
        assert_eq!(run.status.code(), Some(0));
        let analyze = bin().arg("analyze").arg(&out).output().unwrap();
        let f = netcdf::open(&out).unwrap();
        let lid: Vec<f64> = f.variable("z_face").unwrap().get_values(..).unwrap();
        let tops: Vec<f64> = f.variable("flash_z_top").unwrap().get_values(..).unwrap();
        let at_top = tops.iter().filter(|&&z| z >= lid[lid.len() - 1]).count();
        (
            String::from_utf8_lossy(&run.stderr).into_owned(),
            String::from_utf8_lossy(&analyze.stdout).into_owned(),
            at_top,
            tops.len(),
        )
    };
    let (warned, report, at_top, flashes) = go("channels_top_eq.nc", "equipotential");
    assert!(at_top > 0 && flashes > 0);
    assert!(
        warned.contains(&format!(
            "{at_top} of {flashes} flash channels reached the model top (grid.top = 20000 m)"
        )),
        "{warned}"
    );
    assert!(
        report.contains(&format!("{at_top} of the channels reached the model top")),
        "{report}"
    );
    let (warned, report, at_top, _) = go("channels_top_local.nc", "local_field");
    assert_eq!(at_top, 0);
    assert!(!warned.contains("model top") && !report.contains("model top"));
}

#[test]
fn bench_prints_its_figures() {
    // The benchmark is a measurement, not a test of speed: here only its
    // report is checked (every figure present and finite, the phase shares
    // summing to 100 % within their printed rounding, the median between the
    // slowest and fastest run).
    let o = succeed(bin().args([
        "bench",
        "--repeats",
        "3",
        "--members",
        "2",
        "--member-duration",
        "60",
    ]));
    let text = String::from_utf8(o.stdout).unwrap();
    let first = text.lines().next().unwrap();
    assert!(
        first.starts_with("demo column, one thread: 160 cells x 1800 steps"),
        "{first}"
    );
    let v = numbers(first);
    // 160, 1800, median, 3 runs, slowest, fastest
    assert_eq!(v.len(), 6, "{first}");
    let (median, slowest, fastest) = (v[2], v[4], v[5]);
    assert!(
        slowest > 0.0 && slowest <= median && median <= fastest,
        "{first}"
    );
    // The whole run with output: median between slowest and fastest.
    let whole = text
        .lines()
        .find(|l| l.starts_with("whole run with NetCDF output"))
        .unwrap();
    let v = numbers(whole);
    assert_eq!(v.len(), 4, "{whole}");
    assert!(v[2] > 0.0 && v[2] <= v[0] && v[0] <= v[3], "{whole}");
    let shares: f64 = text
        .lines()
        .filter(|l| l.trim_end().ends_with('%') && l.starts_with("  "))
        .map(|l| numbers(l)[0])
        .sum();
    assert!((shares - 100.0).abs() <= 0.35, "shares sum to {shares}");
    let sweep = text.lines().find(|l| l.starts_with("sweep")).unwrap();
    let v = numbers(sweep);
    assert!(
        v.len() == 6 && v.iter().all(|x| x.is_finite() && *x > 0.0),
        "{sweep}"
    );
    // The scaling over column sizes: 80 to 1280 cells at the demo's 2 s
    // step, positive rates, the median between the slowest and fastest
    // round, the field solve's share and its time per cell-step.
    let rows = scaling_rows(&text);
    let cells: Vec<f64> = rows.iter().map(|v| v[0]).collect();
    assert_eq!(cells, [80.0, 160.0, 320.0, 640.0, 1280.0]);
    assert!(rows.iter().all(|v| v[1] == 2.0), "{text}");
    assert!(text.contains("at the demo's step"), "{text}");
    let flat = text
        .lines()
        .find(|l| l.starts_with("largest over smallest column"))
        .unwrap();
    let v = numbers(flat);
    assert!(
        v.len() == 3 && v[1] > 0.0 && v[1] <= v[0] && v[0] <= v[2],
        "{flat}"
    );
}

#[test]
fn bench_scales_the_step_with_the_spacing_on_request() {
    // With --fixed-courant the scaling runs say so, and each size runs at
    // the demo's step scaled with its spacing (common practice: a fixed
    // Courant number), as the rows print it.
    let o = succeed(bin().args([
        "bench",
        "--repeats",
        "1",
        "--members",
        "1",
        "--member-duration",
        "60",
        "--fixed-courant",
    ]));
    let text = String::from_utf8(o.stdout).unwrap();
    assert!(
        text.contains("at the step scaled with the spacing (a fixed Courant number)"),
        "{text}"
    );
    // The demo's 2 s at 100 m: 4 s at 200 m down to 0.25 s at 12.5 m.
    let steps: Vec<f64> = scaling_rows(&text).iter().map(|v| v[1]).collect();
    assert_eq!(steps, [4.0, 2.0, 1.0, 0.5, 0.25], "{text}");
}

/// The numbers of `bench`'s scaling rows: cells, step (s), median,
/// slowest and fastest cell-steps per second, the field solve's share (%)
/// and its time per cell-step (ns), each row checked for positive rates
/// and the median between the slowest and fastest round.
fn scaling_rows(text: &str) -> Vec<Vec<f64>> {
    text.lines()
        .filter(|l| l.contains(" cells: "))
        .map(|l| {
            let v = numbers(l);
            assert!(v.len() == 7 && v[3] > 0.0 && v[6] > 0.0, "{l}");
            assert!(v[3] <= v[2] && v[2] <= v[4], "{l}");
            v
        })
        .collect()
}

#[test]
fn closed_output_pipe_is_not_a_panic() {
    // `stormcharge check ... | head -1`: the reader closes the pipe early.
    // The program stops quietly with 141 (128 + SIGPIPE, the status shells
    // report for tools stopped that way; common practice), not a panic.
    let (reader, writer) = std::io::pipe().unwrap();
    drop(reader);
    let o = bin()
        .arg("check")
        .arg(repo("configs/demo.toml"))
        .stdout(writer)
        .stderr(std::process::Stdio::piped())
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(141), "stderr: {err}");
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn charging_map_command() {
    let dir = std::env::temp_dir().join(format!("stormcharge-map-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let csv = dir.join("map.csv");
    succeed(
        bin()
            .args(["charging-map", "--scheme", "saunders_peck_1998", "--csv"])
            .arg(&csv),
    );
    let text = std::fs::read_to_string(&csv).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "temperature_degC,liquid_water_g_m3,charge_fC");
    // 17 temperatures from 0 to -40 degC, 9 liquid water contents.
    assert_eq!(lines.len(), 1 + 17 * 9);
    // Values are the scheme's own where no taper or cap acts: -5 degC,
    // 0.1 g m-3, RAR = E 0.1 x 3 with the droplets' collision efficiency
    // on the map's 2 mm graupel at 3 m/s in air of 0.6 kg m-3 (Langmuir
    // 1948, the default): negative.
    let value = |prefix: &str| -> f64 {
        let row = lines.iter().find(|l| l.starts_with(prefix)).unwrap();
        row.rsplit(',').next().unwrap().parse().unwrap()
    };
    let e = stormcharge::physics::charging::riming_efficiency::langmuir_1948(
        20e-6, 2e-3, 3.0, 0.6, 1.718e-5,
    );
    assert!(e > 0.5 && e < 1.0, "{e}");
    let q = value("-5,0.1,");
    assert!((q - sp98::charge_per_collision(-5.0, e * 0.3, 100e-6, 3.0) * 1e15).abs() < 1e-9);
    // What the model applies: zero at 0 degC and below the taper's end
    // (-40 degC), and never beyond the 100 fC cap (the key table's defaults).
    assert_eq!(value("0,1,"), 0.0);
    assert_eq!(value("-40,1,"), 0.0);
    for l in &lines[1..] {
        let q: f64 = l.rsplit(',').next().unwrap().parse().unwrap();
        assert!(q.abs() <= 100.0 + 1e-9, "{l}");
    }
    let o = bin()
        .args(["charging-map", "--scheme", "takahashi"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    // The table scheme maps the user's table: a table of SP98's q over
    // temperature x rime accretion rate whose grid holds the map's point
    // (-5 degC; 0.1 g m-3 at 3 m/s, RAR = 0.3 E) gives SP98's value there,
    // the same size and speed factor applied (docs/charging.md).
    let e03 = e * 0.3;
    let table = dir.join("sp98_table.csv");
    let mut rows = String::from("temperature_degC,rime_accretion_rate_g_m2_s,charge_fC\n");
    for t in [-30.0, -5.0, 0.0] {
        for rar in [e03 * 0.5, e03, e03 * 2.0] {
            rows.push_str(&format!("{t},{rar},{}\n", sp98::charge_fc(t, rar)));
        }
    }
    std::fs::write(&table, rows).unwrap();
    let mapped = dir.join("table_map.csv");
    succeed(
        bin()
            .args(["charging-map", "--scheme", "table", "--table"])
            .arg(&table)
            .arg("--csv")
            .arg(&mapped),
    );
    let text = std::fs::read_to_string(&mapped).unwrap();
    let row = text.lines().find(|l| l.starts_with("-5,0.1,")).unwrap();
    let from_table: f64 = row.rsplit(',').next().unwrap().parse().unwrap();
    assert!(
        (from_table - q).abs() < 1e-9 * q.abs().max(1.0),
        "{from_table} against {q}"
    );
    // Without its table, or a table with another scheme: usage errors
    // naming --table (a map of zeros was printed before).
    for args in [
        vec!["charging-map", "--scheme", "table"],
        vec![
            "charging-map",
            "--scheme",
            "gardiner_1985",
            "--table",
            "x.csv",
        ],
    ] {
        let o = bin().args(&args).output().unwrap();
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        assert!(String::from_utf8_lossy(&o.stderr).contains("--table"));
    }
}

#[test]
fn criteria_and_geometries_reach_the_output_file() {
    let dir = std::env::temp_dir().join(format!("stormcharge-criteria-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let config = repo("configs/teaching_tripole.toml");
    for geometry in ["column", "planar"] {
        let out = dir.join(format!("{geometry}.nc"));
        succeed(
            bin()
                .args(["run", "--quiet"])
                .arg(&config)
                .arg("-o")
                .arg(&out)
                .args(["--set", &format!("electrostatics.geometry={geometry}")]),
        );
        let f = netcdf::open(&out).unwrap();
        let dims = |name: &str| -> Vec<String> {
            let v = f
                .variable(name)
                .unwrap_or_else(|| panic!("{geometry}: {name} missing"));
            v.dimensions().iter().map(|d| d.name()).collect()
        };
        assert_eq!(dims("electric_field"), ["time", "z_face"]);
        assert_eq!(dims("electric_potential"), ["time", "z"]);
        assert_eq!(dims("charge_density"), ["time", "z"]);
        assert_eq!(dims("charge_density_prescribed"), ["time", "z"]);
        assert_eq!(dims("column_charge"), ["time"]);
        assert_eq!(dims("field_energy"), ["time"]);
        for c in Criterion::ALL {
            assert_eq!(dims(&format!("threshold_{}", c.name())), ["z_face"]);
            // The avalanche criterion's value is a count, named as one.
            let value = if c == Criterion::AvalancheMultiplication {
                "efold_count"
            } else {
                "field_ratio"
            };
            assert_eq!(dims(&format!("{value}_{}", c.name())), ["time"]);
            assert_eq!(dims(&format!("{value}_height_{}", c.name())), ["time"]);
        }
        assert_eq!(
            f.variable("column_total_charge").is_some(),
            geometry == "column"
        );
        let e: Vec<f64> = f
            .variable("electric_field")
            .unwrap()
            .get_values(..)
            .unwrap();
        assert!(e.iter().all(|x| x.is_finite()) && e.iter().any(|x| x.abs() > 1e3));
    }
}

#[test]
fn converge_command_writes_its_tables() {
    // `converge` on a short prescribed case: the text table names both
    // refinements, the JSON parses with both series and the CSV has a row
    // per outcome and level; too few levels is a usage error naming the
    // option (exit 2).
    let json = scratch("converge.json");
    let csv = scratch("converge.csv");
    let o = succeed(
        bin()
            .arg("converge")
            .arg(repo("configs/teaching_tripole.toml"))
            .args(["--set", "time.duration=240", "--threads", "2", "--json"])
            .arg(&json)
            .arg("--csv")
            .arg(&csv),
    );
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("refinement of the time step"));
    assert!(text.contains("refinement of the grid spacing"));
    // Three levels give one order per row, printed in the row itself.
    assert!(!text.contains("order of each halving"));
    // Every row's unit starts in the header's unit column, so the numbers
    // stand under their levels (common practice for text tables; the
    // longest names once pushed their rows right).
    for table in text.split("== refinement").skip(1) {
        let mut lines = table.lines().skip(1);
        let unit_at = lines.next().unwrap().find(" unit ").unwrap() + 1;
        let section = |l: &str| l.starts_with("profiles:") || l.starts_with("structure classes:");
        for line in lines.filter(|l| !section(l) && !l.is_empty()) {
            let b = line.as_bytes();
            assert!(
                b[unit_at - 1] == b' ' && b[unit_at] != b' ',
                "misaligned: {line:?}"
            );
        }
    }
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    assert_eq!(v["series"].as_array().unwrap().len(), 2);
    // The structure classes at each level, in the three forms: the
    // prescribed tripole is a normal tripole at every level.
    for series in v["series"].as_array().unwrap() {
        let classes = series["classes"].as_array().unwrap();
        assert_eq!(classes.len(), 2);
        assert_eq!(classes[0]["name"], "structure at the largest separation");
        let at_peak: Vec<&str> = classes[0]["values"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| c.as_str().unwrap())
            .collect();
        assert_eq!(at_peak, ["normal_tripole"; 3]);
    }
    assert!(text
        .contains("normal_tripole / normal_tripole / normal_tripole  (the same at every level)"));
    let rows = std::fs::read_to_string(&csv).unwrap();
    assert!(rows.contains("time,structure at the largest separation,,0,"));
    assert!(rows.lines().count() > 50);
    assert!(rows.starts_with("refinement,outcome,unit,level"));
    let o = bin().args(["converge", "--levels", "2"]).output().unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--levels"));
}

/// `converge` of configs/teaching_tripole.toml on two threads with `args`,
/// its JSON report (written to the scratch file `name`).
fn converge_json(name: &str, args: &[&str]) -> serde_json::Value {
    let json = scratch(name);
    succeed(
        bin()
            .arg("converge")
            .arg(repo("configs/teaching_tripole.toml"))
            .args(["--threads", "2"])
            .args(args)
            .arg("--json")
            .arg(&json),
    );
    serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap()
}

#[test]
fn converge_refines_one_resolution_on_request() {
    // `--refine time` (or `space`) runs one series only, with the values of
    // that series in the full study (the same runs: the same bits), so
    // more levels of the step alone cost no finer grids (common practice:
    // refine one resolution at a time to separate the errors).
    let run = |refine: &str| {
        converge_json(
            &format!("converge_refine_{refine}.json"),
            &["--set", "time.duration=240", "--refine", refine],
        )
    };
    let (both, time, space) = (run("both"), run("time"), run("space"));
    assert_eq!(both["series"].as_array().unwrap().len(), 2);
    assert_eq!(time["series"].as_array().unwrap().len(), 1);
    assert_eq!(space["series"].as_array().unwrap().len(), 1);
    assert_eq!(time["series"][0]["refinement"], "time");
    assert_eq!(space["series"][0]["refinement"], "space");
    assert_eq!(time["series"][0], both["series"][0]);
    assert_eq!(space["series"][0], both["series"][1]);
    let o = bin()
        .args(["converge", "--refine", "steps"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--refine"));
}

#[test]
fn converge_gives_the_order_of_each_halving_beyond_three_levels() {
    // With more than three levels each halving has its own observed order,
    // log2 of the ratio of successive differences (the observed order of a
    // refinement study, Roache 1998, Verification and Validation in
    // Computational Science and Engineering, ch. 5; from memory): the last
    // one is the order the row reports, and the text shows them all.
    let json = scratch("converge_halvings.json");
    let csv = scratch("converge_halvings.csv");
    let o = succeed(
        bin()
            .arg("converge")
            .arg(repo("configs/teaching_tripole.toml"))
            .args(["--set", "time.duration=240", "--refine", "time"])
            .args(["--levels", "4", "--threads", "2", "--json"])
            .arg(&json)
            .arg("--csv")
            .arg(&csv),
    );
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("profiles: order of each halving"), "{text}");
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    let profiles = v["series"][0]["profiles"].as_array().unwrap();
    assert!(!profiles.is_empty());
    for p in profiles {
        let d: Vec<f64> = p["differences"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap())
            .collect();
        let orders: Vec<f64> = p["orders"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap_or(f64::NAN))
            .collect();
        assert_eq!(d.len(), 3, "{p}");
        assert_eq!(orders.len(), 2, "{p}");
        for k in 0..2 {
            let expected = (d[k] / d[k + 1]).log2();
            if d[k] > 0.0 && d[k + 1] > 0.0 {
                assert!((orders[k] - expected).abs() <= 1e-12 * expected.abs().max(1.0));
            } else {
                assert!(orders[k].is_nan(), "{p}");
            }
        }
        if let Some(order) = p["order"].as_f64() {
            if d[2] > 0.0 && d.iter().any(|&x| x >= 1e-12) {
                assert!(
                    (orders[1] - order).abs() <= 1e-12 * order.abs().max(1.0),
                    "{p}"
                );
            }
        }
    }
    let rows = std::fs::read_to_string(&csv).unwrap();
    let halvings = rows
        .lines()
        .filter(|l| l.starts_with("time,charge density order of halving,1,"))
        .count();
    assert_eq!(halvings, 2, "{rows}");
}

#[test]
fn converge_finds_the_largest_separation_whatever_the_output_interval() {
    // The largest charge separation is a maximum over time; in a flashing
    // storm it peaks just before a flash. Records (every
    // `output_interval`) sample it at an arbitrary phase, so an argmax
    // over records would change with the interval. Watched after every
    // step and before every flash (common practice for a running extremum,
    // like the peak field),
    // it and the regions read there are the same for records every 60 s
    // and every 600 s, and its time lies between records.
    let run = |interval: &str| {
        converge_json(
            &format!("converge_interval_{interval}.json"),
            &["--set", &format!("time.output_interval={interval}")],
        )
    };
    let (fine, coarse) = (run("60"), run("600"));
    let pick = |v: &serde_json::Value, name: &str| -> Vec<f64> {
        v["series"][0]["outcomes"]
            .as_array()
            .unwrap()
            .iter()
            .find(|o| o["name"] == name)
            .unwrap_or_else(|| panic!("no outcome {name}"))["values"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap_or(f64::NAN))
            .collect()
    };
    for name in [
        "largest charge separation",
        "time of the largest separation",
        "main negative region charge",
        "upper positive region charge",
        "lower positive region charge",
    ] {
        let (a, b) = (pick(&fine, name), pick(&coarse, name));
        assert_eq!(a, b, "{name}: records every 60 s {a:?}, every 600 s {b:?}");
    }
    let t = pick(&fine, "time of the largest separation");
    assert!(
        t.iter().all(|t| t % 60.0 != 0.0),
        "the peak falls between records here: {t:?}"
    );
}

#[test]
fn init_examples_are_complete_and_check_says_valid() {
    // Every commented-out example in the init text has a value (an empty
    // `key = ` would not parse when uncommented), `init --demo` writes the
    // built-in demo, and `check` ends with a "valid" line.
    let text = template::init_text();
    for line in text.lines() {
        let l = line.trim_start_matches('#').trim();
        if let Some((key, value)) = l.split_once(" =") {
            let is_key = !key.is_empty()
                && key
                    .chars()
                    .all(|c| c.is_ascii_lowercase() || c == '_' || c.is_ascii_digit());
            if is_key {
                assert!(!value.trim().is_empty(), "empty example: {line}");
            }
        }
    }
    let p = scratch("init_demo.toml");
    let _ = std::fs::remove_file(&p);
    succeed(bin().args(["init", "--demo"]).arg(&p));
    assert_eq!(
        std::fs::read_to_string(&p).unwrap(),
        stormcharge::setup::config::DEMO_TOML
    );
    let o = succeed(bin().arg("check").arg(&p));
    let out = String::from_utf8_lossy(&o.stdout);
    let last = out.lines().last().unwrap_or("");
    assert!(last.contains("is valid"), "{last}");
    assert!(out.contains("left out as unused by this run: [hydrometeors]"));
}

/// The numbers of one line of `bench`'s report, in order.
fn numbers(line: &str) -> Vec<f64> {
    line.split(|c: char| c.is_whitespace() || c == ',' || c == '(' || c == ')' || c == ';')
        .filter_map(|w| w.parse::<f64>().ok())
        .collect()
}

#[test]
fn a_run_writes_only_the_variables_it_names_with_the_same_values() {
    // `output.variables` leaves out what it does not name and changes
    // nothing else: the named profiles, the coordinates and the flash
    // records hold the full run's values bit for bit (the selection only
    // filters what is written; common practice). `analyze` reads such a
    // file; `plot` names the variable it lacks and the key that left it out.
    let full = scratch("selection_full.nc");
    let some = scratch("selection_some.nc");
    let short = ["--set", "time.duration=1800"];
    succeed(
        bin()
            .args(["run", "--quiet"])
            .args(short)
            .arg("-o")
            .arg(&full),
    );
    let chosen = [
        "charge_density",
        "air_temperature",
        "electric_field",
        "q_graupel",
    ];
    let list = chosen.map(|c| format!("\"{c}\"")).join(", ");
    succeed(
        bin()
            .args(["run", "--quiet"])
            .args(short)
            .args(["--set", &format!("output.variables=[{list}]"), "-o"])
            .arg(&some),
    );
    let a = netcdf::open(&full).unwrap();
    let b = netcdf::open(&some).unwrap();
    let exp = Experiment::from_text(DEMO_TOML, "demo", &[], Path::new(".")).unwrap();
    let flashes = stormcharge::output::flash_variables(&exp);
    assert!(
        a.dimension_len("flash").unwrap() > 0,
        "the demo flashes by 30 min"
    );
    let profiles = stormcharge::output::variables(&exp);
    let (mut kept, mut flash_kept) = (0, 0);
    for v in a.variables() {
        let name = v.name();
        let profile = profiles.iter().any(|p| p.name == name);
        let expected = !profile || chosen.contains(&name.as_str());
        assert_eq!(b.variable(&name).is_some(), expected, "{name}");
        if expected {
            let x: Vec<f64> = v.get_values(..).unwrap();
            let y: Vec<f64> = b.variable(&name).unwrap().get_values(..).unwrap();
            assert_eq!(x.len(), y.len(), "{name}");
            assert!(
                x.iter().zip(&y).all(|(p, q)| p.to_bits() == q.to_bits()),
                "{name}"
            );
            if flashes.iter().any(|f| f.name == name) {
                flash_kept += 1;
            } else {
                kept += 1;
            }
        }
    }
    // The chosen profiles and the coordinates: time, z, z_face, z_bounds and
    // flash_time; and every flash variable.
    assert_eq!(kept, chosen.len() + 5);
    assert_eq!(flash_kept, flashes.len());
    assert_eq!(a.dimension_len("flash"), b.dimension_len("flash"));
    assert!(std::fs::metadata(&some).unwrap().len() * 3 < std::fs::metadata(&full).unwrap().len());

    succeed(bin().arg("analyze").arg(&some));
    let o = bin()
        .arg("plot")
        .arg(&some)
        .arg("-o")
        .arg(scratch("selection.png"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("electric_potential missing") && err.contains("output.variables"),
        "{err}"
    );
}

/// The commands a page shows: lines of its ```sh blocks and inline code
/// spans that start with `stormcharge ` (or `cargo run --release -- `),
/// as (subcommand, options), with the page and line for messages.
fn commands_shown(page: &std::path::Path) -> Vec<(String, Vec<String>, String)> {
    let text = std::fs::read_to_string(page).unwrap();
    let mut shown = Vec::new();
    let mut in_sh = false;
    for (n, line) in text.lines().enumerate() {
        let at = format!("{}:{}", page.display(), n + 1);
        if line.starts_with("```") {
            in_sh = !in_sh && line.trim() == "```sh";
            continue;
        }
        let mut candidates: Vec<&str> = Vec::new();
        if in_sh {
            candidates.push(line.trim());
        } else {
            // Inline code spans: every other piece between backticks.
            candidates.extend(line.split('`').skip(1).step_by(2));
        }
        for c in candidates {
            let rest = c
                .strip_prefix("stormcharge ")
                .or_else(|| c.strip_prefix("cargo run --release -- "));
            let Some(rest) = rest else { continue };
            // A shell comment ends the command.
            let rest = rest.split(" #").next().unwrap();
            let mut words = rest.split_whitespace();
            let Some(sub) = words.next() else { continue };
            let options = words
                .filter(|w| w.starts_with("--") && w.len() > 2)
                .map(|w| w.split('=').next().unwrap().to_string())
                .collect();
            shown.push((sub.to_string(), options, at.clone()));
        }
    }
    shown
}

#[test]
fn commands_shown_in_the_documentation_exist() {
    // Every subcommand and option a page shows in a command is one the
    // program has (its own `--help`; common practice: examples that run).
    let pages = documentation_pages();
    let mut helps = std::collections::HashMap::new();
    let mut problems = Vec::new();
    let mut seen = 0;
    for page in &pages {
        for (sub, options, at) in commands_shown(page) {
            seen += 1;
            let help = helps.entry(sub.clone()).or_insert_with(|| {
                let o = bin().args([sub.as_str(), "--help"]).output().unwrap();
                o.status
                    .success()
                    .then(|| String::from_utf8_lossy(&o.stdout).into_owned())
            });
            match help {
                None => problems.push(format!("{at}: no subcommand {sub:?}")),
                Some(h) => {
                    for opt in options {
                        if !h.contains(&format!("{opt} ")) && !h.contains(&format!("{opt}\n")) {
                            problems.push(format!("{at}: `{sub}` has no {opt}"));
                        }
                    }
                }
            }
        }
    }
    assert!(seen >= 50, "only {seen} commands found");
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn run_and_converge_say_when_they_take_an_ensemble_as_its_base_storm() {
    // An ensemble's file given to `run` or `converge` runs its base
    // configuration only; a note on stderr says so and names the members
    // the sweep would run (common practice: say what was not done). Not
    // for a configuration without a sweep, nor under --quiet.
    let ensemble = repo("configs/tripole_ensemble.toml");
    let out = scratch("ensemble_base.nc");
    let short = ["--set", "time.duration=60"];
    let o = succeed(
        bin()
            .arg("run")
            .arg(&ensemble)
            .args(short)
            .arg("-o")
            .arg(&out),
    );
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("has a [sweep] of 25 members"), "{err}");
    assert!(err.contains("`run` runs its base configuration"), "{err}");
    let o = succeed(
        bin()
            .arg("run")
            .arg(&ensemble)
            .args(short)
            .arg("--quiet")
            .arg("-o")
            .arg(&out),
    );
    assert!(!String::from_utf8_lossy(&o.stderr).contains("[sweep]"));
    let o = succeed(
        bin()
            .arg("run")
            .arg(repo("configs/demo.toml"))
            .args(short)
            .arg("-o")
            .arg(&out),
    );
    assert!(!String::from_utf8_lossy(&o.stderr).contains("[sweep]"));
    let o = succeed(bin().arg("converge").arg(&ensemble).args(short).args([
        "--refine",
        "time",
        "--threads",
        "2",
    ]));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("`converge` studies its base configuration"),
        "{err}"
    );
}
