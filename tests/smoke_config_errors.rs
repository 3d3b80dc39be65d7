//! Configuration errors through the command line: exit code 2, a message that
//! names the key, never a panic. (Exit-code convention: common practice for
//! command-line tools, usage errors = 2, as clap itself does.)

mod common;
use common::*;

use std::path::PathBuf;
use std::process::Output;

fn write(name: &str, text: &str) -> PathBuf {
    let p = scratch(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn assert_config_error(o: &Output, must_contain: &[&str]) {
    let err = stderr(o);
    assert_eq!(o.status.code(), Some(2), "exit code; stderr: {err}");
    assert!(!err.contains("panicked"), "panic: {err}");
    for m in must_contain {
        assert!(err.contains(m), "missing {m:?} in: {err}");
    }
}

#[test]
fn unknown_key() {
    let p = write("unknown.toml", "[grid]\ntop = 20000.0\nspacings = 100.0\n");
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["grid.spacings", "unknown key", "line 3", "spacing"]);
}

#[test]
fn unknown_section() {
    let p = write("unknown_section.toml", "[grids]\ntop = 20000.0\n");
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["grids", "unknown key"]);
}

#[test]
fn value_out_of_range() {
    let p = write("range.toml", "[time]\nstep = -2.0\n");
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(
        &o,
        &[
            "time.step",
            "-2.0",
            "out of range",
            "(0, 600]",
            "s",
            "line 2",
        ],
    );
}

#[test]
fn wrong_type() {
    let p = write("type.toml", "[grid]\ntop = \"twenty km\"\n");
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["grid.top", "expected a number", "twenty km", "m"]);
}

#[test]
fn bad_choice_lists_the_valid_names() {
    let p = write("choice.toml", "[atmosphere]\nprofile = \"tropical\"\n");
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(
        &o,
        &[
            "atmosphere.profile",
            "tropical",
            "standard_1976",
            "analytic",
            "sounding",
        ],
    );
}

#[test]
fn bad_set_overrides() {
    // Wrong type through --set.
    let o = bin()
        .args(["run", "--set", "grid.spacing=fifty", "-o"])
        .arg(scratch("never.nc"))
        .output()
        .unwrap();
    assert_config_error(&o, &["grid.spacing", "fifty", "--set"]);
    assert!(!scratch("never.nc").exists());
    // Unknown key through --set.
    let o = bin()
        .args(["run", "--set", "grid.spcing=50"])
        .output()
        .unwrap();
    assert_config_error(&o, &["grid.spcing", "unknown key"]);
    // Not of the form key=value.
    let o = bin()
        .args(["run", "--set", "grid.spacing"])
        .output()
        .unwrap();
    assert_config_error(&o, &["grid.spacing", "section.key=value"]);
    // Out of range through --set.
    let o = bin()
        .args(["run", "--set", "time.output_interval=0"])
        .output()
        .unwrap();
    assert_config_error(&o, &["time.output_interval", "out of range"]);
}

#[test]
fn good_set_override_is_applied() {
    let p = write("ok.toml", "[grid]\ntop = 10000.0\n");
    let o = bin()
        .args(["check"])
        .arg(&p)
        .args(["--set", "grid.spacing=250"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let text = String::from_utf8(o.stdout).unwrap();
    assert!(text.contains("spacing = 250.0"), "{text}");
    assert!(text.contains("top = 10000.0"), "{text}");
}

#[test]
fn missing_sounding_file() {
    let p = write(
        "nofile.toml",
        "[atmosphere]\nprofile = \"sounding\"\n[atmosphere.sounding]\nfile = \"does_not_exist.csv\"\nsurface_pressure = 100000.0\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["atmosphere.sounding.file", "does_not_exist.csv"]);
}

#[test]
fn sounding_not_spanning_the_grid() {
    let p = write(
        "short.toml",
        "[atmosphere]\nprofile = \"sounding\"\n[atmosphere.sounding]\ncolumns = [\"height\", \"temperature\", \"dew_point\"]\n\
         rows = [[0, 25, 20], [5000, -5, -10]]\nsurface_pressure = 100000.0\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["atmosphere.sounding.rows", "spans", "20000"]);
}

#[test]
fn missing_config_file_and_syntax_error() {
    let o = bin()
        .args(["check", "/nonexistent/stormcharge.toml"])
        .output()
        .unwrap();
    assert_config_error(&o, &["cannot read"]);
    let p = write("syntax.toml", "[grid\ntop = 1\n");
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["not valid TOML", "line 1"]);
}

#[test]
fn relations_between_keys() {
    let p = write("ratio.toml", "[grid]\ntop = 20050.0\nspacing = 100.0\n");
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["grid.top", "whole number"]);
    let p = write(
        "interval.toml",
        "[time]\nstep = 3.0\noutput_interval = 10.0\nduration = 30.0\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["time.output_interval", "whole number"]);
}

#[test]
fn usage_error_is_exit_2() {
    let o = bin().args(["frobnicate"]).output().unwrap();
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn layer_errors_name_the_layer_and_line() {
    let p = write(
        "layers.toml",
        "[[prescribed_charge.layers]]\ncenter = 5000.0\nthickness = 1000.0\ndensity = 1.0\n\n\
         [[prescribed_charge.layers]]\ncenter = 8000.0\nthickness = 1000.0\ndensty = 1.0\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(
        &o,
        &[
            "prescribed_charge.layers[2].densty",
            "unknown key",
            "line 9",
            "density",
        ],
    );

    let p = write(
        "layers_range.toml",
        "[[prescribed_charge.layers]]\ncenter = 5000.0\nthickness = -1.0\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(
        &o,
        &[
            "prescribed_charge.layers[1].thickness",
            "-1.0",
            "out of range",
            "line 3",
            "m",
        ],
    );

    let p = write(
        "layers_missing.toml",
        "[[prescribed_charge.layers]]\ndensity = 1.0\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["prescribed_charge.layers[1].center", "needs"]);

    let p = write("trigger.toml", "[breakdown]\ntrigger = \"lightning\"\n");
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(
        &o,
        &[
            "breakdown.trigger",
            "lightning",
            "runaway_avalanche",
            "avalanche_multiplication",
        ],
    );
}

#[test]
fn envelope_tables_reject_misspelt_keys() {
    // The time-envelope keys are shared by [updraft] and the imposed
    // hydrometeor layers; a misspelt one is still an unknown key in both.
    let p = write(
        "updraft_typo.toml",
        "[updraft]\npeak_speed = 10.0\ngrwoth = 600.0\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(&o, &["updraft.grwoth", "unknown key", "line 3", "growth"]);
    let p = write(
        "hydro_typo.toml",
        "[microphysics]\nscheme = \"prescribed\"\n\n[[hydrometeors.layers]]\nspecies = \"graupel\"\n\
         shape = \"gaussian\"\ncenter = 6000.0\nthickness = 1000.0\nmixing_ratio = 1.0e-3\n\
         envelope = \"pulse\"\nmatrue = 600.0\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(
        &o,
        &[
            "hydrometeors.layers[1].matrue",
            "unknown key",
            "line 11",
            "mature",
        ],
    );
}

#[test]
fn native_toml_datetime_is_a_start_time() {
    // start = 2026-07-14T15:00:00Z (a TOML date-time, RFC 3339) is the same
    // time as its quoted text.
    let p = write(
        "native_datetime.toml",
        "[time]\nstart = 2026-07-14T15:00:00Z\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(String::from_utf8_lossy(&o.stdout).contains("2026-07-14T15:00:00Z"));
}

#[test]
fn a_sounding_in_kelvin_gets_one_message_with_the_file_line() {
    let dir = scratch("kelvin_sounding");
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("k.csv"),
        "# kelvin by mistake\nheight,temperature,dew_point\n0,302.6,294.1\n1000,295.1,290.6\n20000,220.0,200.0\n",
    )
    .unwrap();
    let cfg = dir.join("k.toml");
    std::fs::write(
        &cfg,
        "[grid]\ntop = 20000.0\n[atmosphere]\nprofile = \"sounding\"\n[atmosphere.sounding]\nfile = \"k.csv\"\nsurface_pressure = 98000.0\n",
    )
    .unwrap();
    let o = bin().args(["check"]).arg(&cfg).output().unwrap();
    assert_config_error(&o, &["looks like kelvin", "k.csv:3", "subtract 273.15"]);
    assert!(stderr(&o).contains("2 problems"), "{}", stderr(&o));
    // A single bad value names the file line, not a level number.
    std::fs::write(
        dir.join("k.csv"),
        "height,temperature,dew_point\n0,30,20\n\n1000,80,15\n20000,-50,-60\n",
    )
    .unwrap();
    let o = bin().args(["check"]).arg(&cfg).output().unwrap();
    assert_config_error(&o, &["k.csv:4", "temperature", "out of range"]);
}

#[test]
fn an_output_file_given_as_configuration_points_to_replay() {
    let out = scratch("replay_hint.nc");
    succeed(
        bin()
            .args(["run", "--quiet", "--set", "time.duration=120", "-o"])
            .arg(&out),
    );
    let o = bin().args(["check"]).arg(&out).output().unwrap();
    assert_config_error(&o, &["NetCDF output file", "--replay"]);
}

#[test]
fn a_missing_output_directory_is_named() {
    let o = bin()
        .args(["run", "--quiet", "-o"])
        .arg(scratch("absent_dir").join("x.nc"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let err = stderr(&o);
    assert!(
        err.contains("absent_dir") && err.contains("does not exist"),
        "{err}"
    );
}

#[test]
fn a_missing_or_foreign_input_file_is_a_usage_error() {
    // README: exit 2 for a missing or unreadable input file, naming it.
    let missing = scratch("no_such_output.nc");
    let foreign = write("not_netcdf.nc", "plain text\n");
    for args in [
        vec!["analyze".to_string(), missing.display().to_string()],
        vec!["plot".to_string(), missing.display().to_string()],
        vec![
            "run".to_string(),
            "--replay".to_string(),
            missing.display().to_string(),
        ],
        vec!["analyze".to_string(), foreign.display().to_string()],
    ] {
        let o = bin().args(&args).output().unwrap();
        assert_config_error(&o, &["output file"]);
        let err = stderr(&o);
        assert!(
            err.contains("no_such_output.nc") || err.contains("not a NetCDF file"),
            "{err}"
        );
    }
    // A directory that holds no sweep's summary is a missing input too.
    let empty = scratch("not_a_sweep_directory");
    std::fs::create_dir_all(&empty).unwrap();
    for command in ["analyze", "plot"] {
        let o = bin().arg(command).arg(&empty).output().unwrap();
        assert_config_error(&o, &["sweep directory", "summary.csv"]);
    }
}

/// A base configuration whose line 6 holds an out-of-range `time.step`,
/// and a file `{stem}_child.toml` that includes it and adds `child_keys`
/// from its line 3.
fn include_pair(stem: &str, child_keys: &str) -> (PathBuf, PathBuf) {
    let base = write(
        &format!("{stem}_base.toml"),
        "[grid]\ntop = 16000.0\nspacing = 100.0\n\n[time]\nstep = -2.0\n",
    );
    let name = base.file_name().unwrap().to_string_lossy();
    let child = write(
        &format!("{stem}_child.toml"),
        &format!("include = \"{name}\"\n\n{child_keys}"),
    );
    (base, child)
}

#[test]
fn included_configurations_report_the_line_of_the_file_that_holds_the_key() {
    // An `include` merges two files; an error must point into the file the
    // offending key is written in (the including file, or the base with its
    // name), not into the merged text (common practice: errors name the
    // place to edit).
    let (base, child) = include_pair("include", "[grid]\nspacing = 50.0\nspacings = 25.0\n");
    let o = bin().args(["check"]).arg(&child).output().unwrap();
    assert_config_error(
        &o,
        &[
            "grid.spacings",
            "unknown key",
            "(line 5)",
            "time.step",
            &format!("(line 6 of {})", base.display()),
        ],
    );
}

#[test]
fn included_configurations_keep_their_lines_through_sweep_overrides() {
    // A sweep with --set rewrites the merged text; an error in a base file's
    // key must still name that file and line (common practice: errors name
    // the place to edit).
    let (base, child) = include_pair(
        "include_sweep",
        "[sweep]\n[[sweep.parameters]]\nkey = \"column.radius\"\nvalues = [2000.0, 3000.0]\n",
    );
    let out = scratch("include_sweep_out");
    let o = bin()
        .args(["sweep"])
        .arg(&child)
        .args(["--set", "time.duration=600", "-o"])
        .arg(&out)
        .output()
        .unwrap();
    assert_config_error(
        &o,
        &["time.step", &format!("(line 6 of {})", base.display())],
    );
}

#[test]
fn a_retired_key_names_its_replacement() {
    // charging.inductive_droplet_diameter became microphysics.droplet_diameter
    // (one droplet size for the microphysics and the charging).
    let p = write(
        "retired.toml",
        "[charging]\ninductive = true\ninductive_droplet_diameter = 3.0e-5\n",
    );
    let o = bin().args(["check"]).arg(&p).output().unwrap();
    assert_config_error(
        &o,
        &[
            "charging.inductive_droplet_diameter",
            "microphysics.droplet_diameter",
            "line 3",
        ],
    );
}

#[test]
fn an_output_variable_the_run_does_not_write_is_named_with_its_line() {
    // `output.variables` is checked against the variables this
    // configuration writes before anything runs: the unknown name, the
    // names allowed and the line (in the including file, in a base, and for
    // every member of a sweep); nothing is written (common practice: errors
    // name the place to edit).
    let p = write(
        "variables.toml",
        "[time]\nduration = 600.0\n\n[output]\nvariables = [\"charge_density\", \"air_temperatur\"]\n",
    );
    let out = scratch("variables.nc");
    let o = bin()
        .args(["run", "--quiet"])
        .arg(&p)
        .arg("-o")
        .arg(&out)
        .output()
        .unwrap();
    assert_config_error(
        &o,
        &[
            "output.variables",
            "\"air_temperatur\"",
            "allowed: ",
            "air_temperature, ",
            "line 5",
        ],
    );
    assert!(!out.exists());
    let check = bin().arg("check").arg(&p).output().unwrap();
    assert_config_error(&check, &["output.variables", "line 5"]);

    let twice = write(
        "variables_twice.toml",
        "[output]\nvariables = [\"q_rain\", \"q_rain\"]\n",
    );
    let o = bin().arg("check").arg(&twice).output().unwrap();
    assert_config_error(&o, &["output.variables", "twice", "\"q_rain\"", "line 2"]);

    // From a base file, through a sweep: every member is checked first.
    let base = write(
        "variables_base.toml",
        "[time]\nduration = 600.0\n\n[output]\nvariables = [\"nothing_of_the_kind\"]\n",
    );
    let name = base.file_name().unwrap().to_string_lossy();
    let child = write(
        "variables_child.toml",
        &format!(
            "include = \"{name}\"\n\n[sweep]\n[[sweep.parameters]]\nkey = \"column.radius\"\nvalues = [2000.0, 3000.0]\n"
        ),
    );
    let dir = scratch("variables_sweep");
    let o = bin()
        .arg("sweep")
        .arg(&child)
        .arg("-o")
        .arg(&dir)
        .output()
        .unwrap();
    assert_config_error(
        &o,
        &[
            "member 1",
            "member 2",
            "\"nothing_of_the_kind\"",
            &format!("(line 5 of {})", base.display()),
        ],
    );
    assert!(!dir.join("member_0001.nc").exists());

    // A --set override has no line, and is still checked.
    let o = bin()
        .args(["check", "--set", "output.variables=[\"x\"]"])
        .arg(&p)
        .output()
        .unwrap();
    assert_config_error(&o, &["output.variables", "\"x\""]);
    assert!(!stderr(&o).contains("line 5"), "{}", stderr(&o));
}

#[test]
fn extreme_numbers_are_shown_in_exponent_form() {
    // A value far outside a key's range is shown as the user could have
    // written it (1e300), not as its three hundred decimal digits; a step
    // that gives more steps than a 64-bit count holds reports the real
    // count, duration / step = 3600 s / 1e-300 s = 3.6e303 (arithmetic; the
    // count was once cast to 18446744073709551615).
    let demo = concat!(env!("CARGO_MANIFEST_DIR"), "/configs/demo.toml");
    let o = bin()
        .args(["check", demo, "--set", "grid.top=1e300"])
        .output()
        .unwrap();
    assert_config_error(&o, &["grid.top", "= 1e300 [m]", "[500, 80000]"]);
    assert!(!stderr(&o).contains("0000000000"), "{}", stderr(&o));
    let o = bin()
        .args(["check", demo, "--set", "time.step=1e-300"])
        .output()
        .unwrap();
    assert_config_error(&o, &["time.step", "= 1e-300 [s]", "gives 3.6e303 steps"]);
    assert!(
        !stderr(&o).contains("18446744073709551615"),
        "{}",
        stderr(&o)
    );
}

#[test]
fn a_time_that_is_not_finite_is_refused() {
    // `analyze --time` and `plot --time` take the nearest record; NaN and
    // infinity have none: a usage error naming the option (exit 2).
    let out = scratch("finite_times.nc");
    let o = bin()
        .args(["run", "--quiet", "--set", "time.duration=120", "-o"])
        .arg(&out)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    for args in [
        vec![
            "analyze".to_string(),
            out.display().to_string(),
            "--time".into(),
            "nan".into(),
        ],
        vec![
            "plot".to_string(),
            out.display().to_string(),
            "--time".into(),
            "inf".into(),
        ],
    ] {
        let o = bin().args(&args).output().unwrap();
        assert_config_error(&o, &["--time", "not a finite time"]);
    }
}

#[test]
fn a_report_into_a_missing_directory_is_refused_before_any_work() {
    // Common practice for batch tools: check the destination before the
    // work, so a convergence study (minutes to hours) does not end in an
    // error about a directory that was missing all along, and name the
    // file asked for, not the temporary file written beside it.
    let missing = scratch("no_such_directory").join("report.json");
    let cases: [Vec<std::ffi::OsString>; 4] = [
        vec![
            "converge".into(),
            repo("configs/teaching_tripole.toml").into(),
            "--json".into(),
            missing.clone().into(),
        ],
        vec![
            "converge".into(),
            repo("configs/teaching_tripole.toml").into(),
            "--csv".into(),
            missing.with_extension("csv").into(),
        ],
        vec![
            "charging-map".into(),
            "--scheme".into(),
            "saunders_peck_1998".into(),
            "--csv".into(),
            missing.with_extension("csv").into(),
        ],
        vec!["init".into(), missing.with_extension("toml").into()],
    ];
    for args in cases {
        let o = bin().args(&args).output().unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(1), "{args:?}: {err}");
        assert!(
            err.contains("no_such_directory does not exist"),
            "{args:?}: {err}"
        );
        assert!(
            !err.contains(".tmp"),
            "{args:?} names the temporary file: {err}"
        );
        // Nothing was computed: no table or report reached standard output.
        assert!(
            o.stdout.is_empty(),
            "{args:?} worked first: {}",
            String::from_utf8_lossy(&o.stdout)
        );
    }
    // A directory where a file is asked for is named as such.
    let dir = scratch("report_dir_not_file");
    std::fs::create_dir_all(&dir).unwrap();
    let o = bin()
        .args(["charging-map", "--scheme", "gardiner_1985", "--csv"])
        .arg(&dir)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(err.contains("a directory of that name exists"), "{err}");
}

#[test]
fn configuration_examples_in_the_documentation_are_valid() {
    // Every ```toml block of README.md and docs/*.md is a configuration a
    // reader may copy: `check` must accept it (common practice: examples
    // that run). A block that names a file of the reader's own (a table of
    // laboratory data) may fail on that file only. The README's example
    // once kept a key that had moved (`electrostatics.column_radius`).
    let pages = documentation_pages();
    let mut checked = 0;
    for page in pages {
        let text = std::fs::read_to_string(&page).unwrap();
        let mut rest = text.as_str();
        while let Some(start) = rest.find("```toml\n") {
            let body = &rest[start + 8..];
            let end = body.find("```").unwrap();
            let block = &body[..end];
            rest = &body[end + 3..];
            checked += 1;
            let file = write(&format!("doc_example_{checked}.toml"), block);
            let o = bin().arg("check").arg(&file).output().unwrap();
            let err = stderr(&o);
            assert!(
                !err.contains("panicked"),
                "{}: panic: {err}",
                page.display()
            );
            if block.contains("table_file") {
                assert!(
                    o.status.success() || (err.contains("1 problem") && err.contains("table_file")),
                    "{}: {err}",
                    page.display()
                );
            } else {
                assert!(o.status.success(), "{}:\n{block}\n{err}", page.display());
            }
        }
    }
    assert!(checked >= 2, "found {checked} examples");
}

#[test]
fn keys_named_in_the_documentation_exist() {
    // Every `section.key` the pages, the shipped configurations and the
    // code's comments name in a code span is a key of the reference
    // `init --reference` prints (or a group of keys, such as
    // `atmosphere.analytic`); a key that moved must not live on in the
    // prose (common practice: documentation that matches the program).
    let o = bin().args(["init", "--reference"]).output().unwrap();
    assert!(o.status.success());
    let reference = String::from_utf8_lossy(&o.stdout).into_owned();
    let mut keys = std::collections::HashSet::new();
    let mut section = String::new();
    for line in reference.lines() {
        let heading = line
            .strip_prefix("### `[")
            .or_else(|| line.strip_prefix("Keys of each `[["));
        if let Some(h) = heading {
            section = h.split(']').next().unwrap().to_string();
        } else if let Some(row) = line.strip_prefix("| `") {
            let key = row.split('`').next().unwrap();
            keys.insert(format!("{section}.{key}"));
        }
    }
    let sections: std::collections::HashSet<String> = keys
        .iter()
        .map(|k| k.split('.').next().unwrap().to_string())
        .collect();
    assert!(keys.len() > 100 && sections.len() > 10, "{keys:?}");
    let mut files = documentation_pages();
    let mut dirs = vec![repo("configs"), repo("model")];
    while let Some(dir) = dirs.pop() {
        for e in std::fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                dirs.push(p);
            } else if p
                .extension()
                .is_some_and(|x| x == "md" || x == "toml" || x == "rs")
            {
                files.push(p);
            }
        }
    }
    let mut stale = Vec::new();
    for f in &files {
        let text = std::fs::read_to_string(f).unwrap();
        for (n, line) in text.lines().enumerate() {
            for span in line.split('`').skip(1).step_by(2) {
                let span = span.trim().trim_start_matches("--set ").trim();
                let name = span.split('=').next().unwrap().trim();
                let is_path = name.contains('.')
                    && name
                        .chars()
                        .all(|c| c.is_ascii_lowercase() || c == '_' || c == '.');
                if !is_path || !sections.contains(name.split('.').next().unwrap()) {
                    continue;
                }
                let group = format!("{name}.");
                if !keys.contains(name) && !keys.iter().any(|k| k.starts_with(&group)) {
                    stale.push(format!("{}:{}: {name}", f.display(), n + 1));
                }
            }
        }
    }
    assert!(
        stale.is_empty(),
        "keys that do not exist:\n{}",
        stale.join("\n")
    );
}

#[test]
fn problems_found_while_setting_up_carry_their_line() {
    // Checks made after the file is read (a sounding's rows, a layer's
    // missing key, a table of points, the base file of an `include`) name
    // the line that sets the key, or the line of the block that lacks it
    // (the project's rule: errors name key, value, range and file line).
    let cases: [(&str, &str, &[&str]); 4] = [
        (
            "setup_rows.toml",
            "[atmosphere]\nprofile = \"sounding\"\n[atmosphere.sounding]\n\
             columns = [\"height\", \"temperature\", \"dew_point\"]\n\
             rows = [[0.0, 30.0], [1000.0, 20.0, 10.0]]\n",
            &["atmosphere.sounding.rows", "expected 3", "(line 5)"],
        ),
        (
            "setup_layer.toml",
            "[grid]\ntop = 12000.0\n\n[[prescribed_charge.layers]]\nshape = \"gaussian\"\n\
             center = 5000.0\ndensity = 1.0\n",
            &["prescribed_charge.layers[1].thickness", "(line 4)"],
        ),
        (
            "setup_points.toml",
            "[updraft]\nshape = \"table\"\n\
             profile_points = [[0.0, 0.0], [5000.0, 2.0], [3000.0, 1.0]]\n",
            &["updraft.profile_points", "row 3", "(line 3)"],
        ),
        (
            "setup_include.toml",
            "# a base that is not there\n\ninclude = \"no_such_base.toml\"\n",
            &["include", "no_such_base.toml", "(line 3)"],
        ),
    ];
    for (name, text, expected) in cases {
        let p = write(name, text);
        let o = bin().args(["check"]).arg(&p).output().unwrap();
        assert_config_error(&o, expected);
    }
    // A key given by --set has no line of the file.
    let p = write(
        "setup_set.toml",
        "[updraft]\nshape = \"table\"\nprofile_points = [[0.0, 0.0], [5000.0, 2.0]]\n",
    );
    let o = bin()
        .args([
            "check",
            "--set",
            "updraft.profile_points=[[0.0, 0.0], [0.0, 1.0]]",
        ])
        .arg(&p)
        .output()
        .unwrap();
    assert_config_error(&o, &["updraft.profile_points"]);
    assert!(!stderr(&o).contains("(line"), "{}", stderr(&o));
}
